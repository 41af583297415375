"""The cocotb check: a cocotb 2.x test driving the emitted module, in Icarus or Verilator."""

from __future__ import annotations

import json
import re
import sys
from dataclasses import dataclass
from pathlib import Path

from ..emit.design import Design
from ..base.tools import Command, find, run
from .simulators import VERILATOR_MAKEFLAGS

_SUMMARY = re.compile(r"(\w+): (\d+) passed, (\d+) failed")
_MISMATCH = re.compile(r"\w+: MISMATCH (.*)")


@dataclass(frozen=True)
class CocotbOutcome:
    name: str
    simulator: str
    passed: int
    failed: int
    first: str | None
    exit_status: int
    log: str

    @property
    def ok(self) -> bool:
        return self.exit_status == 0 and self.failed == 0 and self.passed > 0


def run_cocotb(d: Design, simulator: str, workdir: Path, random_count: int = 1000, seed: int = 1,
               exhaustive_limit: int = 1 << 12, timeout: float = 1800) -> CocotbOutcome:
    workdir = Path(workdir)
    workdir.mkdir(parents=True, exist_ok=True)
    src = workdir / f"{d.spec.name}.v"
    src.write_text(d.verilog, encoding="utf-8")
    find("iverilog" if simulator == "icarus" else "verilator")  # a clear error before cocotb's own
    # the test's parameters, as data: the interface record and the plan (cocotb_bench.load reads them)
    params = workdir / "cocotb_parameters.json"
    params.write_text(json.dumps({"name": d.spec.name, "interface": d.net.iface.to_json(),
                                  "plan": {"exhaustive_limit": exhaustive_limit, "random": random_count,
                                           "seed": seed}}), encoding="utf-8")
    env = (("ADDER_FORGE_COCOTB", str(params.resolve())), ("PYTEST_CURRENT_TEST", ""))
    build = ("-Wno-fatal", "-Wno-lint", "-Wno-style", *VERILATOR_MAKEFLAGS) if simulator == "verilator" else ()
    cmd = Command((sys.executable, "-m", "adder_forge.checks.cocotb_run", "--sim", simulator, "--source", str(src),
                   "--top", d.spec.name, "--workdir", str(workdir), *(f"--build-arg={a}" for a in build)),
                  str(workdir), env, timeout)
    r = run(cmd)
    text = r.stdout + r.stderr
    m = _SUMMARY.search(text)
    passed, failed = (int(m.group(2)), int(m.group(3))) if m else (0, 0)
    mm = _MISMATCH.search(text)
    return CocotbOutcome(d.spec.name, simulator, passed, failed, mm.group(1).strip() if mm else None,
                         r.returncode, r.tail(15))
