"""`explore`: sweep files, the runner, the cache, CSV/JSON, plots and the report.

The references outside the project: every adder of a sweep is checked by the built-in check against
Python integer addition before it is measured; the Pareto fronts are checked against the definition
(brute force over every pair); the figures in the results are the ones `report`'s own path computes.
"""

from __future__ import annotations

import csv
import io
import json
import os
import signal
import subprocess
import sys
import time
from dataclasses import replace
from pathlib import Path

import pytest

import adder_forge as af
from adder_forge.explore import cache as cache_mod
from adder_forge.explore.job import explore, run
from adder_forge.explore.results import front, pareto, to_csv, to_json
from adder_forge.explore.run import CHECK, figure_table
from adder_forge.explore.sweep import parse_sweep, load_sweep
from adder_forge.spec.registry import SCHEMES

ROOT = Path(__file__).resolve().parent.parent
CLI = [sys.executable, "-m", "adder_forge"]

# The tiny sweep of the tests: 2 widths, 3 variants and `+`, estimates only.
TINY = """\
name: tiny
widths: [8, 16]
carry_in: false
variants:
  - scheme: ripple
  - scheme: prefix
    prefix: [kogge-stone, brent-kung]
"""


def _err(text: str, capsys=None) -> str:
    with pytest.raises(af.SpecError) as exc:
        parse_sweep(text, "s.yaml")
    return str(exc.value)


# -- the sweep file ------------------------------------------------------------------------------------------------
def test_lists_expand_as_a_cross_product_and_plus_is_at_every_width():
    sw = parse_sweep("""\
name: s
widths: [8, 16, 24]
variants:
  - scheme: carry-select
    block: [2, 4, auto]
  - scheme: prefix
    prefix: [kogge-stone, sklansky]
    ling: [false, true]
""", "s.yaml")
    assert len(sw.points) == 3 * (1 + 3 + 4)
    for w in (8, 16, 24):
        at = [p for p in sw.points if p.spec.width == w]
        assert [p.label for p in at].count("+") == 1 and at[0].spec.scheme == "behavioral"
        assert {p.label for p in at} == {"+", "carry-select block=2", "carry-select block=4", "carry-select block=auto",
                                          "prefix kogge-stone no-ling", "prefix kogge-stone ling",
                                          "prefix sklansky no-ling", "prefix sklansky ling"}
    names = [p.spec.name for p in sw.points]
    assert len(set(names)) == len(names)
    af.parse_spec("name: x\nwidth: 8\nscheme: ripple\n")  # the registry is loaded
    for p in sw.points:  # every point is a spec the spec loader accepts as it is
        assert p.spec.carry_in is True and p.spec.carry_out is True


def test_a_nested_list_is_one_value():
    sw = parse_sweep("name: s\nwidths: 16\nvariants:\n  - scheme: carry-select\n    block: [[4, 4, 8]]\n", "s.yaml")
    (p,) = [p for p in sw.points if p.spec.scheme == "carry-select"]
    assert p.spec.opt("block") == (4, 4, 8)


def test_all_brings_every_registered_scheme_and_network():
    sw = parse_sweep("name: s\nwidths: [8]\nvariants: all\n", "s.yaml")
    seen = {p.spec.scheme for p in sw.points} | {s.label.split()[0] for s in sw.skipped}
    assert seen == set(SCHEMES)  # nothing left out silently; new schemes appear without code changes
    from adder_forge.schemes.prefix_networks import NETWORKS

    choices = next(o.choices for o in SCHEMES["prefix"].options if o.key == "prefix")
    assert set(NETWORKS) <= set(choices)
    nets = {p.spec.opt("prefix") for p in sw.points if p.spec.scheme == "prefix"}
    skipped = {s.label.split()[1] for s in sw.skipped if s.label.startswith("prefix ")}
    assert nets | skipped == set(choices) and not nets & skipped
    for s in sw.skipped:  # only what needs keys of its own (Harris's [l, f, t], Knowles's fanouts, a file)
        assert "needs" in s.reason, s


def test_a_width_beyond_a_scheme_limit_is_skipped_and_said():
    from adder_forge.schemes.lookahead import MAX_LOOKAHEAD_WIDTH

    sw = parse_sweep(f"name: s\nwidths: [8, {MAX_LOOKAHEAD_WIDTH + 1}]\nvariants:\n  - scheme: lookahead\n", "s.yaml")
    assert [p.spec.width for p in sw.points if p.spec.scheme == "lookahead"] == [8]
    assert [(s.label, s.width) for s in sw.skipped] == [("lookahead", MAX_LOOKAHEAD_WIDTH + 1)]


@pytest.mark.parametrize("text, where, words", [
    ("name: s\nwidths: [8]\nvariants:\n  - scheme: ripel\n", "s.yaml:4:13:", "did you mean 'ripple'"),
    ("name: s\nwidths: [8]\nvariants:\n  - scheme: prefix\n    prefix: [sklansky, kogge]\n", "s.yaml:5:24:",
     "unknown prefix 'kogge'"),
    ("name: s\nwidths: [8]\nvariants:\n  - scheme: ripple\n    block: 4\n", "s.yaml:5:5:", "does not apply"),
    ("name: s\nwidths: [8, 0]\nvariants:\n  - scheme: ripple\n", "s.yaml:2:13:", "between 1 and"),
    ("name: s\nwidth: [8]\nvariants:\n  - scheme: ripple\n", "s.yaml:2:1:", "did you mean 'widths'"),
    ("name: s\nwidths: [8]\n", "s.yaml:3:1:", "missing required key 'variants'"),
    ("name: s\nwidths: [8]\nvariants:\n  - scheme: ripple\nfigures: [generik]\n", "s.yaml:5:11:",
     "did you mean 'generic'"),
    ("name: 3s\nwidths: [8]\nvariants:\n  - scheme: ripple\n", "s.yaml:1:7:", "'name'"),
    ("name: s\nwidths: [8, 12]\nvariants:\n  - scheme: carry-select\n    block: [[4, 4]]\n", "s.yaml:5:13:",
     "(at width 12)"),
    ("name: s\nwidths: [8]\nvariants:\n  - scheme: ripple\n  - scheme: ripple\n", "s.yaml:5:5:", "same adder"),
    ("name: s\nwidths: [8]\ncarry_in: no\nvariants:\n  - scheme: ripple\n", "s.yaml:3:11:", "true or false"),
    ("name: s\nwidths: [8]\nvariants:\n  - scheme: ripple\n    width: 8\n", "s.yaml:5:5:", "whole sweep"),
    ("name: s\nwidths: [8\n", "s.yaml:3:1:", "invalid YAML"),
    ("name: s\nwidths: [8]\ntask_seconds: 0\nvariants:\n  - scheme: ripple\n", "s.yaml:3:15:", "above 0"),
    ("name: s\nwidths: [8]\ntask_seconds: -60\nvariants:\n  - scheme: ripple\n", "s.yaml:3:15:", "above 0"),
    ("name: s\nwidths: [8]\ntask_seconds: 20 min\nvariants:\n  - scheme: ripple\n", "s.yaml:3:15:",
     "number of seconds"),
    ("name: s\nwidths: [8]\ntask_seconds: true\nvariants:\n  - scheme: ripple\n", "s.yaml:3:15:",
     "number of seconds"),
    ("name: s\nwidths: [8]\ntask_seconds: .nan\nvariants:\n  - scheme: ripple\n", "s.yaml:3:15:",
     "number of seconds"),
    ("name: s\nwidths: [8]\ntask_seconds: 1e9\nvariants:\n  - scheme: ripple\n", "s.yaml:3:15:", "a week"),
    ("name: s\nwidths: [8]\ntask_second: 60\nvariants:\n  - scheme: ripple\n", "s.yaml:3:1:",
     "did you mean 'task_seconds'"),
])
def test_bad_sweep_files_name_file_line_and_column(text, where, words):
    msg = _err(text)
    assert msg.startswith(where) and words in msg and "\n" not in msg, msg


@pytest.mark.slow
def test_bad_sweep_on_the_command_line_is_one_line_and_exit_2(tmp_path):
    p = tmp_path / "bad.yaml"
    p.write_text("name: s\nwidths: [8]\nvariants:\n  - scheme: ripple\n    ling: true\n")
    r = subprocess.run([*CLI, "explore", str(p), "--out", str(tmp_path / "o"), "--cache", str(tmp_path / "c")],
                       capture_output=True, text=True)
    assert r.returncode == 2 and r.stdout == ""
    assert r.stderr.strip().count("\n") == 0 and r.stderr.startswith(f"{p}:5:5: error:"), r.stderr
    assert not (tmp_path / "o").exists()
    r = subprocess.run([*CLI, "explore", str(p), "--executor", "daks"], capture_output=True, text=True)
    assert r.returncode == 2 and "did you mean 'dask'" in r.stderr


# -- running, checking and the cache ----------------------------------------------------------------------------
def _tiny(tmp_path, text=TINY) -> Path:
    p = tmp_path / "tiny.yaml"
    p.write_text(text)
    return p


def test_every_adder_is_checked_and_measured_as_report_measures_it(tmp_path):
    sw = load_sweep(_tiny(tmp_path))
    out = run(sw, tmp_path / "cache", jobs=1)
    assert out.computed == len(sw.points) * 2 and out.cached == 0 and out.failed == 0
    table = figure_table(out)
    for p in sw.points:
        e = out.entries[(p.spec.name, CHECK)]["result"]
        assert e["ok"] and e["vectors"] > 0  # against Python integer addition
        est = af.estimates(af.elaborate(p.spec))
        assert table[p.spec.name]["unit_gate_delay"] == est["unit_gate_delay"]
        assert table[p.spec.name]["le_fo4"] == est["le_fo4"]
    assert table["tiny_plus_w8"]["unit_gate_delay"] is None  # `+` has no gate graph to estimate


@pytest.mark.slow
def test_rerun_unchanged_computes_nothing(tmp_path):
    text = TINY.replace("[8, 16]", "[16]")  # one width: two plots, so that drawing stays quick
    p = _tiny(tmp_path, text)
    first = explore(p, tmp_path / "o", tmp_path / "cache", jobs=1)
    stamps = {f: f.stat().st_mtime_ns for f in cache_mod.Cache(tmp_path / "cache").entries()}
    files = {f.name: f.read_bytes() for f in (tmp_path / "o").iterdir() if f.is_file()}
    assert first.outcome.computed == len(stamps) == 8 and any(n.endswith(".png") for n in files)
    again = explore(p, tmp_path / "o", tmp_path / "cache", jobs=1)
    assert again.outcome.computed == 0 and again.outcome.cached == 8
    assert {f: f.stat().st_mtime_ns for f in cache_mod.Cache(tmp_path / "cache").entries()} == stamps
    assert {f.name: f.read_bytes() for f in (tmp_path / "o").iterdir() if f.is_file()} == files
    # one more variant: only its tasks are computed
    more = explore(_tiny(tmp_path, text + "  - scheme: carry-skip\n"), tmp_path / "o2", tmp_path / "cache", jobs=1,
                   draw=False)
    assert more.outcome.computed == 2 and more.outcome.cached == 8


def test_a_failing_adder_is_recorded_and_the_sweep_goes_on(tmp_path):
    from adder_forge.ir.passes import break_gate
    from adder_forge.spec.registry import scheme

    @scheme("test-broken-ripple", doc="a ripple adder with one gate broken (tests only)")
    def broken(spec):
        net = SCHEMES["ripple"].build(spec)
        return break_gate(net, next(i for i, n in enumerate(net.nodes) if n.op == "XOR2"))

    try:
        sw = load_sweep(_tiny(tmp_path, TINY + "  - scheme: test-broken-ripple\n"))
        out = run(sw, tmp_path / "cache", jobs=1)  # in this process: the test scheme is registered here
    finally:
        del SCHEMES["test-broken-ripple"]
    bad = [p for p in sw.points if p.spec.scheme == "test-broken-ripple"]
    assert len(bad) == 2
    for p in bad:
        r = out.entries[(p.spec.name, CHECK)]["result"]
        assert not r["ok"] and r["failed"] > 0
    for p in sw.points:  # every adder measured, the broken ones too
        assert "records" in out.entries[(p.spec.name, "estimates")]
    data = json.loads(to_json(out))
    fails = {v["name"]: v["check"] for v in data["variants"] if v["check"] != "pass"}
    assert set(fails) == {p.spec.name for p in bad} and all(c.startswith("FAIL") for c in fails.values())
    assert not {p.spec.name for p in bad} & {n for e in data["pareto"] for n in e["front"]}
    assert all(r["check"].startswith("FAIL") for r in data["rows"] if r["scheme"] == "test-broken-ripple")


def test_pareto_front_matches_the_definition():
    import random

    rng = random.Random(7)
    for _ in range(200):
        pts = [(f"p{k}", rng.randint(1, 9), rng.randint(1, 9)) for k in range(rng.randint(1, 12))]
        got = set(front(pts))
        for n, x, y in pts:  # brute force: on the front exactly when nothing is as good on both, better on one
            dominated = any(x2 <= x and y2 <= y and (x2, y2) != (x, y) for _, x2, y2 in pts)
            assert (n in got) == (not dominated)


def test_results_are_one_row_per_adder_and_figure(tmp_path):
    from adder_forge.analysis.figures import ESTIMATES, NETLIST
    from adder_forge.base.records import FIELDS
    from adder_forge.synth.measure import measure_design

    sw = load_sweep(_tiny(tmp_path))
    out = run(sw, tmp_path / "cache", jobs=1)
    rows = list(csv.DictReader(io.StringIO(to_csv(out))))
    declared = [f.name for f in NETLIST + ESTIMATES]
    assert len(rows) == len(sw.points) * len(declared)
    assert {(r["spec"], r["figure"]) for r in rows} == {(p.spec.name, f) for p in sw.points for f in declared}
    assert set(FIELDS) <= set(rows[0])  # the measurement record's fields, as `report --csv` writes them
    assert all(r["check"] == "pass" for r in rows)
    plus = [r for r in rows if r["variant"] == "+" and r["source"] == "estimates"]
    assert plus and all(r["value"] == "" and "ADD" in r["note"] for r in plus)
    # the same records `report` makes of each adder (its own path: measure_design on the built design)
    for p in sw.points:
        mine = {r["figure"]: r["value"] for r in rows if r["spec"] == p.spec.name and r["value"] != ""}
        theirs = measure_design(af.emit_design(p.spec, tb_random=0), []).values()
        assert mine == {k: str(v) for k, v in theirs.items()}, p.spec.name
    data = json.loads(to_json(out))
    assert len(data["rows"]) == len(rows)
    for e in pareto(out):
        assert e["front"], e


@pytest.mark.slow
def test_cache_writes_from_many_processes_at_once_are_whole(tmp_path):
    code = ("import sys; from adder_forge.explore.cache import Cache\n"
            "c = Cache(sys.argv[1])\n"
            "for k in range(40):\n"
            "    c.put('ab' + '0' * 62, {'family': 'x', 'result': {'n': int(sys.argv[2]), 'pad': 'z' * 20000}})\n")
    procs = [subprocess.Popen([sys.executable, "-c", code, str(tmp_path), str(k)]) for k in range(6)]
    seen = set()
    c = cache_mod.Cache(tmp_path)
    while any(p.poll() is None for p in procs):
        e = c.get("ab" + "0" * 62)
        if e is not None:  # never half an entry
            assert len(e["result"]["pad"]) == 20000
            seen.add(e["result"]["n"])
    assert all(p.wait() == 0 for p in procs)
    assert c.get("ab" + "0" * 62)["result"]["n"] in range(6)
    assert [f.name for f in (tmp_path / "ab").iterdir()] == ["ab" + "0" * 62 + ".json"]  # no temporary left


@pytest.mark.slow
def test_killed_midway_and_restarted_gives_identical_results(tmp_path):
    sweep = _tiny(tmp_path, TINY.replace("[8, 16]", "[16, 32, 64]"))
    env = {**os.environ, "PYTHONUNBUFFERED": "1"}
    whole = subprocess.run([*CLI, "explore", str(sweep), "--out", str(tmp_path / "whole"), "--cache",
                            str(tmp_path / "c1"), "--jobs", "1", "--table-only"], capture_output=True, text=True,
                           env=env)
    assert whole.returncode == 0, whole.stderr
    total = len(cache_mod.Cache(tmp_path / "c1").entries())
    cache = cache_mod.Cache(tmp_path / "c2")
    p = subprocess.Popen([*CLI, "explore", str(sweep), "--out", str(tmp_path / "cut"), "--cache",
                          str(tmp_path / "c2"), "--jobs", "1", "--table-only"], stdout=subprocess.DEVNULL,
                         stderr=subprocess.DEVNULL)
    deadline = time.monotonic() + 300
    while len(cache.entries()) < total // 3 and time.monotonic() < deadline and p.poll() is None:
        time.sleep(0.005)
    p.send_signal(signal.SIGKILL)
    p.wait()
    kept = len(cache.entries())
    assert 0 < kept < total, (kept, total)  # killed midway, with part of the work on disk
    assert not (tmp_path / "cut").exists()
    again = subprocess.run([*CLI, "explore", str(sweep), "--out", str(tmp_path / "cut"), "--cache",
                            str(tmp_path / "c2"), "--jobs", "1", "--table-only"], capture_output=True, text=True,
                           env=env)
    assert again.returncode == 0, again.stderr
    assert f"{total - kept} tasks computed, {kept} from the cache" in again.stdout
    for name in ("results.json", "results.csv"):
        assert (tmp_path / "cut" / name).read_bytes() == (tmp_path / "whole" / name).read_bytes(), name


@pytest.mark.slow
def test_outputs_never_replace_a_file_the_user_has(tmp_path):
    p = _tiny(tmp_path)
    (tmp_path / "o").mkdir()
    (tmp_path / "o" / "results.csv").write_text("my own table\n")
    r = subprocess.run([*CLI, "explore", str(p), "--out", str(tmp_path / "o"), "--cache", str(tmp_path / "c"),
                        "--jobs", "1", "--table-only"], capture_output=True, text=True)
    assert r.returncode == 2 and "results.csv" in r.stderr and r.stderr.count("\n") == 1, r.stderr
    assert (tmp_path / "o" / "results.csv").read_text() == "my own table\n"
    assert sorted(f.name for f in (tmp_path / "o").iterdir()) == ["results.csv"]
    (tmp_path / "o" / "notes.txt").write_text("mine\n")
    (tmp_path / "o" / "results.csv").unlink()
    r = subprocess.run([*CLI, "explore", str(p), "--out", str(tmp_path / "o"), "--cache", str(tmp_path / "c"),
                        "--jobs", "1", "--table-only"], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    assert (tmp_path / "o" / "notes.txt").read_text() == "mine\n"  # kept beside our files


def test_a_variant_can_keep_to_some_widths():
    sw = parse_sweep("name: s\nwidths: [8, 16, 32]\nvariants:\n  - scheme: all\n  - scheme: lookahead\n"
                     "    widths: [8, 16]\n", "s.yaml")
    assert sorted(p.spec.width for p in sw.points if p.spec.scheme == "lookahead") == [8, 16]
    assert sorted(p.spec.width for p in sw.points if p.spec.scheme == "ripple") == [8, 16, 32]
    msg = _err("name: s\nwidths: [8, 16]\nvariants:\n  - scheme: ripple\n    widths: [8, 24]\n")
    assert msg.startswith("s.yaml:5:17:") and "not one of the sweep's widths" in msg


@pytest.mark.slow
def test_a_process_pool_gives_the_same_results_as_one_process(tmp_path):
    sw = load_sweep(_tiny(tmp_path))
    one = run(sw, tmp_path / "c1", jobs=1)
    pool = run(sw, tmp_path / "c2", jobs=2)
    assert pool.computed == one.computed == 16
    assert to_json(pool) == to_json(one) and to_csv(pool) == to_csv(one)


# -- prefix-graph drawings --------------------------------------------------------------------------------------
@pytest.mark.parametrize("network", ["kogge-stone", "brent-kung", "sklansky", "han-carlson"])
def test_prefix_drawing_has_one_dot_per_cell_at_its_level(network):
    import re

    from adder_forge.emit.prefix_svg import DY, TOP, draw_prefix

    net = af.elaborate(af.make_spec("x", 16, "prefix", carry_in=False, prefix=network))
    g = net.prefix
    svg = draw_prefix(g, "t")
    cells = re.findall(r'<circle cx="([\d.]+)" cy="([\d.]+)" r="[\d.]+" fill="(black|#9a9a9a)" stroke="black" '
                       r'stroke-width="1"><title>G\[(\d+):(\d+)\] level (\d+)', svg)
    assert len(cells) == len(g.cells)
    assert sum(f == "#9a9a9a" for _, _, f, *_ in cells) == sum(c.gray for c in g.cells)
    for (cx, cy, _f, col, low, level), c in zip(cells, g.cells):
        assert (int(col), int(low), int(level)) == (c.col, c.low, c.level)
        assert float(cy) == TOP + c.level * DY
    # Kogge-Stone: n log2 n - n + 1 cells (Kogge and Stone 1973; Harris 2003, from memory); Brent-Kung:
    # 2n - 2 - log2 n (Brent and Kung 1982; from memory); at 16 bits without carry-in, nothing is pruned.
    expect = {"kogge-stone": 16 * 4 - 16 + 1, "brent-kung": 2 * 16 - 2 - 4}
    if network in expect:
        assert len(g.cells) == expect[network]


@pytest.mark.slow
def test_build_draw_writes_the_drawing(tmp_path):
    spec = tmp_path / "bk.yaml"
    spec.write_text("name: bk16\nwidth: 16\nscheme: prefix\nprefix: brent-kung\n")
    rip = tmp_path / "rip.yaml"
    rip.write_text("name: rip8\nwidth: 8\nscheme: ripple\n")
    r = subprocess.run([*CLI, "build", str(spec), str(rip), "--out", str(tmp_path / "o"), "--draw"],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    svg = (tmp_path / "o" / "bk16" / "bk16_prefix.svg").read_text()
    assert svg.startswith("<svg") and svg.count("<circle") >= 27 and "cin" in svg
    assert "no prefix network to draw" in r.stdout and not list((tmp_path / "o" / "rip8").glob("*.svg"))


@pytest.mark.slow
def test_report_is_one_self_contained_file_with_table_plots_front_and_specs(tmp_path):
    import re

    done = explore(_tiny(tmp_path), tmp_path / "o", tmp_path / "cache", jobs=1)
    o = tmp_path / "o"
    html = (o / "report.html").read_text()
    names = {f.name for f in o.iterdir()}
    stems = {n[:-4] for n in names if n.endswith(".png")}
    assert stems == {n[:-4] for n in names if n.endswith(".svg")}  # every plot in both forms
    assert {"pareto_w8_unit_gate_delay", "pareto_w16_le_fo4", "width_unit_gate_area"} <= stems
    for n in names:
        if n.endswith(".png"):
            assert (o / n).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert html.count("<svg") >= len(stems) + 2  # plots inline, and the two prefix networks drawn
    assert not re.search(r"""(src|href)=["'](?!#|data:)""", html)  # nothing fetched from elsewhere
    data = json.loads((o / "results.json").read_text())
    for e in data["pareto"]:
        for n in e["front"]:
            assert n in html
    for p in done.outcome.sweep.points:
        assert f"<summary>{p.spec.name} (" in html
    assert "not sign-off timing" in html


# -- pick -----------------------------------------------------------------------------------------------------
def _pick(tmp_path, width, target, limit, minimize="area"):
    from adder_forge.explore.figures import delay_figures
    from adder_forge.explore.pick import candidates_sweep, choose

    sw = candidates_sweep(width, target, False, f"pick_w{width}")
    out = run(sw, tmp_path / "cache", jobs=1)
    return choose(out, target, delay_figures()[target], limit, minimize), out


@pytest.mark.parametrize("target, limit, minimize", [
    ("unit_gate_delay", 14, "area"), ("unit_gate_delay", 30, "area"), ("le_fo4", 9.0, "area"),
    ("unit_gate_delay", 100, "delay"), ("le_fo4", 100.0, "area"),
])
def test_pick_is_the_best_within_the_limit_and_on_the_front(tmp_path, target, limit, minimize):
    from adder_forge.explore.figures import delay_figures

    picked, out = _pick(tmp_path, 16, target, limit, minimize)
    area = delay_figures()[target]
    table = figure_table(out)
    ok = [p for p in out.sweep.points if table[p.spec.name][target] is not None
          and table[p.spec.name][target] <= limit and out.entries[(p.spec.name, CHECK)]["result"]["ok"]]
    assert picked.winner is not None and ok
    w = picked.winner.point.spec.name
    a = {p.spec.name: (table[p.spec.name][area], table[p.spec.name][target]) for p in ok}
    best = min(a.values()) if minimize == "area" else min((d, x) for x, d in a.values())[::-1]
    assert a[w] == best  # brute force over the candidates
    # on the Pareto front of the same adders (area against the target figure)
    pts = [(p.spec.name, table[p.spec.name][area], table[p.spec.name][target]) for p in out.sweep.points
           if table[p.spec.name][target] is not None]
    assert w in front(pts)
    assert picked.plus is None  # `+` has no estimate: the output says so
    from adder_forge.explore.pick import explain

    assert any("+: no" in line for line in explain(picked))


def test_pick_prefers_plus_on_a_tie_and_never_returns_worse_than_plus(tmp_path):
    """The rule, on the figures of a real run: give `+` the winner's figures and `+` must win; make it a
    little worse and the generated adder must win; `+` better, `+` must win."""
    from adder_forge.explore.pick import choose

    picked, out = _pick(tmp_path, 16, "unit_gate_delay", 14)
    w = picked.winner.point
    plus = next(p for p in out.sweep.points if p.baseline)
    for bump, plus_should_win in ((0, True), (1, False), (-1, True)):
        recs = [dict(r) for r in out.entries[(w.spec.name, "estimates")]["records"]]
        for r in recs:
            if r["figure"] == "unit_gate_area":
                r["value"] += bump
        entries = dict(out.entries)
        entries[(plus.spec.name, "estimates")] = {**out.entries[(w.spec.name, "estimates")], "records": recs}
        again = choose(replace(out, entries=entries), "unit_gate_delay", "unit_gate_area", 14, "area")
        assert again.plus_wins is plus_should_win, bump
        from adder_forge.explore.pick import explain

        text = "\n".join(explain(again))
        assert text.startswith("use Verilog's +") is plus_should_win, text


@pytest.mark.slow
def test_pick_command_writes_the_spec_and_its_build_and_exit_1_when_nothing_fits(tmp_path):
    base = [*CLI, "pick", "--width", "12", "--target", "unit_gate_delay", "--no-carry-in", "--cache",
            str(tmp_path / "c"), "--out", str(tmp_path / "o"), "--jobs", "1"]
    r = subprocess.run([*base, "--max-delay", "16", "--name", "acc12"], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    assert r.stdout.splitlines()[1].startswith("use ") and "runners-up" in r.stdout
    spec = af.load_spec(tmp_path / "o" / "acc12" / "acc12.yaml")  # the chosen spec loads back as it is
    assert spec.name == "acc12" and spec.width == 12 and spec.carry_in is False
    assert (tmp_path / "o" / "acc12" / "acc12.v").is_file() and (tmp_path / "o" / "acc12" / "acc12_tb.v").is_file()
    assert af.check(af.elaborate(spec), af.builtin_plan(spec, 100, 1)).ok
    r = subprocess.run([*base, "--max-delay", "2"], capture_output=True, text=True)
    assert r.returncode == 1 and "no adder meets unit_gate_delay <= 2" in r.stdout
    assert r.stdout.count("\n  ") == 3  # the three closest
    assert "from the cache" in r.stdout and not (tmp_path / "o" / "pick_w12").exists()
    r = subprocess.run([*base, "--max-delay", "2", "--target", "lut6_dept"], capture_output=True, text=True)
    assert r.returncode == 2 and "did you mean 'lut6_depth'" in r.stderr and r.stderr.count("\n") == 1


# -- Dask -------------------------------------------------------------------------------------------------------
@pytest.mark.slow
def test_a_dask_cluster_gives_the_same_results_as_local_cores(tmp_path):
    distributed = pytest.importorskip("distributed")
    sw = load_sweep(_tiny(tmp_path))
    local = run(sw, tmp_path / "c1", jobs=1)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None,
                                  silence_logs=40) as cluster:
        far = run(sw, tmp_path / "c2", executor="dask", scheduler=cluster.scheduler_address)
        assert far.computed == local.computed == 16
        assert to_json(far) == to_json(local) and to_csv(far) == to_csv(local)
        # the entries came back to this process and are in its cache: a second run computes nothing
        again = run(sw, tmp_path / "c2", executor="dask", scheduler=cluster.scheduler_address)
        assert again.computed == 0 and to_json(again) == to_json(local)
    assert len(cache_mod.Cache(tmp_path / "c2").entries()) == 16


@pytest.mark.slow
def test_dask_needs_a_scheduler_and_says_so(tmp_path):
    r = subprocess.run([*CLI, "explore", str(_tiny(tmp_path)), "--executor", "dask"], capture_output=True, text=True)
    assert r.returncode == 2 and "--scheduler" in r.stderr and r.stderr.count("\n") == 1


def _children(pid: int) -> set[int]:
    """PIDs whose parent is pid, read from /proc (Linux); never by process name."""
    out = set()
    for d in Path("/proc").iterdir():
        if d.name.isdigit():
            try:
                if int((d / "stat").read_text().rsplit(")", 1)[1].split()[1]) == pid:
                    out.add(int(d.name))
            except (OSError, IndexError, ValueError):
                pass
    return out


def _alive(pid: int) -> bool:
    try:
        state = (Path("/proc") / str(pid) / "stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state != "Z"


@pytest.mark.slow
@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="reads worker PIDs from /proc (Linux)")
def test_pool_workers_die_with_a_killed_explore(tmp_path):
    sweep = _tiny(tmp_path, TINY.replace("[8, 16]", "[16, 32, 64]"))
    base = [*CLI, "explore", str(sweep), "--jobs", "2", "--table-only"]
    whole = subprocess.run([*base, "--out", str(tmp_path / "whole"), "--cache", str(tmp_path / "c1")],
                           capture_output=True, text=True)
    assert whole.returncode == 0, whole.stderr
    cache = cache_mod.Cache(tmp_path / "c2")
    p = subprocess.Popen([*base, "--out", str(tmp_path / "cut"), "--cache", str(tmp_path / "c2")],
                         stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    workers: set[int] = set()
    deadline = time.monotonic() + 300
    while not cache.entries() and time.monotonic() < deadline and p.poll() is None:
        workers |= _children(p.pid)
        time.sleep(0.005)
    workers |= _children(p.pid)
    p.send_signal(signal.SIGKILL)
    p.wait()
    assert workers, "the run started no worker processes"
    deadline = time.monotonic() + 10
    while any(_alive(w) for w in workers) and time.monotonic() < deadline:
        time.sleep(0.05)
    left = [w for w in workers if _alive(w)]
    for w in left:  # clean up what the defect left behind: only PIDs this run started
        os.kill(w, signal.SIGKILL)
    assert not left, f"workers {left} outlived the killed explore"
    again = subprocess.run([*base, "--out", str(tmp_path / "cut"), "--cache", str(tmp_path / "c2")],
                           capture_output=True, text=True)
    assert again.returncode == 0, again.stderr
    assert (tmp_path / "cut" / "results.csv").read_bytes() == (tmp_path / "whole" / "results.csv").read_bytes()


# -- the time limit of a synthesis task ------------------------------------------------------------------------
def test_task_seconds_is_read_and_the_default_is_documented():
    text = "name: s\nwidths: [8]\nvariants:\n  - scheme: ripple\nfigures: [estimates, generic]\n"
    from adder_forge.explore.run import task_for
    from adder_forge.explore.sweep import TASK_SECONDS

    assert parse_sweep(text, "s.yaml").task_seconds == TASK_SECONDS == 1200.0
    assert f"{TASK_SECONDS:.0f}" in (ROOT / "docs" / "explore.md").read_text()
    sw = parse_sweep(text + "task_seconds: 90\n", "s.yaml")
    assert sw.task_seconds == 90.0
    spec = sw.points[0].spec
    # the limit applies to synthesis tasks only, and is not part of the cache key
    assert task_for(spec, "generic", "n", 90.0).limit == 90.0
    assert task_for(spec, "estimates", "n", 90.0).limit is None and task_for(spec, CHECK, "n", 90.0).limit is None
    assert task_for(spec, "generic", "n", 90.0).key == task_for(spec, "generic", "n", 5.0).key


def test_bad_task_seconds_on_the_command_line_is_one_line_and_exit_2(tmp_path, capsys):
    from adder_forge.cli import main

    p = _tiny(tmp_path)
    for bad in ("0", "-3", "nan"):
        assert main(["explore", str(p), "--task-seconds", bad, "--out", str(tmp_path / "o"),
                     "--cache", str(tmp_path / "c")]) == 2
        err = capsys.readouterr().err
        assert err.startswith("adder-forge explore: error:") and "--task-seconds" in err, err
        assert err.count("\n") == 1 and "Traceback" not in err
    assert not (tmp_path / "o").exists() and not (tmp_path / "c").exists()


@pytest.mark.synth
@pytest.mark.slow
def test_a_synthesis_task_over_its_limit_is_a_failed_row_and_a_larger_limit_measures_it(tmp_path):
    # A limit shorter than a Python process takes to start: every synthesis task passes it, whatever the load.
    text = TINY.replace("[8, 16]", "[8]").replace("    prefix: [kogge-stone, brent-kung]\n", "    prefix: sklansky\n")
    text += "figures: [estimates, generic]\ntask_seconds: 0.001\n"
    p = _tiny(tmp_path, text)
    first = explore(p, tmp_path / "o", tmp_path / "cache", jobs=1, draw=False)
    out = first.outcome
    n = len(out.sweep.points)
    assert n == 3 and out.timed_out == out.failed == n and out.computed == 3 * n
    rows = json.loads((tmp_path / "o" / "results.json").read_text())["rows"]
    generic = [r for r in rows if r["source"] == "generic"]
    assert generic and all(r["value"] is None and "task limit of 0.001 s" in r["note"] for r in generic)
    assert all(r["value"] is not None for r in rows if r["figure"] == "unit_gate_area" and r["scheme"] != "behavioral")
    assert all(r["check"] == "pass" for r in rows)  # the check and the estimates are not limited
    from adder_forge.explore.pick import choose, explain

    lines = explain(choose(out, "abc_depth", "abc_cells", 100, "area"))  # pick says what it could not weigh
    assert lines[0].startswith("no adder meets") and "  not measured, so not considered:" in lines
    assert sum("task limit of 0.001 s" in line for line in lines) == n
    # cached with its limit: an unchanged re-run computes nothing and says the same
    again = explore(p, tmp_path / "o", tmp_path / "cache", jobs=1, draw=False)
    assert again.outcome.computed == 0 and again.outcome.timed_out == n
    assert (tmp_path / "o" / "results.json").read_text() == first.written.path.joinpath("results.json").read_text()
    # a larger limit measures them again, through the process pool too
    more = explore(p, tmp_path / "o2", tmp_path / "cache", jobs=2, draw=False, task_seconds=600)
    assert more.outcome.computed == n and more.outcome.failed == 0
    table = figure_table(more.outcome)
    assert all(table[q.spec.name]["abc_cells"] for q in more.outcome.sweep.points)
    # and figures, once measured, serve any limit
    assert run(load_sweep(p), tmp_path / "cache", jobs=1).computed == 0


def _sleeper(tmp_path) -> tuple[str, ...]:
    """A stand-in for the task's child process: it starts a tool (a sleep) that writes its PID, and waits."""
    return ("sh", "-c", f"sleep 300 & echo $! > {tmp_path / 'tool.pid'}; wait", "child")


@pytest.mark.slow
@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="reads PIDs from /proc (Linux)")
def test_a_task_over_its_limit_has_its_whole_process_group_killed(tmp_path, monkeypatch):
    from adder_forge.explore import timed

    monkeypatch.setattr(timed, "CHILD", _sleeper(tmp_path))
    spec = load_sweep(_tiny(tmp_path)).points[0].spec
    entry = timed.compute_within(spec, "generic", 10.0, {"adder_forge": "x"})
    assert entry["timed_out"] == 10.0 and "task limit of 10 s" in entry["error"]
    tool = int((tmp_path / "tool.pid").read_text())  # written within the 10 s the child had
    deadline = time.monotonic() + 10
    while _alive(tool) and time.monotonic() < deadline:
        time.sleep(0.05)
    alive = _alive(tool)
    if alive:
        os.kill(tool, signal.SIGKILL)  # clean up what the defect left: only the PID this test started
    assert not alive, "the tool of a timed-out task outlived it"


def test_a_task_process_that_dies_is_an_error_row_and_is_not_cached(tmp_path, monkeypatch):
    from adder_forge.explore import run as run_mod, timed

    monkeypatch.setattr(timed, "CHILD", ("sh", "-c", "echo 'out of memory' >&2; exit 3", "child"))
    spec = load_sweep(_tiny(tmp_path)).points[0].spec
    task = run_mod.task_for(spec, "generic", "n", 60.0)
    entry = run_mod.run_task(task, str(tmp_path / "cache"))
    assert entry["error"] == "the task's process ended with exit 3: out of memory" and "timed_out" not in entry
    assert cache_mod.Cache(tmp_path / "cache").entries() == []


# -- plots are drawn only when what they show changed ----------------------------------------------------------
@pytest.mark.slow
def test_an_unchanged_plot_is_not_drawn_again_and_a_changed_one_is(tmp_path, monkeypatch):
    from adder_forge.explore import report

    first = explore(_tiny(tmp_path), tmp_path / "o", tmp_path / "cache", jobs=1)
    plots = sorted(f for f in first.files if f.endswith(".png"))
    assert first.drawn == len(plots) == 8 and first.reused == 0  # 2 widths x 2 pairs, and 4 against width
    files = {f.name: f.read_bytes() for f in (tmp_path / "o").iterdir() if f.is_file()}

    def no_drawing(d):
        raise AssertionError(f"{d['stem']} drawn again")

    with monkeypatch.context() as m:
        m.setattr(report, "DRAW", {"pareto": no_drawing, "width": no_drawing})
        again = explore(_tiny(tmp_path), tmp_path / "o", tmp_path / "cache", jobs=1)
    assert again.drawn == 0 and again.reused == 8
    assert {f.name: f.read_bytes() for f in (tmp_path / "o").iterdir() if f.is_file()} == files
    # one more width: its own Pareto plots and the plots against width change, the others are taken as they were
    wider = explore(_tiny(tmp_path, TINY.replace("[8, 16]", "[8, 16, 32]")), tmp_path / "o2", tmp_path / "cache",
                    jobs=1)
    assert wider.drawn == 2 + 4 and wider.reused == 4
    for f in plots:
        if f.startswith(("pareto_w8_", "pareto_w16_")):
            assert (tmp_path / "o2" / f).read_bytes() == files[f]
    # what the cache gave is what drawing it now gives
    fresh = report.report_files(wider.outcome)
    assert all(fresh[f] == (tmp_path / "o2" / f).read_bytes() for f in fresh if f.endswith(".png"))


def test_a_delay_axis_spanning_more_than_8_times_is_drawn_on_a_log_scale(tmp_path):
    from adder_forge.explore.report import pareto_plot_data

    sw = load_sweep(_tiny(tmp_path, TINY.replace("[8, 16]", "[8, 128]")))
    out = run(sw, tmp_path / "cache", jobs=1)
    table = figure_table(out)
    for d in pareto_plot_data(out):
        e = d["entry"]
        ys = [table[p.spec.name][e["delay"]] for p in sw.points if p.spec.width == e["width"]]
        ys = [y for y in ys if y is not None]
        assert d["logx"] == (max(ys) > 8 * min(ys))  # 128-bit ripple: 256 unit delays beside a tree's 16
    assert {(d["entry"]["width"], d["logx"]) for d in pareto_plot_data(out)
            if d["entry"]["delay"] == "unit_gate_delay"} == {(8, False), (128, True)}
