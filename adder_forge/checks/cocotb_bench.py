"""cocotb test that drives an adder module and compares it with Python integer addition.

Loaded by cocotb inside the simulator (see cocotb_run.py); its parameters arrive in the environment.
"""

from __future__ import annotations

import os

import cocotb
from cocotb.triggers import Timer

from adder_forge.emit.vectors import make_plan


def _env_int(key: str, default: int) -> int:
    return int(os.environ.get(key, default))


@cocotb.test()
async def adds_like_python(dut):
    width = _env_int("ADDER_FORGE_WIDTH", 1)
    carry_in = bool(_env_int("ADDER_FORGE_CARRY_IN", 1))
    carry_out = bool(_env_int("ADDER_FORGE_CARRY_OUT", 1))
    plan = make_plan(width, carry_in, _env_int("ADDER_FORGE_EXHAUSTIVE_LIMIT", 1 << 12),
                     _env_int("ADDER_FORGE_RANDOM", 1000), _env_int("ADDER_FORGE_SEED", 1))
    name = os.environ.get("ADDER_FORGE_NAME", "dut")
    mask = (1 << (width + 1 if carry_out else width)) - 1
    passed = failed = 0
    first = None
    for a, b, cin in plan.triples():
        dut.a.value = a
        dut.b.value = b
        if carry_in:
            dut.cin.value = cin
        await Timer(1, unit="ns")
        got = int(dut.sum.value)
        if carry_out:
            got |= int(dut.cout.value) << width
        want = (a + b + cin) & mask  # the reference: Python integer addition
        if got == want:
            passed += 1
        else:
            failed += 1
            if first is None:
                first = f"a=0x{a:x} b=0x{b:x} cin={cin} expected=0x{want:x} got=0x{got:x}"
                dut._log.error("%s: MISMATCH %s", name, first)
    dut._log.info("%s: %d passed, %d failed", name, passed, failed)
    assert failed == 0, f"{name}: {failed} of {passed + failed} vectors failed; first: {first}"
