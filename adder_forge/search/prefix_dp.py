"""Fewest cells for a prefix network of a given depth: a dynamic program over blocks of columns.

The class of networks it searches is built from a few ways of solving a block of adjacent columns, applied
recursively with every split point and every depth budget (our formulation; the first moves are the
classic ones: the serial split of Ladner and Fischer 1980, the pairing of Brent and Kung 1982 widened to
groups, the relative prefixes combined with a carry of Sklansky 1960; the merge is ours):

- ``bottom(m, D, T)``: the lowest m columns. Every column's prefix G[i:0] ready by depth D, except the top
  column's (which is also the block's total), ready by T.
- ``upper(m, A, D, C)``: m columns above a carry G[s-1:0] that is ready at depth A. Every column's
  G[i:0] ready by D, the top column's by C.

Moves, each counted in cells:
- serial: split the block at a; the lower part's top prefix is the upper part's carry (its depth is
  chosen).
- group (g, f, a): cut the block into groups of g adjacent columns (the lowest of f, the top one what is
  left); each group's prefixes relative to its lowest column, its total by depth a; the group tops solved
  as a block whose depths are shifted by a (ready by D - 1); then every other column of a group joins the
  complete top of the group below (or the carry) at the last level. g = 2 is Brent and Kung's pairing.
- relative (``upper`` only): the block's prefixes relative to its bottom as a ``bottom`` block one
  level shallower, then one cell a column joins the carry.
- merge (only inside a group move's block of group tops, whose groups' other columns have their
  relative prefixes by the time the totals are ready): join neighbouring group tops two by two, as a
  pairing would, but do not complete the lower top inside the block. Instead the lower top and every
  column of both groups join the column below the lower group at the group move's last level; the upper
  group's other columns first take the lower top's total (one cell each). The block of merged tops is
  then due one level later than a pairing's would be (its columns need not complete the lower tops), and
  a lower top skips every carry cell a relative move above it would give it. That is what lets a higher
  column use a group's own total G[top:s] before the group gets its carry. The lowest pair of a block
  that is solved relative to a carry still to come may merge as well (its late fill then comes from that
  carry). When two groups of four that are themselves merged pairs merge again, the upper group's column
  that read its own merged-away top (its pair's lower top) does not take the lower total itself: it reads
  that top again once the top has the total, one cell fewer. These two made the last cell at 256 inputs
  (found by an exact re-solve, with CP-SAT, of columns 120 .. 127 of the 774-cell network).

States are (block size, carry depth, deadline for the block's columns, deadline for its top column) and,
inside a group move, (group size, top group size, carry steps still to come, whether the groups are merged
ones); the construction comes back as rows. ``from_rows`` skips any pair that adds nothing, so the built
network has at most the cells the program counted (the tests check it has exactly those). It is exact within its class; at depth log2 n
it reaches Sergeev 2013's exact minima at n = 16, 32, 64, 128 and 256 (31, 74, 167, 364, 773);
below Ladner and Fischer's P_0 from 64 on (docs/search.md).
"""

from __future__ import annotations

import sys
from functools import lru_cache

BAD = 10 ** 9  # infeasible


def _min_depth(m: int) -> int:
    return (m - 1).bit_length()


class _Groups:
    """Emission state of one group move (the flag's creator): whose members fill from where, at the end."""

    def __init__(self):
        self.members: dict[int, list[int]] = {}  # group top -> its other columns
        self.fill_from: dict[int, int] = {}  # member -> the complete column it joins at the last level
        self.order: list[int] = []  # members and merged-away tops, in the order they were made
        self.dropped: set[int] = set()  # merged-away tops: no carry cell, a late fill instead
        self.member_read: dict[int, int] = {}  # member -> the merged-away top its last merge cell read
        self.member_cell: dict[int, int] = {}  # member -> where that cell is in the output


class Solver:
    """The program for one depth bound; ``cost(n)`` and ``ops(n)`` for the full network on n columns."""

    GROUP_MAX = 4  # widest group tried: 8 gave nothing more at 16 .. 256 inputs (docs/search.md)
    MERGED_MAX = 64  # widest merged group
    PEND_MAX = 4

    def __init__(self, depth: int, deadline=None, rich: bool = True):
        """``rich=False``: pairs only, no merges (the class of Ladner and Fischer's P_0, Brent-Kung and
        Sklansky; much faster at large depths, where it already meets Snir's bound)."""
        self.depth = depth
        self.rich = rich
        self.deadline = deadline  # a callable that raises to stop a long run (the --seconds budget)
        self._calls = 0
        self.bottom = lru_cache(maxsize=None)(self._bottom)
        self.upper = lru_cache(maxsize=None)(self._upper)

    def _tick(self):
        self._calls += 1
        if self.deadline is not None and self._calls & 0xFFF == 0:
            self.deadline()

    # -- costs: (cells, move) with move a tuple describing the best choice -------------------------------------
    # ``fl`` is None or (s, sl, pend): the block's columns are tops of groups (s columns each, the top one sl)
    # whose other columns join the column below the group at a later level, and pend carry steps will
    # follow for every column still held; only then may two neighbouring groups merge.
    def _bottom(self, m: int, D: int, T: int, fl=None):
        self._tick()
        if m == 1:
            return 0, ("leaf",)
        D, T = min(D, self.depth), min(T, self.depth)
        if _min_depth(m) > T or _min_depth(m - 1) > D:
            return BAD, None
        best = (BAD, None)
        fl_low = None if fl is None else (fl[0], fl[0], fl[2], fl[3])
        for a in range(1, m):
            for t1 in range(_min_depth(a), min(D, T - 1) + 1):
                low = self.bottom(a, D, t1, fl_low)[0]
                if low >= best[0]:
                    continue
                c = low + self.upper(m - a, t1, D, T, fl)[0]
                if c < best[0]:
                    best = (c, ("serial", a, t1))
        return self._grouped(m, None, D, T, fl, best)

    def _upper(self, m: int, A: int, D: int, C: int, fl=None):
        self._tick()
        D, C = min(D, self.depth), min(C, self.depth)
        if A + 1 > C or (m > 1 and A + 1 > D) or max(A, _min_depth(m)) + 1 > C:
            return BAD, None
        if m == 1:
            return 1, ("leaf",)
        best = (BAD, None)
        fl_low = None if fl is None else (fl[0], fl[0], fl[2], fl[3])
        for a in range(1, m):
            for c1 in range(A + 1, D + 1):
                low = self.upper(a, A, D, c1, fl_low)[0]
                if low >= best[0]:
                    continue
                c = low + self.upper(m - a, c1, D, C, fl)[0]
                if c < best[0]:
                    best = (c, ("serial", a, c1))
        if A <= D - 1 and A <= C - 1:
            fl_rel = None if fl is None else (fl[0], fl[1], min(fl[2] + 1, self.PEND_MAX), fl[3])
            c = self.bottom(m, D - 1, C - 1, fl_rel)[0] + m
            if c < best[0]:
                best = (c, ("relative", C - 1))
        return self._grouped(m, A, D, C, fl, best)

    def _grouped(self, m: int, carry, D: int, T: int, fl, best):
        """``best`` improved by the group moves and, with pending fills, the merge moves: the same for a
        bottom block (``carry`` None) and an upper one (``carry`` the carry's depth)."""
        for choice in self._group_choices(m):
            c = self._group_cost(m, choice, carry, D, T, best[0])
            if c < best[0]:
                best = (c, ("group",) + choice)
        if fl is not None:
            for off in (0, 1):
                c = self._merge_cost(m, off, fl, carry, D, T)
                if c < best[0]:
                    best = (c, ("merge", off))
        return best

    def _group_choices(self, m: int):
        if not self.rich:
            for f in (1, 2):
                if f < m:
                    yield 2, f, 1, False
            return
        for g in range(2, min(self.GROUP_MAX, m) + 1):
            a0 = _min_depth(g)
            for f in range(1, g + 1):
                if f >= m:
                    break
                for a in (a0, a0 + 1):
                    yield g, f, a, True
                    if g > 2:
                        yield g, f, a, False

    @staticmethod
    def _group_shape(m: int, g: int, f: int):
        """Sub-blocks of a grouped block, bottom up: the lowest of f columns, then g each (the top one
        may be shorter)."""
        groups = [list(range(f))]
        i = f
        while i < m:
            groups.append(list(range(i, min(i + g, m))))
            i += g
        return groups

    def _group_cost(self, m: int, choice, A, D: int, top: int, limit: int) -> int:
        g, f, a, early = choice
        groups = self._group_shape(m, g, f)
        k = len(groups)
        if k < 2 or k == m or D - 1 - a < 0 or top - a < 1:
            return BAD
        cost = 0
        for i, grp in enumerate(groups):
            size = len(grp)
            if A is None and i == 0:  # the lowest group's prefixes are final: no fill
                cost += self.bottom(size, D, a)[0]
            else:  # early: every column of the group ready when its total is, so groups may merge later
                cost += self.bottom(size, a if early else D - 1, a)[0] + size - 1
            if cost >= limit:
                return BAD
        fl = (g, len(groups[-1]), 0, 0) if early else None
        if A is None:
            return cost + self.bottom(k, D - 1 - a, top - a, fl)[0]
        if len(groups[0]) > 1 and A + 1 > D:
            return BAD
        return cost + self.upper(k, max(A - a, 0), D - 1 - a, top - a, fl)[0]

    @staticmethod
    def _merge_shape(m: int, off: int):
        """(lo, hi) index pairs and lone indices of a merge, bottom up."""
        groups = [(0,)] if off else []
        i = off
        while i + 1 < m:
            groups.append((i, i + 1))
            i += 2
        if i < m:
            groups.append((i,))
        return groups

    def _merge_cost(self, m: int, off: int, fl, A, D: int, top: int) -> int:
        s, sl, pend, merged = fl
        if D < 1 or top < 1 or (off and m < 3) or 2 * s > self.MERGED_MAX:
            return BAD
        groups = self._merge_shape(m, off)
        cost = 0
        for grp in groups:
            if len(grp) == 1:
                continue
            if A is None and grp[0] == 0 and pend == 0:  # the lowest column is complete: an ordinary pair
                cost += 1
                continue
            hi_size = sl if grp[1] == m - 1 else s
            # the pair, one cell for each other column of the upper group, the late fill of the lower
            # top, less the carry cells it no longer gets
            cost += 1 + (hi_size - 1) + 1 - pend - (1 if merged and hi_size == s == 4 else 0)
        last_paired = len(groups[-1]) == 2
        sub = (2 * s, s + sl if last_paired else sl, pend, 1)
        k = len(groups)
        if A is None:
            return cost + self.bottom(k, D - 1, top - 1, sub)[0]
        return cost + self.upper(k, max(A - 1, 0), D - 1, top - 1, sub)[0]

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
            self._emit_bottom(list(range(n)), self.depth, self.depth, None, None, out)
        finally:
            sys.setrecursionlimit(limit)
        return [op for op in out if op is not None]

    def _emit_bottom(self, cols, D, T, fl, ctx, out, below=None):
        m = len(cols)
        _, move = self.bottom(m, D, T, fl)
        if move[0] == "leaf":
            return
        if move[0] == "serial":
            _, a, t1 = move
            fl_low = None if fl is None else (fl[0], fl[0], fl[2], fl[3])
            self._emit_bottom(cols[:a], D, t1, fl_low, ctx, out, below)
            self._emit_upper(cols[a:], cols[a - 1], t1, D, T, fl, ctx, out)
        elif move[0] == "group":
            self._emit_group(cols, move[1:], None, None, D, T, out)
        else:
            self._emit_merge(cols, move[1], fl, ctx, None, None, D, T, out, below)

    def _emit_upper(self, cols, carry, A, D, C, fl, ctx, out):
        m = len(cols)
        _, move = self.upper(m, A, D, C, fl)
        if move[0] == "leaf":
            out.append((cols[0], carry))
        elif move[0] == "serial":
            _, a, c1 = move
            fl_low = None if fl is None else (fl[0], fl[0], fl[2], fl[3])
            self._emit_upper(cols[:a], carry, A, D, c1, fl_low, ctx, out)
            self._emit_upper(cols[a:], cols[a - 1], c1, D, C, fl, ctx, out)
        elif move[0] == "relative":
            fl_rel = None if fl is None else (fl[0], fl[1], min(fl[2] + 1, self.PEND_MAX), fl[3])
            self._emit_bottom(cols, D - 1, move[1], fl_rel, ctx, out, carry)
            for c in cols:
                if ctx is None or c not in ctx.dropped:
                    out.append((c, carry))
        elif move[0] == "group":
            self._emit_group(cols, move[1:], carry, A, D, C, out)
        else:
            self._emit_merge(cols, move[1], fl, ctx, carry, A, D, C, out)

    def _emit_group(self, cols, choice, carry, A, D, top, out):
        g, f, a, early = choice
        groups = [[cols[i] for i in grp] for grp in self._group_shape(len(cols), g, f)]
        ctx = _Groups()
        for i, grp in enumerate(groups):  # each group's prefixes relative to its own lowest column
            final = carry is None and i == 0
            self._emit_bottom(grp, D if final else (a if early else D - 1), a, None, None, out)
            if not final:
                ctx.members[grp[-1]] = grp[:-1]
                for c in grp[:-1]:
                    ctx.fill_from[c] = carry if i == 0 else groups[i - 1][-1]
                    ctx.order.append(c)
        subcols = [grp[-1] for grp in groups]
        fl = (g, len(groups[-1]), 0, 0) if early else None
        if carry is None:
            self._emit_bottom(subcols, D - 1 - a, top - a, fl, ctx, out)
        else:
            self._emit_upper(subcols, carry, max(A - a, 0), D - 1 - a, top - a, fl, ctx, out)
        for c in ctx.order:  # then every other column from the complete column below its group
            out.append((c, ctx.fill_from[c]))

    def _emit_merge(self, cols, off, fl, ctx, carry, A, D, top, out, below_block=None):
        groups = self._merge_shape(len(cols), off)
        s, sl, pend, merged = fl
        subcols = []
        for grp in groups:
            if len(grp) == 2:
                lo, hi = cols[grp[0]], cols[grp[1]]
                if carry is None and grp[0] == 0 and pend == 0:
                    out.append((hi, lo))  # an ordinary pair: the lowest column is complete
                else:
                    lo_group = ctx.members.get(lo, [])
                    # the complete column under lo's group; for the lowest pair of a block solved relative
                    # to a carry still to come, that carry
                    below = cols[grp[0] - 1] if grp[0] else (carry if carry is not None else below_block)
                    hi_members = ctx.members.get(hi, [])
                    hi_size = sl if grp[1] == len(cols) - 1 else s
                    late = set(hi_members) if merged and hi_size == s == 4 else set()
                    for c in hi_members:  # the upper group's columns reach down to lo's group
                        d = ctx.member_read.get(c)
                        if d in late:  # c read a merged-away top of its own group: read it again, later
                            out[ctx.member_cell[c]] = None
                            ctx.member_cell[c] = len(out)
                            out.append((c, d))
                        else:
                            ctx.member_cell[c] = len(out)
                            ctx.member_read[c] = lo
                            out.append((c, lo))
                        ctx.fill_from[c] = below
                    out.append((hi, lo))
                    ctx.dropped.add(lo)
                    ctx.fill_from[lo] = below
                    ctx.order.append(lo)
                    ctx.members[hi] = lo_group + [lo] + hi_members
            subcols.append(cols[grp[-1]])
        sub = (2 * s, s + sl if len(groups[-1]) == 2 else sl, pend, 1)
        if carry is None:
            self._emit_bottom(subcols, D - 1, top - 1, sub, ctx, out, below_block)
        else:
            self._emit_upper(subcols, carry, max(A - 1, 0), D - 1, top - 1, sub, ctx, out)


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
