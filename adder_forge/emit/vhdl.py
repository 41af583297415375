"""VHDL-93 from the IR, and its self-checking testbench over the same vectors file as the Verilog one.

One ``std_logic`` signal per IR gate, as in the flat Verilog; an ADD macro (the ``+`` baseline) becomes a
numeric_std ``unsigned`` addition. VHDL names are case-insensitive and stricter than Verilog's (no leading,
trailing or doubled underscore, more reserved words), so every wire name is mapped to a legal one, kept
as the Verilog name wherever that is already legal, and made unique ignoring case.
"""

from __future__ import annotations

import re

from dataclasses import replace

from ..ir.cells import CELLS, add_width, register_fields, vhdl_of
from ..ir.network import Network

STD = "93c"  # what GHDL is asked to check the files against (VHDL-93 with common relaxations)
ARCHITECTURE = "netlist"

# VHDL-93 reserved words, with those VHDL-2002/2008 (and PSL inside 2008) added, so that a file stays
# legal under a newer standard: the reserved-word lists of IEEE Std 1076-1993 and 1076-2008, written from
# memory; tests analyse the emitted files under GHDL's --std=93 and --std=08.
RESERVED = frozenset("""
abs access after alias all and architecture array assert attribute begin block body buffer bus case
component configuration constant disconnect downto else elsif end entity exit file for function generate
generic group guarded if impure in inertial inout is label library linkage literal loop map mod nand new
next nor not null of on open or others out package port postponed procedure process pure range record
register reject rem report return rol ror select severity signal shared sla sll sra srl subtype then to
transport type unaffected units until use variable wait when while with xnor xor
protected context force parameter release
assume assume_guarantee cover default fairness property restrict restrict_guarantee sequence strong vmode
vprop vunit
""".split())

# Names the emitted files refer to: a signal of the same name would hide them (VHDL scoping).
_REFERRED = frozenset("""
ieee std work textio std_logic_1164 numeric_std std_logic std_ulogic std_logic_vector std_ulogic_vector
unsigned signed resize is_x natural integer string character boolean line text output read readline write
writeline file_open file_close endfile read_mode open_ok file_open_status now
""".split()) | {ARCHITECTURE}

_BASIC = re.compile(r"^[A-Za-z](_?[A-Za-z0-9])*$")


def entity_problem(name: str) -> str | None:
    """Why ``name`` cannot name a VHDL entity, or None when it can."""
    if not _BASIC.match(name):
        return "a VHDL name starts with a letter and has no leading, trailing or doubled '_'"
    if name.lower() in RESERVED:
        return "it is a VHDL reserved word"
    if name.lower() in _REFERRED:
        return "it would hide a name the generated VHDL uses"
    return None


def legal(hint: str) -> str:
    """The nearest legal VHDL basic identifier to ``hint``."""
    s = re.sub(r"_+", "_", re.sub(r"[^A-Za-z0-9_]", "_", hint)).strip("_")
    if not s or not s[0].isalpha():
        s = "w" + ("_" + s if s else "")
    return s


class Names:
    """Unique legal VHDL names, unique ignoring case, never a reserved word or a name the file refers to."""

    def __init__(self, taken=()):
        self._taken = {t.lower() for t in taken} | set(RESERVED) | set(_REFERRED)

    def take(self, hint: str) -> str:
        base = legal(hint)
        name, k = base, 2
        while name.lower() in self._taken:
            name, k = f"{base}_{k}", k + 1
        self._taken.add(name.lower())
        return name


class _Emitter:
    def __init__(self, net: Network):
        self.net = net
        self.names = Names([p.name for p in net.inputs + net.outputs] + [net.name])
        self.vname: dict[int, str] = {}
        for i, n in enumerate(net.nodes):
            if n.op not in ("INPUT", "CONST", "PICK"):
                self.vname[i] = self.names.take(n.name or f"n{i}")

    def ref(self, i: int) -> tuple[str, int | None, str]:
        """(name or literal, bit index or None, kind): kind 'slv' for std_logic_vector, 'uns' for an ADD's
        unsigned, 'bit' for a std_logic signal or port, 'const' for a literal."""
        n = self.net.nodes[i]
        if n.op == "INPUT":
            port = n.name.split("[")[0]
            p = self.net.port(port)
            return (port, None, "bit") if p.scalar else (port, n.param, "slv")
        if n.op == "PICK":
            return (self.vname[n.args[0]], n.param, "uns")
        if n.op == "CONST":
            return (f"'{n.param}'", None, "const")
        return (self.vname[i], None, "bit")

    def operand(self, i: int) -> str:
        name, bit, kind = self.ref(i)
        if kind == "const":
            return f"std_logic'({name})"  # a bare '0' could be a bit or a character as well
        return name if bit is None else f"{name}({bit})"

    def expression(self, i: int) -> str:
        n = self.net.nodes[i]
        return vhdl_of(n.op, [self.operand(a) for a in n.args])

    def vector_of(self, nodes: list[int]) -> str | None:
        """The name of a whole std_logic_vector port whose bits 0.. are exactly ``nodes``, else None."""
        if not nodes:
            return None
        name, bit, kind = self.ref(nodes[0])
        p = self.net.port(name) if kind == "slv" else None
        if p is None or p.width != len(nodes) or any(self.ref(j) != (name, k, "slv") for k, j in enumerate(nodes)):
            return None
        return name

    def assign_bits(self, target: str, width: int | None, nodes: list[int]) -> list[str]:
        """Assignments of ``nodes`` (LSB first) to target's bits, runs of one source vector folded into
        slices; ``width`` None: target is a scalar."""
        if width is None:
            return [f"{target} <= {self.operand(nodes[0]) if self.ref(nodes[0])[2] != 'const' else self.ref(nodes[0])[0]};"]
        refs = [self.ref(i) for i in nodes]
        out: list[str] = []
        k = 0
        while k < len(refs):
            name, bit, kind = refs[k]
            j = k
            if bit is not None:
                while j + 1 < len(refs) and refs[j + 1][0] == name and refs[j + 1][1] == refs[j][1] + 1:
                    j += 1
            if j == k:
                src = name if bit is None else f"{name}({bit})"
                out.append(f"{target}({k}) <= {src};")
            else:
                p = self.net.port(name) if kind == "slv" else None
                whole_src = p is not None and bit == 0 and refs[j][1] == p.width - 1
                src = name if whole_src else f"{name}({refs[j][1]} downto {bit})"
                if kind == "uns":
                    src = f"std_logic_vector({src})"
                dst = target if (k == 0 and j == width - 1) else f"{target}({j} downto {k})"
                out.append(f"{dst} <= {src};")
            k = j + 1
        return out

    def emit(self) -> tuple[list[dict], list[str], bool]:
        net = self.net
        uses = net.uses()
        carried = {n.args[0] for j, n in enumerate(net.nodes)
                   if n.op == "PICK" and uses[j] and n.param == add_width(len(net.nodes[n.args[0]].args))}
        signals: list[dict] = []
        body: list[str] = []
        numeric = False
        regs = []
        for i, n in enumerate(net.nodes):
            if n.op == "ADD":
                numeric = True
                body += self._add(i, carried, signals)
            elif CELLS[n.op].kind == "register":
                signals.append({"name": self.vname[i], "type": "std_logic"})
                regs.append(i)
            elif n.op not in ("INPUT", "CONST", "PICK"):
                signals.append({"name": self.vname[i], "type": "std_logic"})
                body.append(f"{self.vname[i]} <= {self.expression(i)};")
        if regs:
            body += self.process(regs)
        for p in net.outputs:
            body += self.assign_bits(p.name, None if p.scalar else p.width, list(p.bits))
        return signals, body, numeric

    def process(self, regs: list[int]) -> list[str]:
        """The one clocked process of a pipelined entity: every register on the rising edge of clk,
        cleared by rst (inside the edge, or ahead of it for an asynchronous reset), loaded when en = '1'."""
        kinds = {replace(register_fields(self.net.nodes[i].param), rank=0) for i in regs}
        if len(kinds) != 1:
            raise ValueError(f"{self.net.name}: registers clocked in different ways cannot share one process")
        f = kinds.pop()
        active = "'0'" if f.reset_level == "low" else "'1'"
        loads = [f"{self.vname[i]} <= {vhdl_of(self.net.nodes[i].op, [self.operand(self.net.nodes[i].args[0])])};"
                 for i in regs]
        clears = [f"{self.vname[i]} <= '0';" for i in regs]

        def indent(lines: list[str], k: int) -> list[str]:
            return [" " * (4 * k) + x for x in lines]

        if f.enable:
            loads = ["if en = '1' then"] + indent(loads, 1) + ["end if;"]
        if f.reset == "async":
            inner = ([f"if rst = {active} then"] + indent(clears, 1) + ["elsif rising_edge(clk) then"]
                     + indent(loads, 1) + ["end if;"])
            head = "process (clk, rst)"
        else:
            edge = loads if f.reset == "none" else ([f"if rst = {active} then"] + indent(clears, 1) + ["else"]
                                                    + indent(loads, 1) + ["end if;"])
            inner = ["if rising_edge(clk) then"] + indent(edge, 1) + ["end if;"]
            head = "process (clk)"
        return [head, "begin"] + indent(inner, 1) + ["end process;"]

    def _add(self, i: int, carried: set[int], signals: list[dict]) -> list[str]:
        n = self.net.nodes[i]
        k = add_width(len(n.args))
        bits = k + (i in carried)
        name = self.vname[i]
        body: list[str] = []
        terms = []
        for part, nodes in (("a", list(n.args[:k])), ("b", list(n.args[k:2 * k]))):
            whole = self.vector_of(nodes)
            if whole is None:  # operand bits gathered in a vector of their own first
                whole = self.names.take(f"{name}_{part}")
                signals.append({"name": whole, "type": f"std_logic_vector({k - 1} downto 0)"})
                body += self.assign_bits(whole, k, nodes)
            terms.append(f"unsigned({whole})")
        if bits > k:
            terms[0] = f"resize({terms[0]}, {bits})"  # numeric_std's + is as wide as its wider operand
        cin = self.net.nodes[n.args[2 * k]]
        if not (cin.op == "CONST" and cin.param == 0):
            ci = self.names.take(f"{name}_ci")
            signals.append({"name": ci, "type": "std_logic_vector(0 downto 0)"})
            body += self.assign_bits(ci, 1, [n.args[2 * k]])
            terms.append(f"unsigned({ci})")
        signals.append({"name": name, "type": f"unsigned({bits - 1} downto 0)"})
        body.append(f"{name} <= {' + '.join(terms)};")
        return body


def port_decls(net: Network) -> list[str]:
    decls = []
    width = max(len(p.name) for p in net.inputs + net.outputs)
    for direction, ports in (("in ", net.inputs), ("out", net.outputs)):
        for p in ports:
            typ = "std_logic" if p.scalar else f"std_logic_vector({p.width - 1} downto 0)"
            decls.append(f"{p.name.ljust(width)} : {direction} {typ}")
    return decls


def emit_entity(net: Network, header: list[str]) -> str:
    from .templating import render

    signals, body, numeric = _Emitter(net).emit()
    return render("module.vhd.j2", header=header, name=net.name, ports=port_decls(net), signals=signals,
                  body=body, numeric=numeric, architecture=ARCHITECTURE)


def emit_testbench(name: str, iface, count: int, plan: str) -> str:
    """The VHDL testbench over the Verilog testbench's vectors file, generic over the interface's ports."""
    from ..base.version import __version__
    from .templating import render
    from .testbench import STEP, clocked_fields, line_bits, port_fields

    digits = (line_bits(iface) + 3) // 4  # as testbench.vector_lines writes them
    inputs, outputs = port_fields(iface)
    return render("testbench.vhd.j2", name=name, count=count, digits=digits, inputs=inputs, outputs=outputs,
                  in_bits=iface.in_bits, out_bits=iface.out_bits, claim=iface.claim(), step=STEP, plan=plan,
                  version=__version__, std=STD, clock=clocked_fields(iface))


def vhdl_files(d) -> dict[str, str]:
    """NAME.vhd and NAME_tb.vhd of a design (artifacts.Design); a spec name VHDL cannot take is a spec error."""
    spec = d.spec
    why = entity_problem(spec.name)
    if why is not None:
        raise spec.error("name", f"'name' '{spec.name}' cannot name a VHDL entity ({why}); rename it or build "
                                 f"without --hdl vhdl")
    from .summary import header_lines

    header = [line.replace("Verilog +", "numeric_std +") for line in header_lines(spec, d.metrics, d.net.meta)]
    return {
        f"{spec.name}.vhd": emit_entity(d.net, header),
        f"{spec.name}_tb.vhd": emit_testbench(spec.name, d.net.iface, d.testbench.count, d.plan),
    }
