"""`pick`: the adder to use at one width under a delay limit, by the same sweep machinery and cache as
`explore`.

The candidates are every registered scheme and network (the sweep ``variants: all``) and Verilog's `+`,
each built, checked against integer addition (an adder that fails is never picked) and measured in the
family of the target figure. Among those within the limit, the least area (or the least delay) wins; a
variant other than `+` wins only when it is strictly better than `+` on what is minimised, so the answer
is never worse than writing `+`, and when `+` is the best answer that is what is said.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

import yaml

from ..base.errors import SpecError, UsageError
from ..spec.loader import Spec, make_spec
from ..spec.registry import MAX_WIDTH, shown, suggest
from .figures import all_figures, delay_figures, family_of
from .run import Outcome, figure_table, passed
from .sweep import Point, content_dict, parse_sweep

@dataclass(frozen=True)
class Choice:
    point: Point
    target: float | int
    area: float | int | None


@dataclass(frozen=True)
class Picked:
    target: str  # the delay figure constrained
    area: str  # the area figure that goes with it
    limit: float
    minimize: str  # "area" or "delay"
    outcome: Outcome
    winner: Choice | None
    ranked: tuple[Choice, ...]  # every candidate within the limit, best first
    plus: Choice | None  # `+` with its figures, when it has the target figure
    closest: tuple[Choice, ...] = ()  # when none is within the limit: the nearest ones

    @property
    def plus_wins(self) -> bool:
        return self.winner is not None and self.winner.point.baseline


def check_args(width: int, target: str, limit: float, minimize: str, name: str) -> tuple[str, str]:
    """UsageError for a bad command line; the (target, area) figures otherwise."""
    targets = delay_figures()
    if target not in targets:
        raise UsageError(f"--target '{shown(target)}' is not a delay figure" + suggest(target, targets), "pick",
                         "--target")
    if not 1 <= width <= MAX_WIDTH:
        raise UsageError(f"--width must be between 1 and {MAX_WIDTH}, got {width}", "pick", "--width")
    if minimize not in ("area", "delay"):
        raise UsageError(f"--minimize must be area or delay, got '{shown(minimize)}'", "pick", "--minimize")
    if not limit == limit or limit <= 0:  # NaN too
        raise UsageError(f"--max-delay must be a positive number, got {limit}", "pick", "--max-delay")
    try:  # the same rules as a spec's name
        make_spec(name, 8, "ripple")
    except SpecError as exc:
        raise UsageError(f"--name: {exc.message}", "pick", "--name") from None
    return target, targets[target]


def within(target: str, value, limit: float) -> bool:
    return value >= limit if all_figures()[target].better == "higher" else value <= limit


def _key(target: str, minimize: str, c: Choice):
    t = -c.target if all_figures()[target].better == "higher" else c.target
    a = c.area if c.area is not None else float("inf")
    return (a, t, c.point.label) if minimize == "area" else (t, a, c.point.label)


def candidates_sweep(width: int, target: str, carry_in: bool, name: str):
    text = (f"name: {name}\nwidths: [{width}]\ncarry_in: {'true' if carry_in else 'false'}\n"
            f"variants: all\nfigures: [{family_of(target)}]\n")
    return parse_sweep(text, "<pick>")


def choose(out: Outcome, target: str, area: str, limit: float, minimize: str) -> Picked:
    table = figure_table(out)
    everyone, plus = [], None
    for p in out.sweep.points:
        v = table[p.spec.name].get(target)
        if v is None or not passed(out, p):
            continue
        c = Choice(p, v, table[p.spec.name].get(area))
        everyone.append(c)
        if p.baseline:
            plus = c
    ok = sorted((c for c in everyone if within(target, c.target, limit)), key=lambda c: _key(target, minimize, c))
    winner = ok[0] if ok else None
    if winner is not None and plus is not None and plus in ok and not winner.point.baseline:
        if _key(target, minimize, plus)[:2] <= _key(target, minimize, winner)[:2]:
            winner = plus  # a tie with `+` goes to `+`: nothing to gain from a generated netlist
    if winner is not None:
        ok = [winner] + [c for c in ok if c is not winner]
    higher = all_figures()[target].better == "higher"
    closest = () if ok else tuple(sorted(everyone, key=lambda c: -c.target if higher else c.target)[:3])
    return Picked(target, area, limit, minimize, out, winner, tuple(ok), plus, closest)


def spec_text(spec: Spec) -> str:
    d = {"name": spec.name, **{k: v for k, v in content_dict(spec).items() if v is not None}}
    return ("# chosen by adder-forge pick; rebuild with: adder-forge build " + f"{spec.name}.yaml\n"
            + yaml.safe_dump(d, sort_keys=False, default_flow_style=False))


def chosen_spec(picked: Picked, name: str) -> Spec:
    return replace(picked.winner.point.spec, name=name, source=f"{name}.yaml", positions=())


def fmt(v) -> str:
    if v is None:
        return "-"
    return f"{v:.2f}" if isinstance(v, float) else str(v)


def explain(p: Picked) -> list[str]:
    """What `pick` prints: the winner and why, how it compares with `+`, the runners-up."""
    f = all_figures()
    tu, au = f[p.target].unit, f[p.area].unit
    bound = ">=" if f[p.target].better == "higher" else "<="
    limit = f"{p.limit:g}"
    lines = []
    if p.winner is None:
        lines.append(f"no adder meets {p.target} {bound} {limit} {tu}; the closest:")
        for c in p.closest:
            lines.append(f"  {c.point.label:<32} {p.target} {fmt(c.target)} {tu}, {p.area} {fmt(c.area)} {au}")
        return lines + unmeasured(p)
    w = p.winner
    what = "least area" if p.minimize == "area" else "least delay"
    if p.plus_wins:
        lines.append(f"use Verilog's +: {p.target} {fmt(w.target)} {tu}, {p.area} {fmt(w.area)} {au}")
        lines.append(f"  why: within {p.target} {bound} {limit} {tu}, no generated adder has "
                     f"{'less area' if p.minimize == 'area' else 'less delay'} than what synthesis makes of +; "
                     "write a + b and let the tool map it")
    else:
        lines.append(f"use {w.point.label}: {p.target} {fmt(w.target)} {tu}, {p.area} {fmt(w.area)} {au}")
        lines.append(f"  why: the {what} of the {len(p.ranked)} adder(s) within {p.target} {bound} {limit} {tu}")
        if p.plus is None:
            lines.append(f"  +: no {p.target} figure (synthesis chooses the structure of +; compare on a synthesis "
                         "figure such as abc_depth or lut6_depth to weigh it)")
        else:
            pl = p.plus
            meets = "meets" if within(p.target, pl.target, p.limit) else "misses"
            lines.append(f"  +: {p.target} {fmt(pl.target)} {tu}, {p.area} {fmt(pl.area)} {au} ({meets} the limit); "
                         f"{w.point.label} is {_versus(w, pl, p)}")
    if len(p.ranked) > 1:
        lines.append("  runners-up:")
        for c in p.ranked[1:4]:
            lines.append(f"    {c.point.label:<32} {p.target} {fmt(c.target)} {tu}, {p.area} {fmt(c.area)} {au}")
    return lines + unmeasured(p)


def unmeasured(p: Picked) -> list[str]:
    """The candidates left out because their measurement failed (a tool error, the task time limit): said,
    not hidden, since one of them might have won."""
    fam = family_of(p.target)
    out = []
    for pt in p.outcome.sweep.points:
        e = p.outcome.entries.get((pt.spec.name, fam)) or {}
        if "error" in e:
            out.append(f"    {pt.label:<32} {e['error']}")
    return ["  not measured, so not considered:", *out] if out else []


def _versus(w: Choice, pl: Choice, p: Picked) -> str:
    parts = []
    for fig, a, b in ((p.target, w.target, pl.target), (p.area, w.area, pl.area)):
        if a is None or b is None:
            continue
        better_hi = all_figures()[fig].better == "higher"
        if a == b:
            parts.append(f"equal on {fig}")
            continue
        good = (a > b) if better_hi else (a < b)
        parts.append(f"{'better' if good else 'worse'} on {fig} ({fmt(a)} against {fmt(b)})")
    return ", ".join(parts)


def write_choice(p: Picked, name: str, out_dir: str | Path, force: bool = False, draw: bool = True):
    """DIR/NAME/: the chosen spec as NAME.yaml, and its build as `build` writes it (and the prefix
    drawing, for a prefix network)."""
    from ..emit.design import design
    from ..emit.outputs import write_folders
    from ..emit.prefix_svg import drawing_files
    from ..synth.measure import output_folder

    spec = chosen_spec(p, name)
    d = design(spec)
    folder = output_folder(d)
    files = {**folder.files, f"{name}.yaml": spec_text(spec)}
    if draw:
        files.update(drawing_files(spec, d.net))
    return write_folders(Path(out_dir), [replace(folder, files=files)], force=force)[0], d
