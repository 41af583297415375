"""The checker registry of `verify`, the simulator registry under it, and the one reader of the result lines.

The reference for every verdict here is Python integer addition: the vectors file's expected values and
the cocotb test's sums come from it, and a deliberately broken adder (ir.passes.break_gate, or a Verilog
file with one gate's assignment removed) must fail in every simulator while the intact one passes.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from adder_forge import cli
from adder_forge.base.errors import SpecError, UsageError
from adder_forge.base.tools import Command, Result
from adder_forge.checks import ghdl, simulators, verify as verify_mod
from adder_forge.checks.outcome import outcome, parse, read
from adder_forge.checks.simulators import SIMULATORS, simulate
from adder_forge.checks.verify import CHECKERS, select, verify
from adder_forge.emit.design import design
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from conftest import run_cli

SPEC = "name: {name}\nwidth: 4\nscheme: ripple\n"
MARKS = {"icarus": [pytest.mark.sim], "verilator": [pytest.mark.sim, pytest.mark.slow], "ghdl": [pytest.mark.ghdl]}
EVERY_SIMULATOR = [pytest.param(name, marks=MARKS[name]) for name in ("icarus", "verilator", "ghdl")]


def result(stdout: str, code: int = 0, stderr: str = "") -> Result:
    return Result(Command(("sim",)), code, stdout, stderr, 0.0)


def broken(name: str = "brk6", width: int = 6):
    spec = make_spec(name, width, "ripple")
    net = elaborate(spec)
    return design(spec, net=break_gate(net, gate_indices(net, "carry")[2]))


@pytest.fixture
def spec_file(tmp_path):
    def make(name: str = "add4") -> Path:
        p = tmp_path / f"{name}.yaml"
        p.write_text(SPEC.format(name=name))
        return p

    return make


# -- the registries --------------------------------------------------------------------------------------------
def test_registry_contents():
    assert list(SIMULATORS) == ["icarus", "verilator", "ghdl"]
    assert [SIMULATORS[n].form for n in SIMULATORS] == ["verilog", "verilog", "vhdl"]
    assert all(cls.name == name and cls.programs for name, cls in SIMULATORS.items())
    # the order of the rows: the built-in check, each simulator, cocotb in each simulator it runs in, the proof
    assert list(CHECKERS) == ["builtin", "icarus", "verilator", "ghdl", "cocotb-icarus", "cocotb-verilator", "formal"]
    assert [n for n, c in CHECKERS.items() if c.shared] == ["icarus", "verilator", "ghdl"]
    assert select(["all"]) == ["icarus", "verilator", "ghdl", "cocotb-icarus", "cocotb-verilator"]
    assert select(["IVerilog", "vvp", "GHDL", "cocotb_iverilog", "icarus"]) == ["icarus", "ghdl", "cocotb-icarus"]


def test_a_simulator_registers_once_and_by_decorator():
    with pytest.raises(ValueError, match="registered twice"):
        simulators.simulator("icarus")(type("Again", (simulators.Simulator,), {}))
    before = dict(SIMULATORS)
    try:
        @simulators.simulator("toysim")
        class Toy(simulators.Simulator):
            pass

        assert SIMULATORS["toysim"] is Toy and Toy.name == "toysim" and simulators.get("TOYSIM") is Toy
    finally:
        SIMULATORS.clear()
        SIMULATORS.update(before)


@pytest.mark.parametrize("given,hint", [("icarsu", "did you mean 'icarus'?"), ("ghld", "did you mean 'ghdl'?"),
                                        ("cocotb-verilater", "did you mean 'cocotb-verilator'?"),
                                        ("modelsim-ish", "(valid: all, cocotb-icarus")])
def test_a_bad_name_lists_the_valid_ones(given, hint, spec_file, capsys):
    code, out, err = run_cli(["verify", spec_file(), "--sim", f"icarus,{given}"], capsys)
    assert code == 2 and out == "" and "Traceback" not in err
    [line] = err.strip().splitlines()
    assert line.startswith(f"adder-forge verify: error: unknown simulator '{given}' ") and hint in line, line
    assert all(n in line for n in ("icarus", "verilator", "ghdl", "cocotb-icarus", "cocotb-verilator", "all"))
    with pytest.raises(UsageError, match="valid: ghdl, icarus, verilator"):
        simulators.get(given)


def test_the_help_names_every_simulation_checker(capsys):
    code, text, _ = run_cli(["verify", "--help"], capsys)
    assert code == 0 and "--sim NAME" in text
    assert all(n in text for n in verify_mod.simulation_checkers())


# -- commands as data ------------------------------------------------------------------------------------------
@pytest.fixture
def no_tools(monkeypatch):
    """Tools 'found' at a fake place: the commands are built, and any attempt to run one would fail."""
    monkeypatch.setattr(simulators, "find", lambda tool: f"/nowhere/{tool}")
    monkeypatch.setattr(ghdl, "find", lambda tool: f"/nowhere/{tool}")


@pytest.mark.parametrize("name", list(SIMULATORS))
def test_commands_are_built_without_running(name, no_tools, tmp_path):
    one, two = design(make_spec("one4", 4, "ripple")), design(make_spec("two5", 5, "prefix", prefix="sklansky"))
    sim = SIMULATORS[name](timeout=77, quick=True)
    staged = sim.stage([one, two], tmp_path)
    written = sorted(p.name for p in tmp_path.iterdir())
    steps = sim.steps(staged)
    assert sorted(p.name for p in tmp_path.iterdir()) == written  # steps() wrote nothing, ran nothing
    every = list(steps.build) + [r.command for r in steps.runs]
    assert all(c.cwd == str(tmp_path) and c.timeout == 77 for c in every)
    build = [c.argv for c in steps.build]
    runs = [(r.names, r.command.argv) for r in steps.runs]
    if name == "icarus":
        assert staged.top == simulators.BATCH_TOP and staged.defines == ("ADDER_FORGE_BATCH",)
        assert build == [("/nowhere/iverilog", "-g2012", "-DADDER_FORGE_BATCH", "-s", "adder_forge_batch", "-o",
                          "sim.vvp", "one4.v", "one4_tb.v", "two5.v", "two5_tb.v", "adder_forge_batch.v")]
        assert runs == [(("one4", "two5"), ("/nowhere/vvp", "-n", "sim.vvp"))]
    elif name == "verilator":
        [argv] = build
        assert argv[:2] == ("/nowhere/verilator", "--binary")
        assert argv[argv.index("--top-module") + 1] == "adder_forge_batch" and "+define+ADDER_FORGE_BATCH" in argv
        assert argv[-5:] == ("one4.v", "one4_tb.v", "two5.v", "two5_tb.v", "adder_forge_batch.v")
        assert "CFG_CXXFLAGS_PCH_I=-include" in argv and "--output-split-cfuncs" in argv  # quick build
        assert "--output-split-cfuncs" not in SIMULATORS[name](quick=False).steps(staged).build[0].argv
        assert runs == [(("one4", "two5"), ("obj/sim",))]
    else:
        assert build == [("/nowhere/ghdl", "-a", "--std=93c", "one4.vhd", "one4_tb.vhd", "two5.vhd", "two5_tb.vhd")]
        assert runs == [((n,), ("/nowhere/ghdl", "--elab-run", "--std=93c", f"{n}_tb", "--ieee-asserts=disable-at-0"))
                        for n in ("one4", "two5")]
        assert {"one4_vectors.hex", "two5_vectors.hex"} <= set(written)


def test_a_single_design_runs_its_own_testbench(no_tools, tmp_path):
    staged = SIMULATORS["icarus"]().stage([design(make_spec("one4", 4, "ripple"))], tmp_path)
    assert staged.top == "one4_tb" and staged.defines == () and staged.files == ("one4.v", "one4_tb.v")


# -- the reader of the result lines ----------------------------------------------------------------------------
def test_parse_a_pass_and_a_fail():
    r = parse("add4: 512 passed, 0 failed\n", "add4")
    assert (r.passed, r.failed, r.first, r.problem, r.clean) == (512, 0, None, None, True)
    text = ("add4: MISMATCH vector 3: a=3 b=1 cin=0 expected=04 got=00\n"
            "add4: MISMATCH vector 9: a=9 b=1 cin=0 expected=0a got=08\nadd4: 510 passed, 2 failed\n"
            "add4: 2 of 512 vectors failed\n")
    r = parse(text, "add4")
    assert (r.passed, r.failed, r.clean) == (510, 2, False)
    assert r.first == "vector 3: a=3 b=1 cin=0 expected=04 got=00"  # the first, not the last


def test_parse_reads_only_its_own_name():
    text = "my_add4: 0 passed, 512 failed\nadd4x: MISMATCH vector 0\nadd4: 512 passed, 0 failed\n"
    assert parse(text, "add4").clean and not parse(text, "my_add4").clean
    # cocotb logs with a prefix before the name; the name still has to stand on its own
    log = "     0.00ns INFO     cocotb.add4          add4: 1109 passed, 0 failed\n"
    assert parse(log, "add4").passed == 1109 and parse(log, "dd4").passed is None


@pytest.mark.parametrize("text,why", [
    ("", "no result"),  # nothing printed at all
    ("add4: MISMATCH vector 0: a=0 b=0 cin=1 expected=01 got=00\n", "no result"),  # killed before the summary
    ("add4: 512 passed\n", "no result"),  # cut short
    ("add4: 512 passed, 0 failed, 3 skipped\n", "no result"),
    ("add4: x passed, x failed\n", "malformed summary line: x passed, x failed"),  # an X count
    ("add4: -1 passed, 0 failed\n", "malformed summary line"),
    ("add4: 512 passed, 0 failed\nadd4: 512 passed, 0 failed\n", "2 summary lines"),
    ("add4: VECTORS ERROR cannot open add4_vectors.hex\n", "no result (exit 1): add4: VECTORS ERROR cannot open"),
    ("add4: BAD LINE 7: not all 0/1 (X, U, Z or a non-hex digit)\nadd4: 511 passed, 1 failed\n", "BAD LINE 7"),
])
def test_parse_refuses_what_is_not_a_clean_summary(text, why):
    o = outcome("add4", "icarus", parse(text, "add4"), result(text, code=1), "plan")
    assert not o.ok and why in o.detail, o.detail
    assert o.exit_status == 1


def test_an_x_output_is_a_mismatch():
    """%h of an undriven output prints x digits: the vector failed, and the row shows what came out."""
    text = "add4: MISMATCH vector 5: a=5 b=3 cin=0 expected=08 got=0x\nadd4: 511 passed, 1 failed\n"
    o = outcome("add4", "icarus", parse(text, "add4"), result(text, 1), "plan", expected=512)
    assert not o.ok and (o.passed, o.failed) == (511, 1) and o.detail == "first failing vector: vector 5: a=5 b=3 " \
                                                                          "cin=0 expected=08 got=0x"


def test_a_pass_needs_the_count_and_a_clean_exit():
    ok = "add4: 512 passed, 0 failed\n"
    assert outcome("add4", "icarus", parse(ok, "add4"), result(ok), "plan", expected=512).ok
    o = outcome("add4", "icarus", parse(ok, "add4"), result(ok), "plan", expected=600)
    assert not o.ok and o.detail == "checked 512 vectors; the test bench holds 600"
    o = outcome("add4", "icarus", parse(ok, "add4"), result(ok + "Segmentation fault\n", -11), "plan")
    assert not o.ok and o.detail.startswith("all vectors passed, but the run ended with killed by signal 11")
    zero = "add4: 0 passed, 0 failed\n"
    assert outcome("add4", "icarus", parse(zero, "add4"), result(zero), "plan").detail == "no vectors checked"


def test_a_shared_run_blames_the_design_that_failed():
    """One batch build: its $fatal is excused for the designs that passed, not for one that printed nothing."""
    text = "one: 16 passed, 0 failed\ntwo: MISMATCH vector 1: a=1\ntwo: 15 passed, 1 failed\n"
    one, two = read(result(text, 1), "icarus", ["one", "two"], ["p1", "p2"], [16, 16])
    assert one.ok and one.detail == "p1" and not two.ok and two.detail.startswith("first failing vector: vector 1")
    alone = read(result("one: 16 passed, 0 failed\ntwo: 16 passed, 0 failed\n", 1), "icarus", ["one", "two"],
                 ["p1", "p2"], [16, 16])
    assert not any(o.ok for o in alone)  # nobody to blame: the exit status stands against both
    lost = read(result("one: 16 passed, 0 failed\n", 1), "icarus", ["one", "two"], ["p1", "p2"], [16, 16])
    assert lost[0].ok and not lost[1].ok and lost[1].detail.startswith("no result (exit 1)")


# -- each simulator through the registry -----------------------------------------------------------------------
@pytest.mark.parametrize("name", EVERY_SIMULATOR)
def test_each_simulator_catches_a_broken_adder(name, tmp_path):
    good, bad = design(make_spec("good6", 6, "prefix", prefix="kogge-stone")), broken()
    res = {o.name: o for o in simulate([good, bad], name, tmp_path)}
    assert res["good6"].ok and res["good6"].passed == good.testbench.count, res["good6"].detail
    o = res["brk6"]
    assert not o.ok and o.checker == name and o.failed > 0 and o.passed + o.failed == bad.testbench.count
    assert o.detail.startswith("first failing vector: vector ") and "MISMATCH" not in o.detail, o.detail
    m = re.search(r"expected=([0-9a-f]+) got=([0-9a-f]+)", o.first, re.I)
    assert m and m.group(1) != m.group(2)


@pytest.mark.sim
def test_icarus_shows_an_x_sum_bit(tmp_path):
    """A mutated Verilog file: one sum bit driven with x, which a four-state simulator prints as an x digit;
    every vector fails (!== compares x as a value of its own) and the row shows what came out."""
    from dataclasses import replace

    d = design(make_spec("undr5", 5, "ripple"))
    assert d.verilog.count("wire s2 = p2 ^ c2;") == 1
    mutated = replace(d, verilog=d.verilog.replace("wire s2 = p2 ^ c2;", "wire s2 = 1'bx;"))
    [o] = simulate([mutated], "icarus", tmp_path)
    assert not o.ok and o.failed == d.testbench.count and o.passed == 0, o.detail
    assert "x" in o.first.split("got=")[1].lower(), o.first


# -- verify: rows and exit status ------------------------------------------------------------------------------
def with_broken_first(monkeypatch):
    real = cli._designs

    def designs(specs, tb_random=2000, seed=1, progress=None):
        out = real(specs, tb_random, seed, progress)
        spec = out[0].spec
        net = elaborate(spec)
        return [design(spec, net=break_gate(net, gate_indices(net, "carry")[1]), tb_random=tb_random)] + out[1:]

    monkeypatch.setattr(cli, "_designs", designs)


@pytest.mark.ghdl
def test_verify_with_ghdl_passes_and_fails(spec_file, capsys, monkeypatch):
    code, out, err = run_cli(["verify", spec_file(), "--sim", "GHDL"], capsys)
    assert code == 0, err
    assert out.splitlines() == [
        "add4  builtin          pass  512 vectors; exhaustive, 2^9 vectors",
        "add4  ghdl             pass  512 vectors; exhaustive, 2^9 vectors",
        "2 passed, 0 failed"]
    with_broken_first(monkeypatch)
    code, out, err = run_cli(["verify", spec_file(), "--sim", "ghdl"], capsys)
    assert code == 1, err
    rows = out.splitlines()
    assert rows[1].startswith("add4  ghdl             FAIL  ") and " of 512 vectors failed; first failing vector: " \
                                                                 "vector " in rows[1], rows[1]
    assert rows[-1] == "0 passed, 2 failed"


def test_ghdl_refuses_a_name_vhdl_cannot_take_before_any_work(spec_file, capsys, monkeypatch):
    monkeypatch.setattr(cli, "_designs", lambda *a, **k: pytest.fail("designs were built"))
    path = spec_file("add__4")
    code, out, err = run_cli(["verify", path, "--sim", "all"], capsys)
    assert code == 2 and out == ""
    [line] = err.strip().splitlines()
    assert line.startswith(f"{path}:1:7: error: 'name' 'add__4' cannot name a VHDL entity"), line
    assert line.endswith("rename it or verify without ghdl")
    with pytest.raises(SpecError):
        verify([design(make_spec("add__4", 4, "ripple"))], ["ghdl"], False, 10, 1)


@pytest.mark.sim
def test_verify_rows_for_a_mismatch_in_a_simulator(spec_file, capsys, monkeypatch):
    with_broken_first(monkeypatch)
    code, out, err = run_cli(["verify", spec_file("one"), spec_file("two"), "--sim", "icarus"], capsys)
    assert code == 1, err
    rows = out.splitlines()
    assert [r.split()[:3] for r in rows[:4]] == [["one", "builtin", "FAIL"], ["two", "builtin", "pass"],
                                                  ["one", "icarus", "FAIL"], ["two", "icarus", "pass"]]
    assert re.fullmatch(r"one  icarus {11}FAIL  \d+ of 512 vectors failed; first failing vector: vector \d+: .*", rows[2])
    assert rows[3] == "two  icarus           pass  512 vectors; exhaustive, 2^9 vectors"
    assert rows[4:] == ["2 passed, 2 failed"]


def test_a_missing_simulator_is_a_tool_failure_after_the_finished_rows(spec_file, capsys, monkeypatch, tmp_path):
    from adder_forge.base import tools

    monkeypatch.setattr(tools, "search_path", lambda: str(tmp_path))  # a PATH with no GHDL on it
    code, out, err = run_cli(["verify", spec_file(), "--sim", "ghdl"], capsys)
    assert code == 3
    assert out.splitlines() == ["add4  builtin          pass  512 vectors; exhaustive, 2^9 vectors",
                                "add4  ghdl             ERROR ghdl not found: install GHDL: apt-get install -y ghdl",
                                "1 passed, 0 failed; ghdl could not run, later checks skipped"]
    assert err.strip().splitlines()[-1] == "adder-forge: error: ghdl not found (install GHDL: apt-get install -y ghdl)"


def test_verify_from_python_checks_the_names(monkeypatch):
    """A misspelt simulator used to be skipped in silence by verify(); now it is bad input."""
    with pytest.raises(UsageError, match="did you mean 'verilator'"):
        verify([design(make_spec("add4", 4, "ripple"))], ["verilatr"], False, 10, 1)


@pytest.mark.cocotb
@pytest.mark.slow
def test_cocotb_through_the_registry_catches_a_broken_adder(tmp_path):
    found = verify([broken()], ["cocotb-icarus"], False, 100, 1, workdir=tmp_path)
    builtin, cocotb = found.outcomes
    assert found.stopped is None and not builtin.ok
    assert cocotb.checker == "cocotb-icarus" and not cocotb.ok and cocotb.exit_status != 0
    assert cocotb.failed > 0 and cocotb.detail.startswith("first failing vector: ")


def test_the_readme_tour_shows_a_row_for_every_checker():
    """`--sim all --formal` in the README's tour: one row a checker, in registry order (rerun the tour and
    paste its real output when a checker is added)."""
    readme = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")
    block = readme.split("$ .venv/bin/adder-forge verify specs/alu_ks32.yaml --sim all --formal\n", 1)[1]
    block = block.split("```", 1)[0].strip().splitlines()
    assert [line.split()[1] for line in block[:-1]] == list(CHECKERS)
    assert all(line.split()[2] == "pass" for line in block[:-1])
    assert block[-1] == f"{len(CHECKERS)} passed, 0 failed"
