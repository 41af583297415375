"""Generation speed: elaborate + metrics + emit for every scheme at 64, 256, 1024 and 4096 bits, and the
peak resident memory of a 4096-bit generation (measured in a fresh subprocess).

    .venv/bin/python bench/generation.py                 # all widths
    .venv/bin/python bench/generation.py 1024            # some widths

Targets (issue 5): 1024-bit Kogge-Stone under 1 s, any 4096-bit prefix network under 10 s.
"""

from __future__ import annotations

import subprocess
import sys

from common import ROOT, best_of, cases, save

from adder_forge.emit.design import design
from adder_forge.analysis.structure import metrics
from adder_forge.schemes import elaborate
from adder_forge.emit.summary import header_lines
from adder_forge.spec.loader import make_spec
from adder_forge.emit.verilog import emit_module

WIDTHS = (64, 256, 1024, 4096)

# ru_maxrss of a child on Linux starts from its parent's high-water mark at fork (this bench process is
# large by then), so the probe reads its own VmHWM, which a fresh address space resets at exec; getrusage
# is printed beside it.
RSS_PROBE = """
import resource, sys, time
sys.path.insert(0, {root!r})
def hwm():
    for line in open("/proc/self/status"):
        if line.startswith("VmHWM:"):
            return int(line.split()[1])
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
from adder_forge.emit.design import design
from adder_forge.spec.loader import make_spec
from adder_forge.spec.registry import schemes
schemes()
base = hwm()
t = time.perf_counter()
d = design(make_spec("rss", {width}, {scheme!r}, **{opts!r}))
dt = time.perf_counter() - t
print(base, hwm(), dt, len(d.net.nodes), len(d.verilog), resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)
"""


def generate(spec):
    net = elaborate(spec)
    m = metrics(net)
    return net, emit_module(net, header_lines(spec, m))


def peak_rss(width: int, scheme: str, opts: dict) -> dict:
    code = RSS_PROBE.format(root=str(ROOT), width=width, scheme=scheme, opts=opts)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    base, peak, seconds, nodes, chars, ru = int(out[0]), int(out[1]), float(out[2]), int(out[3]), int(out[4]), int(out[5])
    return {"width": width, "scheme": scheme, "options": opts, "peak_rss_mib": round(peak / 1024, 1),
            "getrusage_maxrss_mib": round(ru / 1024, 1),
            "after_import_rss_mib": round(base / 1024, 1), "design_seconds": round(seconds, 3), "nodes": nodes,
            "verilog_chars": chars}


def main(widths) -> None:
    rows = []
    print(f"{'width':>5}  {'case':28} {'nodes':>8} {'generate s':>10} {'design() s':>10}")
    for w in widths:
        for label, scheme, opts in cases(w):
            spec = make_spec(f"g{w}", w, scheme, **opts)
            repeat = 3 if w <= 1024 else 1
            gen_s, (net, text) = best_of(lambda: generate(spec), repeat)
            full_s, _ = best_of(lambda: design(spec), repeat)
            rows.append({"width": w, "case": label, "nodes": len(net.nodes), "generate_seconds": round(gen_s, 4),
                         "design_seconds": round(full_s, 4), "verilog_chars": len(text)})
            print(f"{w:5}  {label:28} {len(net.nodes):8} {gen_s:10.3f} {full_s:10.3f}", flush=True)
    rss = []
    if 4096 in widths:
        for label, scheme, opts in cases(4096):
            r = peak_rss(4096, scheme, opts)
            rss.append({"case": label, **r})
            print(f"peak RSS, 4096-bit {label}: {r['peak_rss_mib']} MiB "
                  f"(interpreter and imports {r['after_import_rss_mib']} MiB), design() {r['design_seconds']} s")
    ks = {r["width"]: r["generate_seconds"] for r in rows if r["case"] == "prefix:kogge-stone"}
    worst4096 = max((r["generate_seconds"] for r in rows if r["width"] == 4096 and r["case"].startswith("prefix")),
                    default=None)
    verdict = {
        "kogge_stone_1024_seconds": ks.get(1024), "target_kogge_stone_1024": "< 1 s",
        "worst_prefix_4096_seconds": worst4096, "target_prefix_4096": "< 10 s",
    }
    print(verdict)
    print("saved", save("generation", {"rows": rows, "peak_rss": rss, "verdict": verdict}))


if __name__ == "__main__":
    main([int(x) for x in sys.argv[1:]] or list(WIDTHS))
