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
from cocotb.triggers import FallingEdge, Timer

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


def _shown(iface, values) -> str:
    return " ".join(f"{pin.name}={values[pin.name]}" if pin.scalar else f"{pin.name}=0x{values[pin.name]:x}"
                    for pin in iface.inputs)


async def _clocked(dut, name: str, iface: Interface, plan) -> None:
    """A pipelined adder: a new vector at every rising edge of clk, each result compared ``latency`` edges
    later; with an enable, every 13th cycle is a stall (other values on the inputs, the outputs held); with
    a reset, rst held active for two cycles first and the outputs 0 (as checks/clocked.py drives them)."""
    from collections import deque

    from cocotb.clock import Clock
    from cocotb.triggers import ReadOnly, RisingEdge

    from adder_forge.emit.testbench import PERIOD, RESET_CYCLES, STALL_AT, STALL_EVERY

    k = iface.latency
    clk = dut.clk
    inputs = [getattr(dut, pin.name) for pin in iface.inputs]
    outputs = [(pin.name, getattr(dut, pin.name)) for pin in iface.outputs]
    masks = [(1 << pin.width) - 1 for pin in iface.inputs]
    en = getattr(dut, "en") if iface.has("en") else None
    rst = getattr(dut, "rst") if iface.has("rst") else None
    active = 0 if iface.reset_level == "low" else 1
    cocotb.start_soon(Clock(clk, PERIOD, unit="ns").start(start_high=False))
    for h in inputs:
        h.value = 0
    if en is not None:
        en.value = 1
    failed = passed = 0
    first = None
    if rst is not None:
        rst.value = active
        for _ in range(RESET_CYCLES):
            await RisingEdge(clk)
            await ReadOnly()
            if any(int(h.value) for _, h in outputs):
                failed += 1
                first = first or "outputs not 0 after a reset edge"
        await RisingEdge(clk)  # leave the read-only phase before driving again
        rst.value = 1 - active
    vectors = (vs.values(j) for vs in plan.chunks() for j in range(len(vs)))
    flight: deque = deque()  # (values, expected) of the vectors loaded and not yet compared
    loads = cycle = 0
    last = None
    pending = next(vectors, None)
    while pending is not None or flight:
        stall = en is not None and cycle % STALL_EVERY == STALL_AT
        if stall:
            en.value = 0
            for h, m in zip(inputs, masks):  # other values: a stalled pipeline must not take them
                h.value = ~int(h.value) & m
        else:
            if en is not None:
                en.value = 1
            values = pending or {pin.name: 0 for pin in iface.inputs}
            for pin, h in zip(iface.inputs, inputs):
                h.value = values[pin.name]
            if pending is not None:
                flight.append((pending, iface.expected(pending)))  # the reference: Python integers
                pending = next(vectors, None)
        await RisingEdge(clk)
        await ReadOnly()
        loads += not stall
        if not stall and loads >= k and flight:
            last = flight.popleft()  # the result that came out at this edge
        if loads >= k and last is not None:  # a stall holds the last result out
            values, want = last
            got = iface.pack_outputs({n: int(h.value) for n, h in outputs})
            if got != want:
                failed += 1
                if first is None:
                    first = f"{_shown(iface, values)} expected=0x{want:x} got=0x{got:x}"
                    dut._log.error("%s: MISMATCH %s", name, first)
            elif not stall:
                passed += 1
            if not flight and pending is None and not stall:
                break
        await FallingEdge(clk)
        cycle += 1
    dut._log.info("%s: %d passed, %d failed", name, passed, failed)
    assert failed == 0, f"{name}: {failed} mismatches over {passed + failed} vectors; first: {first}"


@cocotb.test()
async def adds_like_python(dut):
    name, iface, p = load()
    plan = plan_for(iface, p["exhaustive_limit"], p["random"], p["seed"])
    if iface.latency:
        await _clocked(dut, name, iface, plan)
        return
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
