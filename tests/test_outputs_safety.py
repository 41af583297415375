"""`build` and `report` never delete or overwrite a file adder_forge did not write (issue 8, defect 2).

Each output folder carries a manifest of the files the tool wrote, with their SHA-256; these tests check
the rules built on it against files made by hand here, and the digests against Python's hashlib.
"""

import hashlib
import json
import os

import pytest

from adder_forge.emit import outputs
from adder_forge.base.errors import OutputConflict, OutputError
from adder_forge.synth.measure import measure_specs
from adder_forge.emit.outputs import MANIFEST, STAGE_PREFIX, Folder, write_folders
from adder_forge.spec.loader import load_spec
from conftest import run_cli

SPEC = "name: {name}\nwidth: {width}\nscheme: ripple\n"
BUILT = ("{n}.v", "{n}_tb.v", "{n}_vectors.hex", "{n}.json", "{n}.f", "{n}_inst.v")


def spec_file(tmp_path, name="rtl", width=4, fname=None):
    path = tmp_path / (fname or f"{name}.yaml")
    path.write_text(SPEC.format(name=name, width=width))
    return path


def snapshot(folder):
    """Every file below folder (hidden ones too), as bytes: what 'untouched' is checked against."""
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def no_staging(folder):
    return not any(p.name.startswith(STAGE_PREFIX) for p in folder.iterdir())


# -- the three scenarios of the issue ------------------------------------------------------------------------
def test_spec_named_like_a_hand_written_folder_leaves_it_alone(tmp_path, capsys, monkeypatch):
    """A spec named `rtl` built with `--out .` beside the user's own rtl/ folder."""
    monkeypatch.chdir(tmp_path)
    spec = spec_file(tmp_path)
    (tmp_path / "rtl").mkdir()
    (tmp_path / "rtl" / "top.v").write_text("module top; endmodule\n")
    (tmp_path / "rtl" / "fifo.v").write_text("module fifo; endmodule\n")
    code, out, err = run_cli(["build", spec, "--out", "."], capsys)
    assert code == 0, err
    assert (tmp_path / "rtl" / "top.v").read_text() == "module top; endmodule\n"
    assert (tmp_path / "rtl" / "fifo.v").read_text() == "module fifo; endmodule\n"
    assert all((tmp_path / "rtl" / f.format(n="rtl")).is_file() for f in BUILT)
    assert no_staging(tmp_path)


def test_hand_written_file_of_the_same_name_is_refused(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    spec = spec_file(tmp_path)
    (tmp_path / "rtl").mkdir()
    (tmp_path / "rtl" / "rtl.v").write_text("// my own rtl module\n")
    before = snapshot(tmp_path)
    code, out, err = run_cli(["build", spec, "--out", "."], capsys)
    assert code == 2 and out == ""
    assert err.splitlines() == [os.path.join("rtl", "rtl.v") + ": error: exists and was not written by adder_forge "
                                "(no .adder_forge_manifest.json beside it); move it away or pass --force to replace it"]
    assert snapshot(tmp_path) == before  # nothing written at all, not even the other three files


def test_notes_in_the_output_folder_survive_a_rebuild(tmp_path, capsys):
    spec = spec_file(tmp_path, "add4")
    out = tmp_path / "out"
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0
    (out / "add4" / "NOTES.md").write_text("timing closed at 250 MHz in our flow\n")
    (out / "add4" / "sub").mkdir()
    (out / "add4" / "sub" / "x.txt").write_text("x\n")
    spec_file(tmp_path, "add4", width=6)  # a changed spec: every output file is rewritten
    code, _, err = run_cli(["build", spec, "--out", out], capsys)
    assert code == 0, err
    assert (out / "add4" / "NOTES.md").read_text() == "timing closed at 250 MHz in our flow\n"
    assert (out / "add4" / "sub" / "x.txt").read_text() == "x\n"
    assert "[5:0]" in (out / "add4" / "add4.v").read_text()


def test_rebuild_of_an_unchanged_spec_keeps_the_report_figures(tmp_path, capsys):
    spec = spec_file(tmp_path, "add4")
    out = tmp_path / "out"
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0
    measure_specs([load_spec(spec)], [], out)  # `report` without synthesis: estimates into add4.json
    reported = (out / "add4" / "add4.json").read_text()
    figures = json.loads(reported)["measurements"]
    delay = [r["value"] for r in figures["records"] if r["figure"] == "unit_gate_delay"]
    assert delay == [2 * 4 + 2]  # ripple: 2n + 2 (common practice)
    # the same spec with its keys in another order and a comment: the same spec content
    spec.write_text("# reordered\nscheme: ripple\nwidth: 4\nname: add4\n")
    code, stdout, err = run_cli(["build", spec, "--out", out], capsys)
    assert code == 0, err
    assert "kept the figures of the last report" in stdout
    assert (out / "add4" / "add4.json").read_text() == reported  # byte for byte what `report` wrote
    manifest = json.loads((out / "add4" / MANIFEST).read_text())
    assert manifest["files"]["add4.json"] == hashlib.sha256(reported.encode()).hexdigest()
    # a third build must not see the JSON as hand-edited
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0


def test_rebuild_of_a_changed_spec_drops_the_figures_and_says_so(tmp_path, capsys):
    spec = spec_file(tmp_path, "add4")
    out = tmp_path / "out"
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0
    measure_specs([load_spec(spec)], [], out)
    spec_file(tmp_path, "add4", width=5)
    code, stdout, err = run_cli(["build", spec, "--out", out], capsys)
    assert code == 0, err
    assert "dropped the figures of the last report" in stdout
    data = json.loads((out / "add4" / "add4.json").read_text())
    assert data["width"] == 5 and "measurements" not in data


def test_other_build_options_keep_the_figures(tmp_path, capsys):
    """--tb-vectors and --seed change the testbench, not the adder that was measured."""
    spec = spec_file(tmp_path, "w20", width=20)
    out = tmp_path / "out"
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0
    measure_specs([load_spec(spec)], [], out)
    code, stdout, _ = run_cli(["build", spec, "--out", out, "--tb-vectors", "10", "--seed", "7"], capsys)
    assert code == 0 and "kept the figures" in stdout
    data = json.loads((out / "w20" / "w20.json").read_text())
    assert "measurements" in data and data["testbench"]["vectors"] < 2000


# -- hand edits, --force, the manifest ---------------------------------------------------------------------
@pytest.mark.parametrize("victim", BUILT)
def test_hand_edited_output_is_refused_and_force_replaces_it(tmp_path, capsys, victim):
    spec = spec_file(tmp_path, "add4")
    out = tmp_path / "out"
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0
    fresh = snapshot(out)
    edited = out / "add4" / victim.format(n="add4")
    edited.write_text(edited.read_text() + "// tweaked by hand\n")
    before = snapshot(out)
    code, stdout, err = run_cli(["build", spec, "--out", out], capsys)
    assert code == 2 and stdout == ""
    assert err.splitlines() == [f"{edited}: error: was changed since adder_forge wrote it; "
                                "move it away or pass --force to replace it"]
    assert snapshot(out) == before
    code, _, err = run_cli(["build", spec, "--out", out, "--force"], capsys)
    assert code == 0, err
    assert snapshot(out) == fresh


def test_force_replaces_only_what_the_build_writes(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    spec = spec_file(tmp_path)
    (tmp_path / "rtl").mkdir()
    (tmp_path / "rtl" / "rtl.v").write_text("// mine\n")
    (tmp_path / "rtl" / "top.v").write_text("// also mine\n")
    code, _, err = run_cli(["build", spec, "--out", ".", "--force"], capsys)
    assert code == 0, err
    assert "module rtl" in (tmp_path / "rtl" / "rtl.v").read_text()
    assert (tmp_path / "rtl" / "top.v").read_text() == "// also mine\n"
    manifest = json.loads((tmp_path / "rtl" / MANIFEST).read_text())
    assert "top.v" not in manifest["files"]


def test_manifest_lists_each_written_file_with_its_sha256(tmp_path, capsys):
    spec = spec_file(tmp_path, "add4")
    out = tmp_path / "out"
    (out / "add4").mkdir(parents=True)
    (out / "add4" / "mine.txt").write_text("mine\n")
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0
    manifest = json.loads((out / "add4" / MANIFEST).read_text())
    assert manifest["tool"] == "adder_forge"
    assert sorted(manifest["files"]) == sorted(f.format(n="add4") for f in BUILT)
    for fname, digest in manifest["files"].items():
        assert hashlib.sha256((out / "add4" / fname).read_bytes()).hexdigest() == digest
    assert sorted(p.name for p in (out / "add4").iterdir()) == sorted(
        [MANIFEST, "mine.txt"] + [f.format(n="add4") for f in BUILT])
    assert no_staging(out) and no_staging(out / "add4")


def test_unreadable_manifest_counts_as_none(tmp_path, capsys):
    spec = spec_file(tmp_path, "add4")
    out = tmp_path / "out"
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0
    (out / "add4" / MANIFEST).write_text("{not json")
    spec_file(tmp_path, "add4", width=5)
    code, _, err = run_cli(["build", spec, "--out", out], capsys)
    assert code == 2 and "was not written by adder_forge" in err and len(err.splitlines()) == 1


def test_files_no_longer_built_are_removed_only_if_unchanged(tmp_path):
    write_folders(tmp_path, [Folder("x", {"a.v": "a\n", "b.v": "b\n", "c.v": "c\n"})])
    (tmp_path / "x" / "c.v").write_text("c, edited\n")
    done = write_folders(tmp_path, [Folder("x", {"a.v": "a2\n"})])
    assert sorted(p.name for p in (tmp_path / "x").iterdir()) == [MANIFEST, "a.v", "c.v"]
    assert (tmp_path / "x" / "c.v").read_text() == "c, edited\n"
    assert any("c.v" in n for n in done[0].notes)
    assert json.loads((tmp_path / "x" / MANIFEST).read_text())["files"] == {
        "a.v": hashlib.sha256(b"a2\n").hexdigest()}  # c.v is the user's now


def test_a_folder_where_a_file_goes_is_refused_even_with_force(tmp_path):
    (tmp_path / "x" / "a.v").mkdir(parents=True)
    with pytest.raises(OutputConflict, match="is a folder"):
        write_folders(tmp_path, [Folder("x", {"a.v": "a\n"})], force=True)


def test_output_path_that_is_a_file(tmp_path, capsys):
    spec = spec_file(tmp_path, "add4")
    (tmp_path / "out").write_text("a file\n")
    code, _, err = run_cli(["build", spec, "--out", tmp_path / "out"], capsys)
    # caught by the command line's own check of --out, before any work
    assert code == 2 and err == f"adder-forge build: error: --out {tmp_path / 'out'} is a file, not a folder\n"
    (tmp_path / "o2").mkdir()
    (tmp_path / "o2" / "add4").write_text("a file\n")
    code, _, err = run_cli(["build", spec, "--out", tmp_path / "o2"], capsys)
    assert code == 2 and err.startswith(f"{tmp_path / 'o2' / 'add4'}: error: exists and is not a folder")
    assert (tmp_path / "o2" / "add4").read_text() == "a file\n"


# -- report writes through the manifest --------------------------------------------------------------------
def test_report_refuses_a_hand_edited_json_unless_forced(tmp_path, capsys):
    spec = spec_file(tmp_path, "add4")
    out = tmp_path / "out"
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0
    js = out / "add4" / "add4.json"
    js.write_text(js.read_text().replace('"caution"', '"my_note": 1, "caution"'))
    before = snapshot(out)
    code, _, err = run_cli(["report", spec, "--out", out], capsys)
    assert code == 2 and err.strip().endswith(f"{js}: error: was changed since adder_forge wrote it; "
                                              "move it away or pass --force to replace it")
    assert snapshot(out) == before
    code, _, err = run_cli(["report", spec, "--out", out, "--force"], capsys)
    assert code == 0, err
    assert "measurements" in json.loads(js.read_text())
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0  # the forced write is known as ours


def test_report_into_a_folder_that_is_not_ours(tmp_path, capsys):
    spec = spec_file(tmp_path, "add4")
    out = tmp_path / "out"
    (out / "add4").mkdir(parents=True)
    (out / "add4" / "add4.json").write_text('{"mine": true}\n')
    code, _, err = run_cli(["report", spec, "--out", out], capsys)
    assert code == 2 and "add4.json: error: exists and was not written by adder_forge" in err
    assert (out / "add4" / "add4.json").read_text() == '{"mine": true}\n'


# -- all or nothing --------------------------------------------------------------------------------------------
def test_a_refused_second_spec_leaves_the_first_specs_outputs_untouched(tmp_path, capsys):
    out = tmp_path / "out"
    first = spec_file(tmp_path, "one")
    assert run_cli(["build", first, "--out", out], capsys)[0] == 0
    second = spec_file(tmp_path, "two")
    (out / "two").mkdir()
    (out / "two" / "two.v").write_text("// mine\n")
    before = snapshot(out)
    spec_file(tmp_path, "one", width=7)  # would rewrite every file of one/
    code, _, err = run_cli(["build", first, second, "--out", out], capsys)
    assert code == 2 and "two.v: error: exists and was not written by adder_forge" in err
    assert snapshot(out) == before


def test_a_write_failure_midway_leaves_every_earlier_output(tmp_path, capsys, monkeypatch):
    """The file system fails on a rename in the middle of a two-spec build: both folders come back."""
    out = tmp_path / "out"
    one, two = spec_file(tmp_path, "one"), spec_file(tmp_path, "two")
    assert run_cli(["build", one, two, "--out", out], capsys)[0] == 0
    before = snapshot(out)
    spec_file(tmp_path, "one", width=6)
    spec_file(tmp_path, "two", width=6)
    real = os.rename
    calls = []

    def flaky(src, dst, *a, **kw):
        calls.append(dst)
        if len(calls) == 13:  # the first folder is in place (5 files, 2 renames each), the second half-way
            raise OSError(28, "No space left on device")
        return real(src, dst, *a, **kw)

    monkeypatch.setattr(outputs.os, "rename", flaky)
    code, _, err = run_cli(["build", one, two, "--out", out], capsys)
    assert len(calls) == 13
    assert code == 3 and "No space left on device" in err and len(err.splitlines()) == 1
    assert snapshot(out) == before
    assert no_staging(out)


def test_a_failure_while_staging_writes_nothing(tmp_path, monkeypatch):
    write_folders(tmp_path, [Folder("x", {"a.v": "a\n"})])
    before = snapshot(tmp_path)
    real = outputs._write

    def full(path, text):
        if path.name == "b.v":
            raise OSError(28, "No space left on device")
        real(path, text)

    monkeypatch.setattr(outputs, "_write", full)
    with pytest.raises(OutputError, match="No space left"):
        write_folders(tmp_path, [Folder("x", {"a.v": "a2\n"}), Folder("y", {"b.v": "b\n"})])
    assert snapshot(tmp_path) == before and no_staging(tmp_path)


def test_an_old_file_that_cannot_be_put_back_is_kept_for_the_next_run(tmp_path, monkeypatch):
    """Undoing a failed write fails too: the old files stay in the staging folder, never deleted, and the
    next write into the folder puts them back."""
    write_folders(tmp_path, [Folder("x", {"a.v": "a\n", "b.v": "b\n"})])
    before = snapshot(tmp_path)
    real_rename, real_replace = os.rename, os.replace
    calls = []

    def rename(src, dst, *a, **kw):
        calls.append(dst)
        if len(calls) == 4:  # a.v replaced, b.v moved aside: then the disk fails
            raise OSError(5, "Input/output error")
        return real_rename(src, dst, *a, **kw)

    def replace(src, dst, *a, **kw):
        if str(dst).endswith("b.v"):  # and putting b.v back fails as well
            raise OSError(5, "Input/output error")
        return real_replace(src, dst, *a, **kw)

    monkeypatch.setattr(outputs.os, "rename", rename)
    monkeypatch.setattr(outputs.os, "replace", replace)
    with pytest.raises(OutputError, match="the next build into"):
        write_folders(tmp_path, [Folder("x", {"a.v": "a2\n", "b.v": "b2\n"})])
    monkeypatch.undo()
    left = [p for p in tmp_path.iterdir() if p.name.startswith(STAGE_PREFIX)]
    assert len(left) == 1 and (left[0] / "0.old" / "b.v").read_text() == "b\n"
    write_folders(tmp_path, [Folder("y", {"c.v": "c\n"})])  # any later write
    assert {k: v for k, v in snapshot(tmp_path).items() if not k.startswith("y/")} == before
    assert no_staging(tmp_path)


def test_a_folder_without_manifest_holding_the_same_bytes_is_taken_over(tmp_path, capsys):
    """As left by a build from before manifests: replacing identical bytes loses nothing."""
    spec = spec_file(tmp_path, "add4")
    out = tmp_path / "out"
    assert run_cli(["build", spec, "--out", out], capsys)[0] == 0
    (out / "add4" / MANIFEST).unlink()
    code, _, err = run_cli(["build", spec, "--out", out], capsys)
    assert code == 0, err
    assert sorted(json.loads((out / "add4" / MANIFEST).read_text())["files"]) == sorted(
        f.format(n="add4") for f in BUILT)
    (out / "add4" / MANIFEST).unlink()
    spec_file(tmp_path, "add4", width=5)  # now the files differ from what would be written
    code, _, err = run_cli(["build", spec, "--out", out], capsys)
    assert code == 2 and "(no .adder_forge_manifest.json beside it)" in err


def test_report_checks_every_json_before_any_synthesis(tmp_path, capsys, monkeypatch):
    """A hand-edited NAME.json of the second spec stops `report` before the first spec's flows run."""
    from adder_forge.synth import measure

    specs = [spec_file(tmp_path, "one"), spec_file(tmp_path, "two")]
    out = tmp_path / "out"
    assert run_cli(["build", *specs, "--out", out], capsys)[0] == 0
    js = out / "two" / "two.json"
    js.write_text(js.read_text() + " ")
    ran = []
    monkeypatch.setattr(measure, "measure_design", lambda *a, **kw: ran.append(a[0]) or {})
    code, _, err = run_cli(["report", *specs, "--out", out], capsys)
    assert code == 2 and f"{js}: error: was changed since adder_forge wrote it" in err
    assert ran == []
