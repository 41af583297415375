"""Bit-parallel evaluation of the IR: each net is a numpy array of uint64 words, 64 vectors a word.

A plane is dropped as soon as its last reader has run, so a wide network needs memory for its live
frontier only.
"""

from __future__ import annotations

import numpy as np

from .cells import add_width
from .ir import Network

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

    def run(self, inputs: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
        """inputs: port name -> (port width, words) planes. Returns output port -> planes."""
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
            elif op == "AND2":
                r = x[0] & x[1]
            elif op == "OR2":
                r = x[0] | x[1]
            elif op == "XOR2":
                r = x[0] ^ x[1]
            elif op == "XNOR2":
                r = ~(x[0] ^ x[1])
            elif op == "NOT":
                r = ~x[0]
            elif op == "AO21":
                r = (x[0] & x[1]) | x[2]
            elif op == "MUX2":
                r = (x[1] & ~x[0]) | (x[2] & x[0])
            elif op == "ADD":
                picks[i] = _add_planes(x)
                r = zeros
            elif op == "PICK":
                r = picks[n.args[0]][n.param]
            else:  # pragma: no cover - check_well_formed rejects unknown ops
                raise ValueError(f"cannot evaluate op {op}")
            val[i] = r
            for dead in self._free_after[i]:
                val.pop(dead, None)
        return {p.name: np.stack([val[b] for b in p.bits]) if p.bits else np.zeros((0, words), np.uint64)
                for p in net.outputs}
