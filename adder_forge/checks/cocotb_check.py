"""The cocotb check: a cocotb 2.x test driving the emitted module, in a simulator of the registry."""

from __future__ import annotations

import sys
from pathlib import Path

from ..emit.design import Design
from ..base.errors import UsageError
from ..base.tools import Command, run
from . import simulators
from .outcome import Outcome, read


def run_cocotb(d: Design, simulator: str, workdir: Path, random_count: int = 1000, seed: int = 1,
               exhaustive_limit: int = 1 << 12, timeout: float = 1800) -> Outcome:
    sim = simulators.get(simulator)()
    if not sim.cocotb:
        raise UsageError(f"cocotb does not run in {sim.name}", "verify", "--sim")
    workdir = Path(workdir)
    workdir.mkdir(parents=True, exist_ok=True)
    src = workdir / f"{d.spec.name}.v"
    src.write_text(d.verilog, encoding="utf-8")
    sim.require()  # a clear error before cocotb's own
    env = (("ADDER_FORGE_NAME", d.spec.name), ("ADDER_FORGE_WIDTH", str(d.spec.width)),
           ("ADDER_FORGE_CARRY_IN", str(int(d.spec.carry_in))), ("ADDER_FORGE_CARRY_OUT", str(int(d.spec.carry_out))),
           ("ADDER_FORGE_RANDOM", str(random_count)), ("ADDER_FORGE_SEED", str(seed)),
           ("ADDER_FORGE_EXHAUSTIVE_LIMIT", str(exhaustive_limit)), ("PYTEST_CURRENT_TEST", ""))
    cmd = Command((sys.executable, "-m", "adder_forge.checks.cocotb_run", "--sim", sim.cocotb, "--source", str(src),
                   "--top", d.spec.name, "--workdir", str(workdir)), str(workdir), env, timeout)
    [o] = read(run(cmd), f"cocotb-{sim.name}", [d.spec.name], ["cocotb test passed"])
    return o
