"""Structural figures of a prefix network, read off the ``PrefixGraph``: levels, fanout and wire tracks as
Harris 2003 ("A taxonomy of parallel prefix networks", Asilomar) measures them, and the cell count.

- ``prefix_nodes``: cells, black + gray, counted. A gray cell computes the group generate only; a black
  cell also the group propagate. (Harris's table has no cell counts; the closed forms the tests check are
  derived by construction from each network's paper, docs/references.md.)
- ``prefix_levels``: rows of cells in the drawn network (the level each cell is placed at). A cell may sit
  lower than its inputs force: Brent-Kung's first cell back down the tree reads values ready a row before,
  but moving it up would give its driver two lateral loads on one row. So this is Harris's count, 2L - 1
  for Brent-Kung; ``prefix_eval.longest_chain`` gives the longest chain of cells instead.
- ``prefix_fanout``: per level, the number of cells one value drives laterally at that level, plus one
  for its own column (the cell or output below it); the largest over all values and levels. A value read
  on several rows counts once per row, as a buffered column does in the drawing: Brent-Kung's G[7:0]
  drives G[15:0] on one row and G[11:0] on the next, fanout 2. A network without cells has fanout 1.
- ``wire_tracks``: per level, a value driving cells in other columns runs one horizontal wire from its
  column to the farthest of them, tapped on the way (a shared Sklansky wire is one track); tracks are the
  most such wires crossing one boundary between adjacent columns at one level. 0 without lateral wires.
- ``prefix_depth``: the longest chain of cells (``prefix_eval.longest_chain``), the depth the bounds below use.
- ``prefix_snir_gap``: cells + depth - (2m - 2) for a network computing all m prefixes of its columns:
  Snir's bound says it is never negative (Snir 1986, "Depth-size trade-offs for parallel prefix
  computation", J. Algorithms), and zero-deficiency networks reach 0 (Zhu, Cheng and Graham 2006). m is
  the inputs, or one less when the top column is dropped (an adder without carry-out); null for a pruned
  sparse tree, which is not a full prefix network.
- ``prefix_min_gap``: at depth ceil(log2 m) with m a power of two, cells minus the exact minimum there,
  3.5 * 2^k - (8.5 + 3.5 (k mod 2)) 2^floor(k/2) + k + 5 at m = 2^k (Sergeev 2013, "On the complexity of
  parallel prefix circuits", ECCC TR13-041): 31, 74, 167, 364, 773, 1614, 3327 at m = 16 ... 1024. Null
  at other depths and other m, where no exact minimum is published.
"""

from __future__ import annotations

from collections import defaultdict

from ..ir.network import PrefixGraph
from .prefix_eval import longest_chain as chain_depth


def _col(graph: PrefixGraph, r: int) -> int:
    return graph.cells[r].col if r >= 0 else -1 - r


def lateral_loads(graph: PrefixGraph) -> dict[tuple[int, int], list[int]]:
    """(value, level) -> columns of the cells reading that value laterally at that level."""
    loads: dict[tuple[int, int], list[int]] = defaultdict(list)
    for c in graph.cells:
        if _col(graph, c.lo) != c.col:
            loads[(c.lo, c.level)].append(c.col)
    return loads


def fanout(graph: PrefixGraph) -> int:
    return 1 + max((len(cols) for cols in lateral_loads(graph).values()), default=0)


def value_loads(graph: PrefixGraph) -> int:
    """The most cell inputs one value drives anywhere in the network (its column's next cell and every
    lateral read, at any level; outputs not counted): fanout as a circuit has it, the measure under which
    Sergeev 2024 bounds fanout-2 prefix circuits (as far as we know). Kogge-Stone on 2^L inputs has L
    (column 0's input is read once per level); Harris's per-level ``fanout`` gives it 2."""
    reads: dict[int, int] = defaultdict(int)
    for c in graph.cells:
        reads[c.hi] += 1
        reads[c.lo] += 1
    return max(reads.values(), default=0)


def tracks(graph: PrefixGraph) -> int:
    by_level: dict[int, list[int]] = defaultdict(lambda: [0] * (graph.inputs + 1))
    for (r, level), cols in lateral_loads(graph).items():
        lo, hi = sorted((_col(graph, r), max(cols)))
        d = by_level[level]
        d[lo] += 1  # the wire crosses boundaries lo|lo+1 .. hi-1|hi
        d[hi] -= 1
    best = 0
    for d in by_level.values():
        run = 0
        for x in d:
            run += x
            best = max(best, run)
    return best


def sergeev_minimum(m: int) -> int | None:
    """The fewest cells of a depth-log2 m prefix network on m = 2^k inputs (Sergeev 2013), else None."""
    if m < 1 or m & (m - 1):
        return None
    k = m.bit_length() - 1
    return (7 * m - (17 + 7 * (k % 2)) * (1 << (k // 2))) // 2 + k + 5


def snir_bound(m: int) -> int:
    """cells + depth >= 2m - 2 for any prefix network on m inputs (Snir 1986); 0 for one input."""
    return max(0, 2 * m - 2)


def full_outputs(graph: PrefixGraph) -> int | None:
    """m if the graph computes every prefix of columns 0..m-1 and has no cell above them, else None."""
    low = list(range(graph.inputs))
    for c in graph.cells:
        low[c.col] = min(low[c.col], c.low)
    used = max((c.col for c in graph.cells), default=0) + 1
    m = graph.inputs if used == graph.inputs or graph.inputs == 1 else max(used, graph.inputs - 1)
    return m if all(x == 0 for x in low[:m]) else None


def bound_gaps(graph: PrefixGraph) -> dict:
    m = full_outputs(graph)
    d = chain_depth(graph)
    cells = len(graph.cells)
    best = sergeev_minimum(m) if m is not None and d == (m - 1).bit_length() else None
    return {"prefix_depth": d,
            "prefix_snir_gap": None if m is None else cells + d - snir_bound(m),
            "prefix_min_gap": None if best is None else cells - best}


def prefix_figures(graph: PrefixGraph) -> dict:
    gray = sum(1 for c in graph.cells if c.gray)
    return {
        "prefix_nodes": len(graph.cells),
        "prefix_black": len(graph.cells) - gray,
        "prefix_gray": gray,
        "prefix_levels": max((c.level for c in graph.cells), default=0),
        "prefix_fanout": fanout(graph),
        "wire_tracks": tracks(graph),
        **bound_gaps(graph),
    }
