"""Local search over prefix networks drawn as a grid: level k, column c -> the driver column c reads, or none.

A state is the grid of ``max_levels`` rows; ``from_rows`` turns it into a network or refuses it (a gap, a
column left incomplete), so every state the search keeps is a legal network, and pairs that add nothing
vanish when the grid is re-read from the network. Moves, one cell of the grid at a time:

- drop: the column does nothing at that level;
- retarget: read another driver at that level;
- add: a column that did nothing at a level reads a driver.

After a move the grid is repaired level by level (``repaired``): a driver that would leave a gap is moved
up to the one that reaches furthest (low - 1), one that adds nothing is dropped. So a drop lets the
column's later cells reach further instead of making the state illegal; a state whose columns do not all
end complete is refused.

Costs are cells plus penalties for every unit of fanout or wire tracks over the bounds; simulated
annealing (Kirkpatrick, Gelatt and Vecchi 1983, "Optimization by simulated annealing") accepts a worse
state with probability exp(-delta / temperature), the temperature falling geometrically in each round.
The work is counted in rounds of ``MOVES`` moves, so a run is a pure function of (start, bounds, seed,
rounds): ``--seconds`` only decides how many rounds fit, and the file records that number.

Fanout is the report's ``prefix_fanout`` (Harris 2003): per level, the cells a value drives laterally plus
one for its own column; Kogge-Stone has 2 and Knowles [f, 1, ..., 1] has f + 1 in it. Loads are
``prefix_figures.value_loads``: the cell inputs one value drives over the whole network (a circuit's
fanout); Kogge-Stone has log2 n of them.
"""

from __future__ import annotations

import math
import random
from dataclasses import dataclass

from ..base.errors import NetworkError
from ..ir.network import PrefixGraph
from ..schemes.network_file import rows_of
from ..schemes.prefix_networks import from_rows
from ..analysis.prefix_figures import lateral_loads

MOVES = 2000  # moves a round
PENALTY = 4.0  # cost of one unit over a fanout or tracks bound


def fanout_excess(graph: PrefixGraph, bound: int) -> int:
    """Units of fanout over ``bound``, summed over every (value, level): Harris 2003's measure, lateral
    loads at one level plus one for the value's own column (``prefix_figures.fanout`` is the largest)."""
    return sum(max(0, 1 + len(cols) - bound) for cols in lateral_loads(graph).values())


def level_tracks(graph: PrefixGraph) -> dict[int, int]:
    """Wire tracks of each level (``prefix_figures.tracks`` is the largest of them)."""
    by_level: dict[int, list[int]] = {}
    for (r, level), cols in lateral_loads(graph).items():
        col = graph.cells[r].col if r >= 0 else -1 - r
        d = by_level.setdefault(level, [0] * (graph.inputs + 1))
        d[col] += 1
        d[max(cols)] -= 1
    out = {}
    for level, d in by_level.items():
        run = most = 0
        for x in d:
            run += x
            most = max(most, run)
        out[level] = most
    return out


def loads_excess(graph: PrefixGraph, bound: int) -> int:
    """Units over ``bound`` of ``prefix_figures.value_loads`` (cell inputs one value drives, anywhere),
    summed over every value."""
    reads: dict[int, int] = {}
    for c in graph.cells:
        reads[c.hi] = reads.get(c.hi, 0) + 1
        reads[c.lo] = reads.get(c.lo, 0) + 1
    return sum(max(0, x - bound) for x in reads.values())


@dataclass(frozen=True)
class Bounds:
    levels: int
    fanout: int | None = None
    tracks: int | None = None
    loads: int | None = None  # value_loads, the circuit's fanout

    def excess(self, graph: PrefixGraph) -> int:
        over = 0
        if self.fanout is not None:
            over += fanout_excess(graph, self.fanout)
        if self.loads is not None:
            over += loads_excess(graph, self.loads)
        if self.tracks is not None:
            over += sum(max(0, t - self.tracks) for t in level_tracks(graph).values())
        return over

    def met(self, graph: PrefixGraph) -> bool:
        depth = max((c.level for c in graph.cells), default=0)
        return depth <= self.levels and self.excess(graph) == 0


def grid_of(graph: PrefixGraph, levels: int) -> list[list[int]]:
    n = graph.inputs
    grid = [[-1] * n for _ in range(levels)]
    for k, row in enumerate(rows_of(graph)):
        for c, d in row:
            grid[k][c] = d
    return grid


def repaired(grid: list[list[int]], n: int) -> list[list[tuple[int, int]]] | None:
    """The grid's rows with every gap repaired: a driver below the column's reach is moved up to the
    lowest column it can reach (low - 1, the driver that reaches furthest), a driver that adds nothing is
    dropped (and its grid cell cleared). None when a column is still incomplete after the last level."""
    low = list(range(n))
    rows = []
    for row in grid:
        low0 = low[:]
        out = []
        for c in range(1, n):
            d = row[c]
            if d < 0:
                continue
            if low0[c] == 0:
                row[c] = -1
                continue
            if d < low0[c] - 1 or d >= c:
                d = row[c] = low0[c] - 1
            if low0[d] >= low0[c]:
                row[c] = -1
                continue
            out.append((c, d))
            low[c] = low0[d]
        rows.append(out)
    return rows if not any(low) else None


def graph_of(grid: list[list[int]], n: int, style: str) -> PrefixGraph | None:
    rows = repaired(grid, n)
    if rows is None:
        return None
    try:
        return from_rows(n, rows, style)
    except NetworkError:  # cannot happen after the repair; a refusal is still only a rejected move
        return None


def evaluate(grid: list[list[int]], n: int, bounds: Bounds):
    """(cells, depth, units over the bounds) of the grid as ``repaired`` leaves it (repairing it in place),
    or None when a column ends incomplete: the same network ``graph_of`` builds, counted in one pass.
    Every kept pair is a live cell (each column's chain ends in its output), so cells = kept pairs."""
    low = list(range(n))
    dep = [0] * n
    cells = 0
    over = 0
    F = bounds.fanout
    T = bounds.tracks
    R = bounds.loads
    reads = [0] * n  # cell inputs the current value of each column has driven so far
    for row in grid:
        low0 = low[:]
        dep0 = dep[:]
        loads: dict[int, int] = {}
        reach: dict[int, int] = {}
        for c in range(1, n):
            d = row[c]
            if d < 0:
                continue
            lc = low0[c]
            if lc == 0:
                row[c] = -1
                continue
            if d < lc - 1 or d >= c:
                d = row[c] = lc - 1
            if low0[d] >= lc:
                row[c] = -1
                continue
            cells += 1
            low[c] = low0[d]
            dep[c] = max(dep0[c], dep0[d]) + 1
            loads[d] = loads.get(d, 0) + 1
            if c > reach.get(d, -1):
                reach[d] = c
        if R is not None:  # reads see the values as they stood before the level; then new values start
            changed = [c for c in range(1, n) if row[c] >= 0]
            for c in changed:
                reads[c] += 1
                reads[row[c]] += 1
            for c in changed:
                over += max(0, reads[c] - R)
                reads[c] = 0
        if F is not None:
            over += sum(max(0, 1 + x - F) for x in loads.values())
        if T is not None and reach:
            diff = [0] * (n + 1)
            for d, top in reach.items():
                diff[d] += 1
                diff[top] -= 1
            run = most = 0
            for x in diff:
                run += x
                most = max(most, run)
            over += max(0, most - T)
    if any(low):
        return None
    if R is not None:
        over += sum(max(0, x - R) for x in reads)
    return cells, max(dep), over


def anneal(start: PrefixGraph, bounds: Bounds, score, seed: int, rounds: int, progress=None,
           style: str = "searched", t0: float = 1.5, t1: float = 0.05):
    """Best network found from ``start`` in ``rounds`` rounds; ``score(cells, depth) -> float`` (lower is
    better) is the objective before penalties. Returns (graph, its score, rounds done). Each round is one
    full cooling from ``t0`` to ``t1``, started from the best state so far, so a round does the same work
    whatever the total. ``progress`` is called after each round with (round, best score) and returns True
    to stop there (the round count then says how many were done, and is what reproduces the run)."""
    n = start.inputs
    rng = random.Random(seed)
    L = bounds.levels
    grid = grid_of(start, L)
    first = evaluate(grid, n, bounds)
    cur_cost = score(first[0], first[1]) + PENALTY * first[2]
    best_grid = [row[:] for row in grid] if first[2] == 0 else None
    best_cost = cur_cost if first[2] == 0 else math.inf
    done = 0
    for r in range(rounds):
        if best_grid is not None:
            grid = [row[:] for row in best_grid]
            cur_cost = best_cost
        for i in range(MOVES if n > 1 else 0):
            temp = t0 * (t1 / t0) ** (i / MOVES)
            k = rng.randrange(L)
            c = rng.randrange(1, n)
            old = grid[k][c]
            if old >= 0 and rng.random() < 0.4:
                new = -1
            else:
                span = 1 << (k + 1)
                new = rng.randrange(max(0, c - span), c) if rng.random() < 0.8 else rng.randrange(0, c)
                if new == old:
                    continue
            saved = [row[:] for row in grid]
            grid[k][c] = new
            e = evaluate(grid, n, bounds)
            if e is None:
                grid = saved
                continue
            c_new = score(e[0], e[1]) + PENALTY * e[2]
            delta = c_new - cur_cost
            if delta <= 0 or rng.random() < math.exp(-delta / temp):
                cur_cost = c_new
                if c_new < best_cost and e[2] == 0:
                    best_grid, best_cost = [row[:] for row in grid], c_new
            else:
                grid = saved
        done = r + 1
        if progress is not None and progress(done, best_cost):
            break
    if best_grid is None:
        return None, math.inf, done
    g = graph_of(best_grid, n, style)
    return g, best_cost, done
