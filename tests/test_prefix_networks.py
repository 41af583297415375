"""Prefix networks on the prefix level: structure against published figures and bounds, and every network
at every width 1..70 evaluated against Python integer addition.

Published sources named beside each check (values and sources in docs/references.md): Harris 2003, "A
taxonomy of parallel prefix networks" (Asilomar) for levels, fanout and tracks; the construction papers
(Kogge and Stone 1973, Brent and Kung 1982, Sklansky 1960, Han and Carlson 1987, Ladner and Fischer 1980)
for the cell counts, derived by construction; Snir 1986 (restated in Zhu, Cheng and Graham, ACM TODAES 2006) for the bound;
Sergeev 2013 (ECCC TR13-041) for the exact minimum size at depth log2 n; Knuth, TAOCP 4 fascicle 0,
ex. 7.1.2-36 (via OEIS A158618) for the size of Ladner and Fischer's P_0; Knowles 2001, "A family of
adders", for the Knowles family.
"""

import itertools
import random

import pytest

from adder_forge.analysis.prefix_eval import PrefixError, check_graph, complete_columns, longest_chain, value_spans, stimulus
from adder_forge.analysis.prefix_figures import prefix_figures
from adder_forge.schemes.prefix_networks import (NETWORKS, NetworkError, build, validate_fanouts, validate_taxonomy, final_refs,
                                         from_rows, ceil_log2, param_levels, prune)
from adder_forge.emit.vectors import directed, exhaustive_chunks


def triples(n):
    s = param_levels(n) - 1
    return [(l, f, s - l - f) for l in range(s + 1) for f in range(s + 1 - l)]


def knowles_lists(n):
    """Every valid Knowles list for n inputs, published order (last level first): powers of two, level k's
    at most 2^(k-1), none less than the level before."""
    out = [[1]]
    for k in range(1, param_levels(n)):
        out = [x + [1 << e] for x in out for e in range(x[-1].bit_length() - 1, k + 1)]
    return [tuple(reversed(x)) for x in out]


def some_params(n):
    """The parameterised families at a few points: corners and interior."""
    L = param_levels(n)
    ks = [tuple([1] * L), tuple(1 << k for k in range(L - 1, -1, -1))]
    if L >= 2:
        ks.append(tuple([2] + [1] * (L - 1)))
    tx = {(L - 1, 0, 0), (0, L - 1, 0), (0, 0, L - 1)}
    if L >= 3:
        tx |= {(1, 1, L - 3), (L - 3, 1, 1)}
    return [("knowles", k) for k in ks] + [("harris", t) for t in sorted(tx)]


def every_network(n):
    for name, kind in sorted(NETWORKS.items()):
        if kind.param is None:
            yield name, None, build(name, n)
    for name, value in some_params(n):
        yield name, value, build(name, n, value)


# -- the classic networks: Harris 2003's table, cell counts by construction -------------------------------
# n prefix inputs (carry_in false), L = log2 n: (cells, levels, fanout, tracks). Levels, fanout and tracks:
# Harris 2003, "A taxonomy of parallel prefix networks". Cells (not in Harris's table): derived by
# construction from each network's own paper: Brent and Kung 1982, Sklansky 1960, Kogge and Stone 1973,
# Han and Carlson 1987. Both in docs/references.md, "Classic networks".
TABLE = {
    "brent-kung": lambda n, L: (2 * n - 2 - L, 2 * L - 1, 2, 1),
    "sklansky": lambda n, L: (n // 2 * L, L, n // 2 + 1, 1),
    "kogge-stone": lambda n, L: (n * L - n + 1, L, 2, n // 2),
    "han-carlson": lambda n, L: (n // 2 * L, L + 1, 2, n // 4),
}


def figures(graph):
    f = prefix_figures(graph)
    return f["prefix_nodes"], f["prefix_levels"], f["prefix_fanout"], f["wire_tracks"]


@pytest.mark.parametrize("n", [8, 16, 32, 64, 128])
@pytest.mark.parametrize("name", sorted(TABLE))
def test_classic_networks_table(name, n):
    L = ceil_log2(n)
    assert figures(build(name, n)) == TABLE[name](n, L)


@pytest.mark.parametrize("n", [8, 16, 32, 64, 128])
def test_brent_kung_rows_and_chain(n):
    """Harris 2003 counts Brent-Kung's rows, 2L - 1; its longest chain of cells is one shorter, 2L - 2,
    because the first cell back down reads values ready a row earlier (derived from the construction)."""
    g = build("brent-kung", n)
    assert prefix_figures(g)["prefix_levels"] == 2 * ceil_log2(n) - 1 and longest_chain(g) == 2 * ceil_log2(n) - 2


def test_classic_cell_counts_at_16_and_64():
    # the closed forms evaluated (docs/references.md, "Classic networks"; derived by construction from
    # Brent and Kung 1982, Sklansky 1960, Kogge and Stone 1973, Han and Carlson 1987)
    assert [len(build(x, 16).cells) for x in ("brent-kung", "sklansky", "kogge-stone", "han-carlson")] == [26, 32, 49, 32]
    assert [len(build(x, 64).cells) for x in ("brent-kung", "sklansky", "kogge-stone", "han-carlson")] == [120, 192, 321, 192]


@pytest.mark.parametrize("n", [8, 16, 32, 64, 128])
def test_taxonomy_levels_fanout_tracks(n):
    """Harris 2003: (l, f, t) with l + f + t = L - 1 has L + l levels, fanout 2^f + 1 and 2^t tracks."""
    L = ceil_log2(n)
    for l, f, t in triples(n):
        g = build("harris", n, (l, f, t))
        assert figures(g)[1:] == (L + l, 2 ** f + 1, 2 ** t), (l, f, t)


@pytest.mark.parametrize("n", [8, 16, 32, 64, 128])
def test_taxonomy_named_points(n):
    """Harris 2003 places Brent-Kung, Sklansky, Kogge-Stone, Han-Carlson, Ladner-Fischer and Knowles
    [2,1,...,1] at (L-1,0,0), (0,L-1,0), (0,0,L-1), (1,0,L-2), (1,L-2,0), (0,1,L-2)."""
    L = ceil_log2(n)
    at = {"brent-kung": (L - 1, 0, 0), "sklansky": (0, L - 1, 0), "kogge-stone": (0, 0, L - 1),
          "han-carlson": (1, 0, L - 2), "ladner-fischer": (1, L - 2, 0)}
    for name, point in at.items():
        assert build("harris", n, point).cells == build(name, n).cells, name
    kn = build("knowles", n, tuple([2] + [1] * (L - 1)))
    assert build("harris", n, (0, 1, L - 2)).cells == kn.cells
    # Knowles [2,1,...,1]: fanout 3, n/4 tracks, and the Kogge-Stone cell count (docs/references.md, Knowles row; derived by construction)
    assert figures(kn) == (n * L - n + 1, L, 3, n // 4)
    # Ladner-Fischer in Harris's l = 1 form: (n/4) L + 3n/4 - 1 cells (closed form derived by construction,
    # docs/references.md), L + 1 levels, fanout n/4 + 1, one track
    assert figures(build("ladner-fischer", n)) == (n // 4 * L + 3 * n // 4 - 1, L + 1, n // 4 + 1, 1)


def test_taxonomy_corners_are_the_named_networks_at_every_width():
    for n in range(1, 71):
        L = param_levels(n)
        assert build("harris", n, (0, L - 1, 0)).cells == build("sklansky", n).cells, n
        assert build("harris", n, (0, 0, L - 1)).cells == build("kogge-stone", n).cells, n
        assert build("knowles", n, tuple([1] * L)).cells == build("kogge-stone", n).cells, n


# -- other published figures and bounds -------------------------------------------------------------------------
def fib(k):
    a, b = 0, 1
    for _ in range(k):
        a, b = b, a + b
    return a


@pytest.mark.parametrize("k", [3, 4, 5, 6, 7])
def test_ladner_fischer_p0_size_and_depth(k):
    """Knuth, TAOCP 4 fascicle 0, ex. 7.1.2-36 (OEIS A158618): P_0(2^k) has 4n + 1 - F(k+5) cells, depth k
    (31, 74, 168 at n = 16, 32, 64)."""
    n = 1 << k
    g = build("ladner-fischer-p0", n)
    assert len(g.cells) == 4 * n + 1 - fib(k + 5)
    assert longest_chain(g) == prefix_figures(g)["prefix_levels"] == k
    if k in (4, 5, 6):
        assert len(g.cells) == {4: 31, 5: 74, 6: 168}[k]


@pytest.mark.parametrize("k", [3, 4, 5, 6, 7])
def test_no_depth_log_n_network_beats_sergeev_minimum(k):
    """Sergeev 2013, ECCC TR13-041: a depth-k prefix circuit on 2^k inputs has at least
    3.5 * 2^k - (8.5 + 3.5 (k mod 2)) 2^(k//2) + k + 5 cells (31, 74, 167 at n = 16, 32, 64)."""
    n = 1 << k
    bound = int(3.5 * n - (8.5 + 3.5 * (k % 2)) * 2 ** (k // 2) + k + 5)
    if k in (4, 5, 6):
        assert bound == {4: 31, 5: 74, 6: 167}[k]
    seen = 0
    for name, value, g in every_network(n):
        if longest_chain(g) == k:
            assert len(g.cells) >= bound, (name, value)
            seen += 1
    for t in triples(n):
        g = build("harris", n, t)
        if longest_chain(g) == k:
            assert len(g.cells) >= bound, t
    assert seen >= 4  # Kogge-Stone, Sklansky, Ladner-Fischer P_0, Knowles


def assert_snir(g, n, what):
    """Snir 1986: cells + depth >= 2n - 2 for any prefix circuit on n inputs; rows are at least the depth."""
    assert len(g.cells) + longest_chain(g) >= 2 * n - 2, what
    assert prefix_figures(g)["prefix_levels"] >= longest_chain(g), what


@pytest.mark.parametrize("n", [2, 13, 16, 33, 64, 100, 129])
def test_snir_bound_for_every_family_member(n):
    """Every (l, f, t) point, and every Knowles list up to 64 inputs (132 lists there); the named networks
    are checked at every width in the prefix-level test below."""
    for t in triples(n):
        assert_snir(build("harris", n, t), n, t)
    for k in knowles_lists(n) if n <= 64 else ():
        assert_snir(build("knowles", n, k), n, k)


@pytest.mark.parametrize("n", [13, 16, 32, 33])
def test_knowles_rule_is_exactly_the_valid_lists(n):
    """Every list of powers of two (fanout at level k at most 2^(k-1)) builds a valid network exactly when
    it meets our rule (Catalan-many: 14 at 16 inputs, 42 at 32); every valid one has the Kogge-Stone cell
    count (Knowles 2001), L levels, and at n = 2^L lateral fanout max + 1 and max 2^(k-1) / f_k tracks."""
    L = param_levels(n)
    valid = set(knowles_lists(n))
    ks = len(build("kogge-stone", n).cells)
    tried = 0
    for per_level in itertools.product(*[[1 << e for e in range(k + 1)] for k in range(L)]):
        value = tuple(reversed(per_level))
        try:
            validate_fanouts(n, value)
            ok = True
        except NetworkError:
            ok = False
        assert ok == (value in valid)
        try:
            g = NETWORKS["knowles"].build(n, value)  # the construction without the check
        except NetworkError:  # the rows leave a gap: refused as bad input, not an assert (issue 9)
            assert not ok, value
            continue
        tried += 1
        assert ok, value
        f = figures(g)
        assert f[:2] == (ks, L)
        if n == 1 << L:
            assert f[2:] == (max(value) + 1, max((1 << k) // x for k, x in enumerate(per_level)))
    assert tried == len(valid) > 10
    assert n != 16 or tried == 14
    assert n != 32 or tried == 42


# -- structure: gray cells, no dead cells, rows ----------------------------------------------------------------
def read_by(g):
    used = set()
    for c in g.cells:
        used |= {c.hi, c.lo}
    return used


@pytest.mark.parametrize("n", [1, 2, 3, 5, 13, 16, 17, 33, 64, 100])
def test_gray_cells_and_no_dead_cells(n):
    for name, value, g in every_network(n):
        gray = [c for c in g.cells if c.gray]
        assert len(gray) == n - 1, (name, value)  # one per column above 0 (docs/references.md, counting convention)
        assert all((c.low == 0) == c.gray for c in g.cells)
        # a gray cell's propagate is never read: it is nobody's upper input, nor a black cell's lower one
        for c in g.cells:
            assert c.hi < 0 or not g.cells[c.hi].gray
            assert c.lo < 0 or c.gray or not g.cells[c.lo].gray
        outputs = set(final_refs(g))
        used = read_by(g)
        assert all(k in used or k in outputs for k in range(len(g.cells))), (name, value)
        levels = sorted({c.level for c in g.cells})
        assert levels == list(range(1, len(levels) + 1))  # no empty rows


def test_pruning_keeps_only_what_the_outputs_read():
    g = build("kogge-stone", 32)
    sparse = prune(g, [3, 7, 11, 15, 19, 23, 27, 31])
    assert len(sparse.cells) < len(g.cells)
    assert set(complete_columns(sparse)) >= {3, 7, 11, 15, 19, 23, 27, 31}
    used, last = read_by(sparse), final_refs(sparse)
    outs = {last[c] for c in (3, 7, 11, 15, 19, 23, 27, 31)}
    assert all(k in used or k in outs for k in range(len(sparse.cells)))
    assert all(c.gray == (c.low == 0) for c in sparse.cells)
    assert all(sparse.cells[last[c]].gray for c in (3, 7, 11, 15, 19, 23, 27, 31))
    # the top column alone needs a binary tree over 32 inputs: 31 cells, 5 levels, no column 0 output cell
    top = prune(g, [31])
    assert len(top.cells) == 31 and longest_chain(top) == 5 and len(prune(g, [0]).cells) == 0


def test_lazy_construction_turns_full_knowles_into_sklansky():
    for n in (8, 16, 32, 13, 33):
        L = ceil_log2(n)
        per_level = [1 << k for k in range(L)]
        rows = [[(i, (i | (per_level[k] - 1)) - (1 << k)) for i in range(1 << k, n)] for k in range(L)]
        assert from_rows(n, rows, "x", lazy=True).cells == build("sklansky", n).cells
        assert len(from_rows(n, rows, "x").cells) == len(build("kogge-stone", n).cells)


def test_construction_bugs_are_caught():
    """Bad rows are a NetworkError (exit 2), never an AssertionError that python -O would skip."""
    with pytest.raises(NetworkError, match="columns 1..2 missing"):
        from_rows(4, [[(3, 0)]], "gap")  # [3:3] and [0:0] leave bits 2..1 out
    with pytest.raises(NetworkError, match="not complete"):
        from_rows(4, [[(1, 0), (3, 2)]], "incomplete")


# -- the prefix-level evaluator ---------------------------------------------------------------------------------
def vectors_for(width, carry_in, rng):
    if 2 * width + carry_in <= 12:
        return [t for vs in exhaustive_chunks(width, carry_in) for t in vs.triples()]
    return directed(width, carry_in) + [(rng.getrandbits(width), rng.getrandbits(width),
                                         rng.getrandbits(1) if carry_in else 0) for _ in range(128)]


def test_every_network_at_every_width_1_to_70_on_the_prefix_level():
    """Symbolically (every cell's span; exhaustive over inputs because the carry operator is associative
    and idempotent) and bit-parallel against Python integer addition, plain and with Ling's pairs; and
    Snir's bound (Snir 1986) for each of them."""
    rng = random.Random(3)
    for width in range(1, 71):
        for carry_in in (False, True):
            n = width + carry_in
            vs = vectors_for(width, carry_in, rng)
            stims = [stimulus(width, carry_in, vs, ling=ling) for ling in (False, True)]
            for name, value, g in every_network(n):
                value_spans(g)
                assert complete_columns(g) == list(range(n)), (name, value)
                assert_snir(g, n, (name, value))
                for st in stims:
                    r = check_graph(g, st)
                    assert r.ok, (width, carry_in, name, value, st.ling, r.bad_columns)


def test_prefix_evaluator_catches_wrong_networks():
    from dataclasses import replace

    g = build("sklansky", 8)
    rng = random.Random(1)
    st = stimulus(8, False, vectors_for(8, False, rng))
    assert check_graph(g, st).ok
    # a cell that records the wrong span
    bad = replace(g, cells=tuple(replace(c, low=c.low + 1) if k == 3 else c for k, c in enumerate(g.cells)))
    with pytest.raises(PrefixError):
        value_spans(bad)
    # a cell fed from the wrong column: the numbers disagree with a + b
    k = next(k for k, c in enumerate(g.cells) if c.lo < 0 and c.col >= 2)
    c = g.cells[k]
    wrong = replace(g, cells=g.cells[:k] + (replace(c, lo=c.lo + 1),) + g.cells[k + 1:])
    assert not check_graph(wrong, st).ok
    # a gray cell whose propagate a black cell reads
    k = next(k for k, c in enumerate(g.cells) if not c.gray and c.lo >= 0)
    graylo = replace(g, cells=tuple(replace(c, gray=True) if j == g.cells[k].lo else c for j, c in enumerate(g.cells)))
    with pytest.raises(PrefixError):
        check_graph(graylo, st)


# -- parameter errors (the spec-level messages are in test_prefix_adders.py) ------------------------------------
def test_parameter_errors_say_what_fits():
    with pytest.raises(NetworkError, match=r"adds up to 2, but 16 prefix inputs need l \+ f \+ t = 3"):
        validate_taxonomy(16, (1, 1, 0))
    with pytest.raises(NetworkError, match=r"has 3 entries, but 16 prefix inputs need 4"):
        validate_fanouts(16, (2, 1, 1))
    with pytest.raises(NetworkError, match=r"powers of two"):
        validate_fanouts(16, (3, 1, 1, 1))
    with pytest.raises(NetworkError, match=r"level 3's fanout 1 is less than level 2's \(2\)"):
        validate_fanouts(16, (1, 1, 2, 1))
    with pytest.raises(NetworkError, match=r"level 1's fanout 2 is more than 1"):
        validate_fanouts(16, (2, 2, 2, 2))
    with pytest.raises(NetworkError, match=r"level 4's fanout 16 is more than 8"):
        validate_fanouts(16, (16, 4, 2, 1))
    validate_fanouts(16, (4, 1, 1, 1))
    validate_taxonomy(1, (0, 0, 0))  # one input: no cells, the 2-input parameters
    assert len(build("harris", 1, (0, 0, 0)).cells) == len(build("knowles", 1, (1,)).cells) == 0
