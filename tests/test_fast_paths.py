"""The built-in evaluator's fast paths give exactly what their plain definitions give."""

from __future__ import annotations

import numpy as np
import pytest

from adder_forge.emit import vectors as v
from adder_forge.ir.builder import Builder
from adder_forge.ir.interface import OPERATIONS, adder
from adder_forge.checks.builtin import check
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec

WIDTHS = [1, 5, 12, 31, 32, 33, 62, 63, 64, 65, 96, 128, 200]


@pytest.mark.parametrize("carry_in", [True, False])
@pytest.mark.parametrize("width", WIDTHS)
def test_bulk_random_vectors_are_the_call_by_call_ones(width, carry_in):
    fast = v.random_set(width, carry_in, 300, 7)
    slow = v.from_triples(width, v.random_triples(width, carry_in, 300, 7))
    assert fast.a.shape == slow.a.shape
    assert (fast.a == slow.a).all() and (fast.b == slow.b).all() and (fast.cin == slow.cin).all()


@pytest.mark.parametrize("width", WIDTHS)
def test_limb_addition_is_python_integer_addition(width):
    m = (1 << width) - 1
    for op in OPERATIONS:
        sub = op == "add-subtract"
        vs = v.random_set(width, True, 500, 3, sub)
        ext = [(m, m, 1), (m, 0, 1), (m, 1, 0), (0, 0, 0), (m >> 1, m >> 1, 1), (m ^ m >> 1, m ^ m >> 1, 0)]
        extremes = v.from_triples(width, [t + (k % 2,) for k, t in enumerate(ext)] if sub else ext)
        for ci in (True, False):
            for co in (True, False):
                for ov in (True, False):
                    iface = adder(width, ci, co, op, ov)
                    for s in (vs, extremes):
                        assert (v.expected(s, iface) == v.expected_slow(s, iface)).all(), (op, ci, co, ov)
    # and the plain add against Python's + with no interface in between
    vs = v.random_set(width, True, 200, 5)
    want = [a + b + c for a, b, c in vs.triples()]
    got = v.expected(vs, adder(width))
    assert [int.from_bytes(r.astype("<u8").tobytes(), "little") for r in got] == want


def naive_planes(arr: np.ndarray, nbits: int) -> np.ndarray:
    ints = [int.from_bytes(row.astype("<u8").tobytes(), "little") for row in arr]
    words = (len(ints) + 63) // 64
    out = np.zeros((nbits, words), dtype=np.uint64)
    for k, x in enumerate(ints):
        for j in range(nbits):
            if (x >> j) & 1:
                out[j, k // 64] |= np.uint64(1 << (k % 64))
    return out


@pytest.mark.parametrize("width,count", [(1, 70), (7, 130), (64, 64), (65, 200), (130, 100)])
def test_bit_planes_match_a_bit_by_bit_transposition(width, count):
    vs = v.random_set(width, True, count, 11)
    for arr, nbits in ((vs.a, width), (v.expected(vs, adder(width)), width + 1), (vs.cin.reshape(-1, 1), 1)):
        assert (v.to_planes(arr, nbits) == naive_planes(arr, nbits)).all()


@pytest.mark.parametrize("width,carry_in", [(1, True), (3, False), (4, True), (6, True)])
def test_exhaustive_planes_without_transposition(width, carry_in):
    for vs in v.exhaustive_chunks(width, carry_in, 128):
        planes = v.input_planes(vs, carry_in)
        live = v.valid_mask(len(vs))
        assert ((planes["a"] & live) == (naive_planes(vs.a, width) & live)).all()
        assert ((planes["b"] & live) == (naive_planes(vs.b, width) & live)).all()
        if carry_in:
            assert ((planes["cin"] & live) == (naive_planes(vs.cin.reshape(-1, 1), 1) & live)).all()


def broken(width):
    """A ripple adder whose carry into the top bit is stuck at 0."""
    b = Builder("bad")
    a = b.input("a", width)
    x = b.input("b", width)
    c = b.input("cin", 1, scalar=True)[0]
    g = [b.AND(a[i], x[i]) for i in range(width)]
    p = [b.XOR(a[i], x[i]) for i in range(width)]
    carries = [c]
    for i in range(width):
        carries.append(b.AO21(p[i], carries[i], g[i]))
    carries[width - 1] = b.const(0)
    b.output("sum", [b.XOR(p[i], carries[i]) for i in range(width)])
    b.output("cout", [carries[width]], scalar=True)
    return b.finish()


def test_threaded_exhaustive_check_counts_every_failure_and_reports_the_first():
    w = 6
    r = check(broken(w), v.make_plan(w, True, 1 << 20, 0, 1), chunk=512)  # 16 chunks over 2 threads
    assert r.vectors == 1 << 13 and not r.ok
    # The top sum bit is wrong exactly when the true carry into it is 1: count those by integer arithmetic.
    m = (1 << (w - 1)) - 1
    want = sum(1 for k in range(1 << 13)
               if (((k & 63) & m) + (((k >> 6) & 63) & m) + (k >> 12)) >> (w - 1))
    assert r.failed == want
    first = r.first
    assert ((first.a & m) + (first.b & m) + first.cin) >> (w - 1) == 1
    k_first = first.a | (first.b << 6) | (first.cin << 12)
    assert all(not (((k & 63) & m) + (((k >> 6) & 63) & m) + (k >> 12)) >> (w - 1) for k in range(k_first))


def test_random_check_of_a_wide_adder_passes_and_a_broken_one_fails():
    plan = v.make_plan(96, True, 0, 5000, 2)
    assert check(elaborate(make_spec("r96", 96, "ripple")), plan).ok
    assert not check(broken(96), plan).ok


def _kernel_outputs(net, vs):
    from adder_forge.checks.evaluate import Kernel, schedule

    inputs = v.input_planes(vs, net.port("cin") is not None)
    k = Kernel(schedule(net), next(iter(inputs.values())).shape[1])
    for name, planes in inputs.items():
        for dst, src in zip(k.input(name), planes):
            dst[:] = src
    k.run()
    return {p.name: np.stack(k.output(p.name)) for p in net.outputs}


def _scheme_cases():
    from adder_forge.spec.registry import schemes

    for name, sch in schemes().items():
        if name == "prefix":
            for p in ("kogge-stone", "brent-kung", "sklansky", "han-carlson", "ladner-fischer"):
                yield name, {"prefix": p}
        else:
            yield name, {}


@pytest.mark.parametrize("scheme,opts", list(_scheme_cases()), ids=lambda x: x if isinstance(x, str) else "")
@pytest.mark.parametrize("width,carry_in,carry_out", [(1, True, True), (7, False, True), (16, True, False),
                                                      (33, True, True)])
def test_compiled_kernel_computes_what_the_evaluator_computes(scheme, opts, width, carry_in, carry_out):
    """The slot-reusing kernel of the exhaustive path gives the plain evaluator's planes, net for net of
    every output, on every scheme (the behavioural one's ADD cell included)."""
    from adder_forge.checks.evaluate import Evaluator
    from adder_forge.spec.registry import schemes

    if width > schemes()[scheme].max_width:
        pytest.skip("width beyond the scheme's range")
    net = elaborate(make_spec("k", width, scheme, carry_in=carry_in, carry_out=carry_out, **opts))
    vs = v.random_set(width, carry_in, 640, 9)
    want = Evaluator(net).run(v.input_planes(vs, carry_in))
    got = _kernel_outputs(net, vs)
    assert want.keys() == got.keys()
    for name in want:
        assert (want[name] == got[name]).all(), name


def test_compiled_kernel_on_odd_networks():
    """Outputs that are inputs or constants, dead gates, an output read twice, a gate reading one net twice."""
    from adder_forge.checks.evaluate import Evaluator

    b = Builder("odd")
    a = b.input("a", 3)
    x = b.input("b", 3)
    dead = b.AND(a[0], x[0])  # no reader
    del dead
    t = b.XOR(a[1], x[1])
    u = b.AO21(t, t, a[2])
    m = b.MUX(a[0], u, x[2])
    b.output("sum", [a[0], b.const(1), m])
    b.output("cout", [m], scalar=True)
    net = b.finish()
    vs = v.random_set(3, False, 256, 4)
    want = Evaluator(net).run(v.input_planes(vs, False))
    got = _kernel_outputs(net, vs)
    for name in want:
        assert (want[name] == got[name]).all(), name
