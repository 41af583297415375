"""Time `verify --formal` (adder_forge.formal.prove) for every scheme at the given widths.

    .venv/bin/python bench/formal_scale.py            # 64 and 256 bits
    .venv/bin/python bench/formal_scale.py 64 128

Target (issue 5): every scheme at 64 bits well under a minute, at 256 bits in a few minutes.
"""

from __future__ import annotations

import sys

from common import cases, save

from adder_forge.artifacts import design
from adder_forge.formal import prove
from adder_forge.spec import make_spec


def main(widths: list[int]) -> None:
    rows = []
    for w in widths:
        for label, scheme, opts in cases(w):
            d = design(make_spec(f"f{w}", w, scheme, **opts), tb_random=0)
            p = prove(d.net, d.verilog)
            rows.append({"width": w, "case": label, "proved": p.ok, "seconds": round(p.seconds, 2),
                         "method": getattr(p, "method", "sat")})
            print(f"{w:5}  {label:28} {'proved' if p.ok else 'FAILED':7} {p.seconds:8.2f} s", flush=True)
    print("saved", save("formal_scale", {"rows": rows}))


if __name__ == "__main__":
    main([int(x) for x in sys.argv[1:]] or [64, 256])
