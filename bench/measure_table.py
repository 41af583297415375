"""The measurement table and plot of docs/measurements.md, from real runs of `report`'s code path.

    .venv/bin/python bench/measure_table.py              # 16, 32, 64, 128 bits; writes docs/measurements.{md,png}
    .venv/bin/python bench/measure_table.py 16 32        # other widths (still writes the docs)
    .venv/bin/python bench/measure_table.py --replot     # page and plot again from bench/results/

For Kogge-Stone, Brent-Kung, Sklansky, ripple and behavioral (`+`): unit-gate delay, logical-effort delay,
netlist gate equivalents as emitted, Yosys cells and depth (after Yosys's own optimisation, and ABC-mapped
with the delay script), LUT6 count and depth,
iCE40 UP5K LUTs, carry cells and Fmax. Every figure comes from adder_forge.synth.measure.measure_specs, the
function behind `adder-forge report`, so the docs show what the command prints. Takes a few minutes
(nextpnr dominates).
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

from common import ROOT, save

from adder_forge.synth.measure import measure_specs
from adder_forge.spec.loader import make_spec

ROWS = [
    ("`+` (behavioral)", "behavioral", {}),
    ("ripple", "ripple", {}),
    ("Brent-Kung", "prefix", {"prefix": "brent-kung"}),
    ("Sklansky", "prefix", {"prefix": "sklansky"}),
    ("Kogge-Stone", "prefix", {"prefix": "kogge-stone"}),
]
FLOWS = ["generic", "lut6", "ice40"]
DOC = ROOT / "docs" / "measurements.md"
PLOT = ROOT / "docs" / "measurements.png"


def run(widths: list[int]) -> list[dict]:
    out = []
    with tempfile.TemporaryDirectory(prefix="adder_forge_table_") as tmp:
        for w in widths:
            # One call a width; the `+` row is measured as a spec of its own, like every other row.
            specs = [make_spec(f"t_{scheme}_{opts.get('prefix', 'x').replace('-', '_')}_{w}", w, scheme, **opts)
                     for _, scheme, opts in ROWS]
            t = time.perf_counter()
            res = measure_specs(specs, FLOWS, Path(tmp), progress=lambda m: print("   ", m, file=sys.stderr, flush=True))
            print(f"{w} bits: {time.perf_counter() - t:.1f} s", flush=True)
            for (label, _, _), m in zip(ROWS, res):
                out.append({"label": label, "width": w, "figures": m.figures.values(), "errors": m.figures.errors()})
    return out


def _f(v, fmt="{}"):
    return "-" if v is None else fmt.format(v)


def row_cells(r: dict) -> list[str]:
    """One row of the page from the spec's measurement records (figure name -> value)."""
    f, err = r["figures"], r["errors"]

    def two(flow, a, b, sep=" / "):
        return "error" if flow in err else f"{f[a]}{sep}{f[b]}"

    le = "-" if f.get("le_tau") is None else f"{f['le_tau']:.1f} ({f['le_fo4']:.1f})"
    return [
        r["label"], str(r["width"]), _f(f.get("netlist_gate_equiv")), _f(f.get("unit_gate_delay")), le,
        two("generic", "yosys_cells", "yosys_depth"), two("generic", "abc_cells", "abc_depth"),
        two("lut6", "lut6_luts", "lut6_depth"), two("ice40", "ice40_lut4", "ice40_carry", " + "),
        "error" if "ice40" in err else f"{f['ice40_fmax_mhz']:.2f}",
    ]


HEAD = ["adder", "n", "netlist GE", "unit-gate delay", "LE delay, τ (FO4)", "Yosys cells / depth, no ABC",
        "ABC cells / depth, delay script", "LUT6 / depth", "iCE40 LUT4 + carry", "iCE40 Fmax, MHz"]


def markdown(results: list[dict], widths: list[int]) -> str:
    lines = ["| " + " | ".join(HEAD) + " |", "|" + "---|" * len(HEAD)]
    for w in widths:
        for r in results:
            if r["width"] == w:
                lines.append("| " + " | ".join(row_cells(r)) + " |")
    return "\n".join(lines)


def ordering(results: list[dict], width: int = 64) -> str:
    le = {r["label"]: r["figures"].get("le_tau") for r in results if r["width"] == width}
    if not all(le.get(k) for k in ("ripple", "Brent-Kung", "Sklansky", "Kogge-Stone")):
        return ""
    ok = le["ripple"] > 3 * max(le["Brent-Kung"], le["Sklansky"], le["Kogge-Stone"]) and \
        le["Brent-Kung"] > le["Sklansky"] and le["Brent-Kung"] > le["Kogge-Stone"]
    return (f"At {width} bits the logical-effort estimate orders them ripple {le['ripple']:.0f} τ ≫ Brent-Kung "
            f"{le['Brent-Kung']:.0f} τ > Sklansky {le['Sklansky']:.0f} τ > Kogge-Stone {le['Kogge-Stone']:.0f} τ: "
            + ("the published order (ripple slowest by far, Brent-Kung slower than Sklansky and Kogge-Stone; Harris "
               "and Sutherland, \"Logical effort of carry propagate adders\", Asilomar 2003, from memory). "
               if ok else "NOT the published order; see tests/test_delay.py. ")
            + "tests/test_delay.py checks the same ordering.")


def plot(results: list[dict], widths: list[int]) -> None:
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    panels = [
        ("logical-effort delay (FO4)", lambda r: r["figures"].get("le_fo4")),
        ("ABC-mapped depth (cells, delay script)", lambda r: r["figures"].get("abc_depth")),
        ("LUT6 depth", lambda r: r["figures"].get("lut6_depth")),
        ("iCE40 UP5K Fmax (MHz)", lambda r: r["figures"].get("ice40_fmax_mhz")),
    ]
    fig, axes = plt.subplots(2, 2, figsize=(11, 8))
    colours = plt.rcParams["axes.prop_cycle"].by_key()["color"]
    for ax, (title, get) in zip(axes.flat, panels):
        for k, (label, _, _) in enumerate(ROWS):
            pts = [(r["width"], get(r)) for r in results if r["label"] == label and get(r) is not None]
            if pts:
                ax.plot([p[0] for p in pts], [p[1] for p in pts], marker="o", color=colours[k % len(colours)],
                        label=label.replace("`", ""))
        ax.set_xscale("log", base=2)
        ax.set_xticks(widths)
        ax.set_xticklabels([str(w) for w in widths])
        ax.set_xlabel("width (bits)")
        ax.set_title(title)
        ax.grid(True, alpha=0.3)
        if title.startswith("logical"):
            ax.set_yscale("log")
    axes.flat[-1].legend(fontsize=8)  # the Fmax panel has every adder (`+` has no estimate)
    fig.suptitle("adder_forge: estimates and synthesis figures (Yosys 0.70, nextpnr-ice40; estimates, not sign-off)")
    fig.tight_layout()
    fig.savefig(PLOT, dpi=110)


def _get(results, label, width, figure):
    for r in results:
        if r["label"] == label and r["width"] == width:
            return r["figures"].get(figure)
    return None


def reading(results: list[dict], widths: list[int]) -> str:
    """Observations computed from the figures, so that the prose cannot drift from the table."""
    out = []
    plus = [_get(results, ROWS[0][0], w, "yosys_depth") for w in widths]
    bk = [_get(results, "Brent-Kung", w, "yosys_depth") for w in widths]
    if all(plus) and all(bk):
        out.append(f"- Before ABC, Yosys's own `+` is {', '.join(map(str, plus))} cells deep at {', '.join(map(str, widths))} "
                   f"bits, close to Brent-Kung ({', '.join(map(str, bk))}): a logarithmic tree, not a ripple.")
    for w in widths[-1:]:
        depths = {label: _get(results, label, w, "abc_depth") for label, _, _ in ROWS}
        if all(depths.values()):
            out.append(f"- After ABC's delay script every adder at {w} bits, ripple included, is "
                       f"{min(depths.values())} to {max(depths.values())} cells deep: ABC restructures the carry "
                       "logic, so the netlist, no-ABC and estimate columns are the ones that tell the schemes apart.")
    cross = None
    for w in widths:
        f_plus = _get(results, ROWS[0][0], w, "ice40_fmax_mhz")
        best = max((_get(results, label, w, "ice40_fmax_mhz") or 0, label) for label, _, _ in ROWS[1:])
        if f_plus and best[0] > f_plus and cross is None:
            cross = (w, best[1], best[0], f_plus)
    if cross:
        out.append(f"- On the iCE40 `+` uses the hard carry chain (one SB_CARRY a bit); a LUT network first beats it "
                   f"at {cross[0]} bits ({cross[1]} {cross[2]:.2f} MHz against {cross[3]:.2f} MHz).")
    else:
        out.append(f"- On the iCE40 `+` uses the hard carry chain (one SB_CARRY a bit) and is the fastest adder at "
                   f"every width here.")
    same = [w for w in widths if len({_get(results, label, w, "ice40_fmax_mhz")
                                      for label in ("ripple", "Brent-Kung", "Sklansky")}) == 1]
    if same:
        out.append(f"- synth_ice40 re-maps the logic with ABC too: at {', '.join(map(str, same))} bits ripple, "
                   "Brent-Kung and Sklansky reach exactly the same Fmax.")
    return "\n".join(out)


def write_doc(results: list[dict], widths: list[int], seconds: float) -> None:
    text = f"""# Measurements: estimates and synthesis figures

Produced by `.venv/bin/python bench/measure_table.py` ({seconds / 60:.0f} min on a shared 2-core machine) through
`adder_forge.synth.measure.measure_specs`, the code behind `adder-forge report SPEC --synth generic,lut6,ice40`.
Every adder here has a carry-in and a carry-out. Figures are estimates or single tool runs, not sign-off
timing.

{markdown(results, widths)}

![measurements](measurements.png)

{ordering(results)}

## What the columns are
- **netlist GE**: the module as emitted (NAME.v), in 2-input gate equivalents (AO21 2, MUX2 3, the rest 1):
  `build`'s figure, `netlist_gate_equiv` in NAME.json. `-` for `+`: n/a, left to synthesis.
- **unit-gate delay**: longest path in the unit-gate model (AND/OR 1, XOR 2, AO21 2, MUX2 2, NOT 1; Tyagi
  1993, Zimmermann 1997, from memory; adder_forge/delay.py). `-` for `+`: Verilog's `+` is left to synthesis.
- **LE delay**: logical effort (Sutherland, Sproull and Harris 1999): the slowest input-to-output path sized
  for least delay, D = N·F^(1/N) + P with the path effort F counting the branching at every node, in τ
  (p_inv = 1) and FO4 (5 τ). Cells as their inverting CMOS stage (AND2 as NAND2 g = 4/3, AO21 as AOI21
  g = 2 and 5/3, XOR2 g = 4 p = 4, ...), each output driving one unit inverter. Each path is sized on its
  own, which is optimistic for networks whose paths share high-fanout nodes (Sklansky); the unit-drive
  figure (every gate the size of a unit inverter) is in NAME.json as `le_unsized_tau`.
- **Yosys cells / depth, no ABC**: `synth -flatten -noabc`, cells and `ltp -noff` (cells on the longest
  path). Not the netlist as emitted: Yosys's own passes have merged identical cells and removed dead ones
  (a flat lookahead shrinks several-fold). `+` here is Yosys's own adder architecture.
- **ABC cells / depth**: then `abc -g AND,NAND,OR,NOR,XOR,XNOR,ANDNOT,ORNOT,MUX` with a delay script
  (balancing, then `map -D 1`; adder_forge/synth.py `DEPTH_SCRIPT`). ABC restructures: a ripple comes out
  almost as shallow as a tree, so this column says what synthesis makes of each adder, not how good its
  structure is. The area-script figures (`abc_area`) are in NAME.json.
- **LUT6 / depth**: `synth -flatten -lut 6` (abc9), LUT count and LUT levels.
- **iCE40**: `synth_ice40` of the adder alone (LUT4 and SB_CARRY cells); Fmax from nextpnr-ice40 (UP5K,
  SG48, seed 1) with the adder between input and output registers (a shift chain feeds the inputs, since the
  package has 39 I/O pins; templates/ice40_wrapper.v.j2). Seeds move Fmax by a few per cent.

## Reading it
{reading(results, widths)}
"""
    DOC.write_text(text, encoding="utf-8")


def replot() -> None:
    """Redraw the plot and the page from the last run's bench/results/measure_table.json."""
    import json

    data = json.loads((ROOT / "bench" / "results" / "measure_table.json").read_text(encoding="utf-8"))
    plot(data["rows"], data["widths"])
    write_doc(data["rows"], data["widths"], data.get("seconds", 0.0))
    print("wrote", DOC, "and", PLOT)


def main(widths: list[int]) -> None:
    t = time.perf_counter()
    results = run(widths)
    seconds = time.perf_counter() - t
    save("measure_table", {"widths": widths, "seconds": round(seconds, 1), "rows": results})
    plot(results, widths)
    write_doc(results, widths, seconds)
    print(markdown(results, widths))
    print(ordering(results))
    print("wrote", DOC, "and", PLOT)


if __name__ == "__main__":
    if sys.argv[1:] == ["--replot"]:
        replot()
    else:
        main([int(x) for x in sys.argv[1:]] or [16, 32, 64, 128])
