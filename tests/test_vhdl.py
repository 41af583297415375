"""The VHDL form: every scheme at 8, 33 and 64 bits analysed, elaborated and run in GHDL with the emitted
VHDL testbench, and GHDL's own synthesis of it proven equal to `+` by Yosys.

The references are outside the project: the testbench's expected values come from Python integer
addition (the vectors file the Verilog testbench reads too), the simulator is GHDL, the proof is Yosys's SAT
solver on a miter against a module built from Verilog's own `+` (formal.prove).
"""

import re
import subprocess
import sys
from pathlib import Path

import pytest

from adder_forge.checks import ghdl
from adder_forge.checks.outcome import outcomes
from adder_forge.emit import vhdl
from adder_forge.emit.design import design
from adder_forge.checks.formal import prove
from adder_forge.ir.passes import break_gate, gate_indices
from adder_forge.schemes.prefix_networks import NETWORKS
from adder_forge.spec.registry import schemes
from adder_forge.spec.loader import make_spec
from matrix_prefix import SHORT, params

WIDTHS = (8, 33, 64)
FLAGS = ((True, True), (False, True), (True, False), (False, False))
# The testbench's exhaustive limit kept at 2^16 (as in test_sim_matrix) so that GHDL time stays small.
TB_EXHAUSTIVE = 1 << 16
TB_RANDOM = 500


def _configs() -> list[dict]:
    rows = []  # (tag, scheme, keys): every scheme, every prefix network, block and Ling variants
    rows += [("beh", "behavioral", {}), ("rip", "ripple", {}), ("la", "lookahead", {}),
             ("lal", "lookahead", {"ling": True}), ("bla", "block-lookahead", {"block": 4}),
             ("blal", "block-lookahead", {"block": 3, "ling": True, "group": 2}),
             ("sel", "carry-select", {"block": "auto"}), ("skip", "carry-skip", {"block": "auto"}),
             ("csum", "conditional-sum", {"block": 1}), ("csum4", "conditional-sum", {"block": 4}),
             ("chp", "chain-prefix", {"block": 3}), ("chs", "chain-select", {"block": 2, "join": "chain"})]
    rows += [(f"px_{SHORT[n]}", "prefix", {"prefix": n}) for n in sorted(NETWORKS)]
    rows += [("px_ks_b4", "prefix", {"prefix": "kogge-stone", "block": 4}),
             ("px_sk_ling", "prefix", {"prefix": "sklansky", "ling": True})]
    out = []
    for k, w in enumerate(WIDTHS):
        for j, (tag, scheme, keys) in enumerate(rows):
            if tag == "lal" and w == 64:
                continue  # a second 44k-gate flat lookahead would double the slowest simulation and proof
            ci, co = FLAGS[(j + k) % len(FLAGS)]
            keys = dict(keys)
            if scheme == "prefix":
                keys.update(params(keys["prefix"], w, ci))
            out.append({"name": f"vh_{tag}{w}", "width": w, "scheme": scheme, "carry_in": ci, "carry_out": co, **keys})
    return out


CONFIGS = _configs()
_designs: dict = {}


def designs():
    if "all" not in _designs:
        _designs["all"] = [design(make_spec(**c), tb_random=TB_RANDOM, tb_exhaustive_limit=TB_EXHAUSTIVE)
                           for c in CONFIGS]
    return _designs["all"]


def test_matrix_covers_every_scheme():
    assert {c["scheme"] for c in CONFIGS} == set(schemes())
    assert {c["prefix"] for c in CONFIGS if c["scheme"] == "prefix"} == set(NETWORKS)
    assert {c["width"] for c in CONFIGS} == set(WIDTHS)


@pytest.fixture(scope="module")
def analysed(tmp_path_factory):
    """Every design of the matrix staged and analysed in one GHDL call (one work library)."""
    work = tmp_path_factory.mktemp("ghdl")
    ds = designs()
    ghdl.analyse(ghdl.stage(ds, work), work)
    return work, ds


@pytest.mark.ghdl
@pytest.mark.slow
def test_every_scheme_passes_in_ghdl(analysed):
    work, ds = analysed
    bad = []
    for d in ds:
        [o] = outcomes([d], "ghdl", ghdl.run(ghdl.run_command(f"{d.spec.name}_tb", work)))
        if not (o.ok and o.exit_status == 0 and o.passed == d.testbench.count):
            bad.append((o.name, o.passed, o.failed, o.first, o.log))
    assert not bad, bad[:3]


def _stage_one(d, work: Path) -> None:
    ghdl.analyse(ghdl.stage([d], work), work)


def _run(d, work: Path, vectors: str | None = None):
    return ghdl.run(ghdl.run_command(f"{d.spec.name}_tb", work, vectors))


@pytest.mark.ghdl
def test_testbench_fails_on_a_broken_adder(tmp_path):
    """One gate of a Kogge-Stone adder swapped (mutation): the VHDL testbench must say so and exit non-zero."""
    spec = make_spec("vh_broken16", 16, "prefix", prefix="kogge-stone")
    good = design(spec, tb_random=200)
    net = break_gate(good.net, gate_indices(good.net, "prefix")[-1])
    d = design(spec, net=net, tb_random=200)
    _stage_one(d, tmp_path)
    r = _run(d, tmp_path)
    [o] = outcomes([d], "ghdl", r)
    assert r.returncode != 0
    assert o.failed > 0 and o.passed + o.failed == d.testbench.count
    assert re.search(r"^vh_broken16: MISMATCH vector \d+: a=[0-9a-f]{4} b=[0-9a-f]{4} cin=[01] expected=[0-9a-f]{5} "
                     r"got=[0-9a-f]{5}$", r.stdout, re.M), r.stdout[:2000]


def _small(tmp_path, name="vh_file8"):
    d = design(make_spec(name, 8, "ripple"), tb_random=50, tb_exhaustive_limit=1 << 10)
    _stage_one(d, tmp_path)
    return d, tmp_path / f"{name}_vectors.hex"


@pytest.mark.ghdl
def test_testbench_passes_its_own_vectors(tmp_path):
    d, _ = _small(tmp_path)
    r = _run(d, tmp_path)
    assert r.returncode == 0, r.tail()
    assert f"vh_file8: {d.testbench.count} passed, 0 failed" in r.stdout.splitlines()


@pytest.mark.ghdl
def test_testbench_fails_without_its_vectors_file(tmp_path):
    d, hexfile = _small(tmp_path)
    hexfile.unlink()
    r = _run(d, tmp_path)
    assert r.returncode != 0
    assert "vh_file8: cannot open the vectors file vh_file8_vectors.hex" in r.stdout
    assert f"vh_file8: 0 passed, {d.testbench.count} failed" in r.stdout.splitlines()


def _fails_on(d, work: Path, lines: list[str], *says: str) -> None:
    """Run the testbench on a vectors file of these lines: it must exit non-zero and print each of ``says``."""
    (work / f"{d.spec.name}_vectors.hex").write_text("\n".join(lines) + "\n")
    r = _run(d, work)
    assert r.returncode != 0
    for text in says:
        assert text in r.stdout, (text, r.stdout[-2000:])


@pytest.mark.ghdl
def test_testbench_fails_on_a_short_or_long_vectors_file(tmp_path):
    d, hexfile = _small(tmp_path)
    lines = hexfile.read_text().splitlines()
    n = d.testbench.count
    _fails_on(d, tmp_path, lines[: n // 2], f"holds {n // 2} of {n} vectors", f"vh_file8: {n // 2} passed, {n - n // 2} failed\n")
    _fails_on(d, tmp_path, lines + lines[:3], f"holds {n + 3} vectors, not {n}", f"vh_file8: {n} passed, 3 failed\n")


@pytest.mark.ghdl
@pytest.mark.parametrize("digit", ["x", "X", "z", "u", "g"])
def test_testbench_fails_on_a_metavalue_in_the_expected_value(tmp_path, digit):
    """An expected value with an X (or U, Z, a non-hex digit) is a broken vectors file, never a pass."""
    d, hexfile = _small(tmp_path)
    lines = hexfile.read_text().splitlines()
    lines[5] = lines[5][:-1] + digit  # the lowest digit holds sum[3:0]
    _fails_on(d, tmp_path, lines, "vh_file8: BAD LINE 6: not all 0/1", f"vh_file8: {d.testbench.count - 1} passed, 1 failed\n")


@pytest.mark.ghdl
def test_testbench_reads_another_vectors_file_given_as_a_generic(tmp_path):
    d, hexfile = _small(tmp_path)
    other = tmp_path / "elsewhere.hex"
    other.write_text(hexfile.read_text())
    hexfile.unlink()
    r = _run(d, tmp_path, vectors="elsewhere.hex")
    assert r.returncode == 0, r.tail()
    assert f"vh_file8: {d.testbench.count} passed, 0 failed" in r.stdout.splitlines()


@pytest.mark.ghdl
@pytest.mark.parametrize("std", ["93", "08"])
def test_strict_vhdl_93_and_2008_analyse_every_scheme(tmp_path, std):
    """--std=93 (no relaxations) and --std=08 accept the entities and testbenches of one width, no warning."""
    ds = [d for d in designs() if d.spec.width == 33]
    files = ghdl.stage(ds, tmp_path)
    r = ghdl.run(ghdl.Command((ghdl.ghdl(), "-a", f"--std={std}", *files), str(tmp_path)))
    assert r.ok, r.tail()
    assert "warning" not in (r.stdout + r.stderr), r.tail()


def _proof_designs(width: int):
    return [d for d in designs() if d.spec.width == width]


@pytest.mark.ghdl
@pytest.mark.formal
@pytest.mark.slow
@pytest.mark.parametrize("width", WIDTHS)
def test_ghdl_synthesis_proven_equal_to_plus(width, analysed):
    """`ghdl synth --out=verilog` of every design at one width, each netlist proven equal to a + b + cin."""
    work, _ = analysed
    bad = []
    for d in _proof_designs(width):
        netlist = ghdl.synthesize(d.spec.name, work)
        p = prove(d.net, netlist)
        if not p.ok:
            bad.append((d.spec.name, p.counterexample, p.log))
    assert not bad, bad[:2]


@pytest.mark.ghdl
@pytest.mark.formal
def test_proof_of_ghdl_synthesis_catches_a_broken_adder(tmp_path):
    spec = make_spec("vh_brokensyn8", 8, "carry-select", block=3)
    good = design(spec)
    d = design(spec, net=break_gate(good.net, gate_indices(good.net)[len(gate_indices(good.net)) // 2]))
    _stage_one(d, tmp_path)
    p = prove(d.net, ghdl.synthesize(d.spec.name, tmp_path))
    assert not p.ok and p.counterexample is not None
    a, b, c = p.counterexample.a, p.counterexample.b, p.counterexample.cin
    assert p.counterexample.expected == a + b + c  # Python's own sum, not the broken one


def test_names_become_legal_vhdl_and_unique_ignoring_case():
    names = vhdl.Names(["a", "sum"])
    got = [names.take(h) for h in ["g__1", "_x_", "in", "G1", "g1", "9lives", "signal", "SUM", "resize", "$t"]]
    for n in got:
        assert vhdl.entity_problem(n) is None, n
    assert len({n.lower() for n in got}) == len(got)
    assert got[0] == "g_1" and got[3] == "G1" and got[4] == "g1_2"


@pytest.mark.parametrize("name, ok", [("alu32", True), ("Alu_32", True), ("alu__32", False), ("alu32_", False),
                                      ("_alu", False), ("entity", False), ("signal", False), ("unsigned", False)])
def test_entity_names(name, ok):
    assert (vhdl.entity_problem(name) is None) == ok


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "adder_forge", *args], cwd=cwd, capture_output=True, text=True)


def test_build_writes_vhdl_only_when_asked(tmp_path):
    spec = tmp_path / "s.yaml"
    spec.write_text("# a 12-bit adder for a sensor's running sum\nname: acc12\nwidth: 12\nscheme: ripple\n")
    r = _cli("build", str(spec), "--out", "o1", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    assert not list((tmp_path / "o1" / "acc12").glob("*.vhd"))
    r = _cli("build", str(spec), "--out", "o2", "--hdl", "vhdl", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    files = sorted(p.name for p in (tmp_path / "o2" / "acc12").iterdir() if not p.name.startswith("."))
    assert files == ["acc12.json", "acc12.vhd", "acc12_tb.vhd", "acc12_vectors.hex"]
    r = _cli("build", str(spec), "--out", "o3", "--hdl", "verilog,vhdl", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    files = sorted(p.name for p in (tmp_path / "o3" / "acc12").iterdir() if not p.name.startswith("."))
    assert files == ["acc12.f", "acc12.json", "acc12.v", "acc12.vhd", "acc12_inst.v", "acc12_tb.v", "acc12_tb.vhd",
                     "acc12_vectors.hex"]
    vhd = (tmp_path / "o3" / "acc12" / "acc12.vhd").read_text()
    assert "entity acc12 is" in vhd and "cin  : in  std_logic;" in vhd
    assert "sum  : out std_logic_vector(11 downto 0);" in vhd


def test_bad_hdl_and_bad_entity_name_are_one_line_exit_2(tmp_path):
    spec = tmp_path / "s.yaml"
    spec.write_text("width: 8\nscheme: ripple\nname: acc__8\n")
    r = _cli("build", str(spec), "--out", "o", "--hdl", "vhdl", cwd=tmp_path)
    assert r.returncode == 2
    assert len(r.stderr.strip().splitlines()) == 1 and "Traceback" not in r.stderr
    assert r.stderr.startswith(f"{spec}:3:") and "name" in r.stderr and "VHDL" in r.stderr
    assert not (tmp_path / "o").exists() or not any((tmp_path / "o").rglob("*.vhd"))
    r = _cli("build", str(spec), "--out", "o", cwd=tmp_path)  # Verilog alone takes the name
    assert r.returncode == 0, r.stderr
    r = _cli("build", str(spec), "--out", "o", "--hdl", "vhld", cwd=tmp_path)
    assert r.returncode == 2 and "did you mean 'vhdl'" in r.stderr and len(r.stderr.strip().splitlines()) == 1


@pytest.mark.ghdl
def test_widths_1_to_3_pass_in_ghdl(tmp_path):
    """The narrow corners (1-bit vectors, one-bit ADD operands, every carry-port combination) of every
    scheme in the simulator and block matrices."""
    from matrices import all_configs

    ds = [design(make_spec(**c), tb_random=50) for c in all_configs() if c["width"] <= 3]
    assert {d.spec.scheme for d in ds} == set(schemes())
    ghdl.analyse(ghdl.stage(ds, tmp_path), tmp_path)
    for d in ds:
        [o] = outcomes([d], "ghdl", _run(d, tmp_path))
        assert o.ok and o.exit_status == 0 and o.passed == d.testbench.count, (o.name, o.first, o.log)


@pytest.mark.parametrize("name, width, scheme, keys", [("vh_gold_beh4", 4, "behavioral", {}),
                                                       ("vh_gold_sel4", 4, "carry-select", {"block": 2})])
def test_vhdl_text_matches_golden(name, width, scheme, keys):
    """Byte-stable output (reviewed by hand once: the gates of the IR dump, one signal each)."""
    from conftest import golden

    files = vhdl.vhdl_files(design(make_spec(name, width, scheme, **keys), tb_random=20))
    golden(f"{name}.vhd", files[f"{name}.vhd"])


def _every_op(net):
    """The same adder rewritten so that every gate op appears, constants among the operands: XOR2 as
    XNOR2 of an inverted operand, AND2 and OR2 through a constant 1 / 0, AO21 and MUX2 kept (no scheme
    emits NOT or XNOR2, or a constant a gate reads). The new wires get names that are legal in Verilog but
    not in VHDL: doubled and leading underscores, reserved words, and names equal to another ignoring case."""
    from dataclasses import replace as dc_replace

    from adder_forge.ir.network import Node, Port

    nodes: list = []
    new: dict[int, int] = {}

    def add(op, args=(), name="", param=0):
        nodes.append(Node(op, tuple(args), name, "", param))
        return len(nodes) - 1

    one = zero = None
    for i, n in enumerate(net.nodes):
        args = [new[a] for a in n.args]
        if n.op == "XOR2":
            inv = add("NOT", [args[1]], f"_{n.name}__inv")
            new[i] = add("XNOR2", [args[0], inv], n.name)
        elif n.op in ("AND2", "OR2"):
            if one is None:
                one, zero = add("CONST", (), "signal", 1), add("CONST", (), "in", 0)
            t = add(n.op, args, n.name.upper())  # G0 beside g0
            new[i] = add(n.op, [t, one if n.op == "AND2" else zero], n.name)
        else:
            new[i] = add(n.op, args, n.name, n.param)
    ports = lambda ps: tuple(Port(p.name, tuple(new[b] for b in p.bits), p.scalar) for p in ps)  # noqa: E731
    return dc_replace(net, nodes=tuple(nodes), inputs=ports(net.inputs), outputs=ports(net.outputs), prefix=None)


@pytest.mark.ghdl
@pytest.mark.formal
def test_every_cell_op_passes_in_ghdl_and_its_synthesis_is_proven(tmp_path):
    from adder_forge.ir.network import check_well_formed

    spec = make_spec("VhAllOps12", 12, "carry-select", block=4)  # GHDL folds it to lower case
    net = _every_op(design(spec).net)
    check_well_formed(net)
    assert {n.op for n in net.nodes} >= {"NOT", "AND2", "OR2", "XNOR2", "AO21", "MUX2", "CONST"}
    d = design(spec, net=net, tb_random=300)
    _stage_one(d, tmp_path)
    [o] = outcomes([d], "ghdl", _run(d, tmp_path))
    assert o.ok and o.exit_status == 0 and o.passed == d.testbench.count, (o.first, o.log)
    text = (tmp_path / "VhAllOps12.vhd").read_text()
    assert "xnor" in text and "not " in text and "std_logic'('1')" in text
    assert "signal G0 : std_logic;" in text and "signal g0_2 : std_logic;" in text  # raw G0 comes first
    assert "signal p0_inv : std_logic;" in text
    assert prove(d.net, ghdl.synthesize(d.spec.name, tmp_path)).ok
