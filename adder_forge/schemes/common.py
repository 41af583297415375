"""Pieces every scheme shares: ports, bitwise generate/propagate, the sum stage and the outputs."""

from __future__ import annotations

from dataclasses import dataclass

from ..ir.builder import Builder
from ..ir.interface import Interface, of_spec
from ..ir.network import Network, PrefixGraph


@dataclass
class Frame:
    """The ports of one adder under construction. ``cin`` is constant 0 when the spec has no carry-in."""

    b: Builder
    a: list[int]
    bb: list[int]
    cin: int
    width: int
    spec: object
    interface: Interface


def start(spec) -> Frame:
    """The input ports of the spec's interface, in its order."""
    iface = of_spec(spec)
    b = Builder(spec.name)
    a = b.input("a", spec.width)
    bb = b.input("b", spec.width)
    cin = b.input("cin", 1, scalar=True)[0] if iface.has("cin") else b.const(0)
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


def finish(f: Frame, sums: list[int], cout: int, prefix: PrefixGraph | None = None) -> Network:
    f.b.output("sum", sums)
    if f.interface.has("cout"):
        f.b.output("cout", [cout], scalar=True)
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
