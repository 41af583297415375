"""Pieces the block carry schemes share: a ripple chain over one block, a block computed for both
values of its carry-in, and a block's group generate/propagate.

Bits are indexed over the whole adder; ``g``, ``p`` are the bitwise generate and XOR propagate from
``common.generate_propagate``.
"""

from __future__ import annotations

from dataclasses import dataclass

from .blocksizes import resolve, block_bounds, wide_note
from ..ir.builder import Builder
from ..ir.network import META_BLOCK_SIZES, META_NOTE
from ..spec.registry import value_text
from .common import Frame, generate_propagate, start


def begin(spec, auto_rule=None) -> tuple[Frame, list[tuple[int, int]], list[int], list[int]]:
    """Ports, the blocks' (lo, hi) bit ranges (recorded in the meta as ``block_sizes``), and bitwise g, p."""
    f = start(spec)
    sizes = resolve(spec.opt("block"), f.width, auto_rule)
    f.build.meta.append((META_BLOCK_SIZES, value_text(sizes)))
    f.build.meta += [(META_NOTE, n) for n in [wide_note(spec.opt("block"), f.width)] if n]
    g, p = generate_propagate(f)
    return f, block_bounds(sizes), g, p


def ripple_chain(b: Builder, g, p, lo: int, hi: int, cin: int, stem: str = "c") -> list[int]:
    """Carries into bits lo .. hi (the last is the block's carry out), rippled from ``cin``."""
    c = [cin]
    for i in range(lo, hi):
        c.append(b.AO21(p[i], c[-1], g[i], f"{stem}{i + 1}", "carry"))
    return c


class Inv:
    """The complement of a node, not built: a select between x and ~x is an XOR with the select."""

    __slots__ = ("x",)

    def __init__(self, x: int):
        self.x = x


def select(b: Builder, s: int, d0, d1, name: str, role: str = "select") -> int:
    """s ? d1 : d0, where d1 may be Inv(d0)."""
    if isinstance(d1, Inv):
        assert d1.x == d0
        return b.XOR(s, d0, name, role)
    return b.MUX(s, d0, d1, name, role)


def select_carry(b: Builder, s: int, c0: int, c1: int, name: str, role: str = "select") -> int:
    """s ? c1 : c0 for carries computed under carry-in 0 and 1, where c0 implies c1 (a carry is monotone
    in the carry-in), so the select is c0 | s & c1: one AO21 instead of a MUX2."""
    return b.AO21(s, c1, c0, name, role)


@dataclass
class Conditional:
    """A block's sums and carry out for carry-in 0 (``s0``, ``c0``) and carry-in 1 (``s1``, ``c1``)."""

    lo: int
    hi: int
    s0: list
    s1: list
    c0: int
    c1: int


def conditional(b: Builder, a, bb, g, p, lo: int, hi: int) -> Conditional:
    """Two ripple chains over bits lo .. hi - 1, one assuming carry-in 0 and one carry-in 1.

    The lowest bit needs no gates for its sums (p and ~p), and its carries are g and a | b.
    """
    t = b.OR(a[lo], bb[lo], f"t{lo}", "pg")
    c0 = [g[lo]]
    c1 = [t]
    for i in range(lo + 1, hi):
        c0.append(b.AO21(p[i], c0[-1], g[i], f"c0_{i + 1}", "carry"))
        c1.append(b.AO21(p[i], c1[-1], g[i], f"c1_{i + 1}", "carry"))
    s0 = [p[lo]] + [b.XOR(p[i], c0[i - lo - 1], f"s0_{i}", "sum") for i in range(lo + 1, hi)]
    s1 = [Inv(p[lo])] + [b.XOR(p[i], c1[i - lo - 1], f"s1_{i}", "sum") for i in range(lo + 1, hi)]
    return Conditional(lo, hi, s0, s1, c0[-1], c1[-1])


def gp_tree(b: Builder, pairs: list[tuple[int, int]], name: str, role: str) -> tuple[int, int]:
    """Combine (generate, propagate) pairs, least significant first, as a balanced tree."""
    level = list(pairs)
    while len(level) > 1:
        nxt = []
        for k in range(0, len(level) - 1, 2):
            (gl, pl), (gh, ph) = level[k], level[k + 1]
            nxt.append((b.AO21(ph, gl, gh, "", role), b.AND(ph, pl, "", role)))
        if len(level) % 2:
            nxt.append(level[-1])
        level = nxt
    G, P = level[0]
    return b.name_node(G, f"{name}g", role), b.name_node(P, f"{name}p", role)
