"""The cocotb check: a cocotb 2.x test driving the emitted module, in a simulator of the registry."""

from __future__ import annotations

import json
import sys
from pathlib import Path

from ..emit.design import Design
from ..emit.testbench import clocking_summary
from ..emit.vectors import plan_for
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
    # the test's parameters, as data: the interface record and the plan (cocotb_bench.load reads them)
    params = workdir / "cocotb_parameters.json"
    params.write_text(json.dumps({"name": d.spec.name, "interface": d.net.iface.to_json(),
                                  "plan": {"exhaustive_limit": exhaustive_limit, "random": random_count,
                                           "seed": seed}}), encoding="utf-8")
    env = (("ADDER_FORGE_COCOTB", str(params.resolve())), ("PYTEST_CURRENT_TEST", ""))
    cmd = Command((sys.executable, "-m", "adder_forge.checks.cocotb_run", "--sim", sim.cocotb, "--source", str(src),
                   "--top", d.spec.name, "--workdir", str(workdir),
                   *(f"--build-arg={a}" for a in sim.cocotb_build_args())), str(workdir), env, timeout)
    # the row says which vectors and, for a pipelined adder, how they were clocked, as the other checks do;
    # the count the plan makes is the count the test must report
    plan = plan_for(d.net.iface, exhaustive_limit, random_count, seed)
    clocked = clocking_summary(d.net.iface)
    passing = f"{plan.describe()}; cocotb test passed" + (f"; {clocked}" if clocked else "")
    [o] = read(run(cmd), f"cocotb-{sim.name}", [d.spec.name], [passing], [plan.count])
    return o
