"""Skip-aware delay: the longest path that a carry can really take through a carry-skip adder.

A bypass multiplexer (role ``skip``, args (s, d0, d1)) promises that d0 == d1 whenever s = 1, so the
path d1 -> ... -> d0 -> output is false (arrival.py states the rule and does the pass). It uses cells.py's
level weights by default and, like the structural figure, assumes every cell's worst delay on every
input. It is a pure function of the IR: the multiplexer's role is the only extra fact it needs.
"""

from __future__ import annotations

from ..ir.cells import cell_levels
from ..ir.network import Network
from ..ir.arrival import SKIP, arrival, endpoints, is_skip

__all__ = ["SKIP", "has_skip", "sensitizable_depth", "sensitizable_levels"]


def has_skip(net: Network) -> bool:
    return any(is_skip(n) for n in net.nodes)


def sensitizable_depth(net: Network, weight=cell_levels) -> list[int | None]:
    """Skip-aware arrival of every node (None: cannot change, e.g. a constant). ``weight(op, nargs)`` is
    a cell's delay: cells.py's levels by default, or another unit model (delay.py's unit-gate delays)."""
    return list(arrival(net, lambda i, n: weight(n.op, len(n.args)), skip_aware=True).times)


def sensitizable_levels(net: Network, weight=cell_levels) -> int | None:
    """Longest sensitizable output arrival, or None when the network has no bypass (then there is nothing
    to add to ``gate_levels``)."""
    if not has_skip(net):
        return None
    arr = sensitizable_depth(net, weight)
    return max((arr[b] or 0 for b in endpoints(net)), default=0)
