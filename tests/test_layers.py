"""The package is laid out by layer: a module imports only from its own layer or the ones below it, and no
two modules import each other, directly or round a longer loop (every import counts, also those inside
functions). The layer order is the data flow in DEVELOPERS.md."""

import ast
from pathlib import Path

import pytest

import adder_forge

PKG = Path(adder_forge.__file__).parent
# lowest first; a module may import its own layer and any layer before it
LAYERS = ["base", "spec", "ir", "schemes", "analysis", "emit", "checks", "synth", "search", "explore"]
TOP = {"adder_forge", "adder_forge.cli", "adder_forge.__main__", "adder_forge.amaranth"}


def _module_name(path: Path) -> str:
    rel = path.relative_to(PKG.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _imports(path: Path) -> set[str]:
    """Every adder_forge module this file imports, resolved to a module (not a name inside one)."""
    name = _module_name(path)
    pkg = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    found = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found |= {a.name for a in node.names if a.name.startswith("adder_forge")}
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = pkg.split(".")
                base = base[: len(base) - (node.level - 1)]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if not target.startswith("adder_forge"):
                continue
            for a in node.names:  # `from .x import y` where y is itself a module
                sub = f"{target}.{a.name}"
                found.add(sub if sub in MODULES else target)
    return {m for m in found if m in MODULES} - {name}


FILES = sorted(PKG.rglob("*.py"))
MODULES = {_module_name(p) for p in FILES}
GRAPH = {_module_name(p): _imports(p) for p in FILES}


def _layer(module: str) -> int:
    if module in TOP:
        return len(LAYERS)
    head = module.split(".")[1]
    assert head in LAYERS, f"{module} is in no layer folder: put it in one of {LAYERS}"
    return LAYERS.index(head)


def test_the_graph_was_read():
    # a broken reader would find nothing and pass everything below
    assert len(MODULES) > 30
    assert "adder_forge.ir.network" in GRAPH["adder_forge.ir.builder"]
    assert "adder_forge.emit.testbench" in GRAPH["adder_forge.emit.design"]


@pytest.mark.parametrize("module", sorted(GRAPH))
def test_no_upward_import(module):
    mine = _layer(module)
    upward = sorted(m for m in GRAPH[module] if _layer(m) > mine)
    assert not upward, f"{module} (layer {LAYERS[mine] if mine < len(LAYERS) else 'top'}) imports {upward}"


def test_no_import_cycle():
    state: dict[str, int] = {}
    stack: list[str] = []

    def visit(m):
        state[m] = 1
        stack.append(m)
        for n in sorted(GRAPH[m]):
            if state.get(n) == 1:
                cycle = stack[stack.index(n):] + [n]
                pytest.fail("import cycle: " + " -> ".join(cycle))
            if n not in state:
                visit(n)
        stack.pop()
        state[m] = 2

    for m in sorted(GRAPH):
        if m not in state:
            visit(m)


def test_a_cycle_and_an_upward_import_would_be_caught(tmp_path):
    # the checks above on a made-up graph, so that they are seen to fail
    global GRAPH
    saved = GRAPH
    try:
        GRAPH = {"adder_forge.ir.a": {"adder_forge.ir.b"}, "adder_forge.ir.b": {"adder_forge.ir.a"}}
        with pytest.raises(pytest.fail.Exception):
            test_no_import_cycle()
        GRAPH = {"adder_forge.ir.a": {"adder_forge.checks.b"}, "adder_forge.checks.b": set()}
        with pytest.raises(AssertionError):
            test_no_upward_import("adder_forge.ir.a")
    finally:
        GRAPH = saved


def test_every_layer_folder_ships_in_the_wheel():
    """pyproject lists packages by hand; a layer folder left out imports from a checkout but is missing from
    the installed wheel (adder_forge.search was, once)."""
    import re as _re
    root = Path(__file__).resolve().parents[1]
    listed = set(_re.findall(r'"(adder_forge[\w.]*)"', (root / "pyproject.toml").read_text().split("packages =", 1)[1]
                            .split("]", 1)[0]))
    folders = {"adder_forge." + p.parent.name for p in (root / "adder_forge").glob("*/__init__.py")}
    assert folders <= listed, sorted(folders - listed)
