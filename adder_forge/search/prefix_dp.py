"""Fewest cells for a prefix network of a given depth: a dynamic program over blocks of columns.

The class of networks it searches is built from three ways of solving a block of adjacent columns, applied
recursively with every split point and every depth budget (our formulation; the moves are the classic
ones: the serial split of Ladner and Fischer 1980, the pairing of Brent and Kung 1982, the relative
prefixes combined with a carry of Sklansky 1960):

- ``bottom(m, D, T)``: the lowest m columns. Every column's prefix G[i:0] ready by depth D, except the top
  column's (which is also the block's total), ready by T.
- ``upper(m, A, D, C)``: m columns above a carry G[s-1:0] that is ready at depth A. Every column's
  G[i:0] ready by D, the top column's by C. (Nothing ever needs an upper block's own total G[top:s]:
  a column holds one chain of values, and a total beside the column's prefix would be a second one.)

Moves, each counted in cells:
- serial: split the block at a; the lower part's top prefix is the upper part's carry (its depth is
  chosen).
- pair: join columns two by two (one level), solve the pairs as a block two levels shallower for all
  but the top (the top one level), then fill in each pair's lower column from the column below it.
  The lowest column may stay alone (offset 1), and an odd top column stays alone.
- relative (``upper`` only): the block's prefixes relative to its bottom as a ``bottom`` block one
  level shallower, then one cell a column joins the carry.
- a single column above a carry: one cell.

Depth budgets only matter up to the depth asked for, so the state space is small: blocks up to n columns
times a few depths. The program returns the construction as rows; ``from_rows`` then skips any pair that
adds nothing (a driver that became complete earlier), so the built network has at most the cells the
program counted, and its count is what is reported. It is exact within its class: at depth log2 n it
reaches Sergeev 2013's exact minima at n = 16 and 32 only; at 64, 128 and 256 it gives Ladner and Fischer's
P_0 (168, 369, 792 against 167, 364, 773; docs/search.md).
"""

from __future__ import annotations

import sys
from functools import lru_cache

BAD = 10 ** 9  # infeasible


def _min_depth(m: int) -> int:
    return (m - 1).bit_length()


class Solver:
    """The program for one depth bound; ``cost(n)`` and ``ops(n)`` for the full network on n columns."""

    def __init__(self, depth: int, deadline=None):
        self.depth = depth
        self.deadline = deadline  # a callable that raises to stop a long run (the --seconds budget)
        self._calls = 0
        self.bottom = lru_cache(maxsize=None)(self._bottom)
        self.upper = lru_cache(maxsize=None)(self._upper)

    def _tick(self):
        self._calls += 1
        if self.deadline is not None and self._calls & 0xFFF == 0:
            self.deadline()

    # -- costs: (cells, move) with move a tuple describing the best choice -------------------------------------
    def _bottom(self, m: int, D: int, T: int):
        self._tick()
        if m == 1:
            return 0, ("leaf",)
        D, T = min(D, self.depth), min(T, self.depth)
        if _min_depth(m) > T or _min_depth(m - 1) > D:
            return BAD, None
        best = (BAD, None)
        for a in range(1, m):
            for t1 in range(_min_depth(a), min(D, T - 1) + 1):
                low = self.bottom(a, D, t1)[0]
                if low >= best[0]:
                    continue
                c = low + self.upper(m - a, t1, D, T)[0]
                if c < best[0]:
                    best = (c, ("serial", a, t1))
        for off in (0, 1):
            c = self._pair_cost(m, off, None, D, T)
            if c < best[0]:
                best = (c, ("pair", off))
        return best

    def _upper(self, m: int, A: int, D: int, C: int):
        self._tick()
        D, C = min(D, self.depth), min(C, self.depth)
        if A + 1 > C or (m > 1 and A + 1 > D) or max(A, _min_depth(m)) + 1 > C:
            return BAD, None
        if m == 1:
            return 1, ("leaf",)
        best = (BAD, None)
        for a in range(1, m):
            for c1 in range(A + 1, D + 1):
                low = self.upper(a, A, D, c1)[0]
                if low >= best[0]:
                    continue
                c = low + self.upper(m - a, c1, D, C)[0]
                if c < best[0]:
                    best = (c, ("serial", a, c1))
        if A <= D - 1 and A <= C - 1:
            c = self.bottom(m, D - 1, C - 1)[0] + m
            if c < best[0]:
                best = (c, ("relative", C - 1))
        for off in (0, 1):
            c = self._pair_cost(m, off, A, D, C)
            if c < best[0]:
                best = (c, ("pair", off))
        return best

    @staticmethod
    def _pair_shape(m: int, off: int):
        """Sub-columns of a paired block: (low, high) column pairs and lone columns, bottom up."""
        groups = []
        i = 0
        if off:
            groups.append((0,))
            i = 1
        while i + 1 < m:
            groups.append((i, i + 1))
            i += 2
        if i < m:
            groups.append((i,))
        return groups

    def _pair_cost(self, m: int, off: int, A, D: int, top: int) -> int:
        if m < 2 or (off and m < 3) or D < 2 or top < 2:
            return BAD
        groups = self._pair_shape(m, off)
        pairs = sum(1 for g in groups if len(g) == 2)
        if pairs == 0:
            return BAD
        k = len(groups)
        if A is None:  # bottom: column 0 needs no fill when it is the low column of the first pair
            fills = pairs - (0 if off else 1)
            return pairs + fills + self.bottom(k, D - 2, top - 1)[0]
        if not off and A + 1 > D:
            return BAD
        return pairs + pairs + self.upper(k, max(A - 1, 0), D - 2, top - 1)[0]

    # -- the construction ---------------------------------------------------------------------------------------
    def cost(self, n: int) -> int:
        return self.bottom(n, self.depth, self.depth)[0]

    def ops(self, n: int) -> list[tuple[int, int]]:
        """(column, driver) operations in an order that respects every dependence."""
        if self.cost(n) >= BAD:
            raise ValueError(f"no network on {n} inputs at depth {self.depth}")
        out: list[tuple[int, int]] = []
        limit = sys.getrecursionlimit()
        sys.setrecursionlimit(max(limit, 10000))
        try:
            self._emit_bottom(list(range(n)), self.depth, self.depth, out)
        finally:
            sys.setrecursionlimit(limit)
        return out

    def _emit_bottom(self, cols, D, T, out):
        m = len(cols)
        _, move = self.bottom(m, D, T)
        if move[0] == "leaf":
            return
        if move[0] == "serial":
            _, a, t1 = move
            self._emit_bottom(cols[:a], D, t1, out)
            self._emit_upper(cols[a:], cols[a - 1], t1, D, T, out)
            return
        self._emit_pair(cols, move[1], None, None, D, T, out)

    def _emit_upper(self, cols, carry, A, D, C, out):
        m = len(cols)
        _, move = self.upper(m, A, D, C)
        if move[0] == "leaf":
            out.append((cols[0], carry))
            return
        if move[0] == "serial":
            _, a, c1 = move
            self._emit_upper(cols[:a], carry, A, D, c1, out)
            self._emit_upper(cols[a:], cols[a - 1], c1, D, C, out)
            return
        if move[0] == "relative":
            self._emit_bottom(cols, D - 1, move[1], out)
            for c in cols:
                out.append((c, carry))
            return
        self._emit_pair(cols, move[1], carry, A, D, C, out)

    def _emit_pair(self, cols, off, carry, A, D, top, out):
        groups = self._pair_shape(len(cols), off)
        subcols = []
        for g in groups:
            if len(g) == 2:
                out.append((cols[g[1]], cols[g[0]]))
            subcols.append(cols[g[-1]])
        if carry is None:
            self._emit_bottom(subcols, D - 2, top - 1, out)
        else:
            self._emit_upper(subcols, carry, max(A - 1, 0), D - 2, top - 1, out)
        for g in groups:
            if len(g) == 2:
                lo = cols[g[0]]
                if g[0] == 0:
                    if carry is not None:
                        out.append((lo, carry))
                else:  # the (super-)column just below, whose prefix is complete by now
                    out.append((lo, cols[g[0] - 1]))


def rows_from_ops(n: int, ops) -> list[list[tuple[int, int]]]:
    """ASAP rows for operations given in dependence order: each at one level past what it reads."""
    level = [0] * n
    rows: list[list[tuple[int, int]]] = []
    for c, d in ops:
        lv = max(level[c], level[d]) + 1
        level[c] = lv
        while len(rows) < lv:
            rows.append([])
        rows[lv - 1].append((c, d))
    return rows
