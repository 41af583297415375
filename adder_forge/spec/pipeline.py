"""The spec's ``pipeline`` key: how many register ranks, and how they are clocked.

    pipeline:
      stages: 2          # K >= 0 register ranks; 0 (or no pipeline key) is combinational
      enable: true       # a clock-enable input en (default false)
      reset: sync        # none (default), sync or async: an input rst that clears every register
      reset_level: high  # high (default) or low: the level of rst that resets

Every key is checked where it stands: an error names the file, the line of the nested key and the field
(``pipeline.stages``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Callable

from .registry import bool_option, choice_option, int_option, shown, suggest, type_name

MAX_STAGES = 64  # more ranks than a 16384-bit ripple has room for is a typo, not a design
KEYS = ("stages", "enable", "reset", "reset_level")
RESETS = ("none", "sync", "async")
LEVELS = ("high", "low")


@dataclass(frozen=True)
class Pipeline:
    stages: int = 0
    enable: bool = False
    reset: str = "none"  # none | sync | async
    reset_level: str = "high"  # high | low

    @property
    def clocked(self) -> bool:
        return self.stages > 0

    def to_dict(self) -> dict[str, Any]:
        return {"stages": self.stages, "enable": self.enable, "reset": self.reset, "reset_level": self.reset_level}

    def describe(self) -> str:
        """'2 stages, enable, sync reset active high' for headers and build lines."""
        parts = [f"{self.stages} stage{'s' if self.stages != 1 else ''}"]
        if self.enable:
            parts.append("clock enable en")
        if self.reset != "none":
            parts.append(f"{self.reset} reset rst active {self.reset_level}")
        return ", ".join(parts)


COMBINATIONAL = Pipeline()


def parse_pipeline(value: Any, fail_at: Callable[..., None]) -> Pipeline:
    """The Pipeline a spec's ``pipeline`` value asks for; ``fail_at(field, message, at_key=False)`` raises a
    SpecError at the value (or the key) of ``pipeline`` or ``pipeline.KEY``."""
    if value is None:
        return COMBINATIONAL
    if isinstance(value, bool) or not isinstance(value, dict):
        fail_at("pipeline", f"'pipeline' must be a mapping such as {{stages: 2}}, got {type_name(value)}")
    for key in value:
        if key not in KEYS:
            fail_at(f"pipeline.{key}" if isinstance(key, str) else "pipeline",
                    f"unknown key 'pipeline.{shown(key)}'" + suggest(str(key), KEYS), True)
    got: dict[str, Any] = {}
    rules = {
        "stages": int_option("pipeline.stages", 0, 0, MAX_STAGES, ""),
        "enable": bool_option("pipeline.enable", False, ""),
        "reset": choice_option("pipeline.reset", RESETS, "none", ""),
        "reset_level": choice_option("pipeline.reset_level", LEVELS, "high", ""),
    }
    for key, opt in rules.items():
        if key in value:
            got[key] = opt.parse(value[key], lambda m, k=key: fail_at(f"pipeline.{k}", m))
    p = Pipeline(**got)
    if p.stages == 0 and (p.enable or p.reset != "none"):
        fail_at("pipeline.stages", "'pipeline.enable' and 'pipeline.reset' need registers: set 'pipeline.stages' "
                                   "to 1 or more")
    if p.reset == "none" and "reset_level" in value:
        fail_at("pipeline.reset_level", "'pipeline.reset_level' without a reset: set 'pipeline.reset' to sync or async")
    return p
