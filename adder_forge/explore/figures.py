"""Which figures a sweep measures, family by family, and which of them are plotted and picked by.

A family is ``estimates`` (the netlist and estimate analyses, analysis/figures.py) or a synthesis flow
(synth/flows.py). Every figure is one the sources declare as a records.Figure; nothing here adds a figure,
it only says which pairs make a Pareto plot (an area figure against a delay figure of the same family) and
which delay figures `pick` can constrain. A flow registered later without an entry in ``PAIRS`` still gets
a plot: its compared figures named ``*_depth`` or ``*_period_ns`` are taken as delays, the first other
compared figure as its area.
"""

from __future__ import annotations

import hashlib
from functools import lru_cache
from pathlib import Path

from ..analysis import figures as analysis_figures
from ..base.records import Figure
from ..synth.flows import FLOWS, tool_version
from .sweep import ESTIMATES

# (area, delay) Pareto pairs per family; the first pair's delay is the family's headline figure.
PAIRS: dict[str, tuple[tuple[str, str], ...]] = {
    ESTIMATES: (("unit_gate_area", "unit_gate_delay"), ("unit_gate_area", "le_fo4")),
    "generic": (("abc_cells", "abc_depth"), ("yosys_cells", "yosys_depth")),
    "lut6": (("lut6_luts", "lut6_depth"),),
    "ice40": (("ice40_lut4", "ice40_fmax_mhz"),),
}
# Figures shown against width (beside every figure of a Pareto pair).
ALSO_AGAINST_WIDTH = ("netlist_gate_equiv",)


def family_figures(family: str) -> tuple[Figure, ...]:
    if family == ESTIMATES:
        return analysis_figures.NETLIST + analysis_figures.ESTIMATES
    return FLOWS[family].figures


def all_figures() -> dict[str, Figure]:
    out = {}
    for fam in (ESTIMATES, *FLOWS):
        for f in family_figures(fam):
            out[f.name] = f
    return out


def pairs_of(family: str) -> tuple[tuple[str, str], ...]:
    if family in PAIRS:
        return PAIRS[family]
    compared = [f for f in family_figures(family) if f.compared]
    delays = [f.name for f in compared if f.name.endswith(("_depth", "_period_ns"))]
    areas = [f.name for f in compared if f.name not in delays]
    return tuple((areas[0], d) for d in delays) if areas else ()


def delay_figures(families=None) -> dict[str, str]:
    """{delay figure: its area figure} over the given families (default: every one)."""
    out: dict[str, str] = {}
    for fam in families or (ESTIMATES, *FLOWS):
        for area, delay in pairs_of(fam):
            out.setdefault(delay, area)
    return out


def family_of(figure: str) -> str:
    for fam in (ESTIMATES, *FLOWS):
        if any(f.name == figure for f in family_figures(fam)):
            return fam
    raise KeyError(figure)


# -- what a figure depends on ---------------------------------------------------------------------------------
# Besides the adder's network (keyed by its IR dump, run.ir_digest), a family's figures depend on the code
# that turns the network into them: these layer folders of adder_forge (and the templates for the emitted
# Verilog). A new scheme, or a change to a scheme that leaves its networks as they were, keeps every cached
# figure; a change to the estimates keeps the synthesis figures.
CODE = {
    "check": ("base", "checks"),
    ESTIMATES: ("base", "analysis"),
    "flow": ("base", "analysis", "emit", "synth"),
}


@lru_cache(maxsize=None)
def code_digest(layers: tuple[str, ...]) -> str:
    """A digest of the Python files (and, for emit, the templates) of the given layer folders."""
    root = Path(__file__).resolve().parent.parent
    h = hashlib.sha256()
    files = []
    for layer in layers:
        files += sorted(p for p in (root / layer).rglob("*.py") if "__pycache__" not in p.parts)
    if "emit" in layers:
        for templates in (root / "templates", root.parent / "templates"):  # installed, or editable
            if templates.is_dir():
                files += sorted(templates.glob("*.j2"))
    for p in files:
        h.update(p.relative_to(p.parent.parent).as_posix().encode() + b"\0" + p.read_bytes() + b"\0")
    return h.hexdigest()[:16]


def tool_versions(family: str) -> dict[str, str]:
    """What the figures of ``family`` depend on besides the network: adder_forge (its version and a digest
    of the code that measures) and the programs a flow runs."""
    layers = CODE["flow"] if family in FLOWS else CODE[family]
    out = {"adder_forge": f"{tool_version('adder_forge')}+{code_digest(layers)}"}
    if family in FLOWS:
        for tool in FLOWS[family].tools:
            out[tool] = tool_version(tool)
    return out
