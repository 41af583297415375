"""Structural figures of a prefix network, read off the ``PrefixGraph``: levels, fanout and wire tracks as
Harris 2003 ("A taxonomy of parallel prefix networks", Asilomar) measures them, and the cell count.

- ``prefix_nodes``: cells, black + gray, counted. A gray cell computes the group generate only; a black
  cell also the group propagate. (Harris's table has no cell counts; the closed forms the tests check are
  derived by construction from each network's paper, docs/references.md.)
- ``prefix_levels``: rows of cells in the drawn network (the level each cell is placed at). A cell may sit
  lower than its inputs force: Brent-Kung's first cell back down the tree reads values ready a row before,
  but moving it up would give its driver two lateral loads on one row. So this is Harris's count, 2L - 1
  for Brent-Kung; ``prefix_eval.depth`` gives the longest chain of cells instead.
- ``prefix_fanout``: per level, the number of cells one value drives laterally at that level, plus one
  for its own column (the cell or output below it); the largest over all values and levels. A value read
  on several rows counts once per row, as a buffered column does in the drawing: Brent-Kung's G[7:0]
  drives G[15:0] on one row and G[11:0] on the next, fanout 2. A network without cells has fanout 1.
- ``wire_tracks``: per level, a value driving cells in other columns runs one horizontal wire from its
  column to the farthest of them, tapped on the way (a shared Sklansky wire is one track); tracks are the
  most such wires crossing one boundary between adjacent columns at one level. 0 without lateral wires.
"""

from __future__ import annotations

from collections import defaultdict

from ..ir.network import PrefixGraph


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


def prefix_figures(graph: PrefixGraph) -> dict:
    gray = sum(1 for c in graph.cells if c.gray)
    return {
        "prefix_nodes": len(graph.cells),
        "prefix_black": len(graph.cells) - gray,
        "prefix_gray": gray,
        "prefix_levels": max((c.level for c in graph.cells), default=0),
        "prefix_fanout": fanout(graph),
        "wire_tracks": tracks(graph),
    }
