"""Delay and area estimates read off the IR: the unit-gate model and logical effort.

These are estimates for comparing carry schemes with each other, not timing sign-off: no wires, no real
cell library, no placement. Synthesis and FPGA figures come from the tools (synth.py).

Unit-gate model (Tyagi 1993, "A reduced-area scheme for carry-select adders", IEEE Trans. Computers;
Zimmermann 1997, "Binary adder architectures for cell-based VLSI and their synthesis", ETH Zurich thesis;
values from memory): a 2-input AND or OR costs 1 unit of area and 1 unit of delay, an XOR/XNOR 2 and 2.
Cells the sources do not list are costed here as what they are made of (our choices; every cell's
figures live in ir/cells.py): NOT 1 and 1 (not absorbed, so constant-folded inversions stay visible), AO21 = (x & y) | z
as an AND into an OR (2 and 2), MUX2 as two ANDs and an OR with the select inverter shared (3 and 2).

Logical effort (Sutherland, Sproull and Harris, "Logical Effort: Designing Fast CMOS Circuits", 1999;
applied to adders in Harris and Sutherland, "Logical effort of carry propagate adders", Asilomar 2003):
each IR cell is one static CMOS stage (``EFFORT``: logical effort g per input pin and parasitic delay p,
in units of tau with p_inv = 1; values of the 1999 book from memory). Non-inverting cells are costed as
their inverting stage (AND2 as NAND2, AO21 as AOI21, ...): the usual reading of an adder's gate graph, in
which polarity alternates from level to level instead of paying an inverter per cell (Harris and
Sutherland 2003 analyse prefix cells this way; from memory). XOR/XNOR assume both input polarities are at
hand (common practice). Inputs are driven ideally; every output bit drives ``output_load`` unit inverters.

Every arrival time (the unit-gate delay, the unsized logical-effort delay) comes from the one arrival pass
(arrival.py); only the sized figure, which is a path property rather than a node's time, has its own pass.

Loads: with every gate normalised to unit drive (a pin of logical effort g presents g unit-inverter
capacitances), a node's load L is the sum of g over the pins it drives plus the output load of the port
bits it drives. Two figures follow from one pass in topological order:
- ``unsized``: every gate at unit drive, delay of a stage d = g·h + p = L + p, arrival times added up: a
  pessimistic bound in which a node of fanout 33 is as slow as 33 inverter loads make it.
- ``sized`` (the headline figure): a path of N stages sized for least delay, D = N·F^(1/N) + P, where the
  path effort F = G·B·H (logical, branching, electrical effort) is the product of the stage loads L along
  the path, so the branching at every node of the path is counted. The reported path is the one with the
  largest D, found by keeping, for every node and every stage count N, the incoming path of largest F
  (ties broken by the larger P). Each path is sized on its own, as if its gates served it alone: the
  classic optimistic reading of logical effort. 1 FO4 = 5 tau (an inverter driving four copies of itself:
  p_inv + 4; common practice).

A network with ADD cells (Verilog `+`, the behavioural baseline) has no unit-gate or logical-effort
estimate: on an ASIC, synthesis chooses what a `+` becomes. On an FPGA it becomes the dedicated carry
chain, so ``fpga_delay`` estimates any network, ADD cells included, for a LUT4 family with a chain
(``schemes.chain_blocks.FAMILIES``: ns per chain bit, per LUT level, per entry into or out of a chain;
measured here, docs/fpga.md):
- gates are packed into 4-input LUTs the way a depth-oriented mapper does it: every node keeps its best
  4-feasible cuts (cut enumeration; Cong and Ding 1994, "FlowMap", and Mishchenko, Cho, Chatterjee and
  Brayton 2007, "Combinational and sequential mapping with priority cuts", from memory), and its arrival
  is the best cut's latest leaf plus one LUT level;
- an ADD's bit i (sum i, or the carry out at i = k) is ready at max over bits j <= i of the later of
  a_j and b_j, plus (i - j) chain bits, plus the entry (the carry-in likewise, from bit 0), and a chain
  bit read by a LUT pays the entry again.
It ranks hybrids and LUT networks for one family; the measured Fmax (synth/flows.py) is the figure.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ..ir.cells import CELLS, EffortCell, UnitGate, add_width
from ..ir.network import Network
from ..ir.arrival import Arrival, arrival, endpoints, starts
from ..schemes.chain_blocks import FAMILIES, Family
from .skip_timing import has_skip, sensitizable_levels

NOT_ESTIMATED = "the network holds ADD cells (Verilog +), whose structure the synthesis tool chooses"


# Both models read the cell table (ir/cells.py holds each gate's figures and their sources).
UNIT_GATE: dict[str, UnitGate] = {op: c.unit_gate for op, c in CELLS.items() if c.unit_gate is not None}
EFFORT: dict[str, EffortCell] = {op: c.effort for op, c in CELLS.items() if c.effort is not None}


@dataclass(frozen=True)
class EffortModel:
    cells: dict[str, EffortCell] = field(default_factory=lambda: dict(EFFORT))
    output_load: float = 1.0  # unit inverters on every output bit
    fo4: float = 5.0  # tau per FO4 delay


DEFAULT_MODEL = EffortModel()


def has_add(net: Network) -> bool:
    return any(n.op in ("ADD", "PICK") for n in net.nodes)


_outputs = endpoints  # output bits, and register data inputs in a pipelined network


def _name(net: Network, i: int) -> str:
    n = net.nodes[i]
    if n.op == "CONST":
        return f"1'b{n.param}"
    return n.name or f"n{i}"


# -- unit-gate model -----------------------------------------------------------------------------------------
def unit_gate(net: Network) -> dict | None:
    """Unit-gate delay (longest path) and area of the whole network, or None if it holds ADD cells."""
    if has_add(net):
        return None
    a = arrival(net, lambda i, n: UNIT_GATE[n.op].delay)
    area = sum(UNIT_GATE[n.op].area for n in net.nodes if n.op in UNIT_GATE)
    end = a.latest(_outputs(net))
    return {"delay": a.times[end] if end >= 0 else 0, "area": area, "path": _trace(net, a, end)}


def _trace(net: Network, a: Arrival, end: int) -> list[str]:
    return [_name(net, i) for i in a.path(end)]


# -- logical effort ------------------------------------------------------------------------------------------
def loads(net: Network, model: EffortModel = DEFAULT_MODEL) -> list[float]:
    """Capacitance each node drives, in unit-inverter input capacitances (unit-drive normalisation)."""
    load = [0.0] * len(net.nodes)
    for n in net.nodes:
        if n.op in model.cells:
            g = model.cells[n.op].g
            for pin, a in enumerate(n.args):
                load[a] += g[pin]
    for b in _outputs(net):
        load[b] += model.output_load
    return load


_P_SCALE = 1_000_000  # parasitic delays are summed as integers (micro-tau) so that equal sums are equal keys


@dataclass
class _Front:
    """The best incoming paths of one node: for every (stage count N, parasitic P) the largest log F.

    For a fixed N and P the sized delay N·F^(1/N) + P grows with F alone, so keeping the largest F per
    (N, P) is exact. Keys and values are stored relative to the node's offsets (dn, dp, ds), so that a node
    can start from a copy of its longest argument's table and pay Python time only for the others.
    """

    best: dict[tuple[int, int], float]  # (N - dn, P - dp) -> log F - ds
    dn: int = 0
    dp: int = 0
    ds: float = 0.0


@dataclass(frozen=True)
class _Back:
    """How to step back along a path: which argument each (relative) key came from."""

    base: int  # the argument whose table was copied
    override: dict[tuple[int, int], int]  # keys that another argument improved
    dn: int
    dp: int
    p: int


def _merge(timed: list[int], live: dict[int, _Front]) -> tuple[_Front, int, dict[tuple[int, int], int]]:
    """Best paths into a node over all its arguments, before the node's own stage."""
    longest = max(timed, key=lambda a: len(live[a].best))
    base = live[longest]
    out = _Front(dict(base.best), base.dn, base.dp, base.ds)
    override: dict[tuple[int, int], int] = {}
    best = out.best
    for a in timed:
        if a == longest:
            continue
        pa = live[a]
        sn, sp, ss = pa.dn - out.dn, pa.dp - out.dp, pa.ds - out.ds
        for (n, par), f in pa.best.items():
            key = (n + sn, par + sp)
            v = f + ss
            if v > best.get(key, -math.inf):
                best[key] = v
                override[key] = a
    return out, longest, override


def logical_effort(net: Network, model: EffortModel = DEFAULT_MODEL) -> dict | None:
    """Logical-effort delay estimates (see the module docstring), or None if the network holds ADD cells."""
    if has_add(net):
        return None
    nodes = net.nodes
    load = loads(net, model)
    readers_left = net.uses()
    keep = set(_outputs(net))
    live: dict[int, _Front] = {}
    back: dict[int, _Back] = {}
    for i, n in enumerate(nodes):
        if n.op == "CONST":
            continue
        timed = [a for a in n.args if nodes[a].op != "CONST"]
        if starts(n) or not timed:  # an input bit or a register output: a path starts here
            live[i] = _Front({(0, 0): 0.0})
            continue
        cell = model.cells[n.op]
        # Sized: the arguments' best paths, then this stage (N + 1, F * L, P + p).
        front, base, override = _merge(timed, live)
        pk = round(cell.p * _P_SCALE)
        front.dn += 1
        front.dp += pk
        front.ds += math.log(load[i])
        live[i] = front
        back[i] = _Back(base, override, front.dn, front.dp, pk)
        for a in n.args:
            readers_left[a] -= 1
            if readers_left[a] == 0 and a not in keep:
                live.pop(a, None)
    best = (-1.0, -1, 0, 0)  # (D, node, N, P key)
    for b in _outputs(net):
        fb = live.get(b)
        if fb is None:
            continue
        for (n, par), f in fb.best.items():
            stages, pkey = n + fb.dn, par + fb.dp
            d = stages * math.exp((f + fb.ds) / stages) + pkey / _P_SCALE if stages else 0.0
            if d > best[0]:
                best = (d, b, stages, pkey)
    sized, end, stages, pkey = best
    path = []
    i, n_here = end, stages
    while n_here > 0:
        path.append(i)
        bk = back[i]
        rel = (n_here - bk.dn, pkey - bk.dp)
        i = bk.override.get(rel, bk.base)
        n_here -= 1
        pkey -= bk.p
    path.reverse()
    f_log = sum(math.log(load[j]) for j in path)
    p_sum = sum(model.cells[nodes[j].op].p for j in path)
    # Unsized: every gate at unit drive, stage delay L + p.
    unsized = arrival(net, lambda i, n: load[i] + model.cells[n.op].p)
    unsized_end = unsized.latest(_outputs(net))
    unsized_tau = unsized.times[unsized_end] if unsized_end >= 0 else 0.0
    return {
        "sized_tau": round(sized, 3),
        "sized_fo4": round(sized / model.fo4, 3),
        "unsized_tau": round(unsized_tau, 3),
        "unsized_fo4": round(unsized_tau / model.fo4, 3),
        "stages": stages,
        "path_effort_log10": round(f_log / math.log(10), 3),  # F itself overflows a float on long ripples
        "stage_effort": round(math.exp(f_log / stages), 3) if stages else 0.0,
        "parasitic_tau": round(p_sum, 3),
        "path": [{"node": _name(net, j), "op": nodes[j].op, "cell": model.cells[nodes[j].op].realisation,
                  "load": round(load[j], 3), "p": round(model.cells[nodes[j].op].p, 3)} for j in path],
        "unsized_path": _trace(net, unsized, unsized_end),
    }


# -- FPGA: LUT4 packing and carry chains ----------------------------------------------------------------------
LUT_INPUTS = 4
_CUTS_KEPT = 8  # priority cuts a node keeps (Mishchenko et al. 2007 keep a handful; 8 is our choice)


def fpga_delay(net: Network, family: str | Family) -> dict:
    """Estimated delay, ns, of the adder alone (no registers) on an FPGA family, and the LUT levels on the
    slowest path; see the module docstring."""
    fam = FAMILIES[family] if isinstance(family, str) else family
    nodes = net.nodes
    arr = [0.0] * len(nodes)
    luts = [0] * len(nodes)  # LUT levels on the path to the node's output
    cuts: list[list[frozenset]] = [[] for _ in nodes]
    bits: dict[int, list[tuple[float, int]]] = {}  # ADD node -> (arrival, LUT levels) of bits 0..k
    for i, n in enumerate(nodes):
        if starts(n) or n.op == "CONST":  # an input bit or a register output is a LUT input
            cuts[i] = [frozenset()] if n.op == "CONST" else [frozenset((i,))]
            continue
        if n.op == "ADD":
            k = add_width(len(n.args))
            out, best, lv = [], -math.inf, 0
            for j in range(k + 1):
                if j < k:
                    for a in (n.args[j], n.args[k + j]):
                        t = arr[a] + (fam.entry if luts[a] else 0.0)
                        if nodes[a].op != "CONST" and t - j * fam.bit > best:
                            best, lv = t - j * fam.bit, luts[a]
                if j == 0 and nodes[n.args[2 * k]].op != "CONST":
                    c = n.args[2 * k]
                    t = arr[c] + (fam.entry if luts[c] else 0.0)
                    if t > best:
                        best, lv = t, luts[c]
                out.append((max(best, 0.0) + j * fam.bit + fam.entry, lv))
            bits[i] = out
            cuts[i] = [frozenset()]
            continue
        if n.op == "PICK":
            arr[i], luts[i] = bits[n.args[0]][n.param]
            cuts[i] = [frozenset((i,))]
            continue
        # A gate: combine the arguments' cuts (each argument may also be a leaf itself).
        options = [cuts[a] + ([frozenset((a,))] if nodes[a].op != "CONST" and frozenset((a,)) not in cuts[a] else [])
                   for a in n.args]
        found: dict[frozenset, tuple[float, int]] = {}
        for combo in _products(options):
            leaves = frozenset().union(*combo)
            if len(leaves) > LUT_INPUTS or leaves in found:
                continue
            t = max((arr[x] for x in leaves), default=0.0)
            lv = max((luts[x] for x in leaves), default=0)
            found[leaves] = (t, lv)
        ranked = sorted(found.items(), key=lambda kv: (kv[1][0], len(kv[0]), sorted(kv[0])))
        (leaves0, (t0, lv0)) = ranked[0]
        arr[i], luts[i] = t0 + fam.lut, lv0 + 1
        cuts[i] = [c for c, _ in ranked[:_CUTS_KEPT]]
    outs = _outputs(net)
    end = max(outs, key=lambda b: arr[b])
    return {"ns": round(arr[end], 3), "lut_levels": luts[end], "family": fam.name, "end": _name(net, end)}


def _products(options):
    out = [()]
    for opts in options:
        out = [o + (c,) for o in out for c in opts]
    return out


# -- the report block ----------------------------------------------------------------------------------------
def estimates(net: Network, model: EffortModel = DEFAULT_MODEL) -> dict:
    """The ``estimates`` block of a report: unit-gate delay and area, logical-effort delay (tau and FO4)."""
    ug = unit_gate(net)
    le = logical_effort(net, model)
    if ug is None or le is None:
        return {"unit_gate_delay": None, "unit_gate_delay_skip_aware": None, "unit_gate_area": None,
                "le_tau": None, "le_fo4": None,
                "le_unsized_tau": None, "note": NOT_ESTIMATED,
                "fpga_ns": {name: fpga_delay(net, name)["ns"] for name in sorted(FAMILIES)},
                "fpga_note": "carry chains and LUT4 levels (analysis/delay.py fpga_delay, docs/fpga.md); "
                             "the adder alone, no registers; not sign-off timing"}
    note = ("estimates from the gate graph (unit-gate model; logical effort, each path sized on its own, "
            f"output load {model.output_load:g} unit inverter(s), 1 FO4 = {model.fo4:g} tau); not sign-off timing")
    skip_aware = None
    if has_skip(net):
        note += ("; unit_gate_delay and the logical-effort figures are topological: the ripple paths through each "
                 "skip multiplexer are counted although they are false; unit_gate_delay_skip_aware is not")
        skip_aware = sensitizable_levels(net, lambda op, _nargs: UNIT_GATE[op].delay)
    return {
        "unit_gate_delay": ug["delay"],
        "unit_gate_delay_skip_aware": skip_aware,
        "unit_gate_area": ug["area"],
        "le_tau": le["sized_tau"],
        "le_fo4": le["sized_fo4"],
        "le_unsized_tau": le["unsized_tau"],
        "le_stages": le["stages"],
        "le_stage_effort": le["stage_effort"],
        "unit_gate_path": ug["path"],
        "le_path": [s["node"] for s in le["path"]],
        "note": note,
    }
