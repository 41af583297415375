"""Writing output folders without losing anything the user had.

Each output folder holds a manifest (``MANIFEST``): the name and SHA-256 of every file adder_forge wrote
there. A later write overwrites or removes only files the manifest lists and whose content still matches
it; anything else in the folder is the user's and is left alone. A file we would write that is not ours
(or is ours but was edited since) stops the whole command with one line naming it, unless ``force``.

One command's writes form one transaction, all-or-nothing across every folder it touches:

1. every file is staged in a hidden folder of the output folder (same file system, so renames are atomic);
2. a journal of the renames to come is written into the staging folder;
3. old files are moved aside into the staging folder and the new ones renamed into place;
4. deleting the journal is the commit point; the staging folder (old files) is removed last.

An exception at any step undoes what was done. A process killed outright (SIGKILL, power loss) leaves the
staging folder behind: the next write into the same output folder finds it, undoes what its journal lists
and removes it, so earlier outputs come back and nothing stray stays. An advisory lock on the output
folder keeps two adder_forge processes from writing into it (and from cleaning up each other) at once.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import shutil
import tempfile
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Iterator

from ..base.errors import OutputConflict, OutputError

MANIFEST = ".adder_forge_manifest.json"
STAGE_PREFIX = ".adder_forge_stage_"
_JOURNAL = "journal.json"
_HEAD = "files adder_forge wrote in this folder; it overwrites or removes them only while they are unchanged"

# (file name, the old file, new text, same design) -> (text to write, note for the user or None). Called for
# a file the folder already holds from an earlier build, unchanged since, that the new build writes again;
# it gets the path, not the text, so that large files it has no use for are not read.
Carry = Callable[[str, Path, str, bool], "tuple[str, str | None]"]


@dataclass(frozen=True)
class Folder:
    """One output folder to write: ``out_dir/name`` with ``files`` (file name -> text, or bytes for a
    binary file such as a PNG)."""

    name: str
    files: dict[str, str]
    design: str = ""  # what the files were made from; equal across builds means the same adder
    carry: Carry | None = None


@dataclass(frozen=True)
class Written:
    path: Path
    notes: tuple[str, ...] = ()


@dataclass
class _Plan:
    target: Path
    writes: dict[str, str] = field(default_factory=dict)  # file name -> text; the manifest is one of them
    digests: dict[str, str] = field(default_factory=dict)  # file name -> SHA-256 of its text, each hashed once
    removes: list[str] = field(default_factory=list)  # our unchanged files that the new build does not make
    notes: list[str] = field(default_factory=list)


def sha256_text(text: str | bytes) -> str:
    """SHA-256 of a file's content: text as UTF-8, or bytes as they are (a PNG plot)."""
    return hashlib.sha256(text if isinstance(text, bytes) else text.encode("utf-8")).hexdigest()


def fingerprint(*parts) -> str:
    """A stable hash of JSON-able parts (key order does not matter)."""
    return sha256_text(json.dumps(parts, sort_keys=True, separators=(",", ":")))


def _sha256_file(path: Path) -> str | None:
    h = hashlib.sha256()
    try:
        with open(path, "rb") as fh:
            for chunk in iter(lambda: fh.read(1 << 20), b""):
                h.update(chunk)
    except OSError:
        return None
    return h.hexdigest()


def read_manifest(folder: Path) -> dict | None:
    """The folder's manifest, or None when it has none (or one that is not ours / not readable)."""
    try:
        data = json.loads((Path(folder) / MANIFEST).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    if not isinstance(data, dict) or data.get("tool") != "adder_forge" or not isinstance(data.get("files"), dict):
        return None
    files = data["files"]
    if not all(isinstance(k, str) and _plain_name(k) and isinstance(v, str) for k, v in files.items()):
        return None
    return data


def _plain_name(name: str) -> bool:
    return bool(name) and name not in (".", "..", MANIFEST) and "/" not in name and "\\" not in name


def manifest_text(design: str, digests: dict[str, str]) -> str:
    """The manifest for files with the given SHA-256 digests; deterministic (no time stamps)."""
    from ..base.version import __version__

    data = {"tool": "adder_forge", "version": __version__, "about": _HEAD, "design": design,
            "files": dict(sorted(digests.items()))}
    return json.dumps(data, indent=2, sort_keys=False) + "\n"


def _check_dir(path: Path) -> None:
    if os.path.lexists(path) and not path.is_dir():
        raise OutputConflict(path, "exists and is not a folder")


def _make_dir(out_dir: Path) -> None:
    _check_dir(out_dir)
    try:
        out_dir.mkdir(parents=True, exist_ok=True)
    except (FileExistsError, NotADirectoryError):
        raise OutputConflict(out_dir, "cannot be made a folder: a part of the path is a file") from None
    except OSError as exc:
        raise OutputError(f"cannot create {out_dir}: {exc.strerror or exc}") from None


def _ours_unchanged(path: Path, ours: dict[str, str] | None, force: bool, text: str | None) -> bool:
    """May ``path`` be replaced by ``text``? True when it is ours and unchanged; False when it does not
    exist, already holds exactly ``text`` (replacing it loses nothing: how a folder written before there
    were manifests is taken over) or ``force`` lets us replace it anyway; otherwise OutputConflict naming
    it. ``ours``: the folder's manifest entries, None when the folder has no manifest."""
    if path.is_dir():
        raise OutputConflict(path, "is a folder where adder_forge writes a file; move it away")
    if not os.path.lexists(path):
        return False
    digest = None if path.is_symlink() else _sha256_file(path)
    if ours and path.name in ours and digest == ours[path.name]:
        return True
    if force or (text is not None and digest is not None and digest == sha256_text(text)):
        return False
    if ours and path.name in ours:
        why = "was changed since adder_forge wrote it"
    else:
        why = "exists and was not written by adder_forge" + ("" if ours is not None else f" (no {MANIFEST} beside it)")
    raise OutputConflict(path, f"{why}; move it away or pass --force to replace it")


def check_replaceable(path: Path, force: bool = False) -> None:
    """OutputConflict unless ``path`` (a file of an output folder) is ours and unchanged, or missing, or
    ``force``: for a command that will replace it later and should fail before its work, not after."""
    path = Path(path)
    old = read_manifest(path.parent) if path.parent.is_dir() else None
    _ours_unchanged(path, old["files"] if old else None, force, None)


def _plan_folder(out_dir: Path, folder: Folder, force: bool) -> _Plan:
    target = out_dir / folder.name
    _check_dir(target)
    plan = _Plan(target)
    old = read_manifest(target) if target.is_dir() else None
    ours = old["files"] if old else None
    same = bool(old) and bool(folder.design) and old.get("design") == folder.design
    written: dict[str, str] = {}
    for fname, text in folder.files.items():
        path = target / fname
        if _ours_unchanged(path, ours, force, text) and folder.carry is not None:
            text, note = folder.carry(fname, path, text, same)
            if note:
                plan.notes.append(note)
        written[fname] = text
    for fname, digest in sorted((ours or {}).items()):
        if fname in folder.files:
            continue
        path = target / fname
        if path.is_file() and not path.is_symlink() and _sha256_file(path) == digest:
            plan.removes.append(fname)
        elif os.path.lexists(path):
            plan.notes.append(f"left {fname} in place: changed since adder_forge wrote it, no longer built")
    plan.writes = dict(written)
    plan.digests = {k: sha256_text(v) for k, v in written.items()}
    _add_manifest(plan, folder.design, plan.digests)
    return plan


def _add_manifest(plan: _Plan, design: str, digests: dict[str, str]) -> None:
    text = manifest_text(design, digests)
    plan.writes[MANIFEST] = text
    plan.digests[MANIFEST] = sha256_text(text)


def write_folders(out_dir: Path, folders, force: bool = False) -> list[Written]:
    """Write every folder (a list of ``Folder``, or a dict name -> {file name: text}) in one transaction.

    Raises OutputConflict (nothing written) when a file in the way is not ours or was edited, unless
    ``force``; OutputError when the file system fails (nothing changed).
    """
    out_dir = Path(out_dir)
    if isinstance(folders, dict):
        folders = [Folder(name, files) for name, files in folders.items()]
    _make_dir(out_dir)
    with _locked(out_dir):
        recover(out_dir)
        plans = [_plan_folder(out_dir, f, force) for f in folders]
        _commit(out_dir, plans)
    return [Written(p.target, tuple(p.notes)) for p in plans]


def update_files(out_dir: Path, name: str, files: dict[str, str], force: bool = False) -> Path:
    """Replace some files of the existing output folder ``out_dir/name`` (e.g. NAME.json with measured
    figures), keeping its manifest true. The files must be ours and unchanged, unless ``force``."""
    out_dir = Path(out_dir)
    target = out_dir / name
    _make_dir(out_dir)
    _check_dir(target)
    with _locked(out_dir):
        recover(out_dir)
        old = read_manifest(target)
        ours = dict(old["files"]) if old else None
        plan = _Plan(target)
        for fname, text in files.items():
            _ours_unchanged(target / fname, ours, force, text)
            plan.writes[fname] = text
            plan.digests[fname] = sha256_text(text)
        _add_manifest(plan, old.get("design", "") if old else "", {**(ours or {}), **plan.digests})
        _commit(out_dir, [plan])
    return target



# -- the transaction ----------------------------------------------------------------------------------------
@contextlib.contextmanager
def _locked(out_dir: Path) -> Iterator[None]:
    """An advisory lock on the output folder for the whole transaction (released by the kernel if the
    process dies). Where the file system cannot lock a folder, we go on without: the journal still
    protects against interruption, only two concurrent writers are not kept apart."""
    try:
        import fcntl
    except ImportError:  # not POSIX
        yield
        return
    try:
        fd = os.open(out_dir, os.O_RDONLY)
    except OSError:
        yield
        return
    try:
        try:
            fcntl.flock(fd, fcntl.LOCK_EX)
        except OSError:
            pass
        yield
    finally:
        os.close(fd)


def recover(out_dir: Path) -> list[Path]:
    """Undo and remove what an interrupted write left in ``out_dir``; return the staging folders removed.
    Call with the output folder locked."""
    done = []
    try:
        entries = sorted(Path(out_dir).glob(STAGE_PREFIX + "*"))
    except OSError:
        return done
    for stage in entries:
        if stage.is_dir() and not stage.is_symlink() and _rollback(stage):
            shutil.rmtree(stage, ignore_errors=True)
            done.append(stage)
    return done


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _write(path: Path, text: str | bytes) -> None:
    if isinstance(text, bytes):
        with open(path, "wb") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        return
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(text)
        fh.flush()
        os.fsync(fh.fileno())


class _Terminated(BaseException):
    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signum


@contextlib.contextmanager
def _terminate_raises() -> Iterator[None]:
    """While a write is under way, SIGTERM and SIGHUP (a CI timeout, a closed terminal) undo it like Ctrl-C
    does; the process then dies of the same signal, as it would have without us."""
    import signal
    import threading

    names = [n for n in ("SIGTERM", "SIGHUP") if hasattr(signal, n)]
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def handler(signum, _frame):
        raise _Terminated(signum)

    old = {n: signal.signal(getattr(signal, n), handler) for n in names}
    try:
        yield
    except _Terminated as exc:
        for n, h in old.items():
            signal.signal(getattr(signal, n), h)
        old = {}
        signal.signal(exc.signum, signal.SIG_DFL)
        os.kill(os.getpid(), exc.signum)
        raise  # not reached where the signal kills; kept for platforms where it does not
    finally:
        for n, h in old.items():
            signal.signal(getattr(signal, n), h)


def _commit(out_dir: Path, plans: list[_Plan]) -> None:
    with _terminate_raises():
        _transaction(out_dir, plans)


def _transaction(out_dir: Path, plans: list[_Plan]) -> None:
    try:
        stage = Path(tempfile.mkdtemp(prefix=STAGE_PREFIX, dir=out_dir))
    except OSError as exc:
        raise OutputError(f"cannot write {out_dir}: {exc.strerror or exc}") from None
    mode = 0o777 & ~_umask()
    try:
        ops: list[dict] = []
        for k, plan in enumerate(plans):
            new = stage / str(k)
            new.mkdir()
            os.chmod(new, mode)  # a result folder is an ordinary folder, not mkdtemp's 0700
            for fname, text in plan.writes.items():
                _write(new / fname, text)
            rel = plan.target.name
            if not os.path.lexists(plan.target):
                ops.append({"op": "folder", "target": rel, "staged": str(k), "files": dict(plan.digests)})
                continue
            old = stage / f"{k}.old"
            old.mkdir()
            for fname in plan.writes:
                backup = f"{k}.old/{fname}" if os.path.lexists(plan.target / fname) else None
                ops.append({"op": "file", "target": f"{rel}/{fname}", "staged": f"{k}/{fname}", "backup": backup,
                            "sha256": plan.digests[fname]})
            for fname in plan.removes:
                ops.append({"op": "remove", "target": f"{rel}/{fname}", "backup": f"{k}.old/{fname}"})
        _write(stage / (_JOURNAL + ".tmp"), json.dumps(ops, indent=1) + "\n")
        os.replace(stage / (_JOURNAL + ".tmp"), stage / _JOURNAL)  # from here on, an interruption is undone
        for op in ops:
            _apply(out_dir, stage, op)
        os.unlink(stage / _JOURNAL)  # the commit point
    except BaseException as exc:  # KeyboardInterrupt too: put back what was there
        if not _rollback(stage):  # keep the old files where they are; the next write tries again
            raise OutputError(f"cannot write {out_dir}: {getattr(exc, 'strerror', None) or exc}; some earlier "
                              f"outputs are still in {stage}, the next build into {out_dir} puts them back") from None
        shutil.rmtree(stage, ignore_errors=True)
        if isinstance(exc, OSError):
            raise OutputError(f"cannot write {out_dir}: {exc.strerror or exc}; earlier outputs kept") from None
        raise
    shutil.rmtree(stage, ignore_errors=True)


def _apply(out_dir: Path, stage: Path, op: dict) -> None:
    target = out_dir / op["target"]
    if op["op"] == "folder":
        os.rename(stage / op["staged"], target)
        return
    if op.get("backup"):
        os.rename(target, stage / op["backup"])
    if op["op"] == "file":
        os.rename(stage / op["staged"], target)


def _rollback(stage: Path) -> bool:
    """Undo the renames of an unfinished transaction, newest first; False if an old file could not be put
    back (it is still in the staging folder then). Without a journal nothing was moved."""
    try:
        ops = json.loads((stage / _JOURNAL).read_text(encoding="utf-8"))
    except FileNotFoundError:
        return True
    except (OSError, ValueError):
        return False
    out_dir = stage.parent
    restored = True
    for op in reversed(ops):
        target = out_dir / op["target"]
        try:
            if op["op"] == "folder":
                if not os.path.lexists(stage / op["staged"]) and target.is_dir():
                    for fname, digest in op["files"].items():
                        if _sha256_file(target / fname) == digest:
                            os.unlink(target / fname)
                    with contextlib.suppress(OSError):
                        os.rmdir(target)  # only if the user put nothing there since
                continue
            backup = stage / op["backup"] if op.get("backup") else None
            if backup is not None and os.path.lexists(backup):
                os.replace(backup, target)
            elif (op["op"] == "file" and backup is None and not os.path.lexists(stage / op["staged"])
                  and _sha256_file(target) == op["sha256"]):
                os.unlink(target)
        except OSError:
            restored = restored and not (op.get("backup") and os.path.lexists(stage / op["backup"]))
    return restored
