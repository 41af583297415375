"""One small example of each block scheme, dumped from the IR and compared with tests/golden/bk_*.ir.

After a reviewed change to a construction, rewrite them with
ADDER_FORGE_REGEN_GOLDEN=1 .venv/bin/pytest tests/test_block_golden.py, and read the diff before committing.
"""

import pytest

from adder_forge.ir.network import dump
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from conftest import golden

EXAMPLES = {
    "bk_skip5": dict(width=5, scheme="carry-skip", block=2),
    "bk_select5": dict(width=5, scheme="carry-select", block=[2, 3]),
    "bk_condsum4": dict(width=4, scheme="conditional-sum", carry_out=False),
    "bk_blocklook5": dict(width=5, scheme="block-lookahead", block=2, group=2),
    "bk_blocklook5_ling": dict(width=5, scheme="block-lookahead", block=2, group=2, ling=True),
    "bk_lookahead3_ling": dict(width=3, scheme="lookahead", ling=True, carry_in=False),
}


@pytest.mark.parametrize("name", sorted(EXAMPLES))
def test_dump_matches_golden(name):
    golden(f"{name}.ir", dump(elaborate(make_spec(name, **EXAMPLES[name]))))


def test_tradeoff_table_is_current():
    """docs/block_tradeoffs.md is bench/block_tradeoffs.py's output; rerun the script after a change."""
    import importlib.util
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    spec = importlib.util.spec_from_file_location("block_tradeoffs", root / "bench" / "block_tradeoffs.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    assert (root / "docs" / "block_tradeoffs.md").read_text(encoding="utf-8") == mod.document(), (
        "stale: run .venv/bin/python bench/block_tradeoffs.py docs/block_tradeoffs.md")
