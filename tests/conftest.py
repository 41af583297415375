import os
from pathlib import Path

import pytest

from adder_forge.spec.loader import make_spec

GOLDEN = Path(__file__).parent / "golden"
REGEN = os.environ.get("ADDER_FORGE_REGEN_GOLDEN") == "1"  # set to rewrite golden files after a reviewed change


def golden(name: str, text: str) -> None:
    """Compare text with tests/golden/<name>; ADDER_FORGE_REGEN_GOLDEN=1 rewrites it instead."""
    path = GOLDEN / name
    if REGEN:
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text, encoding="utf-8")
    assert path.exists(), f"golden file {path} missing: run with ADDER_FORGE_REGEN_GOLDEN=1 and review it"
    assert text == path.read_text(encoding="utf-8")


@pytest.fixture
def spec():
    return make_spec


def run_cli(argv, capsys):
    """(exit status, stdout, stderr) of one `adder-forge` command run in this process, as a user would see it."""
    from adder_forge.cli import main

    try:
        code = main([str(a) for a in argv])
    except SystemExit as exc:  # argparse's own errors
        code = exc.code
    out = capsys.readouterr()
    return code, out.out, out.err
