"""Width-parameterized Verilog (``form: parameterized``): the spec key, the construction rules, and the module
checked at many widths against outside references: Python integer addition in Icarus and Verilator, Yosys's
proof against Verilog's own `+`, and Yosys's cell counts beside the flat form of the same spec.

The full width list of the issue (1, 2, 3, 5, 8, 16, 17, 31, 33, 64, 100, 128) for every supported scheme is
bench/param_widths.py (docs/param.md has its figures); here a representative sample keeps CI short.
"""

from __future__ import annotations

import re

import pytest

from adder_forge import SpecError, emit_design, make_spec, parse_spec
from adder_forge.checks import param_widths as pw
from adder_forge.cli import main
from adder_forge.emit.param_verilog import PREFIX_NETWORKS
from adder_forge.schemes.prefix import network_for

# (name, scheme, keys): one spec a supported construction, with the carry ports varied between them
CONFIGS = [
    ("pv_rip", "ripple", dict(carry_in=True, carry_out=True)),
    ("pv_rip00", "ripple", dict(carry_in=False, carry_out=False)),
    ("pv_beh", "behavioral", dict(carry_in=True, carry_out=False)),
    ("pv_cs", "carry-select", dict(block=3, carry_out=False)),
    ("pv_cs4", "carry-select", dict(block=4, carry_in=False)),
    ("pv_skip", "carry-skip", dict(block=3)),
    ("pv_skip4", "carry-skip", dict(block=4, carry_in=False, carry_out=False)),
    ("pv_bla", "block-lookahead", dict(block=4, carry_out=False)),
    ("pv_bla1", "block-lookahead", dict(block=1, group=2, carry_in=False)),  # three lookahead levels at 17 bits
    ("pv_ks", "prefix", dict(prefix="kogge-stone")),
    ("pv_sk", "prefix", dict(prefix="sklansky", carry_in=False)),
    ("pv_bk", "prefix", dict(prefix="brent-kung", carry_out=False)),
    ("pv_hc", "prefix", dict(prefix="han-carlson", carry_in=False, carry_out=False)),
    ("pv_lf", "prefix", dict(prefix="ladner-fischer")),
]
SAMPLE = (1, 2, 3, 5, 17, 33)  # widths of the tool tests: the edge cases and odd sizes around powers of two


def _spec(name, scheme, keys, width=8):
    return make_spec(name, width, scheme, form="parameterized", **keys)


def _module(name, scheme, keys):
    spec = _spec(name, scheme, keys)
    return spec, emit_design(spec).verilog


# -- the spec key ----------------------------------------------------------------------------------------------
def test_form_key_default_and_parameterized():
    flat = parse_spec("name: f8\nwidth: 8\nscheme: ripple\n")
    assert flat.form == "flat" and "form" not in flat.to_dict()
    p = parse_spec("name: f8\nwidth: 8\nscheme: ripple\nform: parameterized\n")
    assert p.form == "parameterized" and p.to_dict()["form"] == "parameterized"
    v = emit_design(p).verilog
    assert "module f8 #(\n    parameter WIDTH = 8\n)" in v
    assert "input  wire [WIDTH-1:0] a," in v and "output wire             cout" in v


BAD = [
    # (spec text, line:col, key, words)
    ("form: flatt\n", "4:7", "form", ["unknown form 'flatt'", "did you mean 'flat'"]),
    ("form: 3\n", "4:7", "form", ["'form' must be one of flat, kept, parameterized"]),
]
UNSUPPORTED = [
    ("scheme: lookahead\nform: parameterized\n", "4:7", ["not available for scheme 'lookahead'"]),
    ("scheme: prefix\nprefix: knowles\nfanouts: [1, 1, 1, 1, 1]\nform: parameterized\n", "4:9",
     ["no rule for 'prefix: knowles'"]),
    ("scheme: prefix\nblock: 4\nform: parameterized\n", "4:8", ["dense prefix networks only"]),
    ("scheme: prefix\nling: true\nform: parameterized\n", "4:7", ["no Ling form"]),
    ("scheme: carry-select\nblock: auto\nform: parameterized\n", "4:8", ["needs a number of bits a block"]),
    ("scheme: carry-skip\nblock: auto\nform: parameterized\n", "4:8", ["needs a number of bits a block"]),
    ("scheme: carry-skip\nblock: [4, 4, 8]\nform: parameterized\n", "4:8", ["needs a number of bits a block"]),
    ("scheme: block-lookahead\nblock: [8, 8]\nform: parameterized\n", "4:8", ["needs a number of bits a block"]),
    ("scheme: block-lookahead\nling: true\nform: parameterized\n", "4:7", ["no Ling form"]),
]


@pytest.mark.parametrize("tail,where,key,words", BAD, ids=[b[0].strip() for b in BAD])
def test_bad_form_value(tail, where, key, words):
    with pytest.raises(SpecError) as exc:
        parse_spec("name: f8\nwidth: 8\nscheme: ripple\n" + tail, "f.yaml")
    text = str(exc.value)
    assert text.startswith(f"f.yaml:{where}: error: ") and exc.value.exit_status == 2
    assert all(w in text for w in words), text


@pytest.mark.parametrize("tail,where,words", UNSUPPORTED, ids=[u[2][0][:24] for u in UNSUPPORTED])
def test_unsupported_combination_is_one_line_exit_2(tmp_path, capsys, tail, where, words):
    spec = tmp_path / "u.yaml"
    spec.write_text("name: u16\nwidth: 16\n" + tail)
    out = tmp_path / "out"
    code = main(["build", str(spec), "--out", str(out)])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1, err
    assert err.startswith(f"{spec}:{where}: error: ") and all(w in err for w in words), err
    assert "Traceback" not in err and not out.exists()


# -- the construction rules ----------------------------------------------------------------------------------
def _rows(network: str, n: int):
    """The Verilog template's driver(k, c) rules, level by level, written again in Python."""
    L = max(1, (n - 1).bit_length())
    if network in ("kogge-stone", "sklansky"):
        levels = range(1, (n - 1).bit_length() + 1)
        if network == "kogge-stone":
            return [{c: c - (1 << (k - 1)) for c in range(n) if c >= 1 << (k - 1)} for k in levels]
        return [{c: ((c >> (k - 1)) << (k - 1)) - 1 for c in range(n) if c >> (k - 1) & 1} for k in levels]
    if network == "brent-kung":
        up = [{c: c - (1 << (k - 1)) for c in range(n) if (c + 1) % (1 << k) == 0} for k in range(1, L + 1)]
        down = []
        for k in range(L + 1, 2 * L):
            u = 1 << (2 * L - 1 - k)
            down.append({c: c - u for c in range(n) if c >= 3 * u - 1 and (c + 1) % (2 * u) == u})
        return up + down
    core = []
    for k in range(2, L + 1):
        if network == "han-carlson":
            core.append({c: c - (1 << (k - 1)) for c in range(1, n, 2) if c >= (1 << (k - 1)) + 1})
        else:
            core.append({c: 2 * (((((c - 1) // 2) >> (k - 2)) << (k - 2)) - 1) + 1 for c in range(1, n, 2)
                         if ((c - 1) // 2) >> (k - 2) & 1})
    return [{c: c - 1 for c in range(1, n, 2)}] + core + [{c: c - 1 for c in range(2, n, 2)}]


def _cells(rows, n: int, built: int):
    """(column, low, upper span, lower span) of every cell, the spans as (column, low) pairs."""
    low = list(range(n))
    out = []
    for row in rows:
        before = low[:]
        for c, d in row.items():
            if c < built:
                out.append((c, before[d], (c, before[c]), (d, before[d])))
                low[c] = before[d]
    assert low[:built] == [0] * built
    return sorted(out)


@pytest.mark.parametrize("network", PREFIX_NETWORKS)
def test_rules_build_the_networks_cell_for_cell(network):
    """The template's rules give prefix_networks.py's graph (Kogge and Stone 1973, Sklansky 1960, Brent and Kung
    1982, Han and Carlson 1987, Ladner and Fischer 1980 in Harris 2003's form) at every width up to 130, with
    and without carry ports; the Yosys comparison below checks the Verilog itself on a sample."""
    for width in range(1, 131):
        for ci in (False, True):
            for co in (False, True):
                graph, _ = network_for(make_spec("r", width, "prefix", carry_in=ci, carry_out=co, prefix=network))
                n = width + ci

                def span(r):
                    return (-1 - r, -1 - r) if r < 0 else (graph.cells[r].col, graph.cells[r].low)

                want = sorted((c.col, c.low, span(c.hi), span(c.lo)) for c in graph.cells)
                assert _cells(_rows(network, n), n, n if co else n - 1) == want, (network, width, ci, co)


# -- the module at many widths, in the tools ---------------------------------------------------------------------
@pytest.mark.synth
@pytest.mark.slow
def test_structure_matches_the_flat_form():
    """Yosys's one-bit cell counts by type and longest path equal the flat form's at every sampled width."""
    for name, scheme, keys in CONFIGS:
        spec, verilog = _module(name, scheme, keys)
        for c in pw.structure(spec, verilog, SAMPLE):
            assert c.same, (name, c.width, c.flat, c.param)
            assert c.flat.total > 0 or scheme == "behavioral"


@pytest.mark.sim
def test_lint_clean_at_every_width(tmp_path):
    for name, scheme, keys in CONFIGS:
        spec, verilog = _module(name, scheme, keys)
        for r in pw.lint(spec, verilog, pw.WIDTHS, tmp_path / name):
            assert r.ok, (name, r.tool, r.messages)


@pytest.mark.formal
@pytest.mark.slow
def test_proved_equal_to_plus_at_sampled_widths():
    for name, scheme, keys in CONFIGS:
        spec, verilog = _module(name, scheme, keys)
        proofs = pw.prove(spec, verilog, SAMPLE)
        assert [p.ok for p in proofs] == [True] * len(SAMPLE), (name, [p.describe(0) for p in proofs])


@pytest.mark.sim
@pytest.mark.slow
@pytest.mark.parametrize("simulator", ["icarus", "verilator"])
def test_simulated_at_sampled_widths(simulator, tmp_path):
    """One build for every config and width; the vectors are Python integer additions."""
    modules = [_module(*c) for c in CONFIGS]
    widths = (1, 3, 17, 64)
    results = pw.simulate(modules, widths, simulator, tmp_path, tb_random=50, limit=1 << 9)
    assert len(results) == len(modules) * len(widths)
    for o in results:
        assert o.ok and o.passed > 0, (o.name, o.first, o.log)


@pytest.mark.synth
@pytest.mark.formal
@pytest.mark.parametrize("scheme,keys", [
    ("carry-select", dict(block=4)), ("carry-skip", dict(block=4)), ("block-lookahead", dict(block=4)),
    ("block-lookahead", dict(block=1, group=8)),  # the widest lookahead unit: one level up to 8 bits, two at 9
])
def test_block_at_least_as_wide_as_the_adder(scheme, keys):
    """A block as wide as the adder or wider, with both carry ports: one block whose carry out is read. In the
    sample above only carry-skip reaches that case (carry-select and block-lookahead have a single block there
    only without a carry-in or without a carry out), and no configuration has the largest lookahead group."""
    spec, verilog = _module("pv_one", scheme, dict(keys, carry_in=True, carry_out=True))
    widths = (1, 2, 3, 4, 8, 9)
    for c in pw.structure(spec, verilog, widths):
        assert c.same and c.flat.total > 0, (c.width, c.flat, c.param)
    assert [p.ok for p in pw.prove(spec, verilog, widths)] == [True] * len(widths)


@pytest.mark.sim
def test_a_wrong_module_fails_in_simulation_and_proof(tmp_path):
    """The checks can fail: a carry operator with its OR turned into an AND at one level is caught."""
    spec, verilog = _module("pv_bad", "prefix", dict(prefix="kogge-stone"))
    bad = verilog.replace("(PL[c] & GL[D]) | GL[c]", "(PL[c] & GL[D]) & GL[c]")
    assert bad != verilog
    results = pw.simulate([(spec, bad)], (5,), "icarus", tmp_path, tb_random=20, limit=1 << 6)
    assert not results[0].ok and results[0].first


@pytest.mark.formal
@pytest.mark.parametrize("scheme,keys,good,bad", [
    # the bypass multiplexer's inputs swapped: right whenever the block propagates, wrong otherwise
    ("carry-skip", dict(block=3), "bp ? cb[j] : c[SZ-1]", "bp ? c[SZ-1] : cb[j]"),
    # a lookahead carry's sum of products turned into a product
    ("block-lookahead", dict(block=2, group=2), "assign CC[O+q*GRP+jj-1] = |T;", "assign CC[O+q*GRP+jj-1] = &T;"),
])
def test_a_wrong_block_module_fails_the_proof(scheme, keys, good, bad):
    """The proofs of the block schemes' parameterized modules can fail: one changed line is caught."""
    spec, verilog = _module("pv_wrong", scheme, keys)
    wrong = verilog.replace(good, bad)
    assert wrong != verilog
    proofs = pw.prove(spec, wrong, (5, 17))
    assert [p.ok for p in proofs] == [False, False], [p.describe(0) for p in proofs]


def test_flat_and_parameterized_have_the_same_ports():
    for name, scheme, keys in CONFIGS:
        spec = _spec(name, scheme, keys)
        flat = emit_design(pw.flat_spec(spec, 8)).verilog
        param = emit_design(spec).verilog

        def ports(text):
            return re.findall(r"^\s+(input|output)\s+wire\s.*?(\w+),?$", text, re.M)

        assert [p for p in ports(flat)] == [p for p in ports(param)], name
