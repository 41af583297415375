"""Pieces every scheme shares: ports, bitwise generate/propagate, the sum stage and the outputs."""

from __future__ import annotations

from dataclasses import dataclass

from ..ir.builder import Builder
from ..ir.interface import Interface, of_spec
from ..ir.network import META_SCHEME, Network, PrefixGraph
from ..spec.registry import value_text


@dataclass
class Frame:
    """The ports of one adder under construction, as the carry network sees them: ``build`` is its Builder,
    ``a`` operand a, ``b`` the addend (operand b; ~b for subtract, b ^ sub for add-subtract) and ``cin``
    the carry into the network (the carry-in port, else 0 for add, 1 for subtract, ``sub`` for
    add-subtract). Schemes build on these alone, so every scheme gets every operation from one network."""

    build: Builder
    a: list[int]
    b: list[int]
    cin: int
    width: int
    spec: object
    interface: Interface


def start(spec) -> Frame:
    """The input ports of the spec's interface, in its order, and the operand conditioning."""
    iface = of_spec(spec)
    build = Builder(spec.name)
    a = build.input("a", spec.width)
    raw = build.input("b", spec.width)
    cin = build.input("cin", 1, scalar=True)[0] if iface.has("cin") else None
    sub = build.input("sub", 1, scalar=True)[0] if iface.has("sub") else None
    if iface.operation == "add":
        b = raw
    elif iface.operation == "subtract":  # a - b = a + ~b + 1
        b = [build.NOT(x, f"nb{i}", "operand") for i, x in enumerate(raw)]
    else:  # one network for both: b ^ sub into generate/propagate, and sub as the +1 of subtraction
        b = [build.XOR(x, sub, f"bx{i}", "operand") for i, x in enumerate(raw)]
    if cin is None:  # the carry into the network without a carry-in port: 0, subtraction's 1, or sub
        cin = sub if iface.operation == "add-subtract" else build.const(int(iface.operation == "subtract"))
    build.meta.append((META_SCHEME, spec.scheme))
    for k, v in spec.options:
        if v is not None:  # keys that do not apply to this form (e.g. taxonomy for kogge-stone)
            build.meta.append((k, value_text(v)))
    return Frame(build, a, b, cin, spec.width, spec, iface)


def generate_propagate(f: Frame) -> tuple[list[int], list[int]]:
    """g_i = a_i & b_i, p_i = a_i ^ b_i (the XOR propagate, which the sum stage reuses)."""
    g = [f.build.AND(f.a[i], f.b[i], f"g{i}", "pg") for i in range(f.width)]
    p = [f.build.XOR(f.a[i], f.b[i], f"p{i}", "pg") for i in range(f.width)]
    return g, p


def sum_bits(f: Frame, p: list[int], carries: list[int]) -> list[int]:
    """s_i = p_i ^ c_i, where carries[i] is the carry into bit i."""
    return [f.build.XOR(p[i], carries[i], f"s{i}", "sum") for i in range(f.width)]


def finish(f: Frame, sums: list[int], cout: int, prefix: PrefixGraph | None = None,
           carry_top: int | None = None) -> Network:
    """The output ports. ``cout`` must be the network's carry out whenever the spec reads it
    (``spec.network_carry_out``); ``carry_top``, the carry into the top bit, when the scheme has it.

    Overflow is c_w ^ c_w-1, the carries out of and into the sign bit (common practice): with the
    scheme's own carry into the top bit when it passes one (one XOR), else that carry recovered from the
    top sum bit as s_w-1 ^ a_w-1 ^ y_w-1 (sparse trees and carry-select sums never form it; two more XORs).
    """
    f.build.output("sum", sums)
    if f.interface.has("cout"):
        f.build.output("cout", [cout], scalar=True)
    if f.interface.has("overflow"):
        top = f.width - 1
        if carry_top is None:
            t = f.build.XOR(f.a[top], f.b[top], "ovp", "overflow")
            carry_top = f.build.XOR(t, sums[top], "ctop", "overflow")
        f.build.output("overflow", [f.build.XOR(cout, carry_top, "ovf", "overflow")], scalar=True)
    return f.build.finish(prefix, f.interface)


def balanced(b: Builder, op, items: list[int], name: str = "", role: str = "") -> int:
    """Reduce ``items`` with a 2-input ``op`` as a balanced tree (depth ceil(log2 len))."""
    assert items
    level = list(items)
    while len(level) > 1:
        nxt = [op(level[k], level[k + 1], "", role) for k in range(0, len(level) - 1, 2)]
        if len(level) % 2:
            nxt.append(level[-1])
        level = nxt
    return b.name_node(level[0], name) if name else level[0]


def prefix_cells(b: Builder, graph: PrefixGraph, gen: list[int], prop: list[int | None], *, g: str = "G",
                 p: str = "P", tag: str = "", merge_first=None):
    """The gates of ``graph``'s cells over input columns ``gen``/``prop`` (column i's generate and
    propagate; a column with no propagate has None): an AO21 for G = G_hi | P_hi & G_lo, and an AND2 for
    P = P_hi & P_lo unless the cell is gray, named g/p + tag + "<col>_<low>" with role prefix. Returns
    ``val(r)``, the (generate, propagate) of graph reference r (an input column for r < 0, else cell r).
    ``merge_first(cell, gh, gl)``, when given, may return the generate gate of a cell instead (Ling's OR2
    of two adjacent inputs), or None for the AO21."""
    G: list[int] = []
    P: list[int | None] = []

    def val(r: int):
        return (gen[-1 - r], prop[-1 - r]) if r < 0 else (G[r], P[r])

    for c in graph.cells:
        (gh, ph), (gl, pl) = val(c.hi), val(c.lo)
        assert ph is not None and (c.gray or pl is not None), "a gray cell's propagate is read"
        name = f"{tag}{c.col}_{c.low}"
        first = merge_first(c, gh, gl, g + name) if merge_first else None
        G.append(first if first is not None else b.AO21(ph, gl, gh, g + name, "prefix"))
        P.append(None if c.gray else b.AND(ph, pl, p + name, "prefix"))
    return val
