"""A synthesis task under a time limit (``--task-seconds``, the sweep key ``task_seconds``).

The task is computed in a child process that leads a session of its own, so every tool it starts (Yosys
and ABC in their WebAssembly runtimes, nextpnr) is in its process group. When the limit passes, the whole
group is killed at once: no tool goes on synthesizing an adder nobody waits for, and the pool worker is
free for the next task. A time-out is a result like a tool error: a row with no figure and a reason, and
the sweep goes on.

Why a process and not a timer in the worker: the time goes where nobody can interrupt it from Python
(a tool run, or emitting a 358,000-gate netlist), and a pool worker (daemonic) may not start a
multiprocessing child, while a plain subprocess it may. Workers on a Dask cluster run the same code.

The child dies with its parent: a thread polls its parent's pid and kills the child's own group when the
worker that waits for it is gone (a killed explore takes its workers with it, executors.py).
"""

from __future__ import annotations

import json
import os
import pickle
import signal
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

# What runs one task in a child process: argv + [result file]; the pickled (spec, family) on stdin.
CHILD = (sys.executable, "-m", "adder_forge.explore.timed")
REAP_SECONDS = 30.0  # after the kill: how long to wait for the group's pipes to close


def timed_out_entry(family: str, versions: dict, seconds: float) -> dict:
    return {"family": family, "versions": versions, "timed_out": seconds,
            "error": f"stopped at the task limit of {seconds:g} s (task_seconds, --task-seconds); "
                     f"a run with a larger limit measures it again"}


def compute_within(spec, family: str, seconds: float, versions: dict) -> dict:
    """run.compute(spec, family) in a child process of its own session, killed with its whole process
    group after ``seconds``: the entry, or a timed-out entry, or an error entry if the child died."""
    with tempfile.TemporaryDirectory(prefix="adder_forge_task_") as tmp:
        result = Path(tmp) / "entry.json"
        proc = subprocess.Popen([*CHILD, str(result)], stdin=subprocess.PIPE, stdout=subprocess.DEVNULL,
                                stderr=subprocess.PIPE, start_new_session=True)
        try:
            _, err = proc.communicate(pickle.dumps((spec, family)), timeout=seconds)
        except subprocess.TimeoutExpired:
            _kill_group(proc)
            return timed_out_entry(family, versions, seconds)
        except BaseException:  # this worker is being stopped: take the child's group with it
            _kill_group(proc)
            raise
        if proc.returncode == 0 and result.is_file():
            return json.loads(result.read_text(encoding="utf-8"))
        last = (err or b"").decode("utf-8", "replace").strip().splitlines()
        how = f"exit {proc.returncode}" if proc.returncode >= 0 else f"signal {-proc.returncode}"
        return {"family": family, "versions": versions,
                "error": f"the task's process ended with {how}" + (f": {last[-1]}" if last else "")}


def _kill_group(proc: subprocess.Popen) -> None:
    try:
        os.killpg(proc.pid, signal.SIGKILL)  # the child leads its session: its pid is the group's id
    except (ProcessLookupError, PermissionError):
        proc.kill()
    try:
        proc.communicate(timeout=REAP_SECONDS)
    except subprocess.TimeoutExpired:  # a pipe held open by a process that left the group
        proc.wait()


def _watch_parent(parent: int) -> None:
    while os.getppid() == parent:
        time.sleep(1.0)
    os.killpg(os.getpgrp(), signal.SIGKILL)


def main(argv: list[str]) -> int:
    threading.Thread(target=_watch_parent, args=(os.getppid(),), daemon=True).start()
    spec, family = pickle.loads(sys.stdin.buffer.read())
    from .task import compute

    entry = compute(spec, family)
    out = Path(argv[0])
    tmp = out.with_suffix(".tmp")
    tmp.write_text(json.dumps(entry), encoding="utf-8")
    os.replace(tmp, out)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
