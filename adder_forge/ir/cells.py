"""The cell library: every primitive the IR may hold, with its arity and gate-equivalent cost.

Evaluation and Verilog text for each op live with the back ends (evaluate.py, verilog.py); this module is
the one table that says what an op *is*, so adding an op starts here.

Gate equivalents (``netlist_gate_equiv``, metrics.py) decompose every cell into 2-input gates (common
practice): NOT 1, AND2/OR2/XOR2/XNOR2 1, AO21 = (x & y) | z is 2, MUX2 = s ? d1 : d0 is 3 (two AND2 and an
OR2; the inverted select is shared). Levels (``netlist_levels``) count that decomposition's depth: AO21 and
MUX2 are 2 levels, the others 1. ``ADD`` is an opaque k-bit ``+`` (the behavioural baseline, and later FPGA
carry-chain blocks). Its cost here (k ripple full adders: 5 gate equivalents and 2 levels a bit, plus one
XOR level) keeps the depth passes defined over every op; no reported figure uses it: metrics.py reports the
netlist figures of a network with ADD cells as "n/a: left to synthesis", and ``report --synth`` measures
what the tool makes of it.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class CellType:
    name: str
    arity: int | None  # None: variable (ADD takes a k-bit, b k-bit, cin)
    cost: int  # gate equivalents
    levels: int  # 2-input gate levels
    doc: str


CELLS: dict[str, CellType] = {}


def _cell(name: str, arity: int | None, cost: int, levels: int, doc: str) -> None:
    CELLS[name] = CellType(name, arity, cost, levels, doc)


# Node kinds that are not gates.
_cell("INPUT", 0, 0, 0, "one bit of an input port")
_cell("CONST", 0, 0, 0, "constant 0 or 1 (param)")
# Gates.
_cell("NOT", 1, 1, 1, "~x")
_cell("AND2", 2, 1, 1, "x & y")
_cell("OR2", 2, 1, 1, "x | y")
_cell("XOR2", 2, 1, 1, "x ^ y")
_cell("XNOR2", 2, 1, 1, "~(x ^ y)")
_cell("AO21", 3, 2, 2, "(x & y) | z: the generate half of a prefix cell")
_cell("MUX2", 3, 3, 2, "s ? d1 : d0, args (s, d0, d1)")
# Macros.
_cell("ADD", None, 0, 0, "k-bit a + b + cin, args (a0..ak-1, b0..bk-1, cin); its bits are read by PICK")
_cell("PICK", 1, 0, 0, "bit `param` of a multi-bit cell (ADD: bits 0..k-1 sum, bit k carry out)")

GATES = frozenset({"NOT", "AND2", "OR2", "XOR2", "XNOR2", "AO21", "MUX2"})


def add_width(nargs: int) -> int:
    """Width k of an ADD cell from its argument count 2k + 1."""
    return (nargs - 1) // 2


def cost_of(op: str, nargs: int) -> int:
    if op == "ADD":
        return 5 * add_width(nargs)
    return CELLS[op].cost


def levels_of(op: str, nargs: int) -> int:
    if op == "ADD":
        return 2 * add_width(nargs) + 1
    return CELLS[op].levels
