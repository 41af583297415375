"""Flat (full) carry-lookahead: every carry straight from all lower g/p bits and the carry-in.

c_i = g_{i-1} | p_{i-1} g_{i-2} | ... | p_{i-1} ... p_1 g_0 | p_{i-1} ... p_0 c_in: i + 1 product terms of up
to i + 1 literals, each AND and the OR built as balanced trees of 2-input gates, with no sharing between
terms (common practice). Depth O(log n); the carry network has n(n+1)(n+2)/6 AND2 gates with a carry-in,
so widths are capped.
"""

from ..registry import scheme
from .common import balanced, finish, generate_propagate, start, sum_bits

MAX_LOOKAHEAD_WIDTH = 128  # 128 bits is already ~350k gates; wider flat lookahead is not a useful circuit


@scheme("lookahead", max_width=MAX_LOOKAHEAD_WIDTH,
        doc="flat carry-lookahead: every carry from all lower g/p and cin, no sharing; O(log n) depth, O(n^3) gates")
def lookahead(spec):
    f = start(spec)
    b = f.b
    g, p = generate_propagate(f)
    carries = [f.cin]
    for i in range(1, f.width + 1):
        terms = []
        for j in range(i - 1, -1, -1):  # g_j p_{j+1} ... p_{i-1}
            terms.append(balanced(b, b.AND, [g[j]] + p[j + 1:i], role="carry"))
        terms.append(balanced(b, b.AND, [f.cin] + p[0:i], role="carry"))
        carries.append(balanced(b, b.OR, terms, f"c{i}", "carry"))
    return finish(f, sum_bits(f, p, carries), carries[f.width])
