"""Stimulus and the reference: input vectors, and expected results by Python integer addition.

Vectors are held as numpy arrays of 64-bit limbs, LSB limb first, so that millions of them move to and
from bit planes (one bit of every vector packed into uint64 words) without a Python loop per vector.
"""

from __future__ import annotations

import random
import sys
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
    index0: int | None = None  # set when the vectors are the exhaustive enumeration from this index on

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
        yield VectorSet(width, a, b, cin, start)


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


def random_set(width: int, carry_in: bool, count: int, seed: int) -> VectorSet:
    """The vectors of ``random_triples(width, carry_in, count, seed)``, drawn in bulk.

    CPython's ``getrandbits(k)`` takes ceil(k/32) 32-bit Mersenne Twister outputs, least significant
    first, and drops the low bits of the last one when k is not a multiple of 32; one call for 32·m bits
    returns the next m outputs unchanged. So one bulk call, cut into per-triple words, gives exactly the
    triples of the call-by-call loop (a test compares the two) without a Python loop per vector.
    """
    if sys.byteorder != "little" or count == 0:
        return from_triples(width, random_triples(width, carry_in, count, seed))
    rng = random.Random(seed)
    wpv = (width - 1) // 32 + 1  # 32-bit words per operand
    per = 2 * wpv + (1 if carry_in else 0)
    raw = rng.getrandbits(32 * per * count).to_bytes(4 * per * count, "little")
    words = np.frombuffer(raw, dtype="<u4").reshape(count, per).astype(np.uint64)
    top = width - 32 * (wpv - 1)  # bits taken from the last word of an operand

    def operand(first: int) -> np.ndarray:
        w = words[:, first : first + wpv].copy()
        if top < 32:
            w[:, -1] >>= np.uint64(32 - top)
        n = limbs(width)
        if wpv % 2:
            w = np.concatenate([w, np.zeros((count, 1), dtype=np.uint64)], axis=1)
        return np.ascontiguousarray((w[:, 0::2] | (w[:, 1::2] << np.uint64(32)))[:, :n])

    a = operand(0)
    b = operand(wpv)
    cin = words[:, 2 * wpv] >> np.uint64(31) if carry_in else np.zeros(count, dtype=np.uint64)
    return VectorSet(width, a, b, np.ascontiguousarray(cin))


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
            yield random_set(self.width, self.carry_in, n, rng_seed * 1000003 + part)
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
    """Reference results a + b + cin, (V, limbs(width + 1)), by integer addition outside the IR.

    Up to 62 bits one uint64 addition holds the whole sum; wider operands are added limb by limb with the
    carry between limbs (schoolbook multi-precision addition), which a test compares with Python ints.
    """
    if vs.width <= 62:
        return (vs.a[:, 0] + vs.b[:, 0] + vs.cin).reshape(-1, 1)
    n_in, n_out = limbs(vs.width), limbs(vs.width + 1)
    out = np.zeros((len(vs), n_out), dtype=np.uint64)
    carry = vs.cin.astype(np.uint64)
    for k in range(n_in):
        x = vs.a[:, k]
        s = x + vs.b[:, k]
        c1 = s < x
        s2 = s + carry
        carry = (c1 | (s2 < s)).astype(np.uint64)
        out[:, k] = s2
    if n_out > n_in:
        out[:, n_in] = carry
    return out


def expected_slow(vs: VectorSet) -> np.ndarray:
    """The same reference one vector at a time with Python integers (for tests of ``expected``)."""
    sums = [_limbs_to_int(vs.a[k]) + _limbs_to_int(vs.b[k]) + int(vs.cin[k]) for k in range(len(vs))]
    return _ints_to_limbs(sums, vs.width + 1)


# -- bit planes ---------------------------------------------------------------------------------------------
_TRANSPOSE_MASKS = [(32, 0x00000000FFFFFFFF), (16, 0x0000FFFF0000FFFF), (8, 0x00FF00FF00FF00FF),
                    (4, 0x0F0F0F0F0F0F0F0F), (2, 0x3333333333333333), (1, 0x5555555555555555)]


def transpose64(blocks: np.ndarray) -> np.ndarray:
    """Transpose every 64x64 bit matrix in ``blocks`` (B, 64) uint64, in place: afterwards bit r of row c is
    what bit c of row r was. Six rounds of swapping off-diagonal sub-blocks (common practice; the recursive
    block transpose in Warren, "Hacker's Delight", 2002, ch. 7)."""
    b = blocks.shape[0]
    for j, mask in _TRANSPOSE_MASKS:
        m = np.uint64(mask)
        sh = np.uint64(j)
        view = blocks.reshape(b, 64 // (2 * j), 2, j)
        lo = view[:, :, 0, :]
        hi = view[:, :, 1, :]
        t = lo >> sh
        t ^= hi
        t &= m
        hi ^= t
        t <<= sh
        lo ^= t
    return blocks


def to_planes(arr: np.ndarray, nbits: int) -> np.ndarray:
    """(V, limbs) uint64 -> (nbits, ceil(V/64)) uint64: plane j holds bit j of every vector."""
    v, n = arr.shape
    words = (v + 63) // 64
    full = min(n, nbits // 64)  # limbs whose 64 bits are all wanted go through the block transpose
    rest = nbits - 64 * full  # wanted bits of the next limb
    parts = []
    if full:
        x = np.zeros((words * 64, full), dtype=np.uint64)
        x[:v] = arr[:, :full]
        blocks = np.ascontiguousarray(x.reshape(words, 64, full).transpose(0, 2, 1)).reshape(words * full, 64)
        transpose64(blocks)  # blocks[w*full + l, c] now holds bit c of limb l of vectors 64w .. 64w + 63
        parts.append(blocks.reshape(words, full * 64).T)
    if rest:
        limb = arr[:, full]
        if rest <= 8:  # a few bits (a carry-out, a narrow operand): pack each one directly
            rows = []
            for j in range(rest):
                bits = ((limb >> np.uint64(j)) & np.uint64(1)).astype(np.uint8)
                packed = np.packbits(bits, bitorder="little")
                packed = np.concatenate([packed, np.zeros(words * 8 - packed.size, dtype=np.uint8)])
                rows.append(packed.view("<u8").astype(np.uint64, copy=False))
            parts.append(np.stack(rows))
        else:
            x = np.zeros(words * 64, dtype=np.uint64)
            x[:v] = limb
            blocks = x.reshape(words, 64)
            transpose64(blocks)
            parts.append(blocks.T[:rest])
    planes = parts[0] if len(parts) == 1 else np.concatenate(parts)
    return np.ascontiguousarray(planes)


def input_planes(vs: VectorSet, carry_in: bool) -> dict[str, np.ndarray]:
    """Bit planes of a, b (and cin) for the evaluator.

    A run of the exhaustive enumeration starting at a multiple of 64 needs no transposition: bit j < 6 of
    the vector index is the same pattern in every word, and bit j >= 6 is constant within a word.
    """
    w = vs.width
    if vs.index0 is None or vs.index0 % 64:
        out = {"a": to_planes(vs.a, w), "b": to_planes(vs.b, w)}
        if carry_in:
            out["cin"] = to_planes(vs.cin.reshape(-1, 1), 1)
        return out
    words = (len(vs) + 63) // 64
    word_index = np.arange(words, dtype=np.uint64) + np.uint64(vs.index0 >> 6)
    ones = np.uint64(0xFFFFFFFFFFFFFFFF)
    index_bits = space_bits(w, carry_in)
    planes = np.empty((index_bits, words), dtype=np.uint64)
    for j in range(index_bits):
        if j < 6:
            planes[j] = np.uint64(sum(1 << r for r in range(64) if (r >> j) & 1))
        else:
            planes[j] = ((word_index >> np.uint64(j - 6)) & np.uint64(1)) * ones
    out = {"a": planes[:w], "b": planes[w : 2 * w]}
    if carry_in:
        out["cin"] = planes[2 * w : 2 * w + 1]
    return out


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
