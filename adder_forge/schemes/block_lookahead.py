"""Block carry-lookahead: ripple inside blocks; the carry into every block comes from a lookahead unit
over the blocks' group generate/propagate, so the blocks ripple at the same time.

Each block's (G, P) is a balanced tree of (g, p) combines. A lookahead unit takes up to ``group``
(G, P) pairs and a carry-in and gives every carry between them as flat sums of products (common
practice, the classic 4-group lookahead unit generalised): c_j = G_j-1 | P_j-1 G_j-2 | ... | P_j-1..P_0 c_in.
With more blocks than ``group`` the units are stacked: groups of blocks get their own (G, P), a unit over
those gives each group's carry-in, and so on up (groups of groups), then the carries come back down.

``ling: true`` runs the same lookahead on Ling's pseudo-carries (Ling 1981, "High-speed binary adder"):
with t_i = a_i | b_i, H_i = c_i+1 | c_i = g_i | t_i-1 & H_i-1, i.e. the prefix of the pairs (g_i, t_i-1)
(t_-1 = 1, H_-1 = c_in). A block's first combine level is then g_i+1 | g_i, an OR instead of an AO21,
because t_i & g_i = g_i. The carry into a block is recovered as c_lo = t_lo-1 & H_lo-1 for its lowest sum bit; the
ripple above it starts from g_lo | (p_lo & t_lo-1) & H_lo-1, so the recovering AND costs no level there.
"""

from __future__ import annotations

from .blocksizes import block_option, validate_block
from ..spec.registry import int_option, scheme
from .blockparts import begin, gp_tree, ripple_chain
from .common import balanced, finish, sum_bits
from .ling import LING, carry, transmits


BLOCK = block_option(4, "bits per ripple block: k or a list from bit 0 up", False, "block-lookahead")
GROUP = int_option("group", 4, 2, 8, "blocks (or groups of blocks) per lookahead unit")


@scheme("block-lookahead", options=(BLOCK, GROUP, LING), validate=validate_block,
        doc="block carry-lookahead: ripple blocks, carries into blocks from hierarchical lookahead units")
def block_lookahead(spec):
    f, blocks, g, p = begin(spec)
    b = f.build
    carries = []
    if spec.opt("ling"):
        t = transmits(f)
        pairs = [_ling_gp(b, g, t, lo, hi, f"b{j}") for j, (lo, hi) in enumerate(blocks)]
        h = lookahead_unit(b, pairs, f.cin, spec.opt("group"), "")
        for j, (lo, hi) in enumerate(blocks):
            if j == 0:
                carries += ripple_chain(b, g, p, lo, hi, f.cin)[:-1]
                continue
            H = b.name_node(h[j], f"h{lo - 1}")
            carries.append(carry(b, t, H, lo - 1))
            if hi - lo > 1:
                # c_lo+1 = g_lo | (p_lo & t_lo-1) & H_lo-1: the AND recovering c_lo folds into the first ripple
                # cell, whose other inputs are early, so the chain starts one level sooner.
                pt = b.AND(p[lo], t[lo - 1], f"pt{lo}", "carry")
                first = b.AO21(pt, H, g[lo], f"c{lo + 1}", "carry")
                carries += ripple_chain(b, g, p, lo + 1, hi, first)[:-1]
        cout = carry(b, t, b.name_node(h[-1], f"h{f.width - 1}"), f.width - 1)
    else:
        pairs = [gp_tree(b, [(g[i], p[i]) for i in range(lo, hi)], f"b{j}", "block_pg")
                 for j, (lo, hi) in enumerate(blocks)]
        c = lookahead_unit(b, pairs, f.cin, spec.opt("group"), "")
        for (lo, hi), cin in zip(blocks, c):
            carries += ripple_chain(b, g, p, lo, hi, b.name_node(cin, f"c{lo}"))[:-1]
        cout = b.name_node(c[-1], f"c{f.width}")
    return finish(f, sum_bits(f, p, carries), cout)


def _ling_gp(b, g, t, lo: int, hi: int, name: str) -> tuple[int, int]:
    """(G, P) of the Ling pairs (g_i, t_i-1) over bits lo .. hi - 1, adjacent bits paired first with the
    OR form g_i+1 | g_i."""
    one = b.const(1)
    tp = [t[i - 1] if i else one for i in range(lo, hi)]  # propagate of pair i is t_i-1 (t_-1 = 1)
    leaves = []
    for i in range(lo, hi - 1, 2):
        k = i - lo
        leaves.append((b.OR(g[i + 1], g[i], "", "block_pg"), b.AND(tp[k + 1], tp[k], "", "block_pg")))
    if (hi - lo) % 2:
        leaves.append((g[hi - 1], tp[-1]))
    return gp_tree(b, leaves, name, "block_pg")


def lookahead_unit(b, pairs: list[tuple[int, int]], cin: int, group: int, stem: str) -> list[int]:
    """Carries c_0 .. c_m for m (G, P) pairs: c_0 = cin, c_j into pair j, c_m out of the last."""
    if len(pairs) <= group:
        return [cin] + [_carry(b, pairs[:j], cin) for j in range(1, len(pairs) + 1)]
    chunks = [pairs[k:k + group] for k in range(0, len(pairs), group)]
    upper = [_group_gp(b, ch, f"{stem}u{q}") for q, ch in enumerate(chunks)]
    top = lookahead_unit(b, upper, cin, group, stem + "u")
    out = [cin]
    for q, ch in enumerate(chunks):
        out += [_carry(b, ch[:j], top[q]) for j in range(1, len(ch))] + [top[q + 1]]
    return out


def _terms(b, pairs: list[tuple[int, int]]) -> list[int]:
    """The products G_j-1, P_j-1 G_j-2, ..., P_j-1 .. P_1 G_0 over j = len(pairs), unshared balanced trees."""
    return [balanced(b, b.AND, [pairs[k][0]] + [pp for _, pp in pairs[k + 1:]], role="lookahead")
            for k in range(len(pairs) - 1, -1, -1)]


def _carry(b, pairs: list[tuple[int, int]], cin: int) -> int:
    """The carry out of ``pairs`` from ``cin``: their generate terms | P_j-1 .. P_0 cin."""
    cin_term = balanced(b, b.AND, [cin] + [pp for _, pp in pairs], role="lookahead")
    return balanced(b, b.OR, _terms(b, pairs) + [cin_term], role="lookahead")


def _group_gp(b, pairs: list[tuple[int, int]], name: str) -> tuple[int, int]:
    """A group's generate as a flat sum of products and its propagate as one AND tree."""
    G = balanced(b, b.OR, _terms(b, pairs), f"{name}g", "lookahead")
    P = balanced(b, b.AND, [pp for _, pp in pairs], f"{name}p", "lookahead")
    return G, P
