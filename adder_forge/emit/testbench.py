"""The self-checking testbench and its vector file, expected values by the interface's reference.

The file holds the vectors of a ``vectors.Plan`` in the plan's order, one hex line each: the data inputs
packed as ``Interface.pack_inputs`` packs them, above the expected outputs packed as ``pack_outputs``
packs them (add with both carries: {cin, b, a, cout, sum}). The template is generic over the
interface's ports, so a new port needs no template change. A plan whose file
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
from .vectors import Plan, directed, expected

SAMPLE_HEAD = 32  # directed patterns always kept: both extremes, all-ones plus one, alternating bits, short runs
MIN_VECTORS = 64  # a file never holds fewer (only a width over about 40000 bits would pass the cap with them)


def line_bits(iface) -> int:
    """Bits of one vector line: the data inputs, then the expected outputs."""
    return iface.in_bits + iface.out_bits


def line_bytes(bits: int) -> int:
    """Bytes of one vector line of ``bits`` bits in hex, and a newline."""
    return (bits + 3) // 4 + 1


@lru_cache(maxsize=64)
def _directed_count(width: int, carry_in: bool, operation: str) -> int:
    return len(directed(width, carry_in, operation))  # 4.5 s at 16384 bits, so once a width


def plan_size(plan: Plan) -> tuple[int, int]:
    """(directed, random) vector counts of the plan; exhaustive plans count as directed."""
    if plan.exhaustive:
        return 1 << plan.bits, 0
    return _directed_count(plan.width, plan.carry_in, plan.operation), plan.random_count


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
    def of(cls, plan: Plan, max_bytes: int, bits: int) -> "Sample":
        """``bits``: of one line (``line_bits``)."""
        d, r = plan_size(plan)
        lb = line_bytes(bits)
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


def vector_lines(plan: Plan, iface, pick: Sample | None = None) -> Iterator[str]:
    """One hex line a vector, {inputs, expected outputs}, in plan order, expected by the interface's reference.

    The plan is walked chunk by chunk and only the picked vectors become lines, so memory stays at one
    chunk however large the plan; iteration stops after the last picked vector.
    """
    bits = line_bits(iface)
    digits = (bits + 3) // 4
    out_bits = iface.out_bits
    inputs = iface.inputs
    offsets = iface.offsets(inputs)
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
        if bits <= 64 and local is None:  # a line fits one word: stay in numpy (exhaustive sets are large)
            cols = {"a": vs.a[:, 0], "b": vs.b[:, 0], "cin": vs.cin, "sub": vs.sub}
            packed = expected(vs, iface)[:, 0].copy()
            for p in inputs:
                packed |= cols[p.name] << np.uint64(out_bits + offsets[p.name])
            yield from (f"{int(x):0{digits}x}\n" for x in packed.tolist())
        else:
            for k in (range(n) if local is None else local.tolist()):
                values = vs.values(k)
                line = iface.pack_inputs(values) << out_bits | iface.expected(values)
                yield f"{line:0{digits}x}\n"
        start += n
        if last is not None and start > last:
            break


@dataclass(frozen=True)
class Testbench:
    verilog: str
    count: int
    plan: Plan
    iface: object  # ir.interface.Interface
    pick: Sample
    vectors_file: str  # the file it reads by default; several testbenches may share one

    @property
    def duration(self) -> int:
        """Simulation time units the testbench needs for its vectors (the batch top waits this long)."""
        clock = clocked_fields(self.iface)
        if clock is None:
            return self.count * STEP + 2
        cycles = self.count + clock["latency"] + clock["reset_cycles"]
        if clock["enable"]:
            cycles += cycles // (clock["stall_every"] - 1) + 1
        return (cycles + 1) * clock["period"] + 2

    def lines(self) -> Iterator[str]:
        return vector_lines(self.plan, self.iface, self.pick)

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


STEP = 1  # time units from applying a vector to comparing its result (the `settle` task)
PERIOD = 10  # a pipelined adder's clock period in the testbench, time units
STALL_EVERY, STALL_AT, RESET_CYCLES = 13, 5, 2  # as the built-in check drives them (checks/clocked.py)


def clocked_fields(iface) -> dict | None:
    """What the testbench template needs to drive a pipelined adder's clock, enable and reset (None for a
    combinational one)."""
    if not iface.latency:
        return None
    low = iface.reset_level == "low"
    return {"latency": iface.latency, "period": PERIOD, "enable": iface.has("en"),
            "reset": iface.reset if iface.reset != "none" else "", "active": "1'b0" if low else "1'b1",
            "idle": "1'b1" if low else "1'b0", "reset_cycles": RESET_CYCLES if iface.reset != "none" else 0,
            "stall_every": STALL_EVERY, "stall_at": STALL_AT}


def clocking_summary(iface) -> str:
    """How a pipelined adder's vectors are clocked through it, as every check that drives it says ('' for a
    combinational one)."""
    clock = clocked_fields(iface)
    if clock is None:
        return ""
    k = clock["latency"]
    text = f"a new vector every edge, each result {k} cycle{'s' if k != 1 else ''} later"
    if clock["enable"]:
        text += f", a stall every {clock['stall_every']} cycles"
    if clock["reset"]:
        text += f", {clock['reset']} reset first"
    return text


def port_fields(iface) -> tuple[list[dict], list[dict]]:
    """Each data input's and output's place in a vector line (bit ranges of the packed input word and of
    the packed output word), for the templates."""
    def fields(pins, offsets):
        return [{"name": p.name, "lsb": offsets[p.name], "msb": offsets[p.name] + p.width - 1,
                 "width": p.width, "scalar": p.scalar} for p in pins]

    return fields(iface.inputs, iface.offsets(iface.inputs)), fields(iface.outputs, iface.offsets(iface.outputs))


def emit_testbench(name: str, iface, plan: Plan, max_bytes: int, vectors_file: str | None = None,
                   dut: str | None = None, width_param: bool = False) -> Testbench:
    """The testbench text and its (lazily made) vectors; ``vectors_file`` is the default file it reads.

    ``dut`` names the module under test when it is not ``name`` (a width-parameterized module checked at
    many widths, one testbench a width); ``width_param`` instantiates it with ``#(.WIDTH(iface.width))``."""
    from .templating import render

    pick = Sample.of(plan, max_bytes, line_bits(iface))
    vectors_file = vectors_file or f"{name}_vectors.hex"
    inputs, outputs = port_fields(iface)
    text = render("testbench.v.j2", name=name, count=pick.count, inputs=inputs, outputs=outputs,
                  in_bits=iface.in_bits, out_bits=iface.out_bits, plan=plan.describe(), version=__version__,
                  vectors_file=vectors_file, selection=pick.describe(), claim=iface.claim(),
                  cap=f"{max_bytes / 2**20:g} MiB", line_bytes=pick.line_bytes, step=STEP,
                  cap_vectors=pick.budget, dut_module=dut or name,
                  dut_params=f" #(.WIDTH({iface.width}))" if width_param else "",
                  clock=clocked_fields(iface))
    return Testbench(text, pick.count, plan, iface, pick, vectors_file)
