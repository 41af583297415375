"""Loading and validating adder specs from YAML, with file, line and column on every error."""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

from .errors import SpecError
from .keywords import RESERVED
from .registry import MAX_WIDTH, Option, bool_option, schemes, suggest, type_name

_IDENT = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")

# Keys every spec may carry; a scheme declares the rest (registry.Option).
COMMON_KEYS = ("name", "width", "scheme", "carry_in", "carry_out")


@dataclass(frozen=True)
class Spec:
    name: str
    width: int
    scheme: str
    carry_in: bool = True
    carry_out: bool = True
    options: tuple[tuple[str, Any], ...] = ()  # the scheme's own keys, defaults filled in, in declared order
    source: str = "<spec>"
    positions: tuple[tuple[str, int, int], ...] = ()  # key -> (line, col) of its value, 1-based

    def opt(self, key: str, default: Any = None) -> Any:
        for k, v in self.options:
            if k == key:
                return v
        return default

    def where(self, key: str) -> tuple[int, int]:
        for k, line, col in self.positions:
            if k == key:
                return line, col
        for k, line, col in self.positions:
            if k == "scheme":
                return line, col
        return 1, 1

    def error(self, key: str, message: str) -> SpecError:
        line, col = self.where(key)
        return SpecError(message, self.source, line, col, key)

    def given(self, key: str) -> bool:
        return any(k == key for k, _, _ in self.positions)

    def to_dict(self) -> dict[str, Any]:
        d: dict[str, Any] = {"name": self.name, "width": self.width, "scheme": self.scheme,
                             "carry_in": self.carry_in, "carry_out": self.carry_out}
        for k, v in self.options:
            d[k] = _plain(v)
        return d


def _plain(v):
    if isinstance(v, tuple):
        return [_plain(x) for x in v]
    return v


def make_spec(name: str, width: int, scheme: str, carry_in: bool = True, carry_out: bool = True,
              source: str = "<spec>", **options) -> Spec:
    """Validate a spec given as Python values (tests, the explorer); same rules as a YAML file."""
    data = {"name": name, "width": width, "scheme": scheme, "carry_in": carry_in, "carry_out": carry_out}
    data.update({k.replace("__", "-"): v for k, v in options.items()})
    return from_mapping(data, source, {})


def load_spec(path: str | Path) -> Spec:
    path = Path(path)
    src = str(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise SpecError("no such file", src, 1, 1) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise SpecError(f"cannot read spec: {getattr(exc, 'strerror', None) or exc}", src, 1, 1) from None
    return parse_spec(text, src)


def parse_spec(text: str, source: str = "<spec>") -> Spec:
    try:
        root = yaml.compose(text, Loader=yaml.SafeLoader)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line, col = (mark.line + 1, mark.column + 1) if mark else (1, 1)
        what = exc.problem or exc.context or "invalid YAML"
        raise SpecError(f"invalid YAML: {what}", source, line, col) from None
    except yaml.YAMLError as exc:
        raise SpecError(f"invalid YAML: {exc}", source, 1, 1) from None
    if root is None:
        raise SpecError("the spec is empty: expected a mapping with at least name, width and scheme", source, 1, 1)
    if not isinstance(root, yaml.MappingNode):
        raise SpecError("the spec must be a mapping of keys to values", source,
                        root.start_mark.line + 1, root.start_mark.column + 1)
    data: dict[str, Any] = {}
    pos: dict[str, tuple[int, int]] = {}
    key_pos: dict[str, tuple[int, int]] = {}
    constructor = yaml.SafeLoader("")
    for knode, vnode in root.value:
        kl, kc = knode.start_mark.line + 1, knode.start_mark.column + 1
        if not isinstance(knode, yaml.ScalarNode):
            raise SpecError("keys must be plain names", source, kl, kc)
        key = knode.value
        if key in data:
            raise SpecError(f"key '{key}' given twice (first at line {key_pos[key][0]})", source, kl, kc, key)
        try:
            data[key] = constructor.construct_object(vnode, deep=True)
        except yaml.YAMLError as exc:
            why = getattr(exc, "problem", None) or str(exc).splitlines()[0]
            raise SpecError(f"invalid value for '{key}': {why}", source, vnode.start_mark.line + 1,
                            vnode.start_mark.column + 1, key) from None
        pos[key] = (vnode.start_mark.line + 1, vnode.start_mark.column + 1)
        key_pos[key] = (kl, kc)
    return from_mapping(data, source, pos, key_pos)


def from_mapping(data: dict[str, Any], source: str, pos: dict[str, tuple[int, int]],
                 key_pos: dict[str, tuple[int, int]] | None = None) -> Spec:
    key_pos = key_pos or pos
    end = max(pos.values(), default=(1, 1))

    def fail_at(key: str, message: str, at_key: bool = False):
        line, col = (key_pos if at_key else pos).get(key, pos.get("scheme", end))
        raise SpecError(message, source, line, col, key)

    registry = schemes()
    every_option = {o.key for sc in registry.values() for o in sc.options}
    scheme_name = data.get("scheme")
    if "scheme" in data:
        if not isinstance(scheme_name, str):
            fail_at("scheme", f"'scheme' must be a name, got {type_name(scheme_name)}")
        if scheme_name not in registry:
            fail_at("scheme", f"unknown scheme '{scheme_name}'" + suggest(scheme_name, registry))
    own: dict[str, Option] = {o.key: o for o in registry[scheme_name].options} if scheme_name else {}

    for key in data:  # misspelt keys first: "widht" should say so, not that "width" is missing
        if key in COMMON_KEYS or key in own:
            continue
        if scheme_name and key in every_option:
            users = sorted(sc.name for sc in registry.values() if key in {o.key for o in sc.options})
            fail_at(key, f"key '{key}' does not apply to scheme '{scheme_name}' (it is for: {', '.join(users)})",
                    at_key=True)
        fail_at(key, f"unknown key '{key}'" + suggest(key, set(COMMON_KEYS) | (set(own) if scheme_name else every_option)),
                at_key=True)

    for req in ("name", "width", "scheme"):
        if req not in data:
            raise SpecError(f"missing required key '{req}'", source, end[0], 1, req)
    sch = registry[scheme_name]

    name = data["name"]
    if not isinstance(name, str):
        fail_at("name", f"'name' must be a Verilog identifier, got {type_name(name)}")
    if not _IDENT.match(name):
        fail_at("name", f"'name' must be a legal Verilog identifier (letters, digits, _; not starting with a digit), got '{name}'")
    if name in RESERVED:
        fail_at("name", f"'name' '{name}' is a Verilog/SystemVerilog keyword")

    width = data["width"]
    if isinstance(width, bool) or not isinstance(width, int):
        fail_at("width", f"'width' must be an integer, got {type_name(width)}")
    limit = min(sch.max_width, MAX_WIDTH)
    if not 1 <= width <= limit:
        why = f" for scheme '{scheme_name}'" if sch.max_width < MAX_WIDTH else ""
        fail_at("width", f"'width' must be between 1 and {limit}{why}, got {width}")

    flags = {}
    for key in ("carry_in", "carry_out"):
        opt = bool_option(key, True, "")
        if key in data:
            flags[key] = opt.parse(data[key], lambda m, k=key: fail_at(k, m))
        else:
            flags[key] = True

    options = []
    for o in sch.options:
        if o.key in data:
            options.append((o.key, o.parse(data[o.key], lambda m, k=o.key: fail_at(k, m))))
        else:
            options.append((o.key, o.default))

    positions = tuple((k, *pos[k]) for k in data if k in pos)
    spec = Spec(name, width, scheme_name, flags["carry_in"], flags["carry_out"], tuple(options), source, positions)
    if sch.check is not None:
        sch.check(spec)
    return spec
