"""A deliberately broken gate in an emitted module makes every check report failure."""


import pytest

from adder_forge.emit.design import design
from adder_forge.checks.builtin import check
from adder_forge.cli import main
from adder_forge.checks.formal import prove
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes import elaborate
from adder_forge.checks.simulators import simulate
from adder_forge.spec.loader import make_spec
from adder_forge.base.tools import Command, find, run
from adder_forge.emit.vectors import make_plan


def broken(name="brk8", width=8, scheme="ripple", role="carry"):
    spec = make_spec(name, width, scheme)
    net = elaborate(spec)
    idx = gate_indices(net, role)[width // 2]  # a carry gate in the middle of the chain
    return spec, break_gate(net, idx)


def test_builtin_reports_first_failing_vector():
    spec, net = broken()
    r = check(net, make_plan(8, True, 1 << 24, 0, 1))
    assert not r.ok and r.failed > 0
    m = r.first
    assert m.expected == m.a + m.b + m.cin and m.got != m.expected


@pytest.mark.sim
@pytest.mark.parametrize("simulator", ["icarus", "verilator"])
def test_emitted_testbench_fails_with_nonzero_status(simulator, tmp_path):
    spec, net = broken()
    d = design(spec, net=net)
    for fname, text in d.files().items():
        (tmp_path / fname).write_text(text)
    # The testbench as a user runs it: alone, no batch define; it must exit non-zero and say why.
    def commands(obj):  # a fresh build folder each time: Verilator may skip a rebuild of same-sized inputs
        if simulator == "icarus":
            return (Command((find("iverilog"), "-g2012", "-o", f"{obj}.vvp", "brk8.v", "brk8_tb.v"), str(tmp_path)),
                    Command((find("vvp"), "-n", f"{obj}.vvp"), str(tmp_path)))
        return (Command((find("verilator"), "--binary", "-Wno-fatal", "-Wno-lint", "-Wno-style", "--top-module",
                         "brk8_tb", "-Mdir", obj, "-o", "sim", "-CFLAGS", "-std=c++20", "brk8.v", "brk8_tb.v"),
                        str(tmp_path)),
                Command((f"{obj}/sim",), str(tmp_path)))

    build, exe = commands("broken")
    assert run(build).ok
    r = run(exe)
    assert r.returncode != 0
    assert "brk8: MISMATCH vector" in r.stdout
    assert " passed, " in r.stdout and " failed" in r.stdout and ", 0 failed" not in r.stdout
    # and the same design unbroken passes with exit 0
    good = design(spec)
    for fname, text in good.files().items():
        (tmp_path / fname).write_text(text)
    build, exe = commands("good")
    assert run(build).ok
    r = run(exe)
    assert r.returncode == 0 and f"brk8: {good.testbench.count} passed, 0 failed" in r.stdout


@pytest.mark.sim
def test_batched_run_attributes_failure_to_the_broken_design(tmp_path):
    spec, net = broken()
    ok = design(make_spec("fine8", 8, "ripple"))
    res = {o.name: o for o in simulate([ok, design(spec, net=net)], "icarus", tmp_path)}
    assert res["fine8"].ok and not res["brk8"].ok and res["brk8"].first


@pytest.mark.formal
def test_formal_finds_a_counterexample():
    spec, net = broken()
    d = design(spec, net=net)
    p = prove(d.net, d.verilog)
    assert not p.ok
    m = p.counterexample
    assert m is not None and m.expected == m.a + m.b + m.cin and m.got != m.expected
    # the counterexample really is one: the broken IR disagrees with integer addition there
    from adder_forge.emit.vectors import from_triples
    from adder_forge.checks.builtin import check_set
    from adder_forge.checks.evaluate import Evaluator

    failed, _ = check_set(Evaluator(net), from_triples(8, [(m.a, m.b, m.cin)]))
    assert failed == 1


@pytest.mark.cocotb
@pytest.mark.parametrize("simulator", ["icarus", "verilator"])
def test_cocotb_test_fails(simulator, tmp_path):
    from adder_forge.checks.cocotb_check import run_cocotb

    spec, net = broken()
    o = run_cocotb(design(spec, net=net), simulator, tmp_path, random_count=200)
    assert not o.ok and o.exit_status != 0 and o.failed > 0 and o.first


@pytest.mark.sim
@pytest.mark.formal
def test_verify_command_exits_1_with_first_failing_vector(tmp_path, capsys, monkeypatch):
    """Through the CLI: a spec whose elaboration is broken on purpose."""
    import adder_forge.emit.design as art

    spec_file = tmp_path / "brk8.yaml"
    spec_file.write_text("name: brk8\nwidth: 8\nscheme: ripple\n")
    _, bad = broken()
    real = art.elaborate
    monkeypatch.setattr(art, "elaborate", lambda s: bad if s.name == "brk8" else real(s))
    code = main(["verify", str(spec_file), "--sim", "icarus", "--formal"])
    out = capsys.readouterr().out
    assert code == 1
    lines = [l for l in out.splitlines() if l.startswith("brk8")]
    assert len(lines) == 3 and all("FAIL" in l for l in lines)
    assert "first failing vector: a=0x" in lines[0] and "expected=" in lines[0] and "got=" in lines[0]
    assert "counterexample: a=0x" in lines[2]
    assert out.strip().splitlines()[-1] == "0 passed, 3 failed"


# Several mutants across several schemes, each a different kind of slip: (spec keys, role, the k-th gate of
# that role and op, the op it becomes; None: break_gate's own swap). The broken IR goes through the
# emitter, so the module text carries the change.
MUTANTS = [
    (dict(name="mx_rip8", width=8, scheme="ripple"), "carry", "AO21", 4, None),  # AO21 -> MUX2
    (dict(name="mx_ks8", width=8, scheme="prefix", prefix="kogge-stone"), "prefix", "AND2", 5, None),  # P: AND->OR
    (dict(name="mx_csel8", width=8, scheme="carry-select", block=4), "select", "MUX2", 1, None),  # MUX2 -> AO21
    (dict(name="mx_csum8", width=8, scheme="conditional-sum", carry_out=False), "select", "XOR2", 3, None),  # XNOR
    (dict(name="mx_cla6", width=6, scheme="lookahead"), "carry", "OR2", 3, "AND2"),  # a carry term's OR -> AND
    (dict(name="mx_skip8", width=8, scheme="carry-skip", block=4), "skip", "MUX2", 0, None),  # bypass -> AO21
    (dict(name="mx_bk8", width=8, scheme="prefix", prefix="brent-kung", carry_in=False), "sum", "XOR2", 5, "AND2"),
]


def mutant(keys, role, op_before, k, op):
    spec = make_spec(**keys)
    net = elaborate(spec)
    idx = [i for i in gate_indices(net, role) if net.nodes[i].op == op_before][k]
    return spec, op_before, break_gate(net, idx, op)


def test_mutant_list_is_varied():
    ops = set()
    for keys, *how in MUTANTS:
        spec, old, net = mutant(keys, *how)
        new = next(n.op for n, m in zip(net.nodes, elaborate(spec).nodes) if n != m)
        ops.add((old, new))
    assert len({keys["scheme"] for keys, *_ in MUTANTS}) >= 6 and len(ops) >= 5, ops
    assert all(old != new for old, new in ops)


def _parse_mismatch(text: str):
    import re

    m = re.search(r"a=([0-9a-f]+) b=([0-9a-f]+)(?: cin=([01]))? expected=([0-9a-f]+) got=([0-9a-f]+)", text)
    return tuple(int(g or "0", 16) for g in m.groups())  # no cin port: the carry in is 0


@pytest.mark.sim
@pytest.mark.parametrize("simulator", ["icarus", "verilator"])
def test_simulators_catch_mutants_across_schemes(simulator, tmp_path):
    """One batch: every broken design fails with a genuine mismatch, its intact twin passes."""
    from adder_forge.checks.builtin import check_set
    from adder_forge.checks.evaluate import Evaluator
    from adder_forge.emit.vectors import from_triples

    broken_designs, good = [], []
    for keys, *how in MUTANTS:
        spec, _, net = mutant(keys, *how)
        # directed + random vectors rather than 2^17 each: the run stays in seconds, and they must suffice
        broken_designs.append(design(spec, net=net, tb_exhaustive_limit=1 << 12))
        good.append(design(make_spec(**{**keys, "name": keys["name"] + "_ok"}), tb_exhaustive_limit=1 << 12))
    res = {o.name: o for o in simulate(broken_designs + good, simulator, tmp_path)}
    for d in good:
        assert res[d.spec.name].ok and res[d.spec.name].passed == d.testbench.count, res[d.spec.name].log
    for d in broken_designs:
        o = res[d.spec.name]
        assert not o.ok and o.failed > 0 and o.first, (d.spec.name, o.log)
        a, b, cin, want, got = _parse_mismatch(o.first)
        w = d.spec.width
        assert want == (a + b + cin) & ((1 << (w + d.spec.carry_out)) - 1) != got  # Python integer addition
        # the simulator's wrong value is exactly what the broken IR computes there
        _, mm = check_set(Evaluator(d.net), from_triples(w, [(a, b, cin)]))
        assert mm is not None and mm.got == got


@pytest.mark.cocotb
@pytest.mark.slow
@pytest.mark.parametrize("simulator", ["icarus", "verilator"])
def test_cocotb_catches_mutants_across_schemes(simulator, tmp_path):
    """Three mutants of three schemes, one cocotb build each: measured 54 s (Icarus) and 98 s (Verilator)
    in all under heavy load (one build alone: 15 s and 27 s)."""
    from adder_forge.checks.cocotb_check import run_cocotb

    for keys, *how in (MUTANTS[1], MUTANTS[2], MUTANTS[4]):
        spec, _, net = mutant(keys, *how)
        o = run_cocotb(design(spec, net=net), simulator, tmp_path / spec.name, random_count=200)
        assert not o.ok and o.exit_status != 0 and o.failed > 0 and o.first, (spec.name, o.log)
        nums = [int(x, 16) for x in __import__("re").findall(r"0x([0-9a-f]+)", o.first)]
        a, b, want, got = nums
        found = __import__("re").search(r"cin=(\d)", o.first)
        cin = int(found.group(1)) if found else 0  # no cin port: the carry in is 0
        assert want == (a + b + cin) & ((1 << (spec.width + spec.carry_out)) - 1) != got
