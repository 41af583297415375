"""Structural figures read off the IR: gate equivalents, levels, fanout, and prefix-network measures."""

from __future__ import annotations

from collections import Counter

from .cells import GATES, cost_of, levels_of
from .ir import Network
from .skip_timing import sensitizable_levels


def depth(net: Network) -> list[int]:
    """Arrival level of every node in 2-input gate levels (cells.py's table); inputs at 0."""
    lv = [0] * len(net.nodes)
    for i, n in enumerate(net.nodes):
        if n.args:
            base = max(lv[a] for a in n.args)
            lv[i] = base + levels_of(n.op, len(n.args))
    return lv


def gate_levels(net: Network) -> int:
    lv = depth(net)
    return max((lv[b] for p in net.outputs for b in p.bits), default=0)


def structure(net: Network) -> dict:
    uses = net.uses()
    ops = Counter(n.op for n in net.nodes if n.op in GATES or n.op == "ADD")
    by_role: dict[str, Counter] = {}
    for n in net.nodes:
        if n.op in GATES or n.op == "ADD":
            by_role.setdefault(n.role or "other", Counter())[n.op] += 1
    return {
        "gate_count": sum(cost_of(n.op, len(n.args)) for n in net.nodes),
        "gate_levels": gate_levels(net),
        "max_fanout": max((uses[i] for i, n in enumerate(net.nodes) if n.op in GATES), default=0),
        "cells": dict(sorted(ops.items())),
        "cells_by_role": {r: dict(sorted(c.items())) for r, c in sorted(by_role.items())},
    }


def metrics(net: Network) -> dict:
    """The report's ``metrics`` block. Prefix figures are null for schemes without a prefix network."""
    m = structure(net)
    # Skip-aware delay for adders with bypass multiplexers, whose gate_levels counts false paths.
    m["sensitizable_levels"] = sensitizable_levels(net)
    m["notes"] = [v for k, v in net.meta if k == "note"]  # facts a scheme wants in the report
    prefix = {"prefix_nodes": None, "prefix_black": None, "prefix_gray": None, "prefix_levels": None,
              "prefix_fanout": None, "wire_tracks": None}
    if net.prefix is not None:
        from .prefix_metrics import prefix_figures

        prefix.update(prefix_figures(net.prefix))
    m.update(prefix)
    return m
