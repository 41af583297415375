"""The width-parameterized form (``form: parameterized``) at every width of issue 11, for every supported
construction and carry-port combination: one module checked in Icarus and Verilator against Python integer
addition, proved equal to `+` by Yosys (chparam a width), compared with the flat form of the same spec cell
for cell (Yosys one-bit cell counts by type and longest path), and linted (Verilator -Wall, Icarus -Wall).

    .venv/bin/python bench/param_widths.py                 # everything (docs/param.md has the figures)
    .venv/bin/python bench/param_widths.py --ports 11      # only carry-in and carry-out present
    .venv/bin/python bench/param_widths.py --only prefix:brent-kung

Each check is one tool run for all widths of a construction. Exits 1 when any check fails: a mismatch, a
failed proof, a different structure or a lint message is a wrong result, not a slow one.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

from common import save

from adder_forge import emit_design, make_spec
from adder_forge.checks import param_widths as pw
from adder_forge.emit.param_verilog import FORMS, PREFIX_NETWORKS

PORTS = {"11": (True, True), "10": (True, False), "01": (False, True), "00": (False, False)}


def constructions() -> list[tuple[str, str, dict]]:
    out = []
    for scheme in sorted(FORMS):
        if scheme == "prefix":
            out += [(f"prefix:{n}", "prefix", {"prefix": n}) for n in PREFIX_NETWORKS]
        elif scheme in ("carry-select", "carry-skip"):  # a number of bits a block; 'auto' and lists are refused
            out += [(f"{scheme}:{k}", scheme, {"block": k}) for k in (4, 3, 1)]
        elif scheme == "block-lookahead":  # block size and lookahead group; block 1 gives the most levels
            out += [(f"{scheme}:{k}:g{grp}", scheme, {"block": k, "group": grp}) for k, grp in ((4, 4), (3, 2), (1, 4))]
        else:
            out.append((scheme, scheme, {}))
    return out


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--ports", default="11,10,01,00", help="carry-in/carry-out combinations: 11, 10, 01, 00")
    ap.add_argument("--only", default="", help="comma list of constructions (ripple, prefix:sklansky, ...)")
    ap.add_argument("--widths", default=",".join(map(str, pw.WIDTHS)))
    args = ap.parse_args()
    widths = [int(w) for w in args.widths.split(",")]
    only = {x for x in args.only.split(",") if x}
    rows, bad = [], 0
    with tempfile.TemporaryDirectory(prefix="bench_param_") as tmp:
        for label, scheme, keys in constructions():
            if only and label not in only:
                continue
            for ports in args.ports.split(","):
                ci, co = PORTS[ports]
                name = "pb_" + label.replace("prefix:", "").replace("-", "_").replace(":", "_") + f"_{ports}"
                spec = make_spec(name, 8, scheme, carry_in=ci, carry_out=co, form="parameterized", **keys)
                verilog = emit_design(spec).verilog
                row = {"construction": label, "carry_in": ci, "carry_out": co, "widths": widths}
                t = time.perf_counter()
                shapes = pw.structure(spec, verilog, widths)
                row["structure_same"] = all(c.same for c in shapes)
                row["cells"] = {c.width: c.param.total for c in shapes}
                row["longest"] = {c.width: c.param.longest for c in shapes}
                row["structure_s"] = round(time.perf_counter() - t, 1)
                t = time.perf_counter()
                lint = pw.lint(spec, verilog, widths, Path(tmp) / name / "lint")
                row["lint_clean"] = all(r.ok for r in lint)
                row["lint_s"] = round(time.perf_counter() - t, 1)
                t = time.perf_counter()
                proofs = pw.prove(spec, verilog, widths)
                row["proved"] = sum(p.ok for p in proofs)
                row["prove_s"] = round(time.perf_counter() - t, 1)
                for sim in ("icarus", "verilator"):
                    t = time.perf_counter()
                    res = pw.simulate([(spec, verilog)], widths, sim, Path(tmp) / name / sim)
                    row[f"{sim}_passed"] = sum(o.ok for o in res)
                    row[f"{sim}_vectors"] = sum(o.passed for o in res)
                    row[f"{sim}_s"] = round(time.perf_counter() - t, 1)
                ok = (row["structure_same"] and row["lint_clean"] and row["proved"] == len(widths)
                      and row["icarus_passed"] == len(widths) and row["verilator_passed"] == len(widths))
                row["ok"] = ok
                bad += not ok
                rows.append(row)
                print(f"{label:22} ci={int(ci)} co={int(co)}  structure {'same' if row['structure_same'] else 'DIFFERENT'}"
                      f" ({row['structure_s']} s)  lint {'clean' if row['lint_clean'] else 'WARNINGS'} ({row['lint_s']} s)"
                      f"  proved {row['proved']}/{len(widths)} ({row['prove_s']} s)"
                      f"  icarus {row['icarus_passed']}/{len(widths)} ({row['icarus_vectors']} vectors, {row['icarus_s']} s)"
                      f"  verilator {row['verilator_passed']}/{len(widths)} ({row['verilator_s']} s)"
                      f"  cells at {widths[-1]}: {row['cells'][widths[-1]]}, longest path {row['longest'][widths[-1]]}",
                      flush=True)
                if not row["structure_same"]:
                    for c in shapes:
                        if not c.same:
                            print(f"    width {c.width}: flat {c.flat} parameterized {c.param}", flush=True)
                if not row["lint_clean"]:
                    for r in lint:
                        print(f"    {r.tool}: {r.messages[:300]}", flush=True)
    save("param_widths", {"rows": rows})
    print(f"{len(rows)} constructions x {len(widths)} widths: {len(rows) - bad} passed every check, {bad} failed")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
