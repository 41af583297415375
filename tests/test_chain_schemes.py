"""The FPGA carry-chain hybrids (issue 14): chain-prefix and chain-select add, checked against Python integer
addition by the built-in check at odd and even widths up to 256 with uniform, non-dividing, 1-bit, listed,
wider-than-the-adder and automatic blocks, all four carry-port combinations; their spec keys refuse bad
values with the key's place; the automatic sizes cover the width; the FPGA delay model behaves as documented.
Simulators, lint and the proof see tests/matrix_chain.py through test_sim_matrix.py."""

import pytest

from adder_forge.analysis.delay import estimates, fpga_delay
from adder_forge.base.errors import SpecError
from adder_forge.checks.builtin import check
from adder_forge.emit.vectors import make_plan
from adder_forge.ir.network import check_well_formed, dump
from adder_forge.schemes import chain_blocks as cb
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec, parse_spec
from conftest import golden

WIDTHS = (1, 2, 3, 7, 8, 13, 33, 64, 100, 256)
VARIANTS = (("chain-prefix", {}), ("chain-prefix", {"prefix": "kogge-stone"}), ("chain-prefix", {"prefix": "brent-kung"}),
            ("chain-select", {}), ("chain-select", {"join": "chain"}))


def blocks_for(width):
    out = [1, 3, 5, width + 2, "auto"]
    if width >= 7:
        out.append([width // 4, width - width // 4 - width // 3, width // 3])
    return out


CASES = [(s, w, k, e) for s, e in VARIANTS for w in WIDTHS for k in blocks_for(w)]


@pytest.mark.parametrize("scheme,width,block,extra", CASES,
                         ids=[f"{s}-{w}-{k}-{'-'.join(map(str, e.values()))}" for s, w, k, e in CASES])
def test_adds(scheme, width, block, extra):
    flags = ((True, True), (False, False)) + (((False, True), (True, False)) if width <= 13 else ())
    for carry_in, carry_out in flags:
        net = elaborate(make_spec("ch", width, scheme, carry_in=carry_in, carry_out=carry_out, block=block, **extra))
        check_well_formed(net)
        assert all(len(x.args) >= 3 for x in net.nodes if x.op == "ADD"), "an ADD of no bits"
        r = check(net, make_plan(width, carry_in, 1 << 17, 300, 3))
        assert r.ok, r.first.describe(width) if r.first else r


@pytest.mark.parametrize("scheme", ["chain-prefix", "chain-select"])
@pytest.mark.parametrize("target", sorted(cb.FAMILIES))
@pytest.mark.parametrize("width", [1, 9, 64, 200, 512])
def test_auto_sizes_cover_the_width(scheme, target, width):
    for extra in ({}, {"join": "chain"} if scheme == "chain-select" else {}):
        net = elaborate(make_spec("ch", width, scheme, block="auto", target=target, **extra))
        sizes = [int(x) for x in dict(net.meta)["block_sizes"].strip("[]").split(",")]
        assert sum(sizes) == width and min(sizes) >= 1


def test_select_auto_grows_blocks_by_the_lut_to_bit_ratio():
    """Each block's chain is as long as the select carry allows: sizes grow by lut / bit bits (rounded)."""
    fam = cb.FAMILIES["ice40"]
    sizes = cb.select_auto(fam, 256)
    step = fam.lut / fam.bit
    for a, b in zip(sizes[1:-2], sizes[2:-1]):
        assert abs((b - a) - step) <= 1


def test_two_chains_per_block_and_one_for_the_first():
    """Cell counts of the constructions, by hand: chain-prefix over m blocks has 2m - 1 ADD cells and one
    multiplexer per bit above block 0; chain-select with join chain has one more ADD (the second level)."""
    n, k = 64, 8
    m = n // k
    px = elaborate(make_spec("c", n, "chain-prefix", block=k))
    ops = [x.op for x in px.nodes]
    assert ops.count("ADD") == 2 * m - 1 and ops.count("MUX2") == n - k
    sl = elaborate(make_spec("c", n, "chain-select", block=k, join="chain"))
    ops = [x.op for x in sl.nodes]
    assert ops.count("ADD") == 2 * m and ops.count("MUX2") == n - k
    lut = elaborate(make_spec("c", n, "chain-select", block=k, carry_out=True))
    assert [x.op for x in lut.nodes].count("AO21") == m - 1  # the select chain, carry out included


def test_golden_dumps():
    golden("chain_prefix5.ir", dump(elaborate(make_spec("chain_prefix5", 5, "chain-prefix", block=2))))
    golden("chain_select5.ir", dump(elaborate(make_spec("chain_select5", 5, "chain-select", block=[2, 2, 1],
                                                         join="chain"))))


@pytest.mark.parametrize("body,key,words", [
    ("scheme: chain-prefix\nblock: 0\n", "block", "at least 1"),
    ("scheme: chain-prefix\nblock: [4, 5]\n", "block", "add up to 9 bits"),
    ("scheme: chain-prefix\nprefix: harris\n", "prefix", "unknown prefix"),
    ("scheme: chain-prefix\ntarget: ecp6\n", "target", "did you mean 'ecp5'"),
    ("scheme: chain-select\njoin: chains\n", "join", "did you mean 'chain'"),
    ("scheme: chain-select\nblock: fast\n", "block", "got string"),
])
def test_bad_keys_name_the_key(body, key, words):
    with pytest.raises(SpecError) as e:
        parse_spec("name: bad\nwidth: 8\n" + body, "bad.yaml")
    assert e.value.field == key and words in str(e.value) and e.value.file == "bad.yaml"
    assert e.value.line == body.splitlines().index(next(x for x in body.splitlines() if x.startswith(key))) + 3


# -- the FPGA delay model ------------------------------------------------------------------------------------
@pytest.mark.parametrize("family", sorted(cb.FAMILIES))
def test_a_plain_chain_is_entry_plus_a_bit_a_bit(family):
    """The model's closed form for one k-bit `+` from the input pins: carry out at entry + k * bit."""
    fam = cb.FAMILIES[family]
    for n in (1, 16, 100):
        d = fpga_delay(elaborate(make_spec("p", n, "behavioral")), family)
        assert d["ns"] == pytest.approx(fam.entry + n * fam.bit, abs=1e-3) and d["lut_levels"] == 0


def test_luts_pack_four_inputs():
    """A ripple of AO21 cells needs one 4-input LUT a bit (each carry reads a_i, b_i and the carry below:
    two bits would need five inputs; common practice), except that without a carry-in the two lowest bits'
    carry reads only a0, b0, a1, b1; a 2-bit sum without carry-in or carry-out is one LUT."""
    for n in (4, 9, 16):
        assert fpga_delay(elaborate(make_spec("r", n, "ripple")), "ice40")["lut_levels"] == n
        assert fpga_delay(elaborate(make_spec("r", n, "ripple", carry_in=False)), "ice40")["lut_levels"] == n - 1
    assert fpga_delay(elaborate(make_spec("r", 2, "ripple", carry_in=False, carry_out=False)), "ice40")["lut_levels"] == 1


def test_hybrids_are_estimated_and_ranked_below_the_chain_when_wide():
    wide = {s: fpga_delay(elaborate(make_spec("w", 256, s, block="auto" if s != "behavioral" else None)
                                     if s != "behavioral" else make_spec("w", 256, s)), "ice40")["ns"]
            for s in ("behavioral", "chain-prefix", "chain-select")}
    assert wide["chain-prefix"] < wide["behavioral"] / 3 and wide["chain-select"] < wide["behavioral"] / 3
    est = estimates(elaborate(make_spec("e", 32, "chain-prefix", block=8)))
    assert est["unit_gate_delay"] is None and set(est["fpga_ns"]) == set(cb.FAMILIES)
