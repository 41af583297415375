"""Prefix adders end to end: gates against Python integer addition, the report against the classic
networks' published figures (docs/references.md), Ling and sparse-tree variants, spec errors, golden
dumps."""

import pytest

from adder_forge.checks.builtin import check
from adder_forge.base.errors import SpecError
from adder_forge.ir.network import check_well_formed, dump
from adder_forge.analysis.structure import metrics
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.analysis.prefix_eval import complete_columns
from adder_forge.schemes.prefix_networks import NETWORKS, build, ceil_log2
from adder_forge.schemes import elaborate
from adder_forge.emit.summary import design_summary
from adder_forge.spec.loader import make_spec, parse_spec
from adder_forge.emit.vectors import make_plan, space_bits
from conftest import golden
from matrix_prefix import CONFIGS, WIDTHS, params

EXHAUSTIVE = 1 << 16


def adder(name="px", width=16, **kw):
    return elaborate(make_spec(name, width, "prefix", **kw))


def assert_adds(net, width, carry_in, random_count=200):
    check_well_formed(net)
    plan = make_plan(width, carry_in, EXHAUSTIVE, random_count, seed=5)
    r = check(net, plan)
    assert r.ok, r.first
    return plan


def flag_combos(width):
    """Every carry-in/carry-out combination up to 33 bits; two of them (both, neither) above."""
    if width <= 33:
        return [(False, False), (False, True), (True, False), (True, True)]
    return [(False, False), (True, True)]


@pytest.mark.parametrize("network", sorted(NETWORKS))
def test_every_network_adds_at_the_issue_widths(network):
    """Built-in check (bit-parallel IR against a + b + cin) at 1, 2, 3, 5, 8, 13, 16, 31, 32, 33, 64, 100,
    128 bits; exhaustive where 2^(2w + cin) <= 2^16. Also the gates against the graph: a black cell is an
    AO21 and an AND2, a gray cell the AO21 alone, and no gate of the network is dead (the gate count equals
    the graph's)."""
    for w in WIDTHS:
        for ci, co in flag_combos(w):
            net = adder(f"x{w}", w, carry_in=ci, carry_out=co, prefix=network, **params(network, w, ci))
            plan = assert_adds(net, w, ci, random_count=32)
            assert plan.exhaustive == (space_bits(w, ci) <= 16)
            m = metrics(net)
            cells = m["netlist_cells_by_role"].get("prefix", {})
            assert cells.get("AO21", 0) == m["prefix_nodes"] and cells.get("AND2", 0) == m["prefix_black"]
            # one gray cell per carry the adder reads from the network: the columns above 0 that a sum bit
            # or the carry out needs (bit i's carry-in is column i - 1, or column i after a carry-in)
            needed = {i - 1 + ci for i in range(1, w)} | ({w - 1 + ci} if co else set())
            assert m["prefix_gray"] == len({c for c in needed if c >= 1}), (w, ci, co)


@pytest.mark.parametrize("cfg", [c for c in CONFIGS if c.get("ling") or c.get("block")], ids=lambda c: c["name"])
def test_matrix_variants_add(cfg):
    """The matrix's Ling and sparse configs (its plain ones are the widths above)."""
    spec = make_spec(**cfg)
    assert_adds(elaborate(spec), spec.width, spec.carry_in, random_count=100)


def test_a_broken_prefix_gate_is_caught():
    """Mutation check of the check itself: every gate of a 4-bit Sklansky adder with carry-in, broken in
    turn, is noticed by the exhaustive comparison with integer addition."""
    net = adder("m4", 4, prefix="sklansky")
    plan = make_plan(4, True, EXHAUSTIVE, 0, 1)
    idx = gate_indices(net)
    assert idx and all(not check(break_gate(net, i), plan).ok for i in idx)


# -- the report against the published figures -------------------------------------------------------------
@pytest.mark.parametrize("n", [8, 16, 32, 64, 128])
def test_report_reproduces_the_classic_networks_table(n):
    """carry_in false, carry_out true, L = log2 n; docs/references.md, "Classic networks". Levels, fanout,
    tracks: Harris 2003, "A taxonomy of parallel prefix networks", Asilomar. Cells: derived by construction
    from Kogge and Stone 1973, Brent and Kung 1982, Sklansky 1960, Han and Carlson 1987 (Harris's table
    does not give them)."""
    L = ceil_log2(n)
    table = {"brent-kung": (2 * n - 2 - L, 2 * L - 1, 2, 1), "sklansky": (n // 2 * L, L, n // 2 + 1, 1),
             "kogge-stone": (n * L - n + 1, L, 2, n // 2), "han-carlson": (n // 2 * L, L + 1, 2, n // 4)}
    for network, want in table.items():
        spec = make_spec("t", n, "prefix", carry_in=False, prefix=network)
        m = design_summary(spec, metrics(elaborate(spec)))["metrics"]
        assert (m["prefix_nodes"], m["prefix_levels"], m["prefix_fanout"], m["wire_tracks"]) == want, network
        assert m["prefix_gray"] == n - 1 and m["prefix_black"] == want[0] - (n - 1)
    kn = metrics(adder("k", n, carry_in=False, prefix="knowles", fanouts=[2] + [1] * (L - 1)))
    assert kn["prefix_nodes"] == n * L - n + 1  # Knowles 2001: the Kogge-Stone cell count (by construction)


# -- Ling ---------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("network", sorted(NETWORKS))
def test_ling_adders_add(network):
    for k, w in enumerate((1, 2, 3, 5, 8, 13, 33, 64)):
        for ci in (False, True) if w <= 8 else (bool(k % 2),):
            net = adder("l", w, carry_in=ci, carry_out=w != 13, prefix=network, ling=True, **params(network, w, ci))
            assert_adds(net, w, ci, random_count=32)


def ling_table() -> str:
    """Ordinary and Ling forms side by side (carry_in false, carry_out true)."""
    lines = [f"{'network':<17} {'bits':>4} | cells levels fanout tracks | netlist GE, levels | "
             "Ling: cells levels netlist GE, levels"]
    for network in ("kogge-stone", "brent-kung", "sklansky", "han-carlson", "ladner-fischer", "ladner-fischer-p0"):
        for w in (16, 32, 64):
            o = metrics(adder("o", w, carry_in=False, prefix=network))
            g = metrics(adder("l", w, carry_in=False, prefix=network, ling=True))
            lines.append(f"{network:<17} {w:>4} | {o['prefix_nodes']:>5} {o['prefix_levels']:>6} {o['prefix_fanout']:>6} "
                         f"{o['wire_tracks']:>6} | {o['netlist_gate_equiv']:>5} {o['netlist_levels']:>6} | "
                         f"{'':<6}{g['prefix_nodes']:>5} {g['prefix_levels']:>6} {g['netlist_gate_equiv']:>5} {g['netlist_levels']:>6}")
    return "\n".join(lines) + "\n"


def test_ling_figures_beside_the_ordinary_form():
    """Same graph (cells and levels); the first-level cells of adjacent inputs are OR2s (t_i-1 g_i-1 =
    g_i-1, Ling 1981); the price is one OR2 transmit a bit and one AND2 per carry read."""
    golden("prefix_ling_table.txt", ling_table())
    for network in sorted(NETWORKS):
        for w in (16, 32, 64):
            kw = dict(carry_in=False, prefix=network, **params(network, w, False))
            o, g = adder("o", w, **kw), adder("l", w, ling=True, **kw)
            mo, mg = metrics(o), metrics(g)
            assert {k: mg[k] for k in mg if k.startswith("prefix")} == {k: mo[k] for k in mo if k.startswith("prefix")}
            pair = sum(1 for c in g.prefix.cells if c.hi == -1 - c.col and c.lo == -c.col)
            assert mg["netlist_cells_by_role"]["prefix"].get("OR2", 0) == pair > 0
            assert mg["netlist_cells_by_role"]["prefix"]["AO21"] == mo["netlist_cells_by_role"]["prefix"]["AO21"] - pair
            # t_0 .. t_w-1 (t_w-1 for the carry out; t_0 only where column 1's propagate is read), and
            # c_2 .. c_w recovered by AND2 (c_1 is g_0)
            ts = mg["netlist_cells_by_role"]["pg"]["OR2"]
            assert ts in (w - 1, w) and mg["netlist_cells_by_role"]["carry"]["AND2"] == w - 1
            assert mg["netlist_gate_equiv"] == mo["netlist_gate_equiv"] - pair + ts + (w - 1)


# -- sparse trees -------------------------------------------------------------------------------------------
SPARSE = [  # (network, width, block), each with and without carry-in, plain and Ling
    ("kogge-stone", 8, 2), ("kogge-stone", 32, 4), ("kogge-stone", 100, 8), ("sklansky", 13, 4),
    ("sklansky", 64, 8), ("brent-kung", 33, 4), ("brent-kung", 16, 3), ("han-carlson", 64, 4),
    ("ladner-fischer-p0", 31, 5), ("knowles", 16, 4), ("harris", 32, 8), ("kogge-stone", 16, [3, 5, 8]),
    ("sklansky", 16, [1, 1, 14]), ("brent-kung", 8, 8), ("kogge-stone", 5, 16),
]


@pytest.mark.parametrize("network,width,block", SPARSE)
def test_sparse_trees_add(network, width, block):
    for ci in (False, True):
        for ling in (False, True):
            net = adder("s", width, carry_in=ci, prefix=network, block=block, ling=ling, **params(network, width, ci))
            assert_adds(net, width, ci, random_count=64)


def test_sparse_tree_structure():
    """Carries only at the block boundaries and the carry out; each block's sums picked by its carry:
    one XOR for the block's lowest bit and one MUX2 for each bit above it (Lynch and Swartzlander's
    spanning-tree adder shape, common practice)."""
    dense = adder("d", 32, carry_in=False, prefix="kogge-stone")
    sparse = adder("s", 32, carry_in=False, prefix="kogge-stone", block=4)
    done = complete_columns(sparse.prefix)
    assert {3, 7, 11, 15, 19, 23, 27, 31} <= set(done)
    md, ms = metrics(dense), metrics(sparse)
    assert ms["prefix_nodes"] < md["prefix_nodes"] and ms["prefix_levels"] == md["prefix_levels"] == 5
    assert ms["netlist_cells_by_role"]["select"] == {"MUX2": 7 * 3, "XOR2": 7}  # blocks 1..7; block 0 ripples from 0
    # blocks of one bit, given as a list so that the sparse-tree path runs, are the dense network itself:
    # the same gates line for line (only the spec's block line differs) and the published construction
    dense16, ones16 = dump(adder("d", 16)), dump(adder("d", 16, block=[1] * 16))
    assert ones16 == dense16.replace("meta block = 1\n", "meta block = [" + ", ".join(["1"] * 16) + "]\n")
    assert ones16 != dense16 and "MUX2" not in ones16
    assert adder("d", 16, block=[1] * 16).prefix.cells == build("kogge-stone", 17).cells
    with_cin = metrics(adder("c", 32, carry_in=True, prefix="kogge-stone", block=4))
    assert with_cin["netlist_cells_by_role"]["select"] == {"MUX2": 8 * 3, "XOR2": 8}  # block 0 is picked by cin


# -- spec errors ----------------------------------------------------------------------------------------------
HEAD = "name: p16\nwidth: 16\nscheme: prefix\n"
ERRORS = [
    # (extra lines after HEAD, line:col, key, words in the message)
    ("carry_in: false\nprefix: harris\ntaxonomy: [1, 1, 0]\n", "6:11", "taxonomy",
     ["'taxonomy' [1, 1, 0] adds up to 2, but 16 prefix inputs need l + f + t = 3"]),
    ("prefix: harris\ntaxonomy: [1, 1, 1]\n", "5:11", "taxonomy",
     ["17 prefix inputs (width 16 plus the carry-in) need l + f + t = 4"]),
    ("prefix: harris\ntaxonomy: [1, -1, 4]\n", "5:11", "taxonomy", ["three integers", "integer -1"]),
    ("prefix: harris\ntaxonomy: 3\n", "5:11", "taxonomy", ["three integers"]),
    ("prefix: harris\n", "4:9", "prefix", ["'prefix: harris' needs 'taxonomy': [l, f, t] with l + f + t = 4 for 17 prefix inputs (width 16 plus the carry-in)"]),
    ("carry_in: false\nprefix: knowles\nfanouts: [2, 1, 1]\n", "6:10", "fanouts",
     ["'fanouts' has 3 entries, but 16 prefix inputs need 4"]),
    ("prefix: knowles\nfanouts: [2, 1, 1, 1]\n", "5:10", "fanouts",
     ["has 4 entries, but 17 prefix inputs (width 16 plus the carry-in) need 5"]),
    ("carry_in: false\nprefix: knowles\nfanouts: [1, 1, 2, 1]\n", "6:10", "fanouts", ["less than level 2's"]),
    ("carry_in: false\nprefix: knowles\nfanouts: [3, 1, 1, 1]\n", "6:10", "fanouts", ["powers of two"]),
    ("prefix: knowles\n", "4:9", "prefix", ["'prefix: knowles' needs 'fanouts': 5 lateral fanouts, the last level first, for 17 prefix inputs"]),
    ("prefix: sklansky\ntaxonomy: [0, 3, 0]\n", "5:11", "taxonomy", ["applies only to 'prefix: harris'"]),
    ("prefix: harris\ntaxonomy: [0, 4, 0]\nfanouts: [8, 4, 2, 1, 1]\n", "6:10", "fanouts",
     ["applies only to 'prefix: knowles'"]),
    ("prefix: kogge-stoen\n", "4:9", "prefix", ["unknown prefix 'kogge-stoen'", "did you mean 'kogge-stone'"]),
    ("block: 0\n", "4:8", "block", ["at least 1"]),
    ("block: [4, 4]\n", "4:8", "block", ["add up to 8 bits but 'width' is 16"]),
    ("ling: yes please\n", "4:7", "ling", ["true or false"]),
]


@pytest.mark.parametrize("extra,where,key,words", ERRORS, ids=[e[2] + str(i) for i, e in enumerate(ERRORS)])
def test_spec_errors_name_file_line_column_and_key(extra, where, key, words):
    with pytest.raises(SpecError) as e:
        parse_spec(HEAD + extra, "p16.yaml")
    msg = str(e.value)
    assert msg.startswith(f"p16.yaml:{where}: error: "), msg
    assert e.value.field == key and key in msg
    for w in words:
        assert w in msg, msg
    assert "\n" not in msg


def test_good_specs_parse():
    s = parse_spec(HEAD + "prefix: harris\ntaxonomy: [1, 1, 2]\nling: true\nblock: 4\n", "ok.yaml")
    assert s.opt("taxonomy") == (1, 1, 2) and s.opt("ling") is True and s.opt("block") == 4
    s = parse_spec(HEAD + "carry_in: false\nprefix: knowles\nfanouts: [4, 2, 1, 1]\n", "ok.yaml")
    assert s.opt("fanouts") == (4, 2, 1, 1)
    assert parse_spec(HEAD, "d.yaml").opt("prefix") == "kogge-stone"


# -- golden dumps ---------------------------------------------------------------------------------------------
@pytest.mark.parametrize("name,kw", [
    ("prefix_bk8.txt", dict(width=8, carry_in=False, prefix="brent-kung")),
    ("prefix_sk4_cin_ling.txt", dict(width=4, prefix="sklansky", ling=True)),
    ("prefix_kn8_sparse.txt", dict(width=8, carry_out=False, prefix="knowles", fanouts=[2, 1, 1, 1], block=4)),
])
def test_golden_dumps(name, kw):
    """ir.dump of small adders, reviewed by hand; ADDER_FORGE_REGEN_GOLDEN=1 rewrites them."""
    golden(name, dump(adder(name.split(".")[0], **kw)))
