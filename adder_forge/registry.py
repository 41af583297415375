"""Registries of carry schemes and their options, filled by decorators; a bad name lists the valid ones."""

from __future__ import annotations

import difflib
from dataclasses import dataclass
from typing import Any, Callable

MAX_WIDTH = 16384  # generous; schemes with super-linear size set their own, lower limit


def suggest(word: str, choices) -> str:
    """' (did you mean 'x'?)' for the closest choice, else the list of valid ones."""
    choices = sorted(choices)
    close = difflib.get_close_matches(str(word), choices, n=1, cutoff=0.6)
    if close:
        return f" (did you mean '{close[0]}'?)"
    return " (valid: " + ", ".join(choices) + ")"


@dataclass(frozen=True)
class Option:
    """A scheme-specific spec key.

    ``parse(value, fail)`` turns the YAML value into a frozen Python value or calls ``fail(message)``,
    which raises a SpecError pointing at that value.
    """

    key: str
    parse: Callable[[Any, Callable[[str], Exception]], Any]
    default: Any
    doc: str


@dataclass(frozen=True)
class Scheme:
    name: str
    build: Callable[..., Any]  # (Spec) -> Network
    options: tuple[Option, ...] = ()
    doc: str = ""
    max_width: int = MAX_WIDTH
    check: Callable[..., None] | None = None  # (Spec) -> None; raises spec.error(...) for cross-key rules


SCHEMES: dict[str, Scheme] = {}


def scheme(name: str, *, options=(), doc: str = "", max_width: int = MAX_WIDTH, check=None):
    """Register ``fn(spec) -> Network`` as the construction of carry scheme ``name``."""

    def deco(fn):
        if name in SCHEMES:
            raise ValueError(f"scheme {name} registered twice")
        SCHEMES[name] = Scheme(name, fn, tuple(options), doc or (fn.__doc__ or "").strip(), max_width, check)
        return fn

    return deco


def schemes() -> dict[str, Scheme]:
    from . import schemes as _  # noqa: F401  (importing the package fills the registry)

    return SCHEMES


# -- option parsers ---------------------------------------------------------------------------------------
def int_option(key: str, default, lo: int, hi: int, doc: str) -> Option:
    def parse(v, fail):
        if isinstance(v, bool) or not isinstance(v, int):
            fail(f"'{key}' must be an integer, got {type_name(v)}")
        if not lo <= v <= hi:
            fail(f"'{key}' must be between {lo} and {hi}, got {v}")
        return v

    return Option(key, parse, default, doc)


def choice_option(key: str, choices, default, doc: str) -> Option:
    choices = tuple(choices)

    def parse(v, fail):
        if not isinstance(v, str):
            fail(f"'{key}' must be one of {', '.join(choices)}, got {type_name(v)}")
        if v not in choices:
            fail(f"unknown {key} '{v}'" + suggest(v, choices))
        return v

    return Option(key, parse, default, doc)


def bool_option(key: str, default: bool, doc: str) -> Option:
    def parse(v, fail):
        if not isinstance(v, bool):
            fail(f"'{key}' must be true or false, got {type_name(v)}")
        return v

    return Option(key, parse, default, doc)


def type_name(v) -> str:
    if v is None:
        return "nothing"
    if isinstance(v, bool):
        return f"boolean {str(v).lower()}"
    if isinstance(v, int):
        return f"integer {v}"
    if isinstance(v, float):
        return f"number {v}"
    if isinstance(v, str):
        return f"string '{v}'"
    if isinstance(v, list):
        return "a list"
    if isinstance(v, dict):
        return "a mapping"
    return type(v).__name__


def elaborate(spec):
    """Build the gate-level network for a validated spec."""
    return schemes()[spec.scheme].build(spec)
