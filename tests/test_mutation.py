"""Mutation testing of the checks: one-change mutants of emitted Verilog against the testbench and the proof.

For a sample of designs across every scheme (several prefix networks among them), each mutant is the
emitted module with one change (adder_forge.checks.mutate: a gate of another type, swapped operands, a wire stuck
at 0 or 1, a wrong bit index). Every mutant goes through three engines that share no code with the
generator: the emitted testbench in Icarus and in Verilator (exhaustive vectors at these widths, expected
values by Python integer addition) and the Yosys SAT proof of ``adder_forge.checks.formal.prove`` against
Verilog's own `+`. A mutant is equivalent when the proof says equal, never by assumption; because the
vectors are exhaustive, the testbench must then pass it, and must fail every other mutant: the three
verdicts agree on every mutant, and the kill rate of each layer on the functionally different mutants is
100%. The figures go in docs/mutation.md.
"""

from __future__ import annotations

from collections import Counter
import time
from concurrent.futures import ThreadPoolExecutor

import pytest

from adder_forge.emit.design import design
from adder_forge.checks.formal import prove
from adder_forge.checks.mutate import OPERATORS, module_name, mutant_design, mutants, sample
from adder_forge.checks.simulators import simulate
from adder_forge.spec.loader import make_spec

# (name, width, scheme, keys): widths 4-7 keep every testbench exhaustive and short (at most 2^15 vectors)
DESIGNS = [
    ("mu_plus6", 6, "behavioral", {}),
    ("mu_rip5", 5, "ripple", {"carry_in": False}),
    ("mu_rip6", 6, "ripple", {}),
    ("mu_cla4", 4, "lookahead", {}),
    ("mu_cla5l", 5, "lookahead", {"ling": True, "carry_out": False}),
    ("mu_ks6", 6, "prefix", {"prefix": "kogge-stone"}),
    ("mu_bk6", 6, "prefix", {"prefix": "brent-kung", "carry_out": False}),
    ("mu_sk5", 5, "prefix", {"prefix": "sklansky"}),
    ("mu_hc6", 6, "prefix", {"prefix": "han-carlson", "carry_in": False}),
    ("mu_lf7", 7, "prefix", {"prefix": "ladner-fischer", "carry_in": False}),
    ("mu_kn6", 6, "prefix", {"prefix": "knowles", "fanouts": [2, 1, 1]}),
    ("mu_ksl6", 6, "prefix", {"prefix": "kogge-stone", "ling": True}),
    ("mu_bla6", 6, "block-lookahead", {"block": 2}),
    ("mu_csel6", 6, "carry-select", {"block": 3}),
    ("mu_cskip7", 7, "carry-skip", {"block": 3}),
    ("mu_csum6", 6, "conditional-sum", {}),
    ("mu_chp7", 7, "chain-prefix", {"block": 2}),
    ("mu_chs7", 7, "chain-select", {"block": 2, "join": "chain"}),
]
PER_OPERATOR = 5  # mutants of each operator a design, evenly spread over its module
MIN_MUTANTS = 300


def mutant_designs():
    out = []
    for name, width, scheme, keys in DESIGNS:
        base = design(make_spec(name, width, scheme, **keys))
        for m in sample(mutants(base.verilog, name, name), PER_OPERATOR):
            out.append((scheme, m, mutant_design(base, m)))
    return out


def test_every_scheme_is_sampled():
    from adder_forge.spec.registry import schemes

    assert {s for _, _, s, _ in DESIGNS} == set(schemes())
    assert len({k.get("prefix") for _, _, s, k in DESIGNS if s == "prefix"}) >= 5


def test_operators_make_the_changes_they_name():
    base = design(make_spec("op_ks4", 4, "prefix", prefix="kogge-stone"))
    ms = mutants(base.verilog, "op_ks4", "op_ks4")
    by = Counter(m.operator for m in ms)
    assert all(by[op] > 0 for op in OPERATORS), by
    for m in ms:
        diff = [(x, y) for x, y in zip(base.verilog.splitlines(), m.verilog.splitlines()) if x != y]
        assert len(diff) == 2 and diff[0][1].startswith("module op_ks4_m")  # the rename and one change
        assert diff[1] == (m.before, m.after)
    stuck = [m for m in ms if m.operator == "stuck1"]
    assert all(m.after.endswith(" = 1'b1;") for m in stuck)


@pytest.mark.sim
@pytest.mark.formal
@pytest.mark.slow
def test_checks_kill_every_functionally_different_mutant(tmp_path):
    """About 330 mutants; measured 2-4 minutes on two shared cores (proofs two at a time, one simulator
    build per simulator for all mutants)."""
    rows = mutant_designs()
    assert len(rows) >= MIN_MUTANTS
    designs = [d for _, _, d in rows]
    t0 = time.monotonic()
    with ThreadPoolExecutor(max_workers=2) as pool:
        proofs = list(pool.map(lambda d: prove(d.net, d.verilog), designs))
    seconds = {"formal": time.monotonic() - t0}
    sims = {}
    for simulator in ("icarus", "verilator"):
        t0 = time.monotonic()
        sims[simulator] = {o.name: o for o in simulate(designs, simulator, tmp_path / simulator)}
        seconds[simulator] = time.monotonic() - t0
    table = Counter()
    disagree = []
    for (scheme, m, d), p in zip(rows, proofs):
        name = module_name(m)
        different = not p.ok  # equivalence by proof only
        if different:  # and the counterexample is a real one: `+` gives the expected value, the mutant not
            cex = p.counterexample
            mask = (1 << (d.spec.width + d.spec.carry_out)) - 1
            assert cex is not None and cex.expected == (cex.a + cex.b + cex.cin) & mask != cex.got, m.describe()
        table[(m.operator, "mutants")] += 1
        table[(m.operator, "different")] += different
        for simulator in sims:
            o = sims[simulator][name]
            killed = not o.ok
            table[(m.operator, simulator)] += killed and different
            if killed != different:
                disagree.append((name, scheme, simulator, m.describe(), "proof: " + ("differs" if different else
                                                                                      "equal"), o.log))
        table[(m.operator, "formal")] += different
    print(summary(table))
    print("seconds:", {k: round(v) for k, v in seconds.items()})
    for (scheme, m, d), p in zip(rows, proofs):
        if p.ok:
            print("equivalent:", d.spec.name, scheme, m.describe())
    assert not disagree, disagree[:5]
    total = sum(table[(op, "mutants")] for op in OPERATORS)
    diff = sum(table[(op, "different")] for op in OPERATORS)
    for layer in ("icarus", "verilator", "formal"):
        killed = sum(table[(op, layer)] for op in OPERATORS)
        assert killed == diff, (layer, killed, diff)  # kill rate 100% on the functionally different ones
    assert total >= MIN_MUTANTS and diff >= 0.8 * total  # most one-change mutants do change the function


def summary(table: Counter) -> str:
    lines = ["| operator | mutants | equivalent (proved) | different | killed: Icarus | Verilator | formal |",
             "|---|---|---|---|---|---|---|"]
    for op in OPERATORS + ("all",):
        ops = OPERATORS if op == "all" else (op,)
        n = sum(table[(o, "mutants")] for o in ops)
        d = sum(table[(o, "different")] for o in ops)
        k = [sum(table[(o, layer)] for o in ops) for layer in ("icarus", "verilator", "formal")]
        lines.append(f"| {op} | {n} | {n - d} | {d} | " + " | ".join(f"{x} ({100 * x / d:.0f}%)" if d else "-"
                                                                       for x in k) + " |")
    return "\n".join(lines)
