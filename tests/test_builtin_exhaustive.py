"""The built-in check's exhaustive paths and its constant-memory streaming, against Python integer addition.

Every expected value here is Python integer addition (``a + b + cin``), the reference the project's rules
name; the adders under test are hand-built or elaborated, some with a single wrong minterm.
"""

from __future__ import annotations

import weakref

import numpy as np
import pytest

from adder_forge.checks import builtin
from adder_forge.ir.builder import Builder
from adder_forge.checks.builtin import check, check_set
from adder_forge.cli import main
from adder_forge.checks.evaluate import Evaluator
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from adder_forge.checks.verify import BUILTIN_EXHAUSTIVE_LIMIT, builtin_plan, verify
from adder_forge.emit.vectors import BlockScratch, ExhaustiveBlocks, Plan, exhaustive_chunks, make_plan, space_bits


def one_minterm_wrong(width: int, carry_in: bool, carry_out: bool, a0: int, b0: int, c0: int, bit: int):
    """A ripple adder that is right everywhere but at the one input (a0, b0, c0), where output bit ``bit``
    (``width`` is the carry-out) is inverted: only exhaustive checking is sure to see it."""
    b = Builder("one_wrong")
    a = b.input("a", width)
    x = b.input("b", width)
    c = b.input("cin", 1, scalar=True)[0] if carry_in else b.const(0)
    literals = [a[i] if (a0 >> i) & 1 else b.NOT(a[i]) for i in range(width)]
    literals += [x[i] if (b0 >> i) & 1 else b.NOT(x[i]) for i in range(width)]
    if carry_in:
        literals.append(c if c0 else b.NOT(c))
    hit = literals[0]
    for lit in literals[1:]:
        hit = b.AND(hit, lit)
    outs = []
    for i in range(width):
        p = b.XOR(a[i], x[i])
        outs.append(b.XOR(p, c))
        c = b.AO21(p, c, b.AND(a[i], x[i]))
    outs.append(c)
    outs[bit] = b.XOR(outs[bit], hit)
    b.output("sum", outs[:width])
    if carry_out:
        b.output("cout", [outs[width]], scalar=True)
    return b.finish()


def reference_result(net, vectors):
    """The old path: the whole plan materialised as one vector set, checked in one piece."""
    return check_set(Evaluator(net), vectors)


def whole_enumeration(width: int, carry_in: bool):
    n = 1 << space_bits(width, carry_in)
    (vs,) = exhaustive_chunks(width, carry_in, n)
    return vs


def test_twelve_bits_with_carry_in_are_exhaustive_by_default():
    spec = make_spec("x12", 12, "prefix", prefix="kogge-stone", carry_in=True, carry_out=True)
    plan = builtin_plan(spec, 4096, 1)
    assert BUILTIN_EXHAUSTIVE_LIMIT == 1 << 25
    assert plan.exhaustive and plan.count == 1 << 25
    r = check(elaborate(spec), plan)
    assert r.ok and r.vectors == 1 << 25
    assert r.detail == "exhaustive, 2^25 vectors"


def test_thirteen_bits_with_carry_in_are_not_exhaustive_by_default_but_are_when_forced():
    spec = make_spec("x13", 13, "ripple", carry_in=True)
    assert not builtin_plan(spec, 100, 1).exhaustive
    forced = builtin_plan(spec, 100, 1, exhaustive=True)
    assert forced.exhaustive and forced.count == 1 << 27


@pytest.mark.parametrize("width,carry_in,where", [
    (12, True, (0xA5C, 0x3F1, 1)),    # inside the enumeration, lanes and blocks both nonzero
    (12, True, (0xFFF, 0xFFF, 1)),    # the very last vector
    (12, False, (0, 0, 0)),           # the very first
    (9, True, (0x1B3, 0x0C4, 0)),
])
def test_exhaustive_check_catches_a_gate_wrong_on_one_minterm(width, carry_in, where):
    a0, b0, c0 = where
    for bit in (0, 5, 6, width - 1, width):
        net = one_minterm_wrong(width, carry_in, True, a0, b0, c0, bit)
        plan = make_plan(width, carry_in, BUILTIN_EXHAUSTIVE_LIMIT, 0, 1)
        assert plan.exhaustive
        r = check(net, plan)
        assert not r.ok and r.failed == 1 and r.vectors == 1 << space_bits(width, carry_in)
        m = r.first
        assert (m.a, m.b, m.cin) == (a0, b0, c0)
        assert m.expected == a0 + b0 + c0  # Python integer addition, carry-out included
        assert m.got == m.expected ^ (1 << bit)


def test_a_random_check_of_the_same_adder_misses_the_minterm():
    """Why exhaustive matters: the directed and random vectors of a 12-bit plan miss this one input."""
    net = one_minterm_wrong(12, True, True, 0xA5C, 0x3F1, 1, 3)
    r = check(net, make_plan(12, True, 0, 4096, 1))
    assert r.ok


@pytest.mark.parametrize("width,carry_in,carry_out", [(6, True, True), (6, False, False), (7, True, False),
                                                      (8, True, True), (8, False, True)])
def test_bitsliced_exhaustive_agrees_with_the_materialised_path(width, carry_in, carry_out):
    """Broken gates across schemes: same failure count and the same first failing vector both ways."""
    plan = make_plan(width, carry_in, 1 << 20, 0, 1)
    everything = whole_enumeration(width, carry_in)
    for scheme, opts in (("ripple", {}), ("prefix", {"prefix": "sklansky"}), ("conditional-sum", {}),
                         ("behavioral", {})):
        net = elaborate(make_spec("x", width, scheme, carry_in=carry_in, carry_out=carry_out, **opts))
        nets = [net] + [break_gate(net, i) for i in gate_indices(net)[::5][:8]]
        for n in nets:
            r = check(n, plan)
            failed, first = reference_result(n, everything)
            assert (r.failed, r.first) == (failed, first)
            assert r.vectors == len(everything)


def test_block_reference_is_python_integer_addition():
    """The per-word reference of the bit-sliced path, fed planes of the true sums (made bit by bit from
    Python integers), finds no mismatch; one flipped lane is found exactly there."""
    for width, carry_in in ((6, False), (7, True), (16, True)):
        blocks = ExhaustiveBlocks(width, carry_in, words=4)
        m = (1 << width) - 1
        sample = range(blocks.blocks) if blocks.blocks <= 64 else (0, 1, 12345, blocks.blocks // 2 - 1,
                                                                   blocks.blocks - 1)
        for blk in sample:
            planes = [np.zeros(blocks.words, dtype=np.uint64) for _ in range(width + 1)]
            for word in range(blocks.words):
                for lane in range(64):
                    k = (blk * blocks.words + word) * 64 + lane
                    s = (k & m) + ((k >> width) & m) + (k >> (2 * width))
                    for j in range(width + 1):
                        if (s >> j) & 1:
                            planes[j][word] |= np.uint64(1 << lane)
            scratch = BlockScratch(blocks.words)
            assert not blocks.mismatches(blk, planes, scratch).any()
            planes[width][blocks.words - 1] ^= np.uint64(1 << 63)
            bad = blocks.mismatches(blk, planes, scratch)
            assert [int(x) for x in bad] == [0] * (blocks.words - 1) + [1 << 63]


def test_streamed_random_check_gives_the_materialised_result(monkeypatch):
    """The same plan, chunk by chunk or all at once: same count, same failures, same first."""
    monkeypatch.setattr(builtin, "PIECE", 1 << 10)
    plan = make_plan(40, True, 0, 30000, 5)
    net = elaborate(make_spec("r40", 40, "ripple", carry_in=True, carry_out=True))
    from adder_forge.emit.vectors import VectorSet

    sets = list(plan.chunks(1 << 12))
    whole = VectorSet(40, np.concatenate([s.a for s in sets]), np.concatenate([s.b for s in sets]),
                      np.concatenate([s.cin for s in sets]))
    for n in [net] + [break_gate(net, i) for i in gate_indices(net)[::37][:5]]:
        r = check(n, plan, chunk=1 << 12)
        failed, first = reference_result(n, whole)
        assert (r.vectors, r.failed, r.first) == (len(whole), failed, first)
        assert r.vectors == plan.count


def test_streamed_check_holds_a_bounded_number_of_chunks(monkeypatch):
    """Constant memory: chunks are drawn as they are checked, never all kept."""
    monkeypatch.setattr(builtin, "PIECE", 1 << 10)
    plan = make_plan(16, True, 0, 60000, 2)
    alive = set()
    peak = [0]
    drawn = [0]
    real_chunks = plan.chunks

    class Watched:
        exhaustive, width, carry_in, count = plan.exhaustive, plan.width, plan.carry_in, plan.count

        def describe(self):
            return plan.describe()

        def chunks(self, chunk):
            for vs in real_chunks(chunk):
                key = drawn[0]
                drawn[0] += 1
                alive.add(key)
                weakref.finalize(vs.a, alive.discard, key)  # pieces are views: the base lives while they do
                peak[0] = max(peak[0], len(alive))
                yield vs

    net = elaborate(make_spec("r16", 16, "ripple", carry_in=True))
    r = check(net, Watched(), chunk=1 << 11, workers=2)
    assert r.ok and r.vectors == plan.count
    assert drawn[0] > 25  # enough chunks that keeping them all would show
    # Alive at a draw: the chunks of the <= 2 * workers queued pieces (two pieces a chunk), of a piece a
    # finished thread has not yet dropped (one a thread), and the new one: at most 3 + 2 + 1.
    assert peak[0] <= 6


def test_verify_without_a_simulator_draws_no_testbench_vectors(tmp_path, capsys, monkeypatch):
    """`verify --vectors N` with the built-in check only: the N vectors are checked, never written out
    as a testbench (that took 2.8 GB for 20,000,000 at 32 bits)."""
    import adder_forge.emit.design as artifacts

    seen = []
    real = artifacts.emit_testbench

    def spy(*args, **kwargs):
        seen.extend(x.count for x in (*args, *kwargs.values()) if isinstance(x, Plan))
        return real(*args, **kwargs)

    monkeypatch.setattr(artifacts, "emit_testbench", spy)
    spec = tmp_path / "w32.yaml"
    spec.write_text("name: w32\nwidth: 32\nscheme: ripple\ncarry_in: true\n")
    assert main(["verify", str(spec), "--vectors", "300000"]) == 0
    out = capsys.readouterr().out
    assert "300109 vectors" in out  # 109 directed + 300000 random, all checked
    assert seen and max(seen) < 1000


def test_verify_exhaustive_flag_at_a_small_width(tmp_path, capsys):
    spec = tmp_path / "r13.yaml"
    spec.write_text("name: r13\nwidth: 13\nscheme: ripple\n")
    assert main(["verify", str(spec)]) == 0
    assert "random" in capsys.readouterr().out
    assert main(["verify", str(spec), "--exhaustive"]) == 0
    out = capsys.readouterr().out
    assert f"{1 << 27} vectors; exhaustive, 2^27 vectors" in out  # carry-in is on by default


def test_exhaustive_outcome_through_verify_reports_the_failing_vector():
    spec = make_spec("w12", 12, "ripple", carry_in=True, carry_out=True)
    net = one_minterm_wrong(12, True, True, 0x123, 0xFED, 0, 12)
    from adder_forge.emit.design import design

    (o,) = verify([design(spec, net=net, tb_random=0, tb_exhaustive_limit=0)], [], False, 100, 1).outcomes
    assert not o.ok and o.failed == 1 and o.vectors == 1 << 25
    assert "a=0x123 b=0xfed cin=0" in o.detail


@pytest.mark.parametrize("text,bits", [("width: 17\ncarry_in: true", 35), ("width: 17\ncarry_in: false", 34),
                                       ("width: 64\ncarry_in: true", 129)])
def test_exhaustive_beyond_the_limit_is_one_line_exit_2(tmp_path, capsys, text, bits):
    spec = tmp_path / "wide.yaml"
    spec.write_text(f"name: wide\n{text}\nscheme: ripple\n")
    assert main(["verify", str(spec), "--exhaustive"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    assert err[0].startswith(f"{spec}:2:8: error: --exhaustive:")
    assert f"2^{bits}" in err[0] and "limit is 2^33 (a 16-bit adder with carry-in)" in err[0]


def test_sixteen_bits_with_carry_in_is_the_largest_exhaustive_plan():
    on = builtin_plan(make_spec("x", 16, "ripple", carry_in=True), 0, 1, exhaustive=True)
    off = builtin_plan(make_spec("x", 16, "ripple", carry_in=False), 0, 1, exhaustive=True)
    assert on.exhaustive and on.count == 1 << 33
    assert off.exhaustive and off.count == 1 << 32


@pytest.mark.slow
def test_sixteen_bits_with_carry_in_exhaustive_through_the_cli(tmp_path, capsys, monkeypatch):
    """2^33 vectors through `verify --exhaustive`, with one wrong minterm near the end; 15-40 s on two cores."""
    import adder_forge.emit.design as artifacts

    bad = one_minterm_wrong(16, True, True, 0xFFFE, 0x8001, 1, 16)
    real = artifacts.elaborate
    monkeypatch.setattr(artifacts, "elaborate", lambda spec: bad if spec.name == "w16" else real(spec))
    spec = tmp_path / "w16.yaml"
    spec.write_text("name: w16\nwidth: 16\nscheme: ripple\ncarry_in: true\ncarry_out: true\n")
    assert main(["verify", str(spec), "--exhaustive"]) == 1
    out = capsys.readouterr().out
    assert "1 of 8589934592 vectors failed" in out
    assert "a=0xfffe b=0x8001 cin=1 expected=0x018000 got=0x008000" in out
