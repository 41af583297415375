"""How tests/golden/report_figures.json was captured: run with the old code path of `report` (main at 0894813,
before measurement records) as `python tests/golden/report_figures_capture.py 0894813 tests/golden/report_figures.json`.
Kept for the record; it needs the old measure_specs (a list of dicts) and does not run against the new code."""
import json, sys, tempfile
from pathlib import Path
from adder_forge.synth.measure import measure_specs, format_table
from adder_forge.spec.loader import make_spec

RUNS = {
    # flows -> specs (name, width, scheme, opts); the + baseline comes first in one run, last in the other
    "synth": (["generic", "lut6", "ice40"], [
        ("g_ks8", 8, "prefix", {"prefix": "kogge-stone"}),
        ("g_rip8", 8, "ripple", {}),
        ("g_skip8", 8, "carry-skip", {}),
        ("g_la8n", 8, "lookahead", {"carry_in": False}),
        ("g_plus8", 8, "behavioral", {}),
    ]),
    "estimates": ([], [
        ("e_plus12", 12, "behavioral", {}),
        ("e_bk16", 16, "prefix", {"prefix": "brent-kung"}),
        ("e_sk16", 16, "prefix", {"prefix": "sklansky", "carry_out": False}),
        ("e_skip24", 24, "carry-skip", {"block": [4, 8, 8, 4]}),
        ("e_csel16", 16, "carry-select", {}),
        ("e_cs12", 12, "conditional-sum", {}),
        ("e_bla16", 16, "block-lookahead", {"ling": True}),
        ("e_rip12", 12, "ripple", {"carry_in": False}),
        ("e_hc16", 16, "prefix", {"prefix": "han-carlson", "ling": True}),
    ]),
}

out = {"captured_from": sys.argv[1], "runs": {}}
for run, (flows, rows) in RUNS.items():
    specs = [make_spec(n, w, s, **o) for n, w, s, o in rows]
    with tempfile.TemporaryDirectory() as tmp:
        res = measure_specs(specs, flows, Path(tmp))
    for r in res:
        r.pop("json")
    out["runs"][run] = {"flows": flows, "specs": [[n, w, s, o] for n, w, s, o in rows], "results": res,
                        "table": format_table(res)}
Path(sys.argv[2]).write_text(json.dumps(out, indent=1) + "\n")
print(format_table(out["runs"]["synth"]["results"]))
