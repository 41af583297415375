"""A deliberately broken gate in an emitted module makes every check report failure."""


import pytest

from adder_forge.artifacts import design
from adder_forge.builtin import check
from adder_forge.cli import main
from adder_forge.formal import prove
from adder_forge.passes import break_gate, gate_indices
from adder_forge.registry import elaborate
from adder_forge.sim import simulate
from adder_forge.spec import make_spec
from adder_forge.tools import Command, find, run
from adder_forge.vectors import make_plan


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
    from adder_forge.vectors import from_triples
    from adder_forge.builtin import check_set
    from adder_forge.evaluate import Evaluator

    failed, _ = check_set(Evaluator(net), from_triples(8, [(m.a, m.b, m.cin)]))
    assert failed == 1


@pytest.mark.cocotb
@pytest.mark.parametrize("simulator", ["icarus", "verilator"])
def test_cocotb_test_fails(simulator, tmp_path):
    from adder_forge.cocotb_check import run_cocotb

    spec, net = broken()
    o = run_cocotb(design(spec, net=net), simulator, tmp_path, random_count=200)
    assert not o.ok and o.exit_status != 0 and o.failed > 0 and o.first


@pytest.mark.sim
@pytest.mark.formal
def test_verify_command_exits_1_with_first_failing_vector(tmp_path, capsys, monkeypatch):
    """Through the CLI: a spec whose elaboration is broken on purpose."""
    import adder_forge.artifacts as art

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
