"""Pure functions from Network to Network."""

from __future__ import annotations

from dataclasses import replace

from .cells import GATES
from .network import Network, Node

# A 2-input gate swapped for another of the same arity: the smallest plausible design slip.
_SWAP = {"AND2": "OR2", "OR2": "AND2", "XOR2": "XNOR2", "XNOR2": "XOR2"}


def gate_indices(net: Network, role: str | None = None) -> list[int]:
    return [i for i, n in enumerate(net.nodes) if n.op in GATES and (role is None or n.role == role)]


def break_gate(net: Network, index: int, op: str | None = None) -> Network:
    """The same network with one gate's function changed (mutation testing: the checks must notice)."""
    n = net.nodes[index]
    if op is None:
        if n.op == "AO21":
            new = Node("MUX2", n.args, n.name, n.role, n.param)  # (x&y)|z -> x ? z : y
        elif n.op == "MUX2":
            new = Node("AO21", n.args, n.name, n.role, n.param)
        elif n.op == "NOT":
            raise ValueError("no single-op swap for NOT; pass op explicitly")
        else:
            new = Node(_SWAP[n.op], n.args, n.name, n.role, n.param)
    else:
        new = Node(op, n.args, n.name, n.role, n.param)
    nodes = list(net.nodes)
    nodes[index] = new
    return replace(net, nodes=tuple(nodes))
