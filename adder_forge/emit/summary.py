"""The machine-readable summary of a build (NAME.json), the one-line build summary and the header comment
of the emitted module. (`report` adds its measurement records to NAME.json: synth/measure.py.)"""

from __future__ import annotations

import json

from ..base.version import __version__
from ..analysis.structure import LEFT_TO_SYNTHESIS
from ..spec.loader import Spec
from ..spec.registry import Description, schemes, value_text

CAUTION = "Figures are estimates, not sign-off timing; verify the generated logic in your own flow."


def resolved(spec: Spec, meta=()) -> dict:
    """What the scheme decided that the spec left open (e.g. automatic block sizes): the meta facts its
    keys declare (Option.resolved_as)."""
    keys = {o.resolved_as for o in schemes()[spec.scheme].options if o.resolved_as}
    return {k: v for k, v in meta if k in keys}


def description(spec: Spec, meta=()) -> Description:
    """The scheme's own description of the spec (label for tables, keys for one-line summaries)."""
    return schemes()[spec.scheme].describe(spec, resolved(spec, meta))


def describe(spec: Spec, meta=()) -> str:
    """'32-bit prefix [carry_in=true, ..., prefix=kogge-stone, block=1, ...]' for one-line summaries: the width,
    the scheme and every key that shapes the adder, as the scheme describes it."""
    keys = [(k, v) for k, v in description(spec, meta).keys if k not in ("form", "pipeline", "operation", "overflow")]
    if spec.form != "flat":  # the file is not the flat netlist the figures count: say so on the line
        keys.append(("form", spec.form))
    if spec.operation != "add":  # what the unit computes comes first among the keys after the ports
        keys.append(("operation", spec.operation))
    if spec.overflow:
        keys.append(("overflow", "true"))
    if spec.pipeline.clocked:
        keys.append(("pipeline", spec.pipeline.describe()))
    return f"{spec.width}-bit {spec.scheme}" + (f" [{', '.join(f'{k}={v}' for k, v in keys)}]" if keys else "")


def pipeline_summary(metrics: dict) -> str:
    """'latency 3 cycles, levels per stage 6/6/4, 557 registers' for a pipelined adder, else ''."""
    if "pipeline_stage_levels" not in metrics:
        return ""
    k = metrics["pipeline_latency_cycles"]
    return (f"latency {plural(k, 'cycle')}, levels per stage {'/'.join(map(str, metrics['pipeline_stage_levels']))}"
            f", {plural(metrics['pipeline_registers'], 'register')}")


def plural(count: int, word: str, words: str | None = None) -> str:
    """'1 gate level', '13 gate levels'."""
    return f"{count} {word if count == 1 else (words or word + 's')}"


def netlist_summary(metrics: dict) -> str:
    """The netlist figures in words, for the build line: what NAME.v holds as emitted."""
    if metrics.get("netlist_plus_cells"):
        return f"netlist figures {LEFT_TO_SYNTHESIS} (Verilog +; see report --synth)"
    levels = plural(metrics["netlist_levels"], "gate level")
    if metrics.get("netlist_levels_skip_aware") is not None:
        levels = (f"{plural(metrics['netlist_levels_skip_aware'], 'gate level')} skip-aware "
                  f"({metrics['netlist_levels']} structural, through false paths)")
    text = (f"netlist {plural(metrics['netlist_gate_equiv'], 'gate equivalent')} in "
            f"{plural(metrics['netlist_cells'], 'cell')}, {levels}, max fanout {metrics['netlist_max_fanout']}")
    if "pipeline_stage_levels" in metrics:
        text = text.replace(levels, f"{levels} in the longest stage", 1) + f"; pipelined: {pipeline_summary(metrics)}"
    if metrics.get("prefix_nodes") is not None:
        text += (f"; prefix network {plural(metrics['prefix_nodes'], 'cell')}, depth {metrics['prefix_depth']}, "
                 + bounds_text(metrics))
    return text


def bounds_text(metrics: dict) -> str:
    """How far the prefix network is from the published bounds, in words (build line and header)."""
    snir = metrics.get("prefix_snir_gap")
    if snir is None:
        return "not a full prefix network (pruned), so no bound applies"
    text = f"cells + depth {snir} over Snir's bound 2n - 2 (Snir 1986)"
    best = metrics.get("prefix_min_gap")
    if best is not None:
        text += f", {best} cell{'' if best == 1 else 's'} over the exact minimum at this depth (Sergeev 2013)"
    return text


def design_summary(spec: Spec, metrics: dict, extra: dict | None = None, meta=()) -> dict:
    d = spec.to_dict()
    out = {
        "tool": "adder_forge",
        "version": __version__,
        "name": spec.name,
        "width": spec.width,
        "scheme": spec.scheme,
        "prefix": d.get("prefix"),
        "block": d.get("block"),
        "carry_in": spec.carry_in,
        "carry_out": spec.carry_out,
        "operation": spec.operation,
        "overflow": spec.overflow,
        "options": {k: v for k, v in d.items()
                    if k not in ("name", "width", "scheme", "carry_in", "carry_out", "operation", "overflow")},
        "resolved": resolved(spec, meta),
        "metrics": metrics,
        "caution": CAUTION,
    }
    out.update(extra or {})
    return out


def to_json(d: dict) -> str:
    return json.dumps(d, indent=2, sort_keys=False) + "\n"


NETLIST_KEYS = ("netlist_gate_equiv", "netlist_cells", "netlist_levels", "netlist_levels_skip_aware",
                "netlist_max_fanout")
PREFIX_KEYS = ("prefix_nodes", "prefix_levels", "prefix_fanout", "wire_tracks", "prefix_depth", "prefix_snir_gap",
               "prefix_min_gap")


def header_lines(spec: Spec, metrics: dict, meta=()) -> list[str]:
    d = spec.to_dict()
    lines = [
        f"{spec.name}: {spec.width}-bit {spec.scheme} adder, generated by adder_forge {__version__}",
        "spec: " + ", ".join(f"{k}={value_text(v)}" for k, v in d.items() if v is not None and k != "pipeline"),
    ]
    lines += [f"resolved: {k}={v}" for k, v in resolved(spec, meta).items()]
    if not metrics.get("netlist_plus_cells"):  # a Verilog + says why it has none in its note below
        lines.append("netlist (this file as emitted, 2-input gate equivalents and levels): "
                     + ", ".join(f"{k}={metrics[k]}" for k in NETLIST_KEYS if metrics.get(k) is not None))
    if metrics.get("prefix_nodes") is not None:
        lines.append("prefix network: " + ", ".join(f"{k}={metrics[k]}" for k in PREFIX_KEYS
                                                    if metrics.get(k) is not None))
        lines.append("prefix bounds: " + bounds_text(metrics))
    if "pipeline_stage_levels" in metrics:
        lines.append(f"pipeline: {spec.pipeline.describe()}; {pipeline_summary(metrics)}; a register rank closes "
                     "each stage, the last at the outputs; operands go straight into stage 1")
    lines += [f"note: {n}" for n in metrics.get("notes") or []]
    lines.append(CAUTION)
    return lines
