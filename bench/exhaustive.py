"""Exhaustive built-in checks: every 12-bit scheme with carry-in (2^25 vectors, the default limit) and
16-bit adders with carry-in (2^33 vectors, `verify --exhaustive`), with a can-fail case at each size.

    .venv/bin/python bench/exhaustive.py           # 12 bits: every scheme; 16 bits: three schemes + can-fail
    .venv/bin/python bench/exhaustive.py --all     # 16 bits: every scheme

Targets (issue 8): a 16-bit adder with carry-in, 2^33 vectors, under 60 s on this two-core machine (two
worker threads); memory that does not grow with the vector count (peak RSS printed).

Exit status: 0 all results right and targets met; 1 a result is wrong (a correct adder failed, a broken
one passed, or the first failing vector is not the one planted); 2 results right but a target missed.
"""

from __future__ import annotations

import resource
import sys
import time
from dataclasses import replace

from common import cases, save

from adder_forge.checks.builtin import check
from adder_forge.ir.network import Node, Port
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from adder_forge.checks.verify import BUILTIN_EXHAUSTIVE_LIMIT, FORCED_EXHAUSTIVE_LIMIT
from adder_forge.emit.vectors import make_plan

TARGET_16 = 60.0  # seconds for 2^33 vectors
QUICK_16 = ("prefix:kogge-stone", "ripple", "conditional-sum")


def flip_minterm(net, a0: int, b0: int, c0: int, bit: int):
    """``net`` with output bit ``bit`` (``width`` = cout) inverted at the one input (a0, b0, c0): a mutant
    that only that input exposes, for showing that the exhaustive check reads every vector."""
    nodes = list(net.nodes)

    def add(op, *args):
        nodes.append(Node(op, tuple(args), f"mt{len(nodes)}", "mutant"))
        return len(nodes) - 1

    literals = []
    for port, value in (("a", a0), ("b", b0), ("cin", c0)):
        p = net.port(port)
        for j, node in enumerate(p.bits if p is not None else ()):
            literals.append(node if (value >> j) & 1 else add("NOT", node))
    hit = literals[0]
    for lit in literals[1:]:
        hit = add("AND2", hit, lit)
    outs = {p.name: list(p.bits) for p in net.outputs}
    port, j = ("sum", bit) if bit < net.iface.width else ("cout", 0)
    outs[port][j] = add("XOR2", outs[port][j], hit)
    return replace(net, nodes=tuple(nodes),
                   outputs=tuple(Port(p.name, tuple(outs[p.name]), p.scalar) for p in net.outputs))


def run(label: str, net, width: int, limit: int, planted=None) -> dict:
    plan = make_plan(width, True, limit, 0, 1)
    t = time.perf_counter()
    r = check(net, plan)
    seconds = time.perf_counter() - t
    right = plan.exhaustive and r.vectors == 1 << (2 * width + 1)
    if planted is None:
        right = right and r.ok
        verdict = "pass" if r.ok else f"FAIL ({r.failed} failed, first {r.first.describe(width)})"
    else:
        a0, b0, c0, bit = planted
        right = right and not r.ok and r.failed == 1 and (r.first.a, r.first.b, r.first.cin) == (a0, b0, c0) \
            and r.first.expected == a0 + b0 + c0 and r.first.got == (a0 + b0 + c0) ^ (1 << bit)
        verdict = (f"caught: {r.failed} failed, first {r.first.describe(width)}" if not r.ok
                   else "MISSED the planted minterm")
    rate = r.vectors / seconds
    print(f"{width:3} bits  {label:28} {r.vectors:>11,} vectors {seconds:7.2f} s {rate / 1e6:8.0f} M/s  {verdict}"
          f"{'' if right else '  <- WRONG'}", flush=True)
    return {"width": width, "case": label, "vectors": r.vectors, "seconds": round(seconds, 3),
            "vectors_per_second": round(rate), "right": right, "verdict": verdict}


def main(every16: bool) -> int:
    print("built-in exhaustive check, two worker threads (numpy releases the GIL)")
    rows = []
    for label, scheme, opts in cases(12):
        rows.append(run(label, elaborate(make_spec("x12", 12, scheme, carry_in=True, **opts)), 12,
                        BUILTIN_EXHAUSTIVE_LIMIT))
    ripple12 = elaborate(make_spec("x12", 12, "ripple", carry_in=True))
    rows.append(run("ripple, one minterm wrong", flip_minterm(ripple12, 0xA5C, 0x3F1, 1, 12), 12,
                    BUILTIN_EXHAUSTIVE_LIMIT, (0xA5C, 0x3F1, 1, 12)))
    for label, scheme, opts in cases(16):
        if every16 or label in QUICK_16:
            rows.append(run(label, elaborate(make_spec("x16", 16, scheme, carry_in=True, **opts)), 16,
                            FORCED_EXHAUSTIVE_LIMIT))
    ks16 = elaborate(make_spec("x16", 16, "prefix", prefix="kogge-stone", carry_in=True))
    rows.append(run("kogge-stone, one minterm wrong", flip_minterm(ks16, 0xFFFE, 0x8001, 1, 9), 16,
                    FORCED_EXHAUSTIVE_LIMIT, (0xFFFE, 0x8001, 1, 9)))
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    slowest16 = max(r["seconds"] for r in rows if r["width"] == 16)
    wrong = [r for r in rows if not r["right"]]
    verdict = {"all_right": not wrong, "slowest_16bit_seconds": slowest16, "target_16bit": f"< {TARGET_16:.0f} s",
               "peak_rss_mb": round(peak_mb)}
    print(f"slowest 2^33 check {slowest16:.1f} s (target < {TARGET_16:.0f} s); peak RSS {peak_mb:.0f} MB; "
          f"{len(rows) - len(wrong)} right, {len(wrong)} wrong")
    print("saved", save("exhaustive", {"rows": rows, "verdict": verdict}))
    if wrong:
        return 1
    return 2 if slowest16 >= TARGET_16 else 0


if __name__ == "__main__":
    sys.exit(main("--all" in sys.argv[1:]))
