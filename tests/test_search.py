"""`adder-forge search` and the algorithms behind it, on a small sample (the heavy runs are bench/search.py).

References: Sergeev 2013 ("On the complexity of parallel prefix circuits", ECCC TR13-041) for the exact
minimum size at depth log2 n; Snir 1986 ("Depth-size trade-offs for parallel prefix computation") for
cells + depth >= 2n - 2, met with equality by zero-deficiency networks (Zhu, Cheng and Graham 2006, "On
the construction of zero-deficiency parallel prefix circuits with minimum depth": 64 inputs in 118 cells
at 8 levels); Ladner and Fischer 1980's P_0 size 4n + 1 - F(log2 n + 5) (Knuth, TAOCP 4 fascicle 0,
ex. 7.1.2-36); Kogge and Stone 1973 and Knowles 2001 for the fanout-bounded networks compared against.
"""

import json
import random

import pytest

from adder_forge.analysis.prefix_eval import check_graph as prefix_check, longest_chain as depth, stimulus
from adder_forge.analysis.prefix_figures import fanout, prefix_figures, sergeev_minimum, tracks, value_loads
from adder_forge.cli import main
from adder_forge.schemes import elaborate, network_file
from adder_forge.schemes.prefix_networks import build, from_rows, validate
from adder_forge.search.local import Bounds, anneal, evaluate, graph_of, level_tracks, repaired
from adder_forge.search.prefix_dp import Solver, rows_from_ops
from adder_forge.search.read_twice import read_twice_rows
from adder_forge.search.run import Request, classic_starts, dp_network, search
from adder_forge.spec.loader import load_spec
from adder_forge.checks.builtin import check
from adder_forge.emit.vectors import make_plan


def assert_prefix(g, n):
    validate(g)
    rng = random.Random(n)
    st = stimulus(n, False, [(rng.getrandbits(n), rng.getrandbits(n), 0) for _ in range(200)])
    assert prefix_check(g, st).ok


# -- the dynamic program ---------------------------------------------------------------------------------------
@pytest.mark.parametrize("n, want", [(16, 31), (32, 74), (64, 167), (128, 364)])
def test_dp_reaches_sergeev_minimum_at_depth_log2_n(n, want):
    """At depth log2 n the program's network has exactly the minimum size of Sergeev 2013 (I. S. Sergeev,
    "On the complexity of parallel prefix circuits", ECCC TR13-041): 3.5 * 2^k - (8.5 + 3.5 (k mod 2))
    * 2^floor(k/2) + k + 5 cells on 2^k inputs, 31, 74, 167 and 364 at k = 4 .. 7 (Ladner and Fischer's
    P_0 has 168 and 369 at 64 and 128)."""
    d = (n - 1).bit_length()
    assert Solver(d).cost(n) == want == sergeev_minimum(n)
    g = dp_network(n, d)
    assert len(g.cells) == want and depth(g) == d
    assert_prefix(g, n)


@pytest.mark.slow
def test_dp_is_never_worse_than_ladner_fischer_and_never_below_the_bounds():
    """Ladner and Fischer's P_0 is in the program's class, so the program never has more cells (P_0 has
    168 at 64, the size 4n + 1 - F(11); the program 167); and no result beats Sergeev's minimum or Snir's
    bound."""
    for n in (5, 12, 16, 24, 33, 64):
        d = (n - 1).bit_length()
        g = dp_network(n, d)
        assert_prefix(g, n)
        assert len(g.cells) <= len(build("ladner-fischer-p0", n).cells)
        if sergeev_minimum(n) is not None:
            assert len(g.cells) >= sergeev_minimum(n)
        for extra in (1, 2):
            h = dp_network(n, d + extra)
            assert depth(h) <= d + extra and len(h.cells) + depth(h) >= 2 * n - 2
    assert len(build("ladner-fischer-p0", 64).cells) == 168 == 4 * 64 + 1 - 89
    assert len(dp_network(64, 6).cells) == 167


@pytest.mark.parametrize("n, d, cells", [(16, 5, 25), (32, 7, 55), (64, 8, 118)])
def test_dp_finds_zero_deficiency_networks(n, d, cells):
    """Zhu, Cheng and Graham 2006: 64 inputs in 118 cells at 8 levels, cells + depth = 2n - 2."""
    g = dp_network(n, d)
    assert_prefix(g, n)
    assert (len(g.cells), depth(g)) == (cells, d) and cells + d == 2 * n - 2
    assert prefix_figures(g)["prefix_snir_gap"] == 0


def test_the_built_network_has_the_cells_the_program_counted():
    for n in (3, 7, 16, 20, 33, 48):
        L = (n - 1).bit_length()
        for d in (L, L + 1, L + 3):
            s = Solver(d)
            g = from_rows(n, rows_from_ops(n, s.ops(n)), "dp")
            assert len(g.cells) <= s.cost(n) and depth(g) <= d, (n, d)
            assert len(g.cells) == s.cost(n), (n, d)  # no pair of the construction is wasted


def test_value_loads_count_every_read_of_a_value():
    """Kogge and Stone 1973's network on 2^L inputs: column 0's input is read by columns 1, 2, 4, ...,
    2^(L-1), one per level, so L loads anywhere in the network, against fanout 2 per level (Harris 2003)."""
    for L in (3, 5, 6):
        g = build("kogge-stone", 1 << L)
        assert value_loads(g) == L and fanout(g) == 2
    g = from_rows(4, [[(1, 0), (3, 2)], [(2, 1), (3, 1)]], "t")  # G[1:0] read by 2 and 3, and nothing else
    assert value_loads(g) == 2


@pytest.mark.parametrize("n, kogge_stone", [(16, 49), (32, 129), (64, 321), (128, 769)])
def test_read_twice_network_has_two_loads_at_least_depth_and_fewer_cells_than_kogge_stone(n, kogge_stone):
    """At depth log2 n with no value driving more than two cell inputs: fewer cells than Kogge-Stone's
    (n log2 n - n + 1), and not below Sergeev 2024's bound 0.75 (log2 n - 1) n for fanout-2 circuits of
    that depth (I. S. Sergeev, Diskretn. Anal. Issled. Oper. 31(4), 2024)."""
    L = (n - 1).bit_length()
    g = from_rows(n, read_twice_rows(n), "read-twice")
    validate(g)
    assert_prefix(g, n)
    assert value_loads(g) == 2 and depth(g) == L
    assert len(build("kogge-stone", n).cells) == kogge_stone == n * L - n + 1
    assert 0.75 * (L - 1) * n <= len(g.cells) < kogge_stone


def test_search_under_a_loads_bound_meets_it():
    found = search(Request(24, 5, rounds=2, verify=False, max_loads=2))
    assert value_loads(found.graph) <= 2 and depth(found.graph) <= 5
    assert len(found.graph.cells) <= len(from_rows(24, read_twice_rows(24), "t").cells)
    assert "--max-loads 2" in found.file_text() and "2 loads" in found.file_text()


def test_fast_evaluation_counts_what_the_graph_has():
    """local.evaluate (one pass, used for every move) against the built graph's own figures."""
    rng = random.Random(11)
    complete = 0
    for trial in range(60):
        n = rng.randint(2, 24)
        L = (n - 1).bit_length() + rng.randint(0, 2)
        grid = [[-1] + [rng.randrange(0, c) if rng.random() < 0.85 else -1 for c in range(1, n)] for _ in range(L)]
        b = Bounds(L, rng.choice([None, 2, 3]), rng.choice([None, 1, 3]), rng.choice([None, 2, 3]))
        e = evaluate(grid, n, b)
        g = graph_of(grid, n, "t")
        if e is None:
            assert g is None
            continue
        assert (e[0], e[1], e[2]) == (len(g.cells), depth(g), b.excess(g)), trial
        assert_prefix(g, n)
        assert max(level_tracks(g).values(), default=0) == tracks(g)
        complete += 1
    assert complete >= 20  # the comparison ran on enough networks to mean something


def test_ops_to_rows_keep_every_dependence():
    rows = rows_from_ops(4, [(1, 0), (3, 2), (3, 1), (2, 1)])
    assert rows == [[(1, 0), (3, 2)], [(3, 1), (2, 1)]]


# -- local search --------------------------------------------------------------------------------------------------
def test_repair_moves_a_driver_up_to_the_reach_and_refuses_incomplete_grids():
    grid = [[-1, 0, -1, 2], [-1, -1, 1, 0]]  # (3, 0) at level 2 leaves a gap: repaired to (3, 1)
    assert repaired(grid, 4) == [[(1, 0), (3, 2)], [(2, 1), (3, 1)]]
    assert repaired([[-1, 0, -1, -1]], 4) is None


@pytest.mark.slow
def test_annealing_is_deterministic_for_a_seed_and_meets_its_bounds():
    start = build("kogge-stone", 16)
    b = Bounds(4, 3)
    one = anneal(start, b, lambda cells, d: cells, 5, 2)
    two = anneal(start, b, lambda cells, d: cells, 5, 2)
    assert one[0].cells == two[0].cells and one[2] == 2
    g = one[0]
    assert_prefix(g, 16)
    assert b.met(g) and fanout(g) <= 3 and max(c.level for c in g.cells) <= 4
    assert len(g.cells) <= 49


def test_classic_starts_are_all_networks():
    names = [name for name, g in classic_starts(16)]
    assert {"kogge-stone", "sklansky", "brent-kung", "knowles[1,1,1,1]", "harris(1,1,1)"} <= set(names)
    assert len([x for x in names if x.startswith("knowles")]) == 14  # Catalan-many (Knowles 2001)


# -- the command ----------------------------------------------------------------------------------------------------
@pytest.mark.slow
@pytest.mark.formal
def test_search_command_writes_a_file_a_spec_builds_and_refuses_to_overwrite(tmp_path, capsys):
    out = tmp_path / "s16.net"
    args = ["search", "--width", "16", "--max-levels", "5", "--seconds", "30", "--rounds", "1", "--seed", "3",
            "--out", str(out)]
    assert main(args) == 0
    line = capsys.readouterr().out
    assert line.startswith("searched-16-l5: 25 cells, 5 levels, depth 5") and "cells + depth 0 over Snir" in line
    assert "built-in check pass; Yosys proof pass" in line
    text = out.read_text()
    assert "# prefix network found by adder-forge search --width 16 --max-levels 5 --objective cells --seed 3 " \
           "--rounds 1" in text
    g = network_file.read(out)
    assert len(g.cells) == 25 and depth(g) == 5
    # the same command again: refused without --force, byte for byte the same with it
    assert main(args) == 2
    assert "exists; add --force" in capsys.readouterr().err
    assert out.read_text() == text
    assert main(args + ["--force"]) == 0
    assert out.read_text() == text
    spec = tmp_path / "s.yaml"
    spec.write_text("name: srch16\nwidth: 16\nscheme: prefix\ncarry_in: false\nprefix: file\nnetwork: s16.net\n")
    net = elaborate(load_spec(spec))
    assert check(net, make_plan(16, False, 0, 2000, 1)).ok
    assert net.prefix.cells == g.cells


@pytest.mark.slow
@pytest.mark.formal
def test_search_with_carry_in_and_bounds(tmp_path, capsys):
    out = tmp_path / "c.net"
    assert main(["search", "--width", "15", "--carry-in", "--max-levels", "4", "--max-fanout", "3",
                 "--max-tracks", "4", "--rounds", "1", "--out", str(out)]) == 0
    g = network_file.read(out)
    assert g.inputs == 16 and fanout(g) <= 3 and tracks(g) <= 4 and max(c.level for c in g.cells) <= 4
    assert_prefix(g, 16)


@pytest.mark.parametrize("args, words", [
    (["--width", "16", "--max-levels", "3"], "--max-levels 3 is below ceil(log2 16) = 4"),
    (["--width", "0", "--max-levels", "3"], "--width must be 1 to 16384"),
    (["--width", "16", "--max-levels", "4", "--objective", "cell"], "unknown objective 'cell'"),
    (["--width", "16", "--max-levels", "4", "--max-fanout", "1"], "--max-fanout must be 2 or more"),
    (["--width", "16", "--max-levels", "4", "--max-loads", "1"], "--max-loads must be 2 or more"),
    (["--width", "16", "--max-levels", "4", "--seconds", "0"], "--seconds must be more than 0"),
])
def test_bad_search_options_are_one_line_exit_2(tmp_path, capsys, args, words):
    assert main(["search", *args, "--out", str(tmp_path / "x.net")]) == 2
    [err] = capsys.readouterr().err.strip().splitlines()
    assert err.startswith("adder-forge search: error: ") and words in err, err
    assert not (tmp_path / "x.net").exists()


def test_objectives_differ_where_they_should():
    """area-delay weighs depth: at 16 inputs and up to 7 levels it prefers a shallower network than the
    fewest-cell one (cells x depth, both from the same starts)."""
    few = search(Request(16, 7, rounds=0, verify=False))
    ad = search(Request(16, 7, objective="area-delay", rounds=0, verify=False))
    f1, f2 = few.figures, ad.figures
    assert f1["prefix_nodes"] <= f2["prefix_nodes"]
    assert f2["prefix_nodes"] * f2["prefix_depth"] <= f1["prefix_nodes"] * f1["prefix_depth"]
    assert f2["prefix_depth"] < f1["prefix_depth"]


@pytest.mark.synth
@pytest.mark.formal
@pytest.mark.slow
def test_lut6_objective_scores_by_the_flow(tmp_path, capsys):
    """--objective lut6 on an 8-bit adder: every start mapped by Yosys; the file names the LUT figures."""
    out = tmp_path / "l.net"
    assert main(["search", "--width", "8", "--max-levels", "4", "--objective", "lut6", "--rounds", "3",
                 "--out", str(out)]) == 0
    line = capsys.readouterr().out
    assert "LUT6 flow" in line and "Yosys proof pass" in line and "after 3 rounds" in line
    text = out.read_text()
    assert "# LUT6 flow: " in text and " LUT levels" in text and "--objective lut6 --seed 1 --rounds 3" in text
    assert_prefix(network_file.read(out), 8)
