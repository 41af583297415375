"""What one check found for one design, and the one reader of the testbenches' result lines.

Every test bench we emit (Verilog, VHDL) and the cocotb test print, for each design, lines that begin with
the design's name: ``NAME: N passed, M failed`` once at the end, ``NAME: MISMATCH ...`` for the first
failing vectors, and a line naming the problem when the vectors file cannot be used (``VECTORS ERROR`` in
Verilog; ``BAD LINE``, ``cannot open the vectors file``, ``the vectors file ... holds`` in VHDL). ``parse``
reads them for one name; ``outcome`` turns that and the run's exit status into a verdict. Nothing else in
the package parses simulator output.

A pass needs all of: exactly one well-formed summary line, no failures in it, at least one vector checked,
as many vectors as the test bench was generated with (when known), no problem line, and a clean exit
unless another design of the same run explains the failure (a shared build ends with ``$fatal`` when any
of its designs fails).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from ..base.tools import Result, exit_status

# What follows ``NAME: `` on a line that says the vectors could not be used as they should.
PROBLEMS = ("VECTORS ERROR", "BAD LINE", "cannot open the vectors file", "the vectors file ")
_SUMMARY = re.compile(r"(\d+) passed, (\d+) failed\s*$")
_LOOKS_LIKE_SUMMARY = re.compile(r"\S+ passed, \S+ failed")  # e.g. "x passed, x failed" from an X count


@dataclass(frozen=True)
class Outcome:
    """One row of `verify`: what one checker found for one design."""

    name: str
    checker: str
    ok: bool
    passed: int
    failed: int
    detail: str  # on a pass, what was checked; else the first failing vector, or why there is no verdict
    first: str | None = None  # the first mismatch, as the check printed it
    exit_status: int = 0  # of the run that gave the verdict (for a shared build, the whole batch's)
    log: str = ""  # the end of that run's output, for a reader who wants more than the detail

    @property
    def vectors(self) -> int:
        """Vectors checked; 0 for a proof, which covers every input at once."""
        return self.passed + self.failed


@dataclass(frozen=True)
class Report:
    """What a run printed about one design. ``passed`` and ``failed`` are None without a usable summary."""

    passed: int | None = None
    failed: int | None = None
    first: str | None = None  # the text after ``MISMATCH `` on the first mismatch line
    problem: str | None = None  # the first line saying why the vectors could not all be checked

    @property
    def summarized(self) -> bool:
        return self.passed is not None

    @property
    def clean(self) -> bool:
        """The design itself reports nothing wrong (its run's exit status is judged apart)."""
        return self.summarized and self.failed == 0 and self.passed > 0 and self.problem is None


def parse(text: str, name: str) -> Report:
    """The lines of ``text`` about design ``name``. A line counts when the name stands at its start or after
    white space (cocotb puts its log prefix before it), so ``alu`` never reads ``my_alu``'s lines."""
    summaries: list[tuple[int, int]] = []
    first = problem = None
    for m in re.finditer(rf"(?:^|[ \t]){re.escape(name)}: (.*?)\r?$", text, re.M):
        rest = m.group(1)
        s = _SUMMARY.fullmatch(rest)
        if s:
            summaries.append((int(s.group(1)), int(s.group(2))))
        elif rest.startswith("MISMATCH "):
            first = first or rest[len("MISMATCH "):].strip()
        elif rest.startswith(PROBLEMS):
            problem = problem or f"{name}: {rest.strip()}"
        elif _LOOKS_LIKE_SUMMARY.match(rest):
            problem = problem or f"{name}: malformed summary line: {rest.strip()}"
    if len(summaries) > 1:  # two verdicts: trust neither
        return Report(None, None, first, f"{name}: {len(summaries)} summary lines")
    passed, failed = summaries[0] if summaries else (None, None)
    return Report(passed, failed, first, problem)


def outcome(name: str, checker: str, report: Report, result: Result, passing: str, expected: int | None = None,
            excused: bool = False) -> Outcome:
    """The verdict on one design from what its run printed (``report``) and how the run ended (``result``).

    ``passing`` is the row's detail when it passes (what was checked); ``expected`` the number of vectors
    the test bench holds, when known; ``excused`` says another design of the same run failed, which
    accounts for a non-zero exit status.
    """
    code = result.returncode
    log = result.tail(10)
    last = _last_line(result)
    passed, failed = report.passed or 0, report.failed or 0

    def verdict(ok: bool, detail: str) -> Outcome:
        return Outcome(name, checker, ok, passed, failed, detail, report.first, code, log)

    if not report.summarized:
        return verdict(False, f"no result ({exit_status(code)}): {report.problem or last or 'no output'}")
    if failed:
        return verdict(False, f"first failing vector: {report.first}" if report.first
                       else f"{report.problem or 'no mismatch line printed'}")
    if report.problem:
        return verdict(False, report.problem)
    if not passed:
        return verdict(False, "no vectors checked")
    if expected is not None and passed != expected:
        return verdict(False, f"checked {passed} vectors; the test bench holds {expected}")
    if code != 0 and not excused:
        return verdict(False, f"all vectors passed, but the run ended with {exit_status(code)}: {last}")
    return verdict(True, passing)


def read(result: Result, checker: str, names: list[str], passing: list[str],
         expected: list[int | None] | None = None) -> list[Outcome]:
    """Outcomes for every design one run checked, in the order given."""
    text = result.stdout + "\n" + result.stderr
    reports = [parse(text, n) for n in names]
    expected = expected or [None] * len(names)
    # a failing exit is excused for a design only if another design of the run is to blame
    blamed = [not r.clean or (e is not None and r.passed != e) for r, e in zip(reports, expected)]
    return [outcome(n, checker, r, result, p, e, excused=any(b for j, b in enumerate(blamed) if j != k))
            for k, (n, r, p, e) in enumerate(zip(names, reports, passing, expected))]


def _last_line(result: Result) -> str:
    lines = [line.strip() for line in (result.stdout + "\n" + result.stderr).splitlines() if line.strip()]
    return lines[-1] if lines else ""


def outcomes(designs, checker: str, result: Result) -> list[Outcome]:
    """One Outcome a design of a test bench run (designs of ``emit.design``): each must report exactly the
    vectors its test bench holds, and a pass says how they were chosen."""
    return read(result, checker, [d.spec.name for d in designs], [d.plan for d in designs],
                [d.testbench.count for d in designs])
