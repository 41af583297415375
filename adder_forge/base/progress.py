"""How far a long step has got. Library layers report to a ``Progress``; only the CLI picks one that shows.

A layer takes a ``Progress`` (``NULL`` when none is given, which shows nothing) and calls ``note(message)``
for a one-off event, or opens ``task(label, total, unit)`` and calls ``advance(n)`` as work is done. A
``Progress`` is also callable with a message, so it goes wherever a plain message callback went.

Two that show, chosen by ``for_stream``: on a terminal, tqdm bars (a task's bar appears only once it has
run for ``BAR_DELAY`` seconds, so quick steps stay quiet); elsewhere (a log, a pipe, CI), plain lines, one
per event and never a carriage return: a note is a line, and a task that is still unfinished after
``LINE_DELAY`` seconds gets one line then and one when it ends (a quick one, none).
"""

from __future__ import annotations

import time
from typing import Callable, TextIO

BAR_DELAY = 0.5
LINE_DELAY = 3.0


class Task:
    """One counted step; a context manager that ends the step when left."""

    def __init__(self, owner: "Progress", label: str, total: int | None, unit: str):
        self.owner = owner
        self.label = label
        self.total = total
        self.unit = unit
        self.done = 0
        self.started = time.monotonic()
        self.closed = False
        owner._begin(self)

    def advance(self, n: int = 1) -> None:
        self.done += n
        self.owner._advance(self, n)

    def close(self) -> None:
        if not self.closed:
            self.closed = True
            self.owner._end(self)

    def __enter__(self) -> "Task":
        return self

    def __exit__(self, *exc) -> None:
        self.close()


class Progress:
    """Shows nothing: what the library uses when the caller passed no progress."""

    def note(self, message: str) -> None:
        pass

    def __call__(self, message: str) -> None:
        self.note(message)

    def task(self, label: str, total: int | None = None, unit: str = "") -> Task:
        return Task(self, label, total, unit)

    # What a subclass overrides to show a task. Called from the thread that owns the task.
    def _begin(self, task: Task) -> None:
        pass

    def _advance(self, task: Task, n: int) -> None:
        pass

    def _end(self, task: Task) -> None:
        pass


NULL = Progress()


class _Messages(Progress):
    """A plain message callback seen as a Progress: notes only."""

    def __init__(self, say: Callable[[str], None]):
        self._say = say

    def note(self, message: str) -> None:
        self._say(message)


def as_progress(p: "Progress | Callable[[str], None] | None") -> Progress:
    if p is None:
        return NULL
    if isinstance(p, Progress):
        return p
    return _Messages(p)


def _count(task: Task, n: int) -> str:
    total = f" of {task.total:,}" if task.total is not None else ""
    return f"{n:,}{total} {task.unit}".rstrip()


class Lines(Progress):
    """One line per event, for a stream that is not a terminal."""

    def __init__(self, stream: TextIO, delay: float | None = None):
        self.stream = stream
        self.delay = LINE_DELAY if delay is None else delay
        self._shown: set[int] = set()

    def _line(self, text: str) -> None:
        print(f"... {text}", file=self.stream, flush=True)

    def note(self, message: str) -> None:
        self._line(message)

    def _advance(self, task: Task, n: int) -> None:
        unfinished = task.total is None or task.done < task.total  # a task seen only as it ends says nothing
        if unfinished and id(task) not in self._shown and time.monotonic() - task.started >= self.delay:
            self._shown.add(id(task))
            self._line(f"{task.label}: {_count(task, task.done)} so far")

    def _end(self, task: Task) -> None:
        if id(task) in self._shown:
            self._shown.discard(id(task))
            done = f"{task.done:,} {task.unit}".rstrip()
            self._line(f"{task.label}: {done} in {time.monotonic() - task.started:.1f} s")


class Bars(Progress):
    """tqdm bars on a terminal; notes are written above the bars."""

    def __init__(self, stream: TextIO, delay: float | None = None):
        self.stream = stream
        self.delay = BAR_DELAY if delay is None else delay
        self._bars: dict[int, object] = {}

    def note(self, message: str) -> None:
        from tqdm import tqdm

        tqdm.write(f"... {message}", file=self.stream)

    def _begin(self, task: Task) -> None:
        from tqdm import tqdm

        self._bars[id(task)] = tqdm(total=task.total, desc=task.label, unit=f" {task.unit}" if task.unit else "it",
                                    unit_scale=True, file=self.stream, delay=self.delay, leave=False,
                                    dynamic_ncols=True)

    def _advance(self, task: Task, n: int) -> None:
        self._bars[id(task)].update(n)

    def _end(self, task: Task) -> None:
        self._bars.pop(id(task)).close()


def for_stream(stream: TextIO) -> Progress:
    """Bars when ``stream`` is a terminal, plain lines otherwise."""
    isatty = getattr(stream, "isatty", None)
    return Bars(stream) if isatty is not None and isatty() else Lines(stream)
