"""The figures our own analyses measure, declared once (base/records.py says what a declaration holds).

Two sources: ``netlist`` reads structure.metrics (the module as emitted) and ``estimates`` reads
delay.estimates (unit-gate and logical-effort models). Both are adder_forge's own figures, so their
records name adder_forge and its version as the tool.
"""

from __future__ import annotations

from ..base.records import Figure
from ..base.version import __version__

TOOL = "adder_forge"
TOOL_VERSION = __version__

NETLIST = (
    Figure("netlist_gate_equiv", "gate equivalents", "cells of the module as emitted, in 2-input gate equivalents",
           label="netlist GE"),
    Figure("netlist_cells", "cells", "gate cells of the module as emitted"),
    Figure("netlist_levels", "gate levels", "longest input-to-output path in 2-input gate levels"),
    Figure("netlist_levels_skip_aware", "gate levels", "longest path that can be sensitized (skip multiplexers)"),
    Figure("netlist_max_fanout", "loads", "most cell inputs and output bits one gate drives"),
    Figure("netlist_plus_cells", "cells", "Verilog + cells (their structure is left to synthesis)"),
    Figure("prefix_nodes", "nodes", "prefix operators of the prefix network"),
    Figure("prefix_black", "nodes", "black (generate and propagate) prefix operators"),
    Figure("prefix_gray", "nodes", "gray (generate only) prefix operators"),
    Figure("prefix_levels", "levels", "prefix levels"),
    Figure("prefix_fanout", "loads", "largest fanout of a prefix node"),
    Figure("wire_tracks", "tracks", "horizontal wiring tracks of the prefix network"),
)

ESTIMATES = (
    Figure("unit_gate_delay", "unit gate delays", "unit-gate model delay (topological)", label="unit delay",
           shown_instead="unit_gate_delay_skip_aware"),
    Figure("unit_gate_delay_skip_aware", "unit gate delays", "unit-gate delay without the false skip paths"),
    Figure("unit_gate_area", "unit gates", "unit-gate model area", label="unit area"),
    Figure("le_tau", "tau", "logical-effort delay, each path sized on its own", label="LE tau"),
    Figure("le_fo4", "FO4", "the same delay in fanout-of-4 inverter delays", label="LE FO4"),
    Figure("le_unsized_tau", "tau", "logical-effort delay with every gate at unit size"),
    Figure("le_stages", "stages", "stages on the logical-effort critical path"),
    Figure("le_stage_effort", "effort", "stage effort on the sized critical path"),
)

SOURCES = {"netlist": NETLIST, "estimates": ESTIMATES}
