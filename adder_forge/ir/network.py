"""The gate-level IR: frozen data, the single source of truth for every back end.

A ``Network`` is a tuple of ``Node`` in topological order (every argument index is smaller than the node's
own index). Node 0.. are ordinary cells from ``cells.CELLS``; ports map names to node indices. Optional
annotations (``prefix``) describe higher-level structure that some metrics need; they never replace the
gates, which are what evaluation and emission read.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .cells import CELLS, register_fields
from .interface import Interface


# Keys of Network.meta: facts a scheme records with the IR (ir.dump prints them; summaries read them).
# Besides these, every spec key of the scheme is recorded under its own name.
META_SCHEME = "scheme"  # the scheme's name
META_NOTE = "note"  # a sentence for the report and the Verilog header (repeatable)
META_BLOCK_SIZES = "block_sizes"  # the block sizes used, from bit 0 up (what block: auto resolved to)
META_BLOCK_NETWORK = "block_network"  # the prefix network over the blocks of a carry-chain hybrid


def meta_values(meta, key: str) -> list[str]:
    """Every value recorded under ``key``, in order."""
    return [v for k, v in meta if k == key]


@dataclass(frozen=True)
class Node:
    op: str
    args: tuple[int, ...] = ()
    name: str = ""  # unique wire name hint, legal Verilog identifier (made unique by the builder)
    role: str = ""  # what part of the adder the node belongs to: pg, carry, prefix, sum, select, ...
    param: int = 0  # CONST value, PICK bit index, INPUT bit index


@dataclass(frozen=True)
class Port:
    name: str
    bits: tuple[int, ...]  # node indices, LSB first
    scalar: bool = False  # a 1-bit port declared without a range (cin, cout)

    @property
    def width(self) -> int:
        return len(self.bits)


@dataclass(frozen=True)
class PrefixCell:
    """One cell of a parallel-prefix network: G[col:low] from an upper span (col, mid) and a lower span
    (j, low) with j >= mid - 1; j > mid - 1 (overlapping spans) is legal because the carry operator is
    idempotent, and Knowles and interior Harris networks use it.

    ``hi`` and ``lo`` index ``PrefixGraph.cells`` or are ``-1 - column`` for a network input (a column's
    bitwise generate/propagate pair, or the carry-in as column 0 when there is one).
    """

    col: int
    low: int
    level: int
    hi: int
    lo: int
    gray: bool  # only the group generate is needed


@dataclass(frozen=True)
class PrefixGraph:
    inputs: int  # number of prefix inputs (columns), carry-in included when present
    cells: tuple[PrefixCell, ...]
    style: str = ""


@dataclass(frozen=True)
class Network:
    name: str
    nodes: tuple[Node, ...]
    inputs: tuple[Port, ...]
    outputs: tuple[Port, ...]
    prefix: PrefixGraph | None = None
    meta: tuple[tuple[str, str], ...] = field(default=())  # scheme facts for headers and dumps
    interface: Interface | None = None  # what the ports mean; the builder always sets it

    def port(self, name: str) -> Port | None:
        for p in self.inputs + self.outputs:
            if p.name == name:
                return p
        return None

    @property
    def iface(self) -> Interface:
        """The interface record (``interface``), never absent on a built network."""
        if self.interface is None:
            raise ValueError(f"network {self.name} has no interface record")
        return self.interface

    def uses(self) -> list[int]:
        """Fanout of every node: cell input pins it drives plus output-port bits it drives."""
        count = [0] * len(self.nodes)
        for node in self.nodes:
            for a in node.args:
                count[a] += 1
        for p in self.outputs:
            for b in p.bits:
                count[b] += 1
        return count


def dump(net: Network) -> str:
    """Deterministic, readable text of the whole network; golden files compare against it."""
    lines = [f"network {net.name}"]
    if net.interface is not None:
        lines.append(f"interface {net.interface.describe()}")
    for k, v in net.meta:
        lines.append(f"meta {k} = {v}")
    for p in net.inputs:
        lines.append(f"input {p.name}{'' if p.scalar else f'[{p.width}]'}")
    for i, n in enumerate(net.nodes):
        if n.op == "INPUT":
            continue
        args = " ".join(_ref(net, a) for a in n.args)
        extra = f" #{n.param}" if n.op in ("CONST", "PICK") else ""
        if CELLS[n.op].kind == "register":
            extra = f" #{register_fields(n.param).text()}"
        role = f"  ; {n.role}" if n.role else ""
        lines.append(f"{_ref(net, i)} = {n.op}{extra} {args}".rstrip() + role)
    for p in net.outputs:
        lines.append(f"output {p.name} = " + " ".join(_ref(net, b) for b in p.bits))
    if net.prefix is not None:
        g = net.prefix
        lines.append(f"prefix inputs={g.inputs} style={g.style}")
        for k, c in enumerate(g.cells):
            kind = "gray" if c.gray else "black"
            lines.append(f"  p{k} [{c.col}:{c.low}] level {c.level} {kind} hi={c.hi} lo={c.lo}")
    return "\n".join(lines) + "\n"


def _ref(net: Network, i: int) -> str:
    n = net.nodes[i]
    return n.name or f"n{i}"


def check_well_formed(net: Network) -> None:
    """Raise AssertionError if the network breaks an IR invariant (used by tests and after passes)."""
    if net.interface is not None:  # every adder has one; a bare gate network made by hand (cell tests) not
        net.interface.validate()
        declared = [(p.name, p.width, p.scalar, p in net.inputs) for p in net.inputs + net.outputs]
        wanted = [(p.name, p.width, p.scalar, p.direction == "in") for p in net.interface.pins]
        assert declared == wanted, f"ports {declared} are not the interface's {wanted}"
    seen_names = set()
    for i, n in enumerate(net.nodes):
        assert n.op in CELLS, f"node {i}: unknown op {n.op}"
        ar = CELLS[n.op].arity
        if ar is not None:
            assert len(n.args) == ar, f"node {i}: {n.op} takes {ar} args, has {len(n.args)}"
        else:
            assert len(n.args) % 2 == 1, f"node {i}: ADD takes 2k+1 args"
        assert all(0 <= a < i for a in n.args), f"node {i}: not in topological order"
        if n.op == "PICK":
            assert net.nodes[n.args[0]].op == "ADD"
        if n.name:
            assert n.name not in seen_names, f"duplicate name {n.name}"
            seen_names.add(n.name)
