"""docs/fpga_tables.md and docs/fpga.png from bench/results/fpga_*.json (bench/fpga_hybrids.py's output)."""

from __future__ import annotations

import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
RESULTS = ROOT / "bench" / "results"
DOCS = ROOT / "docs"


def load(family: str) -> list[dict]:
    rows = []
    for p in sorted([*RESULTS.glob(f"fpga_{family}.json"), *RESULTS.glob(f"fpga_{family}_*.json")]):
        rows += json.loads(p.read_text(encoding="utf-8"))
    # A design measured by two runs: the later file's row, and a measured row before one recovered from an
    # earlier table (``from_table``: rows whose run's JSON was not kept).
    rows.sort(key=lambda r: "from_table" not in r)
    latest = {}
    for r in rows:
        latest[(r["width"], r["label"], r["structure"])] = r
    order = ["+", "kogge-stone", "sklansky", "chain-prefix", "chain-select", "chain-select/chain"]
    return sorted(latest.values(), key=lambda r: (r["width"], order.index(r["label"]) if r["label"] in order
                                                   else len(order), r["structure"] == "kept"))


def _name(r: dict) -> str:
    return f"{r['label']} ({r['structure']})" + (" ¹" if "from_table" in r else "")


def table(family: str, rows: list[dict]) -> list[str]:
    if not rows:
        return []
    out = [f"### {rows[0].get('device', family)}", "",
           "| n | adder | blocks | Fmax, MHz | × `+` | LUT4 | carry cells | P&R s |", "|---|---|---|---|---|---|---|---|"]
    for w in sorted({r["width"] for r in rows}):
        at = [r for r in rows if r["width"] == w]
        plus = next((r["fmax_mhz"] for r in at if r["label"] == "+" and "fmax_mhz" in r), None)
        for r in at:
            if "error" in r:
                out.append(f"| {w} | {_name(r)} | | failed: {r['error'][:200]} | | | | |")
                continue
            ratio = f"{r['fmax_mhz'] / plus:.2f}" if plus else "-"
            blocks = r.get("block_sizes") or ""
            if len(blocks) > 28:
                blocks = blocks[:25] + "...]"
            out.append(f"| {w} | {_name(r)} | {blocks} | {r['fmax_mhz']:.2f} | {ratio} | {r['lut4']} | "
                       f"{r['carry_cells']} {r['carry_cell']} | {r['seconds']:.0f} |")
    if any("from_table" in r for r in rows):
        out += ["", "¹ from the first run (commit 0fe9fa5), whose JSON was not kept: its table's figures, and "
                    "`block: auto` sizes of that time (docs/fpga.md)."]
    return out + [""]


def plot(families: dict[str, list[dict]], path: Path) -> None:
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fams = [f for f in families if families[f]]
    fig, axes = plt.subplots(1, len(fams), figsize=(6.2 * len(fams), 4.8), squeeze=False)
    markers = {"+": "s", "kogge-stone": "^", "sklansky": "v", "chain-prefix": "o", "chain-select": "D",
               "chain-select/chain": "P"}
    for ax, fam in zip(axes[0], fams):
        rows = [r for r in families[fam] if "fmax_mhz" in r]
        widths = sorted({r["width"] for r in rows})
        cmap = plt.get_cmap("viridis")
        for k, w in enumerate(widths):
            colour = cmap(k / max(1, len(widths) - 1) * 0.85)
            for r in (r for r in rows if r["width"] == w):
                logic = r["lut4"] + r["carry_cells"]
                ax.scatter(logic, r["fmax_mhz"], marker=markers.get(r["label"], "x"), color=colour,
                           facecolors="none" if r["structure"] == "kept" else colour, s=46)
            ax.scatter([], [], color=colour, marker="o", label=f"{w} bits")
        for lab, m in markers.items():
            ax.scatter([], [], color="grey", marker=m, label=lab)
        ax.scatter([], [], color="grey", facecolors="none", marker="o", label="hollow: structure kept")
        ax.set_xscale("log")
        ax.set_xlabel("logic of the adder: LUT4 + carry cells (log scale)")
        ax.set_ylabel("Fmax between registers, MHz (nextpnr, seed 1)")
        ax.set_title(rows[0]["device"] if rows else fam)
        ax.grid(True, which="both", alpha=0.3)
        ax.legend(fontsize=7, ncol=2)
    fig.tight_layout()
    fig.savefig(path, dpi=110)


def _path(r: dict) -> str:
    p = r.get("critical_path")
    if not p:
        return ""
    return (f"{p['ns']:.2f} ns: {p['steps']} (routing {p['routing_ns']:.2f}, LUTs {p['lut_ns']:.2f}, chain "
            f"{p['chain_ns'] + p['entry_ns']:.2f})")


def sweeps() -> list[str]:
    """The block-size sweeps (``fpga_hybrids.py blocks``), fastest first, with nextpnr's critical path."""
    out = []
    for p in sorted(RESULTS.glob("fpga_blocks_*.json")):
        if "_seed" in p.name:  # other seeds of swept designs: in the seeds tables
            continue
        rows = json.loads(p.read_text(encoding="utf-8"))
        ok = sorted((r for r in rows if "fmax_mhz" in r), key=lambda r: -r["fmax_mhz"])
        if not ok:
            continue
        out += [f"### Block sizes: {ok[0]['device']}, {ok[0]['width']} bits (seed {ok[0]['seed']})", "",
                "| adder | blocks | Fmax, MHz | LUT4 | carry cells | critical path (nextpnr): steps, ns |",
                "|---|---|---|---|---|---|"]
        out += [f"| {_name(r)} | {r['block_sizes']} | {r['fmax_mhz']:.2f} | {r['lut4']} | {r['carry_cells']} | "
                f"{_path(r)} |" for r in ok]
        out += [f"| {_name(r)} | {r.get('block_sizes', '')} | failed: {r['error'][:80]} | | | |"
                for r in rows if "error" in r]
        out.append("")
    if out:
        out = ["Steps: q clock to out, r a hop through the routing, e into a carry chain, c*k k chain steps "
               "(one bit each on iCE40, two on ECP5), L a LUT, s setup.", ""] + out
    return out


def seeds() -> list[str]:
    """The spread over seeds 1-3 (``fpga_hybrids.py seeds``): min, max and max/min - 1 of each design."""
    out = []
    groups = [("", json.loads(p.read_text(encoding="utf-8"))) for p in sorted(RESULTS.glob("fpga_seeds_*.json"))]
    bases = sorted({p.name.rsplit("_seed", 1)[0] for p in RESULTS.glob("fpga_blocks_*_seed*.json")})
    for base in bases:  # swept designs placed with other seeds too: with their seed-1 rows
        again = [r for p in sorted(RESULTS.glob(f"{base}_seed*.json"))
                 for r in json.loads(p.read_text(encoding="utf-8")) if "fmax_mhz" in r]
        first = json.loads((RESULTS / f"{base}.json").read_text(encoding="utf-8"))
        keys = {(r["label"], r["structure"], r["block_sizes"]) for r in again}
        groups.append((", swept blocks", [r for r in first if "fmax_mhz" in r and
                                          (r["label"], r["structure"], r["block_sizes"]) in keys] + again))
    for title, rows in groups:
        if not rows:
            continue
        out += [f"### Seeds: {rows[0]['device']}, {rows[0]['width']} bits{title}", "",
                "| adder | blocks | Fmax by seed, MHz | min | max | spread |", "|---|---|---|---|---|---|"]
        for key in dict.fromkeys((r["label"], r["structure"], r.get("block_sizes")) for r in rows):
            at = sorted((r for r in rows if (r["label"], r["structure"], r.get("block_sizes")) == key),
                        key=lambda r: r["seed"])
            f = [r["fmax_mhz"] for r in at]
            by = ", ".join(f"{r['seed']}: {r['fmax_mhz']:.2f}" for r in at)
            out.append(f"| {_name(at[0])} | {at[0].get('block_sizes') or ''} | {by} | {min(f):.2f} | {max(f):.2f} | "
                       f"{(max(f) / min(f) - 1) * 100:.1f}% |")
        out.append("")
    return out


def write_docs() -> int:
    fams = {"ice40": load("ice40"), "ecp5": load("ecp5"), "ecp5-85k": load("ecp5-85k")}
    lines = ["<!-- written by bench/fpga_hybrids.py table from bench/results/fpga_*.json; do not edit -->", ""]
    for fam, rows in fams.items():
        lines += table(fam, rows)
    lines += seeds() + sweeps()
    fams.pop("ecp5-85k")  # the plot: the two families of the issue
    (DOCS / "fpga_tables.md").write_text("\n".join(lines), encoding="utf-8")
    plot(fams, DOCS / "fpga.png")
    return 0


if __name__ == "__main__":
    sys.exit(write_docs())
