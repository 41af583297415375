"""Plots (PNG and SVG, matplotlib's Agg back end) and the one-file HTML report of a sweep.

Two kinds of plot: for each width and each (area, delay) pair of figures, area against delay with the
Pareto front drawn as a staircase and its adders ringed; and each figure against width, one line per
variant. Colours and markers belong to a variant across every plot of a sweep. Output is deterministic
(no dates in the files, a fixed SVG id salt), so an unchanged re-run writes the same bytes.

The report embeds the SVG plots and prefix-graph drawings inline and needs no other file: it can be
mailed or attached to a design review as it is.
"""

from __future__ import annotations

import base64
import io
from dataclasses import dataclass
from functools import lru_cache
from html import escape
from pathlib import Path

import yaml

from ..emit.outputs import fingerprint, sha256_text
from ..emit.prefix_svg import draw_prefix
from .cache import Cache
from .figures import ALSO_AGAINST_WIDTH, all_figures, family_figures, pairs_of
from .results import pareto, point_of, variant_records, versions_by_family
from .run import Outcome, figure_table, passed

MARKERS = "os^Dv<>pPXh8d"
_ORDER = [0, 2, 4, 6, 8, 10, 12, 14, 16, 18, 1, 3, 5, 7, 9, 11, 13, 15, 17, 19]  # tab20: the dark shades first


def _mpl():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    plt.rcParams.update({"svg.hashsalt": "adder_forge", "font.size": 9, "axes.titlesize": 10,
                         "legend.fontsize": 8, "figure.dpi": 100})
    return plt


def _style(labels: tuple[str, ...]) -> dict[str, dict]:
    import matplotlib

    cmap = matplotlib.colormaps["tab20"]
    out = {}
    k = 0
    for lab in labels:
        if lab == "+":
            out[lab] = {"color": "black", "marker": "*", "markersize": 12}
            continue
        out[lab] = {"color": cmap(_ORDER[k % 20]), "marker": MARKERS[k % len(MARKERS)], "markersize": 7}
        k += 1
    return out


def _save(plt, fig) -> dict[str, str | bytes]:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", metadata={"Software": None})
    sbuf = io.StringIO()
    fig.savefig(sbuf, format="svg", metadata={"Date": None, "Creator": None})
    plt.close(fig)
    return {"png": buf.getvalue(), "svg": sbuf.getvalue()}


def _axis_label(name: str) -> str:
    f = all_figures()[name]
    return f"{name.replace('_', ' ')} ({f.unit})"


# -- what each plot shows, as data ------------------------------------------------------------------------------
# A plot is drawn from a plain mapping of everything it shows (points, colours, labels, title), so that its
# files are a function of that mapping alone: a re-run whose mapping is unchanged takes the files from the
# plot cache instead of drawing them again (Plots below).
def _colour(c) -> list[float]:
    return [round(float(x), 6) for x in c] if not isinstance(c, str) else c


def pareto_plot_data(out: Outcome) -> list[dict]:
    """One mapping per width and (area, delay) pair that has a point to show."""
    table = figure_table(out)
    raw = figure_table(out, judged=False)
    style = _style(out.sweep.labels)
    made = []
    for entry in pareto(out):
        w, area, delay = entry["width"], entry["area"], entry["delay"]
        pts = [(p, table[p.spec.name][area], table[p.spec.name][delay]) for p in out.sweep.points
               if p.spec.width == w]
        pts = [(p, x, y) for p, x, y in pts if x is not None and y is not None]
        if not pts:
            continue
        front = set(entry["front"])
        other = all_figures()[delay].shown_instead
        points = []
        for p, x, y in pts:
            st = style[p.label]
            ok = passed(out, p)
            note = f" ({other.replace('_', ' ')})" if other and raw[p.spec.name].get(other) is not None else ""
            points.append({"x": y, "y": x, "ok": ok, "label": p.label + note + ("" if ok else " (check FAILED)"),
                           "colour": _colour(st["color"]), "marker": st["marker"], "size": st["markersize"]})
        areas = [x for _, x, _ in pts if x]
        delays = [abs(y) for _, _, y in pts if y]
        made.append({"kind": "pareto", "stem": f"pareto_w{w}_{delay}", "entry": entry, "points": points,
                     "front": sorted([y, x] for p, x, y in pts if p.spec.name in front),
                     "xlabel": _axis_label(delay), "ylabel": _axis_label(area),
                     "log": bool(areas and max(areas) > 8 * min(areas)),  # a flat lookahead beside a ripple
                     "logx": bool(delays and max(delays) > 8 * min(delays)),  # a 128-bit ripple beside a tree
                     "invert": all_figures()[delay].better == "higher",  # faster to the left, as for any delay
                     "title": f"{out.sweep.name}, {w} bits: {area} against {delay}; lower left is better"})
    return made


def width_plot_data(out: Outcome) -> list[dict]:
    """One mapping per figure shown against width that some adder has (none for a sweep of one width)."""
    if len(out.sweep.widths) < 2:
        return []
    table = figure_table(out)
    style = _style(out.sweep.labels)
    figs = all_figures()
    made = []
    for name, is_area in shown_figures(out.sweep.figures):
        f = figs[name]
        lines = []
        for lab in out.sweep.labels:
            xs, ys = [], []
            for p in out.sweep.points:
                v = table[p.spec.name][f.name]
                if p.label == lab and v is not None:
                    xs.append(p.spec.width)
                    ys.append(v)
            if xs:
                st = style[lab]
                lines.append({"label": lab, "x": xs, "y": ys, "colour": _colour(st["color"]),
                              "marker": st["marker"], "size": st["markersize"] - 1})
        if lines:
            made.append({"kind": "width", "stem": f"width_{f.name}", "lines": lines, "widths": list(out.sweep.widths),
                         "log": is_area, "ylabel": _axis_label(f.name),
                         "title": f"{out.sweep.name}: {f.name} against width ({f.doc})"})
    return made


# -- drawing ---------------------------------------------------------------------------------------------------
def draw_pareto(d: dict) -> dict[str, str | bytes]:
    plt = _mpl()
    fig, ax = plt.subplots(figsize=(9.0, 4.8), layout="constrained")
    for pt in d["points"]:
        ax.plot([pt["x"]], [pt["y"]], linestyle="none", marker=pt["marker"], color=pt["colour"],
                markersize=pt["size"], markeredgecolor="black" if pt["ok"] else "red",
                markeredgewidth=0.5 if pt["ok"] else 2.0, label=pt["label"])
    fr = d["front"]
    if fr:
        sx, sy = [], []
        for k, (y, x) in enumerate(fr):
            if k:
                sx.append(y)
                sy.append(fr[k - 1][1])
            sx.append(y)
            sy.append(x)
        ax.plot(sx, sy, color="#d62728", linewidth=1.2, alpha=0.8, zorder=0, label="Pareto front")
        ax.plot([y for y, _ in fr], [x for _, x in fr], linestyle="none", marker="o", markersize=15,
                markerfacecolor="none", markeredgecolor="#d62728", markeredgewidth=1.2)
    ax.set_xlabel(d["xlabel"])
    ax.set_ylabel(d["ylabel"])
    if d["log"]:
        _log_axis(ax)
    if d["logx"]:
        _log_axis(ax, "x")
    ax.margins(0.07)
    if d["invert"]:
        ax.invert_xaxis()
    ax.set_title(d["title"], fontsize=9)
    ax.grid(True, alpha=0.3)
    fig.legend(loc="outside right upper", frameon=False, numpoints=1)
    return _save(plt, fig)


def _log_axis(ax, which: str = "y") -> None:
    """A log scale (a flat lookahead is 20 times a ripple's area, a ripple 15 times a tree's delay at 128
    bits), labelled in plain numbers."""
    from matplotlib.ticker import LogLocator, ScalarFormatter

    (ax.set_yscale if which == "y" else ax.set_xscale)("log")
    axis = ax.yaxis if which == "y" else ax.xaxis
    axis.set_major_locator(LogLocator(base=10, subs=(1.0, 2.0, 5.0)))
    axis.set_major_formatter(ScalarFormatter())
    axis.set_minor_formatter(ScalarFormatter())
    axis.set_minor_locator(LogLocator(base=10, subs=()))


def draw_width(d: dict) -> dict[str, str | bytes]:
    plt = _mpl()
    fig, ax = plt.subplots(figsize=(9.0, 4.8), layout="constrained")
    for ln in d["lines"]:
        ax.plot(ln["x"], ln["y"], marker=ln["marker"], color=ln["colour"], markersize=ln["size"],
                markeredgecolor="black", markeredgewidth=0.5, linewidth=1.2, label=ln["label"])
    ax.set_xscale("log", base=2)
    ax.set_xticks(d["widths"], [str(w) for w in d["widths"]])
    ax.minorticks_off()
    if d["log"]:
        _log_axis(ax)
    ax.set_xlabel("width (bits)")
    ax.set_ylabel(d["ylabel"])
    ax.set_title(d["title"], fontsize=9)
    ax.grid(True, alpha=0.3, which="both")
    fig.legend(loc="outside right upper", frameon=False)
    return _save(plt, fig)


DRAW = {"pareto": draw_pareto, "width": draw_width}
PLOT_FORMAT = 1  # bump when what a plot mapping means changes


@lru_cache(maxsize=None)
def _drawing_code() -> str:
    """What a plot's files depend on besides its mapping: this module's code and matplotlib's version."""
    import matplotlib

    return sha256_text(Path(__file__).read_text(encoding="utf-8") + "\0" + matplotlib.__version__)[:16]


@dataclass
class Plots:
    """Draws plots, or takes them from the plot cache (``ROOT/plots/``, beside the figure entries; None: no
    cache) when their mapping, this module and matplotlib are as they were. Counts what it did."""

    root: str | Path | None
    drawn: int = 0
    reused: int = 0

    def files(self, d: dict) -> dict[str, str | bytes]:
        cache = Cache(Path(self.root) / "plots") if self.root is not None else None
        k = fingerprint(PLOT_FORMAT, _drawing_code(), {key: v for key, v in d.items() if key != "entry"})
        hit = cache.get(k) if cache is not None else None
        if hit is not None and isinstance(hit.get("png"), str) and isinstance(hit.get("svg"), str):
            try:
                self.reused += 1
                return {"png": base64.b64decode(hit["png"], validate=True), "svg": hit["svg"]}
            except ValueError:
                self.reused -= 1  # a damaged entry: draw again
        got = DRAW[d["kind"]](d)
        self.drawn += 1
        if cache is not None:
            cache.put(k, {"png": base64.b64encode(got["png"]).decode("ascii"), "svg": got["svg"]})
        return got


def _drawn(datas: list[dict], files: dict, plots: Plots | None) -> list[dict]:
    plots = plots or Plots(None)
    for d in datas:
        got = plots.files(d)
        files[f"{d['stem']}.png"], files[f"{d['stem']}.svg"] = got["png"], got["svg"]
    return datas


def pareto_plots(out: Outcome, files: dict, plots: Plots | None = None) -> list[dict]:
    return [{"stem": d["stem"], **d["entry"]} for d in _drawn(pareto_plot_data(out), files, plots)]


def width_plots(out: Outcome, files: dict, plots: Plots | None = None) -> list[str]:
    return [d["stem"] for d in _drawn(width_plot_data(out), files, plots)]


def shown_figures(families) -> list[tuple[str, bool]]:
    """(figure, is an area) for the plots against width and the report's table: each figure of a Pareto
    pair, and the emitted netlist's size; the rest of the figures are in results.csv and .json."""
    out: dict[str, bool] = {}
    for fam in families:
        names = {f.name for f in family_figures(fam)}
        for extra in ALSO_AGAINST_WIDTH:
            if extra in names:
                out[extra] = True
        for area, delay in pairs_of(fam):
            out.setdefault(area, True)
            out.setdefault(delay, False)
    return list(out.items())


def _prefix_drawings(out: Outcome) -> list[tuple[str, str]]:
    """One drawing per prefix variant, at the narrowest width of the sweep that is 8 bits or more."""
    from ..schemes import elaborate

    widths = sorted(out.sweep.widths)
    w = next((x for x in widths if x >= 8), widths[-1])
    out_list = []
    for p in out.sweep.points:
        if p.spec.width != w:
            continue
        net = elaborate(p.spec)
        if net.prefix is not None and net.prefix.cells:
            out_list.append((p.label, draw_prefix(net.prefix, f"{p.label}, {w} bits", p.spec.carry_in)))
    return out_list


def _fmt(v) -> str:
    if v is None:
        return "-"
    if isinstance(v, float):
        return f"{v:.2f}"
    return str(v)


CSS = """body{font-family:sans-serif;margin:2em;max-width:1400px;color:#222}
table{border-collapse:collapse;font-size:12px;margin:0.5em 0 1.5em}
td,th{border:1px solid #ccc;padding:2px 6px;text-align:right}td:first-child,th:first-child,td.l{text-align:left}
tr.front td{background:#fdecea}tr.fail td{background:#ffd0d0}th{background:#eee}
.plot svg{max-width:100%;height:auto}.graph{overflow-x:auto;border:1px solid #ddd;margin:0.5em 0}
pre{background:#f6f6f6;padding:4px 8px;font-size:11px}.caution{background:#fff7d6;padding:6px 10px}"""


def html_report(out: Outcome, files: dict, plots: list[dict], wplots: list[str]) -> str:
    sw = out.sweep
    table = figure_table(out)
    recs = variant_records(out)
    figs = [name for name, _ in shown_figures(sw.figures)]
    on_front = {n for e in pareto(out) for n in e["front"]}
    failed = [r for r in recs if r["check"] != "pass"]
    h = [f"<!DOCTYPE html><html><head><meta charset='utf-8'><title>{escape(sw.name)}: adder sweep</title>"
         f"<style>{CSS}</style></head><body>",
         f"<h1>{escape(sw.name)}: which adder?</h1>",
         f"<p>{len(sw.points)} adders: {len(sw.labels)} variants (Verilog's <code>+</code> among them) at "
         f"{', '.join(map(str, sw.widths))} bits; carry-in {'yes' if sw.carry_in else 'no'}, carry-out "
         f"{'yes' if sw.carry_out else 'no'}; figures: {', '.join(sw.figures)}. Every adder was built and "
         f"checked against Python integer addition by the built-in check before it was measured.</p>",
         "<p class='caution'>Estimates and synthesis figures compare adders with each other; they are not "
         "sign-off timing. Verify the adder you choose in your own flow before it goes into silicon or a "
         "product.</p>"]
    if failed:
        h.append("<h2>Built-in check failures</h2><ul>" + "".join(
            f"<li><b>{escape(r['name'])}</b>: {escape(r['check'])}</li>" for r in failed) + "</ul>")
    else:
        h.append(f"<p>Built-in check: all {len(recs)} adders pass.</p>")
    errors = [(r["name"], fam, e) for r in recs for fam, e in r["errors"].items()]
    if errors:
        h.append("<h2>Measurement errors</h2><ul>" + "".join(
            f"<li>{escape(n)} {escape(f)}: {escape(e)}</li>" for n, f, e in errors) + "</ul>")
    h.append("<h2>Pareto variants</h2><p>Adders no other adder of the same width beats on both figures "
             "(among those that passed the check).</p>")
    for e in pareto(out):
        names = ", ".join(f"{escape(point_of(out, n).label)} ({_fmt(table[n][e['area']])}, "
                          f"{_fmt(table[n][e['delay']])})" for n in e["front"])
        h.append(f"<p><b>{e['width']} bits, {e['area']} / {e['delay']}</b>: {names or 'none measured'}</p>")
    h.append("<h2>Plots</h2>")
    for pl in plots:
        h.append(f"<div class='plot'>{_inline(files[pl['stem'] + '.svg'])}</div>")
    for stem in wplots:
        h.append(f"<div class='plot'>{_inline(files[stem + '.svg'])}</div>")
    h.append("<h2>All figures</h2><table><tr><th>adder</th><th>variant</th><th>width</th><th>check</th>"
             + "".join(f"<th>{escape(f)}<br><small>{escape(all_figures()[f].unit)}</small></th>" for f in figs) + "</tr>")
    for r in recs:
        cls = "fail" if r["check"] != "pass" else ("front" if r["name"] in on_front else "")
        h.append(f"<tr class='{cls}'><td>{escape(r['name'])}</td><td class='l'>{escape(r['variant'])}</td>"
                 f"<td>{r['width']}</td><td class='l'>{escape(r['check'])}</td>"
                 + "".join(f"<td>{_fmt(r['figures'][f])}</td>" for f in figs) + "</tr>")
    h.append("</table><p>Shaded rows are on a Pareto front; every other figure is in results.csv and "
             "results.json. '-': no such figure (Verilog's + has no gate "
             "graph of ours to estimate: synthesis chooses its structure).</p>")
    if sw.skipped:
        h.append("<h2>Not built</h2><ul>" + "".join(
            f"<li>{escape(s.label)} at {s.width} bits: {escape(s.reason)}</li>" for s in sw.skipped) + "</ul>")
    drawings = _prefix_drawings(out)
    if drawings:
        h.append("<h2>Prefix networks</h2>")
        for lab, svg in drawings:
            h.append(f"<div class='graph'>{_inline(svg)}</div>")
    h.append("<h2>Specs</h2><p>Each adder's spec, to rebuild it with <code>adder-forge build</code>.</p>")
    for r in recs:
        text = yaml.safe_dump(r["spec"], sort_keys=False, default_flow_style=None)
        h.append(f"<details><summary>{escape(r['name'])} ({escape(r['variant'])})</summary>"
                 f"<pre>{escape(text)}</pre></details>")
    h.append("<h2>Tools</h2><ul>" + "".join(
        f"<li>{escape(fam)}: " + ", ".join(f"{escape(k)} {escape(v)}" for k, v in vs.items()) + "</li>"
        for fam, vs in versions_by_family(out).items()) + "</ul></body></html>")
    return "\n".join(h) + "\n"


def _inline(svg: str) -> str:
    """An SVG file's text as an element inside HTML: without its XML prolog and doctype."""
    start = svg.find("<svg")
    return svg[start:] if start >= 0 else svg


def report_files(out: Outcome, plots: Plots | None = None) -> dict[str, str | bytes]:
    """The plots and report.html. ``plots``: where drawn plots are kept and counted (default: drawn, not kept)."""
    plots = plots or Plots(None)
    files: dict[str, str | bytes] = {}
    made = pareto_plots(out, files, plots)
    wplots = width_plots(out, files, plots)
    files["report.html"] = html_report(out, files, made, wplots)
    return files



