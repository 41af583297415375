"""Pieces every scheme shares: ports, bitwise generate/propagate, the sum stage and the outputs."""

from __future__ import annotations

from dataclasses import dataclass

from ..ir.builder import Builder
from ..ir.interface import Interface, of_spec
from ..ir.network import META_SCHEME, Network, PrefixGraph
from ..spec.registry import value_text


@dataclass
class Frame:
    """The ports of one adder under construction: ``build`` is its Builder, ``a`` and ``b`` the operand bits;
    ``cin`` is constant 0 when the spec has no carry-in."""

    build: Builder
    a: list[int]
    b: list[int]
    cin: int
    width: int
    spec: object
    interface: Interface


def start(spec) -> Frame:
    """The input ports of the spec's interface, in its order."""
    iface = of_spec(spec)
    build = Builder(spec.name)
    a = build.input("a", spec.width)
    b = build.input("b", spec.width)
    cin = build.input("cin", 1, scalar=True)[0] if iface.has("cin") else build.const(0)
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


def finish(f: Frame, sums: list[int], cout: int, prefix: PrefixGraph | None = None) -> Network:
    f.build.output("sum", sums)
    if f.interface.has("cout"):
        f.build.output("cout", [cout], scalar=True)
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
