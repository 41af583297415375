"""Parallel-prefix carry networks: pure constructions, one small function per network, in a registry.

A network over ``n`` columns computes the group generate G[i:0] of every column i (column 0 is bit 0, or
the carry-in when the adder has one, which makes n = width + 1). Every cell is the 2-input carry operator
(G, P)[i:k] = (G_hi | P_hi & G_lo, P_hi & P_lo), which is associative (Brent and Kung 1982) and idempotent
(common practice), so a cell may also combine two *overlapping* spans: [i:j] with [m:k] for j - 1 <= m < i
gives [i:k]. The Knowles networks and the interior of the Harris taxonomy rely on that.

Networks are described as rows of lateral combinations: row k (level k) lists ``(column, driver)`` pairs,
each combining the column's current value with the driver column's current value as both stood before the
row. ``from_rows`` turns that into frozen cells, skips pairs that would add nothing, drops dead cells,
marks gray cells (those whose group propagate nobody reads: exactly the cells reaching column 0) and
numbers the non-empty rows 1, 2, ... So a network function only says which column reads which, per level.

The published forms built here, L = ceil(log2 n):
- ``kogge-stone`` (Kogge and Stone 1973): level k, every column i >= 2^(k-1) reads column i - 2^(k-1).
- ``sklansky`` (Sklansky 1960): level k, columns with bit k-1 set read the top of the block below them.
- ``brent-kung`` (Brent and Kung 1982), ``han-carlson`` (Han and Carlson 1987), ``ladner-fischer``:
  the corners (L-1, 0, 0), (1, 0, L-2) and (1, L-2, 0) of the Harris taxonomy (below). The last is the
  form Harris 2003 and the VLSI literature call Ladner-Fischer: Sklansky on the odd columns, one level
  to pair columns first and one to fill in the even ones, L + 1 levels.
- ``ladner-fischer-p0``: Ladner and Fischer's own depth-optimal circuit P_0(n) (Ladner and Fischer 1980,
  "Parallel prefix computation", J. ACM): P_0(n) is P_1 over the lower 2^(L-1) columns beside P_0 over
  the rest, the lower total then read by every upper column; P_1(m) pairs adjacent columns, runs P_0 on
  the pairs and fills in the even columns. Depth L, 4n + 1 - F(L+5) cells at n = 2^L (Knuth, TAOCP 4
  fascicle 0, ex. 7.1.2-36).
- ``knowles`` (Knowles 2001, "A family of adders"): minimum depth L with a lateral fanout per level,
  given as in the paper with the level nearest the outputs first: [1, 1, 1, 1] is Kogge-Stone, [8, 4, 2, 1]
  has Sklansky's wiring. At level k with fanout f, the f columns of each aligned group share one driver,
  the column 2^(k-1) below the group's top. Fanouts are powers of two, level k's at most 2^(k-1), and no
  level's less than the level before it (so the list never grows from left to right). That rule is ours:
  it is exactly the set of lists for which this construction is a valid network (checked exhaustively in
  the tests; there are Catalan-many, 14 at 16 bits). Every column gets a cell at every level until it is
  complete, so every Knowles network has the Kogge-Stone cell count.
- ``harris`` (Harris 2003, "A taxonomy of parallel prefix networks", Asilomar): (l, f, t) with
  l + f + t = L - 1, L + l levels, fanout 2^f + 1 and 2^t wire tracks. Our construction: l Brent-Kung
  levels that fold each aligned block of 2^l columns into its top column, a core of L - l levels over
  those top columns with Knowles fanouts [2^f, ..., 4, 2, 1, ..., 1] from which redundant cells are
  dropped (a cell whose only reader is the next cell of its own column, when that reader's driver still
  touches the older value below it), then l Brent-Kung levels filling in the other columns. The corners
  are Brent-Kung, Sklansky and Kogge-Stone, cell for cell (tested); the levels, fanout and tracks of
  Harris's table are reproduced exactly, and the cell counts match the closed forms derived by
  construction from each network's own paper (docs/references.md).

Adding a network: write ``@network("name", source="Author year, title")`` over a function ``(n) ->
PrefixGraph`` (or ``(n, value)`` with ``param="key"`` for a parameterised family and a ``validate`` that
raises ``NetworkError`` for a value that does not fit n) that returns ``from_rows(n, rows, style)``.
The scheme, metrics, tests and simulator matrix pick it up from ``NETWORKS``.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Callable

from ..base.errors import NetworkError
from ..ir.network import PrefixCell, PrefixGraph

__all__ = ["NETWORKS", "NetworkError", "NetworkType", "build", "final_refs", "from_rows", "ceil_log2", "network",
           "param_levels", "prune", "validate"]


@dataclass(frozen=True)
class NetworkType:
    name: str
    build: Callable[..., PrefixGraph]  # (n) or (n, value) -> PrefixGraph
    source: str
    param: str | None = None  # the spec key holding the family's parameter
    validate: Callable[..., None] | None = None  # (n, value, context) -> None, raises NetworkError


NETWORKS: dict[str, NetworkType] = {}


def network(name: str, *, source: str, param: str | None = None, validate=None):
    def deco(fn):
        if name in NETWORKS:
            raise ValueError(f"prefix network {name} registered twice")
        NETWORKS[name] = NetworkType(name, fn, source, param, validate)
        return fn

    return deco


def ceil_log2(n: int) -> int:
    """ceil(log2 n): the fewest levels of 2-input cells that can reach n columns (0 for one column)."""
    return (n - 1).bit_length()


def param_levels(n: int) -> int:
    """Levels the parameter families are sized for: a 1-input network takes the 2-input parameters."""
    return max(1, ceil_log2(n))


def build(name: str, n: int, value=None) -> PrefixGraph:
    """The network ``name`` over ``n`` columns, every column an output."""
    kind = NETWORKS[name]
    if kind.param is None:
        return kind.build(n)
    if kind.validate is not None:
        kind.validate(n, value)
    return kind.build(n, value)


# -- the generic construction ------------------------------------------------------------------------------
class _Cell:
    __slots__ = ("col", "low", "level", "hi", "lo")

    def __init__(self, col, low, level, hi, lo):
        self.col, self.low, self.level, self.hi, self.lo = col, low, level, hi, lo


def from_rows(n: int, rows, style: str, *, lazy: bool = False) -> PrefixGraph:
    """Frozen cells from rows of ``(column, driver)`` pairs (see the module docstring): any legal rows, from a
    construction, a network file or a search.

    ``lazy`` drops redundant cells: a cell read only by the next cell of its own column goes when that
    reader's driver still touches the value below it (Sklansky is Knowles [2^(L-1), ..., 1] made lazy).
    Rows that do not make a prefix network raise ``NetworkError`` naming the level (1-based) and the pair:
    a column or driver out of range, a driver not below its column, a column combined twice in one row, a
    gap between a column's span and its driver's, or a column left incomplete after the last row.
    """
    if isinstance(n, bool) or not isinstance(n, int) or n < 1:
        raise NetworkError(f"{style}: a network needs 1 or more inputs, got {n!r}")
    cells: list[_Cell] = []
    cur = [-1 - c for c in range(n)]  # reference to each column's current value
    low = list(range(n))
    for level, row in enumerate(rows, 1):
        ref0, low0 = cur[:], low[:]
        for pair in row:
            c, d = _pair(pair, style, level)
            if not 0 <= d < c < n:
                why = f"columns are 0..{n - 1}" if not (0 <= c < n and 0 <= d < n) else "the driver must be below the column"
                raise NetworkError(f"{style}: bad pair ({c}, {d}) at level {level}: {why}")
            if cur[c] != ref0[c]:
                raise NetworkError(f"{style}: column {c} combined twice at level {level}")
            if low0[d] >= low0[c]:
                continue  # the driver adds nothing the column does not have
            if d < low0[c] - 1:
                gap = f"column {d + 1}" if d + 1 == low0[c] - 1 else f"columns {d + 1}..{low0[c] - 1}"
                raise NetworkError(f"{style}: column {c} [{c}:{low0[c]}] cannot reach driver {d} at level {level}: "
                                   f"{gap} missing between them")
            cells.append(_Cell(c, low0[d], level, ref0[c], ref0[d]))
            cur[c], low[c] = len(cells) - 1, low0[d]
    open_cols = [c for c in range(n) if low[c]]
    if open_cols:
        raise NetworkError(f"{style}: {len(open_cols)} column(s) not complete after the last row, first "
                           f"{', '.join(map(str, open_cols[:4]))} (column {open_cols[0]} reaches only down to "
                           f"{low[open_cols[0]]})")
    if lazy:
        _drop_redundant(cells, n)
    return _freeze(n, cells, [cur[c] for c in range(n)], style)


def _pair(pair, style: str, level: int) -> tuple[int, int]:
    try:
        c, d = pair
    except (TypeError, ValueError):
        raise NetworkError(f"{style}: level {level} holds {pair!r}, not a (column, driver) pair") from None
    for x in (c, d):
        if isinstance(x, bool) or not isinstance(x, int):
            raise NetworkError(f"{style}: level {level} holds {pair!r}: columns are integers")
    return c, d


def validate(graph: PrefixGraph) -> PrefixGraph:
    """``graph`` itself if it is a legal prefix network, else ``NetworkError``: every cell reads its own
    column's earlier value and a value reaching the gap below it, from an earlier level, records the span it
    computes, marks gray only a cell whose propagate nobody reads, and every column ends complete.
    A graph from ``from_rows`` always passes; this guards graphs built elsewhere (a search, a test)."""
    n = graph.inputs
    span: list[tuple[int, int]] = []
    level: list[int] = []

    def of(r: int, k: int) -> tuple[int, int, int]:
        if r < 0:
            if not 0 <= -1 - r < n:
                raise NetworkError(f"{graph.style}: cell {k} reads input column {-1 - r}, not one of 0..{n - 1}")
            return -1 - r, -1 - r, 0
        if r >= k:
            raise NetworkError(f"{graph.style}: cell {k} reads cell {r}, which is not before it")
        return span[r] + (level[r],)

    for k, c in enumerate(graph.cells):
        (ht, hb, hl), (lt, lb, ll) = of(c.hi, k), of(c.lo, k)
        if ht != c.col or not (hb - 1 <= lt < ht and lb < hb):
            raise NetworkError(f"{graph.style}: cell {k} in column {c.col} combines [{ht}:{hb}] with [{lt}:{lb}]")
        if lb != c.low or c.level <= max(hl, ll):
            raise NetworkError(f"{graph.style}: cell {k} records [{c.col}:{c.low}] at level {c.level} but computes "
                               f"[{c.col}:{lb}] from level {max(hl, ll)}")
        if c.lo >= 0 and not c.gray and graph.cells[c.lo].gray or c.hi >= 0 and graph.cells[c.hi].gray:
            raise NetworkError(f"{graph.style}: cell {k} reads the propagate of a gray cell")
        span.append((ht, lb))
        level.append(c.level)
    bad = [c for c, r in enumerate(final_refs(graph)) if r >= 0 and span[r][1] != 0 or r < 0 and c != 0]
    if bad:
        raise NetworkError(f"{graph.style}: column {bad[0]} does not end complete")
    return graph


def _drop_redundant(cells: list[_Cell], n: int) -> None:
    """Remove (mark level 0) every cell read only by its column's next cell when that reader can take
    the older value instead. Removing one only lowers the use counts of lower columns, so one pass from the
    top column down, each column from its last cell down, reaches the fixed point."""
    uses = [0] * len(cells)
    nxt: list[int | None] = [None] * len(cells)
    by_col: list[list[int]] = [[] for _ in range(n)]
    for k, c in enumerate(cells):
        for r in (c.hi, c.lo):
            if r >= 0:
                uses[r] += 1
        if c.hi >= 0:
            nxt[c.hi] = k
        by_col[c.col].append(k)

    def col_of(r):
        return cells[r].col if r >= 0 else -1 - r

    def low_of(r):
        return cells[r].low if r >= 0 else -1 - r

    for col in range(n - 1, -1, -1):
        chain = by_col[col]
        for k in reversed(chain[:-1]):
            reader = nxt[k]
            c = cells[k]
            if uses[k] == 1 and reader is not None and col_of(cells[reader].lo) >= low_of(c.hi) - 1:
                cells[reader].hi = c.hi
                if c.hi >= 0:
                    nxt[c.hi] = reader
                if c.lo >= 0:
                    uses[c.lo] -= 1
                c.level = 0  # removed


def _freeze(n: int, cells: list[_Cell], outputs: list[int], style: str) -> PrefixGraph:
    """Keep what the outputs read, mark gray cells, number the rows densely, order by (level, column)."""
    live = [False] * len(cells)
    for r in outputs:
        if r >= 0:
            live[r] = True
    need_p = [False] * len(cells)
    for k in range(len(cells) - 1, -1, -1):  # readers come after what they read
        if not live[k]:
            continue
        c = cells[k]
        if c.level <= 0:  # _drop_redundant only removes cells nobody reads any more
            raise NetworkError(f"{style}: a removed cell is still read")
        if c.hi >= 0:
            live[c.hi] = need_p[c.hi] = True  # G = G_hi | P_hi & G_lo always reads P_hi
        if c.lo >= 0:
            live[c.lo] = True
            need_p[c.lo] = need_p[c.lo] or need_p[k]
    keep = sorted((k for k in range(len(cells)) if live[k]), key=lambda k: (cells[k].level, cells[k].col))
    rows = {lv: i + 1 for i, lv in enumerate(sorted({cells[k].level for k in keep}))}
    index = {k: i for i, k in enumerate(keep)}

    def ref(r):
        return index[r] if r >= 0 else r

    frozen = tuple(PrefixCell(cells[k].col, cells[k].low, rows[cells[k].level], ref(cells[k].hi), ref(cells[k].lo),
                              not need_p[k]) for k in keep)
    return PrefixGraph(n, frozen, style)


def final_refs(graph: PrefixGraph) -> list[int]:
    """Reference to each column's last value: its highest cell, or the input itself."""
    out = [-1 - c for c in range(graph.inputs)]
    for k, c in enumerate(graph.cells):
        out[c.col] = k  # cells are ordered by level
    return out


def prune(graph: PrefixGraph, outputs, style: str | None = None) -> PrefixGraph:
    """The same network keeping only what the given output columns need (sparse trees, no carry-out)."""
    style = graph.style if style is None else style
    if sorted(outputs) == list(range(graph.inputs)):
        return replace(graph, style=style)  # every cell of a full network feeds its column's output
    cells = [_Cell(c.col, c.low, c.level, c.hi, c.lo) for c in graph.cells]
    last = final_refs(graph)
    refs = []
    for col in outputs:
        r = last[col]
        if (cells[r].low if r >= 0 else col) != 0:
            raise NetworkError(f"column {col} is not an output of {graph.style}")
        refs.append(r)
    return _freeze(graph.inputs, cells, refs, style)


# -- the networks -----------------------------------------------------------------------------------------
@network("kogge-stone", source="Kogge and Stone 1973, A parallel algorithm for the efficient solution of a "
                               "general class of recurrence equations")
def kogge_stone(n: int) -> PrefixGraph:
    rows = [[(i, i - (1 << k)) for i in range(1 << k, n)] for k in range(ceil_log2(n))]
    return from_rows(n, rows, "kogge-stone")


@network("sklansky", source="Sklansky 1960, Conditional-sum addition logic")
def sklansky(n: int) -> PrefixGraph:
    rows = [[(i, (i >> k << k) - 1) for i in range(n) if i >> k & 1] for k in range(ceil_log2(n))]
    return from_rows(n, rows, "sklansky")


def validate_taxonomy(n: int, value, context: str = "") -> None:
    l, f, t = value
    want = param_levels(n) - 1
    if l + f + t != want:
        raise NetworkError(f"'taxonomy' [{l}, {f}, {t}] adds up to {l + f + t}, but {n} prefix inputs{context} "
                           f"need l + f + t = {want} (ceil(log2 {n}) - 1)")


def taxonomy_rows(n: int, l: int, f: int, t: int) -> list[list[tuple[int, int]]]:
    """Rows of the (l, f, t) network (see the module docstring); ``validate_taxonomy`` first."""
    rows = []
    for k in range(1, l + 1):  # Brent-Kung up the tree: block tops of 2^k
        s = 1 << k
        rows.append([(i, i - s // 2) for i in range(s - 1, n, s)])
    tops = list(range((1 << l) - 1, n, 1 << l))
    core = param_levels(n) - l
    for k in range(1, core + 1):
        fan = 1 << max(0, k - (core - f))
        half = 1 << (k - 1)
        rows.append([(tops[r], tops[(r | (fan - 1)) - half]) for r in range(half, len(tops))])
    for j in range(1, l + 1):  # Brent-Kung back down: the middle of every finished pair of blocks
        u = 1 << (l - j)
        rows.append([(i, i - u) for i in range(3 * u - 1, n, 2 * u)])
    return rows


@network("harris", source="Harris 2003, A taxonomy of parallel prefix networks", param="taxonomy",
         validate=validate_taxonomy)
def harris(n: int, value) -> PrefixGraph:
    l, f, t = value
    return from_rows(n, taxonomy_rows(n, l, f, t), f"harris({l},{f},{t})", lazy=True)


def _corner(n: int, name: str, pick) -> PrefixGraph:
    spare = param_levels(n) - 1
    l, f, t = pick(spare)
    return from_rows(n, taxonomy_rows(n, l, f, t), name, lazy=True)


@network("brent-kung", source="Brent and Kung 1982, A regular layout for parallel adders")
def brent_kung(n: int) -> PrefixGraph:
    return _corner(n, "brent-kung", lambda s: (s, 0, 0))


@network("han-carlson", source="Han and Carlson 1987, Fast area-efficient VLSI adders")
def han_carlson(n: int) -> PrefixGraph:
    return _corner(n, "han-carlson", lambda s: (min(1, s), 0, s - min(1, s)))


@network("ladner-fischer", source="Harris 2003's (1, L-2, 0) form of Ladner and Fischer 1980")
def ladner_fischer(n: int) -> PrefixGraph:
    return _corner(n, "ladner-fischer", lambda s: (min(1, s), s - min(1, s), 0))


@network("ladner-fischer-p0", source="Ladner and Fischer 1980, Parallel prefix computation (P_0)")
def ladner_fischer_p0(n: int) -> PrefixGraph:
    level = [0] * n
    ops: list[tuple[int, int, int]] = []

    def op(c, d):
        level[c] = 1 + max(level[c], level[d])
        ops.append((level[c], c, d))

    def p0(cols):
        if len(cols) > 1:
            h = 1 << (ceil_log2(len(cols)) - 1)
            p1(cols[:h])
            p0(cols[h:])
            for c in cols[h:]:
                op(c, cols[h - 1])

    def p1(cols):
        if len(cols) <= 2:
            return p0(cols)
        for j in range(1, len(cols), 2):
            op(cols[j], cols[j - 1])
        p0(cols[1::2])
        for j in range(2, len(cols), 2):
            op(cols[j], cols[j - 1])

    p0(list(range(n)))
    rows: list[list[tuple[int, int]]] = [[] for _ in range(max((o[0] for o in ops), default=0))]
    for lv, c, d in ops:
        rows[lv - 1].append((c, d))
    return from_rows(n, rows, "ladner-fischer-p0")


def validate_fanouts(n: int, value, context: str = "") -> None:
    want = param_levels(n)
    if len(value) != want:
        raise NetworkError(f"'fanouts' has {len(value)} entries, but {n} prefix inputs{context} need {want}, "
                           f"one per level, the last level first")
    per_level = list(reversed(value))
    for k, f in enumerate(per_level, 1):
        if f & (f - 1):
            raise NetworkError(f"'fanouts' entries must be powers of two, got {f} for level {k}")
        if f > 1 << (k - 1):
            raise NetworkError(f"'fanouts' {list(value)}: level {k}'s fanout {f} is more than {1 << (k - 1)}, "
                               f"the columns a level-{k} cell can reach beyond its own span")
        if k > 1 and f < per_level[k - 2]:
            raise NetworkError(f"'fanouts' {list(value)}: level {k}'s fanout {f} is less than level {k - 1}'s "
                               f"({per_level[k - 2]}); the list must not grow from left to right")


@network("knowles", source="Knowles 2001, A family of adders", param="fanouts", validate=validate_fanouts)
def knowles(n: int, value) -> PrefixGraph:
    per_level = list(reversed(value))
    rows = [[(i, (i | (per_level[k] - 1)) - (1 << k)) for i in range(1 << k, n)] for k in range(ceil_log2(n))]
    return from_rows(n, rows, "knowles[" + ",".join(str(f) for f in value) + "]")
