"""Build and run the cocotb test for one module with cocotb's Python runner.

Run as a child process (``python -m adder_forge.checks.cocotb_run``, built as a Command in cocotb_check.py) so
the runner's own process handling never reaches the caller; prints the summary line and exits 0 or 1.
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path


def main(argv=None) -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sim", required=True, choices=("icarus", "verilator"))
    ap.add_argument("--source", required=True)
    ap.add_argument("--top", required=True)
    ap.add_argument("--workdir", required=True)
    ap.add_argument("--build-arg", action="append", default=[], help="one argument for the simulator's build")
    args = ap.parse_args(argv)

    from cocotb_tools.check_results import get_results
    from cocotb_tools.runner import get_runner

    os.environ.pop("PYTEST_CURRENT_TEST", None)
    work = Path(args.workdir).resolve()
    runner = get_runner(args.sim)
    build_args = list(args.build_arg)
    runner.build(sources=[Path(args.source).resolve()], hdl_toplevel=args.top, build_dir=work / "build",
                 timescale=("1ns", "1ps"), build_args=build_args)
    xml = work / "results.xml"
    env = {k: v for k, v in os.environ.items() if k.startswith("ADDER_FORGE_")}
    env["PYTHONPATH"] = os.pathsep.join(p for p in sys.path if p)
    runner.test(test_module="adder_forge.checks.cocotb_bench", hdl_toplevel=args.top, build_dir=work / "build",
                test_dir=work, results_xml=str(xml), extra_env=env, timescale=("1ns", "1ps"))
    tests, failed = get_results(xml)
    print(f"{args.top}: cocotb {tests - failed} of {tests} tests passed")
    return 0 if tests and not failed else 1


if __name__ == "__main__":
    sys.exit(main())
