"""A prefix network checked on its own, without the gates around it.

Two checks, both independent of how the network was built:
- ``value_spans`` evaluates the graph symbolically: every value is the span of columns it covers. A cell must
  combine a value of its own column with one that reaches its gap (the carry operator is associative,
  Brent and Kung 1982, and idempotent, common practice, so adjacent or overlapping spans give the union),
  and must cover exactly the span it records. A column whose span reaches 0 then holds G[i:0] for every
  input, so this check is exhaustive over the input space.
- ``check_graph`` evaluates the graph bit-parallel (one Python integer per signal, one bit per vector) on
  generate/propagate vectors derived from operands and compares each output column with the carries of
  the add interface's reference (Python integer addition, ``ir.interface``). It also catches a gray cell
  whose propagate some cell reads.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..ir.interface import adder
from ..ir.network import PrefixGraph
from ..schemes.prefix_networks import final_refs


class PrefixError(AssertionError):
    """The graph is not a valid prefix network."""


def value_spans(graph: PrefixGraph) -> list[tuple[int, int]]:
    """(top, bottom) column of every cell's value; raises PrefixError on any inconsistency."""
    out: list[tuple[int, int]] = []

    def span(r: int, k: int) -> tuple[int, int]:
        if r < 0:
            c = -1 - r
            if not 0 <= c < graph.inputs:
                raise PrefixError(f"cell {k}: input column {c} out of range")
            return c, c
        if r >= k:
            raise PrefixError(f"cell {k} reads cell {r}, which comes later")
        return out[r]

    for k, c in enumerate(graph.cells):
        (ht, hb), (lt, lb) = span(c.hi, k), span(c.lo, k)
        if ht != c.col:
            raise PrefixError(f"cell {k} in column {c.col} takes its upper input from column {ht}")
        if not (lt >= hb - 1 and lt < ht and lb < hb):
            raise PrefixError(f"cell {k}: [{ht}:{hb}] and [{lt}:{lb}] leave a gap or add nothing")
        if lb != c.low:
            raise PrefixError(f"cell {k} says [{c.col}:{c.low}] but computes [{c.col}:{lb}]")
        for r in (c.hi, c.lo):
            if r >= 0 and graph.cells[r].level >= c.level:
                raise PrefixError(f"cell {k} at level {c.level} reads cell {r} at level {graph.cells[r].level}")
        out.append((ht, lb))
    return out


def longest_chain(graph: PrefixGraph) -> int:
    """The longest chain of cells (the logical depth; rows can be more, as in Brent-Kung)."""
    d: list[int] = []
    for c in graph.cells:
        d.append(1 + max(d[r] if r >= 0 else 0 for r in (c.hi, c.lo)))
    return max(d, default=0)


def complete_columns(graph: PrefixGraph) -> list[int]:
    """Columns whose last value is G[i:0]."""
    sp = value_spans(graph)
    return [c for c, r in enumerate(final_refs(graph)) if (sp[r][1] if r >= 0 else c) == 0]


def evaluate(graph: PrefixGraph, gen: list[int], prop: list[int | None]) -> list[int]:
    """Group generate of every column's last value; ``prop[c]`` may be None where it must not be read."""
    G: list[int] = []
    P: list[int | None] = []

    def val(r: int) -> tuple[int, int | None]:
        return (gen[-1 - r], prop[-1 - r]) if r < 0 else (G[r], P[r])

    for k, c in enumerate(graph.cells):
        (gh, ph), (gl, pl) = val(c.hi), val(c.lo)
        if ph is None or (not c.gray and pl is None):
            raise PrefixError(f"cell {k} [{c.col}:{c.low}] reads a propagate that is not there (a gray cell's)")
        G.append(gh | ph & gl)
        P.append(None if c.gray else ph & pl)
    return [val(r)[0] for r in final_refs(graph)]


@dataclass(frozen=True)
class PrefixCheck:
    vectors: int
    bad_columns: tuple[int, ...]

    @property
    def ok(self) -> bool:
        return self.vectors > 0 and not self.bad_columns


def bit_columns(values: list[int], nbits: int) -> list[int]:
    """Transpose: the integer whose bit v is bit j of values[v], for every j < nbits."""
    nbytes = max(1, (nbits + 7) // 8)
    raw = b"".join(x.to_bytes(nbytes, "little") for x in values)
    bits = np.unpackbits(np.frombuffer(raw, np.uint8).reshape(len(values), nbytes), axis=1, bitorder="little")
    packed = np.packbits(np.ascontiguousarray(bits[:, :nbits].T), axis=1, bitorder="little")
    return [int.from_bytes(row.tobytes(), "little") for row in packed]


@dataclass(frozen=True)
class Stimulus:
    """Column inputs of a width-bit adder's prefix network for a set of vectors, and the expected outputs."""

    width: int
    carry_in: bool
    ling: bool
    count: int
    gen: list
    prop: list
    want: list


def stimulus(width: int, carry_in: bool, vectors, *, ling: bool = False) -> Stimulus:
    """The network's inputs and expected outputs for ``vectors`` (a, b, cin), by the add reference.

    Columns: bit i is column i, or column i + 1 after the carry-in's column 0. Column inputs are
    (g_i, p_i), or with ``ling`` (g_i, t_i-1), Ling 1981's shifted transmits; column i then holds the
    pseudo-carry H_i = g_i | c_i instead of the carry c_i+1.
    """
    vectors = list(vectors)
    v = len(vectors)
    a = bit_columns([x[0] for x in vectors], width)
    b = bit_columns([x[1] for x in vectors], width)
    cin = bit_columns([x[2] if carry_in else 0 for x in vectors], 1)[0]
    ref = adder(width, carry_in, True)  # {cout, sum} by the reference; the carry into bit i is bit i of it ^ a ^ b
    carries = bit_columns([ref.expected({"a": x, "b": y, "cin": c}) ^ x ^ y for x, y, c in vectors], width + 1)
    g = [a[i] & b[i] for i in range(width)]
    if ling:
        prop = [None] + [a[i] | b[i] for i in range(width - 1)]  # t_i-1 for bit i
        want = [g[i] | carries[i] for i in range(width)]  # H_i
    else:
        prop = [a[i] ^ b[i] for i in range(width)]
        want = carries[1:]  # c_i+1
    if carry_in:
        ones = (1 << v) - 1
        g = [cin] + g
        prop = [None] + ([ones] + prop[1:] if ling else prop)  # Ling: t_-1 = 1, so H_0 = g_0 | cin
        want = [cin] + want
    return Stimulus(width, carry_in, ling, v, g, prop, want)


def check_graph(graph: PrefixGraph, stim: Stimulus, outputs=None) -> PrefixCheck:
    """Evaluate ``graph`` as the carry network the stimulus is for and compare every output column (all
    columns unless ``outputs`` is given) with the expected values."""
    assert len(stim.gen) == graph.inputs, (len(stim.gen), graph.inputs)
    got = evaluate(graph, stim.gen, stim.prop)
    cols = range(graph.inputs) if outputs is None else outputs
    return PrefixCheck(stim.count, tuple(c for c in cols if got[c] != stim.want[c]))
