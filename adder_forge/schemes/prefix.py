"""Parallel-prefix adders: a prefix network (prefix_networks.py) over the bitwise (g, p), then the sums.

Columns: bit i is prefix column i; with a carry-in the carry-in is column 0 (generate = c_in, no propagate)
and bit i is column i + 1, so the carry-in is one more prefix input (Harris 2003 does the same). A black
cell is an AO21 for G = G_hi | P_hi & G_lo and an AND2 for P = P_hi & P_lo; a gray cell is the AO21 alone.
Wires are named G<col>_<low> and P<col>_<low> after the prefix columns they span.

``block: k`` (or a list of sizes from bit 0 up) makes a sparse tree: the network is pruned to the
carries into every block (and the carry out), and each block's sums are formed for carry-in 0 and 1 by
two ripple chains and picked by the block's carry (a carry-select sum stage, as in Lynch and
Swartzlander's spanning-tree adder, 1992). ``block: 1`` is the dense network with s_i = p_i ^ c_i.

``ling: true`` runs the network on Ling's pairs (g_i, t_i-1) with t = a | b (Ling 1981, "High-speed binary
adder"): column i then holds the pseudo-carry H_i = g_i | c_i, and c_i+1 = t_i & H_i. The graph is the same
cell for cell, so prefix_nodes and prefix_levels do not change; the first-level cells of two adjacent
inputs become g_i | g_i-1 (an OR2 instead of an AO21, since t_i-1 & g_i-1 = g_i-1), and each carry that
is used costs the AND2 back.
"""

from __future__ import annotations

from pathlib import Path

from ..ir.network import META_BLOCK_SIZES, META_NOTE
from ..base.errors import NetworkError, SpecError
from ..spec.registry import (Description, Option, changed_keys, choice_option, label_of, scheme, schemes, shown,
                             spec_keys, type_name, value_text)
from . import network_file
from .blocksizes import block_option, validate_block, resolve, block_bounds, wide_note
from .prefix_networks import NETWORKS, build, final_refs, param_levels, prune, validate
from .blockparts import conditional, select
from .common import finish, generate_propagate, prefix_cells, start
from .ling import LING, carry, transmits


_ENTRY_MAX = 1 << 16  # more than any level count or fanout of a 16384-bit network; bounds the messages too


def _int_list(key: str, what: str, lo: int, length: int | None = None):
    def parse(v, fail):
        if not isinstance(v, list) or (length is not None and len(v) != length):
            fail(f"'{key}' must be {what}, got {type_name(v)}")
        for x in v:
            if isinstance(x, bool) or not isinstance(x, int) or x < lo:
                fail(f"'{key}' must be {what}, got an entry {type_name(x)}")
            if x > _ENTRY_MAX:
                fail(f"'{key}' entries must be at most {_ENTRY_MAX}, got {type_name(x)}")
        return tuple(v)

    return parse


FROM_FILE = "file"  # prefix: file reads the network from the file named by 'network'


def _path(v, fail):
    if not isinstance(v, str) or not v.strip():
        fail(f"'network' must be the path of a network file, got {type_name(v)}")
    if len(v) > 4096 or "\0" in v:
        fail("'network' is not a usable path (too long, or a NUL character)")
    return v


OPTIONS = (
    choice_option("prefix", sorted(NETWORKS) + [FROM_FILE], "kogge-stone",
                  "the prefix network; 'file' reads it from the file named by 'network'"),
    Option("network", _path, None, "for prefix: file, the network file (docs/network_file.md), relative to the spec"),
    Option("taxonomy", _int_list("taxonomy", "a list of three integers [l, f, t], each 0 or more", 0, 3), None,
           "for prefix: harris, Harris 2003's (l, f, t): l + f + t = ceil(log2 n) - 1 for n prefix inputs"),
    Option("fanouts", _int_list("fanouts", "a list of lateral fanouts, powers of two, the last level first", 1),
           None, "for prefix: knowles, the lateral fanout of each level, the last level first (Knowles 2001)"),
    block_option(1, "sparse tree: carries every k bits (or at the ends of a list of block sizes from bit 0 up), "
                    "sums by carry-select; 1 is dense", False, "prefix"),
    LING,
)


def network_path(spec) -> Path:
    """Where ``network:`` points: relative to the spec file's folder (to the current folder for a spec that
    was not read from a file)."""
    p = Path(spec.opt("network"))
    if p.is_absolute() or spec.source.startswith("<"):
        return p
    return Path(spec.source).parent / p


def file_network(spec):
    """The full network of a ``prefix: file`` spec, its inputs checked against the spec's width."""
    where = network_path(spec)
    try:
        graph = network_file.read(where, str(where))
    except SpecError as exc:
        if exc.message in ("no such file", "is a folder, not a network file", "is not a regular file"):
            raise spec.error("network", f"network file {shown(spec.opt('network'))}: {exc.message}") from None
        raise
    n = spec.width + spec.network_carry_in
    if graph.inputs != n:
        context = _inputs(spec) or f" (width {spec.width})"
        raise spec.error("network", f"network file {shown(spec.opt('network'))} has {graph.inputs} inputs, but this adder "
                                    f"needs {n}{context}")
    return graph


def _inputs(spec) -> str:
    """What the prefix inputs are beyond the width, for messages ('' when there is no carry-in column)."""
    if spec.carry_in:
        return f" (width {spec.width} plus the carry-in)"
    if spec.network_carry_in:
        return f" (width {spec.width} plus the carry into the network, which '{spec.operation}' has)"
    return ""


def validate_prefix(spec) -> None:
    validate_block(spec)
    if spec.opt("prefix") == FROM_FILE:
        for key in ("taxonomy", "fanouts"):
            if spec.opt(key) is not None:
                raise spec.error(key, f"'{key}' does not apply to 'prefix: file' (the file holds the network)")
        if spec.opt("network") is None:
            raise spec.error("prefix", "'prefix: file' needs 'network': the path of a network file")
        file_network(spec)
        return
    if spec.opt("network") is not None:
        raise spec.error("network", "'network' applies only to 'prefix: file'")
    kind = NETWORKS[spec.opt("prefix")]
    for key in ("taxonomy", "fanouts"):
        if spec.opt(key) is not None and kind.param != key:
            owner = next(k.name for k in NETWORKS.values() if k.param == key)
            raise spec.error(key, f"'{key}' applies only to 'prefix: {owner}', not to 'prefix: {kind.name}'")
    if kind.param is None:
        return
    n = spec.width + spec.network_carry_in
    context = _inputs(spec)
    value = spec.opt(kind.param)
    if value is None:
        L = param_levels(n)
        what = f"[l, f, t] with l + f + t = {L - 1}" if kind.param == "taxonomy" else \
            f"{L} lateral fanouts, the last level first,"
        raise spec.error("prefix", f"'prefix: {kind.name}' needs '{kind.param}': {what} for {n} prefix inputs{context}")
    try:
        kind.validate(n, value, context)
    except NetworkError as exc:
        raise spec.error(kind.param, str(exc)) from None


def network_for(spec, full=None):
    """The spec's prefix graph (or ``full``, any legal network over width + carry_in inputs), pruned to the
    carries the sum stage and the carry out read."""
    ci = int(spec.network_carry_in)
    if full is not None:
        validate(full)
        if full.inputs != spec.width + ci:
            raise NetworkError(f"{full.style}: {full.inputs} inputs, but a {spec.width}-bit adder "
                               f"{'with' if ci else 'without'} a carry into its network needs {spec.width + ci}")
    elif spec.opt("prefix") == FROM_FILE:
        full = file_network(spec)
    else:
        kind = NETWORKS[spec.opt("prefix")]
        full = build(kind.name, spec.width + ci, spec.opt(kind.param) if kind.param else None)
    block = spec.opt("block")
    sizes = resolve(block, spec.width)
    bounds = [lo for lo, _ in block_bounds(sizes)[1:]] + ([spec.width] if spec.network_carry_out else [])
    style = full.style
    if any(s > 1 for s in sizes):
        style += f", block {block if isinstance(block, int) else value_text(block)}"
    if spec.opt("ling"):
        style += ", ling"
    return prune(full, [s - 1 + ci for s in bounds], style), sizes


def describe_prefix(spec, resolved) -> Description:
    """The network first, always (kogge-stone is a choice, not a detail), with its parameter list or file;
    then the keys that differ from their default (block, ling)."""
    sch = schemes()["prefix"]
    net = spec.opt("prefix")
    if net == FROM_FILE:
        first = f"file {shown(spec.opt('network'))}"
    else:
        param = NETWORKS[net].param
        first = net + (f" {value_text(spec.opt(param))}" if param and spec.opt(param) is not None else "")
    rest = changed_keys(sch, spec, skip=("prefix", "network", "taxonomy", "fanouts"))
    return Description(label_of("prefix", [first, *rest]), spec_keys(sch, spec, resolved))


@scheme("prefix", options=OPTIONS, validate=validate_prefix, describe=describe_prefix,
        doc="parallel-prefix: Kogge-Stone, Brent-Kung, Sklansky, Han-Carlson, Ladner-Fischer, Knowles, the "
            "Harris (l, f, t) taxonomy, any network from a file; sparse trees with carry-select sums; Ling carries")
def prefix_adder(spec):
    return adder_with_network(spec)


def adder_with_network(spec, full=None):
    """The prefix adder of ``spec``, on ``full`` instead of the spec's network when given: any legal prefix
    graph (a searched one, say) over width + carry_in inputs. Block and Ling keys apply as usual."""
    f = start(spec)
    b = f.build
    ci = int(spec.network_carry_in)
    ling = spec.opt("ling")
    graph, sizes = network_for(spec, full)
    if any(s > 1 for s in sizes):
        b.meta.append((META_BLOCK_SIZES, value_text(sizes)))
    b.meta += [(META_NOTE, n) for n in [wide_note(spec.opt("block"), spec.width)] if n]
    g, p = generate_propagate(f)
    gen = [f.cin] * ci + g
    t = None
    if ling:
        t = transmits(f)
        prop = [None] + [b.const(1)] * ci + t[: f.width - 1]  # column i + ci reads t_i-1; t_-1 = 1
    else:
        prop = [None] * ci + p
    def ling_first(c, gh, gl, name):  # two adjacent inputs: t_i-1 & g_i-1 = g_i-1, so an OR2
        return b.OR(gh, gl, name, "prefix") if c.hi == -1 - c.col and c.lo == -c.col else None

    val = prefix_cells(b, graph, gen, prop, merge_first=ling_first if ling else None)
    last = final_refs(graph)

    def carry_into(s: int) -> int:  # s >= 1: the network's column for bit s - 1
        r = last[s - 1 + ci]
        h = val(r)[0]
        return carry(b, t, h, s - 1) if ling and r >= 0 else h  # an input column is g_0 itself

    sums: list[int] = []
    for lo, hi in block_bounds(sizes):
        cb = f.cin if lo == 0 else carry_into(lo)
        if hi - lo == 1:
            sums.append(b.XOR(p[lo], cb, f"s{lo}", "sum"))
            continue
        cond = conditional(b, f.a, f.b, g, p, lo, hi)
        sums += [select(b, cb, cond.s0[i - lo], cond.s1[i - lo], f"s{i}") for i in range(lo, hi)]
    cout = carry_into(f.width) if spec.network_carry_out else b.const(0)
    top = block_bounds(sizes)[-1]
    carry_top = (f.cin if f.width == 1 else carry_into(f.width - 1)) if top[1] - top[0] == 1 else None
    return finish(f, sums, cout, prefix=graph, carry_top=carry_top)
