"""Schemes describe themselves (issue 9): summaries and the report table ask the scheme registry entry
(`Scheme.describe`) and know no scheme's keys; meta facts are written under named keys (ir/network.py)."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

import adder_forge
from adder_forge.emit.summary import describe, description
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from adder_forge.spec.registry import schemes
from adder_forge.synth.measure import format_table, measure_specs

PKG = Path(adder_forge.__file__).parent


@pytest.mark.parametrize("kw, label", [
    (dict(scheme="prefix"), "prefix (kogge-stone)"),
    (dict(scheme="prefix", prefix="harris", taxonomy=[1, 1, 1]), "prefix (harris [1, 1, 1])"),
    (dict(scheme="prefix", prefix="harris", taxonomy=[0, 1, 2]), "prefix (harris [0, 1, 2])"),
    (dict(scheme="prefix", prefix="knowles", fanouts=[2, 1, 1, 1]), "prefix (knowles [2, 1, 1, 1])"),
    (dict(scheme="prefix", prefix="sklansky", block=4, ling=True), "prefix (sklansky, block 4, ling)"),
    (dict(scheme="block-lookahead", group=2), "block-lookahead (group 2)"),
    (dict(scheme="carry-skip", block=[4, 4, 4, 4]), "carry-skip (block [4, 4, 4, 4])"),
    (dict(scheme="carry-skip"), "carry-skip"),
    (dict(scheme="ripple"), "ripple"),
])
def test_labels_carry_every_key_that_differs(kw, label):
    # Harris's taxonomy points at 16 bits: l + f + t = log2(16) - 1 = 3 (Harris, "A taxonomy of parallel
    # prefix networks", 2003); Knowles 2001: one lateral fanout per level, the last level first.
    spec = make_spec("d16", 16, carry_in=False, **kw)
    assert description(spec, elaborate(spec).meta).label == label


def test_two_harris_points_get_two_table_rows(tmp_path):
    specs = [make_spec("h1", 16, "prefix", carry_in=False, prefix="harris", taxonomy=[1, 1, 1]),
             make_spec("h2", 16, "prefix", carry_in=False, prefix="harris", taxonomy=[0, 1, 2])]
    rows = format_table(measure_specs(specs, [], tmp_path)).splitlines()
    assert "prefix (harris [1, 1, 1])" in rows[2] and "prefix (harris [0, 1, 2])" in rows[4]


def test_resolved_block_sizes_beside_the_key():
    spec = make_spec("cs16", 16, "carry-skip")  # block: auto
    line = describe(spec, elaborate(spec).meta)
    assert re.search(r"block=auto \(\[[0-9, ]+\]\)", line), line


def test_every_scheme_describes_every_key_it_has():
    for name, sch in schemes().items():
        spec = make_spec("x8", 8, name)
        d = sch.describe(spec, {})
        assert d.label.startswith(name)
        keys = dict(d.keys)
        assert keys["carry_in"] == "true" and keys["carry_out"] == "true"
        assert {o.key for o in sch.options if spec.opt(o.key) is not None} <= set(keys), name


def test_meta_is_written_under_named_keys():
    """No module writes a meta fact under a string literal: the keys are ir.network's META_* constants."""
    found = []
    for path in PKG.rglob("*.py"):
        for k, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
            if re.search(r"meta(\.append\(|\s*\+=\s*\[?)\s*\(\s*[\"']", line) or re.search(r"\(\([\"']note[\"'],", line):
                found.append(f"{path.relative_to(PKG)}:{k}: {line.strip()}")
    assert not found, found


def test_one_line_summary_names_the_form_and_what_the_unit_computes():
    # a parameterized file is not the flat netlist the figures count, so its line must say which file it is
    flat = describe(make_spec("d_flat", 8, "ripple", carry_in=False))
    param = describe(make_spec("d_param", 8, "ripple", carry_in=False, form="parameterized"))
    assert "form=" not in flat
    assert param == flat[:-1] + ", form=parameterized]"
    sub = describe(make_spec("d_sub", 8, "ripple", carry_in=False, form="parameterized", operation="subtract"))
    assert sub.endswith("form=parameterized, operation=subtract]"), sub
