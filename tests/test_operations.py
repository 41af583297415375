"""Subtract, add-subtract and overflow: every scheme and network, checked against Python integers.

References (outside the project): Python's own + and - on unbounded integers, and two's complement as
common practice defines it (a w-bit word x stands for x - 2^w when its top bit is set; a signed result
overflows when it lies outside [-2^(w-1), 2^(w-1) - 1]); subtraction as a + ~b + 1 with the carry out
meaning "no borrow" (the common-practice ALU convention). ``by_hand`` below computes the expected
outputs from those definitions without the project's interface record.
"""

from __future__ import annotations

import itertools
import random
import re

import pytest

from adder_forge import check, emit_design, make_spec, parse_spec
from adder_forge.base.errors import SpecError
from adder_forge.checks.builtin import check_set
from adder_forge.checks.evaluate import Evaluator
from adder_forge.checks.formal import prove_all
from adder_forge.checks.simulators import simulate
from adder_forge.emit.vectors import from_triples, make_plan
from adder_forge.ir.passes import break_gate
from adder_forge.schemes import elaborate
from adder_forge.schemes.prefix_networks import NETWORKS, param_levels
from adder_forge.spec.registry import SCHEMES
from matrices import all_configs

OPS = ("add", "subtract", "add-subtract")


def signed(x: int, w: int) -> int:
    return x - (1 << w) if x >> (w - 1) & 1 else x


def by_hand(w: int, op: str, a: int, b: int, cin: int | None, sub: int, cout: bool, ovf: bool) -> int:
    """{overflow, cout, sum} packed as the adder has them, from Python's + and - alone."""
    m = (1 << w) - 1
    if op == "subtract" or (op == "add-subtract" and sub):
        borrow = 0 if cin is None else 1 - cin  # cin is the not-borrow
        r = a - b - borrow
        s, c = r & m, int(r >= 0)
        exact = signed(a, w) - signed(b, w) - borrow
    else:
        r = a + b + (cin or 0)
        s, c = r & m, r >> w
        exact = signed(a, w) + signed(b, w) + (cin or 0)
    out, at = s, w
    if cout:
        out |= c << at
        at += 1
    if ovf:
        out |= int(not -(1 << (w - 1)) <= exact < (1 << (w - 1))) << at
    return out


def spec_of(name, width, scheme, op, ci=True, co=True, ovf=True, **keys):
    return make_spec(name, width, scheme, carry_in=ci, carry_out=co, operation=op, overflow=ovf, **keys)


def with_network_carry(cfg: dict, op: str) -> dict:
    """A matrix config with another operation: the parameterised prefix families count the carry into the
    network among their inputs, which subtraction has even without a carry-in port."""
    cfg = {**cfg, "operation": op, "overflow": True}
    kind = cfg.get("prefix")
    if cfg.get("scheme") == "prefix" and kind in ("harris", "knowles"):
        L = param_levels(cfg["width"] + 1)
        if kind == "harris":
            cfg["taxonomy"] = [1, 1, L - 3] if L >= 3 else [0, 0, L - 1]
        else:
            cfg["fanouts"] = ([4, 2] + [1] * (L - 2)) if L >= 3 else [1 << k for k in range(L - 1, -1, -1)]
    return cfg


# -- the built-in check against Python, exhaustive at 8 bits -------------------------------------------------
@pytest.mark.parametrize("scheme", sorted(SCHEMES))
def test_every_scheme_and_operation_exhaustive_at_8_bits(scheme):
    for op, (ci, co, ovf) in itertools.product(OPS, itertools.product((True, False), repeat=3)):
        spec = spec_of(f"x8_{scheme.replace('-', '_')}", 8, scheme, op, ci, co, ovf)
        net = elaborate(spec)
        plan = make_plan(8, ci, 1 << 18, 0, 1, op)
        assert plan.exhaustive
        r = check(net, plan)
        assert r.ok and r.vectors == 1 << (16 + ci + (op == "add-subtract")), (op, ci, co, ovf, r.first)
        # the reference the check used is the one written here without the interface record
        vs = next(plan.chunks(1 << 12))
        _, mm = check_set(Evaluator(net), vs)
        assert mm is None
        for k in range(0, len(vs), 97):
            v = vs.values(k)
            assert net.iface.expected(v) == by_hand(8, op, v["a"], v["b"], v["cin"] if ci else None,
                                                    v.get("sub", 0), co, ovf)


@pytest.mark.slow
def test_every_matrix_config_with_each_operation():
    """Every network and block variant of the simulator matrices (273 configs) with subtract and add-subtract
    and overflow: exhaustive up to 2^18 vectors, else directed + 300 random."""
    bad = []
    for k, cfg in enumerate(all_configs()):
        for op in ("subtract", "add-subtract"):
            c = with_network_carry(cfg, op)
            spec = make_spec(**c)
            plan = make_plan(spec.width, spec.carry_in, 1 << 18, 300, k, op)
            r = check(elaborate(spec), plan)
            if not r.ok:
                bad.append((c["name"], op, r.first.describe(spec.width) if r.first else r))
    assert not bad, bad[:5]


@pytest.mark.parametrize("scheme", sorted(SCHEMES))
def test_64_bits_random_and_directed(scheme):
    """Directed borrow/carry chains and random vectors at 64 bits (16 for the flat lookahead), each
    vector's expected value by Python integers as well."""
    w = 16 if scheme == "lookahead" else 64
    for op, ci in itertools.product(("subtract", "add-subtract"), (True, False)):
        spec = spec_of(f"r64_{scheme.replace('-', '_')}", w, scheme, op, ci)
        net = elaborate(spec)
        plan = make_plan(w, ci, 0, 3000, 7, op)
        r = check(net, plan)
        assert r.ok and r.vectors > 3000, (op, ci, r.first)
        rng = random.Random(1)
        for t in rng.sample(plan.triples(), 200):
            v = dict(zip(("a", "b", "cin", "sub"), t))
            assert net.iface.expected(v) == by_hand(w, op, v["a"], v["b"], v["cin"] if ci else None,
                                                    v.get("sub", 0), True, True)


def test_check_catches_a_broken_overflow_and_a_broken_operand():
    spec = spec_of("brk8", 8, "prefix", "add-subtract", prefix="kogge-stone")
    net = elaborate(spec)
    for role in ("overflow", "operand"):
        idx = next(i for i, n in enumerate(net.nodes) if n.role == role and n.op in ("XOR2", "NOT"))
        r = check(break_gate(net, idx), make_plan(8, True, 1 << 18, 0, 1, "add-subtract"))
        assert not r.ok and r.first.got != r.first.expected
        f = r.first
        assert f.expected == by_hand(8, "add-subtract", f.a, f.b, f.cin, f.sub, True, True)


# -- one carry network ----------------------------------------------------------------------------------------
@pytest.mark.parametrize("scheme", sorted(SCHEMES))
def test_add_subtract_reuses_one_carry_network(scheme):
    """The add-subtract adder is the add adder with a carry-in plus one XOR a bit on b (and the overflow
    XORs when asked): no second carry network, no multiplexer between two results."""
    w = 12
    plain = elaborate(make_spec("one", w, scheme, carry_in=True))
    both = elaborate(spec_of("one", w, scheme, "add-subtract", ci=False, ovf=False))

    def count(net, roles=None):
        return sum(1 for n in net.nodes if n.op not in ("INPUT", "CONST", "PICK") and (roles is None or n.role in roles))

    operand = [n for n in both.nodes if n.role == "operand"]
    assert len(operand) == w and all(n.op == "XOR2" for n in operand)
    assert count(both) == count(plain) + w
    assert sum(n.op == "ADD" for n in both.nodes) == sum(n.op == "ADD" for n in plain.nodes) <= 1


# -- the spec -------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("text,where,key,words", [
    ("operation: subtarct\n", "s.yaml:4:12:", "operation", "did you mean 'subtract'"),
    ("operation: addsub\n", "s.yaml:4:12:", "operation", "did you mean 'add-subtract'"),
    ("operation: [add]\n", "s.yaml:4:12:", "operation", "'operation' must be one of add, subtract, add-subtract"),
    ("overflow: yes\n", "s.yaml:4:11:", "overflow", "write true or false"),
    ("overflow: 1\n", "s.yaml:4:11:", "overflow", "'overflow' must be true or false"),
    ("operatoin: subtract\n", "s.yaml:4:1:", "operatoin", "did you mean 'operation'"),
])
def test_bad_keys_name_file_line_column_and_key(text, where, key, words):
    with pytest.raises(SpecError) as e:
        parse_spec("name: x\nwidth: 8\nscheme: ripple\n" + text, "s.yaml")
    line = str(e.value)
    assert line.startswith(where + " error: ") and words in line and key in line and "\n" not in line, line
    assert e.value.field == key and e.value.exit_status == 2


def test_taxonomy_counts_the_carry_into_a_subtracter():
    """A Harris network of a subtracter without carry-in has width + 1 inputs: the +1 enters as a carry."""
    base = "name: x\nwidth: 8\nscheme: prefix\nprefix: harris\ncarry_in: false\n"
    add_ok = f"taxonomy: [0, 0, {param_levels(8) - 1}]\n"  # l + f + t = log2(inputs) - 1 (Harris 2003)
    parse_spec(base + add_ok, "t.yaml")
    with pytest.raises(SpecError) as e:
        parse_spec(base + add_ok + "operation: subtract\n", "t.yaml")
    assert "carry into the network" in str(e.value) and str(e.value).startswith("t.yaml:6:11: error:"), str(e.value)
    assert e.value.field == "taxonomy"
    parse_spec(base + f"taxonomy: [0, 0, {param_levels(9) - 1}]\noperation: subtract\n", "t.yaml")


@pytest.mark.parametrize("extra,key", [("operation: subtract\n", "operation"), ("overflow: true\n", "overflow")])
def test_parameterized_form_refuses_what_it_cannot_build(tmp_path, capsys, extra, key):
    from adder_forge.cli import main

    p = tmp_path / "pf.yaml"
    p.write_text("name: pf8\nwidth: 8\nscheme: ripple\nform: parameterized\n" + extra)
    assert main(["build", str(p), "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith(f"{p}:5:") and f"'form: parameterized'" in err[0] and key in err[0], err
    assert not (tmp_path / "o").exists()


def test_cli_exit_2_one_line(tmp_path, capsys):
    from adder_forge.cli import main

    p = tmp_path / "bad.yaml"
    p.write_text("name: x\nwidth: 8\nscheme: ripple\noperation: minus2\n")
    assert main(["build", str(p), "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and re.match(rf"{re.escape(str(p))}:4:12: error: unknown operation 'minus2'", err[0]), err
    assert not (tmp_path / "o").exists()


# -- simulators, proof, cocotb, GHDL on a sample ---------------------------------------------------------------
SAMPLE = [("sa_rip8", 8, "ripple", "subtract", False, True, True, {}),
          ("sa_ks8", 8, "prefix", "add-subtract", True, True, True, {"prefix": "kogge-stone"}),
          ("sa_csel8", 8, "carry-select", "add-subtract", False, False, True, {}),
          ("sa_beh8", 8, "behavioral", "add-subtract", True, False, True, {}),
          ("sa_bk64", 64, "prefix", "add-subtract", True, True, True, {"prefix": "brent-kung"}),
          ("sa_skip64", 64, "carry-skip", "subtract", True, True, True, {})]


def sample_designs():
    return [emit_design(spec_of(n, w, s, op, ci, co, ovf, **k)) for n, w, s, op, ci, co, ovf, k in SAMPLE]


@pytest.mark.sim
@pytest.mark.parametrize("simulator", ["icarus", "verilator"])
def test_sample_passes_both_simulators(simulator, tmp_path):
    ds = sample_designs()
    res = simulate(ds, simulator, tmp_path)
    assert all(o.ok and o.passed == d.testbench.count for o, d in zip(res, ds)), [o.detail for o in res if not o.ok]


@pytest.mark.sim
def test_simulators_see_a_broken_overflow(tmp_path):
    spec = spec_of("sa_bad8", 8, "ripple", "add-subtract")
    net = elaborate(spec)
    idx = next(i for i, n in enumerate(net.nodes) if n.role == "overflow")
    d = emit_design(spec, net=break_gate(net, idx))
    [o] = simulate([d], "icarus", tmp_path)
    assert not o.ok and o.failed > 0 and "sub=" in (o.first or ""), o.detail


@pytest.mark.formal
def test_sample_proven_against_the_verilog_reference():
    ds = sample_designs()
    proofs = prove_all([(d.net, d.verilog) for d in ds])
    assert all(p.ok for p in proofs), [p.describe(d.spec.width) for p, d in zip(proofs, ds) if not p.ok]
    assert proofs[1].claim == "{cout, sum} = a + (sub ? ~b : b) + cin, overflow = signed overflow"
    assert proofs[0].claim == "{cout, sum} = a + ~b + 1, overflow = signed overflow"


@pytest.mark.formal
def test_proof_refutes_a_broken_overflow():
    spec = spec_of("pf_bad8", 8, "prefix", "subtract", prefix="sklansky")
    net = elaborate(spec)
    idx = next(i for i, n in enumerate(net.nodes) if n.role == "overflow")
    bad = emit_design(spec, net=break_gate(net, idx))
    [p] = prove_all([(bad.net, bad.verilog)])
    cex = p.counterexample
    assert not p.ok and cex is not None
    assert cex.expected == by_hand(8, "subtract", cex.a, cex.b, cex.cin, 0, True, True) != cex.got


@pytest.mark.cocotb
def test_cocotb_add_subtract(tmp_path):
    from adder_forge.checks.cocotb_check import run_cocotb

    d = emit_design(spec_of("cc_as6", 6, "prefix", "add-subtract", prefix="han-carlson"))
    o = run_cocotb(d, "icarus", tmp_path, random_count=100, exhaustive_limit=1 << 14)
    assert o.ok and o.passed == 1 << 14, o.detail  # every input of a 6-bit adder with cin and sub


@pytest.mark.ghdl
def test_vhdl_testbench_add_subtract(tmp_path):
    from adder_forge.checks.simulators import simulate as sim

    d = emit_design(spec_of("gh_as8", 8, "carry-select", "add-subtract"))
    [o] = sim([d], "ghdl", tmp_path)
    assert o.ok and o.passed == d.testbench.count == 1 << 18, o.detail
