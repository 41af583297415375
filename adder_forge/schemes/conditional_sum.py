"""Conditional-sum (Sklansky 1960, "Conditional-sum addition logic"): every group of bits carries its
sums and carry out for both values of its carry-in; adjacent groups merge level by level, the lower
group's two carries selecting the upper group's two results, until one group holds the whole adder.

The leaves are single bits by default (sum p or ~p, carry g or a | b: no gates beyond those); ``block``
makes them k-bit conditional ripple blocks instead, which trades multiplexer levels for ripple. The group
containing bit 0 is computed for the real carry-in only, so the last level needs no final select.
ceil(log2(number of leaves)) merge levels; a merge's select line drives every bit of the upper group.
"""

from __future__ import annotations

from dataclasses import dataclass

from .blocksizes import block_option, validate_block
from ..spec.registry import scheme
from .blockparts import begin, conditional, ripple_chain, select, select_carry
from .common import finish


@dataclass
class Group:
    lo: int
    hi: int
    sums: tuple[list, ...]  # one list for the real carry-in, or (carry-in 0, carry-in 1)
    carries: tuple[int, ...]  # carry out, the same way

    @property
    def resolved(self) -> bool:
        return len(self.carries) == 1


BLOCK = block_option(1, "bits per leaf group: 1 (Sklansky's form), k, or a list from bit 0 up", False,
                     "conditional-sum")


@scheme("conditional-sum", options=(BLOCK,), validate=validate_block,
        doc="conditional-sum (Sklansky): log2 n levels of multiplexers merging conditional sums")
def conditional_sum(spec):
    f, blocks, g, p = begin(spec)
    b = f.build
    groups = []
    for lo, hi in blocks:
        if lo == 0:
            c = ripple_chain(b, g, p, lo, hi, f.cin)
            groups.append(Group(lo, hi, ([b.XOR(p[i], c[i], f"s{i}", "sum") for i in range(lo, hi)],), (c[-1],)))
        else:
            cd = conditional(b, f.a, f.b, g, p, lo, hi)
            groups.append(Group(lo, hi, (cd.s0, cd.s1), (cd.c0, cd.c1)))
    level = 0
    while len(groups) > 1:
        level += 1
        nxt = [_merge(b, groups[k], groups[k + 1], level) for k in range(0, len(groups) - 1, 2)]
        if len(groups) % 2:
            nxt.append(groups[-1])
        groups = nxt
    top = groups[0]
    return finish(f, top.sums[0], top.carries[0])


def _merge(b, low: Group, up: Group, level: int) -> Group:
    """The upper group's results, selected by each of the lower group's carries."""
    sums, carries = [], []
    for x, c in enumerate(low.carries):
        tag = "" if low.resolved else f"_{x}"
        sel = [select(b, c, up.sums[0][i], up.sums[1][i], f"s{up.lo + i}{tag}_l{level}")
               for i in range(up.hi - up.lo)]
        sums.append(low.sums[x] + sel)
        carries.append(select_carry(b, c, up.carries[0], up.carries[1], f"c{up.hi}{tag}_l{level}"))
    return Group(low.lo, up.hi, tuple(sums), tuple(carries))
