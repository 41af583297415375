"""Files for the user's build (NAME.f, NAME_inst.v), and ten generated adders living in one design.

The check is the simulators' own: Icarus and Verilator compile all ten modules, each instantiation
example inside a wrapper module of its own, and one top over the wrappers, in one build each; the top
then drives each adder with a few vectors whose expected values come from Python integer arithmetic.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from adder_forge import emit_design, make_spec, write_folders, output_folder
from adder_forge.base.tools import Command, find, run
from adder_forge.checks.simulators import VERILATOR_MAKEFLAGS
from adder_forge.emit.outputs import MANIFEST

TEN = [dict(name="u_rip8", width=8, scheme="ripple"),
       dict(name="u_ks16s", width=16, scheme="prefix", prefix="kogge-stone", operation="subtract", overflow=True),
       dict(name="u_bk32as", width=32, scheme="prefix", prefix="brent-kung", operation="add-subtract", overflow=True),
       dict(name="u_csel12", width=12, scheme="carry-select", carry_in=False),
       dict(name="u_skip10", width=10, scheme="carry-skip", operation="subtract", carry_in=False),
       dict(name="u_cond9", width=9, scheme="conditional-sum", carry_out=False, overflow=True),
       dict(name="u_bla24", width=24, scheme="block-lookahead", operation="add-subtract", carry_in=False),
       dict(name="u_la6", width=6, scheme="lookahead", ling=True),
       dict(name="u_beh20", width=20, scheme="behavioral", operation="add-subtract", overflow=True),
       dict(name="u_sk7", width=7, scheme="prefix", prefix="sklansky", block=2, carry_in=False, carry_out=False)]


def test_files_are_written_and_recorded_in_the_manifest(tmp_path):
    d = emit_design(make_spec(**TEN[2]))
    [w] = write_folders(tmp_path, [output_folder(d)])
    folder = w.path
    assert (folder / "u_bk32as.f").read_text() == "u_bk32as.v\n"
    inst = (folder / "u_bk32as_inst.v").read_text()
    for port, rng in (("a", "[31:0] "), ("b", "[31:0] "), ("cin", ""), ("sub", ""), ("sum", "[31:0] "),
                      ("cout", ""), ("overflow", "")):
        assert re.search(rf"^wire {re.escape(rng)}\s*{port};", inst, re.M), port
        assert re.search(rf"^\s+\.{port}\s*\({port}\),?$", inst, re.M), port
    assert "u_bk32as u_u_bk32as (" in inst
    assert "`" not in re.sub(r"//[^\n]*", "", inst)  # no directive of any kind
    import json

    manifest = json.loads((folder / MANIFEST).read_text())
    assert {"u_bk32as.f", "u_bk32as_inst.v"} <= set(manifest["files"])


def test_the_rtl_leaks_no_macro():
    for cfg in TEN:
        text = re.sub(r"//[^\n]*", "", emit_design(make_spec(**cfg)).verilog)
        directives = set(re.findall(r"`(\w+)", text))
        assert directives <= {"timescale", "default_nettype"}, directives
        assert "`define" not in text
        # default_nettype is restored to the Verilog default at the end of the file
        assert text.rstrip().endswith("`default_nettype wire")


def _vectors(cfg: dict, iface) -> list[tuple[dict, int]]:
    w = iface.width
    m = (1 << w) - 1
    picks = [(0, 0), (m, 1), (1 << (w - 1), 1 << (w - 1)), (m, m), (0x5A5A5A5A & m, 0x3C3C3C3C & m)]
    out = []
    for k, (a, b) in enumerate(picks):
        v = {"a": a, "b": b, "cin": k & 1, "sub": (k >> 1) & 1}
        out.append((v, iface.expected(v)))
    return out


def _top(designs) -> str:
    """One wrapper module an adder, around its instantiation example, and a top that checks them."""
    parts = []
    for d in designs:
        n = d.spec.name
        iface = d.net.iface
        ports = ", ".join(p.name for p in iface.pins)
        decls = []
        for p in iface.pins:
            rng = "" if p.scalar else f"[{p.width - 1}:0] "
            decls.append(f"    {'input' if p.direction == 'in' else 'output'} wire {rng}{p.name}_p;")
        assigns = [f"    assign {p.name} = {p.name}_p;" if p.direction == "in" else f"    assign {p.name}_p = {p.name};"
                   for p in iface.pins]
        parts.append(f"module wrap_{n} ({', '.join(p.name + '_p' for p in iface.pins)});\n" + "\n".join(decls)
                     + f"\n`include \"{n}_inst.v\"\n" + "\n".join(assigns) + "\nendmodule\n")
        del ports
    lines = ["module ten_top;", "    integer bad = 0;"]
    parts.insert(0, "`timescale 1ns / 1ps\n")  # as NAME.v has: a design that mixes timescales needs it
    checks = []
    for d in designs:
        n = d.spec.name
        iface = d.net.iface
        for p in iface.pins:
            kind = "reg" if p.direction == "in" else "wire"
            rng = "" if p.scalar else f"[{p.width - 1}:0] "
            lines.append(f"    {kind} {rng}{n}_{p.name};")
        lines.append(f"    wrap_{n} w_{n} (" + ", ".join(f"{n}_{p.name}" for p in iface.pins) + ");")
        got = "{" + ", ".join(f"{n}_{p.name}" for p in reversed(iface.outputs)) + "}"
        for v, want in _vectors({}, iface):
            drive = " ".join(f"{n}_{p.name} = {iface.width if not p.scalar else 1}'d{v[p.name]};" for p in iface.inputs)
            checks.append(f"        {drive} #1; if ({got} !== {iface.out_bits}'d{want}) begin bad = bad + 1; "
                          f"$display(\"{n}: got %h\", {got}); end")
    lines += ["    initial begin", *checks,
              '        if (bad == 0) $display("ten: all passed"); else $display("ten: %0d failed", bad);',
              "        $finish;", "    end", "endmodule"]
    return "\n".join(parts) + "\n" + "\n".join(lines) + "\n"


@pytest.mark.sim
def test_ten_adders_in_one_icarus_and_one_verilator_build(tmp_path):
    designs = [emit_design(make_spec(**c)) for c in TEN]
    folders = write_folders(tmp_path / "out", [output_folder(d) for d in designs])
    build = tmp_path / "build"
    build.mkdir()
    (build / "ten_top.v").write_text(_top(designs))
    lists = [str(w.path / f"{w.path.name}.f") for w in folders]
    incdirs = [str(w.path) for w in folders]
    # Icarus reads paths relative to where it runs: the build script joins each list's lines to its folder
    rtl = [str(Path(f).parent / line) for f in lists for line in Path(f).read_text().split()]
    r = run(Command((find("iverilog"), "-g2012", "-Wall", *(f"-I{i}" for i in incdirs), "-s", "ten_top",
                     "-o", "ten.vvp", "ten_top.v", *rtl), str(build)))
    assert r.ok and "arning" not in r.stdout + r.stderr, r.tail()
    r = run(Command((find("vvp"), "-n", "ten.vvp"), str(build)))
    assert r.ok and "ten: all passed" in r.stdout, r.tail()
    # Verilator reads each list with -F: its paths are relative to the list's own folder
    r = run(Command((find("verilator"), "--binary", "-Wall", "-Wno-DECLFILENAME", "-Wno-UNUSEDSIGNAL",
                     "--timing", *(f"-I{i}" for i in incdirs), "--top-module", "ten_top", "-Mdir", "obj",
                     "-o", "ten", "-j", "2", "-CFLAGS", "-std=c++20", *VERILATOR_MAKEFLAGS, *(a for f in lists for a in ("-F", f)), "ten_top.v"), str(build)))
    assert r.ok, r.tail()
    r = run(Command(("obj/ten",), str(build)))
    assert r.ok and "ten: all passed" in r.stdout, r.tail()
