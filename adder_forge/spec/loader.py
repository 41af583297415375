"""Loading and validating adder specs from YAML, with file, line and column on every error."""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

from ..base.errors import SpecError
from ..base.keywords import BUILTIN_NAMES, IDENT, RESERVED
from .pipeline import COMBINATIONAL, Pipeline, parse_pipeline
from .registry import MAX_WIDTH, Option, bool_option, choice_option, schemes, shown, suggest, type_name, yaml11_hint


# Names the tool derives from a spec's name or uses for its own modules. A spec name may not take one of
# them, so that no module or file the tool writes can clash with a user's adder (README, "Names").
RESERVED_PREFIX = "adder_forge_"  # the proof's miter, the simulation batch top, the FPGA wrapper top
RESERVED_SUFFIX = "_tb"  # NAME_tb is the testbench module (and file) of NAME
# The iCE40 cell library that Yosys's synth_ice40 reads beside the design (SB_LUT4, SB_CARRY, ...,
# ICESTORM_LC): a module of that name is a re-definition there. Case-sensitive, as Verilog is.
CELL_LIBRARY_PREFIXES = ("SB_", "ICESTORM_")
DERIVED_SUFFIXES = ("_tb", "__reference")  # the testbench, the proof's reference
MAX_NAME = 128  # file names are the name plus a suffix; most file systems stop at 255 bytes
MAX_SPEC_BYTES = 16 << 20  # a spec is a few lines; this bounds what a mistaken path can make us read

# Keys every spec may carry; a scheme declares the rest (registry.Option).
COMMON_KEYS = ("name", "width", "scheme", "carry_in", "carry_out", "form", "operation", "overflow", "pipeline")
# The shapes NAME.v can take: one module fixed to the spec's width, gate by gate (flat); the same module with
# (* keep *) on every carry, prefix, select and skip net, so that FPGA synthesis builds the structure as
# written instead of re-mapping it (kept; emit/verilog.py KEEP_ROLES, docs/fpga.md); or one module with a
# WIDTH parameter whose generate loops build the same structure at any width (emit/param_verilog.py,
# which also says which schemes have that form).
FORMS = ("flat", "kept", "parameterized")
OPERATIONS = ("add", "subtract", "add-subtract")  # what the adder computes (ir/interface.py says how)
_OPERATION_ALIASES = {"sub": "subtract", "minus": "subtract", "addsub": "add-subtract", "add_subtract": "add-subtract",
                      "add/subtract": "add-subtract", "add-sub": "add-subtract", "plus": "add"}


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
    form: str = "flat"  # FORMS
    operation: str = "add"  # add, subtract or add-subtract
    overflow: bool = False  # an output for signed two's-complement overflow
    pipeline: Pipeline = COMBINATIONAL  # register ranks and their clocking (spec/pipeline.py)

    @property
    def network_carry_in(self) -> bool:
        """Whether a carry enters the carry network: the carry-in port, or subtraction's +1 (or ``sub``)."""
        return self.carry_in or self.operation != "add"

    @property
    def network_carry_out(self) -> bool:
        """Whether the network's carry out is read: the cout port, or the overflow output."""
        return self.carry_out or self.overflow

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

    def to_dict(self) -> dict[str, Any]:
        d: dict[str, Any] = {"name": self.name, "width": self.width, "scheme": self.scheme,
                             "carry_in": self.carry_in, "carry_out": self.carry_out}
        if self.operation != "add":  # the plain adder's files read as before
            d["operation"] = self.operation
        if self.overflow:
            d["overflow"] = True
        for k, v in self.options:
            d[k] = _plain(v)
        if self.form != "flat":  # only when asked for, so flat reports and headers read as before
            d["form"] = self.form
        if self.pipeline.clocked:
            d["pipeline"] = self.pipeline.to_dict()
        return d


def _plain(v):
    if isinstance(v, tuple):
        return [_plain(x) for x in v]
    return v


def make_spec(name: str, width: int, scheme: str, carry_in: bool = True, carry_out: bool = True,
              source: str = "<spec>", form: str = "flat", **options) -> Spec:
    """Validate a spec given as Python values (tests, the explorer); same rules as a YAML file."""
    data = {"name": name, "width": width, "scheme": scheme, "carry_in": carry_in, "carry_out": carry_out}
    if form != "flat":
        data["form"] = form
    data.update({k.replace("__", "-"): v for k, v in options.items()})
    # The tool's own specs (explore's variants, say) may run past a user's limit by a derived suffix.
    return from_mapping(data, source, {}, max_name=MAX_NAME + max(map(len, DERIVED_SUFFIXES)))


def load_spec(path: str | Path) -> Spec:
    return parse_spec(read_source(path), str(path))


def read_source(path: str | Path, what: str = "spec") -> str:
    """The text of a YAML input file (a spec, a sweep); anything that is not a readable UTF-8 file of
    reasonable size is a SpecError at line 1."""
    path = Path(path)
    src = str(path)
    try:
        if path.is_dir():
            raise SpecError(f"is a folder, not a {what} file", src, 1, 1)
        if path.exists() and not path.is_file():  # a FIFO or a device would block a read, or never end
            raise SpecError("is not a regular file", src, 1, 1)
        if path.is_file() and path.stat().st_size > MAX_SPEC_BYTES:
            raise SpecError(f"the {what} is larger than {MAX_SPEC_BYTES >> 20} MiB: is this the right file?", src, 1, 1)
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise SpecError("no such file", src, 1, 1) from None
    except UnicodeDecodeError as exc:
        line = exc.object[: exc.start].count(b"\n") + 1
        col = exc.start - (exc.object.rfind(b"\n", 0, exc.start) + 1) + 1
        raise SpecError(f"the {what} is not UTF-8 text (byte 0x{exc.object[exc.start]:02x})", src, line, col) from None
    except OSError as exc:
        raise SpecError(f"cannot read {what}: {exc.strerror or exc}", src, 1, 1) from None
    return text


# -- YAML: the 1.2 core schema --------------------------------------------------------------------------------
# PyYAML resolves plain scalars by YAML 1.1, where `no` is false, `010` is 8 and `1:30` is 90. A spec reads
# the same in every YAML 1.2 tool instead: booleans are true/false, integers decimal, 0x.. or 0o.., and
# spellings that mean something else in YAML 1.1 are rejected (a leading zero) or stay strings, which the
# key's own check then rejects with a hint.
class _Loader(yaml.SafeLoader):
    yaml_implicit_resolvers: dict = {}


_Loader.add_implicit_resolver("tag:yaml.org,2002:bool", re.compile(r"^(?:true|True|TRUE|false|False|FALSE)$"),
                              list("tTfF"))
_Loader.add_implicit_resolver("tag:yaml.org,2002:int", re.compile(r"^(?:[-+]?[0-9]+|0o[0-7]+|0x[0-9a-fA-F]+)$"),
                              list("-+0123456789"))
_Loader.add_implicit_resolver(
    "tag:yaml.org,2002:float",
    re.compile(r"^(?:[-+]?(?:\.[0-9]+|[0-9]+(?:\.[0-9]*)?)(?:[eE][-+]?[0-9]+)?|[-+]?\.(?:inf|Inf|INF)|\.(?:nan|NaN|NAN))$"),
    list("-+0123456789."))
_Loader.add_implicit_resolver("tag:yaml.org,2002:null", re.compile(r"^(?:~|null|Null|NULL|)$"), ["~", "n", "N", ""])

_MAX_DIGITS = 1000  # no key takes a number this long; int() of a longer one is slow or refused


_INT_FORM = re.compile(r"[-+]?(?:0[xX][0-9a-fA-F]+|0[oO][0-7]+|[0-9]+)\Z")


def _construct_int(loader, node):
    text = loader.construct_scalar(node)
    where = node.start_mark
    if not isinstance(text, str) or not _INT_FORM.match(text):  # also for an explicit !!int tag
        raise yaml.constructor.ConstructorError(None, None, f"'{shown(text)}' is not an integer", where)
    body = text.lstrip("+-")
    neg = text.startswith("-")
    try:
        if body[:2] in ("0x", "0X", "0o", "0O"):
            digits = body[2:]
            if len(digits) > _MAX_DIGITS:
                raise yaml.constructor.ConstructorError(None, None, f"a number of {len(digits)} digits is too long", where)
            v = int(digits, 16 if body[1] in "xX" else 8)
        else:
            if len(body) > 1 and body[0] == "0" and body.isdigit():
                raise yaml.constructor.ConstructorError(
                    None, None, f"'{shown(text)}' has a leading zero (octal in YAML 1.1, decimal in YAML 1.2): write it "
                    "without the zero, or 0o... for octal", where)
            if len(body) > _MAX_DIGITS:
                raise yaml.constructor.ConstructorError(None, None, f"a number of {len(body)} digits is too long", where)
            v = int(body, 10)
    except ValueError:
        raise yaml.constructor.ConstructorError(None, None, f"'{shown(text)}' is not an integer", where) from None
    return -v if neg else v


def _construct_float(loader, node):
    text = loader.construct_scalar(node)
    low = text.lower().lstrip("+-")
    try:
        if low in (".inf", ".nan"):
            v = float(low[1:])
            return -v if text.startswith("-") else v
        return float(text)
    except ValueError:
        raise yaml.constructor.ConstructorError(None, None, f"'{shown(text)}' is not a number", node.start_mark) from None


_Loader.add_constructor("tag:yaml.org,2002:int", _construct_int)
_Loader.add_constructor("tag:yaml.org,2002:float", _construct_float)


def _first_line(exc: BaseException) -> str:
    return (str(exc).strip().splitlines() or [type(exc).__name__])[0]


def compose(text: str, source: str = "<spec>"):
    """The YAML node tree of ``text`` (YAML 1.2 core schema), each node with its line and column; a YAML
    error is a SpecError at its place. Shared by specs and sweep files."""
    try:
        root = yaml.compose(text, Loader=_Loader)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line, col = (mark.line + 1, mark.column + 1) if mark else (1, 1)
        what = exc.problem or exc.context or "invalid YAML"
        raise SpecError(f"invalid YAML: {what}", source, line, col) from None
    except yaml.reader.ReaderError as exc:  # a control character: PyYAML gives a character offset only
        before = text[: exc.position]
        line, col = before.count("\n") + 1, exc.position - (before.rfind("\n") + 1) + 1
        code = exc.character if isinstance(exc.character, int) else ord(exc.character)
        raise SpecError(f"invalid YAML: character U+{code:04X} is not allowed in a YAML file", source,
                        line, col) from None
    except yaml.YAMLError as exc:
        raise SpecError(f"invalid YAML: {_first_line(exc)}", source, 1, 1) from None
    except RecursionError:
        raise SpecError("invalid YAML: nested too deeply", source, 1, 1) from None
    return root


def construct(node, key: str, source: str):
    """The Python value of the YAML node given for ``key``; an error is a SpecError at the value."""
    try:
        return _Loader("").construct_object(node, deep=True)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or node.start_mark
        why = exc.problem or _first_line(exc)
        raise SpecError(f"invalid value for '{shown(key)}': {why}", source, mark.line + 1, mark.column + 1,
                        key) from None
    except (yaml.YAMLError, ValueError, TypeError, RecursionError) as exc:
        why = "nested too deeply" if isinstance(exc, RecursionError) else _first_line(exc)
        raise SpecError(f"invalid value for '{shown(key)}': {why}", source, node.start_mark.line + 1,
                        node.start_mark.column + 1, key) from None


def parse_spec(text: str, source: str = "<spec>") -> Spec:
    root = compose(text, source)
    if root is None:
        raise SpecError("the spec is empty: expected a mapping with at least name, width and scheme", source, 1, 1)
    if not isinstance(root, yaml.MappingNode):
        raise SpecError("the spec must be a mapping of keys to values", source,
                        root.start_mark.line + 1, root.start_mark.column + 1)
    data: dict[str, Any] = {}
    pos: dict[str, tuple[int, int]] = {}
    key_pos: dict[str, tuple[int, int]] = {}
    for knode, vnode in root.value:
        kl, kc = knode.start_mark.line + 1, knode.start_mark.column + 1
        if not isinstance(knode, yaml.ScalarNode):
            raise SpecError("keys must be plain names", source, kl, kc)
        key = knode.value
        if key in data:
            raise SpecError(f"key '{shown(key)}' given twice (first at line {key_pos[key][0]})", source, kl, kc, key)
        data[key] = construct(vnode, key, source)
        pos[key] = (vnode.start_mark.line + 1, vnode.start_mark.column + 1)
        key_pos[key] = (kl, kc)
        if isinstance(vnode, yaml.MappingNode):  # nested keys (pipeline.stages) get places of their own
            for sub_k, sub_v in vnode.value:
                if isinstance(sub_k, yaml.ScalarNode):
                    pos[f"{key}.{sub_k.value}"] = (sub_v.start_mark.line + 1, sub_v.start_mark.column + 1)
                    key_pos[f"{key}.{sub_k.value}"] = (sub_k.start_mark.line + 1, sub_k.start_mark.column + 1)
    return from_mapping(data, source, pos, key_pos)


def from_mapping(data: dict[str, Any], source: str, pos: dict[str, tuple[int, int]],
                 key_pos: dict[str, tuple[int, int]] | None = None, max_name: int = MAX_NAME) -> Spec:
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
            fail_at("scheme", f"unknown scheme '{shown(scheme_name)}'" + suggest(scheme_name, registry))
    own: dict[str, Option] = {o.key: o for o in registry[scheme_name].options} if scheme_name else {}

    for key in data:  # misspelt keys first: "widht" should say so, not that "width" is missing
        if key in COMMON_KEYS or key in own:
            continue
        if scheme_name and key in every_option:
            users = sorted(sc.name for sc in registry.values() if key in {o.key for o in sc.options})
            fail_at(key, f"key '{shown(key)}' does not apply to scheme '{scheme_name}' (it is for: {', '.join(users)})",
                    at_key=True)
        fail_at(key, f"unknown key '{shown(key)}'" + suggest(key, set(COMMON_KEYS) | (set(own) if scheme_name else every_option)),
                at_key=True)

    for req in ("name", "width", "scheme"):
        if req not in data:
            raise SpecError(f"missing required key '{req}'", source, end[0], 1, req)
    sch = registry[scheme_name]

    name = data["name"]
    if not isinstance(name, str):
        fail_at("name", f"'name' must be a Verilog identifier, got {type_name(name)}")
    if not IDENT.match(name):
        fail_at("name", f"'name' must be a legal Verilog identifier (letters, digits, _; not starting with a digit), got '{shown(name)}'")
    if name in RESERVED:
        fail_at("name", f"'name' '{name}' is a Verilog/SystemVerilog keyword")
    if name in BUILTIN_NAMES:
        fail_at("name", f"'name' '{name}' is the name of SystemVerilog's built-in package")
    if len(name) > max_name:
        fail_at("name", f"'name' is {len(name)} characters long; at most {max_name} (file names are built from it)")
    if name.lower().startswith(RESERVED_PREFIX):
        fail_at("name", f"'name' '{name}': names starting with '{RESERVED_PREFIX}' are reserved for the tool's own modules")
    for lib in CELL_LIBRARY_PREFIXES:
        if name.startswith(lib):
            fail_at("name", f"'name' '{name}': names starting with '{lib}' are the iCE40 cell library's "
                            "(the FPGA flow reads it beside the design)")
    if name.lower().endswith(RESERVED_SUFFIX):
        fail_at("name", f"'name' '{name}': names ending in '{RESERVED_SUFFIX}' are reserved "
                        f"('{name}' is the testbench module of '{name[:-len(RESERVED_SUFFIX)]}')")

    width = data["width"]
    if isinstance(width, bool) or not isinstance(width, int):
        fail_at("width", f"'width' must be an integer, got {type_name(width)}" + yaml11_hint(width))
    limit = min(sch.max_width, MAX_WIDTH)
    if not 1 <= width <= limit:
        why = f" for scheme '{scheme_name}'" if sch.max_width < MAX_WIDTH else ""
        fail_at("width", f"'width' must be between 1 and {limit}{why}, got {shown(width)}")

    flags = {}
    for key, default in (("carry_in", True), ("carry_out", True), ("overflow", False)):
        opt = bool_option(key, default, "")
        if key in data:
            flags[key] = opt.parse(data[key], lambda m, k=key: fail_at(k, m))
        else:
            flags[key] = default
    operation = data.get("operation", "add")
    if not isinstance(operation, str):
        fail_at("operation", f"'operation' must be one of {', '.join(OPERATIONS)}, got {type_name(operation)}")
    if operation not in OPERATIONS:
        fail_at("operation", f"unknown operation '{shown(operation)}'" + suggest(operation, OPERATIONS, _OPERATION_ALIASES))

    form = "flat"
    if "form" in data:
        form = choice_option("form", FORMS, "flat", "").parse(data["form"], lambda m: fail_at("form", m))

    options = []
    for o in sch.options:
        if o.key in data:
            options.append((o.key, o.parse(data[o.key], lambda m, k=o.key: fail_at(k, m))))
        else:
            options.append((o.key, o.default))

    def fail_nested(key: str, message: str, at_key: bool = False):
        fail_at(key if key in pos else "pipeline", message, at_key)

    pipe = parse_pipeline(data.get("pipeline"), fail_nested)
    positions = tuple((k, *pos[k]) for k in pos if k in data or k.startswith("pipeline."))
    spec = Spec(name, width, scheme_name, flags["carry_in"], flags["carry_out"], tuple(options), source, positions,
                form, operation, flags["overflow"], pipe)
    if pipe.clocked and form == "parameterized":
        fail_at("pipeline", f"'pipeline' takes the flat or kept form only; the {form} form has no register stages "
                            "(leave out 'form' or 'pipeline')")
    if sch.validate is not None:
        sch.validate(spec)
    return spec


def check_names(specs: list[Spec]) -> None:
    """Names of several specs in one command must not clash: not the same (ignoring case, since their files
    share folders on case-insensitive file systems), and none the name the tool derives from another
    (NAME_tb, NAME__reference). Raises a SpecError at the later spec's name."""
    seen: dict[str, Spec] = {}
    for s in specs:
        key = s.name.lower()
        if key in seen:
            first = seen[key]
            same = "" if first.name == s.name else f" (as '{first.name}', ignoring case)"
            raise s.error("name", f"module name '{s.name}' is also used by {first.source}{same}")
        seen[key] = s
    for s in specs:
        for suffix in DERIVED_SUFFIXES:
            base = s.name[: -len(suffix)] if s.name.lower().endswith(suffix) else None
            if base and base.lower() in seen:
                other = seen[base.lower()]
                raise s.error("name", f"module name '{s.name}' is the name the tool gives a module of "
                                      f"'{other.name}' ({other.source}): choose another name")
