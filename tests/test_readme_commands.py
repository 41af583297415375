"""`.ci/run` runs exactly the README's two set-up and test commands, so a missing step fails CI."""

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def readme_commands() -> list[str]:
    text = (ROOT / "README.md").read_text()
    block = text.split("## On a fresh machine: two commands", 1)[1].split("```sh", 1)[1].split("```", 1)[0]
    return [re.sub(r"\s+#.*$", "", line).strip() for line in block.strip().splitlines()]


def test_ci_runs_the_readme_commands():
    cmds = readme_commands()
    assert len(cmds) == 2
    ci = [l.strip() for l in (ROOT / ".ci" / "run").read_text().splitlines()]
    assert any(l.startswith(cmds[0]) for l in ci), cmds[0]
    assert cmds[1] in ci, cmds[1]


def test_setup_runs_the_main_job_on_an_example_spec():
    setup = (ROOT / "setup.sh").read_text()
    spec = re.search(r"adder-forge build (specs/\S+\.yaml)", setup).group(1)
    assert (ROOT / spec).exists()
    assert f"adder-forge verify {spec}" in setup
