"""Every tests/matrix_*.py module's CONFIGS, keyed by module name (foundation, prefix, blocks, ...)."""

import importlib
from pathlib import Path


def all_matrices() -> dict[str, list[dict]]:
    out = {}
    for path in sorted(Path(__file__).parent.glob("matrix_*.py")):
        mod = importlib.import_module(path.stem)
        out[path.stem[len("matrix_"):]] = list(mod.CONFIGS)
    return out


def all_configs() -> list[dict]:
    return [c for cfgs in all_matrices().values() for c in cfgs]
