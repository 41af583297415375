"""GHDL on the emitted VHDL: the commands that analyse, run the VHDL testbenches and synthesize to Verilog.

The simulator class that `verify` and ``simulators.simulate`` use is ``simulators.Ghdl``; it builds its
commands with the functions here.

GHDL from Debian (package ghdl, GHDL 2.0, mcode back end) analyses into a work library in the folder it runs
in; mcode elaborates in memory, so ``--elab-run`` runs a testbench without building an executable, and
one analysis serves every design staged in the folder. ``ghdl synth --out=verilog`` writes a Verilog
netlist of an analysed entity, which formal.prove can then check against ``+``.
"""

from __future__ import annotations

import re
from pathlib import Path

from ..base.errors import ToolError
from ..base.tools import Command, Result, find, run
from ..emit.vhdl import STD

# numeric_std warns about metavalues while the signals are still 'U' at time 0, before any input is set.
RUN_FLAGS = ("--ieee-asserts=disable-at-0",)


def ghdl() -> str:
    return find("ghdl")  # a ToolError with the install hint of base.tools when missing


def analyse_command(files: list[str], workdir: Path, timeout: float | None = None) -> Command:
    return Command((ghdl(), "-a", f"--std={STD}", *files), str(workdir), timeout=timeout)


def run_command(top: str, workdir: Path, vectors: str | None = None, timeout: float | None = None) -> Command:
    generics = (f"-gvectors={vectors}",) if vectors is not None else ()
    return Command((ghdl(), "--elab-run", f"--std={STD}", top, *RUN_FLAGS, *generics), str(workdir), timeout=timeout)


def synth_command(top: str, workdir: Path, timeout: float | None = None) -> Command:
    return Command((ghdl(), "synth", f"--std={STD}", "--out=verilog", top), str(workdir), timeout=timeout)


def version() -> str:
    r = run(Command((ghdl(), "--version")))
    return r.stdout.splitlines()[0] if r.ok and r.stdout else ""


def stage(designs, workdir: Path) -> list[str]:
    """Write each design's VHDL, testbench and vectors into workdir; return the VHDL files in analysis order."""
    from ..emit.vhdl import vhdl_files

    workdir.mkdir(parents=True, exist_ok=True)
    files: list[str] = []
    for d in designs:
        for fname, text in vhdl_files(d).items():
            (workdir / fname).write_text(text, encoding="utf-8")
            files.append(fname)
        name = f"{d.spec.name}_vectors.hex"
        (workdir / name).write_text(d.testbench.vectors_hex, encoding="utf-8")
    return files


def analyse(files: list[str], workdir: Path, timeout: float = 3600) -> Result:
    r = run(analyse_command(files, workdir, timeout))
    if not r.ok:
        raise ToolError("ghdl could not analyse the VHDL", r.tail(15))
    return r


def synthesize(name: str, workdir: Path, timeout: float = 3600) -> str:
    """The Verilog netlist GHDL's synthesis makes of an analysed entity, its module named exactly ``name``
    (GHDL 2.0 keeps the case of the entity declaration; VHDL names are case-insensitive, so any case is
    taken and put back as the spec has it)."""
    r = run(synth_command(name, workdir, timeout))
    module = re.compile(rf"^module {re.escape(name)}\b", re.M | re.I)
    if not r.ok or not module.search(r.stdout):
        raise ToolError(f"ghdl synth could not synthesize {name}", r.tail(15))
    return module.sub(f"module {name}", r.stdout, count=1)
