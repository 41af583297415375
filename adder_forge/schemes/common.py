"""Pieces every scheme shares: ports, bitwise generate/propagate, the sum stage and the outputs."""

from __future__ import annotations

from dataclasses import dataclass

from ..ir.builder import Builder
from ..ir.interface import Interface, of_spec
from ..ir.network import Network, PrefixGraph


@dataclass
class Frame:
    """The ports of one adder under construction, as the carry network sees them: ``bb`` is the addend (b,
    ~b for subtract, b ^ sub for add-subtract) and ``cin`` the carry into the network (the carry-in port,
    else 0 for add, 1 for subtract, ``sub`` for add-subtract). Schemes build on these alone, so every
    scheme gets every operation from one carry network."""

    b: Builder
    a: list[int]
    bb: list[int]
    cin: int
    width: int
    spec: object
    interface: Interface


def start(spec) -> Frame:
    """The input ports of the spec's interface, in its order, and the operand conditioning."""
    iface = of_spec(spec)
    b = Builder(spec.name)
    a = b.input("a", spec.width)
    raw = b.input("b", spec.width)
    cin = b.input("cin", 1, scalar=True)[0] if iface.has("cin") else None
    sub = b.input("sub", 1, scalar=True)[0] if iface.has("sub") else None
    if iface.operation == "add":
        bb = raw
    elif iface.operation == "subtract":  # a - b = a + ~b + 1
        bb = [b.NOT(x, f"nb{i}", "operand") for i, x in enumerate(raw)]
    else:  # one network for both: b ^ sub into generate/propagate, and sub as the +1 of subtraction
        bb = [b.XOR(x, sub, f"bx{i}", "operand") for i, x in enumerate(raw)]
    if cin is None:  # the carry into the network without a carry-in port: 0, subtraction's 1, or sub
        cin = sub if iface.operation == "add-subtract" else b.const(int(iface.operation == "subtract"))
    b.meta.append(("scheme", spec.scheme))
    for k, v in spec.options:
        if v is not None:  # keys that do not apply to this form (e.g. taxonomy for kogge-stone)
            b.meta.append((k, _text(v)))
    return Frame(b, a, bb, cin, spec.width, spec, iface)


def _text(v) -> str:
    if isinstance(v, tuple):
        return "[" + ", ".join(_text(x) for x in v) + "]"
    if isinstance(v, bool):
        return str(v).lower()
    return str(v)


def generate_propagate(f: Frame) -> tuple[list[int], list[int]]:
    """g_i = a_i & b_i, p_i = a_i ^ b_i (the XOR propagate, which the sum stage reuses)."""
    g = [f.b.AND(f.a[i], f.bb[i], f"g{i}", "pg") for i in range(f.width)]
    p = [f.b.XOR(f.a[i], f.bb[i], f"p{i}", "pg") for i in range(f.width)]
    return g, p


def sum_bits(f: Frame, p: list[int], carries: list[int]) -> list[int]:
    """s_i = p_i ^ c_i, where carries[i] is the carry into bit i."""
    return [f.b.XOR(p[i], carries[i], f"s{i}", "sum") for i in range(f.width)]


def finish(f: Frame, sums: list[int], cout: int, prefix: PrefixGraph | None = None,
           carry_top: int | None = None) -> Network:
    """The output ports. ``cout`` must be the network's carry out whenever the spec reads it
    (``spec.network_carry_out``); ``carry_top``, the carry into the top bit, when the scheme has it.

    Overflow is c_w ^ c_w-1, the carries out of and into the sign bit (common practice): with the
    scheme's own carry into the top bit when it passes one (one XOR), else that carry recovered from the
    top sum bit as s_w-1 ^ a_w-1 ^ y_w-1 (sparse trees and carry-select sums never form it; two more XORs).
    """
    f.b.output("sum", sums)
    if f.interface.has("cout"):
        f.b.output("cout", [cout], scalar=True)
    if f.interface.has("overflow"):
        top = f.width - 1
        if carry_top is None:
            t = f.b.XOR(f.a[top], f.bb[top], "ovp", "overflow")
            carry_top = f.b.XOR(t, sums[top], "ctop", "overflow")
        f.b.output("overflow", [f.b.XOR(cout, carry_top, "ovf", "overflow")], scalar=True)
    return f.b.finish(prefix, f.interface)


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
