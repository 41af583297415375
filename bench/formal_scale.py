"""Time `verify --formal` (adder_forge.checks.formal.prove) for every scheme at the given widths.

    .venv/bin/python bench/formal_scale.py            # 64 and 256 bits
    .venv/bin/python bench/formal_scale.py 64 128

Target (issue 5): every scheme at 64 bits well under a minute, at 256 bits in a few minutes. Exits 1 when
any proof fails: a correct design that does not prove is a wrong result, not a slow one.
"""

from __future__ import annotations

import sys

from common import cases, save

from adder_forge.emit.design import design
from adder_forge.checks.formal import prove
from adder_forge.spec.loader import make_spec


def main(widths: list[int]) -> int:
    rows = []
    for w in widths:
        for label, scheme, opts in cases(w):
            d = design(make_spec(f"f{w}", w, scheme, **opts), tb_random=0)
            p = prove(d.net, d.verilog)
            rows.append({"width": w, "case": label, "proved": p.ok, "seconds": round(p.seconds, 2)})
            print(f"{w:5}  {label:28} {'proved' if p.ok else 'FAILED':7} {p.seconds:8.2f} s", flush=True)
            if not p.ok:
                print(f"       {p.describe(w)}", flush=True)
    print("saved", save("formal_scale", {"rows": rows}))
    failed = [f"{r['width']} {r['case']}" for r in rows if not r["proved"]]
    if failed:
        print(f"FAILED: {len(failed)} of {len(rows)} proofs: " + ", ".join(failed), file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main([int(x) for x in sys.argv[1:]] or [64, 256]))
