"""Carry-skip (carry-bypass): ripple blocks, each with a multiplexer that passes the block's carry-in
straight to its carry out when every bit of the block propagates.

When the block propagate P = p_lo & ... & p_hi-1 is 1 the rippled carry out equals the carry-in anyway, so
the multiplexer changes no value, only timing: the structural path carry-in -> ripple -> carry out can
never be sensitized. Those are the adder's false paths; ``netlist_levels`` counts them, the skip-aware
``netlist_levels_skip_aware`` (skip_timing.py) does not. Each bypass multiplexer has role ``skip`` and args
(P, rippled carry out, block carry-in), which is what the timing pass reads.
"""

from dataclasses import replace

from .blocksizes import AUTO, block_option, validate_block, skip_auto
from ..ir.network import META_NOTE
from ..spec.registry import scheme
from .blockparts import begin, ripple_chain
from .common import balanced, finish, sum_bits

FALSE_PATHS = ("false paths: in every bypassed block, carry-in -> ripple -> carry out can never be sensitized "
               "(the bypass passes the carry-in whenever the ripple would); netlist_levels counts those paths, "
               "netlist_levels_skip_aware is the skip-aware delay")


BLOCK = block_option(AUTO, "bits per skip block: k, a list from bit 0 up, or auto (variable sizes minimising "
                     "the unit-delay estimate)", True, "carry-skip")


@scheme("carry-skip", options=(BLOCK,), validate=validate_block,
        doc="carry-skip: ripple blocks with a bypass multiplexer on the block propagate; false paths, see "
            "netlist_levels_skip_aware")
def carry_skip(spec):
    f, blocks, g, p = begin(spec, skip_auto)
    b = f.build
    carries = []
    carry = f.cin
    for j, (lo, hi) in enumerate(blocks):
        c = ripple_chain(b, g, p, lo, hi, carry)
        carries += c[:-1]
        if b.is_const(carry) is not None:
            carry = c[-1]  # a constant carry-in has nothing to bypass
            continue
        bp = balanced(b, b.AND, p[lo:hi], f"bp{j}", "block_pg")
        carry = b.MUX(bp, c[-1], carry, f"skip{j}", "skip")
    net = finish(f, sum_bits(f, p, carries), carry)
    if any(n.role == "skip" for n in net.nodes):  # a bypass that reaches no output leaves no false path
        net = replace(net, meta=net.meta + ((META_NOTE, FALSE_PATHS),))
    return net
