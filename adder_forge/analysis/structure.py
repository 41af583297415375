"""Netlist figures read off the IR (the module as emitted, before any synthesis tool touches it) and the
prefix-network figures.

Every key says what it counts, because the same adder also has Yosys, LUT and FPGA figures (synth.py,
measure.py) that count something else: Yosys merges shared logic before it counts, so a flat lookahead of
20920 gate equivalents as emitted can be 2942 Yosys cells.

- ``netlist_cells``: gate cells in NAME.v (NOT, AND2, OR2, XOR2, XNOR2, AO21, MUX2), one each.
- ``netlist_gate_equiv``: the same cells in 2-input gate equivalents (cells.py: AO21 2, MUX2 3, the rest 1).
- ``netlist_levels``: the longest input-to-output path in 2-input gate levels (AO21 and MUX2 2, the rest 1).
- ``netlist_levels_skip_aware``: for adders with skip multiplexers, the longest path that can be sensitized
  (skip_timing.py); ``netlist_levels`` counts their false paths. None elsewhere.
- ``netlist_max_fanout``: the most cell inputs and output-port bits one gate output drives.
- ``pipeline_latency_cycles``, ``pipeline_stage_levels``, ``pipeline_registers`` (pipelined adders only):
  the clock cycles from operands to result, the longest logic path of each stage (levels as above, from
  one rank of registers, or the inputs, to the next), and the register bits; ``netlist_levels`` is then
  the longest stage.
- ``netlist_plus_cells``: Verilog ``+`` cells (ADD) in the netlist. Their structure is left to synthesis, so
  the figures above that would need it are None ("n/a: left to synthesis"), not a guess.
"""

from __future__ import annotations

from collections import Counter

from ..ir.cells import GATES, cost_of, cell_levels
from ..ir.network import META_NOTE, Network, meta_values
from ..ir.pipeline import registers, stage_levels
from ..ir.arrival import arrival, endpoints
from .skip_timing import sensitizable_levels

LEFT_TO_SYNTHESIS = "n/a: left to synthesis"  # how the netlist figures of a Verilog `+` are shown


def _levels(i: int, n) -> int:
    return cell_levels(n.op, len(n.args))


def arrival_levels(net: Network) -> list[int]:
    """Arrival level of every node in 2-input gate levels (cells.py's table); inputs and constants at 0."""
    return [t or 0 for t in arrival(net, _levels).times]


def gate_levels(net: Network) -> int:
    a = arrival(net, _levels)
    end = a.latest(endpoints(net))
    return a.times[end] if end >= 0 else 0


def plus_cells(net: Network) -> int:
    return sum(1 for n in net.nodes if n.op == "ADD")


def structure(net: Network) -> dict:
    uses = net.uses()
    counted = [n for n in net.nodes if n.op in GATES or n.op == "ADD"]
    ops = Counter(n.op for n in counted)
    by_role: dict[str, Counter] = {}
    for n in counted:
        by_role.setdefault(n.role or "other", Counter())[n.op] += 1
    adds = plus_cells(net)
    gates = [i for i, n in enumerate(net.nodes) if n.op in GATES]
    return {
        "netlist_cells": None if adds else len(gates),
        "netlist_gate_equiv": None if adds else sum(cost_of(net.nodes[i].op, len(net.nodes[i].args)) for i in gates),
        "netlist_levels": None if adds else gate_levels(net),
        "netlist_max_fanout": None if adds else max((uses[i] for i in gates), default=0),
        "netlist_plus_cells": adds,
        "netlist_cells_by_type": dict(sorted(ops.items())),
        "netlist_cells_by_role": {r: dict(sorted(c.items())) for r, c in sorted(by_role.items())},
    }


def metrics(net: Network) -> dict:
    """The report's ``metrics`` block. Prefix figures are null for schemes without a prefix network."""
    m = structure(net)
    # Skip-aware delay for adders with bypass multiplexers, whose netlist_levels counts false paths.
    m["netlist_levels_skip_aware"] = sensitizable_levels(net)
    m["notes"] = meta_values(net.meta, META_NOTE)  # facts a scheme wants in the report
    if m["netlist_plus_cells"]:
        m["notes"].append(f"netlist figures {LEFT_TO_SYNTHESIS}: Verilog + becomes whatever the synthesis tool "
                          "chooses; report --synth measures it")
    prefix = {"prefix_nodes": None, "prefix_black": None, "prefix_gray": None, "prefix_levels": None,
              "prefix_fanout": None, "wire_tracks": None, "prefix_depth": None, "prefix_snir_gap": None,
              "prefix_min_gap": None}
    if net.prefix is not None:
        from .prefix_figures import prefix_figures

        prefix.update(prefix_figures(net.prefix))
    m.update(prefix)
    if registers(net):  # a pipelined adder: netlist_levels above is its longest stage
        m["pipeline_latency_cycles"] = net.iface.latency
        m["pipeline_stage_levels"] = stage_levels(net)
        m["pipeline_registers"] = len(registers(net))
    return m
