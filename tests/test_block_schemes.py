"""Every block scheme adds: the built-in check (bit-parallel IR evaluation against Python integer
addition) at widths 1, 2, 3, 7, 8, 16, 33, 64, 128 with uniform, non-dividing, 1-bit, wider-than-the-adder,
listed and automatic block sizes, with and without carry-in and carry-out (all four ways up to 8 bits);
exhaustive up to 8 bits, directed carry chains plus random above."""

import math

import pytest

from adder_forge.checks.builtin import check
from adder_forge.ir.network import check_well_formed
from adder_forge.analysis.structure import metrics
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from adder_forge.emit.vectors import make_plan

WIDTHS = (1, 2, 3, 7, 8, 16, 33, 64, 128)
EXHAUSTIVE = 1 << 17  # every vector up to 8 bits with carry-in


def blocks_for(width, auto):
    """Several block choices for a width: 1, a dividing and a non-dividing size, one wider than the adder,
    an uneven list, and auto where the scheme has it."""
    out = [1, 3, 4, width + 5]
    if width >= 4:
        out.append([width // 4, width - width // 4 - width // 3, width // 3] if width >= 7 else [1, width - 1])
    if auto:
        out.append("auto")
    return out


CASES = []
for _s, _auto, _extra in (("carry-skip", True, {}), ("carry-select", True, {}), ("conditional-sum", False, {}),
                          ("block-lookahead", False, {}), ("block-lookahead", False, {"ling": True}),
                          ("block-lookahead", False, {"group": 2})):
    for _w in WIDTHS:
        for _k in blocks_for(_w, _auto):
            CASES.append((_s, _w, _k, _extra))


def _check(net, width, carry_in, seed=1):
    r = check(net, make_plan(width, carry_in, EXHAUSTIVE, 400, seed))
    assert r.ok, (r.first.describe(width) if r.first else r)
    return r


@pytest.mark.parametrize("scheme,width,block,extra", CASES,
                         ids=[f"{s}-{w}-{k}{'-' + '-'.join(map(str, e)) if e else ''}" for s, w, k, e in CASES])
def test_adds(scheme, width, block, extra):
    flags = ((True, True), (False, False))
    if width <= 8:
        flags += ((False, True), (True, False))
    for carry_in, carry_out in flags:
        net = elaborate(make_spec("blk", width, scheme, carry_in=carry_in, carry_out=carry_out, block=block,
                                  **extra))
        check_well_formed(net)
        _check(net, width, carry_in)


@pytest.mark.parametrize("scheme", ["carry-skip", "carry-select", "conditional-sum", "block-lookahead"])
def test_the_check_would_catch_a_wrong_carry(scheme):
    """Swap one carry-chain cell for an OR of its inputs: the same built-in check must fail."""
    from dataclasses import replace

    from adder_forge.ir.network import Node

    net = elaborate(make_spec("blk", 16, scheme, block=3))
    k = next(i for i, n in enumerate(net.nodes) if n.op == "AO21" and n.role in ("carry", "select"))
    n = net.nodes[k]
    nodes = list(net.nodes)
    nodes[k] = Node("AO21", (n.args[0], n.args[0], n.args[1]), n.name, n.role)
    r = check(replace(net, nodes=tuple(nodes)), make_plan(16, True, EXHAUSTIVE, 400, 1))
    assert not r.ok


def test_block_sizes_recorded_in_the_ir():
    net = elaborate(make_spec("blk", 10, "carry-skip", block=4))
    assert ("block_sizes", "[4, 4, 2]") in net.meta
    net = elaborate(make_spec("blk", 64, "carry-select"))
    assert dict(net.meta)["block_sizes"] == "[2, 3, 4, 5, 6, 7, 8, 9, 10, 10]"


def test_single_block_is_a_ripple_adder():
    """One block wider than the adder: carry-skip and block-lookahead ripple like the ripple scheme
    (plus their bypass or lookahead carry out), carry-select and conditional-sum are exactly ripple."""
    ripple = metrics(elaborate(make_spec("r", 8, "ripple")))
    for s in ("carry-select", "conditional-sum"):
        m = metrics(elaborate(make_spec("x", 8, s, block=8)))
        keys = ("netlist_gate_equiv", "netlist_levels", "netlist_cells_by_type")
        assert [m[k] for k in keys] == [ripple[k] for k in keys]
    m = metrics(elaborate(make_spec("x", 8, "carry-skip", block=20)))
    assert m["netlist_cells_by_type"].get("MUX2") == 1


@pytest.mark.parametrize("n", [2, 4, 8, 16, 32, 64, 128])
def test_conditional_sum_has_log2_n_select_levels(n):
    """Sklansky 1960: log2 n levels of multiplexers after the one-bit conditional sums. With the cells'
    levels (one for g and a | b, two for each select) that is 1 + 2 log2 n."""
    m = metrics(elaborate(make_spec("cs", n, "conditional-sum", carry_in=False)))
    assert m["netlist_levels"] == 1 + 2 * int(math.log2(n))


def test_conditional_sum_select_fanout_is_half_the_width():
    """The last merge's select drives every bit of the upper half (n/2 sums) and its carry out."""
    for n in (16, 64):
        m = metrics(elaborate(make_spec("cs", n, "conditional-sum", carry_in=False)))
        assert m["netlist_max_fanout"] == n // 2 + 1


def test_block_lookahead_blocks_ripple_in_parallel():
    """Every block ripples at the same time and the lookahead units stack (groups of 4, then groups of
    groups), so depth is a + b log4 n: each quadrupling of the width adds one unit level, the same number
    of gate levels at every width and for every block size (derived by construction). A carry that
    rippled from block to block, or a unit that grew with the width, would add levels in proportion to
    the width instead."""
    widths = (16, 64, 256, 1024)
    steps = set()
    for k in (1, 2, 4, 8):
        lv = [metrics(elaborate(make_spec("bl", n, "block-lookahead", block=k)))["netlist_levels"] for n in widths]
        steps |= {b - a for a, b in zip(lv, lv[1:])}
        # the blocks themselves ripple: k bits of AO21 (2 levels a bit) at most, above a common base
        assert lv[0] <= 14 + 2 * k
    assert len(steps) == 1 and 0 < steps.pop() <= 8, steps


def test_block_lookahead_is_hierarchical():
    """More blocks than one lookahead unit takes: groups of groups. 64 one-bit blocks with units of 4 need
    three unit levels (4^3 = 64), so the carry-in reaches the carry out through three flat units."""
    net = elaborate(make_spec("bl", 64, "block-lookahead", block=1, group=4))
    names = {n.name for n in net.nodes}
    assert {"uu0g", "uu0p", "u0g", "u15p"} <= names and not any(x.startswith("uuu") for x in names)


@pytest.mark.parametrize("width", [8, 33, 64])
def test_carry_select_beats_ripple_and_costs_more(width):
    r = metrics(elaborate(make_spec("r", width, "ripple")))
    s = metrics(elaborate(make_spec("s", width, "carry-select")))
    assert s["netlist_levels"] < r["netlist_levels"] and s["netlist_gate_equiv"] > r["netlist_gate_equiv"]
