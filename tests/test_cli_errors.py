"""Bad input: one line FILE:LINE:COL: error: ..., exit status 2, no traceback, nothing written."""

import re

import pytest

from conftest import run_cli

GOOD = "name: add8\nwidth: 8\nscheme: ripple\n"

CASES = [
    # (file text, expected "line:col", words the message must contain)
    ("name: add8\nwidht: 8\nscheme: ripple\n", "2:1", ["unknown key 'widht'", "did you mean 'width'"]),
    ("name: add8\nwidth: eight\nscheme: ripple\n", "2:8", ["'width' must be an integer", "string 'eight'"]),
    ("name: add8\nwidth: 8.5\nscheme: ripple\n", "2:8", ["'width' must be an integer"]),
    ("name: add8\nwidth: true\nscheme: ripple\n", "2:8", ["'width' must be an integer", "boolean"]),
    ("name: add8\nwidth: 0\nscheme: ripple\n", "2:8", ["'width' must be between 1 and"]),
    ("name: add8\nwidth: 100000\nscheme: ripple\n", "2:8", ["'width' must be between 1 and"]),
    ("name: add8\nwidth: 8\nscheme: rippel\n", "3:9", ["unknown scheme 'rippel'", "did you mean 'ripple'"]),
    ("name: add8\nwidth: 8\nscheme: ripple\ncarry_in: maybe\n", "4:11", ["'carry_in' must be true or false"]),
    ("name: 8add\nwidth: 8\nscheme: ripple\n", "1:7", ["legal Verilog identifier"]),
    ("name: module\nwidth: 8\nscheme: ripple\n", "1:7", ["keyword"]),
    ("name: logic\nwidth: 8\nscheme: ripple\n", "1:7", ["keyword"]),
    ("name: add8\nwidth: 8\n", "2:1", ["missing required key 'scheme'"]),
    ("name: add8\nwidth: [8\nscheme: ripple\n", "3:7", ["invalid YAML"]),
    ("name: add8\nwidth: 8\nwidth: 9\nscheme: ripple\n", "3:1", ["given twice"]),
    ("- 8\n- 9\n", "1:1", ["must be a mapping"]),
    ("", "1:1", ["empty"]),
    ("name: add8\nwidth: 8\nscheme: !!python/object:os.system echo\n", "3:9", ["invalid"]),
]


@pytest.mark.parametrize("text,where,words", CASES, ids=[c[2][0][:30] for c in CASES])
def test_bad_spec_one_line_exit_2_nothing_written(tmp_path, capsys, text, where, words):
    spec = tmp_path / "bad.yaml"
    spec.write_text(text)
    out = tmp_path / "out"
    code, stdout, stderr = run_cli(["build", str(spec), "--out", str(out)], capsys)
    assert code == 2
    lines = stderr.strip().splitlines()
    assert len(lines) == 1, stderr
    assert lines[0].startswith(f"{spec}:{where}: error: "), lines[0]
    for w in words:
        assert w in lines[0]
    assert "Traceback" not in stderr
    assert not out.exists()


def test_missing_file(tmp_path, capsys):
    code, _, err = run_cli(["build", str(tmp_path / "nope.yaml"), "--out", str(tmp_path / "o")], capsys)
    assert code == 2 and err.strip() == f"{tmp_path / 'nope.yaml'}:1:1: error: no such file"


def test_key_of_another_scheme(tmp_path, capsys):
    from adder_forge.spec.registry import schemes

    owners = sorted(s.name for s in schemes().values() if any(o.key == "block" for o in s.options))
    if not owners:
        pytest.skip("no scheme with a 'block' key registered yet")
    spec = tmp_path / "k.yaml"
    spec.write_text(GOOD + "block: 4\n")
    code, _, err = run_cli(["build", str(spec), "--out", str(tmp_path / "o")], capsys)
    assert code == 2
    assert re.match(rf"{re.escape(str(spec))}:4:1: error: key 'block' does not apply to scheme 'ripple'", err)


def test_failure_in_second_spec_leaves_existing_outputs(tmp_path, capsys):
    good = tmp_path / "good.yaml"
    good.write_text(GOOD)
    out = tmp_path / "out"
    assert run_cli(["build", str(good), "--out", str(out)], capsys)[0] == 0
    before = {p.name: p.read_bytes() for p in (out / "add8").iterdir()}
    bad = tmp_path / "bad.yaml"
    bad.write_text("name: other\nwidth: -1\nscheme: ripple\n")
    good2 = tmp_path / "good2.yaml"
    good2.write_text(GOOD.replace("add8", "fresh"))
    code, _, err = run_cli(["build", str(good), str(good2), str(bad), "--out", str(out)], capsys)
    assert code == 2 and f"{bad}:2:8: error:" in err
    assert sorted(p.name for p in out.iterdir()) == ["add8"]  # nothing of good2, no staging folders
    assert {p.name: p.read_bytes() for p in (out / "add8").iterdir()} == before


def test_duplicate_module_names_rejected(tmp_path, capsys):
    a = tmp_path / "a.yaml"
    b = tmp_path / "b.yaml"
    a.write_text(GOOD)
    b.write_text(GOOD.replace("ripple", "lookahead"))
    code, _, err = run_cli(["build", str(a), str(b), "--out", str(tmp_path / "o")], capsys)
    assert code == 2 and f"{b}:1:7: error: module name 'add8' is also used by {a}" in err


def test_unknown_simulator_and_bad_option(tmp_path, capsys):
    s = tmp_path / "s.yaml"
    s.write_text(GOOD)
    code, _, err = run_cli(["verify", str(s), "--sim", "icarsu"], capsys)
    assert code == 2 and "unknown simulator 'icarsu' (did you mean 'icarus'?)" in err
    code, _, err = run_cli(["verify", str(s), "--vectors", "many"], capsys)
    assert code == 2 and len(err.strip().splitlines()) == 1


# -- names that clash with the tool's own (issue 8, defect 6) ------------------------------------------------------
# Before the fix each of these built, then failed inside Yosys or a simulator as a tool error (exit 3):
# "There is already a module \adder_forge_miter", "Module x_tb was already declared", and in
# `report --synth ice40`: "cells_sim.v:228: ERROR: Re-definition of module `\SB_CARRY'".
@pytest.mark.parametrize("name,why", [
    ("adder_forge_miter", "reserved"), ("adder_forge_batch", "reserved"), ("adder_forge_ice40_top", "reserved"),
    ("ADDER_FORGE_mine", "reserved"), ("x_tb", "reserved"), ("x_TB", "reserved"),
    ("SB_CARRY", "iCE40 cell library"), ("ICESTORM_LC", "iCE40 cell library"),
    ("std", "built-in package"),  # before: Verilator failed on it (exit 3)
])
def test_reserved_names_rejected_alone(tmp_path, capsys, name, why):
    spec = tmp_path / "r.yaml"
    spec.write_text(GOOD.replace("add8", name))
    code, _, err = run_cli(["build", str(spec), "--out", str(tmp_path / "o")], capsys)
    assert code == 2, err
    assert err.startswith(f"{spec}:1:7: error: 'name' '{name}'") and why in err
    assert len(err.strip().splitlines()) == 1 and not (tmp_path / "o").exists()


def test_a_name_ending_in_plus_is_a_name_like_any_other(tmp_path, capsys):
    """The `+` baseline of `report` used to be NAME_plus, so 'x_plus' beside 'x' was refused; its module is
    now adder_forge_plusW (a reserved prefix), and nothing is derived from a spec's name with '_plus'."""
    a, b = tmp_path / "a.yaml", tmp_path / "b.yaml"
    a.write_text(GOOD.replace("add8", "x"))
    b.write_text(GOOD.replace("add8", "x_plus"))
    code, _, err = run_cli(["report", str(a), str(b), "--out", str(tmp_path / "o")], capsys)
    assert code == 0, err


@pytest.mark.parametrize("first,second,why", [
    ("x", "x__reference", "the name the tool gives a module of 'x'"),
    ("Add8", "add8", "ignoring case"),
])
def test_names_clashing_across_specs(tmp_path, capsys, first, second, why):
    a, b = tmp_path / "a.yaml", tmp_path / "b.yaml"
    a.write_text(GOOD.replace("add8", first))
    b.write_text(GOOD.replace("add8", second))
    for command in (["build", str(a), str(b), "--out", str(tmp_path / "o")], ["verify", str(a), str(b)]):
        code, _, err = run_cli(command, capsys)
        assert code == 2 and err.startswith(f"{b}:1:7: error: module name '{second}'") and why in err, err


def test_names_like_testbench_and_proof_locals_are_fine(tmp_path, capsys):
    # The testbench's own signals (a, sum, dut, vec, W, ...), the miter's ports, the FPGA wrapper's clk and
    # C++ words live in other name spaces: `verify --sim icarus,verilator --formal` (and `report --synth
    # ice40` for clk and sb_carry) passed on these names when the rules above were written.
    for n in ("dut", "vec", "gold", "trigger", "sb_carry", "clk", "STD", "namespace", "main"):
        spec = tmp_path / f"{n}.yaml"
        spec.write_text(GOOD.replace("add8", n))
        assert run_cli(["build", str(spec), "--out", str(tmp_path / "o")], capsys)[0] == 0


def test_overlong_name_rejected(tmp_path, capsys):
    spec = tmp_path / "long.yaml"
    spec.write_text(GOOD.replace("add8", "a" * 300))
    code, _, err = run_cli(["build", str(spec), "--out", str(tmp_path / "o")], capsys)
    assert code == 2 and "at most 128" in err  # before: exit 3, "File name too long" from the file system


# -- YAML 1.1 spellings: specs are read as YAML 1.2 core (README, "The spec") ----------------------------------------
@pytest.mark.parametrize("key,value,expect", [
    ("width", "0x10", 16), ("width", "0o17", 15), ("width", "+8", 8), ("carry_in", "TRUE", True),
    ("carry_in", "False", False),
])
def test_yaml12_spellings_accepted(key, value, expect):
    from adder_forge.spec.loader import parse_spec

    s = parse_spec(GOOD.replace("width: 8", f"width: 8\n{key}: {value}") if key != "width"
                   else GOOD.replace("width: 8", f"width: {value}"), "s.yaml")
    assert getattr(s, key) == expect and type(getattr(s, key)) is type(expect)


@pytest.mark.parametrize("key,value,words", [
    ("carry_in", "yes", "write true or false"), ("carry_in", "on", "write true or false"),
    ("carry_out", "no", "write true or false"), ("carry_out", "off", "write true or false"),
    ("width", "010", "leading zero"), ("width", "1_000", "plain decimal number"),
    ("width", "1:30", "plain decimal number"), ("width", "0b1000", "plain decimal number"),
])
def test_yaml11_spellings_rejected_with_a_hint(tmp_path, capsys, key, value, words):
    spec = tmp_path / "y.yaml"
    text = GOOD.replace("width: 8", f"width: {value}") if key == "width" else GOOD + f"{key}: {value}\n"
    spec.write_text(text)
    code, _, err = run_cli(["build", str(spec), "--out", str(tmp_path / "o")], capsys)
    line = 2 if key == "width" else 4
    assert code == 2 and err.startswith(f"{spec}:{line}:") and words in err, err
    assert len(err.strip().splitlines()) == 1


# -- command-line errors in the command's own form (issue 8, defect 9) ------------------------------------------------
@pytest.mark.parametrize("argv,start", [
    (["build", "S", "--tb-vectors", "-1"], "adder-forge build: error: --tb-vectors must be 0 or more"),
    (["verify", "S", "--vectors", "-5"], "adder-forge verify: error: --vectors must be 0 or more"),
    (["verify", "S", "--sim", "icarsu"], "adder-forge verify: error: unknown simulator 'icarsu' (did you mean 'icarus'?)"),
    (["verify", "S", "--sim", "cocotb"], "adder-forge verify: error: --sim cocotb needs a simulator"),
    (["verify", "S", "--sim", "formal"], "adder-forge verify: error: 'formal' is not a simulator"),
    (["report", "S", "--synth", "lut"], "adder-forge report: error: unknown synthesis flow 'lut' (did you mean 'lut6'?)"),
    (["report", "S", "--synth", "ice41"], "adder-forge report: error: unknown synthesis flow 'ice41' (did you mean 'ice40'?)"),
])
def test_usage_errors_name_the_command(tmp_path, capsys, argv, start):
    spec = tmp_path / "s.yaml"
    spec.write_text(GOOD)
    argv = [str(spec) if a == "S" else a for a in argv]
    code, _, err = run_cli(argv, capsys)
    assert code == 2 and err.startswith(start) and "<command line>" not in err, err
    assert len(err.strip().splitlines()) == 1


def test_simulator_names_by_meaning_and_any_case():
    from adder_forge.cli import _sims

    assert _sims(["iverilog", "VVP,Verilator", "Icarus"]) == ["icarus", "verilator"]
    assert _sims(["cocotb-iverilog"]) == ["cocotb-icarus"]


def test_flow_names_any_case():
    from adder_forge.cli import _flows

    assert _flows("LUT6, Generic,ICE40,lut6") == ["lut6", "generic", "ice40"]


@pytest.mark.parametrize("command", ["build", "report"])
def test_out_that_is_a_file_is_bad_input(tmp_path, capsys, command):
    spec = tmp_path / "s.yaml"
    spec.write_text(GOOD)
    afile = tmp_path / "notes.txt"
    afile.write_text("mine\n")
    code, _, err = run_cli([command, str(spec), "--out", str(afile)], capsys)  # before: exit 3
    assert code == 2 and err.strip() == f"adder-forge {command}: error: --out {afile} is a file, not a folder"
    code, _, err = run_cli([command, str(spec), "--out", str(afile / "sub")], capsys)
    assert code == 2 and f"cannot be made: {afile} is a file" in err
    code, _, err = run_cli([command, str(spec), "--out", ""], capsys)  # before: wrote into the current folder
    assert code == 2 and err.strip() == f"adder-forge {command}: error: --out needs a folder name"
    assert afile.read_text() == "mine\n"


def test_dump_takes_several_specs(tmp_path, capsys):
    a, b = tmp_path / "a.yaml", tmp_path / "b.yaml"
    a.write_text(GOOD)
    b.write_text(GOOD.replace("add8", "other").replace("ripple", "lookahead"))
    code, out, _ = run_cli(["dump", str(a), str(b)], capsys)
    assert code == 0
    heads = [line for line in out.splitlines() if line.startswith("; ")]
    assert heads == [f"; add8 from {a}", f"; other from {b}"]
    assert out.count("\nnetwork add8\n") == 1 and out.count("\nnetwork other\n") == 1


def test_report_says_where_it_wrote(tmp_path, capsys):
    spec = tmp_path / "s.yaml"
    spec.write_text(GOOD)
    code, out, _ = run_cli(["report", str(spec), "--out", str(tmp_path / "o")], capsys)
    path = tmp_path / "o" / "add8" / "add8.json"
    assert code == 0 and f"add8: figures written to {path}" in out and path.exists()


def test_schemes_shows_what_an_absent_key_means(capsys):
    code, out, _ = run_cli(["schemes"], capsys)
    assert code == 0 and "prefix (default kogge-stone)" in out and "block (default auto)" in out


@pytest.mark.parametrize("scheme", ["carry-select", "carry-skip", "conditional-sum", "block-lookahead", "prefix"])
def test_block_wider_than_width_is_noted(tmp_path, capsys, scheme):
    spec = tmp_path / "w.yaml"
    spec.write_text(f"name: w3\nwidth: 3\nscheme: {scheme}\nblock: 8\n")
    assert run_cli(["build", str(spec), "--out", str(tmp_path / "o")], capsys)[0] == 0
    note = "block 8 is wider than the 3-bit adder: a single block of 3 bits"
    assert f"// note: {note}" in (tmp_path / "o" / "w3" / "w3.v").read_text()
    spec.write_text(f"name: w3\nwidth: 8\nscheme: {scheme}\nblock: 8\n")  # as wide as the adder: no note
    assert run_cli(["build", str(spec), "--out", str(tmp_path / "o2")], capsys)[0] == 0
    assert "// note: block" not in (tmp_path / "o2" / "w3" / "w3.v").read_text()


def test_longest_name_still_gets_its_baseline(tmp_path, capsys):
    # A name at the limit must not fail in report, whose `+` baseline is a module of the tool's own
    # (adder_forge_plusW, synth/measure.baseline_spec), and beside the proof's NAME__reference.
    from adder_forge.spec.loader import MAX_NAME
    spec = tmp_path / "long.yaml"
    spec.write_text(GOOD.replace("add8", "a" * MAX_NAME))
    code, out, err = run_cli(["report", str(spec), "--out", str(tmp_path / "o")], capsys)
    assert code == 0, err


def test_keep_that_is_a_file_is_bad_input(tmp_path, capsys):
    spec = tmp_path / "s.yaml"
    spec.write_text(GOOD)
    afile = tmp_path / "keep.txt"
    afile.write_text("mine\n")
    code, _, err = run_cli(["verify", str(spec), "--keep", str(afile)], capsys)  # before: a traceback, exit 1
    assert code == 2 and err.strip() == f"adder-forge verify: error: --keep {afile} is a file, not a folder"
    assert afile.read_text() == "mine\n"


@pytest.mark.sim
def test_sim_alias_runs_icarus(tmp_path, capsys):
    import shutil

    if not shutil.which("iverilog"):
        pytest.skip("Icarus Verilog is not installed")
    spec = tmp_path / "s.yaml"
    spec.write_text(GOOD)
    code, out, err = run_cli(["verify", str(spec), "--sim", "IVerilog"], capsys)  # before: "did you mean 'verilator'"
    assert code == 0, err
    assert re.search(r"^add8\s+icarus\s+pass ", out, re.M) and out.strip().endswith("2 passed, 0 failed"), out
