"""`report`: estimates and synthesis figures for each spec, always beside Verilog's `+` at the same width.

For every spec: the netlist and estimate figures (analysis/figures.py) and each requested synthesis flow
(flows.py), and the same for the ``behavioral`` scheme (one `+`) with the same width and carry ports, so
every report says how the generated adder compares with what the synthesis tool makes of `+`.

Every figure is a measurement record (base/records.py). The records go into the spec's output folder as
the ``measurements`` block of DIR/NAME/NAME.json (the folder is built first when it is missing or was
built from a different spec); the printed table, ``report --csv`` and the comparison with `+` are views of
the same records (``Measured``).
"""

from __future__ import annotations

import contextlib
import json
import os
import tempfile
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Callable, Iterable

from ..analysis import figures as analysis_figures
from ..analysis.delay import estimates
from ..analysis.structure import LEFT_TO_SYNTHESIS
from ..base.errors import OutputConflict, OutputError, ToolError
from ..base.records import FIELDS, Figure, Record, csv_text, digest_of, from_dict, make_records, strip, values
from ..emit.design import Design, design
from ..emit.outputs import Folder, check_replaceable, fingerprint, read_manifest, sha256_text, update_files, write_folders
from ..emit.summary import description, to_json
from ..spec.loader import Spec, make_spec
from .flows import FLOWS, get_flow, require, synthesize, tool_version

BASELINE = "behavioral"
BLOCK = "measurements"  # the key of NAME.json that `report` owns
ABOUT = ("records: one per measured figure (spec, digest of the resolved spec, figure, value, unit, source, "
         "tool, tool_version, seed); baseline: the same for Verilog's + at this width and carry ports; "
         "details: how the figures were measured (scripts, cell types, paths, errors); versus_plus: the "
         "compared figures over the baseline's (below 1: smaller than +), computed from the records")


def spec_digest(spec: Spec) -> str:
    """The digest records carry: the resolved spec without its name (the name is the record's own field),
    so two specs that differ only in name measure the same adder."""
    return digest_of({k: v for k, v in spec.to_dict().items() if k != "name"})


def sources(flows: Iterable[str]) -> list[tuple[str, tuple[Figure, ...]]]:
    """(source name, declared figures) in table order: the analyses, then the flows."""
    return [*analysis_figures.SOURCES.items(), *((f, get_flow(f).figures) for f in flows)]


def declared(name: str, flows: Iterable[str] = ()) -> Figure:
    """The declaration of a figure by name, among the analyses' and the given (default: all) flows'."""
    for _src, figs in sources(list(flows) or list(FLOWS)):
        for f in figs:
            if f.name == name:
                return f
    raise KeyError(name)


@dataclass(frozen=True)
class Figures:
    """The records of one design, and what each source said about how it measured them (``details``:
    scripts, cell types, critical paths; ``{"error": ...}`` for a flow that failed on this design)."""

    spec: str
    digest: str
    records: tuple[Record, ...]
    details: dict = field(default_factory=dict, compare=False)
    label: str = ""  # the scheme's short description of the design (Scheme.describe)

    def values(self) -> dict[str, int | float]:
        return values(self.records, self.digest)

    def errors(self) -> dict[str, str]:
        return {src: d["error"] for src, d in self.details.items() if isinstance(d, dict) and "error" in d}


def measure_design(d: Design, flows: Iterable[str], say: Callable[[str], None] | None = None,
                   what: str | None = None) -> Figures:
    """Every figure of one design: netlist, estimates, and each flow (a flow that fails on this design is
    kept as an error in ``details``, the others still run). Writes nothing; the work folders are temporary."""
    say = say or (lambda _m: None)
    spec, digest = d.spec, spec_digest(d.spec)
    tag = what or spec.name
    recs: list[Record] = []
    details: dict = {}
    say(f"{tag}: estimates")
    raw_of = {"netlist": d.metrics, "estimates": estimates(d.net)}
    for src, figs in analysis_figures.SOURCES.items():
        raw = raw_of[src]
        recs += make_records(spec.name, digest, src, figs, raw, analysis_figures.TOOL, tool_version)
        if src == "estimates":
            details[src] = strip(raw, figs)
    for fl in flows:
        flow = get_flow(fl)
        say(f"{tag}: {fl}")
        try:
            with tempfile.TemporaryDirectory(prefix=f"adder_forge_{fl}_") as tmp:
                raw = synthesize(fl, spec.name, d.verilog, width=spec.width, carry_in=spec.carry_in,
                                 carry_out=spec.carry_out, workdir=Path(tmp))
        except ToolError as exc:
            # One design that a flow cannot handle (too big for the FPGA, a tool crash) must not lose the
            # figures of the others; the error goes into the report and the table.
            details[fl] = {"error": exc.message + (f": {exc.hint.splitlines()[-1]}" if exc.hint else "")}
            continue
        seed = raw.get("seed") if isinstance(raw.get("seed"), int) else None
        recs += make_records(spec.name, digest, fl, flow.figures, raw, flow.main_tool, tool_version, seed)
        details[fl] = strip(raw, flow.figures)
    return Figures(spec.name, digest, tuple(recs), details, description(spec, d.net.meta).label)


def baseline_spec(spec: Spec) -> Spec:
    """Verilog's `+` with the spec's width and carry ports. Its name depends on nothing but these, so the
    baseline of a spec is the same whatever other specs a command measures and in whatever order; the
    reserved prefix keeps it apart from every spec's module."""
    name = f"adder_forge_plus{spec.width}" + ("" if spec.carry_in else "_nocin") + ("" if spec.carry_out else "_nocout")
    return replace(make_spec("plus", spec.width, BASELINE, spec.carry_in, spec.carry_out, source="<baseline>"),
                   name=name)


@dataclass(frozen=True)
class Measured:
    """One spec's figures beside those of `+` (``plus``), for the flows asked; what every view reads."""

    spec: Spec
    flows: tuple[str, ...]
    figures: Figures
    plus: Figures
    json: Path | None = None

    @property
    def label(self) -> str:
        """The scheme's own short description ("prefix (kogge-stone)", "carry-skip (block [4, 8, 8, 4])")."""
        return self.figures.label or self.spec.scheme

    def versus_plus(self) -> dict:
        return compare(self.figures.values(), self.plus.values(), self.flows)


def compare(ours: dict, plus: dict, flows: Iterable[str]) -> dict:
    """{figure: {"design", "plus", "ratio"}} for the compared figures: the design's over the baseline's
    (below 1: better); a figure missing or zero on either side is left out."""
    out = {}
    for _src, figs in sources(flows):
        for f in figs:
            a, b = ours.get(f.name), plus.get(f.name)
            if f.compared and a and b:
                out[f.name] = {"design": a, "plus": b, "ratio": round(a / b, 3)}
    return out


def measure_specs(specs: list[Spec], flows: list[str], out_dir: Path,
                  progress: Callable[[str], None] | None = None, force: bool = False,
                  csv: Path | None = None) -> list[Measured]:
    """Figures of every spec and of `+` at its width, written into NAME.json (and all records into the
    CSV file ``csv`` when given)."""
    say = progress or (lambda _m: None)
    flows = check_flows(list(flows))
    require(flows)  # a missing tool fails here, before anything runs
    if csv is not None:
        check_csv(Path(csv), force)
    # Every folder is (re)built and its NAME.json checked before the first synthesis run, so that a file in
    # the way stops the command before minutes of work, not after.
    ready = []
    for spec in specs:
        d = design(spec)  # the same files `build` writes, in case the folder has to be (re)built
        ready.append((d, _folder(d, out_dir, say, force)))
    baselines: dict[str, Figures] = {}
    results = []
    for d, path in ready:
        spec = d.spec
        mine = measure_design(d, flows, say)
        base = baseline_spec(spec)
        if base.name not in baselines:
            baselines[base.name] = measure_design(design(base, tb_random=0), flows, say, f"+ at {spec.width} bits")
        m = Measured(spec, tuple(flows), mine, baselines[base.name], path)
        _write(path, m, force)
        results.append(m)
    if csv is not None:
        write_csv(Path(csv), results, force)
    return results


def check_flows(flows: list[str]) -> list[str]:
    for f in flows:
        get_flow(f)
    return list(dict.fromkeys(flows))


# -- NAME.json -------------------------------------------------------------------------------------------------
def block(m: Measured) -> dict:
    """The ``measurements`` block of NAME.json."""
    return {
        "about": ABOUT,
        "flows": list(m.flows),
        "records": [r.to_dict() for r in m.figures.records],
        "details": m.figures.details,
        "baseline": {"spec": m.plus.spec, "digest": m.plus.digest, "scheme": BASELINE,
                     "records": [r.to_dict() for r in m.plus.records], "details": m.plus.details},
        "versus_plus": m.versus_plus(),
    }


def read_block(data: dict) -> tuple[tuple[Record, ...], tuple[Record, ...]]:
    """(design records, baseline records) from the ``measurements`` block of a NAME.json; ValueError when
    the block is not one `report` wrote."""
    b = data.get(BLOCK) if isinstance(data, dict) else None
    if not isinstance(b, dict) or not isinstance(b.get("records"), list) or not isinstance(b.get("baseline"), dict):
        raise ValueError("no measurements block")
    return tuple(map(from_dict, b["records"])), tuple(map(from_dict, b["baseline"].get("records", [])))


def design_key(d: Design) -> str:
    """What a design's measured figures depend on: the tool version, the spec (its resolved values, not
    its wording or key order) and the emitted module. Equal keys: figures measured before still hold."""
    from ..base.version import __version__

    return fingerprint(__version__, d.spec.to_dict(), sha256_text(d.verilog))


def carry_figures(fname: str, old: Path, new: str, same: bool) -> tuple[str, str | None]:
    """Carry ``measurements`` from the old NAME.json into the new one when the design is the same."""
    if not fname.endswith(".json"):
        return new, None
    try:
        figures = json.loads(old.read_text(encoding="utf-8")).get(BLOCK)
        data = json.loads(new)
    except (OSError, ValueError, AttributeError):
        return new, None
    if not figures or not isinstance(data, dict):
        return new, None
    if not same:
        return new, "dropped the figures of the last report (the spec or the generator changed)"
    data[BLOCK] = figures
    return to_json(data), "kept the figures of the last report"


def output_folder(d: Design) -> Folder:
    """The output folder of a design, as `build` and `report` write it."""
    return Folder(d.spec.name, d.files(), design_key(d), carry_figures)


def _folder(d: Design, out_dir: Path, say: Callable[[str], None], force: bool = False) -> Path:
    """DIR/NAME/NAME.json, building the folder (as `build` does) when it is missing or holds the design of
    another spec or of another version of the generator."""
    name = d.spec.name
    folder = Path(out_dir) / name
    path = folder / f"{name}.json"
    old = read_manifest(folder) if folder.is_dir() else None
    if old and old.get("design") == design_key(d) and path.is_file():
        check_replaceable(path, force)
        return path
    say(f"{name}: building {folder}/ first")
    write_folders(Path(out_dir), [output_folder(d)], force=force)
    return path


def _write(path: Path, m: Measured, force: bool = False) -> None:
    """Set the ``measurements`` block of NAME.json (the rest is `build`'s and stays as it was) through the
    folder's manifest, so that the next build knows the file as its own and carries the block over while
    the design is unchanged."""
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        data = None
    if not isinstance(data, dict) or data.get("tool") != "adder_forge" or data.get("name") != m.spec.name:
        raise OutputConflict(path, "is not the JSON report adder_forge wrote; rebuild it with `build`")
    data[BLOCK] = block(m)
    update_files(path.parent.parent, path.parent.name, {path.name: to_json(data)}, force=force)


# -- CSV -------------------------------------------------------------------------------------------------------
CSV_HEADER = ",".join(FIELDS)


def check_csv(path: Path, force: bool = False) -> None:
    """The CSV file may be new, or one `report` wrote (its first line is our header); anything else is the
    user's and is replaced only with ``force``. Checked before any work."""
    if path.is_dir():
        raise OutputConflict(path, "is a folder, not a CSV file")
    if not path.exists() or force:
        return
    try:
        with open(path, encoding="utf-8", errors="replace") as fh:
            first = fh.readline().rstrip("\r\n")
    except OSError as exc:
        raise OutputConflict(path, f"cannot be read ({exc.strerror or exc})") from None
    if first != CSV_HEADER:
        raise OutputConflict(path, "exists and is not a CSV file `report` wrote (use --force to replace it)")


def all_records(results: Iterable[Measured]) -> list[Record]:
    """The records of every spec, then of each `+` baseline once."""
    out, seen = [], set()
    for m in results:
        out += m.figures.records
    for m in results:
        if m.plus.spec not in seen:
            seen.add(m.plus.spec)
            out += m.plus.records
    return out


def write_csv(path: Path, results: list[Measured], force: bool = False) -> None:
    """All records into ``path``, written whole or not at all (a temporary file renamed into place)."""
    check_csv(path, force)
    text = csv_text(all_records(results))
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent)
        try:
            with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
                fh.write(text)
            os.replace(tmp, path)
        except BaseException:
            with contextlib.suppress(OSError):
                os.unlink(tmp)
            raise
    except OSError as exc:
        raise OutputError(f"cannot write {path}: {exc.strerror or exc}") from None


# -- the printed table ------------------------------------------------------------------------------------------
def _row(name: str, label: str, width: int, f: Figures, cols: list[tuple[str, list[Figure]]]
         ) -> tuple[list[str], list[str]]:
    vals, errs = f.values(), f.errors()
    row, errors = [name, label, str(width)], []
    for src, figs in cols:
        if src in errs:
            row += ["error"] + [""] * (len(figs) - 1)
            errors.append(f"{f.spec} {src}: {errs[src]}")
            continue
        for fig in figs:
            if fig.shown_instead and vals.get(fig.shown_instead) is not None:
                row.append(declared(fig.shown_instead).cell(vals[fig.shown_instead]) + "*")
            else:
                row.append(fig.cell(vals.get(fig.name)))
    return row, errors


def format_table(results: list[Measured]) -> str:
    """The printed table: one row per spec and one for `+` at the same width below it; the columns are
    the figures the analyses and the flows declare with a label."""
    if not results:
        return "(no specs)"
    flows = results[0].flows
    cols = [(src, [f for f in figs if f.label]) for src, figs in sources(flows)]
    cols = [(src, figs) for src, figs in cols if figs]
    head = ["name", "scheme", "width"] + [f.label for _src, figs in cols for f in figs]
    rows, errors = [], []
    for m in results:
        for row, err in (_row(m.spec.name, m.label, m.spec.width, m.figures, cols),
                         _row("  +", BASELINE, m.spec.width, m.plus, cols)):
            rows.append(row)
            errors += err
    widths = [max(len(h), *(len(x[k]) for x in rows)) for k, h in enumerate(head)]
    lines = ["  ".join(h.ljust(w) if k < 2 else h.rjust(w) for k, (h, w) in enumerate(zip(head, widths)))]
    lines.append("  ".join("-" * w for w in widths))
    for row in rows:
        lines.append("  ".join(c.ljust(w) if k < 2 else c.rjust(w) for k, (c, w) in enumerate(zip(row, widths))))
    notes = ["netlist GE: the module as emitted, in 2-input gate equivalents (build's figure); unit delay/area: "
             "unit-gate model; LE: logical effort, each path sized on its own (estimates, not sign-off). "
             f"'-': {LEFT_TO_SYNTHESIS}, the `+` baseline has no netlist of ours."]
    if any("unit_gate_delay_skip_aware" in m.figures.values() for m in results):
        notes.append("*: carry-skip unit delay, skip-aware (its false ripple paths not counted); LE figures count "
                     "them (topological).")
    notes += [get_flow(fl).note for fl in flows if get_flow(fl).note]
    seen = set()
    for e in errors:
        if e not in seen:
            notes.append("error: " + e)
            seen.add(e)
    return "\n".join(lines + [""] + notes)
