"""Byte-identical outputs across runs, processes, PYTHONHASHSEED values and the key order of the spec
(issue 8, hardening: determinism). Every file is compared, the hidden manifest too."""

import os
import shutil
import subprocess
import sys
from pathlib import Path

import yaml

from adder_forge.spec.registry import schemes

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = sorted((ROOT / "specs").glob("*.yaml"))
# Beyond the examples: every scheme at an odd width, with its defaults, and the keys most likely to hide an
# unordered set or dict (explicit block lists, taxonomy triples, sparse trees, Ling).
EXTRA = {
    "d_bla": {"width": 29, "scheme": "block-lookahead", "block": 4, "group": 3, "ling": True},
    "d_csel": {"width": 21, "scheme": "carry-select", "block": [3, 5, 6, 7]},
    "d_hc": {"width": 37, "scheme": "prefix", "prefix": "han-carlson"},
    "d_sparse": {"width": 40, "scheme": "prefix", "prefix": "kogge-stone", "block": 4, "ling": True},
    "d_cond": {"width": 19, "scheme": "conditional-sum"},
}


def specs_folder(tmp_path) -> list[Path]:
    folder = tmp_path / "specs"
    folder.mkdir()
    if (ROOT / "specs" / "nets").is_dir():  # network files the examples name (prefix: file)
        shutil.copytree(ROOT / "specs" / "nets", folder / "nets")
    out = []
    for p in EXAMPLES:
        out.append(folder / p.name)
        out[-1].write_text(p.read_text())
    for name in schemes():
        out.append(folder / f"s_{name.replace('-', '_')}.yaml")
        out[-1].write_text(f"name: s_{name.replace('-', '_')}\nwidth: 13\nscheme: {name}\n")
    for name, body in EXTRA.items():
        out.append(folder / f"{name}.yaml")
        out[-1].write_text(yaml.safe_dump({"name": name, **body}, sort_keys=False))
    return out


def build(specs, out, seed, cwd):
    env = dict(os.environ, PYTHONHASHSEED=seed)
    r = subprocess.run([sys.executable, "-m", "adder_forge", "build", *map(str, specs), "--out", str(out)],
                       cwd=cwd, env=env, capture_output=True, text=True, timeout=600)
    assert r.returncode == 0, r.stderr
    return r.stdout


def files(out: Path) -> dict[str, bytes]:
    got = {str(p.relative_to(out)): p.read_bytes() for p in sorted(out.rglob("*")) if p.is_file()}
    assert got, out
    return got


def differing(a: dict, b: dict) -> list[str]:
    return sorted(k for k in a.keys() | b.keys() if a.get(k) != b.get(k))


def test_same_bytes_across_processes_and_hash_seeds(tmp_path):
    specs = specs_folder(tmp_path)
    first = tmp_path / "o0"
    line = build(specs, first, "0", tmp_path)
    reference = files(first)
    assert any(k.endswith(".adder_forge_manifest.json") for k in reference)
    assert len([k for k in reference if k.endswith(".v") and not k.endswith(("_tb.v", "_inst.v"))]) == len(specs)
    for k, seed in enumerate(("1", "4242", "random", "0")):
        out = tmp_path / f"o{k + 1}"
        # relative output path and another working folder: nothing may depend on where the run happens
        assert build(specs, os.path.relpath(out, specs[0].parent), seed, specs[0].parent).replace(
            os.path.relpath(out, specs[0].parent), str(first)) == line
        assert differing(files(out), reference) == [], seed


def reorder(text: str) -> str:
    """The same spec with its keys in reverse order, written in flow style with quoted strings."""
    data = yaml.safe_load(text)
    items = list(data.items())[::-1]
    return "# the keys in another order\n{" + ", ".join(f"{k}: {_flow(v)}" for k, v in items) + "}\n"


def _flow(v):
    if isinstance(v, str):
        return f'"{v}"'
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, list):
        return "[" + ", ".join(_flow(x) for x in v) + "]"
    return str(v)


def test_key_order_and_spelling_of_the_spec_do_not_matter(tmp_path):
    specs = specs_folder(tmp_path)
    shuffled = tmp_path / "shuffled"
    shuffled.mkdir()
    if (tmp_path / "specs" / "nets").is_dir():
        shutil.copytree(tmp_path / "specs" / "nets", shuffled / "nets")
    again = []
    for p in specs:
        again.append(shuffled / p.name)
        again[-1].write_text(reorder(p.read_text()))
        assert again[-1].read_text() != p.read_text()
        assert yaml.safe_load(again[-1].read_text()) == yaml.safe_load(p.read_text())
    build(specs, tmp_path / "a", "0", tmp_path)
    build(again, tmp_path / "b", "0", tmp_path)
    assert differing(files(tmp_path / "a"), files(tmp_path / "b")) == []


def test_rebuild_in_place_rewrites_the_same_bytes(tmp_path):
    specs = specs_folder(tmp_path)[:4]
    out = tmp_path / "o"
    build(specs, out, "3", tmp_path)
    before = files(out)
    build(specs, out, "5", tmp_path)
    assert differing(files(out), before) == []


def test_a_changed_spec_changes_the_bytes(tmp_path):
    """The comparison above can fail: a real change shows up in it."""
    text = "name: x\nwidth: 8\nscheme: ripple\ncarry_in: false\n"
    a, b = tmp_path / "a.yaml", tmp_path / "b.yaml"
    a.write_text(text)
    b.write_text(text.replace("false", "true"))
    build([a], tmp_path / "oa", "0", tmp_path)
    build([b], tmp_path / "ob", "0", tmp_path)
    assert "x/x.v" in differing(files(tmp_path / "oa"), files(tmp_path / "ob"))
