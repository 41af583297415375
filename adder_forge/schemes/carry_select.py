"""Carry-select: every block but the first computes its sums and carry out for carry-in 0 and for
carry-in 1 at once; the real carry into the block picks one.

The first block ripples from the adder's carry-in. The lowest bit of a conditional block is p or ~p, so
its select is an XOR with the block carry-in; the other bits use a MUX2. The carry chain between blocks
is c0 | c_in & c1 (one AO21 a block, role ``select``), valid because a block's carry out under carry-in
0 implies the one under carry-in 1.
"""

from .blocksizes import AUTO, block_option, validate_block, select_auto
from ..spec.registry import scheme
from .blockparts import begin, conditional, ripple_chain, select, select_carry
from .common import finish


BLOCK = block_option(AUTO, "bits per block: k, a list from bit 0 up, or auto (increasing sizes s, s+1, s+2, ...)",
                     True, "carry-select")


@scheme("carry-select", options=(BLOCK,), validate=validate_block,
        doc="carry-select: blocks summed for carry-in 0 and 1, a multiplexer per bit picks")
def carry_select(spec):
    f, blocks, g, p = begin(spec, select_auto)
    b = f.build
    lo, hi = blocks[0]
    c = ripple_chain(b, g, p, lo, hi, f.cin)
    sums = [b.XOR(p[i], c[i - lo], f"s{i}", "sum") for i in range(lo, hi)]
    carry = c[-1]
    for j, (lo, hi) in enumerate(blocks[1:], start=1):
        cond = conditional(b, f.a, f.b, g, p, lo, hi)
        sums += [select(b, carry, cond.s0[i - lo], cond.s1[i - lo], f"s{i}") for i in range(lo, hi)]
        carry = select_carry(b, carry, cond.c0, cond.c1, f"c{hi}")
    return finish(f, sums, carry)
