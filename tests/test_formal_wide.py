"""Proofs at 1024 bits, past the default WebAssembly stack of the Yosys wheel (see yosys_deep.py)."""

import pytest

from adder_forge.emit.design import design
from adder_forge.checks.formal import prove
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec


@pytest.mark.formal
@pytest.mark.slow
def test_1024_bit_ripple_proved_and_a_broken_one_refuted():
    spec = make_spec("rip1024", 1024, "ripple")
    d = design(spec, tb_random=0, tb_exhaustive_limit=0)
    assert prove(d.net, d.verilog).ok
    net = elaborate(spec)
    bad = break_gate(net, gate_indices(net, "carry")[1000])
    p = prove(bad, design(spec, net=bad, tb_random=0, tb_exhaustive_limit=0).verilog)
    assert not p.ok and p.counterexample is not None
    m = p.counterexample
    assert m.expected == m.a + m.b + m.cin != m.got  # Python integer addition confirms the refutation
