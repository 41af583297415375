"""Carry-skip timing: the structural longest path is false; the skip-aware estimate is what a
unit-delay simulation of real input transitions reaches.

The reference here is a transport-delay simulation written for this test: every cell's output at time t
is its function of its inputs at t - (its levels in cells.py), inputs switch at time 0 from one vector to
another, and the settle time is the last time any output changes. That is the meaning of a delay in the
unit-delay model, computed from behaviour rather than from paths, so it can disagree with the pass.
"""

import random

import numpy as np
import pytest

from adder_forge.schemes.blocksizes import resolve, skip_auto, skip_delay
from adder_forge.ir.cells import cell_levels
from adder_forge.checks.evaluate import Evaluator
from adder_forge.ir.network import Port
from adder_forge.analysis.structure import gate_levels, metrics
from adder_forge.schemes import elaborate
from adder_forge.analysis.skip_timing import sensitizable_levels
from adder_forge.spec.loader import make_spec
from adder_forge.emit.vectors import exhaustive_chunks, to_planes

OPS = {
    "NOT": lambda x: ~x[0],
    "AND2": lambda x: x[0] & x[1],
    "OR2": lambda x: x[0] | x[1],
    "XOR2": lambda x: x[0] ^ x[1],
    "XNOR2": lambda x: ~(x[0] ^ x[1]),
    "AO21": lambda x: (x[0] & x[1]) | x[2],
    "MUX2": lambda x: np.where(x[0], x[2], x[1]),
}


def settle_times(net, before, after, weight=cell_levels):
    """Last output change time of each transition; ``before``/``after`` map port -> list of ints.
    ``weight(op, nargs)`` is each cell's transport delay (cells.py's levels unless given)."""
    rows = structural_delay(net, weight) + 2  # row 0: the steady state before; row r: time r - 1
    bit_of = {node: (p.name, j) for p in net.inputs for j, node in enumerate(p.bits)}
    val = []
    for i, n in enumerate(net.nodes):
        if n.op == "INPUT":
            name, j = bit_of[i]
            v = np.empty((rows, len(before[name])), bool)
            v[0] = [(x >> j) & 1 for x in before[name]]
            v[1:] = [(x >> j) & 1 for x in after[name]]
        elif n.op == "CONST":
            v = np.full((rows, len(next(iter(before.values())))), bool(n.param))
        else:
            idx = np.maximum(np.arange(rows) - weight(n.op, len(n.args)), 0)
            v = OPS[n.op]([val[a][idx] for a in n.args])
        val.append(v)
    last = np.full(val[0].shape[1], -1)
    for p in net.outputs:
        for b in p.bits:
            changed = val[b][1:] != val[b][:-1]  # changed[r - 1]: between row r - 1 and row r, at time r - 1
            t = np.where(changed.any(0), rows - 2 - np.argmax(changed[::-1], 0), -1)
            last = np.maximum(last, t)
    return last


def structural_delay(net, weight):
    t = [0] * len(net.nodes)
    for i, n in enumerate(net.nodes):
        if n.args:
            t[i] = max(t[a] for a in n.args) + weight(n.op, len(n.args))
    return max(t[b] for p in net.outputs for b in p.bits)


def transitions(width, carry_in, count, seed):
    """Random transitions, plus every carry-chain one: a carry generated at bit s (b_s switching 0 -> 1,
    a_s = 1) that the bits s + 1 .. e all propagate (a = 1, b = 0 there), and the same started by the
    carry-in switching."""
    rng = random.Random(seed)
    before = {"a": [], "b": [], "cin": []}
    after = {"a": [], "b": [], "cin": []}

    def add(a0, b0, c0, a1, b1, c1):
        for d, v in ((before, (a0, b0, c0)), (after, (a1, b1, c1))):
            for port, x in zip(("a", "b", "cin"), v):
                d[port].append(x)

    for _ in range(count):
        add(*(rng.getrandbits(width) for _ in range(2)), rng.getrandbits(1) & carry_in,
            *(rng.getrandbits(width) for _ in range(2)), rng.getrandbits(1) & carry_in)
    for s in range(width):
        for e in range(s, width):
            run = ((1 << (e + 1)) - 1) ^ ((1 << s) - 1)
            add(run, 0, 0, run, 1 << s, 0)
            if carry_in and s == 0:
                add(run, 0, 0, run, 0, 1)
    return before, after


def all_transitions(width, carry_in):
    vs = [t for chunk in exhaustive_chunks(width, carry_in) for t in chunk.triples()]
    pairs = [(u, v) for u in vs for v in vs]
    before = {"a": [u[0] for u, _ in pairs], "b": [u[1] for u, _ in pairs], "cin": [u[2] for u, _ in pairs]}
    after = {"a": [v[0] for _, v in pairs], "b": [v[1] for _, v in pairs], "cin": [v[2] for _, v in pairs]}
    return before, after


def test_simulation_reaches_the_structural_depth_of_a_ripple_adder():
    """The ripple adder's longest path is true, so the simulator must find it (the reference can see a
    long path when there is one)."""
    for carry_in in (True, False):
        net = elaborate(make_spec("r", 8, "ripple", carry_in=carry_in))
        assert settle_times(net, *transitions(8, carry_in, 2000, 1)).max() == gate_levels(net)
        assert sensitizable_levels(net) is None


@pytest.mark.parametrize("width,block", [(3, 1), (3, 2), (4, 2)])
def test_exhaustive_transitions_settle_exactly_at_the_estimate(width, block):
    net = elaborate(make_spec("sk", width, "carry-skip", carry_in=width == 3, block=block))
    t = settle_times(net, *all_transitions(width, width == 3))
    m = metrics(net)
    assert t.max() == m["netlist_levels_skip_aware"] < m["netlist_levels"]


@pytest.mark.parametrize("width,block", [(8, 2), (12, 3), (16, "auto"), (12, [2, 4, 4, 2]), (6, 1), (33, 5)])
@pytest.mark.parametrize("carry_in", [True, False])
def test_chain_and_random_transitions_settle_at_the_estimate_never_later(width, block, carry_in):
    net = elaborate(make_spec("sk", width, "carry-skip", carry_in=carry_in, block=block))
    t = settle_times(net, *transitions(width, carry_in, 3000, 7))
    m = metrics(net)
    assert t.max() == m["netlist_levels_skip_aware"] < m["netlist_levels"]


def test_bypass_only_ever_selects_an_equal_value():
    """The pass's one assumption about a skip multiplexer (s, d0, d1): s = 1 implies d0 = d1. Checked on
    every input of a 7-bit adder, by evaluating the three nets as extra outputs."""
    for block in (1, 2, 3, "auto"):
        net = elaborate(make_spec("sk", 7, "carry-skip", block=block))
        skips = [n for n in net.nodes if n.role == "skip"]
        assert skips
        extra = tuple(Port(f"m{k}_{w}", (n.args[x],)) for k, n in enumerate(skips) for x, w in enumerate("s01"))
        probe = Evaluator(type(net)(net.name, net.nodes, net.inputs, net.outputs + extra, net.prefix, net.meta))
        for vs in exhaustive_chunks(7, True):
            cin = to_planes(vs.cin.reshape(-1, 1), 1)
            out = probe.run({"a": to_planes(vs.a, 7), "b": to_planes(vs.b, 7), "cin": cin})
            for k in range(len(skips)):
                s, d0, d1 = out[f"m{k}_s"][0], out[f"m{k}_0"][0], out[f"m{k}_1"][0]
                assert not np.any(s & (d0 ^ d1))


@pytest.mark.parametrize("n", [32, 64])
def test_auto_sizing_no_worse_than_the_best_uniform_block_in_the_ir(n):
    """The automatic sizes against every uniform block size, by the IR's own skip-aware figure."""
    auto = metrics(elaborate(make_spec("sk", n, "carry-skip")))["netlist_levels_skip_aware"]
    uniform = {k: metrics(elaborate(make_spec("sk", n, "carry-skip", block=k)))["netlist_levels_skip_aware"]
               for k in range(1, n + 1)}
    assert auto <= min(uniform.values())
    assert (auto, min(uniform.values())) == {32: (24, 30), 64: (33, 42)}[n]


def test_ir_estimate_follows_the_textbook_model():
    """With a carry-in, the IR's skip-aware levels are 2 D + 6 (two levels a ripple bit and a skip; the
    g/p, entry and sum levels), one more when a 1-bit top block's bypass drives the carry out; D is the
    textbook unit-delay model."""
    rng = random.Random(5)
    lists = [resolve(k, n) for n in (16, 32, 64) for k in (2, 3, 4, 5, 8)] + [skip_auto(n) for n in (16, 32, 64)]
    lists += [[rng.randint(2, 9) for _ in range(rng.randint(2, 9))] for _ in range(40)]
    for sizes in lists:
        lv = sensitizable_levels(elaborate(make_spec("sk", sum(sizes), "carry-skip", block=list(sizes))))
        d = skip_delay(sizes)
        assert lv - 2 * d in ((6, 7) if sizes[-1] == 1 else (6,)), sizes


def test_false_paths_are_reported():
    m = metrics(elaborate(make_spec("sk", 16, "carry-skip", block=4)))
    assert m["netlist_levels"] > m["netlist_levels_skip_aware"]
    assert any("false path" in note for note in m["notes"])
    for scheme in ("ripple", "carry-select", "conditional-sum", "block-lookahead"):
        m = metrics(elaborate(make_spec("x", 16, scheme)))
        assert m["netlist_levels_skip_aware"] is None and m["notes"] == []


def test_no_bypass_no_note():
    """A single block without carry-out has its bypass removed as dead logic: nothing to report."""
    m = metrics(elaborate(make_spec("sk", 8, "carry-skip", block=8, carry_out=False)))
    assert m["netlist_levels_skip_aware"] is None and m["notes"] == []


def _unit_gate(op, nargs):
    from adder_forge.analysis.delay import UNIT_GATE

    return UNIT_GATE[op].delay


@pytest.mark.parametrize("width,block,exhaustive", [(3, 1, True), (4, 2, True), (12, 3, False), (16, "auto", False)])
def test_skip_aware_unit_gate_delay_matches_a_transport_simulation(width, block, exhaustive):
    """The report's unit_gate_delay_skip_aware: the same pass with the unit-gate model's delays (XOR 2),
    checked by simulating real transitions with those delays; never later than it, below the structural."""
    from adder_forge.analysis.delay import estimates

    net = elaborate(make_spec("sk", width, "carry-skip", carry_in=True, block=block))
    est = estimates(net)
    pairs = all_transitions(width, True) if exhaustive else transitions(width, True, 3000, 3)
    t = settle_times(net, *pairs, weight=_unit_gate)
    assert t.max() <= est["unit_gate_delay_skip_aware"] < est["unit_gate_delay"]
    if exhaustive:
        assert t.max() == est["unit_gate_delay_skip_aware"]
