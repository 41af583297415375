"""Mutation operators on emitted Verilog text, for testing the checks themselves.

Each mutant is the module with one change, of the kind a hand edit or a generator bug makes: a gate of
another type, two operands swapped, a wire stuck at 0 or 1, a wrong bit index. A mutant either changes
the function (every check must then fail it) or not (an equivalent mutant, which only a proof can tell:
see tests/test_mutation.py and docs/mutation.md). Operators work on the text, not the IR, so that they
test the checks on what the user actually receives.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, replace
from typing import Iterator

OPERATORS = ("gate", "swap", "stuck0", "stuck1", "bit")
_WIRE = re.compile(r"^(    wire )(\[\d+:\d+\] )?(\w+)( = )(.*)(;)$")
_ASSIGN = re.compile(r"^(    assign )(\w+)( = )(.*)(;)$")
_DECL = re.compile(r"\b(?:input|output)?\s*wire\s+\[(\d+):0\]\s+(\w+)")
_INDEX = re.compile(r"\b(\w+)\[(\d+)(?::(\d+))?\]")
_OPERAND = re.compile(r"1'b[01]|\w+(?:\[\d+(?::\d+)?\])?")
_GATE_NEXT = {"&": "|", "|": "^", "^": "&", "+": "-"}  # a different function for every operator


@dataclass(frozen=True)
class Mutant:
    operator: str
    line: int  # 1-based line of the module text that was changed
    before: str
    after: str
    verilog: str  # the whole mutated module, renamed

    def describe(self) -> str:
        return f"{self.operator} at line {self.line}: `{self.before.strip()}` -> `{self.after.strip()}`"


def _edits(line: str, widths: dict[str, int], next_line: str | None) -> Iterator[tuple[str, str]]:
    """(operator, new line) for every single change this line admits."""
    m = _WIRE.match(line) or _ASSIGN.match(line)
    if not m:
        return
    is_wire = m.re is _WIRE
    head = "".join(g or "" for g in m.groups()[:-2])
    expr, tail = m.group(m.lastindex - 1), m.group(m.lastindex)
    # gate: one operator of another type (XNOR loses its ~, NOT loses its ~)
    for k, ch in enumerate(expr):
        if ch in _GATE_NEXT:
            yield "gate", head + expr[:k] + _GATE_NEXT[ch] + expr[k + 1 :] + tail
    if expr.startswith("~"):
        yield "gate", head + expr[1:] + tail
    # swap: two operands in positions that are not symmetric (AO21's AND input and OR input; MUX data
    # inputs; MUX select and data), or the first operands of two neighbouring gates crossed
    ops = list(_OPERAND.finditer(expr))
    ao = re.fullmatch(r"\((\S+) & (\S+)\) \| (\S+)", expr)
    mux = re.fullmatch(r"(\S+) \? (\S+) : (\S+)", expr)
    if ao:
        x, y, z = ao.groups()
        if y != z:
            yield "swap", head + f"({x} & {z}) | {y}" + tail
    elif mux:
        s, d1, d0 = mux.groups()
        if d1 != d0:
            yield "swap", head + f"{s} ? {d0} : {d1}" + tail
        if s != d1:
            yield "swap", head + f"{d1} ? {s} : {d0}" + tail
    elif is_wire and next_line is not None and ops:
        n = _WIRE.match(next_line)
        if n:
            other = list(_OPERAND.finditer(n.group(5)))
            if other and other[0].group(0) != ops[0].group(0) and other[0].group(0) != m.group(3):
                yield "swap", head + expr[: ops[0].start()] + other[0].group(0) + expr[ops[0].end():] + tail
    # stuck at 0 / 1: a gate's output replaced by a constant
    if is_wire and m.group(2) is None:
        yield "stuck0", head + "1'b0" + tail
        yield "stuck1", head + "1'b1" + tail
    # bit: one index moved to its neighbour (a part select shifted by one)
    for ix in _INDEX.finditer(expr):
        name, hi, lo = ix.group(1), int(ix.group(2)), ix.group(3)
        top = widths.get(name)
        if top is None:
            continue
        if lo is None:
            new = hi + 1 if hi + 1 < top else hi - 1
            if new < 0:
                continue
            sel = f"{name}[{new}]"
        else:
            lo = int(lo)
            if hi + 1 < top:
                sel = f"{name}[{hi + 1}:{lo + 1}]"
            elif lo > 0:
                sel = f"{name}[{hi - 1}:{lo - 1}]"
            else:
                continue
        yield "bit", head + expr[: ix.start()] + sel + expr[ix.end():] + tail


def mutants(verilog: str, name: str, new_name: str) -> list[Mutant]:
    """Every single-change mutant of a module, each renamed ``new_name`` + ``_m`` + its index."""
    lines = verilog.split("\n")
    widths = {m.group(2): int(m.group(1)) + 1 for m in _DECL.finditer(verilog)}
    header = f"module {name} ("
    at = lines.index(header)
    out: list[Mutant] = []
    seen: set[tuple[int, str]] = set()
    for i, line in enumerate(lines):
        nxt = lines[i + 1] if i + 1 < len(lines) else None
        for op, new in _edits(line, widths, nxt):
            if new == line or (i, new) in seen:  # the same text from two operators counts once
                continue
            seen.add((i, new))
            text = lines[:]
            text[i] = new
            text[at] = f"module {new_name}_m{len(out)} ("
            out.append(Mutant(op, i + 1, line, new, "\n".join(text)))
    return out


def sample(all_mutants: list[Mutant], per_operator: int) -> list[Mutant]:
    """Up to ``per_operator`` of each operator, evenly spread over the module, keeping their names."""
    picked: list[Mutant] = []
    for op in OPERATORS:
        mine = [m for m in all_mutants if m.operator == op]
        if len(mine) <= per_operator:
            picked += mine
        else:
            picked += [mine[(k * len(mine)) // per_operator] for k in range(per_operator)]
    return sorted(picked, key=_index)


def _index(m: Mutant) -> int:
    return int(re.search(r"^module \w+_m(\d+) \(", m.verilog, re.M).group(1))


def module_name(m: Mutant) -> str:
    return re.search(r"^module (\w+) \(", m.verilog, re.M).group(1)



def mutant_design(base, mutant: Mutant):
    """A Design for the mutant: its module, and a testbench that reads the base design's vectors file."""
    from ..emit.testbench import emit_testbench

    name = module_name(mutant)
    s = base.spec
    tb = emit_testbench(name, base.net.iface, base.testbench.plan, base.testbench.pick.max_bytes,
                        vectors_file=base.testbench.vectors_file)
    # the network keeps the base function and ports; only its name changes, for formal.prove's miter
    return replace(base, spec=replace(s, name=name), net=replace(base.net, name=name), verilog=mutant.verilog,
                   testbench=tb)
