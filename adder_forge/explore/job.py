"""`explore`: read a sweep, run it, write DIR/results.csv, results.json (and the plots and report)."""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

from ..base.progress import NULL, Progress
from ..emit.outputs import Folder, Written, fingerprint, write_folders
from .cache import default_root
from .executors import get
from .results import to_csv, to_json
from .run import Outcome, run_sweep
from .sweep import Sweep, load_sweep


@dataclass(frozen=True)
class Explored:
    outcome: Outcome
    written: Written | None
    files: tuple[str, ...]
    drawn: int = 0  # plots drawn by this run; the others came from the plot cache unchanged
    reused: int = 0


def output_files(out: Outcome, draw: bool = True, plots=None) -> dict[str, str | bytes]:
    """``plots``: a report.Plots (where drawn plots are kept and counted), default drawn and not kept."""
    files: dict[str, str | bytes] = {"results.csv": to_csv(out), "results.json": to_json(out)}
    if draw:
        from .report import report_files

        files.update(report_files(out, plots))
    return files


def run(sweep: Sweep, cache: str | Path | None = None, executor: str = "local", jobs: int | None = None,
        scheduler: str | None = None, progress: Progress = NULL, task_seconds: float | None = None) -> Outcome:
    """``task_seconds``: a synthesis task's time limit instead of the sweep's own (--task-seconds)."""
    if task_seconds is not None:
        sweep = replace(sweep, task_seconds=task_seconds)
    ex = get(executor)
    with ex.open(jobs, scheduler) as pool:
        return run_sweep(sweep, cache or default_root(), pool, progress, store_on_worker=ex.store_on_worker)


def explore(path: str | Path, out_dir: str | Path | None = None, cache: str | Path | None = None,
            executor: str = "local", jobs: int | None = None, scheduler: str | None = None,
            progress: Progress = NULL, force: bool = False, draw: bool = True,
            task_seconds: float | None = None) -> Explored:
    """The whole `explore` command: results into ``out_dir`` (default out/NAME), all-or-nothing."""
    sweep = load_sweep(path)
    target = Path(out_dir) if out_dir is not None else Path("out") / sweep.name
    target = target.resolve()
    out = run(sweep, cache, executor, jobs, scheduler, progress, task_seconds)
    plots = None
    if draw:
        from .report import Plots

        plots = Plots(cache or default_root())  # a plot whose data is unchanged is not drawn again
    files = output_files(out, draw, plots)
    design = fingerprint(files["results.json"])
    written = write_folders(target.parent, [Folder(target.name, files, design)], force=force)[0]
    return Explored(out, written, tuple(files), plots.drawn if plots else 0, plots.reused if plots else 0)
