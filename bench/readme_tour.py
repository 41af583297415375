"""Rerun every command the README shows and compare what it prints with what the README says it prints.

    .venv/bin/python bench/readme_tour.py            # every shown command, in a scratch clone
    .venv/bin/python bench/readme_tour.py --list     # the commands only
    .venv/bin/python bench/readme_tour.py --update   # write what this run printed into the README

A shown command is a line `$ CMD` inside a fenced block with no language; the lines after it, up to the
next `$ ` line or the fence, are its output. `...` in the README's output stands for any number of lines.
The commands of one block run in one shell, in order (a `cd` carries on), at the root of a scratch clone
of this checkout's last commit, with this checkout's `.venv/bin` first on PATH, so nothing here is
written over. A command's output matches if its stdout matches, or its stderr followed by its stdout
with progress-bar lines left out (errors and notes go to stderr). After the run the clone's tracked files
must be unchanged: a README command that regenerates a committed file must write the same bytes.

`--update` replaces a differing command's shown output by what it printed this run (stdout, or stderr
where it printed nothing on stdout), except where the README elides lines with `...` (fix those by hand);
read `git diff README.md` before committing it.

Exit status: 0 when every shown output matched and no tracked file changed, 1 otherwise (each
difference printed as a diff).
"""

from __future__ import annotations

import argparse
import difflib
import os
import re
import shutil
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
MARK = "@@adder-forge-tour {}@@"
# tqdm writes carriage returns and a bar, and without a terminal our progress lines start with '... ';
# neither belongs to what a command reports.
PROGRESS = re.compile(r"\r|\|[#█▏▎▍▌▋▊▉ ]*\||^\.\.\. ")


@dataclass
class Shown:
    line: int  # README line of the `$ ` command
    command: str
    expected: list[str] = field(default_factory=list)


def shown_blocks(text: str) -> list[list[Shown]]:
    blocks: list[list[Shown]] = []
    lines = text.splitlines()
    i = 0
    while i < len(lines):
        if lines[i].strip() == "```":  # a fence with no language: console output
            j = i + 1
            block: list[Shown] = []
            while j < len(lines) and lines[j].strip() != "```":
                line = lines[j]
                if line.startswith("$ "):
                    block.append(Shown(j + 1, line[2:]))
                elif block:
                    block[-1].expected.append(line)
                j += 1
            if block:
                blocks.append(block)
            i = j + 1
        elif lines[i].startswith("```"):
            j = i + 1
            while j < len(lines) and not lines[j].startswith("```"):
                j += 1
            i = j + 1
        else:
            i += 1
    return blocks


def matches(expected: list[str], got: list[str]) -> bool:
    pattern = "".join(
        "(?:.*\n)*?" if e.strip() == "..." else re.escape(e.rstrip()) + "\n" for e in expected
    )
    return re.fullmatch(pattern, "".join(g.rstrip() + "\n" for g in got)) is not None


def split_marked(text: str, count: int) -> list[list[str]]:
    parts: list[list[str]] = [[] for _ in range(count)]
    current = None
    for line in text.splitlines():
        m = re.fullmatch(r"@@adder-forge-tour (\d+)@@", line.strip())
        if m:
            current = int(m.group(1))
        elif current is not None:
            parts[current].append(line)
    return parts


def run_block(block: list[Shown], cwd: Path, env: dict) -> tuple[list[list[str]], list[list[str]]]:
    script = "\n".join(f"echo '{MARK.format(k)}'; echo '{MARK.format(k)}' >&2\n{s.command}"
                       for k, s in enumerate(block))
    proc = subprocess.run(["bash", "-c", script], cwd=cwd, env=env, capture_output=True, text=True)
    out = split_marked(proc.stdout, len(block))
    err = [[l for l in part if not PROGRESS.search(l)] for part in split_marked(proc.stderr, len(block))]
    return out, err


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--list", action="store_true", help="print the shown commands and stop")
    ap.add_argument("--update", action="store_true", help="write this run's outputs into README.md")
    ap.add_argument("--keep", action="store_true", help="keep the scratch clone and say where it is")
    args = ap.parse_args()

    blocks = shown_blocks((ROOT / "README.md").read_text())
    if args.list:
        for block in blocks:
            for s in block:
                print(f"README.md:{s.line}: {s.command}")
        return 0

    venv_bin = ROOT / ".venv" / "bin"
    if not venv_bin.is_dir():
        print("readme_tour: no .venv here; run bash setup.sh first", file=sys.stderr)
        return 1
    scratch = Path(tempfile.mkdtemp(prefix="adder_forge_tour_"))
    clone = scratch / "repo"
    subprocess.run(["git", "clone", "-q", str(ROOT), str(clone)], check=True)
    (clone / ".venv").symlink_to(ROOT / ".venv")
    env = dict(os.environ, PATH=f"{venv_bin}{os.pathsep}{os.environ['PATH']}")

    differ = 0
    total = 0
    updates: dict[int, list[str]] = {}  # README line of a command -> its new shown output
    for block in blocks:
        t0 = time.monotonic()
        out, err = run_block(block, clone, env)
        seconds = time.monotonic() - t0
        for k, s in enumerate(block):
            total += 1
            ok = matches(s.expected, out[k]) or matches(s.expected, err[k] + out[k])
            print(f"{'same' if ok else 'DIFFERS'}  README.md:{s.line}  {s.command}"
                  + (f"  ({seconds:.0f} s for its block)" if k == 0 else ""), flush=True)
            if not ok:
                differ += 1
                got = err[k] + out[k]
                sys.stdout.writelines(difflib.unified_diff(
                    [e + "\n" for e in s.expected], [g + "\n" for g in got],
                    "README.md", "this run", lineterm="\n"))
                if any(e.strip() == "..." for e in s.expected):
                    print(f"README.md:{s.line}: elided output, not updated; fix it by hand")
                else:
                    updates[s.line] = out[k] if out[k] else err[k]
    changed = subprocess.run(["git", "status", "--porcelain", "--untracked-files=no"], cwd=clone,
                             capture_output=True, text=True, check=True).stdout
    if changed.strip():
        print("tracked files changed by the shown commands:\n" + changed)
    print(f"{total} shown commands, {differ} differ from the README"
          + ("; tracked files changed" if changed.strip() else ""))
    if args.update and updates:
        lines = (ROOT / "README.md").read_text().splitlines(keepends=True)
        for block in reversed(blocks):
            for s in reversed(block):
                if s.line in updates:  # s.line is 1-based: its output starts at index s.line
                    lines[s.line:s.line + len(s.expected)] = [g + "\n" for g in updates[s.line]]
        (ROOT / "README.md").write_text("".join(lines))
        print(f"README.md: {len(updates)} shown outputs updated")
    if args.keep:
        print(f"scratch clone kept at {clone}")
    else:
        shutil.rmtree(scratch, ignore_errors=True)
    return 1 if differ or changed.strip() else 0


if __name__ == "__main__":
    sys.exit(main())
