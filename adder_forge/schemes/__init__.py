"""Carry schemes: importing this package registers every scheme module listed here."""

from . import behavioral
from . import lookahead
from . import ripple  # noqa: F401

# Optional scheme modules added by later work register themselves the same way.
for _mod in ("prefix", "block_lookahead", "carry_select", "carry_skip", "conditional_sum"):
    try:
        __import__(f"{__name__}.{_mod}")
    except ModuleNotFoundError as _exc:  # pragma: no cover - only while a module does not exist yet
        if _exc.name != f"{__name__}.{_mod}":
            raise
