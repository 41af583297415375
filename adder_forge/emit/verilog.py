"""Verilog-2001 from the IR: one scalar wire per gate (Icarus slows down 10-60x on per-bit assigns to
vector nets, see docs/toolchain.md), outputs gathered in one concatenation, and no time stamps so that the same
spec gives the same bytes."""

from __future__ import annotations

from dataclasses import replace

from ..ir.cells import CELLS, add_width, register_fields, verilog_of
from ..ir.network import Network


def _ref(net: Network, i: int) -> tuple[str, int | None]:
    """(vector-or-scalar name, bit index or None) of a node as an operand."""
    n = net.nodes[i]
    if n.op == "INPUT":
        port = n.name.split("[")[0]
        p = net.port(port)
        return (port, None) if p.scalar else (port, n.param)
    if n.op == "PICK":
        return (net.nodes[n.args[0]].name, n.param)
    if n.op == "CONST":
        return (f"1'b{n.param}", None)
    return (n.name, None)


def operand(net: Network, i: int) -> str:
    name, bit = _ref(net, i)
    return name if bit is None else f"{name}[{bit}]"


def concat(net: Network, msb_first: list[int]) -> str:
    """A concatenation with runs of consecutive bits of one vector folded into part selects."""
    refs = [_ref(net, i) for i in msb_first]
    parts: list[str] = []
    k = 0
    while k < len(refs):
        name, bit = refs[k]
        j = k
        if bit is not None:
            while j + 1 < len(refs) and refs[j + 1][0] == name and refs[j + 1][1] == refs[j][1] - 1:
                j += 1
        if bit is None:
            parts.append(name)
        elif j == k:
            parts.append(f"{name}[{bit}]")
        else:
            p = net.port(name)
            whole = p is not None and not p.scalar and bit == p.width - 1 and refs[j][1] == 0
            parts.append(name if whole else f"{name}[{bit}:{refs[j][1]}]")
        k = j + 1
    return parts[0] if len(parts) == 1 else "{" + ", ".join(parts) + "}"


def expression(net: Network, i: int) -> str:
    n = net.nodes[i]
    return verilog_of(n.op, [operand(net, a) for a in n.args])


def _read_carries(net: Network, uses: list[int]) -> set[int]:
    """ADD cells whose carry-out bit something reads (the vector then needs k + 1 bits, else k)."""
    out = set()
    for j, n in enumerate(net.nodes):
        if n.op == "PICK" and uses[j] and n.param == add_width(len(net.nodes[n.args[0]].args)):
            out.add(n.args[0])
    return out


def _unread_bits(net: Network, uses: list[int]) -> set[int]:
    """ADD cells with a sum bit nothing reads (chain-select's second chain: its lowest sum is not needed)."""
    read: dict[int, set[int]] = {}
    for j, n in enumerate(net.nodes):
        if n.op == "PICK" and uses[j]:
            read.setdefault(n.args[0], set()).add(n.param)
    return {i for i, n in enumerate(net.nodes)
            if n.op == "ADD" and not set(range(add_width(len(n.args)))) <= read.get(i, set())}


def _add_expr(net: Network, i: int, bits: int) -> str:
    n = net.nodes[i]
    k = add_width(len(n.args))
    a = concat(net, list(reversed(n.args[:k])))
    b = concat(net, list(reversed(n.args[k : 2 * k])))
    cin_node = net.nodes[n.args[2 * k]]
    # Operands widened to the vector's width by hand so that lint sees no implicit width change.
    wide = bits > k
    text = f"{{1'b0, {a}}} + {{1'b0, {b}}}" if wide else f"{a} + {b}"
    if cin_node.op == "CONST" and cin_node.param == 0:
        return text
    pad = k if wide else k - 1
    cin = operand(net, n.args[2 * k])
    return text + (f" + {{{pad}'d0, {cin}}}" if pad else f" + {cin}")


def port_decls(net: Network) -> list[dict]:
    decls = []
    for direction, ports in (("input ", net.inputs), ("output", net.outputs)):
        for p in ports:
            rng = "       " if p.scalar else f"[{p.width - 1}:0]".ljust(7)
            decls.append({"decl": f"{direction} wire {rng} {p.name}".rstrip()})
    return decls


def register_process(net: Network) -> list[str]:
    """The one clocked process of a pipelined module (empty for a combinational one): every register on
    the rising edge of clk, cleared by rst (synchronously, or asynchronously as its edge in the sensitivity
    list) and loaded only when en is high, as the register cells say (cells.register_param)."""
    regs = [i for i, n in enumerate(net.nodes) if CELLS[n.op].kind == "register"]
    if not regs:
        return []
    kinds = {replace(register_fields(net.nodes[i].param), rank=0) for i in regs}
    if len(kinds) != 1:
        raise ValueError(f"{net.name}: registers clocked in different ways cannot share one process")
    f = register_fields(net.nodes[regs[0]].param)
    low = f.reset_level == "low"
    edge = " or " + ("negedge" if low else "posedge") + " rst" if f.reset == "async" else ""
    loads = [f"{net.nodes[i].name} <= {verilog_of(net.nodes[i].op, [operand(net, net.nodes[i].args[0])])};"
             for i in regs]
    lines = [f"always @(posedge clk{edge}) begin"]
    if f.reset != "none":
        lines.append(f"    if ({'!rst' if low else 'rst'}) begin")
        lines += [f"        {net.nodes[i].name} <= 1'b0;" for i in regs]
        lines.append("    end else " + ("if (en) begin" if f.enable else "begin"))
        lines += ["        " + x for x in loads]
        lines.append("    end")
    elif f.enable:
        lines.append("    if (en) begin")
        lines += ["        " + x for x in loads]
        lines.append("    end")
    else:
        lines += ["    " + x for x in loads]
    lines.append("end")
    return lines


# Roles whose wires ``form: kept`` (and the structure-kept FPGA flow) mark (* keep *): every carry, prefix
# cell, select and skip, so that a mapper still packs gates into LUTs but cannot rebuild the carry logic
# (docs/fpga.md, "Flattened or kept"). Bitwise generate/propagate and sums stay free.
KEEP_ROLES = frozenset({"carry", "prefix", "select", "block_pg", "skip", "lookahead"})


def emit_module(net: Network, header: list[str], keep: frozenset[str] = frozenset()) -> str:
    """The module's text. ``keep``: roles whose wires get ``(* keep *)``, so that synthesis must build each of
    them as a net of its own (the structure-kept FPGA flow keeps the carries this way)."""
    from .templating import render

    wires = []  # in node order, so that every net is declared before it is read (an ADD may read gates)
    regs = []
    uses = net.uses()
    carried = _read_carries(net, uses)
    unread = _unread_bits(net, uses)
    for i, n in enumerate(net.nodes):
        if n.op == "ADD":
            bits = add_width(len(n.args)) + (i in carried)
            wires.append({"name": n.name, "range": f"[{bits - 1}:0] ", "expr": _add_expr(net, i, bits),
                          "unread": i in unread, "keep": False})
        elif CELLS[n.op].kind == "register":
            regs.append(n.name)
        elif n.op not in ("INPUT", "CONST", "PICK"):
            wires.append({"name": n.name, "range": "", "expr": expression(net, i), "unread": False,
                          "keep": n.role in keep})
    outputs = [{"name": p.name, "expr": concat(net, list(reversed(p.bits)))} for p in net.outputs]
    return render("module.v.j2", header=header, name=net.name, ports=port_decls(net), wires=wires,
                  outputs=outputs, regs=regs,
                  process=register_process(net))
