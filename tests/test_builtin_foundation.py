"""Foundation schemes against Python integer addition through the built-in bit-parallel evaluator."""

import pytest

from adder_forge.checks.builtin import check
from adder_forge.ir.network import check_well_formed
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from adder_forge.checks.verify import BUILTIN_EXHAUSTIVE_LIMIT
from adder_forge.emit.vectors import make_plan, space_bits
from matrix_foundation import CONFIGS


@pytest.mark.parametrize("cfg", CONFIGS, ids=lambda c: c["name"])
def test_adds_like_python(cfg):
    spec = make_spec(**cfg)
    net = elaborate(spec)
    check_well_formed(net)
    plan = make_plan(spec.width, spec.carry_in, BUILTIN_EXHAUSTIVE_LIMIT, 3000, seed=7)
    r = check(net, plan)
    assert r.ok, r.first
    if space_bits(spec.width, spec.carry_in) <= 25:
        assert plan.exhaustive and r.vectors == 1 << space_bits(spec.width, spec.carry_in)


@pytest.mark.parametrize("scheme", ["ripple", "lookahead"])
def test_every_single_broken_gate_is_caught(scheme):
    """Mutation check of the checker itself: each gate of a 4-bit adder swapped in turn must be noticed by
    an exhaustive comparison with integer addition."""
    net = elaborate(make_spec("m4", 4, scheme))
    plan = make_plan(4, True, BUILTIN_EXHAUSTIVE_LIMIT, 0, 1)
    caught = 0
    for i in gate_indices(net):
        r = check(break_gate(net, i), plan)
        assert not r.ok, f"gate {net.nodes[i].name} ({net.nodes[i].op}) broken, yet every vector passed"
        caught += 1
        assert r.first.expected == (r.first.a + r.first.b + r.first.cin) & 0x1F
        assert r.first.got != r.first.expected
    assert caught == len(gate_indices(net)) > 0


def test_wide_random_and_directed_vectors_pass():
    for w in (100, 257, 1024):
        net = elaborate(make_spec("w", w, "ripple"))
        r = check(net, make_plan(w, True, BUILTIN_EXHAUSTIVE_LIMIT, 500, seed=3))
        assert r.ok and r.vectors > 500
