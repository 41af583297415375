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
    for p in sorted(RESULTS.glob(f"fpga_{family}*.json")):
        rows += json.loads(p.read_text(encoding="utf-8"))
    latest = {}  # a design measured by two runs: the later file's row
    for r in rows:
        latest[(r["width"], r["label"], r["structure"])] = r
    return sorted(latest.values(), key=lambda r: r["width"])


def _name(r: dict) -> str:
    return f"{r['label']} ({r['structure']})"


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
                out.append(f"| {w} | {_name(r)} | | failed: {r['error'][:80]} | | | | |")
                continue
            ratio = f"{r['fmax_mhz'] / plus:.2f}" if plus else "-"
            blocks = r.get("block_sizes") or ""
            if len(blocks) > 28:
                blocks = blocks[:25] + "...]"
            out.append(f"| {w} | {_name(r)} | {blocks} | {r['fmax_mhz']:.2f} | {ratio} | {r['lut4']} | "
                       f"{r['carry_cells']} {r['carry_cell']} | {r['seconds']:.0f} |")
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


def write_docs() -> int:
    fams = {"ice40": load("ice40"), "ecp5": load("ecp5")}
    lines = ["<!-- written by bench/fpga_hybrids.py table from bench/results/fpga_*.json; do not edit -->", ""]
    for fam, rows in fams.items():
        lines += table(fam, rows)
    (DOCS / "fpga_tables.md").write_text("\n".join(lines), encoding="utf-8")
    plot(fams, DOCS / "fpga.png")
    return 0


if __name__ == "__main__":
    sys.exit(write_docs())
