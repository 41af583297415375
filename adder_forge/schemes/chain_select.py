"""chain-select: carry-select over carry-chain blocks.

Every block but the first is summed by two chains, for carry-in 0 and 1 (chain_blocks.py); the carry into
each block selects its sums. The block carries come from one of two joins (``join:``):

- ``lut``: a select chain in the fabric, c_j+1 = G_j | T_j & c_j (one AO21, a LUT, a block), valid because
  G_j implies T_j. ``block: auto`` then grows the blocks by about one LUT delay's worth of chain bits a
  block (``chain_blocks.select_auto``).
- ``chain``: a second level of carry chain: one ADD over the blocks' generates and transmits, with block
  0's carry out as its carry-in. Its carry into bit i is majority(G, T, c) = G | T & c, the carry into
  block i + 1; the chain gives its sum bits, so each block carry is recovered as sum ^ G ^ T. The lowest
  bit's sum is not read (the carry into block 1 is block 0's own carry out).
"""

from __future__ import annotations

from . import chain_blocks as cb
from .blocksizes import validate_block
from ..spec.registry import choice_option, scheme
from .common import finish

JOIN = choice_option("join", ("lut", "chain"), "lut",
                     "how the block carries are joined: lut (a select chain of LUTs) or chain (a second carry chain)")


def auto(spec, width: int) -> tuple[int, ...]:
    fam = cb.FAMILIES[spec.opt("target")]
    if spec.opt("join") == "chain":
        return cb.best_uniform(width, lambda sizes: cb.two_level_delay(fam, sizes))
    return cb.select_auto(fam, width)


@scheme("chain-select", options=(cb.block_key("chain-select"), JOIN, cb.TARGET), validate=validate_block,
        doc="FPGA hybrid: carry-chain blocks for carry-in 0 and 1, selected by the block carries (a LUT select "
            "chain or a second carry chain)")
def chain_select(spec):
    f, sums, carry, chains = cb.lay_out(spec, auto)
    if not chains:
        return finish(f, sums, carry)
    b = f.build
    if spec.opt("join") == "lut":
        for ch in chains:
            sums += cb.select_sums(f, carry, ch)
            carry = b.AO21(carry, ch.t, ch.g, f"c{ch.hi}", "select")
        return finish(f, sums, carry)
    m = len(chains)
    top = b.ADD([ch.g for ch in chains], [ch.t for ch in chains], carry, "y", "carry")
    into = [carry]
    for i in range(1, m):  # carry into block i + 1 from the second chain's bit i
        gt = b.XOR(chains[i].g, chains[i].t, f"gt{chains[i].lo}", "carry")
        into.append(b.XOR(top[i], gt, f"c{chains[i].lo}", "carry"))
    for c, ch in zip(into, chains):
        sums += cb.select_sums(f, c, ch)
    return finish(f, sums, top[m])
