"""The self-checking testbench and its vector file, expected values by Python integer addition.

The file holds the vectors of a ``vectors.Plan`` in the plan's order, one hex line each. A plan whose file
would pass a byte cap is sampled (see ``Sample``), so that a 16384-bit adder does not get a 629 MB file:
every line is still a vector of the plan, so the built-in check, which runs the whole plan, covers a
superset of what the simulators see.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property, lru_cache
from pathlib import Path
from typing import Iterator

import numpy as np

from ..base.version import __version__
from .vectors import Plan, directed, space_bits

SAMPLE_HEAD = 32  # directed patterns always kept: both extremes, all-ones plus one, alternating bits, short runs
MIN_VECTORS = 64  # a file never holds fewer (only a width over about 40000 bits would pass the cap with them)


def line_bytes(width: int) -> int:
    """Bytes of one vector line: {a, b, cin, cout, sum} in hex and a newline."""
    return (3 * width + 2 + 3) // 4 + 1


@lru_cache(maxsize=64)
def _directed_count(width: int, carry_in: bool) -> int:
    return len(directed(width, carry_in))  # 4.5 s at 16384 bits, so once a width


def plan_size(plan: Plan) -> tuple[int, int]:
    """(directed, random) vector counts of the plan; exhaustive plans count as directed."""
    if plan.exhaustive:
        return 1 << space_bits(plan.width, plan.carry_in), 0
    return _directed_count(plan.width, plan.carry_in), plan.random_count


@dataclass(frozen=True)
class Sample:
    """Which of a plan's vectors the file holds: all of them when they fit ``max_bytes``, else the first
    SAMPLE_HEAD directed patterns, an evenly spaced sample of the other directed ones (the longest carry
    run, which comes last, included), and the first of the random ones, the budget split half and half."""

    directed: int  # vectors in the plan's directed part (or its exhaustive enumeration)
    random: int  # vectors in its random part, which follows the directed part
    keep_directed: int
    keep_random: int
    max_bytes: int
    line_bytes: int

    @classmethod
    def of(cls, plan: Plan, max_bytes: int) -> "Sample":
        d, r = plan_size(plan)
        lb = line_bytes(plan.width)
        budget = max(MIN_VECTORS, max_bytes // lb)
        if d + r <= budget:
            return cls(d, r, d, r, max_bytes, lb)
        kr = min(r, budget // 2)
        kd = min(d, budget - kr)
        return cls(d, r, kd, min(r, budget - kd), max_bytes, lb)

    @property
    def budget(self) -> int:
        return max(MIN_VECTORS, self.max_bytes // self.line_bytes)

    @property
    def count(self) -> int:
        return self.keep_directed + self.keep_random

    @property
    def whole(self) -> bool:
        return self.count == self.directed + self.random

    def indices(self) -> np.ndarray:
        """Plan indices of the kept vectors, increasing."""
        d, k = self.directed, self.keep_directed
        head = min(SAMPLE_HEAD, k)
        rest = k - head
        if k >= d:
            picked = np.arange(d, dtype=np.int64)
        elif rest == 0:
            picked = np.arange(head, dtype=np.int64)
        elif rest == 1:
            picked = np.append(np.arange(head, dtype=np.int64), d - 1)
        else:  # rest points from head to d - 1, both ends included; distinct because rest <= d - head
            picked = np.concatenate([np.arange(head, dtype=np.int64),
                                     head + (np.arange(rest, dtype=np.int64) * (d - 1 - head)) // (rest - 1)])
        return np.concatenate([picked, d + np.arange(self.keep_random, dtype=np.int64)])

    def describe(self) -> list[str]:
        """Lines for the testbench header and the report (none when the file holds the whole plan)."""
        if self.whole:
            return []
        total = self.directed + self.random
        head = min(SAMPLE_HEAD, self.keep_directed)
        return [
            f"The plan has {total} vectors, {total * self.line_bytes / 2**20:.0f} MiB as a file, over the cap of "
            f"{self.max_bytes / 2**20:g} MiB; this file holds {self.count} of them, in plan order:",
            f"the first {head} directed patterns, {self.keep_directed - head} more evenly spaced over the other "
            f"{self.directed - head} (the last included),",
            f"and the first {self.keep_random} of the {self.random} random ones. `adder-forge verify` checks the "
            f"whole plan in the built-in evaluator.",
        ]

    def summary(self) -> str:
        """A short note for the report's plan text."""
        if self.whole:
            return ""
        return f"; file capped at {self.max_bytes / 2**20:g} MiB: {self.count} of {self.directed + self.random}"


def vector_lines(plan: Plan, carry_out: bool, pick: Sample | None = None) -> Iterator[str]:
    """One hex line a vector, {a, b, cin, cout, sum}, in plan order; cout is 0 when the adder has none.

    The plan is walked chunk by chunk and only the picked vectors become lines, so memory stays at one
    chunk however large the plan; iteration stops after the last picked vector.
    """
    w = plan.width
    digits = (3 * w + 2 + 3) // 4
    mask = (1 << (w + 1 if carry_out else w)) - 1
    wanted = None if pick is None or pick.whole else pick.indices()
    last = None if wanted is None else (int(wanted[-1]) if wanted.size else -1)
    start = 0
    for vs in plan.chunks():
        n = len(vs)
        if wanted is None:
            local = None
        else:
            lo, hi = np.searchsorted(wanted, [start, start + n])
            local = wanted[lo:hi] - start
        if w <= 10 and local is None:  # the packed line fits 32 bits: stay in numpy (exhaustive sets are large)
            a = vs.a[:, 0]
            b = vs.b[:, 0]
            c = vs.cin
            s = (a + b + c) & np.uint64(mask)  # reference: integer addition
            packed = (((a << np.uint64(w)) | b) << np.uint64(1) | c) << np.uint64(w + 1) | s
            yield from (f"{int(x):0{digits}x}\n" for x in packed.tolist())
        else:
            for k in (range(n) if local is None else local.tolist()):
                a, b, c = vs.ints(k)
                s = (a + b + c) & mask  # reference: Python integer addition
                yield f"{((((a << w) | b) << 1 | c) << (w + 1)) | s:0{digits}x}\n"
        start += n
        if last is not None and start > last:
            break


@dataclass(frozen=True)
class Testbench:
    verilog: str
    count: int
    plan: Plan
    carry_out: bool
    pick: Sample
    vectors_file: str  # the file it reads by default; several testbenches may share one

    def lines(self) -> Iterator[str]:
        return vector_lines(self.plan, self.carry_out, self.pick)

    @cached_property
    def vectors_hex(self) -> str:
        """The whole file as text (at most the cap, about 16 MiB by default); made when first asked for."""
        return "".join(self.lines())

    def write_vectors(self, path: Path) -> int:
        """Write the file line by line without building it in memory; returns the vector count."""
        n = 0
        with open(path, "w", encoding="ascii", newline="\n") as fh:
            for line in self.lines():
                fh.write(line)
                n += 1
        if n != self.count:  # the plan and the sample disagree: a defect, never a file to trust
            raise RuntimeError(f"wrote {n} vectors to {path}, expected {self.count}")
        return n


def emit_testbench(name: str, width: int, carry_in: bool, carry_out: bool, plan: Plan, max_bytes: int,
                   vectors_file: str | None = None, dut: str | None = None, width_param: bool = False) -> Testbench:
    """The testbench text and its (lazily made) vectors; ``vectors_file`` is the default file it reads.

    ``dut`` names the module under test when it is not ``name`` (a width-parameterized module checked at
    many widths, one testbench a width); ``width_param`` instantiates it with ``#(.WIDTH(width))``."""
    from .templating import render

    pick = Sample.of(plan, max_bytes)
    vectors_file = vectors_file or f"{name}_vectors.hex"
    text = render("testbench.v.j2", name=name, width=width, count=pick.count, carry_in=carry_in,
                  carry_out=carry_out, plan=plan.describe(), version=__version__,
                  vectors_file=vectors_file, selection=pick.describe(),
                  cap=f"{max_bytes / 2**20:g} MiB", line_bytes=pick.line_bytes,
                  cap_vectors=pick.budget, dut_module=dut or name,
                  dut_params=f" #(.WIDTH({width}))" if width_param else "")
    return Testbench(text, pick.count, plan, carry_out, pick, vectors_file)
