"""Mutable construction of a Network; schemes call this and get frozen data back from ``finish``.

The builder folds constants (so an absent carry-in is simply constant 0 and whatever it feeds simplifies
away) but does *not* share equal subexpressions: a scheme's structure, such as the unshared product
terms of flat carry-lookahead, is kept as written. ``finish`` drops cells that reach no output.
"""

from __future__ import annotations

import re

from .interface import ROLES, Interface, of_ports
from .network import Network, Node, Port, PrefixGraph
from ..base.keywords import IDENT, RESERVED

_RESERVED = set(ROLES) | RESERVED  # port names, so that no wire takes one


class Builder:
    def __init__(self, name: str):
        self.name = name
        self.nodes: list[Node] = []
        self.inputs: list[Port] = []
        self.outputs: list[Port] = []
        self._const: dict[int, int] = {}
        self.meta: list[tuple[str, str]] = []

    # -- leaves -----------------------------------------------------------------------------------------
    def input(self, port: str, width: int, scalar: bool = False) -> list[int]:
        bits = []
        for i in range(width):
            bits.append(self._add(Node("INPUT", (), f"{port}[{i}]" if not scalar else port, "input", i)))
        self.inputs.append(Port(port, tuple(bits), scalar))
        return bits

    def const(self, value: int) -> int:
        value = 1 if value else 0
        if value not in self._const:
            self._const[value] = self._add(Node("CONST", (), "", "const", value))
        return self._const[value]

    def output(self, port: str, bits: list[int], scalar: bool = False) -> None:
        self.outputs.append(Port(port, tuple(bits), scalar))

    def is_const(self, x: int) -> int | None:
        n = self.nodes[x]
        return n.param if n.op == "CONST" else None

    # -- gates, with constant folding --------------------------------------------------------------------
    def NOT(self, x: int, name: str = "", role: str = "") -> int:
        c = self.is_const(x)
        if c is not None:
            return self.const(1 - c)
        return self._add(Node("NOT", (x,), name, role))

    def AND(self, x: int, y: int, name: str = "", role: str = "") -> int:
        cx, cy = self.is_const(x), self.is_const(y)
        if cx == 0 or cy == 0:
            return self.const(0)
        if cx == 1:
            return y
        if cy == 1 or x == y:
            return x
        return self._add(Node("AND2", (x, y), name, role))

    def OR(self, x: int, y: int, name: str = "", role: str = "") -> int:
        cx, cy = self.is_const(x), self.is_const(y)
        if cx == 1 or cy == 1:
            return self.const(1)
        if cx == 0:
            return y
        if cy == 0 or x == y:
            return x
        return self._add(Node("OR2", (x, y), name, role))

    def XOR(self, x: int, y: int, name: str = "", role: str = "") -> int:
        cx, cy = self.is_const(x), self.is_const(y)
        if cx is not None and cy is not None:
            return self.const(cx ^ cy)
        if cx == 0:
            return y
        if cy == 0:
            return x
        if cx == 1:
            return self.NOT(y, name, role)
        if cy == 1:
            return self.NOT(x, name, role)
        if x == y:
            return self.const(0)
        return self._add(Node("XOR2", (x, y), name, role))

    def XNOR(self, x: int, y: int, name: str = "", role: str = "") -> int:
        cx, cy = self.is_const(x), self.is_const(y)
        if cx is not None or cy is not None or x == y:
            return self.NOT(self.XOR(x, y), name, role)
        return self._add(Node("XNOR2", (x, y), name, role))

    def AO21(self, x: int, y: int, z: int, name: str = "", role: str = "") -> int:
        """(x & y) | z."""
        cx, cy, cz = self.is_const(x), self.is_const(y), self.is_const(z)
        if cz == 1:
            return self.const(1)
        if cx == 0 or cy == 0:
            return z
        if cz == 0:
            return self.AND(x, y, name, role)
        if cx == 1:
            return self.OR(y, z, name, role)
        if cy == 1:
            return self.OR(x, z, name, role)
        return self._add(Node("AO21", (x, y, z), name, role))

    def MUX(self, s: int, d0: int, d1: int, name: str = "", role: str = "") -> int:
        """s ? d1 : d0."""
        cs = self.is_const(s)
        if cs is not None:
            return d1 if cs else d0
        if d0 == d1:
            return d0
        c0, c1 = self.is_const(d0), self.is_const(d1)
        if c0 == 0 and c1 == 1:
            return s
        if c0 == 0:
            return self.AND(s, d1, name, role)
        if c1 == 1:
            return self.OR(s, d0, name, role)
        return self._add(Node("MUX2", (s, d0, d1), name, role))

    def ADD(self, a: list[int], b: list[int], cin: int, name: str = "", role: str = "") -> list[int]:
        """An opaque k-bit ``+``; returns k sum bits and the carry out."""
        assert len(a) == len(b)
        cell = self._add(Node("ADD", tuple(a) + tuple(b) + (cin,), name, role))
        stem = name or "add"
        return [self._add(Node("PICK", (cell,), f"{stem}_{i}" if name else "", role, i)) for i in range(len(a) + 1)]

    def name_node(self, x: int, name: str, role: str | None = None) -> int:
        """Give an unnamed gate a wire name (e.g. the root of a balanced tree); leaves others alone."""
        n = self.nodes[x]
        if n.op not in ("INPUT", "CONST", "PICK") and not n.name:
            self.nodes[x] = Node(n.op, n.args, name, n.role if role is None else role, n.param)
        return x

    def _add(self, node: Node) -> int:
        self.nodes.append(node)
        return len(self.nodes) - 1

    # -- result -----------------------------------------------------------------------------------------
    def finish(self, prefix: PrefixGraph | None = None, interface: Interface | None = None) -> Network:
        """Drop unreachable cells, renumber, make names unique and legal, and freeze. ``interface`` is the
        spec's (schemes pass it); without one it is read off the port names (networks built by hand)."""
        live = [False] * len(self.nodes)
        for p in self.outputs:
            for b in p.bits:
                live[b] = True
        for p in self.inputs:
            for b in p.bits:
                live[b] = True
        for i in range(len(self.nodes) - 1, -1, -1):
            if live[i]:
                for a in self.nodes[i].args:
                    live[a] = True
        # A PICK keeps its ADD alive; an ADD keeps all its PICKs so the emitted vector is whole.
        for i, n in enumerate(self.nodes):
            if n.op == "PICK" and live[n.args[0]]:
                live[i] = True
        remap: dict[int, int] = {}
        nodes: list[Node] = []
        used: set[str] = set(_RESERVED)
        for i, n in enumerate(self.nodes):
            if not live[i]:
                continue
            name = n.name
            if n.op == "INPUT":
                pass  # port bits keep their port names
            elif n.op == "CONST":
                name = ""
            else:
                name = _unique(name or f"n{len(nodes)}", used)
            remap[i] = len(nodes)
            nodes.append(Node(n.op, tuple(remap[a] for a in n.args), name, n.role, n.param))
        inputs = tuple(Port(p.name, tuple(remap[b] for b in p.bits), p.scalar) for p in self.inputs)
        outputs = tuple(Port(p.name, tuple(remap[b] for b in p.bits), p.scalar) for p in self.outputs)
        interface = interface if interface is not None else of_ports(inputs, outputs)
        return Network(self.name, tuple(nodes), inputs, outputs, prefix, tuple(self.meta), interface)


def _unique(name: str, used: set[str]) -> str:
    base = re.sub(r"[^A-Za-z0-9_]", "_", name)
    if not IDENT.match(base):
        base = "n_" + base
    cand = base
    k = 1
    while cand in used:
        cand = f"{base}_{k}"
        k += 1
    used.add(cand)
    return cand
