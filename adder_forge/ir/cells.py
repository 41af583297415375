"""The cell library: every op the IR may hold, and everything each op means, in one table.

Each ``CellType`` carries, for one op:
- ``evaluate``: its bitwise meaning on words (numpy uint64 planes of 64 vectors, or Python ints that the
  caller masks); ``steps``: the same meaning as in-place ufunc steps for the compiled evaluator;
- ``verilog``, ``vhdl``: its text in each HDL, ``{0}``, ``{1}``, ``{2}`` standing for its arguments in IR
  order (MUX2: s, d0, d1); ``amaranth``: a function of (the ``amaranth.hdl`` module, *argument values)
  so that this layer does not import Amaranth;
- ``cost`` and ``levels``: its 2-input gate equivalents and 2-input gate levels (the netlist figures of
  analysis/structure.py; common practice): NOT, AND2, OR2, XOR2, XNOR2 are 1 and 1; AO21 = (x & y) | z is
  2 and 2; MUX2 = s ? d1 : d0 is 3 (two AND2 and an OR2, the inverted select shared) and 2;
- ``unit_gate``: area and delay in the unit-gate model (Tyagi 1993, "A reduced-area scheme for
  carry-select adders", IEEE Trans. Computers; Zimmermann 1997, "Binary adder architectures for cell-based
  VLSI and their synthesis", ETH Zurich thesis; values from memory): a 2-input AND or OR 1 and 1, an
  XOR/XNOR 2 and 2. Cells the sources do not list are costed as what they are made of (our choices): NOT
  1 and 1 (counted, not absorbed, so constant-folded inversions stay visible), AO21 as an AND into an OR
  (2 and 2), MUX2 as two ANDs and an OR with the select inverter shared (3 and 2);
- ``effort``: the static CMOS stage it is costed as in the logical-effort model, with the logical effort
  g of each input pin and the parasitic delay p in units of tau, p_inv = 1 (Sutherland, Sproull and
  Harris, "Logical Effort: Designing Fast CMOS Circuits", 1999: g = 4/3 for NAND2, 5/3 for NOR2, 2 for
  the AND pair and 5/3 for the lone input of an AOI21, 4 for XOR2 with both input polarities at hand, 2
  for a multiplexer of tristate inverters; p = 2 for NAND2 and NOR2, 7/3 for AOI21, 4 for XOR2 and the
  multiplexer; values from memory). Non-inverting cells are costed as their inverting stage (AND2 as
  NAND2, AO21 as AOI21): the usual reading of an adder's gate graph, in which polarity alternates from
  level to level (Harris and Sutherland, "Logical effort of carry propagate adders", Asilomar 2003).

The register ``DFF`` (pipelining, ir/pipeline.py) has an evaluator (its next state from its data input),
HDL forms (the value clocked in; the back ends write the clocked process around it) and an Amaranth form
(for ``m.d.sync``), but no delay figures: it ends a stage's timing paths and starts the next one's.

Ops that are not gates (INPUT, CONST, the ADD/PICK macro) have ``None`` in the fields that do not apply to
them and say why in ``none_because``; every consumer handles them in a branch of its own. ``ADD`` is an
opaque k-bit ``+`` (the behavioural baseline, and FPGA carry-chain blocks): synthesis chooses what it
becomes, so it has no unit-gate or logical-effort figure here (None, on purpose: the estimates of a network
with ADD cells are "left to synthesis"); a carry-chain delay model belongs to the FPGA flow. Its ``cost``
and ``levels`` (k ripple full adders: 5 gate equivalents and 2 levels a bit, plus one XOR level) keep the
depth passes defined over every op; no reported netlist figure uses them.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass


@dataclass(frozen=True)
class UnitGate:
    area: int
    delay: int
    doc: str


@dataclass(frozen=True)
class EffortCell:
    realisation: str  # the CMOS stage the IR cell is costed as
    g: tuple[float, ...]  # logical effort of each input pin, in IR argument order
    p: float  # parasitic delay, tau (p_inv = 1)


@dataclass(frozen=True)
class CellType:
    name: str
    arity: int | None  # None: variable (ADD takes a k-bit, b k-bit, cin)
    cost: int  # gate equivalents
    levels: int  # 2-input gate levels
    doc: str
    kind: str = "gate"  # gate | input | const | macro | register
    evaluate: Callable | None = None
    steps: tuple[tuple[str, tuple[int, ...]], ...] | None = None  # ufunc, operands (-1: the output itself)
    verilog: str | None = None
    vhdl: str | None = None
    amaranth: Callable | None = None
    unit_gate: UnitGate | None = None
    effort: EffortCell | None = None
    none_because: str = ""  # why the fields that are None do not apply
    slip: str | None = None  # the op of the same arity a plausible design slip puts here (mutation testing)

    # The fields a gate must have; tests/test_cells.py holds every gate to them.
    FORMS = ("evaluate", "steps", "verilog", "vhdl", "amaranth", "unit_gate", "effort")


CELLS: dict[str, CellType] = {}


def _cell(name: str, arity: int | None, cost: int, levels: int, doc: str, **forms) -> None:
    CELLS[name] = CellType(name, arity, cost, levels, doc, **forms)


# Node kinds that are not gates.
_cell("INPUT", 0, 0, 0, "one bit of an input port", kind="input",
      none_because="a port bit: its value comes from outside, and the back ends name the port")
_cell("CONST", 0, 0, 0, "constant 0 or 1 (param)", kind="const",
      none_because="a literal: each back end writes 0 or 1 in its own syntax and no timing model times it")
# Gates.
_cell("NOT", 1, 1, 1, "~x",
      evaluate=lambda x: ~x, steps=(("not", (0,)),),
      verilog="~{0}", vhdl="not {0}", amaranth=lambda hdl, x: ~x,
      unit_gate=UnitGate(1, 1, "inverter (our choice: counted, not absorbed)"),
      effort=EffortCell("INV", (1.0,), 1.0))
_cell("AND2", 2, 1, 1, "x & y",
      slip="OR2",
      evaluate=lambda x, y: x & y, steps=(("and", (0, 1)),),
      verilog="{0} & {1}", vhdl="{0} and {1}", amaranth=lambda hdl, x, y: x & y,
      unit_gate=UnitGate(1, 1, "2-input AND (Tyagi 1993, Zimmermann 1997)"),
      effort=EffortCell("NAND2", (4 / 3, 4 / 3), 2.0))
_cell("OR2", 2, 1, 1, "x | y",
      slip="AND2",
      evaluate=lambda x, y: x | y, steps=(("or", (0, 1)),),
      verilog="{0} | {1}", vhdl="{0} or {1}", amaranth=lambda hdl, x, y: x | y,
      unit_gate=UnitGate(1, 1, "2-input OR (Tyagi 1993, Zimmermann 1997)"),
      effort=EffortCell("NOR2", (5 / 3, 5 / 3), 2.0))
_cell("XOR2", 2, 1, 1, "x ^ y",
      slip="XNOR2",
      evaluate=lambda x, y: x ^ y, steps=(("xor", (0, 1)),),
      verilog="{0} ^ {1}", vhdl="{0} xor {1}", amaranth=lambda hdl, x, y: x ^ y,
      unit_gate=UnitGate(2, 2, "2-input XOR (Tyagi 1993, Zimmermann 1997)"),
      effort=EffortCell("XOR2", (4.0, 4.0), 4.0))
_cell("XNOR2", 2, 1, 1, "~(x ^ y)",
      slip="XOR2",
      evaluate=lambda x, y: ~(x ^ y), steps=(("xor", (0, 1)), ("not", (-1,))),
      verilog="~({0} ^ {1})", vhdl="{0} xnor {1}", amaranth=lambda hdl, x, y: ~(x ^ y),
      unit_gate=UnitGate(2, 2, "2-input XNOR, as XOR"),
      effort=EffortCell("XNOR2", (4.0, 4.0), 4.0))
_cell("AO21", 3, 2, 2, "(x & y) | z: the generate half of a prefix cell",
      slip="MUX2",
      evaluate=lambda x, y, z: (x & y) | z, steps=(("and", (0, 1)), ("or", (-1, 2))),
      # VHDL does not mix and/or without parentheses
      verilog="({0} & {1}) | {2}", vhdl="({0} and {1}) or {2}", amaranth=lambda hdl, x, y, z: (x & y) | z,
      unit_gate=UnitGate(2, 2, "(x & y) | z: an AND into an OR"),
      # the AND pair of an AOI21 has g = 2, the lone OR input 5/3
      effort=EffortCell("AOI21", (2.0, 2.0, 5 / 3), 7 / 3))
_cell("MUX2", 3, 3, 2, "s ? d1 : d0, args (s, d0, d1)",
      slip="AO21",
      evaluate=lambda s, d0, d1: (d0 & ~s) | (d1 & s),
      # d0 ^ ((d0 ^ d1) & s): three steps instead of four
      steps=(("xor", (1, 2)), ("and", (-1, 0)), ("xor", (-1, 1))),
      verilog="{0} ? {2} : {1}", vhdl="{2} when {0} = '1' else {1}",
      amaranth=lambda hdl, s, d0, d1: hdl.Mux(s, d1, d0),
      unit_gate=UnitGate(3, 2, "s ? d1 : d0: two ANDs into an OR, the select inverter shared"),
      # an inverting multiplexer of two tristate inverters, g = 2 on every input
      effort=EffortCell("MUX2 (tristate inverters)", (2.0, 2.0, 2.0), 4.0))
# Macros.
_cell("ADD", None, 0, 0, "k-bit a + b + cin, args (a0..ak-1, b0..bk-1, cin); its bits are read by PICK",
      kind="macro", none_because="a k-bit + with k + 1 result bits: each back end writes its own + (evaluate: "
      "ripple planes, Verilog/VHDL/Amaranth: +); synthesis chooses its structure, so no unit-gate or "
      "logical-effort figure (a carry-chain model belongs to the FPGA flow)")
_cell("PICK", 1, 0, 0, "bit `param` of a multi-bit cell (ADD: bits 0..k-1 sum, bit k carry out)",
      kind="macro", none_because="a bit select of an ADD's result: no logic of its own")

# Registers.
_cell("DFF", 1, 0, 0, "a register of one bit clocked by the rising edge of clk; param holds its pipeline rank "
      "and how it is clocked (register_param): a clock enable en, a sync or async reset rst (active high or "
      "low) that clears it to 0",
      kind="register",
      # the value it takes at the clock edge (its next state) from its data input
      evaluate=lambda d: d, verilog="{0}", vhdl="{0}", amaranth=lambda hdl, d: d,
      none_because="a register ends one stage's timing paths and starts the next one's: timing passes start "
      "at it (arrival 0) and the per-stage levels are the figure; it has no combinational steps")

GATES = frozenset(op for op, c in CELLS.items() if c.kind == "gate")


def add_width(nargs: int) -> int:
    """Width k of an ADD cell from its argument count 2k + 1."""
    return (nargs - 1) // 2


def cost_of(op: str, nargs: int) -> int:
    if op == "ADD":
        return 5 * add_width(nargs)
    return CELLS[op].cost


def cell_levels(op: str, nargs: int) -> int:
    if op == "ADD":
        return 2 * add_width(nargs) + 1
    return CELLS[op].levels


def verilog_of(op: str, args: list[str]) -> str:
    form = CELLS[op].verilog
    if form is None:
        raise ValueError(f"no Verilog expression for {op}")
    return form.format(*args)


def vhdl_of(op: str, args: list[str]) -> str:
    form = CELLS[op].vhdl
    if form is None:
        raise ValueError(f"no VHDL expression for {op}")
    return form.format(*args)


# A register's param: its rank in the low byte, how it is clocked in the bits above (so the IR says it all).
_ENABLE, _SYNC, _ASYNC, _LOW = 1, 2, 4, 8


@dataclass(frozen=True)
class RegisterParam:
    rank: int
    enable: bool = False
    reset: str = "none"  # none | sync | async
    reset_level: str = "high"  # high | low

    def text(self) -> str:
        """'1 en rst=sync/high' for dumps."""
        out = str(self.rank) + (" en" if self.enable else "")
        return out + (f" rst={self.reset}/{self.reset_level}" if self.reset != "none" else "")


def register_param(rank: int, enable: bool = False, reset: str = "none", reset_level: str = "high") -> int:
    if not 0 < rank < 256 or reset not in ("none", "sync", "async") or reset_level not in ("high", "low"):
        raise ValueError(f"bad register: rank {rank}, reset {reset!r}, level {reset_level!r}")
    flags = (_ENABLE if enable else 0) | {"none": 0, "sync": _SYNC, "async": _ASYNC}[reset]
    flags |= _LOW if reset != "none" and reset_level == "low" else 0
    return rank | flags << 8


def register_fields(param: int) -> RegisterParam:
    flags = param >> 8
    reset = "sync" if flags & _SYNC else "async" if flags & _ASYNC else "none"
    return RegisterParam(param & 0xFF, bool(flags & _ENABLE), reset,
                         "low" if flags & _LOW else "high")
