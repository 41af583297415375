"""Width-parameterized Verilog (``form: parameterized``): one module with ``parameter WIDTH``, whose
``generate`` loops follow each scheme's published construction rule, so a designer re-parameterizes it in
their own HDL (``NAME #(.WIDTH(40)) u (...)``).

The module is written from the spec, not from the IR (the IR is one width), but it builds the IR's structure
cell for cell at every width: the same gates (an AO21 is ``(x & y) | z``, a MUX2 ``s ? d1 : d0``), the same
constant folding where the carry-in is absent, nothing that reaches no output. tests/test_param_verilog.py
and bench/param_widths.py check that with Yosys (cell counts by type and the longest path against the flat
form at each width), by simulation at many widths against Python integer addition and by proofs against `+`.

Carry-select (block k, the top block taking the remainder, as in the flat form) ripples block 0 from the
carry-in and every other block twice, for carry-in 0 and 1, picking with the carry into the block
(Bedrij 1962, "Carry-select adder"). Carry-skip (the same blocks, common practice; Parhami, "Computer
Arithmetic", gives the uniform-block delay model) ripples every block from its carry-in and bypasses it with a
MUX2 on the block propagate, a balanced AND tree over its p bits (Verilog's ``&`` reduction, which Yosys's
simplemap splits into the same pairing as schemes/common.balanced); block 0 has no bypass when there is no
carry-in port (its carry-in is the constant 0), and the top block none when there is no carry out.
Block-lookahead (the same blocks, ``group`` fixed in the text) builds each block's (G, P) as a balanced tree of
combines and the carries into the blocks from lookahead units of at most ``group`` pairs, stacked in levels,
each carry a flat sum of products (common practice, the classic 4-group unit generalised; schemes/
block_lookahead.py); the products are ``&``/``|`` reductions over concatenations ordered least significant
first, which simplemap pairs as the flat form's balanced trees. What the flat form drops as unread is not built:
without a carry-in the lowest pair's P at every level, without a carry out the highest pair at every level.
No Ling form.

Ports are those of the flat form; what the spec fixes other than the width (carry-in and carry-out ports, the
prefix network, the block size) is fixed in the text. A block size is a number of bits at every width: when
it does not divide WIDTH the top block takes the remainder, as in the flat form.

Prefix networks (column c is bit c, or bit c - 1 with the carry-in as column 0; see schemes/prefix.py) are
built level by level, each level in a generate block with vectors of its own, ``level[k].G[c]`` the group
generate of column c after level k, read by the next level through ``level[k-1].G`` (one vector for all levels
made Icarus re-evaluate every reader on every bit change: 240 s against 1.5 s for Kogge-Stone at ten widths up
to 64 bits, docs/param.md).
A column without a cell at a level passes its value on (a wire, not a gate). Each network is two constant
functions: ``driver(k, c)``, the column that column c combines with at level k (-1: no cell), and
``black(k, c)``, whether that cell's group propagate is still needed (its span does not reach column 0).
The rules, with L = ceil(log2 N) for N columns (at least 1):
- Kogge-Stone (Kogge and Stone 1973): level k, every column c >= 2^(k-1) reads c - 2^(k-1).
- Sklansky (Sklansky 1960): level k, columns with bit k-1 set read the top column of the block below.
- Brent-Kung (Brent and Kung 1982): levels 1..L, columns c = -1 mod 2^k read c - 2^(k-1); then L - 1
  levels back down, level L + j: columns c = u - 1 mod 2u, c >= 3u - 1, read c - u, with u = 2^(L-1-j).
- Han-Carlson (Han and Carlson 1987): odd columns read the even column below, Kogge-Stone over the odd
  columns in L - 1 levels, then every even column c >= 2 reads c - 1.
- Ladner-Fischer, in the form Harris 2003 ("A taxonomy of parallel prefix networks") gives Ladner and
  Fischer 1980: the same first and last levels around Sklansky over the odd columns.
These rules reproduce schemes/prefix_networks.py's graphs cell for cell at every width (tests/).
"""

from __future__ import annotations

from dataclasses import dataclass

from ..spec.loader import Spec

FORM = "parameterized"
PREFIX_NETWORKS = ("kogge-stone", "sklansky", "brent-kung", "han-carlson", "ladner-fischer")
BLOCK_SCHEMES = ("carry-select", "carry-skip", "block-lookahead")


@dataclass(frozen=True)
class ParamForm:
    scheme: str
    template: str
    doc: str


FORMS: dict[str, ParamForm] = {}


def _form(scheme: str, template: str, doc: str) -> None:
    FORMS[scheme] = ParamForm(scheme, template, doc)


_form("ripple", "param_ripple.v.j2", "ripple-carry, one carry cell a bit")
_form("behavioral", "param_behavioral.v.j2", "one Verilog +")
_form("carry-select", "param_carry_select.v.j2", "carry-select with a number of bits a block")
_form("carry-skip", "param_carry_skip.v.j2", "carry-skip with a number of bits a block")
_form("block-lookahead", "param_block_lookahead.v.j2", "block-lookahead with a number of bits a block (no ling)")
_form("prefix", "param_prefix.v.j2", "prefix networks " + ", ".join(PREFIX_NETWORKS) + " (block 1, no ling)")


def supported() -> str:
    """The combinations that have this form, for messages and documentation."""
    return ", ".join(sorted(FORMS))


def check(spec: Spec) -> None:
    """SpecError at the key that has no parameterized form (file, line, column and key)."""
    if spec.scheme not in FORMS:
        raise spec.error("form", f"'form: {FORM}' is not available for scheme '{spec.scheme}' "
                                 f"(available for: {supported()}); use 'form: flat'")
    if spec.scheme in BLOCK_SCHEMES and (isinstance(spec.opt("block"), bool) or not isinstance(spec.opt("block"), int)):
        raise spec.error("block", f"'form: {FORM}' needs a number of bits a block ('block: 4'), not "
                                  f"'{spec.opt('block') if isinstance(spec.opt('block'), str) else 'a list'}'")
    if spec.operation != "add":
        raise spec.error("operation", f"'form: {FORM}' adds only; 'operation: {spec.operation}' needs 'form: flat'")
    if spec.overflow:
        raise spec.error("overflow", f"'form: {FORM}' has no overflow output; use 'form: flat' for 'overflow: true'")
    if spec.scheme == "block-lookahead" and spec.opt("ling"):
        raise spec.error("ling", f"'form: {FORM}' has no Ling form; use 'form: flat' or 'ling: false'")
    if spec.scheme == "prefix":
        if spec.opt("prefix") not in PREFIX_NETWORKS:
            raise spec.error("prefix", f"'form: {FORM}' has no rule for 'prefix: {spec.opt('prefix')}' "
                                       f"(available: {', '.join(PREFIX_NETWORKS)}); use 'form: flat'")
        if spec.opt("block") != 1:
            raise spec.error("block", f"'form: {FORM}' builds dense prefix networks only ('block: 1'); "
                                      "use 'form: flat' for a sparse tree")
        if spec.opt("ling"):
            raise spec.error("ling", f"'form: {FORM}' has no Ling form; use 'form: flat' or 'ling: false'")


def emit_param(spec: Spec, header: list[str]) -> str:
    """NAME.v as one module with ``parameter WIDTH`` (default: the spec's width); ``check`` first."""
    from .templating import render

    check(spec)
    form = FORMS[spec.scheme]
    head = header + [f"form: {FORM}: WIDTH defaults to {spec.width}; the figures above are at that width. "
                     f"Re-parameterize with {spec.name} #(.WIDTH(n)) for any n >= 1."]
    return render(form.template, header=head, name=spec.name, width=spec.width, carry_in=spec.carry_in,
                  carry_out=spec.carry_out, network=spec.opt("prefix"), block=spec.opt("block"),
                  group=spec.opt("group"))
