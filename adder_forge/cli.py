"""The `adder-forge` command. The only module that prints or chooses exit statuses.

Exit status: 0 all good; 1 a check found a mismatch; 2 bad input (spec, options); 3 a tool is missing
or failed.
"""

from __future__ import annotations

import argparse
import os
import sys
from dataclasses import replace
from pathlib import Path

from . import __version__
from .errors import AdderForgeError, OutputConflict, OutputError, SpecError, ToolError

EXIT_OK, EXIT_MISMATCH, EXIT_INPUT, EXIT_TOOL = 0, 1, 2, 3


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # one line, exit 2, as for every other bad input
        self.exit(EXIT_INPUT, f"{self.prog}: error: {message}\n")


def _parser() -> argparse.ArgumentParser:
    ap = _Parser(prog="adder-forge", description="Binary adders from a YAML spec: Verilog, testbench, proof, figures.")
    ap.add_argument("--version", action="version", version=f"adder_forge {__version__}")
    sub = ap.add_subparsers(dest="command", required=True, parser_class=_Parser)

    b = sub.add_parser("build", help="write NAME.v, NAME_tb.v, NAME_vectors.hex and NAME.json for each spec")
    b.add_argument("specs", nargs="+", metavar="SPEC")
    b.add_argument("--out", default="out", metavar="DIR", help="output folder (default: out)")
    b.add_argument("--tb-vectors", type=int, default=2000, metavar="N",
                   help="random vectors in the testbench when it is not exhaustive (default 2000)")
    b.add_argument("--seed", type=int, default=1, metavar="S")
    b.add_argument("--force", action="store_true",
                   help="replace output files that adder_forge did not write or that were edited since")
    b.add_argument("--hdl", default="verilog", metavar="FORMS",
                   help="comma list of verilog, vhdl: the forms of the adder and testbench to write (default verilog)")

    v = sub.add_parser("verify", help="check that each spec's adder adds: built-in, simulators, formal")
    v.add_argument("specs", nargs="+", metavar="SPEC")
    v.add_argument("--sim", action="append", default=[], metavar="NAME",
                   help="also run icarus, verilator, cocotb-icarus, cocotb-verilator, or all (comma list, repeatable)")
    v.add_argument("--formal", action="store_true", help="prove equivalence to a + b + cin with Yosys")
    v.add_argument("--vectors", type=int, default=4096, metavar="N",
                   help="random vectors beside the directed ones where a check is not exhaustive (default 4096)")
    v.add_argument("--seed", type=int, default=1, metavar="S")
    v.add_argument("--keep", metavar="DIR", help="keep simulator build folders in DIR (a folder)")

    r = sub.add_parser("report", help="estimates and synthesis figures, beside the plain + baseline")
    r.add_argument("specs", nargs="+", metavar="SPEC")
    r.add_argument("--synth", default="", metavar="FLOWS", help="comma list of generic, lut6, ice40")
    r.add_argument("--out", default="out", metavar="DIR")
    r.add_argument("--force", action="store_true",
                   help="replace output files that adder_forge did not write or that were edited since")

    d = sub.add_parser("dump", help="print the gate-level IR of a spec as text")
    d.add_argument("spec", metavar="SPEC")

    sub.add_parser("schemes", help="list the carry schemes and the keys each accepts")
    return ap


def main(argv: list[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    try:
        return _COMMANDS[args.command](args)
    except SpecError as exc:
        print(str(exc), file=sys.stderr)
        return EXIT_INPUT
    except ToolError as exc:
        print(f"adder-forge: {exc}", file=sys.stderr)
        return EXIT_TOOL
    except OutputConflict as exc:
        print(str(exc), file=sys.stderr)
        return EXIT_INPUT
    except OutputError as exc:
        print(f"adder-forge: {exc}", file=sys.stderr)
        return EXIT_TOOL
    except AdderForgeError as exc:
        print(f"adder-forge: error: {exc}", file=sys.stderr)
        return exc.exit_status
    except KeyboardInterrupt:
        print("adder-forge: interrupted", file=sys.stderr)
        return 130


def _load_all(paths: list[str]):
    from .spec import load_spec

    specs = [load_spec(p) for p in paths]
    seen: dict[str, str] = {}
    for s in specs:
        if s.name in seen:
            raise s.error("name", f"module name '{s.name}' is also used by {seen[s.name]}")
        seen[s.name] = s.source
    return specs


def _designs(specs, tb_random: int = 2000, seed: int = 1):
    from .artifacts import design

    return [design(s, tb_random=tb_random, seed=seed) for s in specs]


def cmd_build(args) -> int:
    from .measure import output_folder
    from .outputs import write_folders

    if args.tb_vectors < 0:
        raise SpecError("--tb-vectors must be 0 or more", "<command line>", 1, 1, "--tb-vectors")
    hdl = _hdl(args.hdl)
    designs = [replace(d, hdl=hdl) for d in _designs(_load_all(args.specs), args.tb_vectors, args.seed)]
    written = write_folders(Path(args.out), [output_folder(d) for d in designs], force=args.force)
    for d, w in zip(designs, written):
        print(_build_line(d, w.path) + "".join(f"; {n}" for n in w.notes))
    return EXIT_OK


def _hdl(value: str) -> tuple[str, ...]:
    valid = ("verilog", "vhdl")
    forms = [f.strip() for f in value.split(",") if f.strip()]
    for f in forms:
        if f not in valid:
            from .registry import suggest

            raise SpecError(f"unknown HDL '{f}'" + suggest(f, valid), "<command line>", 1, 1, "--hdl")
    if not forms:
        raise SpecError("--hdl needs at least one of verilog, vhdl", "<command line>", 1, 1, "--hdl")
    return tuple(dict.fromkeys(forms))


def _build_line(d, path) -> str:
    """One line per built spec: what was built (every option that shapes it), its netlist figures as
    emitted (not synthesis figures, which `report` gives under their own names), the testbench, where."""
    from .report import describe, netlist_summary, plural

    return (f"{d.spec.name}: {describe(d.spec, d.net.meta)}: {netlist_summary(d.metrics)}; "
            f"testbench {plural(d.testbench.count, 'vector')} ({d.plan}) -> {path}/")


def _sims(values: list[str]) -> list[str]:
    from .verify import CHECKERS

    valid = [c for c in CHECKERS if c not in ("builtin", "formal")]
    out: list[str] = []
    for v in values:
        for name in filter(None, (x.strip() for x in v.split(","))):
            if name == "all":
                out += valid
            elif name in valid:
                out.append(name)
            else:
                from .registry import suggest

                raise SpecError(f"unknown simulator '{name}'" + suggest(name, valid), "<command line>", 1, 1, "--sim")
    return list(dict.fromkeys(out))


def cmd_verify(args) -> int:
    from .verify import verify

    sims = _sims(args.sim)
    if args.vectors < 0:
        raise SpecError("--vectors must be 0 or more", "<command line>", 1, 1, "--vectors")
    keep = _keep_folder(args.keep) if args.keep else None
    designs = _designs(_load_all(args.specs), tb_random=args.vectors, seed=args.seed)
    found = verify(designs, sims, args.formal, args.vectors, args.seed, keep,
                   progress=lambda m: print(f"... {m}", file=sys.stderr, flush=True))
    results, stopped = found.outcomes, found.stopped
    names = [o.name for o in results] + ([stopped.name] if stopped else [])
    width = max(len(n) for n in names)
    bad = 0
    for o in results:
        status = "pass" if o.ok else "FAIL"
        count = f"{o.vectors} vectors" if o.vectors else ""
        if not o.ok and o.vectors:
            count = f"{o.failed} of {o.vectors} vectors failed"
        print(f"{o.name:<{width}}  {o.checker:<16} {status}  {count + '; ' if count else ''}{o.detail}")
        bad += not o.ok
    if stopped is None:
        print(f"{len(results) - bad} passed, {bad} failed")
        return EXIT_MISMATCH if bad else EXIT_OK
    why = stopped.error.message + (f": {stopped.error.hint.strip().splitlines()[-1]}" if stopped.error.hint.strip() else "")
    print(f"{stopped.name:<{width}}  {stopped.checker:<16} ERROR {why}")
    print(f"{len(results) - bad} passed, {bad} failed; {stopped.checker} could not run, later checks skipped")
    print(f"adder-forge: {stopped.error}", file=sys.stderr)
    return EXIT_MISMATCH if bad else EXIT_TOOL  # a mismatch already found outranks a tool that failed


def _keep_folder(value: str) -> Path:
    keep = Path(value)
    if os.path.lexists(keep) and not keep.is_dir():
        raise SpecError(f"--keep {value}: is a file, not a folder", "<command line>", 1, 1, "--keep")
    try:
        keep.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise SpecError(f"--keep {value}: cannot make the folder ({exc.strerror or exc})", "<command line>", 1, 1,
                        "--keep") from None
    return keep


def cmd_report(args) -> int:
    from .measure import format_table, measure_specs

    flows = [f.strip() for f in args.synth.split(",") if f.strip()]
    specs = _load_all(args.specs)
    results = measure_specs(specs, flows, Path(args.out), progress=lambda m: print(f"... {m}", file=sys.stderr, flush=True),
                            force=args.force)
    print(format_table(results))
    return EXIT_OK


def cmd_dump(args) -> int:
    from .ir import dump
    from .registry import elaborate
    from .spec import load_spec

    sys.stdout.write(dump(elaborate(load_spec(args.spec))))
    return EXIT_OK


def cmd_schemes(args) -> int:
    from .registry import schemes

    for s in schemes().values():
        keys = ", ".join(o.key for o in s.options) or "-"
        print(f"{s.name:<18} {s.doc}")
        print(f"{'':<18} keys: {keys}" + (f"; width up to {s.max_width}" if s.max_width < 16384 else ""))
    return EXIT_OK


_COMMANDS = {"build": cmd_build, "verify": cmd_verify, "report": cmd_report, "dump": cmd_dump, "schemes": cmd_schemes}


if __name__ == "__main__":
    sys.exit(main())
