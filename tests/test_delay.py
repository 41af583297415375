"""The delay and area estimates (adder_forge/delay.py) against published formulas, hand calculation and an
exhaustive path search."""

from __future__ import annotations

import math

import pytest

from adder_forge.ir.builder import Builder
from adder_forge.analysis.delay import EFFORT, estimates, loads, logical_effort, unit_gate
from adder_forge.spec.registry import schemes
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec


def net_of(width, scheme, **kw):
    return elaborate(make_spec("t", width, scheme, **kw))


def need_prefix():
    if "prefix" not in schemes():
        pytest.skip("the prefix scheme is not in this tree")


# -- unit-gate model ----------------------------------------------------------------------------------------
@pytest.mark.parametrize("n", [1, 2, 4, 16, 64])
def test_ripple_unit_delay_matches_the_textbook_formula(n):
    # Weste and Harris, "CMOS VLSI Design", 4th ed., ch. 11 (from memory; docs/references.md, Delay models):
    # t_ripple = t_pg + (N-1) t_AO + t_xor.
    # Here the propagate is an XOR (t_pg = 2), the carry cell an AO21 (2) and the sum an XOR (2).
    assert unit_gate(net_of(n, "ripple"))["delay"] == 2 + (n - 1) * 2 + 2


@pytest.mark.parametrize("network", ["kogge-stone", "sklansky"])
@pytest.mark.parametrize("k", [2, 4, 6])
def test_log_depth_tree_unit_delay_matches_the_textbook_formula(network, k):
    # Weste and Harris (as above): t_tree = t_pg + ceil(log2 N) t_AO + t_xor for a tree of log2 N levels.
    need_prefix()
    n = 1 << k
    net = net_of(n, "prefix", prefix=network, carry_in=False)
    assert unit_gate(net)["delay"] == 2 + 2 * k + 2


@pytest.mark.parametrize("n", [1, 8, 64])
def test_ripple_area_is_seven_units_a_bit(n):
    # The unit-gate full adder: AND + XOR propagate (1 + 2), AO21 carry (2), XOR sum (2) = 7, the full-adder
    # area of Zimmermann 1997's unit-gate model (from memory).
    assert unit_gate(net_of(n, "ripple"))["area"] == 7 * n


def test_unit_gate_path_is_a_chain_from_an_input_to_an_output():
    net = net_of(8, "ripple")
    path = unit_gate(net)["path"]
    names = {n.name or f"n{i}": i for i, n in enumerate(net.nodes)}
    idx = [names[p] for p in path]
    assert net.nodes[idx[0]].op == "INPUT"
    assert idx[-1] in {b for p in net.outputs for b in p.bits}
    for a, b in zip(idx, idx[1:]):
        assert a in net.nodes[b].args


# -- logical effort -----------------------------------------------------------------------------------------
def full_adder_bit():
    b = Builder("fa")
    a = b.input("a", 1)[0]
    x = b.input("b", 1)[0]
    c = b.input("cin", 1, scalar=True)[0]
    g = b.AND(a, x, "g")
    p = b.XOR(a, x, "p")
    s = b.XOR(p, c, "s")
    co = b.AO21(p, c, g, "co")
    b.output("sum", [s])
    b.output("cout", [co], scalar=True)
    return b.finish()


def test_logical_effort_of_one_full_adder_by_hand():
    # Sutherland, Sproull and Harris, "Logical Effort" (1999): a path of N stages sized for least delay takes
    # D = N F^(1/N) + P. Loads in unit-inverter capacitances: p drives an XOR pin (4) and an AOI21 AND pin (2),
    # so L = 6; s and co drive the output load 1. Slowest path a -> p -> s: N = 2, F = 6 * 1, P = 4 + 4.
    le = logical_effort(full_adder_bit())
    assert le["stages"] == 2
    assert le["sized_tau"] == pytest.approx(2 * math.sqrt(6) + 8, abs=1e-3)
    assert [s["node"] for s in le["path"]] == ["p", "s"]
    # Unit drive: each stage takes L + p, so s arrives at (6 + 4) + (1 + 4) = 15.
    assert le["unsized_tau"] == pytest.approx(15.0)
    assert le["sized_fo4"] == pytest.approx(le["sized_tau"] / 5, abs=1e-3)


def brute_force_sized_delay(net) -> float:
    """The largest N F^(1/N) + P over every input-to-output path, by enumerating them."""
    load = loads(net)
    nodes = net.nodes
    readers = [[] for _ in nodes]
    for i, n in enumerate(nodes):
        for a in set(n.args):
            readers[a].append(i)
    outs = {b for p in net.outputs for b in p.bits}
    memo: dict[int, set] = {}

    def suffixes(i):
        if i not in memo:
            here = (1, math.log(load[i]), EFFORT[nodes[i].op].p)
            res = {here} if i in outs else set()
            for r in readers[i]:
                res |= {(n + 1, f + here[1], p + here[2]) for n, f, p in suffixes(r)}
            memo[i] = res
        return memo[i]

    best = 0.0
    for i, n in enumerate(nodes):
        if n.op == "INPUT":
            for r in readers[i]:
                for stages, f, p in suffixes(r):
                    best = max(best, stages * math.exp(f / stages) + p)
    return best


SMALL = [("ripple", {}), ("lookahead", {}), ("prefix", {"prefix": "kogge-stone"}), ("prefix", {"prefix": "brent-kung"}),
         ("prefix", {"prefix": "sklansky"}), ("carry-select", {}), ("conditional-sum", {}), ("carry-skip", {}),
         ("block-lookahead", {})]


@pytest.mark.parametrize("scheme,opts", SMALL, ids=lambda x: x if isinstance(x, str) else "-".join(x.values()))
@pytest.mark.parametrize("width", [3, 5, 8])
def test_sized_delay_is_the_slowest_path_of_an_exhaustive_search(scheme, opts, width):
    if scheme not in schemes():
        pytest.skip(f"scheme {scheme} is not in this tree")
    net = net_of(width, scheme, **opts)
    le = logical_effort(net)
    assert le["sized_tau"] == pytest.approx(brute_force_sized_delay(net), abs=2e-3)
    # Sizing a path never makes it slower than unit drive (N F^(1/N) <= sum of the stage efforts).
    assert le["sized_tau"] <= le["unsized_tau"] + 1e-9
    # The reported path is connected, from an input's reader to an output bit.
    idx = {n.name: i for i, n in enumerate(net.nodes) if n.name}
    path = [idx[s["node"]] for s in le["path"]]
    assert len(path) == le["stages"]
    assert path[-1] in {b for p in net.outputs for b in p.bits}
    assert any(net.nodes[a].op == "INPUT" for a in net.nodes[path[0]].args)
    for a, b in zip(path, path[1:]):
        assert a in net.nodes[b].args


def test_logical_effort_ordering_at_64_bits_matches_the_published_one():
    # Harris and Sutherland, "Logical effort of carry propagate adders", Asilomar 2003 (from memory): at 64
    # bits ripple-carry is slowest by far, and Brent-Kung is slower than Sklansky and Kogge-Stone.
    need_prefix()
    d = {name: logical_effort(net_of(64, "prefix", prefix=name))["sized_tau"]
         for name in ("kogge-stone", "brent-kung", "sklansky")}
    ripple = logical_effort(net_of(64, "ripple"))["sized_tau"]
    assert ripple > 3 * max(d.values())
    assert d["brent-kung"] > d["sklansky"]
    assert d["brent-kung"] > d["kogge-stone"]


def test_fanout_counts_in_the_unsized_estimate():
    # Sklansky's last level has a node driving n/2 cells; at unit drive that costs, sized it costs far less.
    need_prefix()
    le = logical_effort(net_of(64, "prefix", prefix="sklansky"))
    assert le["unsized_tau"] > 1.3 * le["sized_tau"]


def test_a_plain_plus_is_not_estimated():
    e = estimates(net_of(16, "behavioral"))
    assert e["unit_gate_delay"] is None and e["le_tau"] is None
    assert "ADD" in e["note"]


def test_estimates_block_carries_both_models():
    e = estimates(net_of(16, "ripple"))
    assert e["unit_gate_delay"] == 34 and e["unit_gate_area"] == 112
    assert e["le_fo4"] == pytest.approx(e["le_tau"] / 5, abs=1e-3)
    assert "not sign-off" in e["note"]
