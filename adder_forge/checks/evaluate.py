"""Bit-parallel evaluation of the IR: each net is a numpy array of uint64 words, 64 vectors a word.

A plane is dropped as soon as its last reader has run, so a wide network needs memory for its live
frontier only. ``Evaluator`` is the plain form; ``schedule`` + ``Kernel`` compile the same meaning into
ufunc calls on reused buffers, for checks that evaluate one network on millions of blocks (a test holds
the two equal on every scheme).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import partial

import numpy as np

from ..ir.cells import CELLS, add_width
from ..ir.network import Network

ONES = np.uint64(0xFFFFFFFFFFFFFFFF)


def _add_planes(args: list[np.ndarray]) -> list[np.ndarray]:
    k = add_width(len(args))
    a, b, c = args[:k], args[k : 2 * k], args[2 * k]
    out = []
    for i in range(k):
        t = a[i] ^ b[i]
        out.append(t ^ c)
        c = (a[i] & b[i]) | (t & c)
    out.append(c)
    return out


class Evaluator:
    def __init__(self, net: Network):
        self.net = net
        last = [-1] * len(net.nodes)
        for i, n in enumerate(net.nodes):
            for a in n.args:
                last[a] = i
        keep = {b for p in net.outputs for b in p.bits}
        self._free_after: list[list[int]] = [[] for _ in net.nodes]
        for i, l in enumerate(last):
            if l >= 0 and i not in keep:
                self._free_after[l].append(i)

    def run(self, inputs: dict[str, np.ndarray], state: dict | None = None,
            next_state: dict | None = None) -> dict[str, np.ndarray]:
        """inputs: port name -> (port width, words) planes. Returns output port -> planes.

        A pipelined network is evaluated one clock cycle a call: ``state`` holds each register's output
        (node index -> plane) during the cycle, and ``next_state`` receives the value each register takes at
        the cycle's clock edge, before enable and reset (clocked.py applies those)."""
        net = self.net
        words = next(iter(inputs.values())).shape[1]
        val: dict[int, np.ndarray] = {}
        ports = {p.name: p for p in net.inputs}
        bit_of = {}
        for name, p in ports.items():
            for j, node in enumerate(p.bits):
                bit_of[node] = (name, j)
        zeros = np.zeros(words, dtype=np.uint64)
        ones = np.full(words, ONES)
        picks: dict[int, list[np.ndarray]] = {}
        for i, n in enumerate(net.nodes):
            op = n.op
            x = [val[a] for a in n.args]
            if op == "INPUT":
                name, j = bit_of[i]
                r = inputs[name][j]
            elif op == "CONST":
                r = ones if n.param else zeros
            elif op == "ADD":
                picks[i] = _add_planes(x)
                r = zeros
            elif op == "PICK":
                r = picks[n.args[0]][n.param]
            elif CELLS[op].kind == "register":
                r = state[i]
                if next_state is not None:
                    next_state[i] = CELLS[op].evaluate(x[0])
            else:
                r = CELLS[op].evaluate(*x)
            val[i] = r
            for dead in self._free_after[i]:
                val.pop(dead, None)
        return {p.name: np.stack([val[b] for b in p.bits]) if p.bits else np.zeros((0, words), np.uint64)
                for p in net.outputs}


# -- a compiled form for checking millions of vectors --------------------------------------------------------
# The Evaluator above allocates a fresh array for every net on every call; for exhaustive checks of 2^33
# vectors that is millions of calls, so the network is compiled once into ufunc calls on a fixed set of
# buffers ("slots", reused as nets die) and each block of words then costs only those calls.

@dataclass(frozen=True)
class Schedule:
    """Slot assignment for a network: which buffer holds each net, and the steps that compute them.

    steps: (ufunc name, input slots, output slot), in order; slot 0 holds zeros and slot 1 ones, never
    written. A gate's output slot is none of the gate's input slots, so a gate of several steps (AO21,
    MUX2, XNOR2) may build its result in place. Input slots are never reused; output bits' slots are never
    given back, so they hold the results when the last step has run.
    """

    slots: int
    steps: tuple[tuple[str, tuple[int, ...], int], ...]
    inputs: dict  # port name -> tuple of slots, LSB first
    outputs: dict  # port name -> tuple of slots, LSB first


def schedule(net: Network) -> Schedule:
    readers = [0] * len(net.nodes)
    picked: dict[int, set[int]] = {}
    for n in net.nodes:
        for a in n.args:
            readers[a] += 1
        if n.op == "PICK":
            picked.setdefault(n.args[0], set()).add(n.param)
    for p in net.outputs:
        for b in p.bits:
            readers[b] += 1  # an output bit is read at the end: its slot is never given back
    users: dict[int, int] = {}  # slot -> live nets it holds (PICKs of one ADD bit share it)
    free: list[int] = []
    count = 2  # slots 0 and 1 hold the constants

    def take() -> int:
        nonlocal count
        if free:
            return free.pop()
        count += 1
        return count - 1

    def release(slot: int) -> None:
        if slot < 2:
            return
        users[slot] -= 1
        if not users[slot]:
            free.append(slot)

    slot_of: dict[int, int] = {}

    def define(i: int, slot: int) -> None:
        slot_of[i] = slot
        users[slot] = users.get(slot, 0) + 1
        if not readers[i]:
            release(slot)

    inputs = {}
    for p in net.inputs:
        for b in p.bits:
            slot = take()
            users[slot] = 1  # input slots are filled by the caller: never reused
            define(b, slot)
        inputs[p.name] = tuple(slot_of[b] for b in p.bits)
    steps: list[tuple[str, tuple[int, ...], int]] = []
    add_outs: dict[int, list[int]] = {}
    for i, n in enumerate(net.nodes):
        op = n.op
        x = [slot_of[a] for a in n.args]
        if op == "INPUT":
            continue
        if op == "CONST":
            slot_of[i] = 1 if n.param else 0
        elif op == "PICK":
            define(i, add_outs[n.args[0]][n.param])
        elif op == "ADD":
            k = add_width(len(x))
            outs = [take() for _ in range(k + 1)]
            t, u = take(), take()
            c = x[2 * k]
            for j in range(k):  # ripple full adders: what the cell means
                a, b = x[j], x[k + j]
                steps += [("xor", (a, b), t), ("xor", (t, c), outs[j]), ("and", (a, b), u), ("and", (t, c), t),
                          ("or", (u, t), outs[k])]
                c = outs[k]
            if k == 0:
                steps.append(("or", (c, 0), outs[0]))
            free += [t, u]
            for j, o in enumerate(outs):
                users[o] = 0
                if j not in picked.get(i, ()):
                    free.append(o)
            add_outs[i] = outs
            slot_of[i] = 0  # read by its PICKs only, which take the bits' slots
        else:
            o = take()  # every slot on the free list holds a dead net, so o is none of x
            for f, pins in CELLS[op].steps:  # each step reads the cell's inputs or its own output slot
                steps.append((f, tuple(o if k < 0 else x[k] for k in pins), o))
            define(i, o)
        for a in n.args:
            if net.nodes[a].op == "ADD":
                continue
            readers[a] -= 1
            if not readers[a]:
                release(slot_of[a])
    outputs = {p.name: tuple(slot_of[b] for b in p.bits) for p in net.outputs}
    return Schedule(count, tuple(steps), inputs, outputs)


_UFUNCS = {"and": np.bitwise_and, "or": np.bitwise_or, "xor": np.bitwise_xor, "not": np.invert}


class Kernel:
    """One thread's buffers for a schedule: fill ``input(name)`` planes, call ``run()``, read ``output``.

    Every call works on the same ``words`` columns; nothing is allocated per call.
    """

    def __init__(self, sched: Schedule, words: int):
        self.sched = sched
        self.words = words
        self.buf = np.zeros((sched.slots, words), dtype=np.uint64)
        self.buf[1] = ONES
        rows = list(self.buf)
        self._calls = [partial(_UFUNCS[f], *(rows[s] for s in ins), out=rows[o]) for f, ins, o in sched.steps]

    def input(self, name: str) -> list[np.ndarray]:
        return [self.buf[s] for s in self.sched.inputs[name]]

    def output(self, name: str) -> list[np.ndarray]:
        return [self.buf[s] for s in self.sched.outputs[name]]

    def run(self) -> None:
        for call in self._calls:
            call()
