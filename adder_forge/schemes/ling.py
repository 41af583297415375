"""Ling carries (Ling 1981, "High-speed binary adder", IBM J. Res. Dev.): the ``ling`` option's pieces.

With g_i = a_i & b_i and the transmit t_i = a_i | b_i, the pseudo-carry H_i = c_i+1 | c_i satisfies
H_i = g_i | t_i-1 & H_i-1 (H_-1 = c_in) and gives back the carry as c_i+1 = t_i & H_i. Expanded,
H_i = g_i | g_i-1 | t_i-1 g_i-2 | ... | t_i-1 .. t_1 g_0 | t_i-1 .. t_0 c_in: every product has one literal
fewer than the matching product of c_i+1, at the price of the t_i & H_i gate.
"""

from __future__ import annotations

from ..spec.registry import bool_option

LING = bool_option("ling", False, "Ling pseudo-carries H_i = c_i+1 | c_i in the carry network; c_i+1 = t_i & H_i")


def transmits(f) -> list[int]:
    """t_i = a_i | b_i for every bit of the frame."""
    return [f.build.OR(f.a[i], f.b[i], f"t{i}", "pg") for i in range(f.width)]


def carry(b, t: list[int], h: int, i: int) -> int:
    """c_i+1 = t_i & H_i."""
    return b.AND(t[i], h, f"c{i + 1}", "carry")
