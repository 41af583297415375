"""Pipelined adders (spec key ``pipeline``): the stage plan, the built-in check cycle by cycle, and what it
catches. The references are outside the project: the built-in check compares every result, K clock edges
after its operands, with Python integer addition; the stage balance is held to the bound ceil(L / K) that
any cut of an L-level path into K stages must meet (common practice)."""

from __future__ import annotations

from dataclasses import replace

import pytest

from adder_forge import check, dump, elaborate, make_spec
from adder_forge.analysis.structure import metrics
from adder_forge.base.errors import SpecError
from adder_forge.emit.vectors import make_plan
from adder_forge.ir.cells import CELLS, register_fields, register_param
from adder_forge.ir.network import Node
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.ir.pipeline import clocking, latency_of, register_depths, registers, stage_levels
from adder_forge.spec.loader import parse_spec

SCHEMES = [("ripple", {}), ("prefix", {"prefix": "kogge-stone"}), ("prefix", {"prefix": "sklansky"}),
           ("prefix", {"prefix": "brent-kung"}), ("carry-skip", {"block": "auto"}),
           ("carry-select", {"block": "auto"}), ("conditional-sum", {"block": 1}), ("lookahead", {}),
           ("behavioral", {})]


def spec(width, scheme, keys, **pipe):
    return make_spec("pp", width, scheme, pipeline=pipe, **keys)


def plan(width, random_count=2048):
    return make_plan(width, True, 1 << 14, random_count, 3)


@pytest.mark.parametrize("scheme,keys", SCHEMES, ids=[s + "-" + "-".join(map(str, k.values())) for s, k in SCHEMES])
@pytest.mark.parametrize("stages", [1, 2, 3])
def test_builtin_cycle_by_cycle_and_latency_exactly_k(scheme, keys, stages):
    width = 8 if scheme == "lookahead" else 24
    net = elaborate(spec(width, scheme, keys, stages=stages))
    assert latency_of(net) == stages == clocking(net).stages
    r = check(net, plan(width))
    assert r.ok, r.first
    assert "cycle by cycle" in r.detail


@pytest.mark.parametrize("stages", [1, 2, 3, 5])
def test_stages_balanced_and_reported(stages):
    comb = elaborate(make_spec("pp", 64, "prefix", prefix="kogge-stone"))
    levels = metrics(comb)["netlist_levels"]
    net = elaborate(spec(64, "prefix", {"prefix": "kogge-stone"}, stages=stages))
    got = stage_levels(net)
    assert len(got) == stages
    assert max(got) >= -(-levels // stages)  # no cut beats the bound
    assert max(got) <= -(-levels // stages) + 1  # cells are at most 2 levels: one level over the bound at worst
    assert dict(net.meta)["stage_levels"] == "/".join(map(str, got))
    assert metrics(net)["netlist_levels"] == max(got)  # the netlist figure is the longest stage
    assert dict(net.meta)["registers"] == str(len(registers(net)))


def test_every_crossing_registered_and_outputs_from_registers():
    net = elaborate(spec(32, "prefix", {"prefix": "brent-kung"}, stages=3))
    depth = register_depths(net)  # raises if a cell mixes values of two cycles
    for p in net.outputs:
        for b in p.bits:
            assert CELLS[net.nodes[b].op].kind == "register" and depth[b] == 3


def test_combinational_is_unchanged_by_stages_zero():
    a = elaborate(make_spec("pp", 16, "prefix"))
    b = elaborate(make_spec("pp", 16, "prefix", pipeline={"stages": 0}))
    assert dump(a) == dump(b) and not registers(a)


@pytest.mark.parametrize("pipe", [dict(stages=2, enable=True), dict(stages=3, reset="sync"),
                                  dict(stages=2, reset="async", reset_level="low"),
                                  dict(stages=3, enable=True, reset="sync", reset_level="low")])
def test_enable_and_reset(pipe):
    net = elaborate(spec(16, "prefix", {"prefix": "sklansky"}, **pipe))
    names = [p.name for p in net.inputs]
    assert names[0] == "clk" and ("en" in names) == pipe.get("enable", False)
    assert ("rst" in names) == ("reset" in pipe)
    r = check(net, plan(16))
    assert r.ok, (r.first, r.detail)
    if pipe.get("enable"):
        assert "stall" in r.detail


# -- the check can fail ---------------------------------------------------------------------------------------
def _with_node(net, i, node):
    nodes = list(net.nodes)
    nodes[i] = node
    return replace(net, nodes=tuple(nodes))


def test_check_catches_a_broken_gate():
    net = elaborate(spec(24, "prefix", {"prefix": "kogge-stone"}, stages=2))
    for g in gate_indices(net)[::40]:
        assert not check(break_gate(net, g), plan(24, 256)).ok


def test_check_catches_a_result_one_cycle_early():
    net = elaborate(spec(24, "ripple", {}, stages=3))
    out = net.port("sum").bits[5]
    reg = net.nodes[out]
    # the last register of sum[5] bypassed: that bit arrives a cycle early
    bypass = net.nodes[reg.args[0]]
    early = replace(net, outputs=tuple(replace(p, bits=tuple(reg.args[0] if b == out else b for b in p.bits))
                                       for p in net.outputs))
    assert bypass.op == "DFF"
    with pytest.raises(ValueError):
        latency_of(early)
    assert not check(early, plan(24, 256)).ok


def _reclock(net, **fields):
    """The same network with every register's clocking changed (the ports stay as they were)."""
    def new(x):
        f = replace(register_fields(x.param), **fields)
        return replace(x, param=register_param(f.rank, f.enable, f.reset, f.reset_level))
    return replace(net, nodes=tuple(new(x) if x.op == "DFF" else x for x in net.nodes))


@pytest.mark.parametrize("fields", [dict(enable=False), dict(reset="none"),
                                    dict(reset_level="low")])
def test_check_catches_registers_that_ignore_the_enable_or_the_reset(fields):
    net = elaborate(spec(16, "prefix", {"prefix": "sklansky"}, stages=2, enable=True, reset="sync"))
    promised = clocking(net)
    assert check(net, plan(16, 256)).ok
    from adder_forge.checks.clocked import check_clocked
    _, failed, _, _ = check_clocked(_reclock(net, **fields), plan(16, 256), cfg=promised)
    assert failed


def test_registers_clocked_two_ways_are_refused():
    net = elaborate(spec(16, "prefix", {"prefix": "sklansky"}, stages=2, enable=True))
    r = registers(net)[3]
    n = net.nodes[r]
    odd = _with_node(net, r, replace(n, param=register_param(register_fields(n.param).rank)))
    with pytest.raises(ValueError):
        clocking(odd)


# -- the spec ---------------------------------------------------------------------------------------------
BASE = "name: pp\nwidth: 8\nscheme: ripple\n"


@pytest.mark.parametrize("text,line,field,words", [
    ("pipeline:\n  stages: -1\n", 5, "pipeline.stages", "between 0 and"),
    ("pipeline:\n  stages: two\n", 5, "pipeline.stages", "integer"),
    ("pipeline:\n  stagez: 1\n", 5, "pipeline.stagez", "did you mean 'stages'"),
    ("pipeline: 3\n", 4, "pipeline", "mapping"),
    ("pipeline:\n  stages: 0\n  enable: true\n", 5, "pipeline.stages", "need registers"),
    ("pipeline:\n  stages: 1\n  reset: maybe\n", 6, "pipeline.reset", "valid: async, none, sync"),
    ("pipeline:\n  stages: 1\n  reset_level: low\n", 6, "pipeline.reset_level", "without a reset"),
    ("pipeline:\n  stages: 1\n  enable: yes\n", 6, "pipeline.enable", "true or false"),
])
def test_bad_pipeline_keys_name_file_line_and_field(text, line, field, words):
    with pytest.raises(SpecError) as exc:
        parse_spec(BASE + text, "dp.yaml")
    e = exc.value
    assert (e.line, e.field) == (line, field), str(e)
    assert words in str(e) and str(e).startswith(f"dp.yaml:{line}:")
