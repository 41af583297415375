"""The results of a sweep as data: one row per adder and figure, the Pareto fronts, CSV and JSON text.

Everything here is a pure function of the cached entries, so a sweep re-run, or killed and restarted,
writes byte-identical files. Nothing here depends on time or on where the work ran.
"""

from __future__ import annotations

import csv
import io
import json

from ..base.records import FIELDS
from .figures import all_figures, family_figures, pairs_of
from .run import CHECK, Outcome, check_text, figure_table, passed, records_of
from .sweep import Point, content_dict

# The measurement record's own fields (base/records.py), with the sweep's: which variant, its check.
COLUMNS = ("sweep", "variant", "width", "scheme", "carry_in", "carry_out", *FIELDS, "check", "note")


def rows(out: Outcome) -> list[dict]:
    """One row per adder and declared figure: the record's fields where there is a record; where there is
    none (a figure that does not apply, a flow that failed) an empty value and a note that says why."""
    sw = out.sweep
    result = []
    for p in sw.points:
        check = check_text(out.entries.get((p.spec.name, CHECK)))
        head = {"sweep": sw.name, "variant": p.label, "width": p.spec.width, "scheme": p.spec.scheme,
                "carry_in": p.spec.carry_in, "carry_out": p.spec.carry_out}
        for fam in sw.figures:
            e = out.entries.get((p.spec.name, fam)) or {}
            got = {r.figure: r for r in records_of(out, p, fam)}
            for f in family_figures(fam):
                r = got.get(f.name)
                if r is not None:
                    result.append({**head, **r.to_dict(), "check": check, "note": e.get("note", "")})
                    continue
                why = f"error: {e['error']}" if "error" in e else (e.get("note") or "does not apply to this adder")
                result.append({**head, **{k: None for k in FIELDS}, "spec": p.spec.name, "figure": f.name,
                               "unit": f.unit, "source": fam, "check": check, "note": why})
    return result


def _better(a: tuple[float, float], b: tuple[float, float]) -> bool:
    """a dominates b: no worse on both axes, better on one."""
    return a[0] <= b[0] and a[1] <= b[1] and a != b


def front(points: list[tuple[str, float, float]]) -> list[str]:
    """Names of the non-dominated (area, delay) points, both minimised; ties all kept."""
    return [n for n, x, y in points if not any(_better((x2, y2), (x, y)) for _, x2, y2 in points)]


def pairs(figures: tuple[str, ...]) -> list[tuple[str, str]]:
    return [pr for fam in figures for pr in pairs_of(fam)]


def axis(name: str, v):
    """A figure as an axis to minimise: a higher-better figure (Fmax) is negated."""
    if v is None:
        return None
    return -float(v) if all_figures()[name].better == "higher" else float(v)


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
                x, y = axis(area, table[p.spec.name][area]), axis(delay, table[p.spec.name][delay])
                if x is not None and y is not None:
                    pts.append((p.spec.name, x, y))
            names = front(pts)
            result.append({"width": w, "area": area, "delay": delay, "front": sorted(names, key=lambda n: (
                [x for m, x, _ in pts if m == n][0], n)), "considered": len(pts)})
    return result


def versions_by_family(out: Outcome) -> dict[str, dict[str, str]]:
    """{family: {tool: version}}: what measured each family (adder_forge's version carries a digest of
    the code that measures). One family's versions are the same for every adder of a sweep."""
    fams: dict[str, dict[str, str]] = {}
    for (_name, fam), e in sorted(out.entries.items()):
        fams.setdefault(fam, {}).update(e.get("versions", {}))
    return {f: dict(sorted(v.items())) for f, v in sorted(fams.items())}


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
    data = {
        "sweep": sw.name, "source": sw.source, "widths": list(sw.widths), "carry_in": sw.carry_in,
        "carry_out": sw.carry_out, "figures": list(sw.figures),
        "figure_units": {f.name: f.unit for fam in sw.figures for f in family_figures(fam)},
        "note": "one row per adder and figure; a row without a value says why in its note",
        "tool_versions": versions_by_family(out),
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
