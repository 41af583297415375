"""Helpers the benchmark scripts share: the scheme list, timing, and where results go."""

from __future__ import annotations

import json
import os
import platform
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
RESULTS = ROOT / "bench" / "results"

PREFIX_NETWORKS = ("kogge-stone", "brent-kung", "sklansky", "han-carlson", "ladner-fischer")


def cases(width: int) -> list[tuple[str, str, dict]]:
    """(label, scheme, options) for every registered scheme that accepts ``width``; the prefix scheme once per
    classic network."""
    from adder_forge.spec.registry import schemes

    out = []
    for name, sch in schemes().items():
        if width > sch.max_width:
            continue
        if name == "prefix":
            out += [(f"prefix:{p}", name, {"prefix": p}) for p in PREFIX_NETWORKS]
        else:
            out.append((name, name, {}))
    return out


def best_of(fn, repeat: int = 3) -> tuple[float, object]:
    """Least wall time of ``repeat`` runs (the machine is shared; the minimum is the least disturbed)."""
    best, value = float("inf"), None
    for _ in range(repeat):
        t = time.perf_counter()
        value = fn()
        best = min(best, time.perf_counter() - t)
    return best, value


def machine() -> dict:
    return {"python": platform.python_version(), "cpus": os.cpu_count(), "platform": platform.platform()}


def save(name: str, data: dict) -> Path:
    RESULTS.mkdir(parents=True, exist_ok=True)
    path = RESULTS / f"{name}.json"
    data = {"machine": machine(), **data}
    path.write_text(json.dumps(data, indent=2) + "\n", encoding="utf-8")
    return path
