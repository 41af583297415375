"""Progress: the library reports events, the CLI shows them as bars on a terminal and plain lines elsewhere."""

from __future__ import annotations

import io

import pytest

from adder_forge.base import progress as pg
from adder_forge.checks.builtin import check
from adder_forge.cli import main
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from adder_forge.emit.vectors import make_plan


class Recorder(pg.Progress):
    def __init__(self):
        self.events = []

    def note(self, message):
        self.events.append(("note", message))

    def _begin(self, task):
        self.events.append(("begin", task.label, task.total, task.unit))

    def _advance(self, task, n):
        self.events.append(("advance", task.label, n))

    def _end(self, task):
        self.events.append(("end", task.label, task.done))


def advanced(rec, label):
    return sum(e[2] for e in rec.events if e[0] == "advance" and e[1] == label)


@pytest.mark.parametrize("plan", [make_plan(12, True, 1 << 25, 0, 1), make_plan(32, True, 0, 700_000, 3),
                                  make_plan(4, True, 1 << 25, 0, 1)], ids=["bitsliced", "streamed", "small"])
def test_check_reports_one_task_counted_in_vectors(plan):
    rec = Recorder()
    net = elaborate(make_spec("x", plan.width, "prefix", prefix="brent-kung", carry_in=True))
    r = check(net, plan, progress=rec, label="builtin: x")
    assert r.ok
    begins = [e for e in rec.events if e[0] == "begin"]
    ends = [e for e in rec.events if e[0] == "end"]
    assert begins == [("begin", "builtin: x", r.vectors, "vectors")]
    assert ends == [("end", "builtin: x", r.vectors)]
    assert advanced(rec, "builtin: x") == r.vectors
    if r.vectors > 1 << 20:
        assert sum(1 for e in rec.events if e[0] == "advance") > 4  # a bar that moves, not one jump


def test_without_progress_the_check_is_silent(capsys):
    check(elaborate(make_spec("x", 8, "ripple")), make_plan(8, True, 1 << 25, 0, 1))
    out = capsys.readouterr()
    assert out.out == "" and out.err == ""


def test_a_message_callback_is_still_accepted():
    said = []
    p = pg.as_progress(said.append)
    p("hello")
    with p.task("t", 3) as t:
        t.advance(3)
    assert said == ["hello"]
    assert pg.as_progress(None) is pg.NULL


def test_lines_mode_prints_one_line_per_event():
    s = io.StringIO()
    lines = pg.Lines(s, delay=0)
    lines.note("formal: add8")
    with lines.task("builtin: add8", total=100, unit="vectors") as t:
        for _ in range(10):
            t.advance(10)
    text = s.getvalue()
    assert "\r" not in text
    got = text.splitlines()
    assert got[0] == "... formal: add8"
    assert got[1] == "... builtin: add8: 10 of 100 vectors so far"
    assert got[2].startswith("... builtin: add8: 100 vectors in ") and got[2].endswith(" s")
    assert len(got) == 3


def test_lines_mode_stays_quiet_for_quick_tasks():
    s = io.StringIO()
    lines = pg.Lines(s, delay=3600)
    with lines.task("quick", total=5) as t:
        t.advance(5)
    lines = pg.Lines(s, delay=0)
    with lines.task("one step", total=1) as t:  # first seen finished: nothing to say
        t.advance(1)
    assert s.getvalue() == ""


class FakeTerminal(io.StringIO):
    def isatty(self):
        return True


def test_a_terminal_gets_tqdm_bars_and_anything_else_lines():
    assert isinstance(pg.for_stream(FakeTerminal()), pg.Bars)
    assert isinstance(pg.for_stream(io.StringIO()), pg.Lines)
    term = FakeTerminal()
    bars = pg.Bars(term, delay=0)
    bars.note("icarus: building")
    with bars.task("builtin: add8", total=1000, unit="vectors") as t:
        t.advance(500)
        t.advance(500)
    text = term.getvalue()
    assert "... icarus: building" in text
    assert "builtin: add8" in text and "vectors/s" in text  # a tqdm bar (it redraws at most every 0.1 s)


def test_cli_stderr_is_one_line_per_event_when_not_a_terminal(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(pg, "LINE_DELAY", 0)
    specs = []
    for name, width in (("p12", 12), ("p9", 9)):
        path = tmp_path / f"{name}.yaml"
        path.write_text(f"name: {name}\nwidth: {width}\nscheme: prefix\nprefix: sklansky\n")
        specs.append(str(path))
    assert main(["verify", *specs]) == 0
    err = capsys.readouterr().err
    assert "\r" not in err and "\x1b" not in err
    lines = err.splitlines()
    # Three tasks (the designs, one built-in check a spec): a line when seen unfinished and one at the end;
    # p9's check is a single block, so it is first seen finished and says nothing.
    assert len(lines) == 4, lines
    assert all(line.startswith("... ") for line in lines)
    assert lines[0].startswith("... designs: 1 of 2 specs so far")
    assert lines[1].startswith("... designs: 2 specs in ")
    assert lines[2].startswith("... builtin: p12: ") and "of 33,554,432 vectors so far" in lines[2]
    assert lines[3].startswith("... builtin: p12: 33,554,432 vectors in ")
    assert not any("p9" in line for line in lines)


def test_cli_stderr_is_empty_for_a_quick_check(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(pg, "LINE_DELAY", 3600)  # as if the check took less than the delay, however loaded
    path = tmp_path / "r8.yaml"
    path.write_text("name: r8\nwidth: 8\nscheme: ripple\n")
    assert main(["verify", str(path)]) == 0
    assert capsys.readouterr().err == ""
