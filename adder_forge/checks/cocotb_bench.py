"""cocotb test that drives an adder module and compares it with the interface's reference.

Loaded by cocotb inside the simulator (see cocotb_run.py). Everything it needs arrives in one small JSON
file named by ADDER_FORGE_COCOTB (written by cocotb_check.py): the module name, the interface record and
the plan's parameters. There are no defaults: a missing or unreadable file fails the test.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

import cocotb
from cocotb.triggers import Timer

from adder_forge.emit.vectors import plan_for
from adder_forge.ir.interface import Interface

PARAMETERS = "ADDER_FORGE_COCOTB"


def load(environ=os.environ) -> tuple[str, Interface, dict]:
    """(module name, interface, plan parameters) from the file ADDER_FORGE_COCOTB names."""
    path = environ.get(PARAMETERS)
    if not path:
        raise RuntimeError(f"{PARAMETERS} is not set: run this test through adder_forge.checks.cocotb_check")
    d = json.loads(Path(path).read_text(encoding="utf-8"))
    return d["name"], Interface.from_json(d["interface"]), d["plan"]


@cocotb.test()
async def adds_like_python(dut):
    name, iface, p = load()
    if iface.latency:
        raise RuntimeError(f"{name}: this test drives combinational adders; latency {iface.latency} needs a clock")
    plan = plan_for(iface, p["exhaustive_limit"], p["random"], p["seed"])
    inputs = [getattr(dut, pin.name) for pin in iface.inputs]
    outputs = [(pin.name, getattr(dut, pin.name)) for pin in iface.outputs]
    passed = failed = 0
    first = None
    for vs in plan.chunks():
        for k in range(len(vs)):
            values = vs.values(k)
            for pin, handle in zip(iface.inputs, inputs):
                handle.value = values[pin.name]
            await Timer(1, unit="ns")
            got = iface.pack_outputs({n: int(h.value) for n, h in outputs})
            want = iface.expected(values)  # the reference: Python integers
            if got == want:
                passed += 1
            else:
                failed += 1
                if first is None:
                    shown = " ".join(f"{pin.name}={values[pin.name]}" if pin.scalar else
                                     f"{pin.name}=0x{values[pin.name]:x}" for pin in iface.inputs)
                    first = f"{shown} expected=0x{want:x} got=0x{got:x}"
                    dut._log.error("%s: MISMATCH %s", name, first)
    dut._log.info("%s: %d passed, %d failed", name, passed, failed)
    assert failed == 0, f"{name}: {failed} of {passed + failed} vectors failed; first: {first}"
