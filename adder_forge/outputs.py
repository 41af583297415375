"""All-or-nothing writing of output folders: a failure leaves what was there before untouched."""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path

from .errors import OutputError


def write_folders(out_dir: Path, folders: dict[str, dict[str, str]]) -> list[Path]:
    """Write each ``folders[name]`` (file name -> text) as ``out_dir/name``, replacing that folder whole.

    Every folder is first written beside its target; the targets are swapped in only when all of them are
    complete, and the old folders are removed last.
    """
    out_dir = Path(out_dir)
    staged: list[tuple[Path, Path]] = []
    try:
        out_dir.mkdir(parents=True, exist_ok=True)
        for name, files in folders.items():
            tmp = Path(tempfile.mkdtemp(prefix=f".{name}.new-", dir=out_dir))
            os.chmod(tmp, 0o777 & ~_umask())  # mkdtemp makes 0700; a result folder is an ordinary one
            staged.append((tmp, out_dir / name))
            for fname, text in files.items():
                (tmp / fname).write_text(text, encoding="utf-8")
    except OSError as exc:
        for tmp, _ in staged:
            shutil.rmtree(tmp, ignore_errors=True)
        raise OutputError(f"cannot write {out_dir}: {exc.strerror or exc}") from None
    swapped: list[tuple[Path, Path | None]] = []
    try:
        for tmp, target in staged:
            old = None
            if target.exists():
                old = Path(tempfile.mkdtemp(prefix=f".{target.name}.old-", dir=out_dir))
                os.rmdir(old)
                os.rename(target, old)
            os.rename(tmp, target)
            swapped.append((target, old))
    except OSError as exc:
        for target, old in reversed(swapped):
            shutil.rmtree(target, ignore_errors=True)
            if old is not None:
                os.rename(old, target)
        for tmp, _ in staged:
            shutil.rmtree(tmp, ignore_errors=True)
        raise OutputError(f"cannot write {out_dir}: {exc.strerror or exc}") from None
    for _, old in swapped:
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)
    return [target for _, target in staged]


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def replace_file(path: Path, text: str) -> None:
    """Replace one file atomically (write beside it, then rename)."""
    path = Path(path)
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent)
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text)
        os.replace(tmp, path)
    except OSError as exc:
        raise OutputError(f"cannot write {path}: {exc.strerror or exc}") from None
