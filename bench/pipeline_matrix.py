"""The pipelining matrix of issue 10: Kogge-Stone, Sklansky and Brent-Kung at 48 and 64 bits and ripple at 64
bits, each with 1, 2 and 3 stages, through the built-in check (cycle by cycle), the emitted testbench in
Icarus and Verilator (back-to-back vectors, each result K cycles later) and the Yosys proof (a bounded
proof over the latency, checks/formal.py). Prints the levels per stage of each (the README table).

    .venv/bin/python bench/pipeline_matrix.py              # the whole matrix (24 designs)
    .venv/bin/python bench/pipeline_matrix.py --quick      # 64-bit Kogge-Stone and ripple, 2 stages

Also runs each once with a clock enable and a synchronous reset, and once with an asynchronous active-low
reset, so every clocking the spec offers is simulated and proved at these widths. Exits 1 when any check
fails: a wrong result is never a slow one.
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

from common import save

from adder_forge import emit_design, make_spec, verify

DESIGNS = [("ks", "prefix", {"prefix": "kogge-stone"}, (48, 64)), ("sk", "prefix", {"prefix": "sklansky"}, (48, 64)),
           ("bk", "prefix", {"prefix": "brent-kung"}, (48, 64)), ("rip", "ripple", {}, (64,))]
CLOCKINGS = [("", {}), ("_ers", {"enable": True, "reset": "sync"}),
             ("_ara", {"reset": "async", "reset_level": "low"})]


def specs(quick: bool):
    out = []
    for tag, scheme, keys, widths in DESIGNS:
        for w in widths:
            for k in (1, 2, 3):
                for ctag, clock in CLOCKINGS:
                    if clock and k != 2:  # every clocking once, at two stages
                        continue
                    if quick and (w != 64 or k != 2 or tag not in ("ks", "rip") or clock):
                        continue
                    out.append(make_spec(f"pl_{tag}{w}_k{k}{ctag}", w, scheme, pipeline={"stages": k, **clock},
                                         **keys))
    return out


def main(argv: list[str]) -> int:
    quick = "--quick" in argv
    todo = specs(quick)
    designs = [emit_design(s, tb_random=1000, seed=7) for s in todo]
    t = time.perf_counter()
    with tempfile.TemporaryDirectory(prefix="adder_forge_pipe_") as tmp:
        verdicts = verify(designs, ["icarus", "verilator"], True, 4096, 7, workdir=Path(tmp))
    results = verdicts.outcomes
    if verdicts.stopped is not None:
        print(f"STOPPED {verdicts.stopped.name} {verdicts.stopped.checker}: {verdicts.stopped.error}", flush=True)
    seconds = time.perf_counter() - t
    rows, bad = [], 0
    by_name: dict[str, dict] = {}
    for r in results:
        by_name.setdefault(r.name, {})[r.checker] = r.ok
        bad += not r.ok
        if not r.ok:
            print(f"FAILED {r.name} {r.checker}: {r.detail}", flush=True)
    print(f"{'design':22} {'stages':>6} {'levels per stage':>18} {'registers':>9}  builtin icarus verilator formal")
    for d in designs:
        m = d.metrics
        checks = by_name.get(d.spec.name, {})
        row = {"name": d.spec.name, "stages": d.spec.pipeline.stages,
               "stage_levels": m["pipeline_stage_levels"], "registers": m["pipeline_registers"], **checks}
        rows.append(row)
        marks = "  ".join(("pass" if checks.get(c) else "FAIL").ljust(6) for c in
                          ("builtin", "icarus", "verilator", "formal"))
        print(f"{d.spec.name:22} {row['stages']:>6} {'/'.join(map(str, row['stage_levels'])):>18} "
              f"{row['registers']:>9}  {marks}")
    complete = all(len(by_name.get(d.spec.name, {})) == 4 for d in designs)
    print(f"{len(designs)} designs, {len(results)} checks, {bad} failed, {seconds:.0f} s")
    save("pipeline_matrix" + ("_quick" if quick else ""), {"rows": rows, "seconds": round(seconds, 1)})
    return 0 if bad == 0 and complete else 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
