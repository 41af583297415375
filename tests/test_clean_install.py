"""Clean install (issue 8, hardening): the wheel alone, in a fresh virtual environment, outside the repository,
builds and verifies an example spec. Catches what an editable install hides: a package or template left
out of the wheel, an import of a file that only exists in the checkout, a dependency missing from
pyproject.toml.

Dependencies come from pip's configured index and cache (the same place set-up took them from); the
project itself is only ever the wheel built here.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import venv
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
SPEC = ROOT / "specs" / "ripple8.yaml"

pytestmark = pytest.mark.slow  # about a minute: a wheel build and a venv with numpy, amaranth and cocotb


def _run(argv, cwd, timeout=900, env=None):
    r = subprocess.run([str(a) for a in argv], cwd=cwd, capture_output=True, text=True, timeout=timeout, env=env)
    assert r.returncode == 0, f"{' '.join(map(str, argv))} -> exit {r.returncode}\n{r.stdout[-3000:]}\n{r.stderr[-3000:]}"
    return r


@pytest.fixture(scope="module")
def installed(tmp_path_factory):
    base = tmp_path_factory.mktemp("clean_install")
    dist = base / "dist"
    # Built from a copy of what the wheel is made of: setuptools leaves build/ and *.egg-info in the source
    # tree, and a stale build/lib (say, of a module since moved) would slip into a wheel built in place.
    src = base / "src"
    src.mkdir()
    for name in ("pyproject.toml", "README.md"):
        shutil.copy(ROOT / name, src / name)
    for name in ("adder_forge", "templates"):
        shutil.copytree(ROOT / name, src / name, ignore=shutil.ignore_patterns("__pycache__", "*.pyc"))
    # --no-build-isolation: setuptools comes from the test environment, so the build needs no network
    _run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "-q", "-w", dist, src], cwd=base)
    wheels = sorted(dist.glob("adder_forge-*.whl"))
    assert len(wheels) == 1, wheels
    env_dir = base / "venv"
    venv.EnvBuilder(with_pip=True, clear=True).create(env_dir)
    py = env_dir / "bin" / "python"
    _run([py, "-m", "pip", "install", "-q", wheels[0]], cwd=base)
    work = base / "work"  # outside the repository: nothing of the checkout is on the path
    work.mkdir()
    shutil.copy(SPEC, work / SPEC.name)
    return {"wheel": wheels[0], "py": py, "bin": env_dir / "bin", "work": work}


def _clean_env(bin_dir: Path) -> dict:
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "VIRTUAL_ENV", "PYTHONHOME")}
    # The fresh venv first; system tools (iverilog) stay reachable, the repository's .venv does not.
    env["PATH"] = os.pathsep.join([str(bin_dir)] + [p for p in env.get("PATH", "").split(os.pathsep)
                                                    if ".venv" not in p])
    return env


def test_wheel_carries_the_templates(installed):
    names = zipfile.ZipFile(installed["wheel"]).namelist()
    repo_templates = sorted(p.name for p in (ROOT / "templates").glob("*.j2"))
    assert repo_templates
    for t in repo_templates:
        assert f"adder_forge/templates/{t}" in names, f"{t} is not in the wheel"
    packages = {str(p.parent.relative_to(ROOT)).replace(os.sep, "/") for p in (ROOT / "adder_forge").rglob("*.py")}
    for pkg in packages:
        assert any(n.startswith(pkg + "/") for n in names), f"package {pkg} is not in the wheel"


def test_installed_wheel_builds_and_verifies(installed):
    env = _clean_env(installed["bin"])
    work = installed["work"]
    r = _run([installed["py"], "-c", "import adder_forge, sys; print(adder_forge.__file__)"], cwd=work, env=env)
    where = Path(r.stdout.strip())
    assert str(where).startswith(str(installed["bin"].parent)), f"imported {where}, not the installed wheel"
    tool = installed["bin"] / "adder-forge"
    r = _run([tool, "build", SPEC.name], cwd=work, env=env)
    name = "dma_addr_add8"
    assert f"-> out/{name}/" in r.stdout, r.stdout
    for f in (f"{name}.v", f"{name}_tb.v", f"{name}_vectors.hex", f"{name}.json"):
        assert (work / "out" / name / f).is_file(), f
    sims = ["--sim", "icarus"] if shutil.which("iverilog", path=env["PATH"]) else []
    r = _run([tool, "verify", SPEC.name, *sims], cwd=work, env=env)
    assert r.stdout.strip().splitlines()[-1] == f"{1 + len(sims) // 2} passed, 0 failed", r.stdout
    assert "builtin" in r.stdout and "pass" in r.stdout
