"""``adder-forge search``: a prefix network under bounds, found, validated, built as an adder, verified.

The search (docs/search.md):
1. Starts: every classic network (``prefix_networks.NETWORKS``, Knowles fanout lists, Harris taxonomy
   points) and the read-twice network (``read_twice``: 2 loads per value) that meet the bounds, and the
   dynamic program's fewest-cell network at each depth up to the level bound (``prefix_dp``: exact within
   its class of serial, group, relative and merge moves; Sergeev 2013's minima at depth log2 n up to 128
   inputs; at depth d > log2 n it meets Snir's bound where zero-deficiency networks exist).
2. The best start under the objective is polished by simulated annealing (``local``) under the bounds,
   in rounds; ``--seconds`` decides how many rounds fit, the file records the number, and
   ``--rounds`` reproduces the run exactly (the work is a pure function of the request and the seed).
3. The result is validated (``prefix_networks.validate``), built as an adder
   (``schemes.prefix.adder_with_network``), checked against Python integer addition (built-in check) and
   proven equal to Verilog's ``+`` with Yosys. Only a network that passes all of that is returned.

Objectives: ``cells`` (prefix cells), ``area-delay`` (cells times depth), ``lut6`` (the LUT6 flow of
``synth.flows``: fewest LUT levels, then fewest LUTs; each candidate costs a Yosys run, so only the
starts are scored, fewest cells first, as many as ``--seconds`` allows or exactly ``--rounds``; no
annealing).
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

from ..analysis.prefix_figures import prefix_figures, sergeev_minimum, value_loads
from ..base.errors import NetworkError, ToolError, UsageError
from ..base.progress import NULL, Progress
from ..ir.network import PrefixGraph
from ..schemes.network_file import write
from ..schemes.prefix import adder_with_network
from ..schemes.prefix_networks import NETWORKS, build, ceil_log2 as levels_of, from_rows, validate
from ..spec.loader import make_spec
from .local import Bounds, anneal
from .prefix_dp import Solver, rows_from_ops
from .read_twice import read_twice_rows

OBJECTIVES = ("cells", "area-delay", "lut6")


@dataclass(frozen=True)
class Request:
    width: int
    max_levels: int
    max_fanout: int | None = None
    max_tracks: int | None = None
    objective: str = "cells"
    seconds: float = 60.0
    seed: int = 1
    rounds: int | None = None  # fixed number of annealing rounds (reproduces a run); None: as time allows
    carry_in: bool = False
    verify: bool = True
    max_loads: int | None = None  # value_loads: cell inputs one value drives anywhere (circuit fanout)

    @property
    def inputs(self) -> int:
        return self.width + self.carry_in

    def command(self) -> str:
        parts = [f"--width {self.width}", f"--max-levels {self.max_levels}"]
        if self.max_fanout is not None:
            parts.append(f"--max-fanout {self.max_fanout}")
        if self.max_tracks is not None:
            parts.append(f"--max-tracks {self.max_tracks}")
        if self.max_loads is not None:
            parts.append(f"--max-loads {self.max_loads}")
        if self.carry_in:
            parts.append("--carry-in")
        parts += [f"--objective {self.objective}", f"--seed {self.seed}"]
        return "adder-forge search " + " ".join(parts)


@dataclass
class Found:
    request: Request
    graph: PrefixGraph
    score: float
    figures: dict
    start: str  # which start the result came from
    start_score: float
    rounds: int
    candidates: list = field(default_factory=list)  # (name, cells, levels, score) of every start
    checks: list = field(default_factory=list)  # (checker, ok, detail)
    lut6: dict | None = None

    @property
    def name(self) -> str:
        r = self.request
        bound = f"-f{r.max_fanout}" if r.max_fanout is not None else ""
        bound += f"-t{r.max_tracks}" if r.max_tracks is not None else ""
        bound += f"-r{r.max_loads}" if r.max_loads is not None else ""
        return f"searched-{r.inputs}-l{r.max_levels}{bound}"

    def file_text(self) -> str:
        f = self.figures
        r = self.request
        lines = [
            f"prefix network found by {r.command()} --rounds {self.rounds}",
            f"{f['prefix_nodes']} cells, {f['prefix_levels']} levels, depth {f['prefix_depth']}, fanout "
            f"{f['prefix_fanout']}, {f['wire_tracks']} wire tracks (docs/prefix.md for the measures), "
            f"{value_loads(self.graph)} loads (cell inputs one value drives anywhere, docs/search.md)",
            f"Snir gap {f['prefix_snir_gap']} (cells + depth - (2n - 2), Snir 1986)"
            + (f"; {f['prefix_min_gap']} over Sergeev 2013's exact minimum {sergeev_minimum(r.inputs)} at depth "
               f"{f['prefix_depth']}" if f["prefix_min_gap"] is not None else ""),
        ]
        if self.lut6:
            lines.append(f"objective lut6, the best of {self.rounds} starts mapped: {self.start}")
            lines.append(f"LUT6 flow: {self.lut6['luts']} LUTs, {self.lut6['depth']} LUT levels")
        else:
            lines.append(f"objective {r.objective}: {_fmt(self.score)} (best start {self.start}: "
                         f"{_fmt(self.start_score)})")
        lines += [f"{c}: {'pass' if ok else 'FAIL'} {d}" for c, ok, d in self.checks]
        lines.append("the command above writes this file again, byte for byte (--seconds only decided --rounds)")
        return write(self.graph, self.name, tuple(lines))


def _fmt(x: float) -> str:
    return str(int(x)) if float(x).is_integer() else f"{x:.1f}"


def check_request(r: Request) -> None:
    if not 1 <= r.width <= 16384:
        raise UsageError(f"--width must be 1 to 16384, got {r.width}", "search", "--width")
    least = levels_of(r.inputs)
    if r.max_levels < least:
        raise UsageError(f"--max-levels {r.max_levels} is below ceil(log2 {r.inputs}) = {least}, the fewest levels "
                         f"any {r.inputs}-input prefix network needs", "search", "--max-levels")
    if r.max_levels > 4 * max(1, least) + 8:
        raise UsageError(f"--max-levels {r.max_levels} is more than this search handles at {r.inputs} inputs "
                         f"(up to {4 * max(1, least) + 8})", "search", "--max-levels")
    if r.max_fanout is not None and r.max_fanout < 2:
        raise UsageError(f"--max-fanout must be 2 or more (a value and one reader), got {r.max_fanout}", "search",
                         "--max-fanout")
    if r.max_tracks is not None and r.max_tracks < 1:
        raise UsageError(f"--max-tracks must be 1 or more, got {r.max_tracks}", "search", "--max-tracks")
    if r.max_loads is not None and r.max_loads < 2:
        raise UsageError(f"--max-loads must be 2 or more (a column's next cell and one more reader), got "
                         f"{r.max_loads}", "search", "--max-loads")
    if r.objective not in OBJECTIVES:
        from ..spec.registry import shown, suggest

        raise UsageError(f"unknown objective '{shown(r.objective)}'" + suggest(r.objective, OBJECTIVES), "search",
                         "--objective")
    if r.seconds <= 0:
        raise UsageError(f"--seconds must be more than 0, got {r.seconds:g}", "search", "--seconds")
    if r.rounds is not None and r.rounds < 0:
        raise UsageError(f"--rounds must be 0 or more, got {r.rounds}", "search", "--rounds")
    if r.objective == "lut6" and r.width > 256:
        raise UsageError("--objective lut6 runs Yosys on every start: up to 256 bits", "search", "--objective")


def classic_starts(n: int) -> list[tuple[str, PrefixGraph]]:
    """Every classic network on n inputs: the fixed ones, every Knowles list, every Harris point."""
    from ..schemes.prefix_networks import param_levels

    out = [(name, build(name, n)) for name, kind in NETWORKS.items() if kind.param is None]
    L = param_levels(n)

    def knowles_lists(k, least):  # per level from level 1: non-decreasing powers of two, level k's <= 2^(k-1)
        if k > L:
            yield ()
            return
        f = least
        while f <= 1 << (k - 1):
            for rest in knowles_lists(k + 1, f):
                yield (f,) + rest
            f <<= 1

    lists = [tuple(reversed(p)) for p in knowles_lists(1, 1)] if n <= 64 else \
        [(1 << j,) + (1,) * (L - 1) for j in range(L)]  # Catalan-many lists: above 64 inputs, [2^j, 1, ..., 1]
    for value in lists:
        out.append((f"knowles[{','.join(map(str, value))}]", build("knowles", n, value)))
    for l in range(L):
        for f in range(L - l):
            value = (l, f, L - 1 - l - f)
            out.append((f"harris({l},{f},{L - 1 - l - f})", build("harris", n, value)))
    return out


def _score(objective: str, g: PrefixGraph) -> float:
    depth = prefix_figures(g)["prefix_depth"]
    return float(len(g.cells)) if objective == "cells" else float(len(g.cells) * max(1, depth))


def dp_network(n: int, depth: int, deadline=None) -> PrefixGraph:
    """The program's network: the pairs-only class first, the full class only where that one is above
    Snir's bound (no network of depth <= d has fewer than 2n - 2 - d cells) and above Sergeev's minimum."""
    s = Solver(depth, deadline, rich=False)
    floor = max(2 * n - 2 - depth, sergeev_minimum(n) or 0 if depth == levels_of(n) else 0)
    if s.cost(n) > floor:
        s = Solver(depth, deadline)
    return from_rows(n, rows_from_ops(n, s.ops(n)), f"dp-depth{depth}")


class _OutOfTime(Exception):
    pass


def search(r: Request, progress: Progress = NULL) -> Found:
    check_request(r)
    n = r.inputs
    started = time.monotonic()
    end = started + r.seconds

    def deadline():
        if r.rounds is None and time.monotonic() > end:
            raise _OutOfTime

    bounds = Bounds(r.max_levels, r.max_fanout, r.max_tracks, r.max_loads)
    starts: list[tuple[str, PrefixGraph]] = []
    progress.note(f"search: {n} inputs, at most {r.max_levels} levels"
                  + (f", fanout {r.max_fanout}" if r.max_fanout else "")
                  + (f", {r.max_tracks} tracks" if r.max_tracks else "")
                  + (f", {r.max_loads} loads" if r.max_loads else "") + f", objective {r.objective}")
    for name, g in classic_starts(n) + [("read-twice", from_rows(n, read_twice_rows(n), "read-twice"))]:
        if bounds.met(g):
            starts.append((name, g))
    least = levels_of(n)
    depths = [r.max_levels] if r.objective == "cells" else list(range(least, r.max_levels + 1))
    with progress.task("constructions", total=len(depths), unit="depths") as task:
        for d in depths:
            try:
                g = dp_network(n, d, deadline)
            except _OutOfTime:
                progress.note(f"search: out of time in the construction at depth {d}; going on with what is found")
                break
            if bounds.met(g):
                starts.append((f"dp-depth{d}", g))
            task.advance()
    seen: set = set()
    starts = [(name, g) for name, g in starts if not (g.cells in seen or seen.add(g.cells))]  # one of each
    if not starts:
        raise NetworkError(f"no start meets the bounds at {n} inputs (levels {r.max_levels}, fanout "
                           f"{r.max_fanout}, tracks {r.max_tracks}); try more levels or a larger fanout")
    candidates = []
    lut = {}
    scored = 0
    if r.objective == "lut6":
        # shallowest first (LUT levels follow prefix depth), then fewest cells; as many as --seconds allows
        # (at least one), or exactly --rounds of them
        order = sorted(starts, key=lambda t: (prefix_figures(t[1])["prefix_depth"], len(t[1].cells), t[0]))
        limit = len(order) if r.rounds is None else max(1, min(r.rounds, len(order)))
        with progress.task("LUT6 flow on the starts", total=limit, unit="networks") as task:
            for name, g in order[:limit]:
                if scored and r.rounds is None and time.monotonic() > end:
                    progress.note(f"search: out of time after {scored} of {len(order)} starts in the LUT6 flow")
                    break
                fig = lut6_figures(r, g)
                lut[name] = fig
                candidates.append((name, g, (fig["depth"], fig["luts"])))
                scored += 1
                task.advance()
    else:
        candidates = [(name, g, _score(r.objective, g)) for name, g in starts]
    candidates.sort(key=lambda t: (t[2], len(t[1].cells), t[0]))
    start_name, start_graph, start_score = candidates[0]
    best, best_score, done = start_graph, start_score, 0
    if r.objective != "lut6":
        budget = r.rounds if r.rounds is not None else 10 ** 6
        with progress.task("annealing", total=r.rounds, unit="rounds") as task:
            def tick(done_rounds, score):
                task.advance()
                return r.rounds is None and time.monotonic() > end

            if budget > 0:
                score = (lambda cells, d: float(cells)) if r.objective == "cells" else \
                    (lambda cells, d: float(cells * max(1, d)))
                g, s, done = anneal(start_graph, bounds, score, r.seed, budget, progress=tick, style="searched")
                if g is not None and s < best_score:
                    best, best_score = g, s
    validate(best)
    if not bounds.met(best):  # every start and every kept state meets them; a failure here is a bug
        raise NetworkError(f"{best.style}: the result does not meet the bounds")
    figures = prefix_figures(best)
    found = Found(r, best, best_score, figures, start_name, start_score, done,
                  [(name, len(g.cells), prefix_figures(g)["prefix_levels"], score) for name, g, score in candidates])
    if r.objective == "lut6":
        found.rounds = scored  # starts scored: what --rounds reproduces for this objective
        found.lut6 = lut[start_name]
    if r.verify:
        found.checks = verify_network(r, best, progress)
    return found


def _adder(r: Request, g: PrefixGraph):
    spec = make_spec(f"searched{r.inputs}", r.width, "prefix", carry_in=r.carry_in, carry_out=True)
    return spec, adder_with_network(spec, g)


def lut6_figures(r: Request, g: PrefixGraph) -> dict:
    from ..emit.design import design
    from ..synth.flows import synthesize

    spec, net = _adder(r, g)
    d = design(spec, net, tb_random=0)
    return synthesize("lut6", spec.name, d.verilog, width=r.width, carry_in=r.carry_in, carry_out=True)


def verify_network(r: Request, g: PrefixGraph, progress: Progress = NULL) -> list[tuple[str, bool, str]]:
    """The built-in check against Python integer addition and the Yosys proof against ``+``; raises
    NetworkError when either finds a mismatch (the network is then not returned)."""
    from ..checks.builtin import check
    from ..checks.formal import prove
    from ..checks.verify import builtin_plan
    from ..emit.design import design

    spec, net = _adder(r, g)
    progress.note("search: checking the adder against integer addition")
    res = check(net, builtin_plan(spec, 4096, r.seed))
    out = [("built-in check", res.ok, f"{res.vectors} vectors against Python integer addition")]
    if not res.ok:
        raise NetworkError(f"{g.style}: the adder fails the built-in check ({res.failed} of {res.vectors} vectors)")
    progress.note("search: proving the adder equal to + with Yosys")
    d = design(spec, net, tb_random=0)
    try:
        proof = prove(net, d.verilog)
    except ToolError:
        raise
    out.append(("Yosys proof", proof.ok, proof.claim or "equal to +"))
    if not proof.ok:
        raise NetworkError(f"{g.style}: the Yosys proof fails: {proof.reason or 'a counterexample'}")
    return out
