"""Every benchmark of issue 5 in one run, figures to stdout and bench/results/*.json (git-ignored).

    .venv/bin/python bench/run_all.py            # generation, verification throughput, formal at 64/256 bits
    .venv/bin/python bench/run_all.py --quick    # smaller: generation up to 1024 bits, formal at 64 bits

The synthesis table for the docs is separate (it runs Yosys and nextpnr for minutes):
    .venv/bin/python bench/measure_table.py
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent


def main(quick: bool) -> int:
    steps = [
        ["generation.py"] + (["64", "256", "1024"] if quick else []),
        ["throughput.py"] + (["200000"] if quick else []),
        ["formal_scale.py"] + (["64"] if quick else ["64", "256"]),
    ]
    bad = 0
    for step in steps:
        print(f"== {' '.join(step)}", flush=True)
        bad += subprocess.run([sys.executable, str(HERE / step[0]), *step[1:]], cwd=HERE.parent).returncode != 0
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main("--quick" in sys.argv[1:]))
