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

from ..ir.interface import sign_overflow


def limbs(width: int) -> int:
    return (width + 63) // 64


@dataclass(frozen=True)
class VectorSet:
    width: int
    a: np.ndarray  # (V, limbs) uint64
    b: np.ndarray  # (V, limbs) uint64
    cin: np.ndarray  # (V,) uint64, 0 or 1
    index0: int | None = None  # set when the vectors are the exhaustive enumeration from this index on
    sub: np.ndarray | None = None  # (V,) uint64, 0 or 1: the add-subtract select, when the adder has one

    def __len__(self) -> int:
        return self.a.shape[0]

    def part(self, start: int, stop: int) -> "VectorSet":
        """Vectors start .. stop - 1 (start a multiple of 64 keeps the exhaustive fast path)."""
        index0 = None if self.index0 is None else self.index0 + start
        sub = None if self.sub is None else self.sub[start:stop]
        return VectorSet(self.width, self.a[start:stop], self.b[start:stop], self.cin[start:stop], index0, sub)

    def ints(self, k: int) -> tuple[int, ...]:
        """(a, b, cin), or (a, b, cin, sub) when the vectors drive a sub input."""
        t = (_limbs_to_int(self.a[k]), _limbs_to_int(self.b[k]), int(self.cin[k]))
        return t if self.sub is None else t + (int(self.sub[k]),)

    def values(self, k: int) -> dict[str, int]:
        """Vector k as port role -> value (the interface's reference takes this)."""
        return dict(zip(("a", "b", "cin", "sub"), self.ints(k)))

    def triples(self) -> Iterator[tuple[int, ...]]:
        for k in range(len(self)):
            yield self.ints(k)


def _limbs_to_int(row: np.ndarray) -> int:
    return int.from_bytes(row.astype("<u8").tobytes(), "little")


def _ints_to_limbs(xs: list[int], width: int) -> np.ndarray:
    n = limbs(width)
    raw = b"".join(x.to_bytes(8 * n, "little") for x in xs)
    return np.frombuffer(raw, dtype="<u8").reshape(len(xs), n).astype(np.uint64)


def from_triples(width: int, triples: list[tuple[int, ...]]) -> VectorSet:
    """Vectors from (a, b, cin) or (a, b, cin, sub) tuples (all of one length)."""
    a = _ints_to_limbs([t[0] for t in triples], width)
    b = _ints_to_limbs([t[1] for t in triples], width)
    cin = np.array([t[2] for t in triples], dtype=np.uint64)
    sub = np.array([t[3] for t in triples], dtype=np.uint64) if triples and len(triples[0]) > 3 else None
    return VectorSet(width, a, b, cin, None, sub)


def space_bits(width: int, carry_in: bool, sub: bool = False) -> int:
    return 2 * width + (1 if carry_in else 0) + (1 if sub else 0)


def exhaustive_chunks(width: int, carry_in: bool, chunk: int = 1 << 20, sub: bool = False) -> Iterator[VectorSet]:
    """Every input combination, in index order (a in the low bits, then b, then cin, then sub)."""
    bits = space_bits(width, carry_in, sub)
    total = 1 << bits
    if bits > 63:
        raise ValueError("input space too large for exhaustive enumeration")
    mask = np.uint64((1 << width) - 1)
    for start in range(0, total, chunk):
        k = np.arange(start, min(total, start + chunk), dtype=np.uint64)
        a = (k & mask).reshape(-1, 1)
        b = ((k >> np.uint64(width)) & mask).reshape(-1, 1)
        cin = (k >> np.uint64(2 * width)) & np.uint64(1) if carry_in else np.zeros_like(k)
        s = (k >> np.uint64(bits - 1)) & np.uint64(1) if sub else None
        yield VectorSet(width, a, b, cin, start, s)


def directed(width: int, carry_in: bool, operation: str = "add") -> list[tuple[int, ...]]:
    """Carry-chain patterns (common practice): extremes, all-ones plus one, alternating bits, and a single
    propagate run of every length, started by a generate (or the carry-in) just below it.

    The patterns are written for the addend the carry network sees: a subtraction adds ~b, so its b is
    the pattern inverted, and add-subtract gets every pattern once as an add (sub = 0) and once as a
    subtraction (sub = 1), as (a, b, cin, sub).
    """
    if operation == "add":
        return _directed_add(width, carry_in)
    m = (1 << width) - 1
    if operation == "subtract":
        # without a carry-in port the carry into the network is 1: the patterns are those of a carry-in
        return _uniq([(a, y ^ m, c if carry_in else 0) for a, y, c in _directed_add(width, True)])
    plus = [(a, y, c, 0) for a, y, c in _directed_add(width, carry_in)]
    minus = [(a, y ^ m, c if carry_in else 0, 1) for a, y, c in _directed_add(width, True)]
    return _uniq(plus + minus)


def _uniq(items: list) -> list:
    seen, out = set(), []
    for t in items:
        if t not in seen:
            seen.add(t)
            out.append(t)
    return out


def _directed_add(width: int, carry_in: bool) -> list[tuple[int, int, int]]:
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


def random_triples(width: int, carry_in: bool, count: int, seed: int, sub: bool = False) -> list[tuple[int, ...]]:
    rng = random.Random(seed)
    if sub:
        return [(rng.getrandbits(width), rng.getrandbits(width), rng.getrandbits(1) if carry_in else 0,
                 rng.getrandbits(1)) for _ in range(count)]
    return [(rng.getrandbits(width), rng.getrandbits(width), rng.getrandbits(1) if carry_in else 0)
            for _ in range(count)]


def random_set(width: int, carry_in: bool, count: int, seed: int, sub: bool = False) -> VectorSet:
    """The vectors of ``random_triples(width, carry_in, count, seed)``, drawn in bulk.

    CPython's ``getrandbits(k)`` takes ceil(k/32) 32-bit Mersenne Twister outputs, least significant
    first, and drops the low bits of the last one when k is not a multiple of 32; one call for 32·m bits
    returns the next m outputs unchanged. So one bulk call, cut into per-triple words, gives exactly the
    triples of the call-by-call loop (a test compares the two) without a Python loop per vector.
    """
    if sys.byteorder != "little" or count == 0:
        return from_triples(width, random_triples(width, carry_in, count, seed, sub))
    rng = random.Random(seed)
    wpv = (width - 1) // 32 + 1  # 32-bit words per operand
    per = 2 * wpv + (1 if carry_in else 0) + (1 if sub else 0)
    raw = rng.getrandbits(32 * per * count).to_bytes(4 * per * count, "little")
    top = width - 32 * (wpv - 1)  # bits taken from the last word of an operand
    n = limbs(width)
    if top == 32 and wpv % 2 == 0:
        # Whole 64-bit limbs: an operand's limbs are its bytes as they lie in the stream.
        rec = np.frombuffer(raw, dtype=np.uint8).reshape(count, 4 * per)

        def operand(first: int) -> np.ndarray:  # a strided view: the copy happens where it is read
            return rec[:, 4 * first : 4 * (first + wpv)].view("<u8")
    else:
        words = np.frombuffer(raw, dtype="<u4").reshape(count, per)

        def operand(first: int) -> np.ndarray:
            out = np.zeros((count, n), dtype=np.uint64)
            for j in range(wpv):
                w = words[:, first + j].astype(np.uint64)
                if j == wpv - 1 and top < 32:
                    w >>= np.uint64(32 - top)
                if j % 2:
                    w <<= np.uint64(32)
                out[:, j // 2] |= w
            return out

    a = operand(0)
    b = operand(wpv)
    tail = np.frombuffer(raw, dtype="<u4").reshape(count, per)
    cin = (tail[:, 2 * wpv] >> 31).astype(np.uint64) if carry_in else np.zeros(count, dtype=np.uint64)
    s = (tail[:, per - 1] >> 31).astype(np.uint64) if sub else None
    return VectorSet(width, a, b, cin, None, s)


@dataclass(frozen=True)
class Plan:
    """Which vectors a check uses: exhaustive when the space is small enough, else directed + random.

    ``operation`` is the interface's: it decides whether vectors drive a ``sub`` input and which
    directed patterns exercise the carry chain."""

    width: int
    carry_in: bool
    exhaustive: bool
    random_count: int
    seed: int
    operation: str = "add"

    @property
    def sub(self) -> bool:
        return self.operation == "add-subtract"

    @property
    def bits(self) -> int:
        return space_bits(self.width, self.carry_in, self.sub)

    def describe(self) -> str:
        if self.exhaustive:
            return f"exhaustive, 2^{self.bits} vectors"
        return f"directed carry-chain patterns + {self.random_count} random (seed {self.seed})"

    @property
    def count(self) -> int:
        """How many vectors ``chunks()`` yields, without drawing them."""
        if self.exhaustive:
            return 1 << self.bits
        return len(directed(self.width, self.carry_in, self.operation)) + self.random_count

    def chunks(self, chunk: int = 1 << 20) -> Iterator[VectorSet]:
        if self.exhaustive:
            yield from exhaustive_chunks(self.width, self.carry_in, chunk, self.sub)
            return
        yield from_triples(self.width, directed(self.width, self.carry_in, self.operation))
        rng_seed = self.seed
        left = self.random_count
        part = 0
        while left > 0:
            n = min(left, max(1, chunk // max(1, limbs(self.width))))
            yield random_set(self.width, self.carry_in, n, rng_seed * 1000003 + part, self.sub)
            left -= n
            part += 1

    def triples(self) -> list[tuple[int, ...]]:
        out = []
        for vs in self.chunks():
            out.extend(vs.triples())
        return out


def make_plan(width: int, carry_in: bool, exhaustive_limit: int, random_count: int, seed: int,
              operation: str = "add") -> Plan:
    bits = space_bits(width, carry_in, operation == "add-subtract")
    exhaustive = bits <= 62 and (1 << bits) <= exhaustive_limit
    return Plan(width, carry_in, exhaustive, random_count, seed, operation)


def plan_for(iface, exhaustive_limit: int, random_count: int, seed: int) -> Plan:
    """The plan for an interface's data inputs."""
    return make_plan(iface.width, iface.has("cin"), exhaustive_limit, random_count, seed, iface.operation)


def _limb_add(x: np.ndarray, y: np.ndarray, carry: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """One limb of schoolbook multi-precision addition: (x + y + carry mod 2^64, carry out)."""
    s = x + y
    c1 = s < x
    s2 = s + carry
    return s2, (c1 | (s2 < s)).astype(np.uint64)


def expected(vs: VectorSet, iface) -> np.ndarray:
    """The interface's reference outputs for every vector, packed as ``iface.pack_outputs`` packs them
    (sum in the low bits, then cout and overflow when present): (V, limbs(out_bits)) uint64.

    The same arithmetic as ``Interface.reference`` on numpy words: the operand conditioning is the
    interface's own (``condition``); the addition is one uint64 addition up to 62 bits, and above that
    limb by limb with the carry between limbs (schoolbook multi-precision addition); overflow is the
    sign rule (same-signed addends, a result of the other sign; common practice). A test holds this equal
    to the Python reference.
    """
    w = vs.width
    cin = vs.cin if iface.has("cin") else None
    sub = vs.sub if iface.has("sub") else None
    extra = [p.role for p in iface.outputs if p.role != "sum"]
    n_in, n_out = limbs(w), limbs(iface.out_bits)
    one = np.uint64(1)
    if w <= 62:
        return iface.reference_words(vs.a[:, 0], vs.b[:, 0], cin, sub).reshape(-1, 1)
    out = np.zeros((len(vs), n_out), dtype=np.uint64)
    top_bits = w - 64 * (n_in - 1)
    carry = np.zeros(len(vs), dtype=np.uint64)
    ys = []
    for k in range(n_in):
        m = np.uint64(0xFFFFFFFFFFFFFFFF if k < n_in - 1 else (1 << top_bits) - 1)
        sub_k = sub
        y, c = iface.condition(vs.b[:, k], cin, sub_k, m)
        if k == 0:
            carry = np.asarray(c, dtype=np.uint64) + np.zeros(len(vs), dtype=np.uint64)
        out[:, k], carry = _limb_add(vs.a[:, k], y, carry)
        ys.append(y)
    # the top limb holds top_bits bits: its carry out of bit w - 1 sits above them
    hi = out[:, n_in - 1]
    if top_bits < 64:
        cout = (hi >> np.uint64(top_bits)) & one
        hi &= np.uint64((1 << top_bits) - 1)
        out[:, n_in - 1] = hi
    else:
        cout = carry
    sign = np.uint64(top_bits - 1)
    bits = []
    for role in extra:
        bits.append(cout if role == "cout" else
                    sign_overflow(vs.a[:, n_in - 1] >> sign, ys[-1] >> sign, hi >> sign) & one)
    for j, bit in enumerate(bits):
        at = w + j
        out[:, at // 64] |= bit << np.uint64(at % 64)
    return out


def expected_slow(vs: VectorSet, iface) -> np.ndarray:
    """The same reference one vector at a time through ``Interface.expected`` (for tests of ``expected``)."""
    return _ints_to_limbs([iface.expected(vs.values(k)) for k in range(len(vs))], iface.out_bits)


# -- bit planes ---------------------------------------------------------------------------------------------
_BIT_SWAPS = ((7, 0x00AA00AA00AA00AA), (14, 0x0000CCCC0000CCCC), (28, 0x00000000F0F0F0F0))
_SEGMENT = 1 << 15  # words per pass, so that the working set stays in cache


def transpose8(words: np.ndarray) -> np.ndarray:
    """Transpose the 8x8 bit matrix in every uint64 of ``words`` (byte r = row r), in place: afterwards bit r
    of byte c is what bit c of byte r was. Three rounds of delta swaps (common practice; Warren, "Hacker's
    Delight", 2002, ch. 7)."""
    flat = words.reshape(-1)
    tmp = np.empty(min(_SEGMENT, flat.size), dtype=np.uint64)
    for k in range(0, flat.size, _SEGMENT):
        x = flat[k : k + _SEGMENT]
        t = tmp[: x.size]
        for shift, mask in _BIT_SWAPS:
            np.right_shift(x, np.uint64(shift), out=t)
            t ^= x
            t &= np.uint64(mask)
            x ^= t
            t <<= np.uint64(shift)
            x ^= t
    return words


def _limb_planes(limb: np.ndarray, nbits: int) -> np.ndarray:
    """(V,) uint64 with V a multiple of 64 -> (nbits, V/64) planes of its low nbits bits.

    Bytes first: row k of the byte matrix holds byte k of every vector, so eight consecutive vectors' byte
    k form one uint64; transposing that 8x8 bit matrix leaves in its byte b the bit 8k + b of those eight
    vectors, and gathering byte b of every word gives plane 8k + b.
    """
    v = limb.shape[0]
    rows = (nbits + 7) // 8
    by = np.ascontiguousarray(limb.view(np.uint8).reshape(v, 8)[:, :rows].T)  # (rows, V)
    words = by.view(np.uint64)  # (rows, V/8): word g of row k = byte k of vectors 8g .. 8g + 7
    transpose8(words)
    out = np.ascontiguousarray(words.view(np.uint8).reshape(rows, v // 8, 8).transpose(0, 2, 1))
    return out.reshape(rows * 8, v // 8).view(np.uint64)[:nbits]


def to_planes(arr: np.ndarray, nbits: int) -> np.ndarray:
    """(V, limbs) uint64 -> (nbits, ceil(V/64)) uint64: plane j holds bit j of every vector."""
    v, n = arr.shape
    words = (v + 63) // 64
    parts = []
    for l in range((nbits + 63) // 64):
        limb = np.zeros(words * 64, dtype=np.uint64)
        limb[:v] = arr[:, l]
        parts.append(_limb_planes(limb, min(64, nbits - 64 * l)))
    planes = parts[0] if len(parts) == 1 else np.concatenate(parts)
    return np.ascontiguousarray(planes)


def input_planes(vs: VectorSet, carry_in: bool, sub: bool = False) -> dict[str, np.ndarray]:
    """Bit planes of a, b (and cin, sub) for the evaluator.

    A run of the exhaustive enumeration starting at a multiple of 64 needs no transposition: bit j < 6 of
    the vector index is the same pattern in every word, and bit j >= 6 is constant within a word.
    """
    w = vs.width
    if vs.index0 is None or vs.index0 % 64:
        out = {"a": to_planes(vs.a, w), "b": to_planes(vs.b, w)}
        if carry_in:
            out["cin"] = to_planes(vs.cin.reshape(-1, 1), 1)
        if sub:
            out["sub"] = to_planes(vs.sub.reshape(-1, 1), 1)
        return out
    words = (len(vs) + 63) // 64
    word_index = np.arange(words, dtype=np.uint64) + np.uint64(vs.index0 >> 6)
    ones = np.uint64(0xFFFFFFFFFFFFFFFF)
    index_bits = space_bits(w, carry_in, sub)
    planes = np.empty((index_bits, words), dtype=np.uint64)
    for j in range(index_bits):
        if j < 6:
            planes[j] = np.uint64(sum(1 << r for r in range(64) if (r >> j) & 1))
        else:
            planes[j] = ((word_index >> np.uint64(j - 6)) & np.uint64(1)) * ones
    out = {"a": planes[:w], "b": planes[w : 2 * w]}
    if carry_in:
        out["cin"] = planes[2 * w : 2 * w + 1]
    if sub:
        out["sub"] = planes[index_bits - 1 : index_bits]
    return out


def iface_planes(vs: VectorSet, iface) -> dict[str, np.ndarray]:
    """``input_planes`` for the data inputs of an interface."""
    return input_planes(vs, iface.has("cin"), iface.has("sub"))


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


# -- the exhaustive enumeration as bit planes, never as vectors ----------------------------------------------
def _low_six_tables() -> np.ndarray:
    """(7, 64) words: row j < 6, column x: the plane of bit j of x + r over the 64 lanes r of a word; row 6,
    column x: the lanes where x + r >= 64 (a carry out of the low six bits). By Python integer addition."""
    t = np.zeros((7, 64), dtype=np.uint64)
    for x in range(64):
        rows = [0] * 7
        for r in range(64):
            s = x + r
            for j in range(6):
                rows[j] |= ((s >> j) & 1) << r
            rows[6] |= (s >> 6) << r
        t[:, x] = rows
    return t


_LOW_SIX = _low_six_tables()
ONES = np.uint64(0xFFFFFFFFFFFFFFFF)


class ExhaustiveBlocks:
    """Every input of a ``width``-bit adder (a in the low index bits, then b, then cin, as in
    ``exhaustive_chunks``), as bit planes in blocks of ``words`` 64-bit words, with the reference.

    Lane r of word w is vector 64 w + r. Index bits 0..5 are the same pattern in every word (0xAAAA...,
    0xCCCC..., ...), bits 6 .. 6 + log2(words) - 1 the same in every block (blocks start at multiples of
    ``words``), and the bits above are constant over a block: so a block's planes are fixed ones plus a
    few all-0 or all-1 planes, and no vector is ever held. Needs width >= 6 (a word's lanes then differ
    only in a's low six bits).

    The reference is integer addition a word at a time: the 64 vectors of word w share everything but a's
    low six bits, so their sums are base + r with base = (a - r) + b + cin; bits below 6 of base + r come
    from a table of x + r (x = base mod 64), and bit j >= 6 is bit j of base, or of base + 64 in the lanes
    where x + r carries out of the low six bits.
    """

    def __init__(self, width: int, carry_in: bool, words: int = 1 << 13):
        if width < 6:
            raise ValueError("the bit-sliced enumeration needs a width of at least 6")
        self.width, self.carry_in = width, carry_in
        self.bits = space_bits(width, carry_in)
        if self.bits > 63:
            raise ValueError("input space too large for exhaustive enumeration")
        total_words = 1 << (self.bits - 6)
        self.words = min(words, total_words)
        assert self.words & (self.words - 1) == 0, "block words must be a power of two"
        self.blocks = total_words // self.words
        self.fixed_bits = 6 + self.words.bit_length() - 1  # index bits that do not change from block to block
        self._lane_words = np.arange(self.words, dtype=np.uint64)

    def fixed_planes(self) -> list[np.ndarray]:
        """Planes of index bits 0 .. fixed_bits - 1 (the same in every block)."""
        out = []
        for j in range(min(self.fixed_bits, self.bits)):
            if j < 6:
                out.append(np.full(self.words, np.uint64(sum(1 << r for r in range(64) if (r >> j) & 1))))
            else:
                out.append(((self._lane_words >> np.uint64(j - 6)) & np.uint64(1)) * ONES)
        return out

    def block_bits(self, block: int) -> list[int]:
        """Values (0 or 1) of index bits fixed_bits .. bits - 1 over the whole of ``block``."""
        return [(block >> (j - self.fixed_bits)) & 1 for j in range(self.fixed_bits, self.bits)]

    def port_bit(self, j: int) -> tuple[str, int]:
        """Which input bit index bit j is."""
        w = self.width
        return ("a", j) if j < w else ("b", j - w) if j < 2 * w else ("cin", 0)

    def vector(self, index: int) -> tuple[int, int, int]:
        m = (1 << self.width) - 1
        return index & m, (index >> self.width) & m, index >> (2 * self.width)

    def mismatches(self, block: int, got: list[np.ndarray], scratch: "BlockScratch") -> np.ndarray:
        """Lanes of ``block`` where ``got`` (output planes, sum bits then cout if present) differs from
        a + b + cin: a (words,) uint64 mask, owned by ``scratch``."""
        w = self.width
        sc = scratch
        np.add(self._lane_words, np.uint64(block * self.words), out=sc.word)  # word index of each column
        base, t, u = sc.base, sc.t, sc.u
        np.bitwise_and(sc.word, np.uint64((1 << (w - 6)) - 1), out=base)  # a without its low six bits
        np.left_shift(base, np.uint64(6), out=base)
        np.right_shift(sc.word, np.uint64(w - 6), out=t)
        np.bitwise_and(t, np.uint64((1 << w) - 1), out=t)  # b
        base += t
        if self.carry_in:
            np.right_shift(sc.word, np.uint64(2 * w - 6), out=t)  # cin (the top index bit)
            base += t
        np.bitwise_and(base, np.uint64(63), out=sc.low)
        acc = sc.acc
        acc[:] = 0
        for j, plane in enumerate(got[:6]):
            np.take(_LOW_SIX[j], sc.low.view(np.int64), out=t)
            t ^= plane
            acc |= t
        if len(got) > 6:
            carry, flips = sc.carry, sc.flips
            np.take(_LOW_SIX[6], sc.low.view(np.int64), out=carry)
            np.add(base, np.uint64(64), out=flips)
            flips ^= base  # the bits that a carry out of the low six bits changes
            ti, ui = t.view(np.int64), u.view(np.int64)
            for j, plane in enumerate(got[6:], start=6):
                # expected = bit j of base where no carry, of base + 64 where one: bit j of base in every
                # lane (moved to the top, then copied down by an arithmetic shift), flipped where both the
                # carry and bit j of ``flips`` are set
                np.left_shift(flips, np.uint64(63 - j), out=u)
                np.right_shift(ui, 63, out=ui)
                u &= carry
                np.left_shift(base, np.uint64(63 - j), out=t)
                np.right_shift(ti, 63, out=ti)
                u ^= t
                u ^= plane
                acc |= u
        return acc


class BlockScratch:
    """One thread's work arrays for ``ExhaustiveBlocks.mismatches``."""

    def __init__(self, words: int):
        self.word, self.base, self.flips, self.low, self.carry, self.t, self.u, self.acc = (
            np.empty(words, dtype=np.uint64) for _ in range(8))
