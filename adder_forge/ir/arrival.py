"""Arrival times: the one pass in topological order that every timing figure of the IR is read from.

``arrival(net, delay)`` gives every node the latest time a change can reach it, given each cell's delay
``delay(i, node)``: the 2-input gate levels of the netlist figures (structure.py), the unit-gate delays and
the unit-drive logical-effort stage delays (delay.py), with or without the skip-aware rule (skip_timing.py).

- Input bits (and register outputs, which launch at the clock edge) start at 0. Constants never change
  (``None``), and neither does a cell whose arguments all never change.
- A cell arrives at the latest of its arguments plus its own delay; ``via`` keeps the argument that set it
  (the first of equal ones, in argument order), so the critical path can be traced back.
- ``skip_aware``: a bypass multiplexer (role ``skip``, args (s, d0, d1)) promises d0 == d1 whenever s = 1
  (d0 is the carry rippled through a block from its carry-in d1, s the block propagate), so a change that
  enters at d1 and ripples to d0 only reaches the output when s = 0, and then d0 does not depend on d1.
  The path d1 -> ... -> d0 -> output is false; the multiplexer's skip-aware arrival is the latest of s,
  d1, and d0 as if d1 never changed. This is the usual unit-delay estimate for carry-skip adders (one level
  of skip; the classic analysis in Parhami's and Koren's texts), not an exact sensitization analysis.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from .cells import CELLS
from .network import Network, Node

SKIP = "skip"  # the role of a bypass multiplexer

Delay = Callable[[int, Node], float]


@dataclass(frozen=True)
class Arrival:
    times: tuple  # per node: arrival time, or None for a node that never changes
    via: tuple[int, ...]  # per node: the argument its arrival came through, -1 at a start

    def latest(self, nodes) -> int:
        """The node of ``nodes`` that arrives last (the first of equal ones); -1 if none ever changes."""
        best, end = None, -1
        for b in nodes:
            t = self.times[b]
            if t is not None and (best is None or t > best):
                best, end = t, b
        return end

    def path(self, end: int) -> list[int]:
        """The nodes of the latest path into ``end``, first to last."""
        out = []
        while end >= 0:
            out.append(end)
            end = self.via[end]
        return out[::-1]


def is_skip(node: Node) -> bool:
    return node.role == SKIP and node.op == "MUX2"


def starts(node: Node) -> bool:
    """A node whose changes start at time 0: an input bit, or a register output (kind 'register')."""
    return CELLS[node.op].kind in ("input", "register")


def arrival(net: Network, delay: Delay, *, skip_aware: bool = False) -> Arrival:
    nodes = net.nodes
    t: list = [None] * len(nodes)
    via = [-1] * len(nodes)
    for i, n in enumerate(nodes):
        if starts(n):
            t[i] = 0
            continue
        if not n.args:  # a constant
            continue
        args = n.args
        late = [t[a] for a in args]
        if skip_aware and is_skip(n):
            s, d0, d1 = args
            late = [t[s], _without(net, t, d0, d1, delay), t[d1]]
            args = (s, d0, d1)
        best, arg = None, -1
        for a, ta in zip(args, late):
            if ta is not None and (best is None or ta > best):
                best, arg = ta, a
        if arg >= 0:
            t[i] = best + delay(i, n)
            via[i] = arg
    return Arrival(tuple(t), tuple(via))


def _without(net: Network, t: list, dst: int, src: int, delay: Delay):
    """Arrival at ``dst`` when ``src`` never changes. Only nodes after ``src`` can depend on it (the IR is
    in topological order), so the recomputation stays inside the block between the two."""
    if dst < src:
        return t[dst]
    local: dict[int, object] = {src: None}
    for x in range(src + 1, dst + 1):
        n = net.nodes[x]
        if starts(n) or not any(a in local for a in n.args):
            continue
        known = [v for v in (local.get(a, t[a]) for a in n.args) if v is not None]
        local[x] = max(known) + delay(x, n) if known else None
    return local.get(dst, t[dst])


def output_bits(net: Network) -> list[int]:
    return [b for p in net.outputs for b in p.bits]


def endpoints(net: Network) -> list[int]:
    """Where timing paths end: output port bits that are not register outputs, and register data inputs
    (the same as the output bits in a combinational network)."""
    regs = [n.args[0] for n in net.nodes if CELLS[n.op].kind == "register"]
    return [b for b in output_bits(net) if CELLS[net.nodes[b].op].kind != "register"] + regs
