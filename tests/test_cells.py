"""The cell table (ir/cells.py): every op has every field its kind needs, and each gate's meanings agree.

The evaluator's meaning of each gate is held against outside references on every input combination: its
Verilog form simulated in Icarus, its VHDL form in GHDL, its Amaranth form in Amaranth's simulator. The
compiled evaluator's steps and the plain evaluator are held to the same truth table through evaluate.py.
"""

from __future__ import annotations

import re
import string

import numpy as np
import pytest

from adder_forge.checks.evaluate import Evaluator, Kernel, schedule
from adder_forge.ir.cells import CELLS, GATES, CellType
from adder_forge.ir.network import Network, Node, Port
from adder_forge.ir.passes import break_gate
from adder_forge.base.tools import Command, find, run

KINDS = {"gate", "input", "const", "macro", "register"}


def truth(op: str) -> list[int]:
    """The evaluator's output for input combination k = 0 .. 2^arity - 1 (argument j is bit j of k)."""
    c = CELLS[op]
    return [c.evaluate(*((k >> j) & 1 for j in range(c.arity))) & 1 for k in range(1 << c.arity)]


def _placeholders(form: str) -> set[int]:
    return {int(f) for _, f, _, _ in string.Formatter().parse(form) if f is not None and f != ""}


@pytest.mark.parametrize("op", sorted(CELLS))
def test_every_op_has_every_field_of_its_kind(op):
    c = CELLS[op]
    assert c.name == op and c.kind in KINDS and c.doc
    assert isinstance(c.cost, int) and isinstance(c.levels, int)
    if c.kind == "gate":
        for f in CellType.FORMS:
            assert getattr(c, f) is not None, f"{op} has no {f}"
        assert c.arity >= 1 and c.cost >= 1 and c.levels >= 1
        assert _placeholders(c.verilog) == _placeholders(c.vhdl) == set(range(c.arity))
        assert len(c.effort.g) == c.arity and c.effort.p > 0 and all(g > 0 for g in c.effort.g)
        assert c.unit_gate.area >= 1 and c.unit_gate.delay >= 1 and c.unit_gate.doc
        assert all(k < c.arity for _, pins in c.steps for k in pins)
        if c.slip is not None:
            assert CELLS[c.slip].arity == c.arity and truth(c.slip) != truth(op)
    elif c.kind == "register":
        assert c.arity == 1 and c.none_because
        for f in ("evaluate", "verilog", "vhdl", "amaranth"):
            assert getattr(c, f) is not None, f"{op} has no {f}"
        assert c.evaluate(0) == 0 and c.evaluate(1) == 1  # the next state is the data input
        assert c.unit_gate is None and c.effort is None and c.steps is None
    else:
        # what does not apply is None, and the table says why
        assert c.none_because, f"{op}: say why it has no gate forms"
        assert c.unit_gate is None and c.effort is None and c.steps is None


def test_gates_are_the_gate_kind():
    assert GATES == {op for op, c in CELLS.items() if c.kind == "gate"}
    assert {"NOT", "AND2", "OR2", "XOR2", "XNOR2", "AO21", "MUX2"} <= GATES


def test_truth_tables_against_python_operators():
    """The evaluator read on Python ints, against Python's own operators on 0/1 (common practice)."""
    ref = {"NOT": lambda x: 1 - x, "AND2": lambda x, y: x and y, "OR2": lambda x, y: x or y,
           "XOR2": lambda x, y: x != y, "XNOR2": lambda x, y: x == y, "AO21": lambda x, y, z: (x and y) or z,
           "MUX2": lambda s, d0, d1: d1 if s else d0}
    for op, f in ref.items():
        arity = CELLS[op].arity
        want = [int(bool(f(*((k >> j) & 1 for j in range(arity))))) for k in range(1 << arity)]
        assert truth(op) == want, op


def _one_gate(op: str) -> Network:
    arity = CELLS[op].arity
    nodes = [Node("INPUT", (), f"x[{j}]", param=j) for j in range(arity)]
    nodes.append(Node(op, tuple(range(arity)), "y"))
    net = Network(f"one_{op}", tuple(nodes), (Port("x", tuple(range(arity))),), (Port("y", (arity,)),))
    return net  # not an adder: no interface record, so check_well_formed does not apply


@pytest.mark.parametrize("op", sorted(GATES))
def test_both_evaluators_read_the_table(op):
    """evaluate.py's plain evaluator and compiled steps on a one-gate network, all combinations packed."""
    arity = CELLS[op].arity
    net = _one_gate(op)
    combos = 1 << arity
    planes = np.array([[sum(((k >> j) & 1) << k for k in range(combos))] for j in range(arity)], dtype=np.uint64)
    mask = (1 << combos) - 1
    plain = int(Evaluator(net).run({"x": planes})["y"][0][0]) & mask
    kern = Kernel(schedule(net), 1)
    for dst, src in zip(kern.input("x"), planes):
        dst[:] = src
    kern.run()
    compiled = int(kern.output("y")[0][0]) & mask
    want = sum(bit << k for k, bit in enumerate(truth(op)))
    assert plain == compiled == want


def test_break_gate_uses_the_slip():
    net = _one_gate("AND2")
    assert break_gate(net, 2).nodes[2].op == "OR2"
    with pytest.raises(ValueError):
        break_gate(_one_gate("NOT"), 1)


# -- outside references --------------------------------------------------------------------------------------
def _verilog_bench() -> str:
    lines = ["`timescale 1ns / 1ps", "module cells_tb;", "    reg [2:0] x;", "    integer k;"]
    for op in sorted(GATES):
        lines.append(f"    wire y_{op} = {CELLS[op].verilog.format('x[0]', 'x[1]', 'x[2]')};")
    lines += ["    initial begin", "        for (k = 0; k < 8; k = k + 1) begin", "            x = k[2:0];",
              "            #1;"]
    for op in sorted(GATES):
        lines.append(f'            if (k < {1 << CELLS[op].arity}) $display("{op} %0d %b", k, y_{op});')
    lines += ["        end", "        $finish;", "    end", "endmodule", ""]
    return "\n".join(lines)


def _parse(text: str) -> dict[str, list[int]]:
    got: dict[str, list[int]] = {}
    for op, k, bit in re.findall(r"\b([A-Z0-9]+) (\d+) '?([01xXuUzZ])'?", text):
        if op in GATES:
            got.setdefault(op, []).append(int(bit) if bit in "01" else -1)
    return got


@pytest.mark.sim
def test_verilog_forms_in_icarus_match_the_evaluator(tmp_path):
    (tmp_path / "cells_tb.v").write_text(_verilog_bench(), encoding="utf-8")
    r = run(Command((find("iverilog"), "-g2012", "-Wall", "-o", "cells.vvp", "cells_tb.v"), str(tmp_path)))
    assert r.ok, r.stderr
    assert "warning" not in r.stderr.lower(), r.stderr
    r = run(Command((find("vvp"), "-n", "cells.vvp"), str(tmp_path)))
    assert r.ok, r.stderr
    got = _parse(r.stdout)
    assert set(got) == set(GATES)
    for op in GATES:
        assert got[op] == truth(op), op


def _vhdl_bench() -> str:
    ops = sorted(GATES)
    lines = ["library ieee;", "use ieee.std_logic_1164.all;", "use ieee.numeric_std.all;", "",
             "entity cells_tb is", "end entity cells_tb;", "", "architecture bench of cells_tb is",
             "    signal x : std_logic_vector(2 downto 0);"]
    lines += [f"    signal y_{op} : std_logic;" for op in ops]
    lines.append("begin")
    lines += [f"    y_{op} <= {CELLS[op].vhdl.format('x(0)', 'x(1)', 'x(2)')};" for op in ops]
    lines += ["    process", "    begin", "        for k in 0 to 7 loop",
              "            x <= std_logic_vector(to_unsigned(k, 3));", "            wait for 1 ns;"]
    for op in ops:
        lines.append(f"            if k < {1 << CELLS[op].arity} then report \"{op} \" & integer'image(k) & \" \" "
                     f"& std_logic'image(y_{op}); end if;")
    lines += ["        end loop;", "        wait;", "    end process;", "end architecture bench;", ""]
    return "\n".join(lines)


@pytest.mark.ghdl
def test_vhdl_forms_in_ghdl_match_the_evaluator(tmp_path):
    from adder_forge.checks import ghdl

    (tmp_path / "cells_tb.vhd").write_text(_vhdl_bench(), encoding="utf-8")
    r = run(ghdl.analyse_command(["cells_tb.vhd"], tmp_path))
    assert r.ok, r.stderr + r.stdout
    r = run(ghdl.run_command("cells_tb", tmp_path))
    assert r.ok, r.stderr + r.stdout
    got = _parse(r.stdout + r.stderr)
    assert set(got) == set(GATES)
    for op in GATES:
        assert got[op] == truth(op), op


@pytest.mark.amaranth
def test_amaranth_forms_in_amaranth_simulator_match_the_evaluator():
    from amaranth import hdl
    from amaranth.hdl import Module, Signal
    from amaranth.sim import Simulator

    m = Module()
    x = Signal(3)
    ys = {}
    for op in sorted(GATES):
        ys[op] = Signal(name=f"y_{op}")
        m.d.comb += ys[op].eq(CELLS[op].amaranth(hdl, *(x[j] for j in range(CELLS[op].arity))))
    got: dict[str, list[int]] = {op: [] for op in GATES}

    async def bench(ctx):
        for k in range(8):
            ctx.set(x, k)
            for op in GATES:
                if k < 1 << CELLS[op].arity:
                    got[op].append(ctx.get(ys[op]))

    sim = Simulator(m)
    sim.add_testbench(bench)
    sim.run()
    for op in GATES:
        assert got[op] == truth(op), op
