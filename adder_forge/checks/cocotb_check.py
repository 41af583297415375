"""The cocotb check: a cocotb 2.x test driving the emitted module, in Icarus or Verilator."""

from __future__ import annotations

import re
import sys
from dataclasses import dataclass
from pathlib import Path

from ..emit.design import Design
from ..base.tools import Command, find, run

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
    env = (("ADDER_FORGE_NAME", d.spec.name), ("ADDER_FORGE_WIDTH", str(d.spec.width)),
           ("ADDER_FORGE_CARRY_IN", str(int(d.spec.carry_in))), ("ADDER_FORGE_CARRY_OUT", str(int(d.spec.carry_out))),
           ("ADDER_FORGE_RANDOM", str(random_count)), ("ADDER_FORGE_SEED", str(seed)),
           ("ADDER_FORGE_EXHAUSTIVE_LIMIT", str(exhaustive_limit)), ("PYTEST_CURRENT_TEST", ""))
    cmd = Command((sys.executable, "-m", "adder_forge.checks.cocotb_run", "--sim", simulator, "--source", str(src),
                   "--top", d.spec.name, "--workdir", str(workdir)), str(workdir), env, timeout)
    r = run(cmd)
    text = r.stdout + r.stderr
    m = _SUMMARY.search(text)
    passed, failed = (int(m.group(2)), int(m.group(3))) if m else (0, 0)
    mm = _MISMATCH.search(text)
    return CocotbOutcome(d.spec.name, simulator, passed, failed, mm.group(1).strip() if mm else None,
                         r.returncode, r.tail(15))
