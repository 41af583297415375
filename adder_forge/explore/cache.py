"""The figure cache: one JSON file per (adder, family), keyed by what the figures depend on.

The key is a digest of the adder's network (its IR dump, elaborated under a fixed name: the name changes
no figure), the family, the versions of what measures it (adder_forge's version with a digest of the
layers that measure, the Yosys and nextpnr wheels) and, for the built-in check, its vector plan. Equal
key, equal figures: a sweep re-run unchanged computes nothing (it elaborates each adder to find its key,
and runs no check, estimate or synthesis), `pick` reuses what `explore` measured, and a new scheme or a
change that leaves the networks as they were keeps every figure.

Each entry is written to a temporary file in its own folder and renamed over its name (``os.replace`` is
atomic on POSIX), so a reader sees a whole entry or none, however many processes or Dask workers write at
once, and a run killed midway loses only the entries it had not finished. An entry that cannot be read
(a disk that filled up, a hand edit) is a miss and is computed again.
"""

from __future__ import annotations

import json
import os
import tempfile
from pathlib import Path

from ..emit.outputs import fingerprint

FORMAT = 1  # bump when an entry's layout or task.compute changes; older entries then miss


def default_root() -> Path:
    """$ADDER_FORGE_CACHE, else $XDG_CACHE_HOME/adder_forge/figures, else ~/.cache/adder_forge/figures."""
    env = os.environ.get("ADDER_FORGE_CACHE")
    if env:
        return Path(env)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "adder_forge" / "figures"


def key(content: dict, family: str, versions: dict, extra: dict | None = None) -> str:
    return fingerprint(FORMAT, content, family, versions, extra or {})


class Cache:
    def __init__(self, root: str | Path):
        self.root = Path(root)

    def path(self, k: str) -> Path:
        return self.root / k[:2] / f"{k}.json"

    def get(self, k: str) -> dict | None:
        try:
            data = json.loads(self.path(k).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return None
        if not isinstance(data, dict) or data.get("key") != k:
            return None
        return data

    def put(self, k: str, entry: dict) -> bool:
        """Store ``entry`` under ``k``; False when the cache cannot be written (the sweep goes on)."""
        folder = self.path(k).parent
        text = json.dumps({**entry, "key": k}, sort_keys=True, indent=1) + "\n"
        try:
            folder.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(prefix=f".{k[:12]}.", suffix=".tmp", dir=folder)
            try:
                with os.fdopen(fd, "w", encoding="utf-8") as fh:
                    fh.write(text)
                    fh.flush()
                    os.fsync(fh.fileno())
                os.replace(tmp, self.path(k))
            except BaseException:
                try:
                    os.unlink(tmp)
                except OSError:
                    pass
                raise
        except OSError:
            return False
        return True

    def entries(self) -> list[Path]:
        return sorted(self.root.glob("*/*.json")) if self.root.is_dir() else []
