"""FPGA adders against the carry chain (issue 14): `+`, the best LUT prefix networks and the chain hybrids,
placed and routed between registers on iCE40 UP5K and ECP5, at several widths, in one run per family.

    .venv/bin/python bench/fpga_hybrids.py ice40 [WIDTHS]     # default 32 64 128 256
    .venv/bin/python bench/fpga_hybrids.py ecp5 [WIDTHS]      # default 64 128 256 512
    .venv/bin/python bench/fpga_hybrids.py seeds FAMILY WIDTH  # the spread over seeds 1-3
    .venv/bin/python bench/fpga_hybrids.py blocks FAMILY WIDTH LABEL[@kept]:SIZES ...
                                  # a block-size sweep, e.g. chain-select/chain:12,14,16 chain-select:[8,16,24,80]
    .venv/bin/python bench/fpga_hybrids.py table              # docs/fpga_tables.md and docs/fpga.png from
                                                              # the results in bench/results/fpga_*.json

Every design is first checked against Python integer addition (the built-in check, directed carry patterns
and random vectors) and its synthesised cell counts are checked for what the scheme must use (`+` and the
hybrids carry cells, LUT networks none): a failed check or a missing Fmax exits 1, and nothing is written
for that family. Results (one JSON object a design, seed, flow and figures) go to
bench/results/fpga_FAMILY.json; place-and-route is slow (a 256-bit design takes minutes on a shared
machine), so run it in the background with nice.
"""

from __future__ import annotations

import json
import os
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from adder_forge.checks.builtin import check  # noqa: E402
from adder_forge.emit.design import design  # noqa: E402
from adder_forge.emit.vectors import make_plan  # noqa: E402
from adder_forge.emit.verilog import emit_module  # noqa: E402
from adder_forge.spec.loader import make_spec  # noqa: E402
from adder_forge.synth.flows import DEVICES, KEEP_ROLES, place  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
RESULTS = ROOT / "bench" / "results"
WIDTHS = {"ice40": (32, 64, 128, 256), "ecp5": (64, 128, 256, 512)}


def variants(family: str, width: int) -> list[tuple[str, str, dict, str]]:
    """(label, scheme, keys, structure): `+`; Kogge-Stone in LUTs (the best LUT network of
    docs/measurements.md from 32 bits up), flattened (as the user's synthesis would) and kept; the hybrids
    with automatic blocks for the family, flattened (their chains are hard cells either way)."""
    t = {"target": family.split("-")[0], "block": "auto"}
    return [
        ("+", "behavioral", {}, "flat"),
        ("kogge-stone", "prefix", {"prefix": "kogge-stone"}, "flat"),
        ("kogge-stone", "prefix", {"prefix": "kogge-stone"}, "kept"),
        ("chain-prefix", "chain-prefix", dict(t), "flat"),
        ("chain-select", "chain-select", dict(t), "flat"),
        ("chain-select/chain", "chain-select", {**t, "join": "chain"}, "flat"),
    ]


class Wrong(Exception):
    pass


def tool_error(exc: Exception) -> str:
    """What a crashed tool said: its first line, and the trap of a WebAssembly fault (the lines in between are
    a backtrace of unnamed functions)."""
    lines = [x.strip() for x in str(exc).splitlines() if x.strip()]
    trap = [x for x in lines if "memory fault" in x or "wasm trap" in x or x.startswith("ERROR")]
    return "; ".join([lines[0].split(" (")[0], *trap])[:300] if lines else type(exc).__name__


def measure(family: str, width: int, label: str, scheme: str, keys: dict, structure: str, seed: int = 1,
            device: str | None = None) -> dict:
    name = f"f_{scheme.replace('-', '_')}_{width}_{structure}"
    d = design(make_spec(name, width, scheme, **keys), tb_random=1)
    r = check(d.net, make_plan(width, True, 1 << 16, 2000, seed))
    if not r.ok:
        raise Wrong(f"{name}: the built-in check failed: {r.first.describe(width) if r.first else r}")
    verilog = d.verilog if structure == "flat" else emit_module(d.net, ["structure kept for measurement"], keep=KEEP_ROLES)
    dev = device or family
    t0 = time.monotonic()
    with tempfile.TemporaryDirectory(prefix="adder_forge_fpga_") as tmp:
        fig = place(name, verilog, Path(tmp), width=width, carry_in=True, carry_out=True, device=dev, seed=seed)
    seconds = round(time.monotonic() - t0, 1)
    has_add = any(n.op == "ADD" for n in d.net.nodes)
    if has_add and fig["carry"] == 0:
        raise Wrong(f"{name}: synthesis used no {fig['carry_cell']} for a design built on carry chains")
    if not has_add and fig["carry"] != 0:
        raise Wrong(f"{name}: a LUT network came out with {fig['carry']} carry cells")
    if not fig.get("fmax_mhz") or fig["fmax_mhz"] <= 0:
        raise Wrong(f"{name}: no Fmax in nextpnr's report")
    sizes = dict(d.net.meta).get("block_sizes")
    return {"family": family, "device": fig["device"], "width": width, "label": label, "scheme": scheme,
            "keys": keys, "structure": structure, "block_sizes": sizes, "seed": seed, "fmax_mhz": fig["fmax_mhz"],
            "lut4": fig["lut4"], "carry_cells": fig["carry"], "carry_cell": fig["carry_cell"],
            "logic_cells_used": fig.get("logic_cells_used"), "seconds": seconds,
            "critical_path": fig.get("critical_path"),
            "place_and_route": fig["place_and_route"]}


def run_family(family: str, widths) -> int:
    """FPGA_LABELS=+,chain-prefix limits the run to those rows; FPGA_TAG=x writes fpga_FAMILY_x.json, so that
    two runs can go on at once (the table reads every fpga_FAMILY*.json)."""
    RESULTS.mkdir(parents=True, exist_ok=True)
    tag = os.environ.get("FPGA_TAG", "")
    only = [x for x in os.environ.get("FPGA_LABELS", "").split(",") if x]
    out_path = RESULTS / f"fpga_{family}{'_' + tag if tag else ''}.json"
    keep = [r for r in (json.loads(out_path.read_text(encoding="utf-8")) if out_path.exists() else [])
            if r["width"] not in widths]  # a run over some widths keeps the others' results
    rows = keep
    for w in widths:
        for label, scheme, keys, structure in variants(family, w):
            if only and label not in only:
                continue
            try:
                row = measure(family, w, label, scheme, keys, structure)
            except Wrong as exc:
                print(f"WRONG: {exc}", flush=True)
                return 1
            except Exception as exc:  # a tool that crashes or a design that does not fit: record, go on
                row = {"family": family, "width": w, "label": label, "scheme": scheme, "keys": keys,
                       "structure": structure, "error": tool_error(exc)}
            rows.append(row)
            print(json.dumps(row), flush=True)
            out_path.write_text(json.dumps(rows, indent=1) + "\n", encoding="utf-8")
    return 0


def run_seeds(family: str, width: int) -> int:
    RESULTS.mkdir(parents=True, exist_ok=True)
    rows = []
    for label, scheme, keys, structure in variants(family, width):
        if label not in ("+", "chain-prefix", "chain-select/chain") or structure != "flat":
            continue
        for seed in (1, 2, 3):
            try:
                row = measure(family, width, label, scheme, keys, structure, seed=seed)
            except Wrong as exc:
                print(f"WRONG: {exc}", flush=True)
                return 1
            rows.append(row)
            print(json.dumps(row), flush=True)
    (RESULTS / f"fpga_seeds_{family}_{width}.json").write_text(json.dumps(rows, indent=1) + "\n", encoding="utf-8")
    return 0


def parse_blocks(item: str) -> list[tuple[str, str, dict, str]]:
    """'LABEL[+prefix=NETWORK][@kept]:SIZES' with SIZES either uniform sizes '12,14,16' or lists
    '[8,16,24];[12,20]': one variant a size, the label's scheme and keys with ``block`` set."""
    head, _, sizes = item.partition(":")
    label, _, structure = head.partition("@")
    label, *extra = label.split("+prefix=")  # chain-prefix+prefix=kogge-stone: another network over the blocks
    base = next((v for v in variants("ice40", 8) if v[0] == label and v[1].startswith("chain")), None)
    if base is None or not sizes or structure not in ("", "flat", "kept"):
        raise SystemExit(f"blocks: cannot read {item!r} (LABEL[@kept]:SIZES, LABEL one of chain-prefix, "
                         "chain-select, chain-select/chain)")
    blocks = [json.loads(x) for x in sizes.split(";")] if sizes.startswith("[") else [int(x) for x in sizes.split(",")]
    keys = {k: v for k, v in base[2].items() if k != "target"}
    if extra:
        if label != "chain-prefix":
            raise SystemExit(f"blocks: +prefix= applies to chain-prefix only, not {label}")
        keys["prefix"] = extra[0]
    name = f"{label}/{keys['prefix']}" if extra else label
    return [(name, base[1], {**keys, "block": b}, structure or "flat") for b in blocks]


def run_blocks(family: str, width: int, items: list[str]) -> int:
    """Place the given block sizes (a sweep); rows are added to bench/results/fpga_blocks_FAMILY_WIDTH.json
    (FPGA_SEED=k: nextpnr seed k, written to fpga_blocks_FAMILY_WIDTH_seedk.json)."""
    RESULTS.mkdir(parents=True, exist_ok=True)
    seed = int(os.environ.get("FPGA_SEED", "1"))
    out_path = RESULTS / f"fpga_blocks_{family}_{width}{f'_seed{seed}' if seed != 1 else ''}.json"
    rows = json.loads(out_path.read_text(encoding="utf-8")) if out_path.exists() else []
    for item in items:
        for label, scheme, keys, structure in parse_blocks(item):
            try:
                row = measure(family, width, label, scheme, keys, structure, seed=seed)
            except Wrong as exc:
                print(f"WRONG: {exc}", flush=True)
                return 1
            except Exception as exc:
                row = {"family": family, "width": width, "label": label, "scheme": scheme, "keys": keys,
                       "structure": structure, "block_sizes": str(keys["block"]), "error": tool_error(exc)}
            rows.append(row)
            print(json.dumps(row), flush=True)
            out_path.write_text(json.dumps(rows, indent=1) + "\n", encoding="utf-8")
    return 0


def main(argv: list[str]) -> int:
    if argv[:1] == ["blocks"] and len(argv) >= 4:
        return run_blocks(argv[1], int(argv[2]), argv[3:])
    if not argv or argv[0] not in ("ice40", "ecp5", "ecp5-85k", "seeds", "table"):
        print(__doc__)
        return 2
    if argv[0] == "table":
        from fpga_table import write_docs  # noqa: E402

        return write_docs()
    if argv[0] == "seeds":
        return run_seeds(argv[1], int(argv[2]))
    family = argv[0]
    widths = tuple(int(x) for x in argv[1:]) or WIDTHS[family.split("-")[0]]
    assert family in DEVICES
    return run_family(family, widths)


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
