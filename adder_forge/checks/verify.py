"""`verify`: every check that an adder adds, run over one or several designs.

The checkers are one registry (``CHECKERS``, in the order their rows are printed): the built-in check, one
checker a simulator of ``simulators.SIMULATORS``, the cocotb test in each simulator that cocotb's runner
knows, and the proof. ``verify`` loops over the chosen ones; each returns ``outcome.Outcome`` rows, and
``rows`` formats every row the same way.
"""

from __future__ import annotations

import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

from ..base.errors import ToolError, UsageError
from ..base.progress import Progress, as_progress
from ..emit.design import Design
from ..emit.vectors import Plan, plan_for, space_bits
from ..ir.interface import of_spec
from ..spec.loader import Spec
from . import formal as proofs, simulators
from .builtin import check as builtin_check
from .outcome import Outcome

BUILTIN_EXHAUSTIVE_LIMIT = 1 << 25  # every input by default up to here: a 12-bit adder with carry-in
FORCED_EXHAUSTIVE_LIMIT = 1 << 33  # `verify --exhaustive`: up to a 16-bit adder with carry-in


@dataclass(frozen=True)
class Stopped:
    """A check that could not run (a tool missing or failing): no verdict on the adder."""

    name: str  # the spec, or every spec of a shared simulator build, comma-separated
    checker: str
    error: ToolError


@dataclass(frozen=True)
class Verdicts:
    """What `verify` found: every finished check, and the one that stopped it, if any."""

    outcomes: list[Outcome]
    stopped: Stopped | None = None

    @property
    def failed(self) -> int:
        return sum(not o.ok for o in self.outcomes)


@dataclass(frozen=True)
class Job:
    """What the checkers of one `verify` run share."""

    random_count: int
    seed: int
    exhaustive: bool
    workdir: Path
    progress: Progress


class Checker:
    """One way of checking that a design adds. ``chosen_by``: 'always', 'sim' (``--sim NAME``) or
    'formal'; ``shared``: one run covers every design (a simulator build), else one run a design."""

    name = ""
    aliases: tuple[str, ...] = ()
    chosen_by = "sim"
    shared = False

    def refuse(self, spec: Spec) -> Exception | None:
        """Bad input this checker cannot take (raised by `verify` before any check runs)."""
        return None

    def announce(self, designs: list[Design]) -> str | None:
        return None

    def check(self, designs: list[Design], job: Job) -> list[Outcome]:
        raise NotImplementedError


CHECKERS: dict[str, Checker] = {}


def checker(c):
    """Register a Checker (a class with no arguments, or an instance); the registry keeps the order."""
    inst = c() if isinstance(c, type) else c
    if inst.name in CHECKERS:
        raise ValueError(f"checker {inst.name!r} registered twice")
    CHECKERS[inst.name] = inst
    return c


def builtin_plan(spec: Spec, random_count: int, seed: int, exhaustive: bool = False) -> Plan:
    """The built-in check's vectors: every input up to ``BUILTIN_EXHAUSTIVE_LIMIT``, else directed and
    random ones; with ``exhaustive``, every input up to ``FORCED_EXHAUSTIVE_LIMIT`` or a SpecError."""
    iface = of_spec(spec)
    if exhaustive:
        bits = space_bits(spec.width, iface.has("cin"), iface.has("sub"))
        if 1 << bits > FORCED_EXHAUSTIVE_LIMIT:
            ports = " and ".join(p.name for p in iface.inputs[2:])
            ports = f"with {ports}" if ports else "without carry-in"
            raise spec.error("width", f"--exhaustive: a {spec.width}-bit adder {ports} has 2^{bits} input "
                                      f"vectors; the limit is 2^33 (a 16-bit adder with carry-in)")
        return plan_for(iface, FORCED_EXHAUSTIVE_LIMIT, random_count, seed)
    return plan_for(iface, BUILTIN_EXHAUSTIVE_LIMIT, random_count, seed)


@checker
class Builtin(Checker):
    """The IR evaluated bit-parallel against integer addition (its progress task names the design)."""

    name = "builtin"
    chosen_by = "always"

    def check(self, designs, job):
        [d] = designs
        plan = builtin_plan(d.spec, job.random_count, job.seed, job.exhaustive)
        r = builtin_check(d.net, plan, progress=job.progress, label=f"builtin: {d.spec.name}")
        first = r.first.describe(d.spec.width) if r.first is not None else None
        detail = r.detail if r.ok else f"first failing vector: {first}"
        return [Outcome(d.spec.name, self.name, r.ok, r.vectors - r.failed, r.failed, detail, first)]


class Simulation(Checker):
    """The emitted test bench in one simulator; every design in one shared build where it can."""

    shared = True

    def __init__(self, sim: type[simulators.Simulator]):
        self.sim = sim
        self.name = sim.name
        self.aliases = sim.aliases

    def refuse(self, spec):
        return self.sim().refuse(spec)

    def announce(self, designs):
        return f"{self.name}: building and running {len(designs)} testbench(es)"

    def check(self, designs, job):
        return simulators.simulate(designs, self.name, job.workdir / self.name)


class Cocotb(Checker):
    """The cocotb test (Python integer addition inside the simulator), one run a design."""

    def __init__(self, sim: type[simulators.Simulator]):
        self.sim = sim
        self.name = f"cocotb-{sim.name}"
        self.aliases = tuple(f"cocotb-{a}" for a in sim.aliases)

    def announce(self, designs):
        return f"{self.name}: {designs[0].spec.name}"

    def check(self, designs, job):
        from .cocotb_check import run_cocotb

        [d] = designs
        return [run_cocotb(d, self.sim.name, job.workdir / self.name / d.spec.name,
                           random_count=min(job.random_count, 1000), seed=job.seed)]


for _sim in simulators.SIMULATORS.values():
    checker(Simulation(_sim))
for _sim in simulators.SIMULATORS.values():
    if _sim.cocotb:
        checker(Cocotb(_sim))


@checker
class Formal(Checker):
    """Yosys proves the netlist equal to Verilog's own `+` for every input."""

    name = "formal"
    chosen_by = "formal"

    def announce(self, designs):
        return f"formal: {designs[0].spec.name}"

    def check(self, designs, job):
        [d] = designs
        p = proofs.prove(d.net, d.verilog)
        first = p.counterexample.describe(d.spec.width) if p.counterexample is not None else None
        # a proof checks no vectors: no count, and describe() says what was proved for this adder's ports
        return [Outcome(d.spec.name, self.name, p.ok, 0, 0, p.describe(d.spec.width), first, log=p.log)]


def simulation_checkers() -> list[str]:
    """What ``--sim`` can name, in row order (``all`` stands for every one)."""
    return [n for n, c in CHECKERS.items() if c.chosen_by == "sim"]


def _aliases() -> dict[str, str]:
    return {a: n for n, c in CHECKERS.items() for a in c.aliases}


def select(names: list[str]) -> list[str]:
    """The checkers ``--sim`` names (registry names, aliases, any case, ``_`` for ``-``, ``all``) in the order
    given, once each; a bad name is a UsageError that lists the valid ones."""
    valid = simulation_checkers()
    out: list[str] = []
    for given in names:
        key = str(given).strip().lower().replace("_", "-")
        key = _aliases().get(key, key)
        if key == "all":
            out += valid
        elif key in valid:
            out.append(key)
        elif key == "formal":
            raise UsageError("'formal' is not a simulator: add --formal for the proof", "verify", "--sim")
        elif key == "builtin":
            raise UsageError("the built-in check always runs: --sim names the simulators to add", "verify", "--sim")
        elif key == "cocotb":
            both = " or ".join(n for n in valid if n.startswith("cocotb-"))
            raise UsageError(f"--sim cocotb needs a simulator: {both}", "verify", "--sim")
        else:
            raise UsageError(simulators.unknown("simulator", given, valid + ["all"], _aliases()), "verify", "--sim")
    return list(dict.fromkeys(out))


def chosen(specs: list[Spec], sims: list[str], formal: bool) -> list[Checker]:
    """The checkers to run, in registry order; raises the first bad input any of them finds in ``specs``
    (the CLI calls this before it builds the designs)."""
    names = {"builtin", *select(sims), *(("formal",) if formal else ())}
    checkers = [c for name, c in CHECKERS.items() if name in names]
    for c in checkers:
        for spec in specs:
            problem = c.refuse(spec)
            if problem is not None:
                raise problem
    return checkers


def verify(designs: list[Design], sims: list[str], formal: bool, random_count: int, seed: int,
           workdir: Path | None = None, progress: Progress | Callable[[str], None] | None = None,
           exhaustive: bool = False) -> Verdicts:
    """Run the built-in check, the checkers ``sims`` names, and with ``formal`` the proof, in registry
    order. Bad input (a name no checker has, a design a chosen checker cannot take) raises before any
    check runs; the first tool failure ends the run, keeping what finished."""
    checkers = chosen([d.spec for d in designs], sims, formal)
    say = as_progress(progress)
    out: list[Outcome] = []
    with tempfile.TemporaryDirectory(prefix="adder_forge_verify_") as tmp:
        job = Job(random_count, seed, exhaustive, Path(workdir) if workdir else Path(tmp), say)
        for c in checkers:
            for group in ([list(designs)] if c.shared else [[d] for d in designs]):
                note = c.announce(group)
                if note:
                    say(note)
                try:
                    out += c.check(group, job)
                except ToolError as exc:
                    return Verdicts(out, Stopped(", ".join(d.spec.name for d in group), c.name, exc))
    return Verdicts(out)


def rows(found: Verdicts) -> list[str]:
    """The lines `verify` prints: one a finished check, the stopped one with its reason, then the count."""
    names = [o.name for o in found.outcomes] + ([found.stopped.name] if found.stopped else [])
    width = max((len(n) for n in names), default=0)
    checker_width = max(len(n) for n in CHECKERS)
    lines = []
    for o in found.outcomes:
        count = f"{o.vectors} vectors" if o.vectors else ""
        if not o.ok and o.vectors:
            count = f"{o.failed} of {o.vectors} vectors failed"
        status = "pass" if o.ok else "FAIL"
        lines.append(f"{o.name:<{width}}  {o.checker:<{checker_width}} {status}  "
                     f"{count + '; ' if count else ''}{o.detail}")
    bad = found.failed
    tally = f"{len(found.outcomes) - bad} passed, {bad} failed"
    s = found.stopped
    if s is None:
        return lines + [tally]
    hint = s.error.hint.strip()
    why = s.error.message + (f": {hint.splitlines()[-1]}" if hint else "")
    return lines + [f"{s.name:<{width}}  {s.checker:<{checker_width}} ERROR {why}",
                    f"{tally}; {s.checker} could not run, later checks skipped"]
