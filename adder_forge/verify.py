"""`verify`: every check that an adder adds, run over one or several designs."""

from __future__ import annotations

import tempfile
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

from .artifacts import Design
from .builtin import check as builtin_check
from .vectors import make_plan

BUILTIN_EXHAUSTIVE_LIMIT = 1 << 24
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


def verify(designs: list[Design], sims: list[str], formal: bool, random_count: int, seed: int,
           workdir: Path | None = None, progress: Callable[[str], None] | None = None) -> list[Outcome]:
    say = progress or (lambda _m: None)
    plans = {d.spec.name: d.plan for d in designs}
    out: list[Outcome] = []
    for d in designs:
        t = time.monotonic()
        r = builtin_check(d.net, make_plan(d.spec.width, d.spec.carry_in, BUILTIN_EXHAUSTIVE_LIMIT, random_count, seed))
        detail = r.detail if r.ok else f"first failing vector: {r.first.describe(d.spec.width)}"
        out.append(Outcome(d.spec.name, "builtin", r.ok, r.vectors, r.failed, detail, time.monotonic() - t))
    with tempfile.TemporaryDirectory(prefix="adder_forge_verify_") as tmp:
        base = Path(workdir) if workdir else Path(tmp)
        for sim in ("icarus", "verilator"):
            if sim in sims:
                from .sim import simulate

                say(f"{sim}: building and running {len(designs)} testbench(es)")
                t = time.monotonic()
                for o in simulate(designs, sim, base / sim):
                    detail = plans[o.name] if o.ok else (
                        f"first failing vector: {o.first}" if o.first else f"no result (exit {o.exit_status}): {o.log}")
                    out.append(Outcome(o.name, sim, o.ok, o.passed + o.failed, o.failed, detail, time.monotonic() - t))
        for sim in ("icarus", "verilator"):
            if f"cocotb-{sim}" in sims:
                from .cocotb_check import run_cocotb

                for d in designs:
                    say(f"cocotb-{sim}: {d.spec.name}")
                    t = time.monotonic()
                    o = run_cocotb(d, sim, base / f"cocotb-{sim}" / d.spec.name, random_count=min(random_count, 1000),
                                   seed=seed)
                    detail = "cocotb test passed" if o.ok else (
                        f"first failing vector: {o.first}" if o.first else f"no result (exit {o.exit_status}): {o.log}")
                    out.append(Outcome(d.spec.name, f"cocotb-{sim}", o.ok, o.passed + o.failed, o.failed, detail,
                                       time.monotonic() - t))
        if formal:
            from .formal import prove

            for d in designs:
                say(f"formal: {d.spec.name}")
                p = prove(d.net, d.verilog)
                detail = p.describe(d.spec.width)  # says what was proved for this adder's ports
                out.append(Outcome(d.spec.name, "formal", p.ok, 0, 0 if p.ok else 1, detail, p.seconds))
    return out
