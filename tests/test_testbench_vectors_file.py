"""The emitted testbench fails, never passes, when its vectors file is missing, short, long or has X/Z.

Each case runs the testbench as a user does, built once per simulator and design and then executed from
a folder of our own: an empty one (no vectors file), one with the file cut short, one with a line too
many, one with an X digit. The reference for the passing case is Python integer addition (the file's
expected values); a deliberately broken adder must fail in every case, a correct one only where the file
is bad. Before the fix, Icarus printed "Unable to open" and then "131072 passed, 0 failed" with exit 0.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from adder_forge.emit.design import design
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes import elaborate
from adder_forge.checks.outcome import outcomes
from adder_forge.checks import simulators
from adder_forge.checks.simulators import BATCH_TOP
from adder_forge.spec.loader import make_spec
from adder_forge.base.tools import Command, find, run

pytestmark = pytest.mark.sim
SIMULATORS = ("icarus", "verilator")


def designs():
    good = design(make_spec("good6", 6, "prefix", prefix="sklansky"))
    spec = make_spec("brk6", 6, "ripple")
    net = elaborate(spec)
    bad = design(spec, net=break_gate(net, gate_indices(net, "carry")[3]))
    return good, bad


def build(d, simulator: str, folder: Path) -> tuple[Path, str]:
    """Compile one testbench alone (no batch define); return the folder and the vectors file text."""
    folder.mkdir(parents=True)
    files = d.files()
    for fname, text in files.items():
        (folder / fname).write_text(text)
    n = d.spec.name
    if simulator == "icarus":
        argv = (find("iverilog"), "-g2012", "-o", "sim.vvp", f"{n}.v", f"{n}_tb.v")
    else:
        argv = (find("verilator"), "--binary", "-Wno-fatal", "-Wno-lint", "-Wno-style", "--top-module", f"{n}_tb",
                "-Mdir", "obj", "-o", "sim", "-CFLAGS", "-std=c++20", f"{n}.v", f"{n}_tb.v")
    r = run(Command(argv, str(folder)))
    assert r.ok, r.tail()
    return folder, files[f"{n}_vectors.hex"]


def execute(simulator: str, built: Path, cwd: Path):
    exe = ((find("vvp"), "-n", str(built / "sim.vvp")) if simulator == "icarus" else (str(built / "obj" / "sim"),))
    return run(Command(exe, str(cwd), timeout=300))


def cases(text: str) -> dict[str, str | None]:
    lines = text.splitlines(keepends=True)
    x_line = lines[7][:-2] + "x" + lines[7][-1]  # an X digit in the sum field of vector 7
    return {
        "missing": None,
        "empty": "",
        "truncated": "".join(lines[: len(lines) // 2]),
        "one short": "".join(lines[:-1]),
        "one extra": text + lines[0],
        "x digit": "".join(lines[:7] + [x_line] + lines[8:]),
        "not hex": "".join(lines[:3] + ["g00d\n"] + lines[4:]),
    }


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    root = tmp_path_factory.mktemp("tb_file")
    good, bad = designs()
    return {(sim, d.spec.name): (d, *build(d, sim, root / sim / d.spec.name)) for sim in SIMULATORS for d in (good, bad)}


@pytest.mark.parametrize("simulator", SIMULATORS)
@pytest.mark.parametrize("name", ["good6", "brk6"])
def test_bad_vectors_file_is_fatal(built, simulator, name, tmp_path):
    d, folder, text = built[(simulator, name)]
    for case, content in cases(text).items():
        if case == "x digit" and simulator == "verilator":
            continue  # two-state: Verilator reads X as 0; the test below shows that case cannot pass
        cwd = tmp_path / case.replace(" ", "_")
        cwd.mkdir()
        if content is not None:
            (cwd / f"{name}_vectors.hex").write_text(content)
        r = execute(simulator, folder, cwd)
        assert r.returncode != 0, (case, r.tail())
        assert f"{name}: VECTORS ERROR" in r.stdout, (case, r.tail())
        assert " passed, " not in r.stdout, (case, r.tail())  # no summary line that a script could take as a pass


@pytest.mark.parametrize("simulator", SIMULATORS)
def test_intact_file_passes_good_and_fails_broken(built, simulator, tmp_path):
    for name, ok in (("good6", True), ("brk6", False)):
        d, folder, text = built[(simulator, name)]
        cwd = tmp_path / name
        cwd.mkdir()
        (cwd / f"{name}_vectors.hex").write_text(text)
        r = execute(simulator, folder, cwd)
        assert (r.returncode == 0) == ok, r.tail()
        assert (f"{name}: {d.testbench.count} passed, 0 failed" in r.stdout) == ok, r.tail()
        assert ("MISMATCH" in r.stdout) != ok


def test_verilator_x_digit_is_checked_as_a_definite_value(built, tmp_path):
    """Verilator reads an X digit as 0: the line is then a definite vector with a wrong sum, so it fails."""
    d, folder, text = built[("verilator", "good6")]
    (tmp_path / "good6_vectors.hex").write_text(cases(text)["x digit"])
    r = execute("verilator", folder, tmp_path)
    assert r.returncode != 0 and "good6: MISMATCH vector 7" in r.stdout, r.tail()


def test_plusarg_names_another_file(built, tmp_path):
    d, folder, text = built[("icarus", "good6")]
    (tmp_path / "elsewhere.hex").write_text(text)
    r = run(Command((find("vvp"), "-n", str(folder / "sim.vvp"), "+good6_vectors=elsewhere.hex"), str(tmp_path)))
    assert r.ok and f"good6: {d.testbench.count} passed, 0 failed" in r.stdout, r.tail()
    r = run(Command((find("vvp"), "-n", str(folder / "sim.vvp"), "+good6_vectors=nowhere.hex"), str(tmp_path)))
    assert not r.ok and "good6: VECTORS ERROR cannot open nowhere.hex" in r.stdout, r.tail()


@pytest.mark.parametrize("simulator", SIMULATORS)
def test_batch_fails_when_one_file_is_missing(simulator, tmp_path):
    """Batch mode (ADDER_FORGE_BATCH, one top for many testbenches): a lost file fails the whole run and is
    attributed to its own design, while the others in the batch still report their results."""
    good, bad = designs()
    other = design(make_spec("fine5", 5, "ripple"))
    sim = simulators.get(simulator)(timeout=600)
    staged = sim.stage([good, other], tmp_path)
    assert staged.top == BATCH_TOP and "ADDER_FORGE_BATCH" in staged.defines
    (tmp_path / "good6_vectors.hex").unlink()
    steps = sim.steps(staged)
    (build_cmd,), (exe,) = steps.build, [r.command for r in steps.runs]
    assert run(build_cmd).ok
    res = run(exe)
    assert res.returncode != 0, res.tail()
    by_name = {o.name: o for o in outcomes([good, other], simulator, res)}
    assert not by_name["good6"].ok and by_name["good6"].passed == 0
    assert by_name["fine5"].ok and by_name["fine5"].passed == other.testbench.count
    assert "good6: VECTORS ERROR cannot open" in res.stdout
    # and with every file in place the same batch passes
    (tmp_path / "good6_vectors.hex").write_text(good.files()["good6_vectors.hex"])
    res = run(exe)
    assert res.ok and all(o.ok for o in outcomes([good, other], simulator, res)), res.tail()


@pytest.mark.parametrize("carry", [(True, True), (False, False), (True, False)])
def test_testbench_lint_clean(carry, tmp_path):
    """The testbench itself is clean under `verilator --lint-only -Wall` and `iverilog -g2012 -Wall`."""
    d = design(make_spec("lint7", 7, "ripple", carry_in=carry[0], carry_out=carry[1]))
    for fname, text in d.files().items():
        (tmp_path / fname).write_text(text)
    for argv in ((find("verilator"), "--lint-only", "-Wall", "--top-module", "lint7_tb", "lint7.v", "lint7_tb.v"),
                 (find("iverilog"), "-g2012", "-Wall", "-o", "/dev/null", "lint7.v", "lint7_tb.v")):
        r = run(Command(argv, str(tmp_path)))
        assert r.ok and "arning" not in r.stdout + r.stderr, r.tail()
