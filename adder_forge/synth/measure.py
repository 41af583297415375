"""`report`: estimates and synthesis figures for each spec, always beside Verilog's `+` at the same width.

For every spec: the IR estimates (delay.py) and each requested synthesis flow (synth.py), and the same for
the ``behavioral`` scheme (one `+`) with the same width and carry ports, so every report says how the
generated adder compares with what the synthesis tool makes of `+`. The figures go into the spec's output
folder as the ``measurements`` block of DIR/NAME/NAME.json; the folder is built first when it is missing or
was built from a different spec.
"""

from __future__ import annotations

import json
import tempfile
from pathlib import Path
from typing import Callable

from ..emit.design import Design, design
from ..analysis.delay import estimates
from ..base.errors import UsageError, OutputConflict, SpecError, ToolError
from ..emit.outputs import Folder, check_replaceable, fingerprint, read_manifest, sha256_text, update_files, write_folders
from ..analysis.structure import LEFT_TO_SYNTHESIS
from ..spec.registry import suggest
from ..emit.summary import to_json
from ..spec.loader import Spec, make_spec
from .flows import FLOWS, require, synthesize

BASELINE = "behavioral"
# Figures compared with the baseline: (label, flow, path into the flow's dict). Smaller is better for all.
# Names say what is counted and after which tool: "yosys" is `synth -flatten -noabc` (Yosys's own passes
# have already merged shared logic and removed dead cells), "abc" is after ABC's delay script, "lut6" and
# "ice40" are mapped cells. None of them is the netlist as emitted (metrics.py's netlist_* figures).
COMPARED = (
    ("yosys_cells", "generic", ("structure", "cells")),
    ("yosys_depth", "generic", ("structure", "depth")),
    ("abc_cells", "generic", ("abc_delay", "cells")),
    ("abc_depth", "generic", ("abc_delay", "depth")),
    ("lut6_luts", "lut6", ("luts",)),
    ("lut6_depth", "lut6", ("depth",)),
    ("ice40_lut4", "ice40", ("lut4",)),
    ("ice40_period_ns", "ice40", ("fmax_mhz",)),  # compared as a period, so that smaller is better here too
)


def check_flows(flows: list[str]) -> list[str]:
    out = []
    for f in flows:
        if f not in FLOWS:
            raise UsageError(f"unknown synthesis flow '{f}'" + suggest(f, FLOWS), "report", "--synth")
        if f not in out:
            out.append(f)
    return out


def _label(spec: Spec) -> str:
    net = spec.opt("prefix")
    return f"{spec.scheme} ({net})" if net else spec.scheme


def _dig(d: dict | None, path: tuple[str, ...]):
    for k in path:
        if not isinstance(d, dict) or k not in d:
            return None
        d = d[k]
    return d


def compare(ours: dict, plus: dict) -> dict:
    """{figure: {"design", "plus", "ratio"}}: the design's figure over the baseline's (below 1: better)."""
    out = {}
    for label, fl, path in COMPARED:
        a, b = _dig(ours.get(fl), path), _dig(plus.get(fl), path)
        if not isinstance(a, (int, float)) or not isinstance(b, (int, float)) or not a or not b:
            continue
        if label == "ice40_period_ns":
            a, b = round(1000.0 / a, 3), round(1000.0 / b, 3)
        out[label] = {"design": a, "plus": b, "ratio": round(a / b, 3)}
    return out


def _run_flows(name: str, verilog: str, spec: Spec, flows: list[str], say: Callable[[str], None],
               what: str) -> dict:
    res = {}
    for fl in flows:
        say(f"{what}: {fl}")
        try:
            with tempfile.TemporaryDirectory(prefix=f"adder_forge_{fl}_") as tmp:
                res[fl] = synthesize(fl, name, verilog, width=spec.width, carry_in=spec.carry_in,
                                     carry_out=spec.carry_out, workdir=Path(tmp))
        except ToolError as exc:
            # One design that a flow cannot handle (too big for the FPGA, a tool crash) must not lose the
            # figures of the others; the error goes into the report and the table.
            res[fl] = {"error": exc.message + (f": {exc.hint.splitlines()[-1]}" if exc.hint else "")}
    return res


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
        figures = json.loads(old.read_text(encoding="utf-8")).get("measurements")
        data = json.loads(new)
    except (OSError, ValueError, AttributeError):
        return new, None
    if not figures or not isinstance(data, dict):
        return new, None
    if not same:
        return new, "dropped the figures of the last report (the spec or the generator changed)"
    data["measurements"] = figures
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


def measure_specs(specs: list[Spec], flows: list[str], out_dir: Path,
                  progress: Callable[[str], None] | None = None, force: bool = False) -> list[dict]:
    """Estimates and synthesis figures for every spec and for `+` at its width; written into NAME.json."""
    say = progress or (lambda _m: None)
    flows = check_flows(list(flows))
    require(flows)  # a missing tool fails here, before anything runs
    baselines: dict[tuple[int, bool, bool], dict] = {}
    results = []
    # Every folder is (re)built and its NAME.json checked before the first synthesis run, so that a file in
    # the way stops the command before minutes of work, not after.
    ready = []
    for spec in specs:
        d = design(spec)  # the same files `build` writes, in case the folder has to be (re)built
        ready.append((spec, d, _folder(d, out_dir, say, force)))
    for spec, d, path in ready:
        say(f"{spec.name}: estimates")
        entry = {"name": spec.name, "width": spec.width, "scheme": spec.scheme, "label": _label(spec),
                 "netlist_gate_equiv": d.metrics["netlist_gate_equiv"], "estimates": estimates(d.net), "synthesis": _run_flows(spec.name, d.verilog, spec, flows, say, spec.name)}
        key = (spec.width, spec.carry_in, spec.carry_out)
        if key not in baselines:
            if spec.scheme == BASELINE:
                baselines[key] = {"estimates": entry["estimates"], "synthesis": entry["synthesis"]}
            else:
                base = make_spec(f"{spec.name}_plus", spec.width, BASELINE, spec.carry_in, spec.carry_out)
                bd = design(base, tb_random=0)
                baselines[key] = {"estimates": estimates(bd.net),
                                  "synthesis": _run_flows(base.name, bd.verilog, base, flows, say,
                                                          f"+ at {spec.width} bits")}
        plus = baselines[key]
        entry["baseline"] = {"scheme": BASELINE, **plus}
        entry["versus_plus"] = compare(entry["synthesis"], plus["synthesis"])
        _write(path, entry, force)
        entry["json"] = str(path)
        results.append(entry)
    return results


def _write(path: Path, entry: dict, force: bool = False) -> None:
    """Add the figures to NAME.json through the folder's manifest, so that the next build knows the file as
    its own (and carries the figures over while the design is unchanged)."""
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        data = None
    if not isinstance(data, dict):
        raise OutputConflict(path, "is not the JSON report adder_forge wrote; rebuild it with `build`")
    data["measurements"] = {k: entry[k] for k in ("estimates", "synthesis", "baseline", "versus_plus")}
    update_files(path.parent.parent, path.parent.name, {path.name: to_json(data)}, force=force)


# -- the printed table ------------------------------------------------------------------------------------------
def _cell(v) -> str:
    if v is None:
        return "-"
    if isinstance(v, float):
        return f"{v:.1f}"
    return str(v)


def _row(name: str, label: str, width: int, ge, est: dict, syn: dict) -> tuple[list[str], list[str]]:
    errors = []
    ug = _cell(est.get("unit_gate_delay"))
    if est.get("unit_gate_delay_skip_aware") is not None:
        ug = f"{est['unit_gate_delay_skip_aware']}*"
    row = [name, label, str(width), _cell(ge), ug, _cell(est.get("unit_gate_area")),
           _cell(est.get("le_tau")), _cell(est.get("le_fo4"))]
    for fl in syn:
        r = syn[fl]
        if "error" in r:
            n = {"generic": 4, "lut6": 2, "ice40": 3}[fl]
            row += ["error"] + [""] * (n - 1)
            errors.append(f"{name} {fl}: {r['error']}")
            continue
        if fl == "generic":
            row += [_cell(_dig(r, ("structure", "cells"))), _cell(_dig(r, ("structure", "depth"))),
                    _cell(_dig(r, ("abc_delay", "cells"))), _cell(_dig(r, ("abc_delay", "depth")))]
        elif fl == "lut6":
            row += [_cell(r.get("luts")), _cell(r.get("depth"))]
        elif fl == "ice40":
            row += [_cell(r.get("lut4")), _cell(r.get("carry")), f"{r['fmax_mhz']:.2f}"]
    return row, errors


HEADERS = {
    "generic": ["yosys cells", "yosys depth", "abc cells", "abc depth"],
    "lut6": ["LUT6", "LUT6 depth"],
    "ice40": ["iCE40 LUT4", "carry", "Fmax MHz"],
}


def format_table(results: list[dict]) -> str:
    """The printed table: one row per spec and one for `+` at the same width below it."""
    if not results:
        return "(no specs)"
    flows = list(results[0]["synthesis"])
    head = ["name", "scheme", "width", "netlist GE", "unit delay", "unit area", "LE tau", "LE FO4"]
    for fl in flows:
        head += HEADERS[fl]
    rows, errors = [], []
    for r in results:
        row, err = _row(r["name"], r["label"], r["width"], r.get("netlist_gate_equiv"), r["estimates"],
                        r["synthesis"])
        rows.append(row)
        errors += err
        b = r["baseline"]
        row, err = _row("  +", "behavioral", r["width"], None, b["estimates"], b["synthesis"])
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
    if any(r["estimates"].get("unit_gate_delay_skip_aware") is not None for r in results):
        notes.append("*: carry-skip unit delay, skip-aware (its false ripple paths not counted); LE figures count "
                     "them (topological).")
    if "generic" in flows:
        notes.append("yosys cells/depth: Yosys synth -flatten -noabc, cells after its own optimisation (shared "
                     "logic merged, dead logic removed) and ltp -noff depth; abc: then abc -g with a delay script.")
    if "lut6" in flows:
        notes.append("LUT6: Yosys synth -flatten -lut 6, mapped LUTs and LUT levels.")
    if "ice40" in flows:
        notes.append("iCE40 LUT4/carry/Fmax: mapped cells of the adder alone; Fmax: UP5K sg48, adder between "
                     "registers, nextpnr seed 1.")
    seen = set()
    for e in errors:
        if e not in seen:
            notes.append("error: " + e)
            seen.add(e)
    return "\n".join(lines + [""] + notes)
