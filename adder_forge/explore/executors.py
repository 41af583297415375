"""Where a sweep's tasks run: a registry of executors, each a context manager giving a
``concurrent.futures.Executor`` (or None: run in this process, one task after another).

- ``local``: a process pool on this machine's cores (``--jobs N``; 1 runs in this process). Workers are
  started with ``spawn`` (no fork of a process that holds threads) and store into the cache themselves.
- ``dask``: a Dask ``distributed`` scheduler at ``--scheduler ADDRESS`` (tcp://host:8786); its workers need
  only adder_forge installed. ``Client.get_executor()`` is the same executor interface, so the runner does
  not know the difference. Workers may not see this machine's cache folder, so they return their entries
  and only this process writes the cache.
"""

from __future__ import annotations

import contextlib
import os
from dataclasses import dataclass
from typing import Callable, Iterator

from ..base.errors import ToolError, UsageError
from ..spec.registry import suggest


@dataclass(frozen=True)
class Executor:
    name: str
    open: Callable[..., "contextlib.AbstractContextManager"]  # (jobs, scheduler) -> cm yielding an executor
    store_on_worker: bool
    doc: str


EXECUTORS: dict[str, Executor] = {}


def executor(name: str, store_on_worker: bool, doc: str):
    def deco(fn):
        if name in EXECUTORS:
            raise ValueError(f"executor {name} registered twice")
        EXECUTORS[name] = Executor(name, contextlib.contextmanager(fn), store_on_worker, doc)
        return fn

    return deco


def get(name: str, command: str = "explore") -> Executor:
    if name not in EXECUTORS:
        raise UsageError(f"unknown executor '{name}'" + suggest(name, EXECUTORS), command, "--executor")
    return EXECUTORS[name]


def default_jobs() -> int:
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not Linux
        return max(1, os.cpu_count() or 1)


def _die_with_parent(parent_pid: int) -> None:
    """Worker initializer: end this worker when the explore process dies, even by SIGKILL (a pool's own
    shutdown never runs then, and orphaned workers would go on synthesizing). Linux: the kernel sends
    SIGKILL on parent death (prctl PR_SET_PDEATHSIG); elsewhere a daemon thread polls the parent pid."""
    import signal
    import threading
    import time

    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        if libc.prctl(1, signal.SIGKILL, 0, 0, 0) == 0:  # 1 = PR_SET_PDEATHSIG
            if os.getppid() != parent_pid:  # the parent died before prctl took hold
                os._exit(1)
            return
    except (OSError, AttributeError):
        pass

    def watch() -> None:
        while os.getppid() == parent_pid:
            time.sleep(1.0)
        os._exit(1)

    threading.Thread(target=watch, name="adder-forge-parent-watch", daemon=True).start()


@executor("local", True, "a process pool on this machine (--jobs N, default: every core)")
def _local(jobs: int | None = None, scheduler: str | None = None) -> Iterator:
    if scheduler:
        raise UsageError("--scheduler is for --executor dask", "explore", "--scheduler")
    jobs = jobs or default_jobs()
    if jobs == 1:
        yield None
        return
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    pool = ProcessPoolExecutor(max_workers=jobs, mp_context=multiprocessing.get_context("spawn"),
                               initializer=_die_with_parent, initargs=(os.getpid(),))
    try:
        yield pool
    finally:
        pool.shutdown(wait=True, cancel_futures=True)


@executor("dask", False, "a Dask distributed scheduler (--scheduler ADDRESS)")
def _dask(jobs: int | None = None, scheduler: str | None = None) -> Iterator:
    if not scheduler:
        raise UsageError("--executor dask needs --scheduler ADDRESS (e.g. tcp://127.0.0.1:8786)", "explore",
                         "--scheduler")
    try:
        from distributed import Client
    except ImportError:
        raise ToolError("--executor dask needs the Dask distributed package",
                        "pip install 'adder_forge[cluster]' (or: pip install 'dask[distributed]')") from None
    try:
        client = Client(scheduler, timeout=30)
    except (OSError, TimeoutError) as exc:
        raise ToolError(f"cannot reach the Dask scheduler at {scheduler}", str(exc)) from None
    try:
        yield client.get_executor()
    finally:
        client.close()
