"""Ling carries (Ling 1981, "High-speed binary adder", IBM J. Res. Dev.) on the lookahead and
block-lookahead schemes: the pseudo-carries are H_i = c_i+1 | c_i, checked against carries taken from
Python integer addition (c_i = bit i of a ^ b ^ (a + b + cin)), and the adders add."""

import numpy as np
import pytest

from adder_forge.checks.builtin import check
from adder_forge.checks.evaluate import Evaluator
from adder_forge.ir.network import Port
from adder_forge.analysis.structure import metrics
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from adder_forge.emit.vectors import exhaustive_chunks, make_plan, to_planes


def probe(net, nodes: dict[str, int], width: int, carry_in: bool):
    """Values of the named nodes on every input, with the carries from integer addition beside them."""
    extra = tuple(Port(f"probe_{k}", (i,)) for k, i in nodes.items())
    ev = Evaluator(type(net)(net.name, net.nodes, net.inputs, net.outputs + extra, net.prefix, net.meta))
    for vs in exhaustive_chunks(width, carry_in):
        inputs = {"a": to_planes(vs.a, width), "b": to_planes(vs.b, width)}
        if carry_in:
            inputs["cin"] = to_planes(vs.cin.reshape(-1, 1), 1)
        out = ev.run(inputs)
        a, b, c = vs.a[:, 0], vs.b[:, 0], vs.cin
        carries = to_planes((a ^ b ^ (a + b + c)).reshape(-1, 1), width + 1)  # plane i: the carry into bit i
        yield {k: out[f"probe_{k}"][0] for k in nodes}, carries, len(vs)


def pseudo_carries(net):
    return {int(n.name[1:]): i for i, n in enumerate(net.nodes) if n.name.startswith("h") and n.name[1:].isdigit()}


@pytest.mark.parametrize("carry_in", [True, False])
@pytest.mark.parametrize("scheme,opts", [("lookahead", {}), ("block-lookahead", {"block": 2}),
                                         ("block-lookahead", {"block": 3, "group": 2})])
def test_pseudo_carries_are_c_next_or_c(scheme, opts, carry_in):
    width = 7
    net = elaborate(make_spec("lg", width, scheme, carry_in=carry_in, ling=True, **opts))
    hs = pseudo_carries(net)
    assert hs, "no pseudo-carry nodes named h<i>"
    for vals, carries, count in probe(net, hs, width, carry_in):
        assert count % 64 == 0  # whole words: no padding bits to mask
        for i, v in vals.items():
            assert np.array_equal(v, carries[i + 1] | carries[i]), i


@pytest.mark.parametrize("width", [1, 2, 3, 7, 8, 16, 33, 64])
@pytest.mark.parametrize("carry_in", [True, False])
def test_ling_lookahead_adds(width, carry_in):
    net = elaborate(make_spec("lg", width, "lookahead", carry_in=carry_in, ling=True))
    assert check(net, make_plan(width, carry_in, 1 << 17, 300, 3)).ok


@pytest.mark.parametrize("n", [1, 2, 3, 8, 16, 33])
def test_ling_products_have_one_literal_fewer(n):
    """Counted by construction from the expansions: the ordinary carry network has n(n+1)(n+2)/6 AND2
    with a carry-in; Ling's H_0 .. H_n-1 have the products of c_0 .. c_n-1 over t, (n-1)n(n+1)/6 AND2,
    plus one AND2 a bit for c_i+1 = t_i & H_i."""
    ordinary = metrics(elaborate(make_spec("o", n, "lookahead")))["netlist_cells_by_role"]["carry"]["AND2"]
    ling = metrics(elaborate(make_spec("l", n, "lookahead", ling=True)))["netlist_cells_by_role"]["carry"].get("AND2", 0)
    assert ordinary == n * (n + 1) * (n + 2) // 6
    assert ling == (n - 1) * n * (n + 1) // 6 + n


def test_ling_block_lookahead_saves_a_level_with_blocks_of_two_or_more():
    """The OR first combine (g_i+1 | g_i) and the recovering AND folded into the first ripple cell take a
    level off; blocks of one bit have no pair to combine, so there Ling only adds the t & H level."""
    for n in (16, 32, 64, 128):
        for k in (2, 3, 4, 8):
            o = metrics(elaborate(make_spec("o", n, "block-lookahead", block=k)))["netlist_levels"]
            lg = metrics(elaborate(make_spec("l", n, "block-lookahead", block=k, ling=True)))["netlist_levels"]
            assert lg == o - 1, (n, k)
        o = metrics(elaborate(make_spec("o", n, "block-lookahead", block=1)))["netlist_levels"]
        lg = metrics(elaborate(make_spec("l", n, "block-lookahead", block=1, ling=True)))["netlist_levels"]
        assert lg == o + 1


def test_ling_is_off_by_default_and_recorded():
    net = elaborate(make_spec("l", 8, "lookahead"))
    assert ("ling", "false") in net.meta and not pseudo_carries(net)
    net = elaborate(make_spec("l", 8, "block-lookahead", ling=True))
    assert ("ling", "true") in net.meta and pseudo_carries(net)
