"""The proof models x and rejects what a two-valued proof lets through (issue 8, defect 3).

Each broken 8-bit ripple below was "proved equal to a + b + cin" by the two-valued proof (``sat -prove``
without undef modelling, no ``check``); each must now fail, and the layer that catches it is named. The
reference for every verdict is Verilog's `+` (the miter's gold module); the counterexamples are checked
against Python integer addition.
"""

from __future__ import annotations

import pytest

from adder_forge.checks import formal
from adder_forge.emit.design import design
from adder_forge.spec.loader import make_spec

pytestmark = pytest.mark.formal

SUM0 = "wire s0 = p0 ^ cin;"


@pytest.fixture(scope="module")
def rip8():
    d = design(make_spec("xr8", 8, "ripple"), tb_random=0)
    assert SUM0 in d.verilog
    return d


def broken(d, replacement: str) -> str:
    v = d.verilog.replace(SUM0, replacement)
    assert v != d.verilog
    return v


def test_the_correct_adder_proves_and_says_what_was_proved(rip8):
    p = formal.prove(rip8.net, rip8.verilog)
    assert p.ok, p.log
    assert p.describe(8) == "proved {cout, sum} = a + b + cin for every input, no output ever x"


@pytest.mark.parametrize("literal", ["1'bx", "1'bz", "1'b?", "'x", "8'hzz"])
def test_an_x_or_z_constant_fails(rip8, literal):
    v = broken(rip8, f"wire s0 = p0 ^ cin ^ ({literal} & 1'b1);")
    p = formal.prove(rip8.net, v)
    assert not p.ok
    assert "undefined (x/z) constant: line" in p.reason


def test_an_x_constant_is_caught_by_yosys_alone_too(rip8):
    """Without the source scan, the undef-modelling SAT still refutes it, with sum[0] shown as x."""
    v = broken(rip8, "wire s0 = p0 ^ cin ^ (1'bx & 1'b1);")
    (p,) = formal.run_yosys([(rip8.net, v)], 600, None)
    assert not p.ok and p.counterexample is not None
    assert p.undefined == 1  # sum[0]
    assert "sum[0] x (undefined)" in p.describe(8)
    cx = p.counterexample
    assert cx.expected == cx.a + cx.b + cx.cin  # Python integer addition


def test_an_out_of_range_bit_is_x_and_fails(rip8):
    """a[8] of an 8-bit a reads as x in Verilog: no literal to scan for, so only the x-modelling SAT sees it."""
    v = broken(rip8, "wire s0 = p0 ^ cin ^ (a[8] & a[0]);")
    assert not formal.undefined_constants(v)
    p = formal.prove(rip8.net, v)
    assert not p.ok and p.counterexample is not None and p.undefined & 1
    cx = p.counterexample
    assert cx.a & 1 and cx.expected == cx.a + cx.b + cx.cin


@pytest.mark.parametrize("what, lines, says", [
    ("undriven wire", "wire u;\n    wire s0 = p0 ^ cin ^ u;", "no driver"),
    # a wrong adder: two-valued SAT drops the inputs where the two drivers disagree and "proves" it
    ("two drivers", "wire s0;\n    assign s0 = p0 ^ cin;\n    assign s0 = a[0] ^ cin;", "conflicting drivers"),
    ("self-holding loop", "wire s0;\n    assign s0 = s0 & (p0 ^ cin) | (p0 ^ cin);", "logic loop"),
])
def test_yosys_check_rejects(rip8, what, lines, says):
    p = formal.prove(rip8.net, broken(rip8, lines))
    assert not p.ok, what
    assert p.reason.startswith("Yosys check:") and says in p.reason, p.reason


def test_x_in_a_comment_is_not_an_x(rip8):
    v = broken(rip8, "wire s0 = p0 ^ cin; // never 1'bx\n    /* nor 'z */")
    assert formal.prove(rip8.net, v).ok


def test_a_batch_keeps_each_verdict_and_goes_on_after_a_rejected_design(rip8):
    bad_x = broken(rip8, "wire s0 = p0 ^ cin ^ (a[8] & a[0]);")
    bad_check = broken(rip8, "wire u;\n    wire s0 = p0 ^ cin ^ u;")
    wrong = broken(rip8, "wire s0 = p0 ^ ~cin;")
    got = formal.prove_all([(rip8.net, v) for v in (rip8.verilog, bad_check, bad_x, rip8.verilog, wrong,
                                                    rip8.verilog)])
    assert [p.ok for p in got] == [True, False, False, True, False, True]
    assert got[1].reason.startswith("Yosys check:")
    assert got[2].undefined == 1
    cx = got[4].counterexample
    assert cx.expected == cx.a + cx.b + cx.cin != cx.got  # Python integer addition


@pytest.mark.parametrize("cin, cout, want", [
    (True, True, "{cout, sum} = a + b + cin"),
    (False, True, "{cout, sum} = a + b"),
    (True, False, "sum = (a + b + cin) mod 2^5"),
    (False, False, "sum = (a + b) mod 2^5"),
])
def test_the_claim_names_the_ports_the_adder_has(cin, cout, want):
    d = design(make_spec("cl5", 5, "ripple", carry_in=cin, carry_out=cout), tb_random=0)
    p = formal.prove(d.net, d.verilog)
    assert p.ok and p.claim == want
    assert want in p.describe(5)
