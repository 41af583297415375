"""The built-in check: evaluate the IR bit-parallel and compare with the interface's reference (Python
integer arithmetic, ``ir.interface``)."""

from __future__ import annotations

import os
import threading
from collections import deque
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np

from .evaluate import Evaluator, Kernel, schedule
from ..ir.network import Network
from ..ir.pipeline import registers
from ..base.progress import NULL, Progress
from ..emit.vectors import (ONES, BlockScratch, ExhaustiveBlocks, Plan, VectorSet, expected, iface_planes, plane_bit,
                            to_planes, valid_mask)


@dataclass(frozen=True)
class Mismatch:
    a: int
    b: int
    cin: int
    expected: int  # the outputs packed as the interface packs them: {overflow, cout, sum}, present ports only
    got: int
    sub: int | None = None  # the add-subtract select, when the adder has one

    def describe(self, width: int) -> str:
        digits = (width + 4) // 4 + 1
        sub = "" if self.sub is None else f" sub={self.sub}"
        return (f"a=0x{self.a:0{(width + 3) // 4}x} b=0x{self.b:0{(width + 3) // 4}x} cin={self.cin}{sub} "
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
    return net.iface.out_bits


def mismatch(iface, values: dict, got: int) -> Mismatch:
    """A failing vector, its expected outputs from the interface's reference."""
    return Mismatch(values["a"], values["b"], values.get("cin", 0), iface.expected(values), got, values.get("sub"))


def check_set(ev: Evaluator, vs: VectorSet) -> tuple[int, Mismatch | None]:
    iface = ev.net.iface
    outs = ev.run(iface_planes(vs, iface))
    got = np.concatenate([outs[p.name] for p in iface.outputs])
    nbits = iface.out_bits
    want = to_planes(expected(vs, iface), nbits)
    diff = np.bitwise_or.reduce(got ^ want, axis=0) & valid_mask(len(vs))
    failed = int(np.bitwise_count(diff).sum())
    if not failed:
        return 0, None
    word = int(np.flatnonzero(diff)[0])
    w_bits = int(diff[word])
    k = word * 64 + ((w_bits & -w_bits).bit_length() - 1)
    return failed, mismatch(iface, vs.values(k), plane_bit(got, k))


PIECE = 1 << 18  # vectors a worker checks at a time (a multiple of 64)
BLOCK_WORDS = 1 << 13  # exhaustive checks: 64-bit words a worker evaluates at a time (2^19 vectors)
BLOCKS_PER_TASK = 8  # ... and blocks per task handed to a thread (fewer hand-offs, finer progress)


def default_workers() -> int:
    """Threads a check uses unless told: two where there are two cores (the machine this targets)."""
    return min(2, os.cpu_count() or 1)


def check(net: Network, plan: Plan, chunk: int = 1 << 20, workers: int | None = None,
          progress: Progress | None = None, label: str = "builtin") -> CheckResult:
    """Check every vector of ``plan`` against Python integer addition.

    An exhaustive plan of a width of 6 or more is checked bit-sliced (``ExhaustiveBlocks``): no vector is
    ever held, so 2^33 vectors take the memory of one block per thread. Any other plan is drawn chunk by
    chunk as the emitted testbench draws it (``chunk`` decides which random vectors there are) and each
    chunk is checked in pieces while the next is drawn; at most a few chunks are alive at once, so memory
    does not grow with the vector count. Either way ``workers`` threads share the work (numpy releases
    the GIL in its array loops), results are taken in plan order, every failure is counted and the first
    is reported exactly. ``progress`` gets one task, ``label``, counted in vectors.
    """
    progress = progress or NULL
    workers = workers or default_workers()
    with progress.task(label, total=plan.count, unit="vectors") as task:
        if registers(net):  # a pipelined adder: cycle by cycle, each result K edges later (clocked.py)
            from .clocked import check_clocked

            total, failed, first, detail = check_clocked(net, plan, chunk, task=task)
            return CheckResult("builtin", total, failed, first and mismatch(net.iface, *first), detail)
        if plan.exhaustive and plan.width >= 6 and _bitsliced_fits(net.iface):
            return _check_bitsliced(net, plan, workers, task)
        return _check_streamed(net, plan, chunk, workers, task)


def _bitsliced_fits(iface) -> bool:
    """The bit-sliced enumeration's reference is the plain add (a test holds it equal to the interface's);
    other operations take the streamed path, whose reference is ``vectors.expected``."""
    return iface.operation == "add" and not iface.has("overflow")


def _run_jobs(jobs, workers: int, task) -> tuple[int, object]:
    """Run ``jobs`` ((function, args, vectors) each, returning (failures, first or None)) on ``workers``
    threads with a bounded queue, so that jobs are made only as fast as they are done. Returns the total
    failures and the first failure in job order."""
    failed, first = 0, None
    pending: deque = deque()

    def collect() -> None:
        nonlocal failed, first
        fut, n = pending.popleft()
        f, m = fut.result()
        failed += f
        first = first if first is not None else m
        task.advance(n)

    with ThreadPoolExecutor(max_workers=workers) as pool:
        for fn, args, n in jobs:
            pending.append((pool.submit(fn, *args), n))
            while len(pending) > 2 * workers:
                collect()
        while pending:
            collect()
    return failed, first


def _check_streamed(net: Network, plan: Plan, chunk: int, workers: int, task) -> CheckResult:
    ev = Evaluator(net)
    total = 0

    def jobs():
        nonlocal total
        for vs in plan.chunks(chunk):
            total += len(vs)
            for start in range(0, len(vs), PIECE):
                piece = vs.part(start, start + PIECE)
                yield check_set, (ev, piece), len(piece)

    failed, first = _run_jobs(jobs(), workers, task)
    return CheckResult("builtin", total, failed, first, plan.describe())


class _BlockWorker:
    """One thread's compiled network and buffers for bit-sliced exhaustive blocks."""

    def __init__(self, sched, blocks: ExhaustiveBlocks):
        self.blocks = blocks
        self.kernel = Kernel(sched, blocks.words)
        self.scratch = BlockScratch(blocks.words)
        self.slot_of = {}
        for j in range(blocks.bits):
            port, bit = blocks.port_bit(j)
            self.slot_of[j] = self.kernel.input(port)[bit]
        for j, plane in enumerate(blocks.fixed_planes()):
            self.slot_of[j][:] = plane
        outs = self.kernel.output("sum")
        if "cout" in sched.outputs:
            outs = outs + self.kernel.output("cout")
        self.got = outs  # the packed order of the interface's outputs (add: sum, then cout)

    def run(self, block: int) -> tuple[int, tuple[int, int] | None]:
        """(failing lanes, (vector index, got) of the first) for one block."""
        bx = self.blocks
        for j, v in enumerate(bx.block_bits(block), start=bx.fixed_bits):
            self.slot_of[j].fill(ONES if v else 0)
        self.kernel.run()
        bad = bx.mismatches(block, self.got, self.scratch)
        if not bad.any():
            return 0, None
        word = int(np.flatnonzero(bad)[0])
        lanes = int(bad[word])
        lane = (lanes & -lanes).bit_length() - 1
        got = sum(((int(p[word]) >> lane) & 1) << j for j, p in enumerate(self.got))
        return int(np.bitwise_count(bad).sum()), ((block * bx.words + word) * 64 + lane, got)


def _check_bitsliced(net: Network, plan: Plan, workers: int, task) -> CheckResult:
    if net.iface.has("cin") != plan.carry_in or net.iface.width != plan.width or plan.sub:
        raise ValueError("the plan is for another adder's ports")
    sched = schedule(net)
    blocks = ExhaustiveBlocks(plan.width, plan.carry_in, BLOCK_WORDS)
    local = threading.local()

    def run(first_block: int, count: int) -> tuple[int, tuple[int, int] | None]:
        worker = getattr(local, "worker", None)
        if worker is None:
            worker = local.worker = _BlockWorker(sched, blocks)
        failed, first = 0, None
        for blk in range(first_block, first_block + count):
            f, m = worker.run(blk)
            failed += f
            first = first if first is not None else m
        return failed, first

    per_task = BLOCKS_PER_TASK
    vectors_per_block = blocks.words * 64
    jobs = ((run, (start, min(per_task, blocks.blocks - start)),
             min(per_task, blocks.blocks - start) * vectors_per_block) for start in range(0, blocks.blocks, per_task))
    failed, first = _run_jobs(jobs, workers, task)
    if first is not None:
        index, got = first
        a, b, cin = blocks.vector(index)
        first_bad = mismatch(net.iface, {"a": a, "b": b, "cin": cin}, got)
    else:
        first_bad = None
    total = blocks.blocks * vectors_per_block
    return CheckResult("builtin", total, failed, first_bad, plan.describe())

