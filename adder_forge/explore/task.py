"""One task's work: the built-in check, the estimates or one synthesis flow of one adder, as a cache entry.

Run in a pool worker (run.run_task), or, for a synthesis task under a time limit, in a child process of its
own (timed.py). Everything it needs comes in its arguments: a spec and a family name.
"""

from __future__ import annotations

from ..base.errors import AdderForgeError
from ..spec.loader import Spec
from .figures import tool_versions
from .sweep import ESTIMATES

CHECK = "check"  # the built-in check, a family of its own: it runs once per adder, whatever is measured
CHECK_RANDOM = 2000  # random vectors beside the directed ones, where the check is not exhaustive
CHECK_SEED = 1


def compute(spec: Spec, family: str) -> dict:
    """One task's entry: {"family", "versions", "records" (dicts of base.records.Record), "note"} or
    {"family", "versions", "error"}. The records are the ones `report` makes of the same adder."""
    from ..analysis import figures as analysis_figures
    from ..analysis.structure import metrics
    from ..base.records import make_records
    from ..schemes import elaborate
    from ..synth.flows import get_flow, synthesize, tool_version
    from ..synth.measure import spec_digest

    versions = tool_versions(family)
    try:
        net = elaborate(spec)
        if family == CHECK:
            return {"family": family, "versions": versions, "result": _check(spec, net)}
        digest = spec_digest(spec)
        m = metrics(net)
        if family == ESTIMATES:
            from ..analysis.delay import estimates

            est = estimates(net)
            raw_of = {"netlist": m, "estimates": est}
            recs = []
            for src, figs in analysis_figures.SOURCES.items():
                recs += make_records(spec.name, digest, src, figs, raw_of[src], analysis_figures.TOOL, tool_version)
            return {"family": family, "versions": versions, "records": [r.to_dict() for r in recs],
                    "note": est.get("note", "")}
        from ..emit.summary import header_lines
        from ..emit.verilog import emit_module

        flow = get_flow(family)
        verilog = emit_module(net, header_lines(spec, m, net.meta))
        raw = synthesize(family, spec.name, verilog, width=spec.width, carry_in=spec.carry_in,
                         carry_out=spec.carry_out)
        seed = raw.get("seed") if isinstance(raw.get("seed"), int) else None
        recs = make_records(spec.name, digest, family, flow.figures, raw, flow.main_tool, tool_version, seed)
        mapper = str(raw.get("mapper", ""))  # the LUT mapper, when abc9 had to give way to classic ABC
        return {"family": family, "versions": versions, "records": [r.to_dict() for r in recs],
                "note": "" if mapper in ("", "abc9") else f"mapped by {mapper}"}
    except AdderForgeError as exc:
        hint = getattr(exc, "hint", "")
        why = str(getattr(exc, "message", exc)) + (f": {hint.strip().splitlines()[-1]}" if hint and hint.strip() else "")
        return {"family": family, "versions": versions, "error": why}


def _check(spec: Spec, net) -> dict:
    from ..checks.builtin import check
    from ..checks.verify import builtin_plan

    r = check(net, builtin_plan(spec, CHECK_RANDOM, CHECK_SEED), workers=1)
    return {"ok": r.ok, "vectors": r.vectors, "failed": r.failed, "detail": r.detail}
