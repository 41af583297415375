"""The built-in check of a pipelined adder, cycle by cycle: a new vector at every clock edge, each result
compared K edges later against the interface's reference (Python integer arithmetic).

The evaluator runs many copies of the pipeline side by side: one bit lane of a uint64 word is one copy,
and ``lanes`` copies each take their own stream of the plan's vectors (copy j gets vectors j, j + lanes,
j + 2 lanes, ... on consecutive edges), so every copy is driven back to back. A cycle is one call of the
evaluator with the registers' outputs as ``state``; at the edge, every register takes its data input (or
holds, where the enable is low, or clears on reset).

What it exercises beyond the adder's function:
- latency exactly K: after the m-th loading edge the outputs must equal the result of the vector applied
  at loading edge m - K + 1 (a result one cycle early or late is a mismatch);
- the registers start with arbitrary contents (seeded random words): nothing may leak out once K loading
  edges have passed;
- with a clock enable: every 13th cycle is a stall (en = 0), during which the inputs carry other values
  (the complement of the next vector) that must not be taken, and the outputs must hold;
- with a reset: rst is held active for the first two cycles, and the outputs must read 0 (every register
  cleared) during the reset (async) or after its first edge (sync).
"""

from __future__ import annotations

from collections import deque

import numpy as np

from ..ir.network import Network
from ..ir.cells import register_fields
from ..ir.pipeline import registers
from ..spec.pipeline import Pipeline
from ..emit.testbench import RESET_CYCLES, STALL_AT, STALL_EVERY, clocking_summary  # one schedule for every check
from ..emit.vectors import Plan, VectorSet, expected, iface_planes, plane_bit, to_planes, valid_mask

MAX_LANES = 4096  # pipeline copies side by side (64 words): wide enough to be fast
MIN_CYCLES = 64  # ... and narrow enough that every copy sees a stream of at least this many vectors


def lanes_for(count: int) -> int:
    lanes = (count // MIN_CYCLES) // 64 * 64
    return max(64, min(MAX_LANES, lanes))


def _pieces(plan: Plan, lanes: int, chunk: int):
    """The plan's vectors regrouped into pieces of ``lanes`` vectors (the last may be short)."""
    carry: list[VectorSet] = []
    held = 0
    for vs in plan.chunks(chunk):
        start = 0
        while start < len(vs):
            need = lanes - held
            part = vs.part(start, min(len(vs), start + need))
            start += len(part)
            if held == 0 and len(part) == lanes:
                yield part
                continue
            carry.append(part)
            held += len(part)
            if held == lanes:
                yield _join(carry)
                carry, held = [], 0
    if carry:
        yield _join(carry)


def _join(parts: list[VectorSet]) -> VectorSet:
    if len(parts) == 1:
        return parts[0]
    first = parts[0]
    sub = None if first.sub is None else np.concatenate([p.sub for p in parts])
    return VectorSet(first.width, np.concatenate([p.a for p in parts]), np.concatenate([p.b for p in parts]),
                     np.concatenate([p.cin for p in parts]), None, sub)


def _pad(planes: np.ndarray, words: int) -> np.ndarray:
    if planes.shape[1] == words:
        return planes
    out = np.zeros((planes.shape[0], words), dtype=np.uint64)
    out[:, : planes.shape[1]] = planes
    return out


def check_clocked(net: Network, plan: Plan, chunk: int = 1 << 20, seed: int = 1, task=None,
                  cfg: Pipeline | None = None):
    """Check every vector of ``plan`` through the pipelined ``net`` (see the module docstring); returns
    ``(vectors, failures, first failure as (input values, outputs got) or None, detail)``. ``cfg`` is what
    the adder promises (latency, enable, reset: the interface's); each register behaves as its own cell
    says, so a register that ignores the enable or the reset shows up as a mismatch."""
    from .evaluate import Evaluator

    iface = net.iface
    cfg = cfg or iface.clocking
    k = cfg.stages
    kinds = {i: register_fields(net.nodes[i].param) for i in registers(net)}
    lanes = lanes_for(plan.count)
    words = lanes // 64
    ev = Evaluator(net)
    nbits = iface.out_bits
    data = [p for p in iface.inputs]  # a, b, then cin and sub where present
    rng = np.random.default_rng(seed)
    state: dict = {i: rng.integers(0, 1 << 63, words, dtype=np.uint64) << np.uint64(1) | rng.integers(0, 2, words,
             dtype=np.uint64) for i in registers(net)}
    ones = np.full(words, np.uint64(0xFFFFFFFFFFFFFFFF))
    zeros = np.zeros(words, dtype=np.uint64)
    active, idle = (zeros, ones) if cfg.reset_level == "low" else (ones, zeros)
    if cfg.enable != ("en" in {p.name for p in net.inputs}) or (cfg.reset != "none") != ("rst" in
                                                                                         {p.name for p in net.inputs}):
        raise ValueError(f"{net.name}: the ports do not match the clocking {cfg.describe()}")

    in_flight: deque = deque()  # (VectorSet, expected planes) of loaded vectors not compared yet
    edges = 0
    failed = 0
    first = None
    total = 0
    compared = 0
    notes: list[str] = []

    def control(cycle: int, en: bool, rst: bool) -> dict[str, np.ndarray]:
        c = {"clk": zeros}
        if cfg.enable:
            c["en"] = ones if en else zeros
        if cfg.reset != "none":
            c["rst"] = (active if rst else idle).reshape(1, -1)
        c["clk"] = c["clk"].reshape(1, -1)
        if "en" in c:
            c["en"] = c["en"].reshape(1, -1)
        return c

    def outputs(planes: dict) -> np.ndarray:
        return np.concatenate([planes[p.name] for p in iface.outputs])

    def zero_inputs() -> dict[str, np.ndarray]:
        return {p.name: np.zeros((p.width, words), np.uint64) for p in data}

    def clock(inputs: dict, en: bool, rst: bool) -> np.ndarray:
        """One cycle with en and rst driven as given (rst: the reset asserted at the spec's level): the
        outputs during it, then the edge, each register as its cell says."""
        pin = (cfg.reset_level == "high") == rst  # the value on the rst pin
        pin_en = en or not cfg.enable  # a design without the port sees no stall

        def clears(f) -> bool:
            return f.reset != "none" and pin == (f.reset_level == "high")

        for i, f in kinds.items():
            if f.reset == "async" and clears(f):
                state[i] = zeros
        nxt: dict = {}
        got = outputs(ev.run(inputs, state, nxt))
        for i, f in kinds.items():
            if clears(f):
                state[i] = zeros
            elif pin_en or not f.enable:
                state[i] = nxt[i]
        return got

    cycle = 0
    if cfg.reset != "none":
        junk = zero_inputs()
        for r in range(RESET_CYCLES):
            got = clock({**junk, **control(cycle, True, True)}, True, True)
            if (cfg.reset == "async" or r > 0) and np.bitwise_or.reduce(got, axis=None):
                failed += 1
                notes.append(f"outputs not 0 during reset (cycle {cycle})")
            cycle += 1

    def compare(got: np.ndarray) -> None:
        """The outputs against the oldest vector in flight; a lane that fails once (at its loading edge, or
        holding through a stall) counts once, when the vector leaves."""
        nonlocal first
        vs, want, seen = in_flight[0]
        diff = np.bitwise_or.reduce(got[:, : want.shape[1]] ^ want, axis=0) & valid_mask(len(vs))
        seen |= diff
        if diff.any():
            if first is None:
                word = int(np.flatnonzero(diff)[0])
                bits = int(diff[word])
                lane = word * 64 + ((bits & -bits).bit_length() - 1)
                first = (vs.values(lane), plane_bit(got, lane))

    def step(piece: VectorSet | None) -> None:
        """One loading edge for ``piece`` (None: a flush cycle), after any stall cycles before it."""
        nonlocal cycle, edges, compared, failed
        while True:
            stall = cfg.enable and cycle % STALL_EVERY == STALL_AT
            if piece is not None:
                planes = {n: _pad(p, words) for n, p in iface_planes(piece, iface).items()}
            else:
                planes = zero_inputs()
            if stall:  # other values on the inputs: a stalled pipeline must not take them
                planes = {n: ~p for n, p in planes.items()}
            got = clock({**planes, **control(cycle, not stall, False)}, not stall, False)
            if edges >= k and in_flight:
                compare(got)
                if not stall:
                    failed += int(np.bitwise_count(in_flight.popleft()[2]).sum())
                    compared += 1
            cycle += 1
            if not stall:
                break
        edges += 1
        if piece is not None:
            in_flight.append((piece, to_planes(expected(piece, iface), nbits), np.zeros(words, np.uint64)))

    for piece in _pieces(plan, lanes, chunk):
        total += len(piece)
        step(piece)
        if task is not None:
            task.advance(len(piece))
    while in_flight:
        step(None)
    detail = f"{plan.describe()}; cycle by cycle, {lanes} pipelines side by side, {clocking_summary(net.iface)}"
    if notes:
        detail += "; " + "; ".join(notes)
    return total, failed, first, detail
