"""`verify`: every check that an adder adds, run over one or several designs."""

from __future__ import annotations

import contextlib
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

from ..emit.design import Design
from .builtin import check as builtin_check
from ..base.errors import ToolError
from ..base.progress import Progress, as_progress
from ..spec.loader import Spec
from ..emit.vectors import Plan, make_plan, space_bits

BUILTIN_EXHAUSTIVE_LIMIT = 1 << 25  # every input by default up to here: a 12-bit adder with carry-in
FORCED_EXHAUSTIVE_LIMIT = 1 << 33  # `verify --exhaustive`: up to a 16-bit adder with carry-in
CHECKERS = ("builtin", "icarus", "verilator", "cocotb-icarus", "cocotb-verilator", "formal")


@dataclass(frozen=True)
class Outcome:
    name: str
    checker: str
    ok: bool
    vectors: int
    failed: int
    detail: str  # what was checked, or the first failing vector
    seconds: float = 0.0


@dataclass(frozen=True)
class Stopped:
    """A check that could not run (a tool missing or failing): no verdict on the adder."""

    name: str  # the spec, or every spec of a shared simulator build, comma-separated
    checker: str
    error: ToolError


@dataclass(frozen=True)
class Verdicts:
    """What `verify` found: every finished check, and the one that stopped it, if any."""

    outcomes: list[Outcome]
    stopped: Stopped | None = None


def builtin_plan(spec: Spec, random_count: int, seed: int, exhaustive: bool = False) -> Plan:
    """The built-in check's vectors: every input up to ``BUILTIN_EXHAUSTIVE_LIMIT``, else directed and
    random ones; with ``exhaustive``, every input up to ``FORCED_EXHAUSTIVE_LIMIT`` or a SpecError."""
    if exhaustive:
        bits = space_bits(spec.width, spec.carry_in)
        if 1 << bits > FORCED_EXHAUSTIVE_LIMIT:
            ports = "with carry-in" if spec.carry_in else "without carry-in"
            raise spec.error("width", f"--exhaustive: a {spec.width}-bit adder {ports} has 2^{bits} input "
                                      f"vectors; the limit is 2^33 (a 16-bit adder with carry-in)")
        return make_plan(spec.width, spec.carry_in, FORCED_EXHAUSTIVE_LIMIT, random_count, seed)
    return make_plan(spec.width, spec.carry_in, BUILTIN_EXHAUSTIVE_LIMIT, random_count, seed)


def verify(designs: list[Design], sims: list[str], formal: bool, random_count: int, seed: int,
           workdir: Path | None = None, progress: Progress | Callable[[str], None] | None = None,
           exhaustive: bool = False) -> Verdicts:
    """Run the checks in a fixed order; the first tool failure ends the run, keeping what finished."""
    out: list[Outcome] = []
    try:
        _run(designs, sims, formal, random_count, seed, workdir, as_progress(progress), out, exhaustive)
    except _Stop as stop:
        return Verdicts(out, stop.stopped)
    return Verdicts(out)


class _Stop(Exception):
    def __init__(self, stopped: Stopped):
        super().__init__(stopped.checker)
        self.stopped = stopped


@contextlib.contextmanager
def _checking(name: str, checker: str):
    try:
        yield
    except ToolError as exc:
        raise _Stop(Stopped(name, checker, exc)) from None


def _run(designs: list[Design], sims: list[str], formal: bool, random_count: int, seed: int,
         workdir: Path | None, progress: Progress, out: list[Outcome], exhaustive: bool) -> None:
    say = progress
    plans = {d.spec.name: d.plan for d in designs}
    for d in designs:
        t = time.monotonic()
        r = builtin_check(d.net, builtin_plan(d.spec, random_count, seed, exhaustive), progress=progress,
                          label=f"builtin: {d.spec.name}")
        detail = r.detail if r.ok else f"first failing vector: {r.first.describe(d.spec.width)}"
        out.append(Outcome(d.spec.name, "builtin", r.ok, r.vectors, r.failed, detail, time.monotonic() - t))
    with tempfile.TemporaryDirectory(prefix="adder_forge_verify_") as tmp:
        base = Path(workdir) if workdir else Path(tmp)
        for sim in ("icarus", "verilator"):
            if sim in sims:
                from .simulators import simulate

                say(f"{sim}: building and running {len(designs)} testbench(es)")
                t = time.monotonic()
                with _checking(", ".join(d.spec.name for d in designs), sim):
                    done = simulate(designs, sim, base / sim)
                for o in done:
                    detail = plans[o.name] if o.ok else (
                        f"first failing vector: {o.first}" if o.first else f"no result (exit {o.exit_status}): {o.log}")
                    out.append(Outcome(o.name, sim, o.ok, o.passed + o.failed, o.failed, detail, time.monotonic() - t))
        for sim in ("icarus", "verilator"):
            if f"cocotb-{sim}" in sims:
                from .cocotb_check import run_cocotb

                for d in designs:
                    say(f"cocotb-{sim}: {d.spec.name}")
                    t = time.monotonic()
                    with _checking(d.spec.name, f"cocotb-{sim}"):
                        o = run_cocotb(d, sim, base / f"cocotb-{sim}" / d.spec.name,
                                       random_count=min(random_count, 1000), seed=seed)
                    detail = "cocotb test passed" if o.ok else (
                        f"first failing vector: {o.first}" if o.first else f"no result (exit {o.exit_status}): {o.log}")
                    out.append(Outcome(d.spec.name, f"cocotb-{sim}", o.ok, o.passed + o.failed, o.failed, detail,
                                       time.monotonic() - t))
        if formal:
            from .formal import prove

            for d in designs:
                say(f"formal: {d.spec.name}")
                with _checking(d.spec.name, "formal"):
                    p = prove(d.net, d.verilog)
                detail = p.describe(d.spec.width)  # says what was proved for this adder's ports
                out.append(Outcome(d.spec.name, "formal", p.ok, 0, 0 if p.ok else 1, detail, p.seconds))
