"""Registries of carry schemes and their options, filled by decorators; a bad name lists the valid ones."""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass
from typing import Any, Callable

MAX_WIDTH = 16384  # generous; schemes with super-linear size set their own, lower limit


def shown(text, limit: int = 40) -> str:
    """User text for a one-line message: control characters escaped, long text cut."""
    text = str(text)
    cut = len(text) > limit
    text = text[:limit].encode("unicode_escape").decode("ascii") if not text[:limit].isprintable() else text[:limit]
    return text + ("..." if cut else "")


def value_text(v) -> str:
    """A key's value as the tool writes it everywhere (build line, Verilog header, IR dump, `schemes`):
    booleans as YAML writes them, sequences as a YAML flow list."""
    if isinstance(v, bool):
        return str(v).lower()
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(value_text(x) for x in v) + "]"
    return str(v)


def suggest(word: str, choices, aliases: dict[str, str] | None = None) -> str:
    """' (did you mean 'x'?)' for the closest choice, else the list of valid ones.

    ``aliases`` maps other common names to a choice (a suggestion by meaning, not by spelling).
    """
    choices = sorted(choices)
    word = str(word)
    aliases = dict(aliases or {})
    aliases.update({c.lower(): c for c in choices})
    if word.lower() in aliases:
        return f" (did you mean '{aliases[word.lower()]}'?)"
    close = difflib.get_close_matches(word.lower(), sorted(aliases), n=1, cutoff=0.6) if len(word) <= 64 else []
    close = [aliases[c] for c in close]
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
    choices: tuple = ()  # the values of a key that names one of a fixed set (a sweep can take each in turn)
    # A key whose value can leave something open (block: auto) names the fact the scheme records in the
    # network's meta once it has decided (block_sizes); summaries show it beside the key.
    resolved_as: str = ""
    open_value: Any = None


@dataclass(frozen=True)
class Scheme:
    name: str
    build: Callable[..., Any]  # (Spec) -> Network
    options: tuple[Option, ...] = ()
    doc: str = ""
    max_width: int = MAX_WIDTH
    validate: Callable[..., None] | None = None  # (Spec) -> None; raises spec.error(...) for cross-key rules
    # (Spec, resolved) -> Description, for a scheme whose short label says more than its non-default keys
    describe_with: Callable[..., "Description"] | None = None

    def describe(self, spec, resolved: dict | None = None) -> "Description":
        """What the spec's adder is, in words: summaries and reports call this and know no scheme's keys.
        ``resolved`` holds what the scheme decided that the spec left open (meta facts, e.g. block_sizes)."""
        resolved = dict(resolved or {})
        if self.describe_with is not None:
            return self.describe_with(spec, resolved)
        return Description(label_of(self.name, changed_keys(self, spec)), spec_keys(self, spec, resolved))


@dataclass(frozen=True)
class Description:
    """``label``: short, for a table row ("prefix (kogge-stone)", "carry-skip (block [4, 8, 8, 4])");
    ``keys``: every key that shapes the adder as (key, text), carry ports first, with what the scheme
    resolved beside an open value ("block", "auto ([4, 4])")."""

    label: str
    keys: tuple[tuple[str, str], ...]


def spec_keys(sch: Scheme, spec, resolved: dict) -> tuple[tuple[str, str], ...]:
    out = [("carry_in", value_text(spec.carry_in)), ("carry_out", value_text(spec.carry_out))]
    for o in sch.options:
        v = spec.opt(o.key)
        if v is None:  # a key that does not apply to this form (taxonomy for kogge-stone)
            continue
        text = value_text(v)
        if o.resolved_as and v == o.open_value and o.resolved_as in resolved:
            text += f" ({resolved[o.resolved_as]})"
        out.append((o.key, text))
    return tuple(out)


def changed_keys(sch: Scheme, spec, skip=()) -> list[str]:
    """The scheme's keys whose value differs from the default, in words: 'ling', 'block [4, 8]'."""
    out = []
    for o in sch.options:
        v = spec.opt(o.key)
        if o.key in skip or v is None or v == o.default:
            continue
        if isinstance(v, bool):
            out.append(o.key if v else f"no {o.key}")
        else:
            out.append(f"{o.key} {value_text(v)}")
    return out


def label_of(name: str, parts: list[str]) -> str:
    return f"{name} ({', '.join(parts)})" if parts else name


SCHEMES: dict[str, Scheme] = {}


def scheme(name: str, *, options=(), doc: str = "", max_width: int = MAX_WIDTH, validate=None, describe=None):
    """Register ``fn(spec) -> Network`` as the construction of carry scheme ``name``. ``describe(spec,
    resolved) -> Description`` replaces the default label (the scheme and its non-default keys)."""

    def deco(fn):
        if name in SCHEMES:
            raise ValueError(f"scheme {name} registered twice")
        SCHEMES[name] = Scheme(name, fn, tuple(options), doc or (fn.__doc__ or "").strip(), max_width, validate,
                               describe)
        return fn

    return deco


def schemes() -> dict[str, Scheme]:
    """Every registered scheme. The schemes package fills the registry when adder_forge is imported; the
    spec layer never imports the layer above it."""
    return SCHEMES


# -- option parsers ---------------------------------------------------------------------------------------
# Plain scalars that YAML 1.1 tools read as booleans or integers; the spec loader reads YAML 1.2, where they
# are strings, so a key that wants a boolean or an integer explains why it got a string.
_YAML11_BOOL = {"yes", "no", "on", "off", "y", "n"}
_YAML11_INT = re.compile(r"[-+]?(?:0b[01_]+|[0-9][0-9_]*(?::[0-5]?[0-9])+|[0-9][0-9_]*_[0-9_]*)\Z")


def yaml11_hint(v) -> str:
    if isinstance(v, str) and v.lower() in _YAML11_BOOL:
        return " (specs are read as YAML 1.2: write true or false)"
    if isinstance(v, str) and _YAML11_INT.match(v):
        return " (specs are read as YAML 1.2: write a plain decimal number, 0x.. or 0o..)"
    return ""


def int_option(key: str, default, lo: int, hi: int, doc: str) -> Option:
    def parse(v, fail):
        if isinstance(v, bool) or not isinstance(v, int):
            fail(f"'{key}' must be an integer, got {type_name(v)}" + yaml11_hint(v))
        if not lo <= v <= hi:
            fail(f"'{key}' must be between {lo} and {hi}, got {shown(v)}")
        return v

    return Option(key, parse, default, doc)


def choice_option(key: str, choices, default, doc: str) -> Option:
    choices = tuple(choices)

    def parse(v, fail):
        if not isinstance(v, str):
            fail(f"'{key}' must be one of {', '.join(choices)}, got {type_name(v)}")
        if v not in choices:
            fail(f"unknown {key} '{shown(v)}'" + suggest(v, choices))
        return v

    return Option(key, parse, default, doc, choices)


def bool_option(key: str, default: bool, doc: str) -> Option:
    def parse(v, fail):
        if not isinstance(v, bool):
            fail(f"'{key}' must be true or false, got {type_name(v)}" + yaml11_hint(v))
        return v

    return Option(key, parse, default, doc)


def type_name(v) -> str:
    if v is None:
        return "nothing"
    if isinstance(v, bool):
        return f"boolean {str(v).lower()}"
    if isinstance(v, int):
        return f"integer {v}" if abs(v) < 10 ** 30 else f"an integer of {v.bit_length()} bits"
    if isinstance(v, float):
        return f"number {v}"
    if isinstance(v, str):
        return f"string '{shown(v)}'"
    if isinstance(v, list):
        return "a list"
    if isinstance(v, dict):
        return "a mapping"
    return type(v).__name__

