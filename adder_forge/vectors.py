"""Stimulus and the reference: input vectors, and expected results by Python integer addition.

Vectors are held as numpy arrays of 64-bit limbs, LSB limb first, so that millions of them move to and
from bit planes (one bit of every vector packed into uint64 words) without a Python loop per vector.
"""

from __future__ import annotations

import random
from dataclasses import dataclass
from typing import Iterator

import numpy as np


def limbs(width: int) -> int:
    return (width + 63) // 64


@dataclass(frozen=True)
class VectorSet:
    width: int
    a: np.ndarray  # (V, limbs) uint64
    b: np.ndarray  # (V, limbs) uint64
    cin: np.ndarray  # (V,) uint64, 0 or 1

    def __len__(self) -> int:
        return self.a.shape[0]

    def ints(self, k: int) -> tuple[int, int, int]:
        return _limbs_to_int(self.a[k]), _limbs_to_int(self.b[k]), int(self.cin[k])

    def triples(self) -> Iterator[tuple[int, int, int]]:
        for k in range(len(self)):
            yield self.ints(k)


def _limbs_to_int(row: np.ndarray) -> int:
    return int.from_bytes(row.astype("<u8").tobytes(), "little")


def _ints_to_limbs(xs: list[int], width: int) -> np.ndarray:
    n = limbs(width)
    raw = b"".join(x.to_bytes(8 * n, "little") for x in xs)
    return np.frombuffer(raw, dtype="<u8").reshape(len(xs), n).astype(np.uint64)


def from_triples(width: int, triples: list[tuple[int, int, int]]) -> VectorSet:
    a = _ints_to_limbs([t[0] for t in triples], width)
    b = _ints_to_limbs([t[1] for t in triples], width)
    cin = np.array([t[2] for t in triples], dtype=np.uint64)
    return VectorSet(width, a, b, cin)


def space_bits(width: int, carry_in: bool) -> int:
    return 2 * width + (1 if carry_in else 0)


def exhaustive_chunks(width: int, carry_in: bool, chunk: int = 1 << 20) -> Iterator[VectorSet]:
    """Every input combination, in index order (a in the low bits, then b, then cin)."""
    total = 1 << space_bits(width, carry_in)
    if space_bits(width, carry_in) > 63:
        raise ValueError("input space too large for exhaustive enumeration")
    mask = np.uint64((1 << width) - 1)
    for start in range(0, total, chunk):
        k = np.arange(start, min(total, start + chunk), dtype=np.uint64)
        a = (k & mask).reshape(-1, 1)
        b = ((k >> np.uint64(width)) & mask).reshape(-1, 1)
        cin = (k >> np.uint64(2 * width)) & np.uint64(1) if carry_in else np.zeros_like(k)
        yield VectorSet(width, a, b, cin)


def directed(width: int, carry_in: bool) -> list[tuple[int, int, int]]:
    """Carry-chain patterns (common practice): extremes, all-ones plus one, alternating bits, and a single
    propagate run of every length, started by a generate (or the carry-in) just below it."""
    m = (1 << width) - 1
    alt = int("01" * width, 2) & m
    cins = (0, 1) if carry_in else (0,)
    out: list[tuple[int, int, int]] = []
    for c in cins:
        out += [(0, 0, c), (m, m, c), (m, 0, c), (0, m, c), (alt, m ^ alt, c), (alt, alt, c),
                (m ^ alt, m ^ alt, c), (alt, 0, c)]
    out += [(m, 1, 0), (1, m, 0)]
    for length in range(1, width + 1):
        starts = {0, width - length, (width - length) // 2}
        for s in sorted(starts):
            run = ((1 << length) - 1) << s
            if s == 0:
                if carry_in:
                    out.append((run, 0, 1))
                else:
                    out.append((run | 1, 1, 0))  # generate at bit 0, run above it
            else:
                gen = 1 << (s - 1)
                out.append((run | gen, gen, 0))
    seen = set()
    uniq = []
    for t in out:
        t = (t[0] & m, t[1] & m, t[2] if carry_in else 0)
        if t not in seen:
            seen.add(t)
            uniq.append(t)
    return uniq


def random_triples(width: int, carry_in: bool, count: int, seed: int) -> list[tuple[int, int, int]]:
    rng = random.Random(seed)
    return [(rng.getrandbits(width), rng.getrandbits(width), rng.getrandbits(1) if carry_in else 0)
            for _ in range(count)]


@dataclass(frozen=True)
class Plan:
    """Which vectors a check uses: exhaustive when the space is small enough, else directed + random."""

    width: int
    carry_in: bool
    exhaustive: bool
    random_count: int
    seed: int

    def describe(self) -> str:
        if self.exhaustive:
            return f"exhaustive, 2^{space_bits(self.width, self.carry_in)} vectors"
        return f"directed carry-chain patterns + {self.random_count} random (seed {self.seed})"

    def chunks(self, chunk: int = 1 << 20) -> Iterator[VectorSet]:
        if self.exhaustive:
            yield from exhaustive_chunks(self.width, self.carry_in, chunk)
            return
        yield from_triples(self.width, directed(self.width, self.carry_in))
        rng_seed = self.seed
        left = self.random_count
        part = 0
        while left > 0:
            n = min(left, max(1, chunk // max(1, limbs(self.width))))
            yield from_triples(self.width, random_triples(self.width, self.carry_in, n, rng_seed * 1000003 + part))
            left -= n
            part += 1

    def triples(self) -> list[tuple[int, int, int]]:
        out = []
        for vs in self.chunks():
            out.extend(vs.triples())
        return out


def make_plan(width: int, carry_in: bool, exhaustive_limit: int, random_count: int, seed: int) -> Plan:
    exhaustive = space_bits(width, carry_in) <= 62 and (1 << space_bits(width, carry_in)) <= exhaustive_limit
    return Plan(width, carry_in, exhaustive, random_count, seed)


def expected(vs: VectorSet) -> np.ndarray:
    """Reference results a + b + cin, (V, limbs(width + 1)), by integer addition outside the IR."""
    if vs.width <= 62:
        return (vs.a[:, 0] + vs.b[:, 0] + vs.cin).reshape(-1, 1)
    sums = [_limbs_to_int(vs.a[k]) + _limbs_to_int(vs.b[k]) + int(vs.cin[k]) for k in range(len(vs))]
    return _ints_to_limbs(sums, vs.width + 1)


# -- bit planes ---------------------------------------------------------------------------------------------
def to_planes(arr: np.ndarray, nbits: int) -> np.ndarray:
    """(V, limbs) uint64 -> (nbits, ceil(V/64)) uint64: plane j holds bit j of every vector."""
    v = arr.shape[0]
    words = (v + 63) // 64
    u8 = np.ascontiguousarray(arr.astype("<u8")).view(np.uint8).reshape(v, -1)
    bits = np.unpackbits(u8, axis=1, bitorder="little")[:, :nbits]
    if words * 64 != v:
        bits = np.concatenate([bits, np.zeros((words * 64 - v, nbits), dtype=np.uint8)])
    packed = np.packbits(bits, axis=0, bitorder="little")  # (words*8, nbits)
    return np.ascontiguousarray(packed.T).view("<u8").astype(np.uint64, copy=False)


def plane_bit(planes: np.ndarray, k: int) -> int:
    """The integer whose bit j is bit k of plane j."""
    col = (planes[:, k >> 6] >> np.uint64(k & 63)) & np.uint64(1)
    return int(sum(int(x) << j for j, x in enumerate(col.tolist())))


def valid_mask(v: int) -> np.ndarray:
    words = (v + 63) // 64
    m = np.full(words, np.uint64(0xFFFFFFFFFFFFFFFF))
    if v % 64:
        m[-1] = np.uint64((1 << (v % 64)) - 1)
    return m
