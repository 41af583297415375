"""The self-checking testbench and its vector file, expected values by Python integer addition."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import __version__
from .vectors import Plan


@dataclass(frozen=True)
class Testbench:
    verilog: str
    vectors_hex: str
    count: int


def vector_lines(plan: Plan, carry_out: bool) -> tuple[list[str], int]:
    """One hex line a vector: {a, b, cin, cout, sum}; cout is 0 when the adder has no carry-out port."""
    w = plan.width
    digits = (3 * w + 2 + 3) // 4
    mask = (1 << (w + 1 if carry_out else w)) - 1
    lines: list[str] = []
    for vs in plan.chunks():
        if w <= 10:  # the packed line fits 32 bits: stay in numpy (exhaustive sets are large)
            a = vs.a[:, 0]
            b = vs.b[:, 0]
            c = vs.cin
            s = (a + b + c) & np.uint64(mask)  # reference: integer addition
            packed = (((a << np.uint64(w)) | b) << np.uint64(1) | c) << np.uint64(w + 1) | s
            lines.extend(f"{int(x):0{digits}x}" for x in packed.tolist())
        else:
            for a, b, c in vs.triples():
                s = (a + b + c) & mask  # reference: Python integer addition
                lines.append(f"{((((a << w) | b) << 1 | c) << (w + 1)) | s:0{digits}x}")
    return lines, len(lines)


def emit_testbench(name: str, width: int, carry_in: bool, carry_out: bool, plan: Plan) -> Testbench:
    from .templating import render

    lines, count = vector_lines(plan, carry_out)
    text = render("testbench.v.j2", name=name, width=width, count=count, carry_in=carry_in,
                  carry_out=carry_out, plan=plan.describe(), version=__version__,
                  vectors_file=f"{name}_vectors.hex", selection=[])
    return Testbench(text, "\n".join(lines) + "\n", count)
