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

from .base.version import __version__
from .base.errors import AdderForgeError, UsageError

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
    b.add_argument("--draw", action="store_true",
                   help="also write NAME_prefix.svg, a drawing of the prefix network (prefix adders)")

    v = sub.add_parser("verify", help="check that each spec's adder adds: built-in, simulators, formal")
    v.add_argument("specs", nargs="+", metavar="SPEC")
    v.add_argument("--sim", action="append", default=[], metavar="NAME",
                   help="also run icarus, verilator, ghdl (the VHDL form, made on the fly), cocotb-icarus, "
                        "cocotb-verilator, or all (comma list, repeatable)")
    v.add_argument("--formal", action="store_true", help="prove the adder equal to its reference (a + b + cin, a - b, ...; registered outputs K cycles later) with Yosys")
    v.add_argument("--exhaustive", action="store_true",
                   help="built-in check of every input up to 2^33 vectors, a 16-bit adder with carry-in "
                        "(by default every input up to 2^25, a 12-bit adder with carry-in)")
    v.add_argument("--vectors", type=int, default=4096, metavar="N",
                   help="random vectors beside the directed ones where a check is not exhaustive (default 4096)")
    v.add_argument("--seed", type=int, default=1, metavar="S")
    v.add_argument("--keep", metavar="DIR", help="keep simulator build folders in DIR (a folder)")

    r = sub.add_parser("report", help="estimates and synthesis figures, beside the plain + baseline")
    r.add_argument("specs", nargs="+", metavar="SPEC")
    r.add_argument("--synth", default="", metavar="FLOWS", help="comma list of generic, lut6, ice40, ecp5")
    r.add_argument("--out", default="out", metavar="DIR")
    r.add_argument("--csv", metavar="FILE", help="also write every measurement record (specs and + baselines) to FILE")
    r.add_argument("--force", action="store_true",
                   help="replace output files that adder_forge did not write or that were edited since")

    d = sub.add_parser("dump", help="print the gate-level IR of each spec as text")
    d.add_argument("specs", nargs="+", metavar="SPEC")

    sub.add_parser("schemes", help="list the carry schemes and the keys each accepts")

    s = sub.add_parser("search", help="find a prefix network under bounds and write it as a network file")
    s.add_argument("--width", type=int, required=True, metavar="N", help="adder width in bits")
    s.add_argument("--max-levels", type=int, required=True, metavar="L", help="most levels of prefix cells")
    s.add_argument("--max-fanout", type=int, metavar="F", help="most fanout (Harris 2003's measure, docs/prefix.md)")
    s.add_argument("--max-tracks", type=int, metavar="T", help="most wire tracks (Harris 2003's measure)")
    s.add_argument("--max-loads", type=int, metavar="R",
                   help="most cell inputs one value drives anywhere in the network (circuit fanout, docs/search.md)")
    s.add_argument("--objective", default="cells", metavar="NAME", help="cells, area-delay or lut6 (default cells)")
    s.add_argument("--seconds", type=float, default=60.0, metavar="S",
                   help="time for the annealing rounds (default 60); the file records how many rounds ran")
    s.add_argument("--rounds", type=int, metavar="R", help="exactly R annealing rounds, whatever the time (reproduces a file)")
    s.add_argument("--seed", type=int, default=1, metavar="K")
    s.add_argument("--carry-in", action="store_true", help="the adder has a carry-in: one more prefix input")
    s.add_argument("--out", required=True, metavar="FILE", help="the network file to write")
    s.add_argument("--force", action="store_true", help="replace FILE if it exists")

    e = sub.add_parser("explore", help="sweep widths x variants: check, measure, Pareto plots and an HTML report")
    e.add_argument("sweep", metavar="SWEEP")
    e.add_argument("--out", metavar="DIR", help="output folder (default: out/NAME, NAME the sweep's name)")
    _run_options(e)
    e.add_argument("--table-only", action="store_true", help="write results.csv and results.json only (no plots, no report)")
    e.add_argument("--force", action="store_true",
                   help="replace output files that adder_forge did not write or that were edited since")
    _pick_parser(sub)
    return ap


def _pick_parser(sub) -> None:
    k = sub.add_parser("pick", help="the adder to use at one width under a delay limit, with the runners-up and why")
    k.add_argument("--width", type=int, required=True, metavar="N")
    k.add_argument("--target", required=True, metavar="FIGURE",
                   help="the delay figure to constrain: unit_gate_delay, le_fo4, abc_depth, yosys_depth, lut6_depth, "
                        "ice40_fmax_mhz (a minimum), ...")
    k.add_argument("--max-delay", type=float, required=True, metavar="X",
                   help="the limit on the target figure (for a frequency such as Fmax: the least acceptable)")
    k.add_argument("--minimize", default="area", metavar="area|delay", help="what to minimise within the limit (default area)")
    k.add_argument("--carry-in", action=argparse.BooleanOptionalAction, default=True, help="with a carry-in port (default yes)")
    k.add_argument("--name", metavar="NAME", help="module name of the chosen adder (default pick_wN)")
    k.add_argument("--out", default="out", metavar="DIR", help="the chosen spec and its build go into DIR/NAME/ (default out)")
    _run_options(k)
    k.add_argument("--force", action="store_true",
                   help="replace output files that adder_forge did not write or that were edited since")


def _run_options(p) -> None:
    """Options of the commands that run sweeps (explore, pick)."""
    p.add_argument("--executor", default="local", metavar="NAME", help="local (a process pool, default) or dask")
    p.add_argument("--scheduler", metavar="ADDRESS", help="the Dask scheduler for --executor dask (tcp://host:8786)")
    p.add_argument("--jobs", type=int, metavar="N", help="local worker processes (default: one per core; 1: in this process)")
    p.add_argument("--cache", metavar="DIR", help="figure cache (default: $ADDER_FORGE_CACHE or ~/.cache/adder_forge/figures)")
    p.add_argument("--task-seconds", type=float, metavar="S",
                   help="time limit of one synthesis task; past it the task's tools are killed and its row says so "
                        "(default: the sweep's task_seconds, else 1200)")


def main(argv: list[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    from .base.tools import set_listener

    # A tool's own word for the user (the first WebAssembly compile takes a minute) reaches stderr.
    set_listener(lambda message: print(f"... {message}", file=sys.stderr, flush=True))
    try:
        for option in ("out", "keep", "cache"):
            if args.command == "search":
                break  # its --out is a file
            if getattr(args, option, None) is not None:
                check_folder(getattr(args, option), args.command, f"--{option}")
        return _COMMANDS[args.command](args)
    except AdderForgeError as exc:  # each error class knows its line and its exit status
        print(exc.printed(), file=sys.stderr)
        return exc.exit_status
    except KeyboardInterrupt:
        print("adder-forge: interrupted", file=sys.stderr)
        return 130


def check_folder(path: str, command: str, option: str) -> None:
    """An output folder option must name a folder, or a place where one can be made: checked before any work,
    so that a file in the way is bad input (exit 2), not a tool failure after minutes of work."""
    if not path.strip():
        raise UsageError(f"{option} needs a folder name", command, option)
    p = Path(path)
    while True:
        if p.exists() and not p.is_dir():
            what = "is a file" if p == Path(path) else f"cannot be made: {p} is a file"
            raise UsageError(f"{option} {path} {what}, not a folder", command, option)
        if p.is_dir() or p.parent == p:
            break
        p = p.parent
    if p.is_dir() and not os.access(p, os.W_OK | os.X_OK):
        raise UsageError(f"{option} {path}: no permission to write in {p}", command, option)


def _load_all(paths: list[str]):
    from .spec.loader import check_names, load_spec

    specs = [load_spec(p) for p in paths]
    check_names(specs)
    return specs


def _progress():
    from .base.progress import for_stream

    return for_stream(sys.stderr)


def _designs(specs, tb_random: int = 2000, seed: int = 1, progress=None):
    from .emit.design import design
    from .base.progress import NULL

    with (progress or NULL).task("designs", total=len(specs), unit="specs") as task:
        out = []
        for s in specs:
            out.append(design(s, tb_random=tb_random, seed=seed))
            task.advance()
    return out


def cmd_build(args) -> int:
    from .synth.measure import output_folder
    from .emit.outputs import write_folders

    if args.tb_vectors < 0:
        raise UsageError(f"--tb-vectors must be 0 or more, got {args.tb_vectors}", "build", "--tb-vectors")
    hdl = _hdl(args.hdl)
    designs = [replace(d, hdl=hdl) for d in _designs(_load_all(args.specs), args.tb_vectors, args.seed, _progress())]
    folders = [output_folder(d) for d in designs]
    if args.draw:
        from .emit.prefix_svg import drawing_files

        folders = [replace(f, files={**f.files, **drawing_files(d.spec, d.net)}) for f, d in zip(folders, designs)]
    written = write_folders(Path(args.out), folders, force=args.force)
    for d, w in zip(designs, written):
        drawn = ""
        if args.draw:
            drawn = f"; prefix graph in {d.spec.name}_prefix.svg" if d.net.prefix is not None else \
                "; no prefix network to draw"
        print(_build_line(d, w.path) + drawn + "".join(f"; {n}" for n in w.notes))
    return EXIT_OK


def _hdl(value: str) -> tuple[str, ...]:
    valid = ("verilog", "vhdl")
    forms = [f.strip() for f in value.split(",") if f.strip()]
    for f in forms:
        if f not in valid:
            from .spec.registry import suggest

            raise UsageError(f"unknown HDL '{f}'" + suggest(f, valid), "build", "--hdl")
    if not forms:
        raise UsageError("--hdl needs at least one of verilog, vhdl", "build", "--hdl")
    return tuple(dict.fromkeys(forms))


def _build_line(d, path) -> str:
    """One line per built spec: what was built (every option that shapes it), its netlist figures as
    emitted (not synthesis figures, which `report` gives under their own names), the testbench, where."""
    from .emit.summary import describe, netlist_summary, plural

    return (f"{d.spec.name}: {describe(d.spec, d.net.meta)}: {netlist_summary(d.metrics)}; "
            f"testbench {plural(d.testbench.count, 'vector')} ({d.plan}) -> {path}/")


def _sims(values: list[str]) -> list[str]:
    """The --sim list (comma lists, repeatable) as checker names; the checker registry judges each name."""
    from .checks.verify import select

    return select([x.strip() for v in values for x in v.split(",") if x.strip()])


def _flows(text: str) -> list[str]:
    """The --synth list: flow names in any case; a bad one gets a suggestion."""
    from .synth.flows import FLOWS, unknown_flow

    out = []
    for given in filter(None, (x.strip() for x in text.split(","))):
        name = given.lower()
        if name not in FLOWS:
            raise unknown_flow(given)
        out.append(name)
    return list(dict.fromkeys(out))


def cmd_verify(args) -> int:
    from .checks.verify import builtin_plan, chosen, rows, verify

    sims = _sims(args.sim)
    if args.vectors < 0:
        raise UsageError(f"--vectors must be 0 or more, got {args.vectors}", "verify", "--vectors")

    keep = _keep_folder(args.keep) if args.keep else None
    specs = _load_all(args.specs)
    for s in specs:  # a spec too wide for --exhaustive fails here, before any work
        builtin_plan(s, args.vectors, args.seed, args.exhaustive)
    chosen(specs, sims, args.formal)  # and one a chosen checker cannot take (a VHDL-illegal name for ghdl)
    progress = _progress()
    # Only the simulators read the testbench: without them its vectors would be drawn and held for nothing.
    designs = _designs(specs, tb_random=args.vectors if sims else 0, seed=args.seed, progress=progress)
    found = verify(designs, sims, args.formal, args.vectors, args.seed, keep, progress=progress,
                   exhaustive=args.exhaustive)
    print("\n".join(rows(found)))
    if found.stopped is not None:
        print(f"adder-forge: {found.stopped.error}", file=sys.stderr)
    if found.failed:
        return EXIT_MISMATCH  # a mismatch already found outranks a tool that failed
    return EXIT_TOOL if found.stopped is not None else EXIT_OK


def _keep_folder(value: str) -> Path:
    keep = Path(value)
    if os.path.lexists(keep) and not keep.is_dir():
        raise UsageError(f"--keep {value} is a file, not a folder", "verify", "--keep")
    try:
        keep.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise UsageError(f"--keep {value}: cannot make the folder ({exc.strerror or exc})", "verify",
                         "--keep") from None
    return keep


def cmd_report(args) -> int:
    from .synth.measure import format_table, measure_specs

    flows = _flows(args.synth)
    csv = Path(args.csv) if args.csv else None
    if args.csv is not None and not args.csv.strip():
        raise UsageError("--csv needs a file name", "report", "--csv")
    specs = _load_all(args.specs)
    results = measure_specs(specs, flows, Path(args.out), progress=_progress(), force=args.force, csv=csv)
    print(format_table(results))
    for m in results:
        print(f"{m.spec.name}: figures written to {m.json}")
    if csv is not None:
        from .emit.summary import plural
        from .synth.measure import all_records

        print(f"{plural(len(all_records(results)), 'record')} of {plural(len(results), 'spec')} and the + baselines "
              f"written to {csv}")
    return EXIT_OK


def cmd_dump(args) -> int:
    from .ir.network import dump
    from .schemes import elaborate
    from .spec.loader import load_spec

    specs = [load_spec(p) for p in args.specs]  # all checked before anything is printed
    for k, spec in enumerate(specs):
        sys.stdout.write(("\n" if k else "") + f"; {spec.name} from {spec.source}\n" + dump(elaborate(spec)))
    return EXIT_OK


def cmd_schemes(args) -> int:
    from .spec.registry import schemes, value_text

    def key(o) -> str:  # a default that picks something (prefix: kogge-stone) is shown, not implied
        return o.key if o.default is None else f"{o.key} (default {value_text(o.default)})"

    for s in schemes().values():
        keys = ", ".join(key(o) for o in s.options) or "-"
        print(f"{s.name:<18} {s.doc}")
        print(f"{'':<18} keys: {keys}" + (f"; width up to {s.max_width}" if s.max_width < 16384 else ""))
    return EXIT_OK


def cmd_search(args) -> int:
    from .search.run import Request, check_request, search

    out = Path(args.out)
    if not args.out.strip() or out.is_dir():
        raise UsageError(f"--out {args.out} must name a file, not a folder", "search", "--out")
    if os.path.lexists(out) and not args.force:
        raise UsageError(f"--out {args.out} exists; add --force to replace it", "search", "--out")
    if not out.parent.is_dir():
        raise UsageError(f"--out {args.out}: no folder {out.parent}", "search", "--out")
    r = Request(args.width, args.max_levels, args.max_fanout, args.max_tracks, args.objective, args.seconds,
                args.seed, args.rounds, args.carry_in, max_loads=args.max_loads)
    check_request(r)  # before any work
    found = search(r, progress=_progress())
    text = found.file_text()
    tmp = out.with_name(f".{out.name}.adder_forge_tmp")
    try:
        tmp.write_text(text, encoding="utf-8")
        os.replace(tmp, out)
    except OSError as exc:
        from .base.errors import OutputError

        tmp.unlink(missing_ok=True)
        raise OutputError(f"cannot write {args.out}: {exc.strerror or exc}") from None
    print(_search_line(found, args.out))
    return EXIT_OK


def _search_line(found, path) -> str:
    from .emit.summary import bounds_text

    f = found.figures
    lut = f"; LUT6 flow {found.lut6['luts']} LUTs, {found.lut6['depth']} LUT levels" if found.lut6 else ""
    checks = "; ".join(f"{c} {'pass' if ok else 'FAIL'}" for c, ok, _ in found.checks)
    return (f"{found.name}: {f['prefix_nodes']} cells, {f['prefix_levels']} levels, depth {f['prefix_depth']}, "
            f"fanout {f['prefix_fanout']}, {f['wire_tracks']} tracks; {bounds_text(f)}{lut}; from start "
            f"{found.start} after {found.rounds} rounds; {checks} -> {path}")


def _check_run_options(args, command: str) -> None:
    from .explore.executors import get

    get(args.executor, command)
    if args.jobs is not None and args.jobs < 1:
        raise UsageError(f"--jobs must be 1 or more, got {args.jobs}", command, "--jobs")
    if args.task_seconds is not None:
        from .explore.sweep import task_seconds

        def fail(why: str):
            raise UsageError(why, command, "--task-seconds")

        task_seconds(args.task_seconds, fail, "--task-seconds")


def cmd_explore(args) -> int:
    from .explore.job import explore

    _check_run_options(args, "explore")
    done = explore(args.sweep, args.out, args.cache, args.executor, args.jobs, args.scheduler, _progress(),
                   force=args.force, draw=not args.table_only, task_seconds=args.task_seconds)
    out = done.outcome
    sw = out.sweep
    print(f"{sw.name}: {len(sw.points)} adders ({len(sw.labels)} variants incl. + x {len(sw.widths)} widths), "
          f"figures {', '.join(sw.figures)}; {out.computed} tasks computed, {out.cached} from the cache"
          + (f", {out.failed} failed" if out.failed else "")
          + (f" ({out.timed_out} stopped at the {sw.task_seconds:g} s task limit)" if out.timed_out else ""))
    skipped: dict[str, list] = {}
    for s in sw.skipped:
        skipped.setdefault(s.label, []).append(s)
    for label, items in skipped.items():  # one line a variant: the reason at its first width
        widths = ", ".join(str(s.width) for s in items)
        print(f"  not built: {label} at {widths} bits ({items[0].reason}{', ...' if len(items) > 1 else ''})")
    from .explore.run import CHECK, check_text

    bad = [(p, check_text(out.entries.get((p.spec.name, CHECK)))) for p in sw.points]
    bad = [(p, t) for p, t in bad if t != "pass"]
    for p, t in bad:
        print(f"  {p.spec.name}: built-in check {t}")
    for note in done.written.notes if done.written else ():
        print(f"  {note}")
    plots = sum(f.endswith((".png", ".svg")) for f in done.files)
    print(f"{sw.name}: results in {done.written.path}/ ({', '.join(f for f in done.files if not f.endswith(('.png', '.svg')))}"
          + (f" and {plots} plot files; {done.drawn} plots drawn, {done.reused} unchanged from the cache)"
             if plots else ")"))
    return EXIT_MISMATCH if any(t.startswith("FAIL") for _, t in bad) else EXIT_OK


def cmd_pick(args) -> int:
    from .explore.job import run
    from .explore.pick import candidates_sweep, check_args, choose, explain, write_choice

    _check_run_options(args, "pick")
    name = args.name or f"pick_w{args.width}"
    target, area = check_args(args.width, args.target, args.max_delay, args.minimize, name)
    sweep = candidates_sweep(args.width, target, args.carry_in, name)
    out = run(sweep, args.cache, args.executor, args.jobs, args.scheduler, _progress(), args.task_seconds)
    picked = choose(out, target, area, args.max_delay, args.minimize)
    print(f"pick: {len(sweep.points)} adders at {args.width} bits ({out.computed} tasks computed, "
          f"{out.cached} from the cache)")
    for line in explain(picked):
        print(line)
    if picked.winner is None:
        return EXIT_MISMATCH
    written, d = write_choice(picked, name, args.out, force=args.force)
    print(f"{name}: spec {name}.yaml and its build -> {written.path}/"
          + "".join(f"; {n}" for n in written.notes))
    return EXIT_OK


_COMMANDS = {"search": cmd_search, "explore": cmd_explore, "pick": cmd_pick, "build": cmd_build, "verify": cmd_verify,
             "report": cmd_report, "dump": cmd_dump, "schemes": cmd_schemes}


if __name__ == "__main__":
    sys.exit(main())
