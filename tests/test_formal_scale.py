"""Formal equivalence with a + b + cin (Yosys SAT on a miter against Verilog's own `+`) at 64 bits, one
case per scheme in the tree; and a broken 64-bit adder gets a counterexample that integer addition confirms."""

from __future__ import annotations

import pytest

from adder_forge.emit.design import design
from adder_forge.ir.builder import Builder
from adder_forge.checks.formal import prove
from adder_forge.spec.registry import schemes
from adder_forge.spec.loader import make_spec
from adder_forge.emit.verilog import emit_module

CASES = {
    "behavioral": {},
    "ripple": {},
    "lookahead": {},
    "prefix": {"prefix": "kogge-stone"},
    "carry-select": {},
    "carry-skip": {},
    "conditional-sum": {},
    "block-lookahead": {},
    "chain-prefix": {},
    "chain-select": {"join": "chain"},
}


def present():
    have = schemes()
    missing = sorted(set(have) - set(CASES))
    assert not missing, f"add a 64-bit formal case for {missing}"
    return [s for s in CASES if s in have]


@pytest.mark.formal
@pytest.mark.parametrize("scheme", present())
def test_every_scheme_proves_at_64_bits(scheme):
    d = design(make_spec(f"fs64_{scheme.replace('-', '_')}", 64, scheme, **CASES[scheme]), tb_random=0)
    p = prove(d.net, d.verilog)
    assert p.ok, p.log
    assert p.counterexample is None


@pytest.mark.formal
@pytest.mark.parametrize("network", ["brent-kung", "sklansky"])
def test_other_prefix_networks_prove_at_64_bits(network):
    if "prefix" not in schemes():
        pytest.skip("the prefix scheme is not in this tree")
    d = design(make_spec(f"fs64_{network.replace('-', '_')}", 64, "prefix", prefix=network, carry_in=False), tb_random=0)
    assert prove(d.net, d.verilog).ok


def broken64():
    """A 64-bit ripple adder whose carry into bit 40 is the carry into bit 39 (a wiring slip)."""
    w = 64
    b = Builder("fs64_broken")
    a = b.input("a", w)
    x = b.input("b", w)
    c = b.input("cin", 1, scalar=True)[0]
    g = [b.AND(a[i], x[i], f"g{i}") for i in range(w)]
    p = [b.XOR(a[i], x[i], f"p{i}") for i in range(w)]
    carries = [c]
    for i in range(w):
        carries.append(b.AO21(p[i], carries[i], g[i], f"c{i + 1}"))
    into = list(carries)
    into[40] = carries[39]
    b.output("sum", [b.XOR(p[i], into[i], f"s{i}") for i in range(w)])
    b.output("cout", [carries[w]], scalar=True)
    return b.finish()


@pytest.mark.formal
def test_a_broken_64_bit_adder_gets_a_real_counterexample():
    net = broken64()
    p = prove(net, emit_module(net, ["deliberately broken"]))
    assert not p.ok
    cx = p.counterexample
    assert cx is not None
    want = cx.a + cx.b + cx.cin  # Python integer addition
    assert cx.expected == want
    assert cx.got != want
