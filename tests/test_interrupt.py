"""A build killed midway leaves the earlier outputs and no stray files (issue 8, hardening: interruption).

The kills are real signals to a real `build` process. To hit every step of the write, a small wrapper
makes the process SIGKILL itself just before the k-th rename (or staged file, or the commit point), for
every k; a second test sends SIGINT from outside while the files are being renamed into place, and a
third kills a large build from outside after a range of delays.
"""

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from adder_forge.cli import main
from adder_forge.emit.outputs import STAGE_PREFIX

SPEC = "name: {name}\nwidth: {width}\nscheme: ripple\n"

# Runs `build` with one file-system step (KILL_IN) made to kill the process on its KILL_AT-th call, or to
# announce itself on stdout and pause, so that the test can signal it at exactly that point.
WRAPPER = r"""
import os, shutil, signal, sys, time
from adder_forge.emit import outputs
from adder_forge.cli import main

what, at = os.environ["KILL_IN"], int(os.environ["KILL_AT"])
calls = [0]

def wrap(real):
    def step(*args, **kwargs):
        calls[0] += 1
        if calls[0] == at:
            if os.environ.get("PAUSE"):
                print("in the write step", flush=True)
                time.sleep(60)
            os.kill(os.getpid(), signal.SIGKILL)
        return real(*args, **kwargs)
    return step

if what == "rename":
    os.rename = wrap(os.rename)
elif what == "stage":
    outputs._write = wrap(outputs._write)
elif what == "commit":
    os.unlink = wrap(os.unlink)  # the first unlink of a write is its journal: the commit point
elif what == "cleanup":
    shutil.rmtree = wrap(shutil.rmtree)  # after the commit, before the staging folder is gone
sys.exit(main(sys.argv[1:]))
"""


def snapshot(folder):
    """Files below folder, staging folders left out, as bytes."""
    out = {}
    for p in sorted(folder.rglob("*")):
        rel = p.relative_to(folder)
        if p.is_file() and not rel.parts[0].startswith(STAGE_PREFIX):
            out[str(rel)] = p.read_bytes()
    return out


def staging(folder):
    return [p.name for p in folder.iterdir() if p.name.startswith(STAGE_PREFIX)]


def build(argv):
    assert main([str(a) for a in argv]) == 0


@pytest.fixture
def scene(tmp_path):
    """out/one built from 4-bit specs; the specs then changed to 5 bits plus a new spec `two`."""
    out = tmp_path / "out"
    one, two, other = (tmp_path / f"{n}.yaml" for n in ("one", "two", "other"))
    one.write_text(SPEC.format(name="one", width=4))
    other.write_text(SPEC.format(name="other", width=3))
    build(["build", one, "--out", out])
    (out / "one" / "NOTES.md").write_text("user notes\n")
    old = snapshot(out)
    one.write_text(SPEC.format(name="one", width=5))
    two.write_text(SPEC.format(name="two", width=5))
    return out, [one, two], other, old


def killed_build(tmp_path, specs, out, what, at, pause=False):
    wrapper = tmp_path / "wrapper.py"
    wrapper.write_text(WRAPPER)
    env = dict(os.environ, KILL_IN=what, KILL_AT=str(at), **({"PAUSE": "1"} if pause else {}))
    argv = [sys.executable, str(wrapper), "build", *map(str, specs), "--out", str(out)]
    return subprocess.Popen(argv, env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def test_sigkill_at_every_step_of_the_write(scene, tmp_path, capsys):
    out, specs, other, old = scene
    build(["build", *specs, "--out", tmp_path / "fresh"])
    new = {k.replace("fresh/", ""): v for k, v in snapshot(tmp_path / "fresh").items()}
    new["one/NOTES.md"] = b"user notes\n"
    # one/ has 5 files (4 + manifest): 2 renames each; two/ is new: 1 rename of its whole staged folder
    steps = [("stage", k) for k in (1, 6, 11)] + [("rename", k) for k in range(1, 12)]
    steps += [("commit", 1), ("cleanup", 1)]
    for what, at in steps:
        p = killed_build(tmp_path, specs, out, what, at)
        p.communicate(timeout=120)
        assert p.returncode == -signal.SIGKILL, (what, at)
        assert staging(out), (what, at)  # the hidden staging folder is what the next run cleans up
        build(["build", other, "--out", out])  # any later write into out/ finishes the clean-up
        assert not staging(out), (what, at)
        got = {k: v for k, v in snapshot(out).items() if not k.startswith("other/")}
        assert got == (new if what == "cleanup" else old), (what, at)  # cleanup comes last: committed
    capsys.readouterr()


@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM, signal.SIGHUP])
def test_sigint_or_sigterm_while_renaming_undoes_at_once(scene, tmp_path, sig):
    out, specs, _, old = scene
    p = killed_build(tmp_path, specs, out, "rename", 5, pause=True)  # two files of one/ already replaced
    assert p.stdout.readline() == "in the write step\n"
    p.send_signal(sig)
    _, err = p.communicate(timeout=120)
    if sig == signal.SIGINT:
        assert p.returncode == 130 and err.strip() == "adder-forge: interrupted"
    else:  # dies of the signal, as a process that does not catch it would
        assert p.returncode == -sig and err == ""
    assert snapshot(out) == old
    assert not staging(out)  # put back and cleaned up by the interrupted process itself


@pytest.mark.slow  # about 15 s alone on two cores
def test_sigkill_of_a_large_build_after_a_range_of_delays(tmp_path, capsys):
    """From outside, as a user or a CI timeout would: the folder is always the old one or the new one."""
    out = tmp_path / "out"
    spec = tmp_path / "big.yaml"
    other = tmp_path / "other.yaml"
    other.write_text(SPEC.format(name="other", width=3))
    spec.write_text(SPEC.format(name="big", width=1024))
    build(["build", spec, "--out", out, "--tb-vectors", "20000"])
    old = snapshot(out)
    spec.write_text(SPEC.format(name="big", width=1025))
    t = time.monotonic()
    build(["build", spec, "--out", tmp_path / "fresh", "--tb-vectors", "20000"])
    took = time.monotonic() - t
    new = {k.replace("fresh/", ""): v for k, v in snapshot(tmp_path / "fresh").items()}
    assert old != new
    argv = [sys.executable, "-m", "adder_forge", "build", str(spec), "--out", str(out), "--tb-vectors", "20000"]
    for frac in (0.3, 0.6, 0.8, 0.9, 1.0, 1.1, 1.3):
        p = subprocess.Popen(argv, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        time.sleep(took * frac + 0.3)  # + start-up of the interpreter, which the in-process run did not pay
        p.kill()
        p.wait(timeout=60)
        build(["build", other, "--out", out])
        assert not staging(out)
        got = {k: v for k, v in snapshot(out).items() if not k.startswith("other/")}
        assert got in (old, new), frac
        if got == new:  # the build finished before the kill: back to the old folder for the next one
            spec.write_text(SPEC.format(name="big", width=1024))
            build(["build", spec, "--out", out, "--tb-vectors", "20000"])
            spec.write_text(SPEC.format(name="big", width=1025))
    capsys.readouterr()


def waits_for_a_lock(proc: subprocess.Popen, seconds: float = 60) -> bool:
    """True once the kernel lists the process as blocked on a flock (Linux: the '->' lines of /proc/locks);
    False if it ends first."""
    end = time.monotonic() + seconds
    while time.monotonic() < end and proc.poll() is None:
        for line in Path("/proc/locks").read_text().splitlines():
            f = line.split()
            if len(f) > 5 and f[1] == "->" and f[2] == "FLOCK" and f[5] == str(proc.pid):
                return True
        time.sleep(0.05)
    return False


@pytest.mark.skipif(not Path("/proc/locks").exists(), reason="needs Linux's /proc/locks to see a waiting lock")
def test_a_second_build_waits_and_does_not_undo_a_running_one(scene, tmp_path):
    """The staging folder of a live build is not an interrupted one: a second build into the same folder
    waits for the lock instead of rolling the first one back."""
    out, specs, other, old = scene
    first = killed_build(tmp_path, specs, out, "rename", 3, pause=True)
    assert first.stdout.readline() == "in the write step\n"
    second = subprocess.Popen([sys.executable, "-m", "adder_forge", "build", str(other), "--out", str(out)],
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    assert waits_for_a_lock(second), "the second build did not wait for the lock"
    assert second.poll() is None
    assert staging(out)  # the first build's staging folder, untouched
    first.send_signal(signal.SIGINT)
    assert first.wait(timeout=60) == 130
    stdout, err = second.communicate(timeout=120)
    assert second.returncode == 0, err
    assert "other: 3-bit ripple" in stdout
    assert {k: v for k, v in snapshot(out).items() if not k.startswith("other/")} == old
    assert not staging(out)
