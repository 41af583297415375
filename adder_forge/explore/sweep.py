"""Sweep files: which widths, which adders and which figures one `explore` run covers.

A sweep file is YAML read by the spec loader's own reader (YAML 1.2, every error at FILE:LINE:COL)::

    name: sensor_sweep
    widths: [16, 32, 48, 64]
    carry_in: false
    variants:
      - scheme: ripple
      - scheme: prefix
        prefix: [kogge-stone, brent-kung]     # a list is one variant per entry
      - scheme: carry-select
        block: [4, 8, auto]
    figures: [estimates, generic, lut6]

A list value expands: one variant per entry, and several lists in one variant expand as a cross product.
A key whose value is itself a list (a list of block sizes, a Harris [l, f, t]) is given nested, as a list
of one list: ``block: [[4, 4, 8]]``. ``all`` stands for every value of a key with a fixed set of values
(``prefix: all``), and ``variants: all`` (or ``scheme: all`` alone in a variant) for every registered
scheme with every value of the first such key it declares (the prefix network, say), its other keys at
their defaults: new schemes and networks appear without a change here. What ``all`` brings
in that cannot be built without more keys (a Harris network needs its [l, f, t]) is listed as skipped,
never silently dropped; so is a width beyond a scheme's limit. The `+` baseline (scheme ``behavioral``) is
always swept at every width.
"""

from __future__ import annotations

import hashlib
import itertools
import re
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import yaml

from ..base.errors import SpecError
from ..spec.loader import MAX_NAME, Spec, compose, construct, from_mapping, read_source
from ..synth.flows import FLOWS
from ..spec.registry import MAX_WIDTH, schemes, shown, suggest, type_name

BASELINE = "behavioral"
EVERY = "all"
ESTIMATES = "estimates"  # figures read off the IR; every other family is a synthesis flow
TOP_KEYS = ("name", "widths", "carry_in", "carry_out", "variants", "figures", "task_seconds")
# A synthesis task's time limit, seconds (the sweep's `task_seconds`, the command's --task-seconds): a
# sweep of every scheme goes on past a flat lookahead whose synthesis would take hours.
TASK_SECONDS = 1200.0
MAX_TASK_SECONDS = 7 * 24 * 3600.0
_IDENT = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")
MAX_POINTS = 20000  # widths x variants; a sweep past this is a typing slip, not a plan


@dataclass(frozen=True)
class Point:
    """One adder of the sweep: a variant at one width, as a validated spec."""

    spec: Spec
    label: str  # the variant as a reader says it: "prefix kogge-stone", "carry-select block=4", "+"

    @property
    def baseline(self) -> bool:
        return self.spec.scheme == BASELINE


@dataclass(frozen=True)
class Skipped:
    label: str
    width: int
    reason: str


@dataclass(frozen=True)
class Sweep:
    name: str
    source: str
    widths: tuple[int, ...]
    carry_in: bool
    carry_out: bool
    figures: tuple[str, ...]  # families: "estimates" and synthesis flow names
    points: tuple[Point, ...]
    skipped: tuple[Skipped, ...] = ()
    labels: tuple[str, ...] = ()  # every variant label in file order, `+` first
    task_seconds: float = TASK_SECONDS  # a synthesis task's time limit


# -- reading ---------------------------------------------------------------------------------------------------
@dataclass
class _Loc:
    source: str
    width_nodes: dict = field(default_factory=dict)  # width -> where it was written, for errors at that width

    def fail(self, node, message: str, key: str | None = None):
        raise SpecError(message, self.source, node.start_mark.line + 1, node.start_mark.column + 1, key)


def load_sweep(path: str | Path, flows=None) -> Sweep:
    return parse_sweep(read_source(path, "sweep"), str(path), flows)


def parse_sweep(text: str, source: str = "<sweep>", flows=None) -> Sweep:
    """``flows``: the synthesis flow names a figure family may name (default: the registered flows; the
    layer that holds them passes them in)."""
    loc = _Loc(source)
    root = compose(text, source)
    if root is None:
        raise SpecError("the sweep is empty: expected a mapping with name, widths and variants", source, 1, 1)
    if not isinstance(root, yaml.MappingNode):
        loc.fail(root, "the sweep must be a mapping of keys to values")
    nodes: dict[str, tuple[Any, Any]] = {}
    for knode, vnode in root.value:
        if not isinstance(knode, yaml.ScalarNode):
            loc.fail(knode, "keys must be plain names")
        key = knode.value
        if key in nodes:
            loc.fail(knode, f"key '{shown(key)}' given twice (first at line {nodes[key][0].start_mark.line + 1})", key)
        if key not in TOP_KEYS:
            loc.fail(knode, f"unknown key '{shown(key)}'" + suggest(key, TOP_KEYS), key)
        nodes[key] = (knode, vnode)
    end = root.end_mark.line + 1
    for req in ("name", "widths", "variants"):
        if req not in nodes:
            raise SpecError(f"missing required key '{req}'", source, end, 1, req)

    name_node = nodes["name"][1]
    name = construct(name_node, "name", source)
    if not isinstance(name, str) or not _IDENT.match(name):
        loc.fail(name_node, "'name' must be a name of letters, digits and _ (not starting with a digit), got "
                 + type_name(name), "name")
    if len(name) > 64:
        loc.fail(name_node, f"'name' is {len(name)} characters long; at most 64 (adder names are built from it)",
                 "name")

    widths = _widths(loc, nodes["widths"][1])
    flags = {}
    for key in ("carry_in", "carry_out"):
        flags[key] = True
        if key in nodes:
            v = construct(nodes[key][1], key, source)
            if not isinstance(v, bool):
                loc.fail(nodes[key][1], f"'{key}' must be true or false, got {type_name(v)}", key)
            flags[key] = v
    families = _figures(loc, nodes.get("figures", (None, None))[1], flows)
    seconds = TASK_SECONDS
    if "task_seconds" in nodes:
        seconds = task_seconds(construct(nodes["task_seconds"][1], "task_seconds", source),
                               lambda why: loc.fail(nodes["task_seconds"][1], why, "task_seconds"))
    variants = _variants(loc, nodes["variants"][1])
    if len(widths) * (len(variants) + 1) > MAX_POINTS:
        loc.fail(nodes["variants"][1], f"{len(widths)} widths x {len(variants)} variants is more than "
                                       f"{MAX_POINTS} adders: split the sweep", "variants")
    sweep = _expand(loc, name, widths, flags, families, variants, nodes)
    return replace(sweep, task_seconds=seconds)


def task_seconds(value, fail, what: str = "'task_seconds'") -> float:
    """A time limit as given (the sweep key, the option): a number of seconds above 0; ``fail(why)`` raises."""
    if isinstance(value, bool) or not isinstance(value, (int, float)) or value != value:
        fail(f"{what} must be a number of seconds, got {type_name(value)}")
    if not 0 < value <= MAX_TASK_SECONDS:
        fail(f"{what} must be above 0 and at most {MAX_TASK_SECONDS:.0f} (a week), got {shown(value)}")
    return float(value)


def _widths(loc: _Loc, node) -> tuple[int, ...]:
    items = node.value if isinstance(node, yaml.SequenceNode) else [node]
    if not items:
        loc.fail(node, "'widths' must name at least one width", "widths")
    out: list[tuple[int, Any]] = []
    for item in items:
        w = construct(item, "widths", loc.source)
        if isinstance(w, bool) or not isinstance(w, int):
            loc.fail(item, f"'widths' must be integers, got {type_name(w)}", "widths")
        if not 1 <= w <= MAX_WIDTH:
            loc.fail(item, f"'widths' must be between 1 and {MAX_WIDTH}, got {shown(w)}", "widths")
        if w in [x for x, _ in out]:
            loc.fail(item, f"width {w} given twice", "widths")
        out.append((w, item))
    loc.width_nodes = dict(out)
    return tuple(w for w, _ in out)


def _figures(loc: _Loc, node, flows) -> tuple[str, ...]:
    flows = FLOWS if flows is None else flows
    valid = [ESTIMATES, *flows]
    if node is None:
        return (ESTIMATES,)
    items = node.value if isinstance(node, yaml.SequenceNode) else [node]
    if not items:
        loc.fail(node, "'figures' must name at least one of " + ", ".join(valid), "figures")
    out = []
    for item in items:
        v = construct(item, "figures", loc.source)
        if not isinstance(v, str) or v not in valid:
            loc.fail(item, f"unknown figures '{shown(v)}'" + suggest(str(v), valid), "figures")
        if v in out:
            loc.fail(item, f"figures '{v}' given twice", "figures")
        out.append(v)
    return tuple(out)


@dataclass(frozen=True)
class _Variant:
    scheme: str
    keys: tuple[tuple[str, Any, Any, Any], ...]  # (key, value, value node, key node), one value each
    node: Any  # the variant's node in the file
    every: bool = False  # brought in by `all`: skipped, not an error, when it cannot be built
    widths: tuple[int, ...] | None = None  # the variant's own widths (a subset of the sweep's), else all


def _variants(loc: _Loc, node) -> list[_Variant]:
    """The variants in file order, each list expanded; ``all`` expanded from the registry."""
    if isinstance(node, yaml.ScalarNode) and construct(node, "variants", loc.source) == EVERY:
        return _every(node)
    if not isinstance(node, yaml.SequenceNode) or not node.value:
        loc.fail(node, "'variants' must be a list of mappings, each with a 'scheme' (or 'all')", "variants")
    registry = schemes()
    out: list[_Variant] = []
    for vnode in node.value:
        if not isinstance(vnode, yaml.MappingNode):
            loc.fail(vnode, "each variant must be a mapping with a 'scheme'", "variants")
        given: dict[str, tuple[Any, Any]] = {}
        for k, v in vnode.value:
            if not isinstance(k, yaml.ScalarNode):
                loc.fail(k, "keys must be plain names")
            if k.value in given:
                loc.fail(k, f"key '{shown(k.value)}' given twice in one variant", k.value)
            given[k.value] = (k, v)
        if "scheme" not in given:
            loc.fail(vnode, "a variant needs a 'scheme'", "scheme")
        snode = given.pop("scheme")[1]
        own_widths = None
        if "widths" in given:  # a variant measured at some of the sweep's widths only
            wnode = given.pop("widths")[1]
            own_widths = _widths(_Loc(loc.source), wnode)
            for w, item in zip(own_widths, wnode.value if isinstance(wnode, yaml.SequenceNode) else [wnode]):
                if w not in loc.width_nodes:
                    loc.fail(item, f"width {w} is not one of the sweep's widths "
                                   f"({', '.join(map(str, loc.width_nodes))})", "widths")
        names = _values(loc, "scheme", snode)
        if any(n == EVERY for n, _ in names):
            if len(names) > 1 or given or own_widths:
                loc.fail(snode, "'scheme: all' stands alone in its variant (it brings every scheme with its defaults)",
                         "scheme")
            out += _every(vnode)
            continue
        for sname, sn in names:
            if not isinstance(sname, str) or sname not in registry:
                loc.fail(sn, f"unknown scheme '{shown(sname)}'" + suggest(str(sname), registry), "scheme")
            own = {o.key: o for o in registry[sname].options}
            axes = []
            for key, (kn, valnode) in given.items():
                if key in ("name", "width", "carry_in", "carry_out"):
                    loc.fail(kn, f"'{key}' is set for the whole sweep, not in a variant", key)
                if key not in own:
                    loc.fail(kn, f"key '{shown(key)}' does not apply to scheme '{sname}'"
                             + (suggest(key, own) if own else " (it has no keys of its own)"), key)
                vals = []
                for v, vn in _values(loc, key, valnode):
                    if v == EVERY and own[key].choices and EVERY not in own[key].choices:
                        vals += [(c, vn) for c in own[key].choices]
                    else:
                        vals.append((v, vn))
                axes.append([(key, v, vn, kn) for v, vn in vals])
            for combo in itertools.product(*axes):
                out.append(_Variant(sname, tuple(combo), vnode, widths=own_widths))
    return out


def _values(loc: _Loc, key: str, node) -> list[tuple[Any, Any]]:
    """A key's values with their nodes: a list is one value per entry, anything else one value."""
    if isinstance(node, yaml.SequenceNode):
        if not node.value:
            loc.fail(node, f"'{key}' is an empty list: give at least one value", key)
        return [(construct(item, key, loc.source), item) for item in node.value]
    return [(construct(node, key, loc.source), node)]


def _every(node) -> list[_Variant]:
    """Every registered scheme but the baseline, taking in turn each value of the first key it declares with
    a fixed set of values (prefix: the network; chain-select: the join); its other keys keep their defaults
    (an FPGA target is a device to choose, not an adder to compare: `target: all` in a variant sweeps it)."""
    out = []
    for sc in schemes().values():
        if sc.name == BASELINE:
            continue
        first = next((o for o in sc.options if o.choices), None)
        for c in first.choices if first else [None]:
            keys = ((first.key, c, node, node),) if first else ()
            out.append(_Variant(sc.name, keys, node, every=True))
    return out


def label(scheme: str, keys) -> str:
    """How a variant is called in tables and legends: the scheme, then each key it was given."""
    if scheme == BASELINE:
        return "+"
    registry = schemes()
    own = {o.key: o for o in registry[scheme].options} if scheme in registry else {}
    parts = [scheme]
    for key, value in keys:
        if key in own and own[key].choices:
            parts.append(str(value))
        elif value is True:
            parts.append(key)
        elif value is False:
            parts.append(f"no-{key}")
        else:
            parts.append(f"{key}={_text(value)}")
    return " ".join(parts)


def _text(v) -> str:
    if isinstance(v, (list, tuple)):
        return ",".join(_text(x) for x in v)
    return str(v)


def spec_name(sweep: str, lab: str, width: int) -> str:
    """A legal, unique-per-label module name: the sweep, the label's letters, the width."""
    slug = re.sub(r"[^A-Za-z0-9]+", "_", "plus" if lab == "+" else lab).strip("_").lower()
    name = f"{sweep}_{slug}_w{width}"
    if len(name) > MAX_NAME:
        digest = hashlib.sha256(lab.encode()).hexdigest()[:10]
        name = f"{sweep}_{slug[: MAX_NAME - len(sweep) - 24]}_{digest}_w{width}"
    return name


def _expand(loc: _Loc, name: str, widths, flags, families, variants: list[_Variant], nodes) -> Sweep:
    registry = schemes()
    points: list[Point] = []
    skipped: list[Skipped] = []
    seen: dict[tuple, tuple[str, _Variant]] = {}  # (width, resolved spec) -> first label that gave it
    labels = ["+"]
    named = {label(v.scheme, [(k, val) for k, val, _, _ in v.keys]) for v in variants if not v.every}
    for w in widths:
        base = from_mapping({"name": spec_name(name, "+", w), "width": w, "scheme": BASELINE, **flags},
                            loc.source, {}, max_name=MAX_NAME + 16)
        points.append(Point(base, "+"))
        seen[(w, _content(base))] = ("+", None)
    for v in variants:
        lab = label(v.scheme, [(k, val) for k, val, _, _ in v.keys])
        if v.every and lab in named:
            continue  # the file names this variant itself (with widths of its own, perhaps)
        sch = registry[v.scheme]
        for w in v.widths or widths:
            if w > min(sch.max_width, MAX_WIDTH):
                skipped.append(Skipped(lab, w, f"scheme '{v.scheme}' goes up to {sch.max_width} bits"))
                continue
            data = {"name": spec_name(name, lab, w), "width": w, "scheme": v.scheme, **flags}
            pos = {"scheme": _at(v.node), "width": _at(loc.width_nodes[w]), "name": _at(nodes["name"][1])}
            kpos = dict(pos)
            for key, val, vn, kn in v.keys:
                data[key] = val
                pos[key], kpos[key] = _at(vn), _at(kn)
            for key in flags:
                if key in nodes:
                    pos[key] = kpos[key] = _at(nodes[key][1])
            try:
                spec = from_mapping(data, loc.source, pos, kpos, max_name=MAX_NAME + 16)
            except SpecError as exc:
                if v.every:
                    skipped.append(Skipped(lab, w, exc.message))
                    continue
                at = f" (at width {w})" if len(widths) > 1 else ""
                raise SpecError(exc.message + at, exc.file, exc.line, exc.col, exc.field) from None
            key = (w, _content(spec))
            if key in seen:
                first_label, first = seen[key]
                if v.every or (first is not None and first.every):
                    continue  # `all` brought in what the file also names: keep one
                line = v.node.start_mark.line + 1
                raise SpecError(f"this variant ({lab}) is the same adder as '{first_label}' at {w} bits",
                                loc.source, line, v.node.start_mark.column + 1, "variants")
            seen[key] = (lab, v)
            points.append(Point(spec, lab))
            if lab not in labels:
                labels.append(lab)
    points.sort(key=lambda p: (widths.index(p.spec.width), labels.index(p.label)))
    return Sweep(name, loc.source, widths, flags["carry_in"], flags["carry_out"], families, tuple(points),
                 tuple(skipped), tuple(labels))


def _at(node) -> tuple[int, int]:
    return node.start_mark.line + 1, node.start_mark.column + 1


def _content(spec: Spec) -> tuple:
    """What makes two specs the same adder: everything but the name."""
    d = spec.to_dict()
    d.pop("name")
    return tuple(sorted((k, repr(v)) for k, v in d.items()))


def content_dict(spec: Spec) -> dict:
    d = spec.to_dict()
    d.pop("name")
    return d
