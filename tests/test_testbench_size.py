"""The vectors file is bounded (16 MiB by default) and holds exactly the plan's vectors, or a stated sample.

The reference for every line is Python integer addition on the plan's own vectors (``Plan.triples``),
formatted here independently of the emitter. Before the cap, a 16384-bit ripple build wrote a 629 MB
file and took 1.9 GB.
"""

from __future__ import annotations

import pytest

from adder_forge.emit.design import TB_MAX_BYTES, design
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes import elaborate
from adder_forge.checks.simulators import simulate
from adder_forge.spec.loader import make_spec
from adder_forge.emit.testbench import SAMPLE_HEAD, line_bytes, plan_size


def reference_lines(plan, carry_out: bool) -> list[str]:
    """{cin, b, a, cout, sum} (cin and cout only when the adder has them), sum by Python's +."""
    w = plan.width
    out_bits = w + 1 if carry_out else w
    ci = 1 if plan.carry_in else 0
    digits = -(-(2 * w + ci + out_bits) // 4)
    return [format(((c << (2 * w) if ci else 0) | b << w | a) << out_bits | ((a + b + c) & ((1 << out_bits) - 1)),
                   f"0{digits}x") for a, b, c in plan.triples()]


@pytest.mark.parametrize("width,carry_in,carry_out", [(1, True, True), (4, False, True), (8, True, False),
                                                      (11, True, True), (64, False, False), (100, True, True)])
def test_whole_plan_when_it_fits(width, carry_in, carry_out, tmp_path):
    d = design(make_spec("fit", width, "ripple", carry_in=carry_in, carry_out=carry_out))
    tb = d.testbench
    ref = reference_lines(tb.plan, carry_out)
    assert tb.vectors_hex.splitlines() == ref
    assert tb.count == len(ref) and f"localparam N = {len(ref)};" in tb.verilog
    assert "file capped" not in d.plan
    path = tmp_path / "v.hex"
    assert tb.write_vectors(path) == len(ref)
    assert path.read_text() == tb.vectors_hex  # streamed and in-memory forms agree


def test_default_cap_bounds_a_wide_adder():
    """3000 bits: the whole plan (directed runs of every length + 2000 random) would be 24.8 MB."""
    d = design(make_spec("wide3k", 3000, "ripple"))
    tb = d.testbench
    directed_n, random_n = plan_size(tb.plan)
    assert (directed_n + random_n) * line_bytes(3 * 3000 + 2) > TB_MAX_BYTES  # the case the cap exists for
    text = tb.vectors_hex
    assert len(text.encode()) <= TB_MAX_BYTES == 16 << 20
    assert tb.count == TB_MAX_BYTES // line_bytes(3 * 3000 + 2) == len(text.splitlines())
    assert f"file capped at 16 MiB: {tb.count} of {directed_n + random_n}" in d.plan
    assert "Files are capped at 16 MiB" in tb.verilog and "this file holds" in tb.verilog


def test_sample_is_the_plan_in_order():
    """A small cap on a 200-bit adder: every line is the plan's, in order; head, last directed, first random."""
    cap = 40_000
    d = design(make_spec("samp200", 200, "prefix", prefix="brent-kung"), tb_max_bytes=cap)
    tb = d.testbench
    ref = reference_lines(tb.plan, True)
    lines = tb.vectors_hex.splitlines()
    idx = tb.pick.indices().tolist()
    assert len(lines) == tb.count == cap // line_bytes(3 * 200 + 2) and len(tb.vectors_hex) <= cap
    assert lines == [ref[i] for i in idx]
    assert idx == sorted(set(idx))
    directed_n, random_n = plan_size(tb.plan)
    assert idx[:SAMPLE_HEAD] == list(range(SAMPLE_HEAD))
    assert directed_n - 1 in idx  # the last directed pattern: the carry run across the whole width
    kept_random = [i - directed_n for i in idx if i >= directed_n]
    assert kept_random == list(range(len(kept_random))) and 0 < len(kept_random) < random_n
    # the last directed vector is a propagate run across (nearly) the whole width, and a carry enters it
    a, b, c = tb.plan.triples()[directed_n - 1]
    assert bin(a ^ b).count("1") >= 199 and ((a + b + c) ^ a ^ b) >> 1 != 0


def test_exhaustive_only_when_the_whole_enumeration_fits():
    small = design(make_spec("ex8", 8, "ripple"))
    assert small.testbench.plan.exhaustive and small.testbench.count == 1 << 17
    capped = design(make_spec("ex8", 8, "ripple"), tb_max_bytes=1 << 16)
    assert not capped.testbench.plan.exhaustive  # directed + random rather than a partial enumeration
    assert len(capped.testbench.vectors_hex) <= 1 << 16


@pytest.mark.sim
def test_sampled_testbench_runs_and_still_catches_a_broken_adder(tmp_path):
    good = design(make_spec("cap300", 300, "ripple"), tb_max_bytes=60_000)
    spec = make_spec("capbad300", 300, "ripple")
    net = elaborate(spec)
    bad = design(spec, net=break_gate(net, gate_indices(net, "carry")[250]), tb_max_bytes=60_000)
    assert not good.testbench.pick.whole
    res = {o.name: o for o in simulate([good, bad], "icarus", tmp_path)}
    assert res["cap300"].ok and res["cap300"].passed == good.testbench.count
    assert not res["capbad300"].ok and res["capbad300"].first
