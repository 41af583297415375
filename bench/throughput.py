"""Built-in verification speed: a 64-bit Kogge-Stone checked by the bit-parallel evaluator and by Verilator
running the emitted testbench on the same vectors; and the 12-bit exhaustive check.

    .venv/bin/python bench/throughput.py              # 1,000,000 random vectors
    .venv/bin/python bench/throughput.py 4000000

Targets (issue 5): the built-in evaluator at least 10x Verilator's vector rate; 12-bit exhaustive (2^25
vectors with carry-in) under 5 s. Verilator's rate counts its run only (reading the vector file with
$readmemh, simulating, comparing), not its build; the built-in rate counts drawing the vectors, the
reference sums and the comparison. The two are not like for like in threads: the built-in check runs on
two worker threads, the Verilator model on one (its default build), so the ratio is per process, not
per core.

Exit status: 0 every result right and every target met; 1 a result is wrong (a correct adder failed, or
the two checks counted different vectors); 2 results right but a target missed.
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

from common import best_of, save

from adder_forge.emit.design import design
from adder_forge.checks.builtin import check, default_workers
from adder_forge.checks.outcome import outcomes
from adder_forge.checks.simulators import Verilator
from adder_forge.spec.loader import make_spec
from adder_forge.base.tools import run
from adder_forge.emit.vectors import make_plan

SEED = 1


def verilator_rate(d, repeat: int = 3) -> dict:
    with tempfile.TemporaryDirectory(prefix="adder_forge_bench_") as tmp:
        wd = Path(tmp)
        sim = Verilator(timeout=3600, quick=False)  # Verilator at its own optimisation: a fair rate
        steps = sim.steps(sim.stage([d], wd))
        (build,), (execute,) = steps.build, [r.command for r in steps.runs]
        b = run(build)
        if not b.ok:
            print("verilator build failed:\n" + b.tail(15))
            raise SystemExit(1)
        best, res = float("inf"), None
        for _ in range(repeat):
            r = run(execute)
            if r.seconds < best:
                best, res = r.seconds, r
        o = outcomes([d], "verilator", res)[0]
    n = o.passed + o.failed
    return {"ok": o.ok, "vectors": n, "build_seconds": round(b.seconds, 2), "run_seconds": round(best, 3),
            "vectors_per_second": round(n / best), "threads": 1}


def builtin_rate(d, random_count: int, repeat: int = 3) -> dict:
    plan = make_plan(d.spec.width, d.spec.carry_in, 0, random_count, SEED)
    seconds, r = best_of(lambda: check(d.net, plan), repeat)
    return {"ok": r.ok, "vectors": r.vectors, "seconds": round(seconds, 3),
            "vectors_per_second": round(r.vectors / seconds), "threads": default_workers()}


def exhaustive12(repeat: int = 3) -> list[dict]:
    rows = []
    for label, scheme, opts in (("prefix:kogge-stone", "prefix", {"prefix": "kogge-stone"}), ("ripple", "ripple", {})):
        spec = make_spec("x12", 12, scheme, **opts)
        d = design(spec, tb_random=0, tb_exhaustive_limit=0)
        seconds, r = best_of(lambda: check(d.net, make_plan(12, True, 1 << 26, 0, 1)), repeat)
        rows.append({"case": label, "ok": r.ok, "vectors": r.vectors, "seconds": round(seconds, 3)})
        print(f"12-bit exhaustive, {label}: {r.vectors} vectors in {seconds:.2f} s ({'pass' if r.ok else 'FAIL'})",
              flush=True)
    return rows


def main(random_count: int) -> int:
    spec = make_spec("ks64", 64, "prefix", prefix="kogge-stone")
    t = time.perf_counter()
    d = design(spec, tb_random=random_count, seed=SEED, tb_max_bytes=1 << 26)  # the whole plan: 50 MB
    print(f"64-bit Kogge-Stone, {d.testbench.count} vectors ({d.plan}); testbench written in "
          f"{time.perf_counter() - t:.1f} s", flush=True)
    vl = verilator_rate(d)
    print(f"verilator: build {vl['build_seconds']} s, run {vl['run_seconds']} s, {vl['vectors_per_second']:,} vectors/s "
          f"on {vl['threads']} thread ({'pass' if vl['ok'] else 'FAIL'})", flush=True)
    bi = builtin_rate(d, random_count)
    print(f"built-in:  {bi['seconds']} s, {bi['vectors_per_second']:,} vectors/s on {bi['threads']} threads "
          f"({'pass' if bi['ok'] else 'FAIL'})")
    wrong = []
    if not (vl["ok"] and bi["ok"]):
        wrong.append("a correct adder failed a check")
    if bi["vectors"] != vl["vectors"]:
        wrong.append(f"vector counts differ: built-in {bi['vectors']}, verilator {vl['vectors']}")
    ratio = bi["vectors_per_second"] / vl["vectors_per_second"]
    print(f"built-in ({bi['threads']} threads) / verilator (1 thread): {ratio:.1f}x (target >= 10x)")
    ex = exhaustive12()
    if not all(r["ok"] and r["vectors"] == 1 << 25 for r in ex):
        wrong.append("a 12-bit exhaustive check failed or did not count 2^25 vectors")
    verdict = {"builtin_over_verilator": round(ratio, 1), "target_ratio": ">= 10",
               "threads": {"builtin": bi["threads"], "verilator": vl["threads"]},
               "exhaustive12_seconds": max(r["seconds"] for r in ex), "target_exhaustive12": "< 5 s",
               "wrong": wrong}
    print(verdict)
    print("saved", save("throughput", {"verilator": vl, "builtin": bi, "exhaustive12": ex, "verdict": verdict}))
    if wrong:
        print("WRONG: " + "; ".join(wrong))
        return 1
    missed = ratio < 10 or verdict["exhaustive12_seconds"] >= 5
    if missed:
        print("target missed")
    return 2 if missed else 0


if __name__ == "__main__":
    sys.exit(main(int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000))
