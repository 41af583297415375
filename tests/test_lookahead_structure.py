"""Flat carry-lookahead structure against its closed forms (common practice: each carry c_i has i + 1
product terms of up to i + 1 literals, built without sharing from 2-input gates)."""

import math

import pytest

from adder_forge.analysis.structure import metrics
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec


@pytest.mark.parametrize("n", [1, 2, 3, 4, 7, 8, 16, 33, 64])
def test_carry_network_has_n_n1_n2_over_6_and_gates(n):
    net = elaborate(make_spec("cla", n, "lookahead", carry_in=True, carry_out=True))
    ands = metrics(net)["netlist_cells_by_role"]["carry"].get("AND2", 0)
    assert ands == n * (n + 1) * (n + 2) // 6


def test_levels_grow_logarithmically_for_lookahead_and_linearly_for_ripple():
    la, rc = {}, {}
    for n in (4, 8, 16, 32, 64):
        la[n] = metrics(elaborate(make_spec("cla", n, "lookahead")))["netlist_levels"]
        rc[n] = metrics(elaborate(make_spec("rca", n, "ripple")))["netlist_levels"]
    # ripple: the propagate XOR, then one AO21 (2 levels) a bit up to the carry out
    for n in rc:
        assert rc[n] == 2 * n + 1
    # lookahead: c_n is an OR tree over n + 1 AND trees of up to n + 1 inputs, both balanced, behind the
    # g/p level, so between 1 + ceil(log2(n+1)) and 1 + 2*ceil(log2(n+1)) levels; each doubling adds at most 2
    for n in la:
        k = math.ceil(math.log2(n + 1))
        assert 1 + k < la[n] <= 1 + 2 * k
    for n in (8, 16, 32, 64):
        assert la[n] - la[n // 2] <= 2


def test_lookahead_width_limit_is_a_clear_error():
    from adder_forge.base.errors import SpecError
    from adder_forge.spec.loader import parse_spec

    with pytest.raises(SpecError) as e:
        parse_spec("name: big\nwidth: 200\nscheme: lookahead\n", "big.yaml")
    assert str(e.value).startswith("big.yaml:2:8: error: 'width' must be between 1 and 128 for scheme 'lookahead'")
