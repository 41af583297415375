"""Typed errors. The library raises these; only the CLI turns them into messages and exit codes."""

from __future__ import annotations


def one_line(text: str) -> str:
    """Bad input gets one line: a line break inside a message (from a file name or a value) is escaped."""
    return text.replace("\r", "\\r").replace("\n", "\\n")


class AdderForgeError(Exception):
    """Base of every error the library raises on purpose. Each class carries its exit status and the one
    line the command prints for it (``printed()``), so the CLI needs no table of its own."""

    exit_status = 2

    def printed(self) -> str:
        return one_line(f"adder-forge: error: {self}")


class SpecError(AdderForgeError):
    """Bad input: carries the file, 1-based line and column, and the offending field."""

    def __init__(self, message: str, file: str = "<spec>", line: int = 1, col: int = 1, field: str | None = None):
        super().__init__(message)
        self.message = message
        self.file = str(file)
        self.line = line
        self.col = col
        self.field = field

    def __str__(self) -> str:
        return one_line(f"{self.file}:{self.line}:{self.col}: error: {self.message}")

    def printed(self) -> str:
        return str(self)


class NetworkError(AdderForgeError, ValueError):
    """A prefix network that is not legal: bad rows (a gap, a column combined twice, an incomplete column),
    a family parameter that does not fit the number of inputs, a graph that does not compute its spans.
    Bad input, exit 2. A spec key or a network file turns it into a SpecError that names the place."""

    exit_status = 2


class UsageError(AdderForgeError):
    """A bad command line (an option's value, a name): shown as ``adder-forge COMMAND: error: ...``.

    There is no file to point at, so it carries the command instead of a location.
    """

    exit_status = 2

    def __init__(self, message: str, command: str = "", option: str | None = None):
        super().__init__(message)
        self.message = message
        self.command = command
        self.option = option

    def __str__(self) -> str:
        prog = "adder-forge" + (f" {self.command}" if self.command else "")
        return one_line(f"{prog}: error: {self.message}")

    def printed(self) -> str:
        return str(self)


class ToolError(AdderForgeError):
    """An external tool is missing or failed for a reason that is not a verification mismatch."""

    exit_status = 3

    def __init__(self, message: str, hint: str = ""):
        super().__init__(message)
        self.message = message
        self.hint = hint

    def __str__(self) -> str:
        return f"error: {self.message}" + (f" ({self.hint})" if self.hint else "")

    def printed(self) -> str:
        return f"adder-forge: {self}"


class OutputError(AdderForgeError):
    """The output folder could not be written; earlier outputs are left as they were."""

    exit_status = 3

    def __str__(self) -> str:
        return f"error: {self.args[0]}"

    def printed(self) -> str:
        return one_line(f"adder-forge: {self}")


class OutputConflict(OutputError):
    """A file or folder in the way of an output, which the tool did not write or which was edited since:
    nothing is written (bad input, exit 2). Carries the path it names."""

    exit_status = 2

    def __init__(self, path, message: str):
        super().__init__(message)
        self.path = str(path)
        self.message = message

    def __str__(self) -> str:
        return f"{self.path}: error: {self.message}"

    def printed(self) -> str:
        return one_line(str(self))
