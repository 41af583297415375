"""The public API: every name in ``adder_forge.__all__`` exists, and the job runs end to end through it
alone, checked against Python integer addition and proven against Verilog's `+` by Yosys."""

import random

import pytest

import adder_forge as af


def test_every_public_name_exists_and_nothing_private_is_listed():
    import importlib
    import pkgutil

    assert len(af.__all__) == len(set(af.__all__))
    # a public name must not shadow a layer folder (adder_forge.emit must stay the subpackage)
    layers = {m.name for m in pkgutil.iter_modules(af.__path__) if m.ispkg}
    assert not layers & set(af.__all__)
    for layer in layers:
        assert getattr(af, layer, importlib.import_module(f"adder_forge.{layer}")).__name__ == f"adder_forge.{layer}"
    for name in af.__all__:
        assert hasattr(af, name), name
        assert not name.startswith("_") or name == "__version__"


def test_the_job_through_the_public_api(tmp_path):
    spec = af.make_spec("api_ks12", 12, "prefix", prefix="kogge-stone")
    net = af.elaborate(spec)
    result = af.check(net, af.builtin_plan(spec, 100, seed=1))
    assert result.ok and result.vectors == 1 << 25  # every input of a 12-bit adder with carry-in
    d = af.emit_design(spec)
    written = af.write_folders(tmp_path, [af.output_folder(d)])
    assert (written[0].path / "api_ks12.v").read_text() == d.verilog
    # the emitted vectors are Python integer addition, line by line: {cin, b, a, cout, sum}
    w = spec.width
    lines = (written[0].path / "api_ks12_vectors.hex").read_text().split()
    rng = random.Random(3)
    for line in rng.sample(lines, 50):
        v = int(line, 16)
        s = v & ((1 << (w + 1)) - 1)
        a = (v >> (w + 1)) & ((1 << w) - 1)
        b = (v >> (2 * w + 1)) & ((1 << w) - 1)
        cin = v >> (3 * w + 1)
        assert s == a + b + cin


def test_errors_carry_their_exit_status():
    assert af.SpecError("x").exit_status == 2
    assert af.UsageError("x", "build", "--out").exit_status == 2
    assert af.OutputConflict("out/x.v", "x").exit_status == 2
    assert af.ToolError("x").exit_status == 3
    with pytest.raises(af.SpecError):
        af.parse_spec("name: a\nwidth: 0\nscheme: ripple\n")


@pytest.mark.formal
def test_prove_through_the_public_api():
    spec = af.make_spec("api_bk9", 9, "prefix", prefix="brent-kung", carry_in=False)
    d = af.emit_design(spec)
    assert af.prove(d.net, d.verilog).ok
