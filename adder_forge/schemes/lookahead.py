"""Flat (full) carry-lookahead: every carry straight from all lower g/p bits and the carry-in.

c_i = g_{i-1} | p_{i-1} g_{i-2} | ... | p_{i-1} ... p_1 g_0 | p_{i-1} ... p_0 c_in: i + 1 product terms of up
to i + 1 literals, each AND and the OR built as balanced trees of 2-input gates, with no sharing between
terms (common practice). Depth O(log n); the carry network has n(n+1)(n+2)/6 AND2 gates with a carry-in,
so widths are capped.

``ling: true`` builds Ling's pseudo-carries instead (ling.py): H_i = g_i | g_{i-1} | t_{i-1} g_{i-2} | ... |
t_{i-1} ... t_0 c_in, one literal fewer in every product, then c_{i+1} = t_i & H_i.
"""

from ..spec.registry import scheme
from .common import balanced, finish, generate_propagate, start, sum_bits
from .ling import LING, carry, transmits

MAX_LOOKAHEAD_WIDTH = 128  # 128 bits is already ~350k gates; wider flat lookahead is not a useful circuit


@scheme("lookahead", max_width=MAX_LOOKAHEAD_WIDTH, options=(LING,),
        doc="flat carry-lookahead: every carry from all lower g/p and cin, no sharing; O(log n) depth, O(n^3) gates")
def lookahead(spec):
    f = start(spec)
    b = f.build
    g, p = generate_propagate(f)
    if spec.opt("ling"):
        t = transmits(f)
        h = [balanced(b, b.OR, [g[i]] + _products(b, g, t, f.cin, i), f"h{i}", "carry") for i in range(f.width)]
        carries = [f.cin] + [carry(b, t, h[i], i) for i in range(f.width)]
    else:
        carries = [f.cin] + [balanced(b, b.OR, _products(b, g, p, f.cin, i), f"c{i}", "carry")
                             for i in range(1, f.width + 1)]
    return finish(f, sum_bits(f, p, carries), carries[f.width], carry_top=carries[f.width - 1])


def _products(b, g, q, cin: int, i: int) -> list[int]:
    """The products of the carry into bit i with propagate q: g_j q_j+1 .. q_i-1 for j = i-1 .. 0, and
    q_0 .. q_i-1 cin. With q = p they make c_i; with q = t and g_i beside them, Ling's H_i."""
    terms = [balanced(b, b.AND, [g[j]] + q[j + 1:i], role="carry") for j in range(i - 1, -1, -1)]
    return terms + [balanced(b, b.AND, [cin] + q[0:i], role="carry")]
