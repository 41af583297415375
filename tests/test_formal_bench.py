"""bench/formal_scale.py exits non-zero when a proof fails (issue 8, defect 11): it printed FAILED and
exited 0."""

from __future__ import annotations

import runpy
from pathlib import Path

from adder_forge.checks.formal import Proof

BENCH = Path(__file__).resolve().parents[1] / "bench"


def load(monkeypatch, ok: bool):
    monkeypatch.syspath_prepend(str(BENCH))
    mod = runpy.run_path(str(BENCH / "formal_scale.py"), run_name="formal_scale_under_test")
    saved = []
    mod["main"].__globals__["prove"] = lambda net, verilog: Proof(net.name, ok, 0.01, None, "", "claim",
                                                                   "" if ok else "deliberately failed")
    mod["main"].__globals__["save"] = lambda name, data: saved.append(data) or "nowhere"
    return mod["main"], saved


def test_a_failed_proof_makes_the_bench_exit_1(monkeypatch, capsys):
    main, saved = load(monkeypatch, ok=False)
    assert main([4]) == 1
    err = capsys.readouterr().err
    assert err.startswith("FAILED:") and "4 ripple" in err
    assert saved and not any(r["proved"] for r in saved[0]["rows"])


def test_all_proved_exits_0(monkeypatch):
    main, saved = load(monkeypatch, ok=True)
    assert main([4]) == 0
    assert saved and all(r["proved"] for r in saved[0]["rows"])
