"""Prefix networks from any legal rows, from a network file (`prefix: file`, `network: PATH`), and the bound
figures every prefix adder reports: the gap to Snir's bound and, at depth log2 n, to Sergeev's exact minimum."""

import json
import random

import pytest

from adder_forge.analysis.prefix_eval import check_graph as prefix_check, longest_chain, value_spans, stimulus
from adder_forge.analysis.prefix_figures import prefix_figures, sergeev_minimum
from adder_forge.base.errors import NetworkError, SpecError
from adder_forge.checks.builtin import check
from adder_forge.cli import main
from adder_forge.emit.design import design
from adder_forge.emit.vectors import make_plan
from adder_forge.schemes import elaborate, network_file
from adder_forge.schemes.prefix import adder_with_network
from adder_forge.schemes.prefix_networks import NETWORKS, build, from_rows, validate
from adder_forge.spec.loader import load_spec, make_spec


def classic(n):
    for name, kind in NETWORKS.items():
        if kind.param is None:
            yield name, build(name, n)
    L = max(1, (n - 1).bit_length())
    if L >= 2:
        yield "knowles", build("knowles", n, tuple([2] + [1] * (L - 1)))
    if L >= 3:
        yield "harris", build("harris", n, (1, 1, L - 3))


# -- rows -> network, NetworkError instead of assert ---------------------------------------------------------
@pytest.mark.parametrize("rows, words", [
    ([[(1, 0)], [(3, 0)]], r"column 3 \[3:3\] cannot reach driver 0 at level 2: columns 1..2 missing"),
    ([[(1, 0), (1, 0)]], r"column 1 combined twice at level 1"),
    ([[(4, 1)]], r"bad pair \(4, 1\) at level 1: columns are 0..3"),
    ([[(1, 2)]], r"bad pair \(1, 2\) at level 1: the driver must be below the column"),
    ([[(1, 0)]], r"2 column\(s\) not complete after the last row, first 2, 3"),
    ([[(1,)]], r"level 1 holds \(1,\), not a \(column, driver\) pair"),
    ([[(1.0, 0)]], r"columns are integers"),
])
def test_bad_rows_raise_network_error(rows, words):
    with pytest.raises(NetworkError, match=words) as exc:
        from_rows(4, rows, "mine")
    assert exc.value.exit_status == 2 and not isinstance(exc.value, AssertionError)


def test_any_legal_rows_make_an_adder_that_adds():
    """Random legal rows (each level pairs random columns with random drivers that touch their span),
    built as adders and checked against Python integer addition, all 2^17 inputs of an 8-bit adder with
    carry-in, and on the prefix level against a + b + cin."""
    rng = random.Random(7)
    for trial in range(30):
        n = rng.randint(2, 12)
        low = list(range(n))
        rows = []
        while any(low):
            row, low0 = [], low[:]
            for c in rng.sample(range(1, n), rng.randint(1, n - 1)):
                if low0[c] == 0:
                    continue
                d = rng.randint(max(0, low0[c] - 1), c - 1)  # touches [c:low]: no gap
                row.append((c, d))
                low[c] = min(low0[c], low0[d])
            rows.append(row)
        g = validate(from_rows(n, rows, f"random{trial}"))
        assert [s[1] for s in value_spans(g)] == [c.low for c in g.cells]
        st = stimulus(n, False, [(rng.getrandbits(n), rng.getrandbits(n), 0) for _ in range(300)])
        assert prefix_check(g, st).ok
        for carry_in in (False, True):
            width = n - carry_in
            if width < 1:
                continue
            spec = make_spec("rnd", width, "prefix", carry_in=carry_in)
            net = adder_with_network(spec, g)
            assert check(net, make_plan(width, carry_in, 1 << 17, 100, 1)).ok


def test_validate_refuses_graphs_that_are_not_networks():
    from dataclasses import replace

    g = build("sklansky", 8)
    assert validate(g) is g
    bad_low = replace(g, cells=tuple(replace(c, low=c.low + 1) if k == 3 else c for k, c in enumerate(g.cells)))
    with pytest.raises(NetworkError, match="records"):
        validate(bad_low)
    k = next(k for k, c in enumerate(g.cells) if c.lo >= 0 and not c.gray)
    gray = replace(g, cells=tuple(replace(c, gray=True) if j == g.cells[k].lo else c for j, c in enumerate(g.cells)))
    with pytest.raises(NetworkError, match="gray"):
        validate(gray)
    with pytest.raises(NetworkError, match="does not end complete"):
        validate(replace(g, cells=g.cells[:-1]))
    with pytest.raises(NetworkError, match="needs 9"):
        adder_with_network(make_spec("x", 8, "prefix"), g)


# -- the file ----------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("n", [1, 2, 3, 7, 16, 17, 33, 64, 100])
def test_every_classic_network_reads_back_cell_for_cell(n):
    for name, g in classic(n):
        text = network_file.write(g, comments=("made by a test",))
        assert text == network_file.write(g, comments=("made by a test",))  # deterministic
        back = network_file.parse(text, "t.net")
        assert back.cells == g.cells and back.inputs == n, (name, n)


def test_file_spec_builds_the_same_adder_as_the_named_network(tmp_path):
    g = build("brent-kung", 16)
    (tmp_path / "nets").mkdir()
    (tmp_path / "nets" / "bk.net").write_text(network_file.write(g))
    (tmp_path / "f.yaml").write_text("name: ff16\nwidth: 16\nscheme: prefix\ncarry_in: false\n"
                                     "prefix: file\nnetwork: nets/bk.net\n")
    spec = load_spec(tmp_path / "f.yaml")
    net = elaborate(spec)
    same = elaborate(make_spec("ff16", 16, "prefix", carry_in=False, prefix="brent-kung"))
    assert net.nodes == same.nodes
    assert check(net, make_plan(16, False, 0, 500, 1)).ok
    m = json.loads(design(spec, tb_random=10).files()["ff16.json"])
    assert m["options"]["network"] == "nets/bk.net" and m["metrics"]["prefix_nodes"] == 26


@pytest.mark.parametrize("text, where, words", [
    ("inputs 4\nlevel 1 1<0 3<2\nlevel 2 3<0\n", "3:9", "column 3 [3:2] cannot reach driver 0 at level 2"),
    ("inputs 4\nlevel 1 1<0 3<2\nlevel 2 3<1 2<x\n", "3:13", "'2<x' is not a COLUMN<DRIVER pair"),
    ("inputs 4\nlevel 1 1<0\nlevel 3 3<1\n", "3:7", "level 3 out of order: expected level 1 or 2"),
    ("level 1 1<0\n", "1:1", "'inputs N' must come before the first 'level'"),
    ("inputs 4\nlevel 1 5<0\n", "2:9", "pair 5<0: need 0 <= DRIVER < COLUMN < 4"),
    ("inputs 4\nwires 3\n", "2:1", "unknown line 'wires'"),
    ("# nothing\n", "1:1", "no 'inputs N' line"),
    ("inputs 0\n", "1:1", "'inputs' takes one integer from 1 to 16385"),
    ("inputs 4\nlevel 1 1<0 3<2\nlevel 2 3<1\n", "3:1", "not complete after the last row"),
])
def test_bad_network_file_names_its_own_file_and_line(tmp_path, capsys, text, where, words):
    (tmp_path / "bad.net").write_text(text)
    (tmp_path / "f.yaml").write_text("name: f4\nwidth: 4\nscheme: prefix\ncarry_in: false\nprefix: file\n"
                                     "network: bad.net\n")
    assert main(["build", str(tmp_path / "f.yaml"), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert err == [err[0]] and err[0].startswith(f"{tmp_path / 'bad.net'}:{where}: error: ") and words in err[0], err
    assert not (tmp_path / "out").exists()


@pytest.mark.parametrize("extra, where, words", [
    ("prefix: file\n", "5:9", "'prefix: file' needs 'network'"),
    ("prefix: file\nnetwork: missing.net\n", "6:10", "missing.net: no such file"),
    ("prefix: file\nnetwork: [1]\n", "6:10", "'network' must be the path of a network file"),
    ("prefix: sklansky\nnetwork: n.net\n", "6:10", "'network' applies only to 'prefix: file'"),
    ("prefix: file\nnetwork: n.net\nfanouts: [1, 1]\n", "7:10", "'fanouts' does not apply to 'prefix: file'"),
    ("prefix: file\nnetwork: n.net\nwidth: 3\n", "", ""),
])
def test_spec_errors_name_the_spec_line_and_key(tmp_path, capsys, extra, where, words):
    (tmp_path / "n.net").write_text(network_file.write(build("sklansky", 4)))
    body = "name: f4\nwidth: 4\nscheme: prefix\ncarry_in: false\n" + extra
    if "width: 3" in extra:  # the file's inputs must fit width + carry_in
        body = body.replace("width: 4\n", "").replace("width: 3\n", "") + "width: 3\n"
        where, words = "5:10", "has 4 inputs, but this adder needs 3 (width 3)"
    (tmp_path / "f.yaml").write_text(body)
    assert main(["build", str(tmp_path / "f.yaml"), "--out", str(tmp_path / "out")]) == 2
    [err] = capsys.readouterr().err.strip().splitlines()
    assert err.startswith(f"{tmp_path / 'f.yaml'}:{where}: error: ") and words in err, err


# -- the bounds beside every prefix network ------------------------------------------------------------------------
def test_sergeev_minimum_is_the_published_table():
    """Sergeev 2013, "On the complexity of parallel prefix circuits", ECCC TR13-041: the exact minimum
    size at depth log2 n, 3.5 * 2^k - (8.5 + 3.5 (k mod 2)) 2^floor(k/2) + k + 5, quoted in the issue as
    31, 74, 167, 364, 773 and 3327 at 16 ... 1024. Small values by hand: 1 cell for 2 inputs, 4 for 4
    (common practice)."""
    assert [sergeev_minimum(1 << k) for k in (4, 5, 6, 7, 8, 10)] == [31, 74, 167, 364, 773, 3327]
    assert [sergeev_minimum(m) for m in (1, 2, 4)] == [0, 1, 4]
    assert sergeev_minimum(12) is None and sergeev_minimum(0) is None


@pytest.mark.parametrize("n", [2, 5, 8, 16, 31, 64])
def test_snir_gap_is_never_negative_and_the_minimum_gap_never_either(n):
    """Snir 1986 ("Depth-size trade-offs for parallel prefix computation"): cells + depth >= 2n - 2."""
    for name, g in classic(n):
        f = prefix_figures(g)
        assert f["prefix_depth"] == longest_chain(g)
        assert f["prefix_snir_gap"] == len(g.cells) + longest_chain(g) - (2 * n - 2) >= 0, name
        if f["prefix_min_gap"] is not None:
            assert f["prefix_min_gap"] >= 0 and n & (n - 1) == 0 and longest_chain(g) == (n - 1).bit_length()


def test_bounds_in_build_line_header_and_json(tmp_path, capsys):
    """Ladner and Fischer's P_0 at 16 inputs: 31 cells at depth 4, Sergeev's minimum, so gap 0; Snir's
    gap 31 + 4 - 30 = 5. Brent-Kung at 16: 26 cells, depth 6, gap 2 and no minimum (depth is not 4)."""
    (tmp_path / "p.yaml").write_text("name: p16\nwidth: 16\nscheme: prefix\ncarry_in: false\n"
                                     "prefix: ladner-fischer-p0\n")
    assert main(["build", str(tmp_path / "p.yaml"), "--out", str(tmp_path / "out"), "--tb-vectors", "5"]) == 0
    line = capsys.readouterr().out
    assert "prefix network 31 cells, depth 4, cells + depth 5 over Snir's bound 2n - 2 (Snir 1986), 0 cells " \
           "over the exact minimum at this depth (Sergeev 2013)" in line
    head = (tmp_path / "out" / "p16" / "p16.v").read_text()
    assert "prefix_snir_gap=5, prefix_min_gap=0" in head
    m = json.loads((tmp_path / "out" / "p16" / "p16.json").read_text())["metrics"]
    assert (m["prefix_snir_gap"], m["prefix_min_gap"], m["prefix_depth"]) == (5, 0, 4)
    bk = design(make_spec("b16", 16, "prefix", carry_in=False, prefix="brent-kung"), tb_random=5).metrics
    assert (bk["prefix_snir_gap"], bk["prefix_min_gap"]) == (2, None)
    # without carry-out the top column goes: a network on 15 columns (Kogge-Stone, 15 + 4 - 28 = ...)
    ks = design(make_spec("k16", 16, "prefix", carry_in=False, carry_out=False), tb_random=5).metrics
    assert ks["prefix_snir_gap"] == ks["prefix_nodes"] + ks["prefix_depth"] - 28
    sparse = design(make_spec("s16", 16, "prefix", carry_in=False, block=4), tb_random=5).metrics
    assert sparse["prefix_snir_gap"] is None and sparse["prefix_min_gap"] is None
