"""Pure functions from Network to Network."""

from __future__ import annotations

from dataclasses import replace

from .cells import CELLS, GATES
from .network import Network, Node




def gate_indices(net: Network, role: str | None = None) -> list[int]:
    return [i for i, n in enumerate(net.nodes) if n.op in GATES and (role is None or n.role == role)]


def break_gate(net: Network, index: int, op: str | None = None) -> Network:
    """The same network with one gate's function changed (mutation testing: the checks must notice)."""
    n = net.nodes[index]
    if op is None:
        # cells.py names each gate's slip: AND2 <-> OR2, XOR2 <-> XNOR2, AO21 (x&y)|z <-> MUX2 x ? z : y
        op = CELLS[n.op].slip
        if op is None:
            raise ValueError(f"no single-op swap for {n.op}; pass op explicitly")
    new = Node(op, n.args, n.name, n.role, n.param)
    nodes = list(net.nodes)
    nodes[index] = new
    return replace(net, nodes=tuple(nodes))
