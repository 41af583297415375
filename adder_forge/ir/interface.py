"""What an adder's ports mean: the one record every check, testbench and proof reads.

An ``Interface`` is built once from the spec (``of_spec``) and attached to the ``Network``. It names each
port with its role, says how many clock cycles a result takes (``latency``), and holds the reference: the
Python function of integers that says what the outputs must be (``reference``), the same function in
Verilog for the proof (``verilog_reference``), and the words the proof reports (``claim``). The meaning of
the operation lives here and nowhere else; fast paths elsewhere (numpy limbs, bit-sliced planes) take the
operand conditioning from ``condition`` and are held equal to ``reference`` by tests.

The operation, in two's complement (common practice; the definitions every ALU data sheet uses):

- ``add``: {cout, sum} = a + b + cin (cin is 0 without a carry-in port);
- ``subtract``: {cout, sum} = a + ~b + cin, with cin 1 without a carry-in port, so sum = a - b and
  cout = 1 when no borrow occurred (cin is the not-borrow of a multi-word subtraction);
- ``add-subtract``: the input ``sub`` picks one of the two per vector; without a carry-in port the carry
  into the network is ``sub`` itself;
- ``overflow`` (an output when asked for) is 1 when the operation performed, read as signed numbers,
  does not fit ``width`` bits.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from typing import Mapping

# Port roles. A port's name is its role's name in the emitted module; a role appears at most once.
OPERAND_A, OPERAND_B, CARRY_IN, SUBTRACT = "a", "b", "cin", "sub"
SUM, CARRY_OUT, OVERFLOW = "sum", "cout", "overflow"
CLOCK, ENABLE, RESET = "clk", "en", "rst"
DATA_INPUTS = (OPERAND_A, OPERAND_B, CARRY_IN, SUBTRACT)  # in vector-file and enumeration order
OUTPUTS = (SUM, CARRY_OUT, OVERFLOW)  # in packed-result order, LSB first
CONTROL = (CLOCK, ENABLE, RESET)  # inputs no vector drives directly: the testbench runs them
ROLES = DATA_INPUTS + OUTPUTS + CONTROL

OPERATIONS = ("add", "subtract", "add-subtract")


@dataclass(frozen=True)
class Pin:
    """One port: its role (also its name), direction, width and whether it is declared without a range."""

    role: str
    direction: str  # "in" or "out"
    width: int
    scalar: bool = False

    @property
    def name(self) -> str:
        return self.role


@dataclass(frozen=True)
class Interface:
    width: int
    operation: str = "add"
    pins: tuple[Pin, ...] = ()
    latency: int = 0  # clock cycles from an input to its result; 0 is combinational
    reset: str = "none"  # what rst does when there is one: "sync" or "async" clear of every register
    reset_level: str = "high"  # the level of rst that resets

    # -- clocking -----------------------------------------------------------------------------------------
    @property
    def clocking(self):
        """The clocking this interface promises, as the spec's ``pipeline`` record (spec/pipeline.py)."""
        from ..spec.pipeline import Pipeline

        return Pipeline(self.latency, self.has(ENABLE), self.reset, self.reset_level)

    def clocked(self, cfg) -> "Interface":
        """This interface with the clock, reset and enable inputs of a pipelined form ``cfg`` (a
        spec.pipeline.Pipeline) ahead of the data ports, and its latency."""
        from dataclasses import replace

        control = [Pin(CLOCK, "in", 1, True)] if cfg.stages else []
        if cfg.stages and cfg.reset != "none":
            control.append(Pin(RESET, "in", 1, True))
        if cfg.stages and cfg.enable:
            control.append(Pin(ENABLE, "in", 1, True))
        data = tuple(p for p in self.pins if p.role not in CONTROL)
        iface = replace(self, pins=tuple(control) + data, latency=cfg.stages,
                        reset=cfg.reset if cfg.stages else "none",
                        reset_level=cfg.reset_level if cfg.stages and cfg.reset != "none" else "high")
        iface.validate()
        return iface

    # -- ports ----------------------------------------------------------------------------------------
    def has(self, role: str) -> bool:
        return any(p.role == role for p in self.pins)

    def pin(self, role: str) -> Pin | None:
        for p in self.pins:
            if p.role == role:
                return p
        return None

    @property
    def inputs(self) -> tuple[Pin, ...]:
        """Data inputs a vector drives, in vector order (a, b, then cin and sub when present)."""
        return tuple(p for r in DATA_INPUTS for p in self.pins if p.role == r)

    @property
    def outputs(self) -> tuple[Pin, ...]:
        """Outputs in packed-result order, LSB first (sum, then cout and overflow when present)."""
        return tuple(p for r in OUTPUTS for p in self.pins if p.role == r)

    @property
    def in_bits(self) -> int:
        return sum(p.width for p in self.inputs)

    @property
    def out_bits(self) -> int:
        return sum(p.width for p in self.outputs)

    def offsets(self, pins) -> dict[str, int]:
        """Bit offset of each of ``pins`` in a packed word (the first pin in the low bits)."""
        out, at = {}, 0
        for p in pins:
            out[p.role] = at
            at += p.width
        return out

    # -- the reference --------------------------------------------------------------------------------
    def condition(self, b, cin, sub, ones):
        """(y, c): the second addend and the carry into the one addition the operation performs, from
        operand b, the carry-in (None without the port) and sub (None without the port). ``ones`` is the
        all-ones value of b's type (an int mask, or a numpy array of masks), so the same text serves Python
        integers and numpy words."""
        if self.operation == "add":
            inv = 0
        elif self.operation == "subtract":
            inv = 1
        else:
            inv = sub
        y = b ^ (ones * inv)
        c = cin if cin is not None else inv
        return y, c

    def reference(self, values: Mapping[str, int]) -> dict[str, int]:
        """Expected outputs (role -> int) for data inputs (role -> int), by Python integer arithmetic."""
        w = self.width
        m = (1 << w) - 1
        a = values[OPERAND_A] & m
        cin = values[CARRY_IN] & 1 if self.has(CARRY_IN) else None
        sub = values[SUBTRACT] & 1 if self.has(SUBTRACT) else None
        y, c = self.condition(values[OPERAND_B] & m, cin, sub, m)
        total = a + y + c  # the reference: Python integer addition
        out = {SUM: total & m}
        if self.has(CARRY_OUT):
            out[CARRY_OUT] = total >> w
        if self.has(OVERFLOW):
            # two's complement: the signed result lies outside [-2^(w-1), 2^(w-1) - 1]
            signed = _signed(a, w) + _signed(y, w) + c
            out[OVERFLOW] = int(not -(1 << (w - 1)) <= signed < (1 << (w - 1)))
        return out

    def reference_words(self, a, b, cin, sub):
        """The reference on numpy uint64 words of up to 62 bits, the outputs packed as ``pack_outputs``
        packs them: the same conditioning and addition as ``reference``; overflow by the sign rule (two
        addends of one sign and a result of the other; common practice), which a test holds equal to the
        signed-range definition above. ``cin``/``sub`` are None where the port is absent."""
        import numpy as np

        w = self.width
        m = np.uint64((1 << w) - 1)
        one = np.uint64(1)
        y, c = self.condition(b, cin, sub, m)
        total = a + y + c
        out = total & m
        at = w
        for p in self.outputs[1:]:
            if p.role == CARRY_OUT:
                bit = (total >> np.uint64(w)) & one
            else:
                top = np.uint64(w - 1)
                bit = sign_overflow(a >> top, y >> top, total >> top) & one
            out |= bit << np.uint64(at)
            at += 1
        return out

    def pack_inputs(self, values: Mapping[str, int]) -> int:
        off = self.offsets(self.inputs)
        return sum((values[p.role] & ((1 << p.width) - 1)) << off[p.role] for p in self.inputs)

    def pack_outputs(self, values: Mapping[str, int]) -> int:
        off = self.offsets(self.outputs)
        return sum((values[p.role] & ((1 << p.width) - 1)) << off[p.role] for p in self.outputs)

    def unpack_outputs(self, word: int) -> dict[str, int]:
        off = self.offsets(self.outputs)
        return {p.role: (word >> off[p.role]) & ((1 << p.width) - 1) for p in self.outputs}

    def expected(self, values: Mapping[str, int]) -> int:
        """The reference's outputs packed as one integer (sum in the low bits)."""
        return self.pack_outputs(self.reference(values))

    # -- words for people and for the proof -----------------------------------------------------------
    def formula(self) -> str:
        """The right-hand side of the operation in Verilog-like words, e.g. 'a + b + cin'."""
        c = " + cin" if self.has(CARRY_IN) else ""
        if self.operation == "add":
            return "a + b" + c
        if self.operation == "subtract":
            return "a + ~b + " + ("cin" if self.has(CARRY_IN) else "1")
        return "a + (sub ? ~b : b) + " + ("cin" if self.has(CARRY_IN) else "sub")

    def claim(self) -> str:
        """What a passed proof establishes for these ports, e.g. '{cout, sum} = a + b + cin'."""
        rhs = self.formula()
        text = f"{{cout, sum}} = {rhs}" if self.has(CARRY_OUT) else f"sum = ({rhs}) mod 2^{self.width}"
        if self.has(OVERFLOW):
            text += ", overflow = signed overflow"
        return text

    def verilog_reference(self, module: str) -> str:
        """A Verilog module with this interface's ports that computes the reference with Verilog's own
        arithmetic (the proof's other side): ``+`` on widened operands, overflow from the signed sum."""
        w = self.width
        ports = []
        for p in self.pins:
            rng = "" if p.scalar else f"[{p.width - 1}:0] "
            ports.append(f"{'input' if p.direction == 'in' else 'output'} wire {rng}{p.name}")
        if self.operation == "add":
            y = "b"
        elif self.operation == "subtract":
            y = "~b"
        else:
            y = "(sub ? ~b : b)"
        c = "cin" if self.has(CARRY_IN) else ("1'b0" if self.operation == "add" else
                                             "1'b1" if self.operation == "subtract" else "sub")
        body = [f"    wire [{w - 1}:0] y = {y};",
                f"    wire [{w}:0] t = {{1'b0, a}} + {{1'b0, y}} + {{{w}'d0, {c}}};",
                f"    assign sum = t[{w - 1}:0];"]
        if self.has(CARRY_OUT):
            body.append(f"    assign cout = t[{w}];")
        if self.has(OVERFLOW):
            # signed operands widened by one bit hold the exact signed result
            body += [f"    wire signed [{w}:0] s = $signed({{a[{w - 1}], a}}) + $signed({{y[{w - 1}], y}})"
                     f" + $signed({{{w}'d0, {c}}});",
                     f"    assign overflow = s[{w}] ^ s[{w - 1}];"]
        return f"module {module} (\n    " + ",\n    ".join(ports) + "\n);\n" + "\n".join(body) + "\nendmodule\n"

    def describe(self) -> str:
        """One line for dumps: 'add width=8 latency=0 in a[8] b[8] cin out sum[8] cout'."""
        def pin(p: Pin) -> str:
            return p.name if p.scalar else f"{p.name}[{p.width}]"

        ins = " ".join(pin(p) for p in self.pins if p.direction == "in")
        outs = " ".join(pin(p) for p in self.pins if p.direction == "out")
        clock = f" reset={self.reset}/{self.reset_level}" if self.reset != "none" else ""
        return f"{self.operation} width={self.width} latency={self.latency}{clock} in {ins} out {outs}"

    # -- as data, for child processes ------------------------------------------------------------------
    def to_json(self) -> str:
        return json.dumps({"width": self.width, "operation": self.operation,
                           "latency": self.latency, "reset": self.reset, "reset_level": self.reset_level,
                           "pins": [[p.role, p.direction, p.width, p.scalar] for p in self.pins]},
                          separators=(",", ":"))

    @classmethod
    def from_json(cls, text: str) -> "Interface":
        d = json.loads(text)
        pins = tuple(Pin(r, direction, int(w), bool(s)) for r, direction, w, s in d["pins"])
        iface = cls(int(d["width"]), d["operation"], pins, int(d["latency"]), d["reset"], d["reset_level"])
        iface.validate()
        return iface

    def validate(self) -> None:
        """Raise ValueError unless the record is one this tool can make."""
        if self.operation not in OPERATIONS:
            raise ValueError(f"unknown operation {self.operation!r}")
        roles = [p.role for p in self.pins]
        if len(set(roles)) != len(roles) or not set(roles) <= set(ROLES):
            raise ValueError(f"bad port roles {roles}")
        for r in (OPERAND_A, OPERAND_B, SUM):
            if not self.has(r):
                raise ValueError(f"no port {r}")
        for p in self.pins:
            want = self.width if p.role in (OPERAND_A, OPERAND_B, SUM) else 1
            if p.width != want or p.direction != ("out" if p.role in OUTPUTS else "in"):
                raise ValueError(f"port {p.role}: width {p.width}, direction {p.direction}")
        if self.has(SUBTRACT) != (self.operation == "add-subtract"):
            raise ValueError("a sub port exactly when the operation is add-subtract")
        if self.has(CLOCK) != (self.latency > 0) or (self.has(ENABLE) and not self.latency):
            raise ValueError("a clk port exactly when the latency is 1 or more, an en port only then")
        if self.has(RESET) != (self.reset in ("sync", "async")) or self.reset_level not in ("high", "low"):
            raise ValueError(f"an rst port exactly when there is a reset (reset {self.reset!r})")


def sign_overflow(xs, ys, rs):
    """Signed overflow of an addition from the sign bits (bit 0 of each word) of its addends and result."""
    return ~(xs ^ ys) & (xs ^ rs)


def _signed(x: int, w: int) -> int:
    return x - (1 << w) if x >> (w - 1) & 1 else x


def adder(width: int, carry_in: bool = True, carry_out: bool = True, operation: str = "add",
          overflow: bool = False, latency: int = 0) -> Interface:
    """The interface of a combinational adder with these ports (the order the emitted module declares)."""
    pins = [Pin(OPERAND_A, "in", width), Pin(OPERAND_B, "in", width)]
    if carry_in:
        pins.append(Pin(CARRY_IN, "in", 1, True))
    if operation == "add-subtract":
        pins.append(Pin(SUBTRACT, "in", 1, True))
    pins.append(Pin(SUM, "out", width))
    if carry_out:
        pins.append(Pin(CARRY_OUT, "out", 1, True))
    if overflow:
        pins.append(Pin(OVERFLOW, "out", 1, True))
    iface = Interface(width, operation, tuple(pins), latency)
    iface.validate()
    return iface


def of_ports(inputs, outputs) -> Interface:
    """The interface a hand-built network's ports spell out (tests build some): roles are port names."""
    names = {p.name: p for p in tuple(inputs) + tuple(outputs)}
    width = names[OPERAND_A].width
    return adder(width, CARRY_IN in names, CARRY_OUT in names,
                 "add-subtract" if SUBTRACT in names else "add", OVERFLOW in names)


def of_spec(spec) -> Interface:
    """The interface a validated spec asks for."""
    return adder(spec.width, spec.carry_in, spec.carry_out, getattr(spec, "operation", "add"),
                 getattr(spec, "overflow", False))
