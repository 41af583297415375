"""Ripple-carry: one full adder a bit, the carry passed bit to bit (the smallest and slowest)."""

from ..spec.registry import scheme
from .common import finish, generate_propagate, start, sum_bits


@scheme("ripple", doc="ripple-carry: c[i+1] = g[i] | p[i] & c[i]; n carry levels")
def ripple(spec):
    f = start(spec)
    g, p = generate_propagate(f)
    carries = [f.cin]
    for i in range(f.width):
        carries.append(f.build.AO21(p[i], carries[i], g[i], f"c{i + 1}", "carry"))
    return finish(f, sum_bits(f, p, carries), carries[f.width], carry_top=carries[f.width - 1])
