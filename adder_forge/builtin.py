"""The built-in check: evaluate the IR bit-parallel and compare with Python integer addition."""

from __future__ import annotations

import os
from collections import deque
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np

from .evaluate import Evaluator
from .ir import Network
from .vectors import Plan, VectorSet, expected, input_planes, plane_bit, to_planes, valid_mask


@dataclass(frozen=True)
class Mismatch:
    a: int
    b: int
    cin: int
    expected: int  # {cout, sum} as an integer (cout only when the port exists)
    got: int

    def describe(self, width: int) -> str:
        digits = (width + 4) // 4 + 1
        return (f"a=0x{self.a:0{(width + 3) // 4}x} b=0x{self.b:0{(width + 3) // 4}x} cin={self.cin} "
                f"expected=0x{self.expected:0{digits}x} got=0x{self.got:0{digits}x}")


@dataclass(frozen=True)
class CheckResult:
    checker: str
    vectors: int
    failed: int
    first: Mismatch | None
    detail: str = ""

    @property
    def ok(self) -> bool:
        return self.failed == 0 and self.vectors > 0


def out_bits(net: Network) -> int:
    return net.width + (1 if net.port("cout") is not None else 0)


def check_set(ev: Evaluator, vs: VectorSet) -> tuple[int, Mismatch | None]:
    net = ev.net
    inputs = input_planes(vs, net.port("cin") is not None)
    outs = ev.run(inputs)
    got = outs["sum"]
    if "cout" in outs:
        got = np.concatenate([got, outs["cout"]])
    nbits = out_bits(net)
    want = to_planes(expected(vs), nbits)
    diff = np.bitwise_or.reduce(got ^ want, axis=0) & valid_mask(len(vs))
    failed = int(np.bitwise_count(diff).sum())
    if not failed:
        return 0, None
    word = int(np.flatnonzero(diff)[0])
    w_bits = int(diff[word])
    k = word * 64 + ((w_bits & -w_bits).bit_length() - 1)
    a, b, cin = vs.ints(k)
    return failed, Mismatch(a, b, cin, plane_bit(want, k), plane_bit(got, k))


PIECE = 1 << 18  # vectors a worker checks at a time (a multiple of 64)


def check(net: Network, plan: Plan, chunk: int = 1 << 20, workers: int | None = None) -> CheckResult:
    """Check every vector of ``plan``.

    ``chunk`` is how the plan draws its vectors (it decides which random vectors there are, as in the
    emitted testbench); each chunk is checked in pieces on ``workers`` threads (numpy releases the GIL in its
    array loops) while the next chunk is drawn. Results are taken in plan order.
    """
    ev = Evaluator(net)
    workers = workers or min(2, os.cpu_count() or 1)
    total = failed = 0
    first = None
    pending: deque = deque()

    def collect(fut) -> None:
        nonlocal failed, first
        f, m = fut.result()
        failed += f
        first = first or m

    with ThreadPoolExecutor(max_workers=workers) as pool:
        for vs in plan.chunks(chunk):
            total += len(vs)
            for start in range(0, len(vs), PIECE):
                pending.append(pool.submit(check_set, ev, vs.part(start, start + PIECE)))
            while len(pending) > 2 * workers:
                collect(pending.popleft())
        while pending:
            collect(pending.popleft())
    return CheckResult("builtin", total, failed, first, plan.describe())
