"""The network file: a prefix network as plain text, so that a searched (or hand-drawn) network can feed
``scheme: prefix`` with ``prefix: file`` and ``network: PATH``. The format is ours (docs/network_file.md):

    # comments start with '#', anywhere on a line
    name searched-64
    inputs 64
    level 1  1<0 3<2 5<4
    level 1  7<6
    level 2  3<1 7<5

``inputs N`` comes first (after an optional ``name``). Each ``level K`` line lists ``COLUMN<DRIVER`` pairs:
at level K the column combines its current value with the driver column's current value, both as they
stood before level K (the rows of ``prefix_networks.from_rows``). A level may take several lines; levels
come in order 1, 2, ... without a gap. A pair that adds nothing is skipped, as in ``from_rows``, so
``write`` never writes one and ``read(write(g))`` gives ``g`` cell for cell (checked on every write).

Errors name the network file, its line and column (a ``SpecError``, exit 2); a network that is not legal
names the level, and the line of that level's first entry.
"""

from __future__ import annotations

import re
from pathlib import Path

from ..base.errors import NetworkError, SpecError
from ..ir.network import PrefixGraph
from .prefix_networks import from_rows

MAX_BYTES = 16 << 20  # a 16384-input Kogge-Stone file is about 2 MiB
MAX_INPUTS = 16385  # the widest adder (16384 bits) plus its carry-in
PER_LINE = 16  # pairs on one written line
_PAIR = re.compile(r"([0-9]{1,6})<([0-9]{1,6})\Z")
_INT = re.compile(r"[0-9]{1,6}\Z")
_NAME = re.compile(r"[A-Za-z0-9_.,()\[\]+-]{1,80}\Z")


def rows_of(graph: PrefixGraph) -> list[list[tuple[int, int]]]:
    """The graph as rows of ``(column, driver)`` pairs: each cell, at its level, reads its driver's column."""
    rows: list[list[tuple[int, int]]] = [[] for _ in range(max((c.level for c in graph.cells), default=0))]
    for c in graph.cells:
        d = graph.cells[c.lo].col if c.lo >= 0 else -1 - c.lo
        rows[c.level - 1].append((c.col, d))
    return rows


def write(graph: PrefixGraph, name: str | None = None, comments: tuple[str, ...] = ()) -> str:
    """The text of ``graph`` as a network file (deterministic: the same graph and comments give the same
    bytes). Raises ``NetworkError`` if the rows would not read back as the same cells (a graph whose cells
    read values older than their driver's current one, which ``from_rows`` cannot describe)."""
    name = name or graph.style or "network"
    if not _NAME.match(name):
        raise NetworkError(f"network name '{name[:40]}' must be 1-80 letters, digits or _.,()[]+-")
    rows = rows_of(graph)
    back = from_rows(graph.inputs, rows, name)
    if back.cells != graph.cells:
        raise NetworkError(f"{name}: its cells cannot be written as rows that read back the same")
    lines = [f"# {c}" if c else "#" for text in comments for c in text.splitlines() or [""]]
    lines += [f"name {name}", f"inputs {graph.inputs}"]
    for k, row in enumerate(rows, 1):
        for i in range(0, len(row), PER_LINE):
            lines.append(f"level {k}  " + " ".join(f"{c}<{d}" for c, d in row[i:i + PER_LINE]))
    return "\n".join(lines) + "\n"


def parse(text: str, source: str) -> PrefixGraph:
    """The network a network file's text describes; ``SpecError`` naming ``source``, line and column."""
    name = None
    inputs = None
    rows: list[list[tuple[int, int]]] = []
    first_line: list[int] = []  # line of each level's first entry, for errors of the network itself
    where: dict[tuple[int, int], tuple[int, int]] = {}  # (level, column) -> line, column of its last pair

    def fail(message: str, line: int, col: int = 1):
        raise SpecError(message, source, line, col, "network")

    for ln, raw in enumerate(text.split("\n"), 1):
        body = raw.split("#", 1)[0]
        words = body.split()
        if not words:
            continue
        col = body.index(words[0]) + 1
        key = words[0]
        if key == "name":
            if name is not None or inputs is not None:
                fail("'name' must come once, before 'inputs'", ln, col)
            if len(words) != 2 or not _NAME.match(words[1]):
                fail("'name' takes one word of 1-80 letters, digits or _.,()[]+-", ln, col)
            name = words[1]
        elif key == "inputs":
            if inputs is not None:
                fail("'inputs' given twice", ln, col)
            if len(words) != 2 or not _INT.match(words[1]) or not 1 <= int(words[1]) <= MAX_INPUTS:
                fail(f"'inputs' takes one integer from 1 to {MAX_INPUTS}", ln, col)
            inputs = int(words[1])
        elif key == "level":
            if inputs is None:
                fail("'inputs N' must come before the first 'level'", ln, col)
            if len(words) < 2 or not _INT.match(words[1]):
                fail("'level' takes the level number, then COLUMN<DRIVER pairs", ln, col)
            k = int(words[1])
            if k == len(rows) + 1:
                rows.append([])
                first_line.append(ln)
            elif k != len(rows):
                want = f"{len(rows)} or {len(rows) + 1}" if rows else "1"
                fail(f"level {k} out of order: expected level {want}", ln, body.index(words[1], col) + 1)
            pos = body.index(words[1], col) + len(words[1])
            for w in words[2:]:
                pos = body.index(w, pos)
                m = _PAIR.match(w)
                if not m:
                    fail(f"'{w[:20]}' is not a COLUMN<DRIVER pair", ln, pos + 1)
                c, d = int(m.group(1)), int(m.group(2))
                if not 0 <= d < c < inputs:
                    fail(f"pair {c}<{d}: need 0 <= DRIVER < COLUMN < {inputs} (the inputs)", ln, pos + 1)
                rows[-1].append((c, d))
                where[(len(rows), c)] = (ln, pos + 1)
                pos += len(w)
        else:
            fail(f"unknown line '{key[:20]}': expected name, inputs or level", ln, col)
    if inputs is None:
        fail("no 'inputs N' line: not a network file", 1)
    label = name or Path(source).stem
    try:
        return from_rows(inputs, rows, label)
    except NetworkError as exc:
        text = str(exc)
        level = re.search(r"at level (\d+)", text)
        column = re.search(r"(?:column |pair \()(\d+)", text)
        line, col = (first_line[-1] if first_line else 1), 1
        if level:
            line = first_line[int(level.group(1)) - 1]
            if column and (int(level.group(1)), int(column.group(1))) in where:
                line, col = where[(int(level.group(1)), int(column.group(1)))]
        fail(f"not a prefix network: {text}", line, col)


def read(path: str | Path, shown: str | None = None) -> PrefixGraph:
    """The network in the file at ``path``; errors name ``shown`` (the path as the user wrote it) or ``path``."""
    path = Path(path)
    src = shown or str(path)
    try:
        if path.is_dir():
            raise SpecError("is a folder, not a network file", src, 1, 1, "network")
        if not path.is_file():
            if path.exists():
                raise SpecError("is not a regular file", src, 1, 1, "network")
            raise SpecError("no such file", src, 1, 1, "network")
        if path.stat().st_size > MAX_BYTES:
            raise SpecError(f"the network file is larger than {MAX_BYTES >> 20} MiB", src, 1, 1, "network")
        data = path.read_bytes()
    except OSError as exc:
        raise SpecError(f"cannot read network file: {exc.strerror or exc}", src, 1, 1, "network") from None
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise SpecError(f"not UTF-8 text (byte 0x{data[exc.start]:02x})", src, line, 1, "network") from None
    return parse(text, src)
