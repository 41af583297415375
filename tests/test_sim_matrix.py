"""Every matrix config through the emitted testbench in Icarus and Verilator, lint, and the Yosys proof.

The references are outside the project: the testbench's expected values come from Python integer
addition, the proof from Yosys's SAT solver against Verilog's own `+`.
"""

import pytest

from adder_forge.emit.design import design
from adder_forge.checks.formal import prove
from adder_forge.checks.simulators import simulate
from adder_forge.spec.loader import make_spec
from adder_forge.base.tools import Command, find, run
from matrices import all_configs, all_matrices

MATRICES = all_matrices()
# The product's testbench enumerates up to 2^20 vectors; the matrix keeps simulator time in CI's budget
# with 2^16 (the built-in check covers exhaustive sets up to 2^24 in test_builtin_*).
TB_EXHAUSTIVE = 1 << 16
TB_RANDOM = 1000
_cache: dict[str, object] = {}


def designs_of(matrix: str):
    if matrix not in _cache:
        _cache[matrix] = [design(make_spec(**c), tb_random=TB_RANDOM, tb_exhaustive_limit=TB_EXHAUSTIVE)
                          for c in MATRICES[matrix]]
    return _cache[matrix]


@pytest.mark.sim
@pytest.mark.slow
@pytest.mark.parametrize("simulator", ["icarus", "verilator"])
@pytest.mark.parametrize("matrix", sorted(MATRICES))
def test_emitted_testbenches_pass(matrix, simulator, tmp_path):
    ds = designs_of(matrix)
    results = simulate(ds, simulator, tmp_path)
    bad = [(o.name, o.failed, o.first, o.log) for o in results if not o.ok]
    assert not bad, bad[:3]
    assert all(o.passed == d.testbench.count for o, d in zip(results, ds))


@pytest.mark.sim
@pytest.mark.parametrize("matrix", sorted(MATRICES))
def test_modules_lint_clean(matrix, tmp_path):
    """Clean under `verilator --lint-only -Wall` and `iverilog -g2005 -Wall`: no warning at all.

    All modules of a matrix go through one call of each tool; MULTITOP (several top modules) is the only
    warning waived, as it comes from linting many independent modules at once."""
    files = []
    for d in designs_of(matrix):
        (tmp_path / f"{d.spec.name}.v").write_text(d.verilog)
        files.append(f"{d.spec.name}.v")
    for argv in ((find("verilator"), "--lint-only", "-Wall", "-Wno-MULTITOP", *files),
                 (find("iverilog"), "-g2005", "-Wall", "-o", "/dev/null", *files)):
        r = run(Command(argv, str(tmp_path)))
        assert r.ok and "arning" not in r.stdout + r.stderr, r.tail()


@pytest.mark.formal
@pytest.mark.parametrize("cfg", all_configs(), ids=lambda c: c["name"])
def test_formally_equal_to_plus(cfg):
    d = design(make_spec(**cfg), tb_random=0)
    p = prove(d.net, d.verilog)
    assert p.ok, p.log
