"""Pieces the FPGA carry-chain hybrids share: k-bit ``+`` blocks (ADD cells, which FPGA synthesis maps onto
the device's dedicated carry chain), each block computed for carry-in 0 and 1, the ``block`` and ``target``
keys, and the timing model the automatic block sizes minimise.

A block j >= 1 is two chains over the same bits: ADD(a, b, 0) gives the sums s0 and the block generate G
(its carry out), ADD(a, b, 1) gives the sums s1 and the block transmit T = G | P (its carry out). The
carry operator works on (G, T) exactly as on (G, P): G_hi | T_hi & G_lo = G_hi | P_hi & G_lo because G_hi
implies T_hi, and where the group generate is 0 the AND of transmits agrees with the AND of propagates
(the same argument that lets carry-lookahead use t = a | b; common practice). So a prefix network or a
select chain over the blocks' (G, T) gives the carry into every block, and each block's sums are
c ? s1 : s0. Block 0 has a single chain from the adder's own carry-in: its carry out is already the
carry into block 1.

The timing model (``Family``): a signal entering a carry chain from the fabric pays ``entry``, each bit
of chain ``bit``, each LUT level ``lut`` (a LUT and the routing to the next one), all in ns. It only
ranks block sizes; the Fmax figures come from nextpnr (synth/flows.py, docs/fpga.md).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .blocksizes import AUTO, block_option, block_bounds, resolve, wide_note
from ..ir.network import META_BLOCK_SIZES, META_NOTE
from ..spec.registry import choice_option, value_text
from .common import Frame, start


@dataclass(frozen=True)
class Family:
    name: str
    bit: float  # ns per bit of carry chain
    lut: float  # ns per LUT level, routing to the next LUT included
    entry: float  # ns from a LUT output into a chain's carry-in, or from a chain's bit into a LUT
    source: str


# Measured here (docs/fpga.md, "The timing model"): ``bit`` is the slope of the `+` period between
# registers over width (iCE40 UP5K: 13.9 ns at 16 bits to 103.7 ns at 256, 0.37 ns a bit; ECP5-25k:
# 4.77 ns at 64 bits to 20.7 ns at 512, 0.036 ns a bit). iCE40 ``lut``: nextpnr's critical paths of 16-bit
# LUT adders, 1.2 ns of LUT and 1.8 ns of routing a level; ``entry`` and the ECP5 ``lut`` are fitted to the
# first hybrids measured (32-bit chain-select on iCE40, 64-bit on ECP5), so they are rough.
FAMILIES: dict[str, Family] = {
    "ice40": Family("ice40", 0.37, 3.0, 2.0, "measured here: iCE40 UP5K sg48, nextpnr-ice40 0.11.1, seed 1"),
    "ecp5": Family("ecp5", 0.036, 1.5, 1.5, "measured here: ECP5 LFE5U-25F CABGA256, nextpnr-ecp5 0.11.1, seed 1"),
}

TARGET = choice_option("target", sorted(FAMILIES), "ice40",
                       "the FPGA family whose carry chain 'block: auto' sizes the blocks for")


def block_key(scheme: str):
    return block_option(AUTO, "bits per carry-chain block: k, a list from bit 0 up, or auto (sizes chosen for "
                              "'target')", True, scheme)


@dataclass
class Chains:
    """One block's sums and carry out for carry-in 0 (``s0``, ``g``) and 1 (``s1``, ``t``)."""

    lo: int
    hi: int
    s0: list[int]
    s1: list[int]
    g: int
    t: int


def first_block(f: Frame, hi: int) -> tuple[list[int], int]:
    """Block 0: one chain from the adder's carry-in; its sums and its carry out (the carry into block 1)."""
    bits = f.build.ADD(f.a[:hi], f.b[:hi], f.cin, "x0", "carry")
    return bits[:hi], bits[hi]


def both_chains(f: Frame, j: int, lo: int, hi: int) -> Chains:
    """Block j over bits lo .. hi - 1 summed by two chains, for carry-in 0 and 1."""
    b = f.build
    z = b.ADD(f.a[lo:hi], f.b[lo:hi], b.const(0), f"x{j}_0", "carry")
    o = b.ADD(f.a[lo:hi], f.b[lo:hi], b.const(1), f"x{j}_1", "carry")
    k = hi - lo
    return Chains(lo, hi, z[:k], o[:k], z[k], o[k])


def select_sums(f: Frame, c: int, blk: Chains) -> list[int]:
    """The block's sums picked by the carry into it: c ? s1 : s0, one multiplexer a bit."""
    return [f.build.MUX(c, blk.s0[i], blk.s1[i], f"s{blk.lo + i}", "select") for i in range(blk.hi - blk.lo)]


def begin(spec, auto_rule) -> tuple[Frame, list[tuple[int, int]]]:
    """Ports and the blocks' (lo, hi) bit ranges (recorded in the meta as ``block_sizes``)."""
    f = start(spec)
    sizes = resolve(spec.opt("block"), f.width, lambda n: auto_rule(spec, n))
    f.build.meta.append((META_BLOCK_SIZES, value_text(sizes)))
    f.build.meta += [(META_NOTE, n) for n in [wide_note(spec.opt("block"), f.width)] if n]
    return f, block_bounds(sizes)


def lay_out(spec, auto_rule) -> tuple[Frame, list[int], int, list[Chains]]:
    """Ports, block 0's sums and carry out, and the two chains of every other block (none for one block)."""
    f, blocks = begin(spec, auto_rule)
    sums, carry = first_block(f, blocks[0][1])
    return f, sums, carry, [both_chains(f, j, lo, hi) for j, (lo, hi) in enumerate(blocks[1:], start=1)]


# -- automatic sizes ---------------------------------------------------------------------------------------
def uniform(width: int, k: int) -> tuple[int, ...]:
    return resolve(k, width)


def best_uniform(width: int, cost) -> tuple[int, ...]:
    """The uniform block size with the least modelled delay ``cost(sizes)``, ties to the larger block (fewer
    chains and less select logic)."""
    best = None
    for k in range(1, width + 1):
        sizes = uniform(width, k)
        key = (round(cost(sizes), 6), -k)
        if best is None or key < best[0]:
            best = (key, sizes)
    return best[1]


def prefix_delay(fam: Family, sizes, levels: int) -> float:
    """Modelled delay of chain-prefix: the slowest block chain, ``levels`` prefix LUT levels, the sum select."""
    chains = max(sizes) * fam.bit + fam.entry
    if len(sizes) == 1:
        return chains
    return chains + levels * fam.lut + fam.lut


def select_delay(fam: Family, sizes) -> float:
    """Modelled delay of chain-select with a select chain of LUTs: c_j+1 = G_j | T_j & c_j, one LUT a block."""
    c = sizes[0] * fam.bit + fam.entry
    done = c
    for k in sizes[1:]:
        chains = k * fam.bit + fam.entry
        done = max(done, max(c, chains) + fam.lut)  # the block's sum multiplexers
        c = max(c, chains) + fam.lut
    return max(done, c)


def select_auto(fam: Family, width: int) -> tuple[int, ...]:
    """Increasing blocks for chain-select (the idea of Tyagi's and the textbooks' variable carry-select: each
    block as long as it can be without its chains finishing after the carry that selects it; common
    practice): block j + 1 gets the longest chain ready by the time the select carry reaches it, so sizes
    grow by about lut / bit bits a block. The first size is the one with the least modelled delay, ties to
    the fewest blocks."""
    best = None
    for s in range(1, width + 1):
        sizes, c = [s], s * fam.bit + fam.entry
        while sum(sizes) < width:
            k = max(1, math.floor((c - fam.entry) / fam.bit + 1e-9))
            k = min(k, width - sum(sizes))
            sizes.append(k)
            c = max(c, k * fam.bit + fam.entry) + fam.lut
        key = (round(select_delay(fam, sizes), 6), len(sizes))
        if best is None or key < best[0]:
            best = (key, tuple(sizes))
        if len(sizes) == 1:
            break
    return best[1]


def two_level_delay(fam: Family, sizes) -> float:
    """Modelled delay of chain-select with a second chain over the blocks: the block chains, into the
    second chain (one bit a block after the first), the XOR that recovers each block's carry, the select."""
    first = max(sizes) * fam.bit + fam.entry
    if len(sizes) == 1:
        return first
    return first + fam.entry + (len(sizes) - 1) * fam.bit + 2 * fam.lut

