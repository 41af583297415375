"""Running a sweep: every adder built, checked against integer addition and measured, in parallel, cached.

The work is a list of tasks, one per (adder, family): the built-in check (family ``check``), the IR
estimates, each synthesis flow. A task is a plain function of picklable arguments (``run_task``), so any
``concurrent.futures`` executor runs it: a process pool on the local cores, or a Dask cluster's
``Client.get_executor()`` (executors.py). A task looks in the cache first, computes on a miss and stores
its entry; the caller stores what comes back too, so figures computed on a worker without the cache's
file system are kept as well.

A failure is a result: a mismatch found by the built-in check is recorded (and cached, since it is what
the adder does), a tool error or a crashed worker is recorded and not cached (the next run tries again);
neither stops the sweep, and every table, plot and `pick` shows it. A synthesis task runs under the
sweep's time limit (``task_seconds``, timed.py): one that passes it is recorded as a failed row, and
cached with its limit, so that an unchanged re-run computes nothing while a run with a larger limit (or
none) measures the adder again.
"""

from __future__ import annotations

import time
import traceback
from concurrent.futures import FIRST_COMPLETED, wait
from dataclasses import dataclass, field, replace
from pathlib import Path

from ..base.progress import NULL, Progress
from ..spec.loader import Spec
from .cache import Cache, key as cache_key
from ..base.records import Record, from_dict
from .figures import family_figures, tool_versions
from ..emit.outputs import sha256_text
from .sweep import ESTIMATES, Point, Sweep
from .task import CHECK, CHECK_RANDOM, CHECK_SEED, compute


@dataclass(frozen=True)
class Task:
    spec: Spec
    family: str
    key: str
    limit: float | None = None  # seconds, for a synthesis task (timed.py); not part of the key


KEY_NAME = "adder"  # the name every network is elaborated under for its key: a name changes no figure


def ir_digest(spec: Spec) -> str:
    """A digest of the network the spec elaborates to (its IR dump, under a fixed name)."""
    from ..ir.network import dump
    from ..schemes import elaborate

    return sha256_text(dump(elaborate(replace(spec, name=KEY_NAME))))


def task_for(spec: Spec, family: str, network: str, limit: float | None = None) -> Task:
    """``network``: ir_digest(spec). The key: the network, the family, the code and tools that measure it
    (figures.tool_versions) and, for the check, its vector plan. ``limit`` applies to a synthesis task
    only (the check and the estimates run in the worker itself)."""
    extra = {"random": CHECK_RANDOM, "seed": CHECK_SEED} if family == CHECK else None
    timed = limit if family not in (CHECK, ESTIMATES) else None
    return Task(spec, family, cache_key({"network": network}, family, tool_versions(family), extra), timed)


def usable(entry: dict | None, task: Task) -> dict | None:
    """A cached entry this task may take: any entry but a time-out under a smaller limit than the task's
    (a run with a larger limit, or none, measures the adder again)."""
    if entry is None or "timed_out" not in entry:
        return entry
    return entry if task.limit is not None and task.limit <= entry["timed_out"] else None


def storable(entry: dict) -> bool:
    """Figures, a check's verdict and a time-out are cached (a time-out with its limit: an unchanged re-run
    computes nothing); a tool error or a crashed worker is not, and the next run tries again."""
    return "error" not in entry or "timed_out" in entry


def run_task(task: Task, cache_root: str | None) -> dict:
    """What a worker runs: the cached entry, or the computed one (stored when the cache is reachable).
    ``computed`` and ``seconds`` say what this call did; neither is stored."""
    cache = Cache(cache_root) if cache_root else None
    if cache is not None:
        hit = usable(cache.get(task.key), task)
        if hit is not None:
            return {**hit, "computed": False}
    t0 = time.monotonic()
    if task.limit is not None:
        from .timed import compute_within

        entry = compute_within(task.spec, task.family, task.limit, tool_versions(task.family))
    else:
        entry = compute(task.spec, task.family)
    if cache is not None and storable(entry):
        cache.put(task.key, entry)
    return {**entry, "computed": True, "seconds": round(time.monotonic() - t0, 3)}


@dataclass
class Outcome:
    sweep: Sweep
    entries: dict[tuple[str, str], dict]  # (spec name, family) -> entry
    computed: int = 0
    cached: int = 0
    failed: int = 0  # tasks that ended in an error (a tool, a crashed worker, a time-out); not a check mismatch
    timed_out: int = 0  # of those, the synthesis tasks stopped at the task limit
    seconds: dict[str, float] = field(default_factory=dict)  # family -> time spent computing


def families(sweep: Sweep) -> tuple[str, ...]:
    return (CHECK, *sweep.figures)


def run_sweep(sweep: Sweep, cache_root: str | Path, executor=None, progress: Progress = NULL,
              store_on_worker: bool = True) -> Outcome:
    """Run every task of the sweep. ``executor``: a concurrent.futures executor, or None to run here, one
    task after another. Cached entries are taken without submitting anything."""
    cache = Cache(cache_root)
    out = Outcome(sweep, {})
    todo: list[Task] = []
    for p in sweep.points:
        network = ir_digest(p.spec)
        for fam in families(sweep):
            t = task_for(p.spec, fam, network, sweep.task_seconds)
            hit = usable(cache.get(t.key), t)
            if hit is not None:
                out.entries[(p.spec.name, fam)] = hit
                out.cached += 1
                out.failed += "error" in hit
                out.timed_out += "timed_out" in hit
            else:
                todo.append(t)
    with progress.task(f"{sweep.name}: adders x figures", total=len(todo), unit="tasks") as bar:
        def done(t: Task, entry: dict) -> None:
            if entry.pop("computed", False):
                out.computed += 1
                out.seconds[t.family] = round(out.seconds.get(t.family, 0.0) + entry.get("seconds", 0.0), 3)
            else:
                out.cached += 1
            entry.pop("seconds", None)
            out.failed += "error" in entry
            out.timed_out += "timed_out" in entry
            if storable(entry) and usable(cache.get(t.key), t) is None:
                cache.put(t.key, entry)
            out.entries[(t.spec.name, t.family)] = entry
            bar.advance()

        if executor is None:
            for t in todo:
                done(t, run_task(t, str(cache.root)))
            return out
        root = str(cache.root) if store_on_worker else None
        pending = {executor.submit(run_task, t, root): t for t in todo}
        while pending:
            finished, _ = wait(list(pending), return_when=FIRST_COMPLETED)
            for fut in finished:
                t = pending.pop(fut)
                try:
                    entry = fut.result()
                except Exception as exc:  # a worker that died or a bug: recorded, the sweep goes on
                    last = traceback.format_exception_only(type(exc), exc)[-1].strip()
                    entry = {"family": t.family, "versions": tool_versions(t.family),
                             "error": f"the task did not finish: {last}", "computed": True}
                done(t, entry)
    return out


# -- the results as rows ----------------------------------------------------------------------------------------
def check_text(entry: dict | None) -> str:
    if entry is None:
        return "not run"
    if "error" in entry:
        return f"error: {entry['error']}"
    r = entry["result"]
    if r["ok"]:
        return "pass"
    return f"FAIL: {r['failed']} of {r['vectors']} vectors wrong" + (f" ({r['detail']})" if r.get("detail") else "")


def records_of(out: Outcome, p: Point, family: str) -> list[Record]:
    """The records of one adder and family. A cached entry may have been measured under another name (the
    cache key leaves the name out, as the figures do): the records take this adder's name."""
    e = out.entries.get((p.spec.name, family))
    if not e or "records" not in e:
        return []
    return [from_dict({**r, "spec": p.spec.name}) for r in e["records"]]


def figure_table(out: Outcome, judged: bool = True) -> dict[str, dict[str, float | int | None]]:
    """spec name -> {figure: value}, every declared figure of every family swept (None where none).

    ``judged``: a figure whose declaration names another to be ``shown_instead`` when an adder has it takes
    that value (a carry-skip adder's unit-gate delay is its skip-aware one: the topological figure counts
    ripple paths through the skip multiplexers that can never be sensitized). Fronts, plots and `pick` use
    the judged figures; results.csv and the rows of results.json hold every record as measured."""
    table = {}
    for p in out.sweep.points:
        figs: dict = {}
        instead = {}
        for fam in out.sweep.figures:
            for f in family_figures(fam):
                figs[f.name] = None
                if f.shown_instead:
                    instead[f.name] = f.shown_instead
            figs.update({r.figure: r.value for r in records_of(out, p, fam)})
        if judged:
            for name, other in instead.items():
                if figs.get(other) is not None:
                    figs[name] = figs[other]
        table[p.spec.name] = figs
    return table


def passed(out: Outcome, p: Point) -> bool:
    e = out.entries.get((p.spec.name, CHECK))
    return bool(e and "error" not in e and e["result"]["ok"])
