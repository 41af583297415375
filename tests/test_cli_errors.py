"""Bad input: one line FILE:LINE:COL: error: ..., exit status 2, no traceback, nothing written."""

import re

import pytest

from adder_forge.cli import main

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


def run(argv, capsys):
    try:
        code = main(argv)
    except SystemExit as exc:  # argparse's own errors
        code = exc.code
    out = capsys.readouterr()
    return code, out.out, out.err


@pytest.mark.parametrize("text,where,words", CASES, ids=[c[2][0][:30] for c in CASES])
def test_bad_spec_one_line_exit_2_nothing_written(tmp_path, capsys, text, where, words):
    spec = tmp_path / "bad.yaml"
    spec.write_text(text)
    out = tmp_path / "out"
    code, stdout, stderr = run(["build", str(spec), "--out", str(out)], capsys)
    assert code == 2
    lines = stderr.strip().splitlines()
    assert len(lines) == 1, stderr
    assert lines[0].startswith(f"{spec}:{where}: error: "), lines[0]
    for w in words:
        assert w in lines[0]
    assert "Traceback" not in stderr
    assert not out.exists()


def test_missing_file(tmp_path, capsys):
    code, _, err = run(["build", str(tmp_path / "nope.yaml"), "--out", str(tmp_path / "o")], capsys)
    assert code == 2 and err.strip() == f"{tmp_path / 'nope.yaml'}:1:1: error: no such file"


def test_key_of_another_scheme(tmp_path, capsys):
    from adder_forge.registry import schemes

    owners = sorted(s.name for s in schemes().values() if any(o.key == "block" for o in s.options))
    if not owners:
        pytest.skip("no scheme with a 'block' key registered yet")
    spec = tmp_path / "k.yaml"
    spec.write_text(GOOD + "block: 4\n")
    code, _, err = run(["build", str(spec), "--out", str(tmp_path / "o")], capsys)
    assert code == 2
    assert re.match(rf"{re.escape(str(spec))}:4:1: error: key 'block' does not apply to scheme 'ripple'", err)


def test_failure_in_second_spec_leaves_existing_outputs(tmp_path, capsys):
    good = tmp_path / "good.yaml"
    good.write_text(GOOD)
    out = tmp_path / "out"
    assert run(["build", str(good), "--out", str(out)], capsys)[0] == 0
    before = {p.name: p.read_bytes() for p in (out / "add8").iterdir()}
    bad = tmp_path / "bad.yaml"
    bad.write_text("name: other\nwidth: -1\nscheme: ripple\n")
    good2 = tmp_path / "good2.yaml"
    good2.write_text(GOOD.replace("add8", "fresh"))
    code, _, err = run(["build", str(good), str(good2), str(bad), "--out", str(out)], capsys)
    assert code == 2 and f"{bad}:2:8: error:" in err
    assert sorted(p.name for p in out.iterdir()) == ["add8"]  # nothing of good2, no staging folders
    assert {p.name: p.read_bytes() for p in (out / "add8").iterdir()} == before


def test_duplicate_module_names_rejected(tmp_path, capsys):
    a = tmp_path / "a.yaml"
    b = tmp_path / "b.yaml"
    a.write_text(GOOD)
    b.write_text(GOOD.replace("ripple", "lookahead"))
    code, _, err = run(["build", str(a), str(b), "--out", str(tmp_path / "o")], capsys)
    assert code == 2 and f"{b}:1:7: error: module name 'add8' is also used by {a}" in err


def test_unknown_simulator_and_bad_option(tmp_path, capsys):
    s = tmp_path / "s.yaml"
    s.write_text(GOOD)
    code, _, err = run(["verify", str(s), "--sim", "icarsu"], capsys)
    assert code == 2 and "unknown simulator 'icarsu' (did you mean 'icarus'?)" in err
    code, _, err = run(["verify", str(s), "--vectors", "many"], capsys)
    assert code == 2 and len(err.strip().splitlines()) == 1
