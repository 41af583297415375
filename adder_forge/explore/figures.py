"""The figures a sweep measures, family by family, and the versions of the tools that made them.

A family is ``estimates`` (read off the IR by analysis/delay.py and analysis/structure.py) or a synthesis
flow of synth/flows.py. Each declares its figures once here: name, unit, the path into what the flow
returns, and whether it is a delay figure (what `pick` can constrain) or an area figure. Smaller is better
for every figure but iCE40 Fmax, which also appears as a period so that a Pareto front can minimise both
axes. The figures are the same ones `report` prints (synth/measure.py names them the same way).
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from functools import lru_cache
from importlib import metadata
from pathlib import Path

from ..synth.flows import FLOWS
from .sweep import ESTIMATES


@dataclass(frozen=True)
class Figure:
    name: str
    family: str
    unit: str
    path: tuple[str, ...]  # into the family's result dict
    kind: str  # "delay" or "area" or "other"
    doc: str
    larger_is_better: bool = False


FIGURES: dict[str, Figure] = {}


def _fig(name, family, unit, path, kind, doc, larger=False):
    FIGURES[name] = Figure(name, family, unit, tuple(path), kind, doc, larger)


_fig("unit_gate_delay", ESTIMATES, "gate delays", ["unit_gate_delay"], "delay",
     "unit-gate model delay, topological (Tyagi 1993; Zimmermann 1997)")
_fig("unit_gate_area", ESTIMATES, "gate areas", ["unit_gate_area"], "area", "unit-gate model area")
_fig("le_fo4", ESTIMATES, "FO4", ["le_fo4"], "delay", "logical effort, each path sized on its own "
     "(Sutherland, Sproull and Harris 1999)")
_fig("netlist_gate_equiv", ESTIMATES, "gate equivalents", ["netlist_gate_equiv"], "area",
     "the netlist as emitted, in 2-input gate equivalents")
_fig("yosys_cells", "generic", "cells", ["structure", "cells"], "area", "Yosys synth -noabc cells")
_fig("yosys_depth", "generic", "cells on path", ["structure", "depth"], "delay", "Yosys ltp -noff after -noabc")
_fig("abc_cells", "generic", "cells", ["abc_delay", "cells"], "area", "after ABC's delay script")
_fig("abc_depth", "generic", "gate levels", ["abc_delay", "depth"], "delay", "after ABC's delay script")
_fig("lut6_luts", "lut6", "LUT6", ["luts"], "area", "Yosys synth -lut 6: mapped LUTs")
_fig("lut6_depth", "lut6", "LUT levels", ["depth"], "delay", "Yosys synth -lut 6: LUT levels")
_fig("ice40_lut4", "ice40", "LUT4", ["lut4"], "area", "synth_ice40 LUT4 cells of the adder alone")
_fig("ice40_carry", "ice40", "SB_CARRY", ["carry"], "other", "synth_ice40 carry cells of the adder alone")
_fig("ice40_fmax_mhz", "ice40", "MHz", ["fmax_mhz"], "delay", "nextpnr Fmax, UP5K sg48, seed 1", larger=True)

# (area, delay) pairs drawn as Pareto plots, one pair per family; the delay figure is the family's headline.
PAIRS: dict[str, tuple[str, str]] = {
    ESTIMATES: ("unit_gate_area", "unit_gate_delay"),
    "generic": ("abc_cells", "abc_depth"),
    "lut6": ("lut6_luts", "lut6_depth"),
    "ice40": ("ice40_lut4", "ice40_fmax_mhz"),
}
# More figures of a family worth a Pareto plot of their own.
EXTRA_PAIRS: dict[str, tuple[tuple[str, str], ...]] = {ESTIMATES: (("unit_gate_area", "le_fo4"),)}


def family_figures(family: str) -> list[Figure]:
    return [f for f in FIGURES.values() if f.family == family]


def delay_figures() -> list[str]:
    return [f.name for f in FIGURES.values() if f.kind == "delay"]


def area_of(delay: str) -> str:
    """The area figure that goes with a delay figure (same family)."""
    fam = FIGURES[delay].family
    for area, d in (PAIRS[fam], *EXTRA_PAIRS.get(fam, ())):
        if d == delay:
            return area
    return PAIRS[fam][0]


def dig(d, path):
    for k in path:
        if not isinstance(d, dict) or k not in d:
            return None
        d = d[k]
    return d


def extract(family: str, result: dict) -> dict[str, float | int | None]:
    return {f.name: dig(result, f.path) for f in family_figures(family)}


# -- tool versions -------------------------------------------------------------------------------------------
def _dist(name: str) -> str:
    try:
        return metadata.version(name)
    except metadata.PackageNotFoundError:
        return "not installed"


# Code that decides no figure: this layer (whose own part in an entry is versioned by cache.FORMAT) and the
# command line. Leaving them out lets a change to a plot keep the figures measured before it.
_NOT_FIGURES = ("explore", "cli.py", "__main__.py")


@lru_cache(maxsize=1)
def source_digest() -> str:
    """A digest of the adder_forge code that makes figures (its Python files and templates): the version
    string does not move with every change, and a cached figure must not outlive the code that made it."""
    root = Path(__file__).resolve().parent.parent
    h = hashlib.sha256()
    files = sorted(p for p in root.rglob("*") if p.suffix in (".py", ".j2") and "__pycache__" not in p.parts
                   and p.relative_to(root).parts[0] not in _NOT_FIGURES)
    templates = root.parent / "templates"
    if templates.is_dir():  # an editable install keeps the templates beside the package
        files += sorted(templates.glob("*.j2"))
    for p in files:
        h.update(p.name.encode() + b"\0" + p.read_bytes() + b"\0")
    return h.hexdigest()[:16]


def tool_versions(family: str) -> dict[str, str]:
    """What the figures of ``family`` depend on besides the spec."""
    from ..base.version import __version__

    out = {"adder_forge": f"{__version__}+{source_digest()}"}
    if family != ESTIMATES and family in FLOWS:
        for tool in FLOWS[family].tools:
            out[tool] = _dist(tool)
    return out
