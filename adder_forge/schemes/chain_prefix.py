"""chain-prefix: carry-chain blocks joined by a parallel-prefix network over the blocks' (G, T).

Every block but the first is summed twice by carry chains (chain_blocks.py); their carry outs are the
block generate and transmit, the prefix network chosen with ``prefix:`` (any network of
prefix_networks.py) turns them into the carry into every block, and each block's sums are selected by
that carry. Block 0's chain starts from the adder's carry-in, so its carry out is prefix column 0
(a generate with no propagate, like the carry-in column of the prefix scheme). Hybrids of carry chains
and select or lookahead logic are published for FPGAs (Preußer, Zabel and Spallek 2011; de Dinechin,
Nguyen and Pasca 2010; from memory, as cited in issue 14); this construction is ours. The networks with
a parameter (harris, knowles) are left out: their parameter depends on the block count, which
``block: auto`` only knows after sizing.
"""

from __future__ import annotations

from ..ir.network import META_BLOCK_NETWORK
from . import chain_blocks as cb
from .prefix_networks import NETWORKS, build, final_refs, prune
from ..spec.registry import choice_option, scheme
from .blocksizes import validate_block
from .common import finish, prefix_cells

PREFIX = choice_option("prefix", sorted(k for k, v in NETWORKS.items() if v.param is None), "sklansky",
                       "the prefix network over the blocks")


def levels(name: str, m: int) -> int:
    """LUT levels of network ``name`` over ``m`` block columns (its deepest cell)."""
    g = build(name, m)
    return max((c.level for c in g.cells), default=0)


def auto(spec, width: int) -> tuple[int, ...]:
    fam = cb.FAMILIES[spec.opt("target")]
    name = spec.opt("prefix")
    return cb.best_uniform(width, lambda sizes: cb.prefix_delay(fam, sizes, levels(name, len(sizes))))


@scheme("chain-prefix", options=(cb.block_key("chain-prefix"), PREFIX, cb.TARGET), validate=validate_block,
        doc="FPGA hybrid: carry-chain blocks for carry-in 0 and 1, a prefix network over the blocks' "
            "generate/transmit, a multiplexer per bit")
def chain_prefix(spec):
    f, sums, c1, chains = cb.lay_out(spec, auto)
    if not chains:
        return finish(f, sums, c1)
    b = f.build
    m = len(chains) + 1
    outs = list(range(m - 1)) + ([m - 1] if spec.network_carry_out else [])
    graph = prune(build(spec.opt("prefix"), m), outs, f"{spec.opt('prefix')} over {m} blocks")
    gen = [c1] + [ch.g for ch in chains]
    prop = [None] + [ch.t for ch in chains]
    val = prefix_cells(b, graph, gen, prop, p="T", tag="B")
    last = final_refs(graph)
    for j, ch in enumerate(chains, start=1):
        sums += cb.select_sums(f, val(last[j - 1])[0], ch)
    cout = val(last[m - 1])[0] if spec.network_carry_out else b.const(0)
    b.meta.append((META_BLOCK_NETWORK, graph.style))
    return finish(f, sums, cout)
