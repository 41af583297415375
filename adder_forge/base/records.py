"""Figures as data: a measurement is a `Record`; what a source of figures can measure is declared once as
`Figure`s.

A source is anything that produces figures: the netlist and estimate analyses (analysis/figures.py) and
each synthesis flow (synth/flows.py). Each declares its figures (name, unit, table column, which way is
better) in one place; the printed table of `report`, the ``measurements`` block of NAME.json, `report
--csv` and plots are all views of the same records, so a new flow or figure needs no change in any view.

A record says what was measured (``spec`` name and ``digest`` of the resolved spec), which ``figure``, its
``value`` and ``unit``, who measured it (``source``: the analysis or flow; ``tool`` and ``tool_version``:
the program whose report the value was read from) and the ``seed`` of a seeded tool run (None for the
rest). A figure that does not apply (netlist figures of a Verilog ``+``, logical effort of a network with
ADD cells) has no record; views show it as missing.
"""

from __future__ import annotations

import csv
import io
import json
import math
from dataclasses import asdict, dataclass, fields
from typing import Any, Callable, Iterable, Mapping

BETTER = ("lower", "higher")


@dataclass(frozen=True)
class Figure:
    """One figure a source declares: where its value is in the source's raw output and how views show it.

    ``name`` is unique project-wide (``yosys_cells``, ``le_tau``); ``path`` leads to the value in the dict
    the source returns (default: the name itself); ``derive`` turns that value into the figure (e.g. a
    period from a frequency). ``label`` is the column header of the printed table ("" = not a column);
    ``fmt`` its format ("" = integers as they are, other numbers to one decimal); ``shown_instead``
    names a figure of the same source that the column shows instead, marked ``*``, when a design has it.
    ``compared`` figures are set beside the `+` baseline as a ratio (all compared figures are lower-better).
    ``tool`` names the program the value is read from when it is not the source's own.
    """

    name: str
    unit: str
    doc: str
    label: str = ""
    path: tuple[str, ...] = ()
    derive: Callable[[Any], Any] | None = None
    better: str = "lower"
    compared: bool = False
    fmt: str = ""
    shown_instead: str = ""
    tool: str = ""  # the program whose report holds the value, when not the source's own (nextpnr's Fmax)

    def __post_init__(self):
        if self.better not in BETTER:
            raise ValueError(f"figure {self.name}: better must be one of {BETTER}, got {self.better!r}")
        if self.compared and self.better != "lower":
            raise ValueError(f"figure {self.name}: a compared figure must be lower-better (declare its inverse)")

    def read(self, raw: Mapping) -> int | float | None:
        """The figure's value from a source's raw output, or None when the output does not hold a number."""
        v: Any = raw
        for k in self.path or (self.name,):
            if not isinstance(v, Mapping) or k not in v:
                return None
            v = v[k]
        if isinstance(v, bool) or not isinstance(v, (int, float)) or (isinstance(v, float) and not math.isfinite(v)):
            return None
        return self.derive(v) if self.derive is not None else v

    def cell(self, value) -> str:
        """The value as the printed table shows it."""
        if value is None:
            return "-"
        if self.fmt:
            return format(value, self.fmt)
        return f"{value:.1f}" if isinstance(value, float) else str(value)


@dataclass(frozen=True)
class Record:
    """One measured figure of one spec."""

    spec: str
    digest: str
    figure: str
    value: int | float
    unit: str
    source: str
    tool: str
    tool_version: str
    seed: int | None = None

    def to_dict(self) -> dict:
        return asdict(self)


FIELDS = tuple(f.name for f in fields(Record))


def digest_of(resolved: Mapping) -> str:
    """What a spec resolves to, as 16 hex digits (key order and wording of the YAML do not matter): two
    records with equal digests measured the same adder."""
    import hashlib

    text = json.dumps(resolved, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:16]


def make_records(spec: str, digest: str, source: str, figures: Iterable[Figure], raw: Mapping, tool: str,
                 version_of: Callable[[str], str], seed: int | None = None) -> list[Record]:
    """The records of one source's raw output: one per declared figure that holds a number, each with the
    version of the tool it was read from (``version_of(tool)``)."""
    out = []
    for f in figures:
        v = f.read(raw)
        if v is None:
            continue
        t = f.tool or tool
        out.append(Record(spec, digest, f.name, v, f.unit, source, t, version_of(t), seed))
    return out


def from_dict(d: Mapping) -> Record:
    """A record from its JSON form; ValueError when it is not one."""
    if not isinstance(d, Mapping) or set(d) != set(FIELDS):
        raise ValueError(f"not a measurement record: {d!r:.80}")
    v = d["value"]
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise ValueError(f"record {d.get('figure')!r}: value must be a number, got {v!r:.40}")
    return Record(**{k: d[k] for k in FIELDS})


def strip(raw: Mapping, figures: Iterable[Figure]) -> dict:
    """A source's raw output without the values that became records (what is left says how they were
    measured: scripts, cell types, paths, notes, errors), so that NAME.json holds each number once."""
    taken = {f.path or (f.name,) for f in figures}
    taken |= {p[:-1] + ("seed",) for p in taken}  # a seed is a field of every record

    def walk(d: Mapping, at: tuple[str, ...]) -> dict:
        out = {}
        for k, v in d.items():
            here = at + (k,)
            if here in taken and (isinstance(v, (int, float)) or v is None):
                continue
            if isinstance(v, Mapping):
                v = walk(v, here)
                if not v:
                    continue
            out[k] = v
        return out

    return walk(raw, ())


def csv_text(records: Iterable[Record]) -> str:
    """Records as CSV, one a line, with a header of the record fields (an empty seed is an empty cell)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(FIELDS)
    for r in records:
        w.writerow(["" if getattr(r, k) is None else getattr(r, k) for k in FIELDS])
    return buf.getvalue()


def values(records: Iterable[Record], digest: str) -> dict[str, int | float]:
    """{figure: value} of one spec (by digest)."""
    return {r.figure: r.value for r in records if r.digest == digest}
