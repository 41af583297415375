"""`pick` against an `explore` sweep: every answer must be an adder on the sweep's Pareto front.

    python bench/explore_pick.py out/every_scheme/results.json [--cache DIR] [--jobs N]
        [--pick WIDTH:TARGET:LIMIT[:area|delay]] ...

For each constraint (default: five, over estimates and synthesis figures) it runs `pick`'s own search
(the same machinery and cache as `explore`, so what the sweep measured is not measured again) and checks
that the winner is on the sweep's Pareto front of (area, TARGET) at WIDTH, that it meets the limit, that
no other adder of the sweep within the limit has less of what is minimised, and that it is not worse
than `+` there. Prints one line a constraint with the winner; exits 1 if any check fails.
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

from adder_forge.explore.figures import all_figures, delay_figures
from adder_forge.explore.job import run
from adder_forge.explore.pick import candidates_sweep, choose, explain, within

DEFAULT = ["16:unit_gate_delay:14", "32:le_fo4:12", "64:unit_gate_delay:30:area", "32:abc_depth:20",
           "16:lut6_depth:6", "32:lut6_depth:8:delay", "64:abc_depth:20:delay"]


def main(argv=None) -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("results")
    ap.add_argument("--cache")
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--pick", action="append", default=[])
    args = ap.parse_args(argv)
    data = json.loads(Path(args.results).read_text())
    fronts = {(e["width"], e["area"], e["delay"]): set(e["front"]) for e in data["pareto"]}
    by_name = {v["name"]: v for v in data["variants"]}
    label_at = {(v["width"], v["variant"]): v["name"] for v in data["variants"]}
    bad = 0
    for text in args.pick or DEFAULT:
        parts = text.split(":")
        width, target, limit = int(parts[0]), parts[1], float(parts[2])
        minimize = parts[3] if len(parts) > 3 else "area"
        area = delay_figures()[target]
        t0 = time.monotonic()
        sweep = candidates_sweep(width, target, data["carry_in"], f"pick_w{width}")
        out = run(sweep, args.cache, jobs=args.jobs)
        picked = choose(out, target, area, limit, minimize)
        took = time.monotonic() - t0
        if picked.winner is None:
            print(f"FAIL {text}: nothing within the limit")
            bad += 1
            continue
        w = picked.winner
        name = label_at.get((width, w.point.label))
        problems = []
        if name is None:
            problems.append("the winner is not an adder of the sweep")
        else:
            front = fronts.get((width, area, target))
            if front is None:
                problems.append(f"the sweep has no front of {area} against {target}")
            elif name not in front:
                problems.append(f"{name} is not on the sweep's front")
            mine = by_name[name]["figures"]
            if mine[target] != w.target or mine[area] != w.area:
                problems.append(f"figures differ from the sweep's: {mine[target]}, {mine[area]}")
        if not within(target, w.target, limit):
            problems.append("the winner misses the limit")
        higher = all_figures()[target].better == "higher"
        for v in data["variants"]:  # nothing of the sweep within the limit does better on what is minimised
            f = v["figures"]
            if v["width"] != width or v["check"] != "pass" or f.get(target) is None or not within(target, f[target], limit):
                continue
            obj = (f[area], -f[target] if higher else f[target]) if minimize == "area" else \
                (-f[target] if higher else f[target], f[area])
            best = (w.area, -w.target if higher else w.target) if minimize == "area" else \
                (-w.target if higher else w.target, w.area)
            if obj < best:
                problems.append(f"{v['name']} is better: {obj} against {best}")
        status = "ok  " if not problems else "FAIL"
        bad += bool(problems)
        print(f"{status} {width:>3} bits, {target} {'>=' if higher else '<='} {limit:g}, least {minimize}: "
              f"{explain(picked)[0]} [{out.computed} computed, {out.cached} cached, {took:.1f} s]")
        for p in problems:
            print(f"     {p}")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
