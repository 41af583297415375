"""The cocotb 2.x test (cocotb's Python runner) drives emitted modules in Icarus and Verilator and
compares them with Python integer addition."""

import pytest

from adder_forge.emit.design import design
from adder_forge.checks.cocotb_check import run_cocotb
from adder_forge.spec.loader import make_spec

CASES = [
    dict(name="cc_rip7", width=7, scheme="ripple", carry_in=False),  # exhaustive: 2^14 > limit, so 1000 random + directed
    dict(name="cc_rip5", width=5, scheme="ripple"),  # 2^11 vectors: exhaustive
    dict(name="cc_cla16", width=16, scheme="lookahead", carry_out=False),
    dict(name="cc_beh33", width=33, scheme="behavioral"),
    dict(name="cc_ks32", width=32, scheme="prefix", prefix="kogge-stone"),
]


@pytest.mark.cocotb
@pytest.mark.parametrize("simulator", ["icarus", "verilator"])
@pytest.mark.parametrize("case", CASES, ids=lambda c: c["name"])
def test_cocotb_passes(case, simulator, tmp_path):
    d = design(make_spec(**case), tb_random=0)
    o = run_cocotb(d, simulator, tmp_path, random_count=300)
    assert o.ok, o.log
    assert o.detail.startswith(("exhaustive", "directed carry-chain patterns + 300 random")), o.detail
    if case["name"] == "cc_rip5":
        assert o.passed == 1 << 11  # every input combination, with carry-in
    else:
        assert o.passed > 300
