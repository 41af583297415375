"""Skip-aware delay: the longest path that a carry can really take through a carry-skip adder.

A bypass multiplexer (role ``skip``, args (s, d0, d1)) promises that d0 == d1 whenever s = 1: d0 is the
carry rippled through a block from its carry-in d1, and s is the block propagate. A transition that
enters at d1 and ripples to d0 therefore only reaches the output when s = 0, and then d0 does not
depend on d1 at all. So the path d1 -> ... -> d0 -> output is false, and the skip-aware arrival of the
multiplexer output is the latest of s, d1, and d0 *as if d1 never changed*.

This is the usual unit-delay estimate for carry-skip adders (one level of skip; the classic
analysis in Parhami's and Koren's texts), not an exact sensitization analysis: it uses cells.py's level
weights and, like the structural figure, assumes every cell's worst delay on every input. It is a pure
function of the IR: the multiplexer's role is the only extra fact it needs.
"""

from __future__ import annotations

from ..ir.cells import levels_of
from ..ir.network import Network

SKIP = "skip"


def has_skip(net: Network) -> bool:
    return any(n.role == SKIP and n.op == "MUX2" for n in net.nodes)


def sensitizable_depth(net: Network, weight=levels_of) -> list[int | None]:
    """Skip-aware arrival of every node (None: cannot change, e.g. a constant). ``weight(op, nargs)`` is
    a cell's delay: cells.py's levels by default, or another unit model (delay.py's unit-gate delays)."""
    arr: list[int | None] = []
    for i, n in enumerate(net.nodes):
        if not n.args:
            arr.append(None if n.op == "CONST" else 0)
        elif n.role == SKIP and n.op == "MUX2":
            s, d0, d1 = n.args
            arr.append(_later(arr[s], arr[d1], _without(net, arr, d0, d1, weight), plus=weight(n.op, 3)))
        else:
            arr.append(_later(*(arr[a] for a in n.args), plus=weight(n.op, len(n.args))))
    return arr


def sensitizable_levels(net: Network, weight=levels_of) -> int | None:
    """Longest sensitizable output arrival, or None when the network has no bypass (then there is nothing
    to add to ``gate_levels``)."""
    if not has_skip(net):
        return None
    arr = sensitizable_depth(net, weight)
    return max((arr[b] or 0 for p in net.outputs for b in p.bits), default=0)


def _without(net: Network, arr: list[int | None], dst: int, src: int, weight=levels_of) -> int | None:
    """Arrival at ``dst`` when ``src`` never changes. Only nodes after ``src`` can depend on it (the IR is
    in topological order), so the recomputation stays inside the block between the two."""
    if dst < src:
        return arr[dst]
    local: dict[int, int | None] = {src: None}
    for x in range(src + 1, dst + 1):
        n = net.nodes[x]
        if any(a in local for a in n.args):
            local[x] = _later(*(local.get(a, arr[a]) for a in n.args), plus=weight(n.op, len(n.args)))
    return local.get(dst, arr[dst])


def _later(*times: int | None, plus: int) -> int | None:
    known = [t for t in times if t is not None]
    return max(known) + plus if known else None
