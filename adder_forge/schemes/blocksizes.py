"""Block sizes for the block carry schemes: the ``block`` key, its resolution against the width, and the
automatic sizing rules with the delay models they minimise.

``block`` is one of
- an integer k >= 1: uniform blocks of k bits from bit 0 upward; when k does not divide the width the
  most significant block takes the remainder, and k >= width is a single block;
- a list of integers >= 1: the block sizes from bit 0 upward, which must add up to the width;
- ``auto`` (where the scheme has a sizing rule): the scheme's rule picks variable sizes.

Sizes are always handed to a scheme as a tuple, least significant block first.
"""

from __future__ import annotations

from typing import Callable

from ..ir.network import META_BLOCK_SIZES
from ..spec.registry import Option, shown, suggest, type_name, value_text, yaml11_hint

AUTO = "auto"


def block_option(default, doc: str, allow_auto: bool, scheme: str) -> Option:
    """The ``block`` key of ``scheme``. ``fail(msg)`` raises a SpecError at the key's value."""
    forms = "an integer, a list of integers or 'auto'" if allow_auto else "an integer or a list of integers"

    def size(v, fail, where: str) -> int:
        if isinstance(v, bool) or not isinstance(v, int):
            fail(f"'block' {where}must be an integer number of bits, got {type_name(v)}" + yaml11_hint(v))
        if v < 1:
            fail(f"'block' {where}must be at least 1 bit, got {shown(v)}")
        return v

    def parse(v, fail):
        if isinstance(v, str):
            if v == AUTO and allow_auto:
                return AUTO
            if v == AUTO:
                fail(f"'block' has no automatic sizing for scheme '{scheme}': give an integer or a list of integers")
            fail(f"'block' must be {forms}, got string '{shown(v)}'" +
                 (yaml11_hint(v) or (suggest(v, [AUTO]) if allow_auto else "")))
        if isinstance(v, (list, tuple)):
            if not v:
                fail("'block' list is empty: give at least one block size")
            return tuple(size(x, fail, f"entry {k} ") for k, x in enumerate(v))
        if isinstance(v, bool) or not isinstance(v, int):
            fail(f"'block' must be {forms}, got {type_name(v)}")
        return size(v, fail, "")

    return Option("block", parse, default, doc, resolved_as=META_BLOCK_SIZES, open_value=AUTO if allow_auto else None)


def validate_block(spec) -> None:
    """Cross-key rule: a list of sizes must cover the width exactly (spec-time, so the error has a place)."""
    v = spec.opt("block")
    if isinstance(v, tuple) and sum(v) != spec.width:
        shown_sizes = value_text(v) if len(v) <= 16 else f"({len(v)} sizes)"
        raise spec.error("block", f"'block' sizes {shown_sizes} add up to {sum(v)} bits but 'width' is {spec.width}")


def resolve(value, width: int, auto_rule: Callable[[int], tuple[int, ...]] | None = None) -> tuple[int, ...]:
    """Block sizes, least significant first, for a parsed ``block`` value."""
    if value == AUTO:
        assert auto_rule is not None
        sizes = auto_rule(width)
    elif isinstance(value, tuple):
        sizes = value
    else:
        k = min(value, width)
        sizes = (k,) * (width // k) + ((width % k,) if width % k else ())
    assert sum(sizes) == width and all(s >= 1 for s in sizes), (value, width, sizes)
    return tuple(sizes)


def wide_note(value, width: int) -> str | None:
    """The note a build carries when a uniform ``block`` is wider than the adder (a sweep over widths with one
    block size hits this): the scheme then has a single block, which the designer should see, not guess."""
    if isinstance(value, int) and not isinstance(value, bool) and value > width:
        return f"block {value} is wider than the {width}-bit adder: a single block of {width} bits"
    return None


def block_bounds(sizes) -> list[tuple[int, int]]:
    """(lo, hi) bit ranges of the blocks, hi exclusive."""
    out, lo = [], 0
    for s in sizes:
        out.append((lo, lo + s))
        lo += s
    return out


# -- carry-skip ------------------------------------------------------------------------------------------------
def skip_delay(sizes) -> int:
    """Unit-delay estimate of a one-level carry-skip adder: one unit per bit of ripple, one per skip.

    The worst sensitizable path starts with a carry generated at the bottom of block i, ripples through
    the k_i - 1 bits above it, skips blocks i+1 .. j-1 and ripples through k_j - 1 bits of block j:
    D = max over i < j of (k_i - 1) + (j - i - 1) + (k_j - 1), and k - 1 for a single block. For uniform
    blocks this is the textbook D(k) = 2(k - 1) + (n/k - 2) (Parhami, "Computer Arithmetic"; Koren,
    "Computer Arithmetic Algorithms"). The carry-in and carry-out paths are shorter whenever the end
    blocks have two bits or more, so the model leaves them out, as the textbooks do.
    """
    best = 0
    lead = None  # max over i < j of (k_i - 1) - i, for the running j
    for j, k in enumerate(sizes):
        best = max(best, k - 1) if lead is None else max(best, k - 1, lead + (j - 1) + (k - 1))
        lead = k - 1 - j if lead is None else max(lead, k - 1 - j)
    return best


def _skip_plan(width: int, limit: int) -> tuple[int, ...] | None:
    """Fewest blocks whose skip_delay is at most ``limit`` and whose sizes add up to at least ``width``.

    With x_i = k_i - 1 the rule is x_i + x_j + (j - i - 1) <= limit for i < j, and x_i <= limit. Blocks are
    placed from bit 0 up; the state is M = max over placed blocks of (x_i - i), which is in 0 .. limit, so
    block j with x is legal when M + x + j - 1 <= limit, and leads to M' = max(M, x - j). A dynamic
    programme over M keeps the most bits for each state, one block count at a time (O(limit) per block
    with a running maximum); the first block count that reaches ``width`` is the answer.
    """
    cur: list[tuple[int, tuple] | None] = [(x + 1, (x, ())) for x in range(limit + 1)]  # block 0
    j = 1
    while True:
        top = max((v for v in cur if v is not None), key=lambda v: v[0], default=None)
        if top is None:
            return None
        if top[0] >= width:
            return tuple(x + 1 for x in _unchain(top[1]))
        if j > limit + 1:  # no further block can be legal (M >= 0)
            return None
        nxt: list[tuple[int, tuple] | None] = [None] * (limit + 1)
        for m, v in enumerate(cur):  # keep M: the largest x with x - j <= M
            if v is None:
                continue
            x = min(limit + 1 - j - m, m + j, limit)
            if x >= 0:
                _better(nxt, m, (v[0] + x + 1, (x, v[1])))
        prefix_best, run = [], None  # prefix_best[b] = the best of cur[0..b]
        for v in cur:
            if v is not None and (run is None or v[0] > run[0]):
                run = v
            prefix_best.append(run)
        for m2 in range(1, limit + 1):  # raise M to m2 with x = m2 + j: needs M < m2 and M + x + j - 1 <= limit
            x = m2 + j
            bound = min(m2 - 1, limit + 1 - 2 * j - m2)
            if x > limit or bound < 0:
                break
            best = prefix_best[bound]
            if best is not None:
                _better(nxt, m2, (best[0] + x + 1, (x, best[1])))
        cur = nxt
        j += 1


def _better(table, m, cand) -> None:
    if table[m] is None or cand[0] > table[m][0]:
        table[m] = cand


def _unchain(chain: tuple) -> list[int]:
    out = []
    while chain:
        out.append(chain[0])
        chain = chain[1]
    return out[::-1]


def skip_auto(width: int) -> tuple[int, ...]:
    """Variable carry-skip blocks minimising ``skip_delay`` (Oklobdzija and Barnes 1985 size variable blocks
    the same way: small at both ends, large in the middle), with the fewest blocks at that delay.

    The smallest feasible delay is found by doubling then bisecting (feasibility is monotone in the
    delay); surplus bits are then taken off the largest blocks, which cannot raise any path.
    """
    hi = 1
    while _skip_plan(width, hi) is None:
        hi *= 2
    lo = -1  # infeasible (no delay below 0)
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if _skip_plan(width, mid) is None:
            lo = mid
        else:
            hi = mid
    sizes = list(_skip_plan(width, hi))
    extra = sum(sizes) - width
    while extra:
        k = max(range(len(sizes)), key=lambda i: (sizes[i], i))
        sizes[k] -= 1
        extra -= 1
    assert skip_delay(sizes) <= hi
    return tuple(sizes)


# -- carry-select ----------------------------------------------------------------------------------------------
# Arrival levels in cells.py's units (AO21 and MUX2 two levels, the rest one), with the carry-in at 0:
# the first block ripples from the carry-in, so its carry out is ready at 1 + 2k (g at 1, k AO21s); a
# conditional block's carry out for an assumed carry is ready at 2k - 1 (its first carry is g or a | b, one
# level, then k - 1 AO21s); each block's carry select is an AO21, 2 levels after the later of its inputs.
def select_carry_levels(sizes) -> int:
    """Arrival level of the carry out of a carry-select adder with these blocks (carry-in present)."""
    c = 1 + 2 * sizes[0]
    for k in sizes[1:]:
        c = max(c, 2 * k - 1) + 2
    return c


def select_auto(width: int) -> tuple[int, ...]:
    """Increasing carry-select blocks (common practice: each block as wide as it can be without its
    conditional carry arriving after the select chain): given the first block's size s, block j + 1 gets
    the largest k with 2k - 1 <= the carry level into it, which makes the sizes s, s + 1, s + 2, ...; the
    most significant block takes what is left. The first size is the one with the earliest carry out
    (``select_carry_levels``), ties to the fewest blocks.
    """
    best = None
    for s in range(1, width + 1):
        sizes, c = [s], 1 + 2 * s
        while sum(sizes) < width:
            k = min((c + 1) // 2, width - sum(sizes))
            sizes.append(k)
            c = max(c, 2 * k - 1) + 2
        key = (select_carry_levels(sizes), len(sizes))
        if best is None or key < best[0]:
            best = (key, tuple(sizes))
        if len(sizes) == 1:
            break
    return best[1]
