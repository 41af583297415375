"""Pipelining: K ranks of registers cut into a combinational adder network, logic levels balanced.

Where the ranks go (README, "Pipelined adders"): rank k closes stage k, and the last rank, K, sits at the
outputs, so every output comes straight from a register and a result leaves K clock edges after its
operands were applied. The operands go straight into stage 1's logic (no rank at the inputs; a datapath
that needs one registers upstream). Latency is exactly K cycles and a new operand pair can be applied at
every edge.

How stages are cut: the levels L of the combinational network (2-input gate levels, the netlist figure;
``cells.cell_levels``) are shared out as evenly as possible, the first stages taking the remainder (13 over 3
gives budgets 5, 4, 4). Cells are placed in topological order, each as early as it can go: into the latest
stage of its arguments unless that would take the stage past its budget, then into the next. A cell is
never split (an AO21 is 2 levels), so a stage may end short of its budget and later ones run over; a second
placement with one uniform budget (the smallest that fits K stages) is tried too, and the placement with
the shorter longest stage (the clock period) is kept, ties going to the even budgets. The ADD macro (a `+`)
goes into one stage whole.

Every signal that crosses a cut is registered at every rank it crosses: a value made in stage s and read in
stage t > s passes through ranks s .. t-1 (so the propagate bits a sum XOR still needs travel with the
carries, and never both operand bits), and every output bit passes through the ranks up to K. Constants
are never registered. The register cell is ``DFF`` (cells.py), param = its rank; how the ranks are clocked
(enable, reset) is the interface's, so every register of a network shares one clock edge, one enable and one
reset.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from ..spec.pipeline import Pipeline
from .arrival import arrival, output_bits
from .cells import CELLS, cell_levels, register_fields, register_param
from .network import Network, Node, Port

REGISTER = "DFF"
ROLE = "pipe"
CLOCK, ENABLE, RESET = "clk", "en", "rst"


@dataclass(frozen=True)
class StagePlan:
    stages: int
    levels: tuple[int, ...]  # longest logic path of each stage, 2-input gate levels
    registers: tuple[int, ...]  # register bits in each rank
    combinational_levels: int  # the levels of the network before pipelining

    def levels_text(self) -> str:
        return "/".join(str(v) for v in self.levels)


def _levels(i: int, n: Node) -> int:
    return cell_levels(n.op, len(n.args))


def _place(net: Network, budgets: list[int]) -> tuple[list[int | None], int]:
    """Stage (1..K) of every node, None for constants; and the number of stages the placement wanted."""
    k = len(budgets)
    stage: list[int | None] = [None] * len(net.nodes)
    local = [0] * len(net.nodes)
    wanted = 1
    for i, n in enumerate(net.nodes):
        if n.op == "INPUT":
            stage[i] = 1
            continue
        if n.op == "CONST":
            continue
        known = [stage[a] for a in n.args if stage[a] is not None]
        s = max(known, default=1)
        before = max((local[a] for a in n.args if stage[a] == s), default=0)
        lv = _levels(i, n)
        here = before + lv
        if lv and before and here > budgets[min(s, k) - 1]:
            s, here = s + 1, lv
        wanted = max(wanted, s)
        if s > k:  # more stages than there are: this placement is rejected, but stays well-formed
            s, here = k, before + lv
        stage[i], local[i] = s, here
    return stage, wanted


def _even(total: int, k: int) -> list[int]:
    base, extra = divmod(total, k)
    return [base + (1 if j < extra else 0) for j in range(k)]


def plan_stages(net: Network, k: int) -> list[int | None]:
    """The stage of every node for K stages (see the module docstring)."""
    total = _total_levels(net)
    candidates = []
    stage, wanted = _place(net, _even(total, k))
    if wanted <= k:
        candidates.append(stage)
    t = -(-total // k) if total else 0
    while True:
        stage_u, wanted_u = _place(net, [t] * k)
        if wanted_u <= k or t >= total:
            candidates.append(stage_u)
            break
        t += 1
    return min(candidates, key=lambda s: max(_stage_levels(net, s, k)))


def _total_levels(net: Network) -> int:
    a = arrival(net, _levels)
    end = a.latest(output_bits(net))
    return a.times[end] if end >= 0 else 0


def _stage_levels(net: Network, stage: list[int | None], k: int) -> list[int]:
    """The longest path inside each stage when every cut is registered."""
    t = [0] * len(net.nodes)
    worst = [0] * k
    for i, n in enumerate(net.nodes):
        if stage[i] is None or not n.args:
            continue
        s = stage[i]
        t[i] = max((t[a] for a in n.args if stage[a] == s), default=0) + _levels(i, n)
        worst[s - 1] = max(worst[s - 1], t[i])
    return worst


def insert_registers(net: Network, k: int, cfg: Pipeline | None = None) -> tuple[Network, StagePlan]:
    """The network with K register ranks clocked as ``cfg`` says (no control ports yet: ``pipeline`` adds
    them)."""
    cfg = cfg or Pipeline(k)
    if k < 1:
        raise ValueError("insert_registers needs at least one stage")
    stage = plan_stages(net, k)
    nodes = net.nodes
    need = [0] * len(nodes)  # the last stage that reads each node; K + 1 for an output bit
    for i, n in enumerate(nodes):
        for a in n.args:
            need[a] = max(need[a], stage[i] or 0)
    for b in output_bits(net):
        need[b] = k + 1
    names = {n.name for n in nodes if n.name} | {p.name for p in net.inputs + net.outputs}
    out: list[Node] = []
    new_of: list[int] = [0] * len(nodes)
    chain: dict[int, list[int]] = {}  # node -> new index of its register at rank r (index r - stage)
    counts = [0] * k

    def read(a: int, at: int) -> int:
        """The new index that a reader in stage ``at`` (K + 1: an output) takes node ``a`` from."""
        if stage[a] is None or at <= stage[a]:
            return new_of[a]
        return chain[a][at - 1 - stage[a]]

    for i, n in enumerate(nodes):
        args = tuple(read(a, stage[i]) for a in n.args) if n.args else ()
        new_of[i] = len(out)
        out.append(replace(n, args=args))
        if stage[i] is None or n.op == "ADD" or need[i] <= stage[i]:
            continue
        base = _base_name(n, i)
        regs = []
        prev = new_of[i]
        for rank in range(stage[i], need[i]):
            name = _unique(f"{base}_r{rank}", names)
            out.append(Node(REGISTER, (prev,), name, ROLE, register_param(rank, cfg.enable, cfg.reset,
                                                                        cfg.reset_level)))
            prev = len(out) - 1
            regs.append(prev)
            counts[rank - 1] += 1
        chain[i] = regs
    outputs = tuple(Port(p.name, tuple(read(b, k + 1) for b in p.bits), p.scalar) for p in net.outputs)
    inputs = tuple(Port(p.name, tuple(new_of[b] for b in p.bits), p.scalar) for p in net.inputs)
    piped = replace(net, nodes=tuple(out), inputs=inputs, outputs=outputs)
    plan = StagePlan(k, tuple(_stage_levels(net, stage, k)), tuple(counts), _total_levels(net))
    return piped, plan


def _base_name(n: Node, i: int) -> str:
    if n.op == "INPUT":
        return n.name.replace("[", "").replace("]", "")
    return n.name or f"n{i}"


def _unique(name: str, taken: set[str]) -> str:
    cand, k = name, 2
    while cand in taken:
        cand, k = f"{name}_{k}", k + 1
    taken.add(cand)
    return cand


def control_ports(cfg: Pipeline) -> list[str]:
    """The control inputs a pipelined module declares, in port order: clk, then rst and en as asked."""
    if not cfg.clocked:
        return []
    return [CLOCK] + ([RESET] if cfg.reset != "none" else []) + ([ENABLE] if cfg.enable else [])


def pipeline(net: Network, cfg: Pipeline) -> tuple[Network, StagePlan | None]:
    """The pipelined network a spec's ``pipeline`` asks for (the network itself when it asks for none):
    register ranks, the control ports ahead of the data ports, the stage facts in ``meta``."""
    if not cfg.clocked:
        return net, None
    piped, plan = insert_registers(net, cfg.stages, cfg)
    nodes = list(piped.nodes)
    ports = []
    for name in control_ports(cfg):
        nodes.append(Node("INPUT", (), name, "control", 0))
        ports.append(Port(name, (len(nodes) - 1,), True))
    meta = piped.meta + (("pipeline", cfg.describe()), ("stage_levels", plan.levels_text()),
                         ("registers", str(sum(plan.registers))))
    piped = replace(piped, nodes=tuple(nodes), inputs=tuple(ports) + piped.inputs, meta=meta)
    return _with_interface(piped, cfg), plan


def _with_interface(net: Network, cfg: Pipeline) -> Network:
    iface = getattr(net, "interface", None)
    if iface is None:
        return net
    return replace(net, interface=iface.clocked(cfg))


def registers(net: Network) -> list[int]:
    return [i for i, n in enumerate(net.nodes) if CELLS[n.op].kind == "register"]


def clocking(net: Network) -> Pipeline:
    """How a network's registers are clocked, read off the register cells (all alike; COMBINATIONAL when
    there are none). ValueError if two registers are clocked differently."""
    fields = {register_fields(net.nodes[i].param) for i in registers(net)}
    if not fields:
        return Pipeline()
    kinds = {(f.enable, f.reset, f.reset_level) for f in fields}
    if len(kinds) != 1:
        raise ValueError(f"network {net.name}: registers clocked in {len(kinds)} different ways")
    enable, reset, level = kinds.pop()
    return Pipeline(max(f.rank for f in fields), enable, reset, level)


def stage_levels(net: Network) -> list[int]:
    """The longest logic path (2-input gate levels) into each rank of a pipelined network, read off the
    network itself: rank k's data inputs, timed from the previous rank (or the inputs)."""
    regs = registers(net)
    if not regs:
        return []
    a = arrival(net, _levels)
    worst = [0] * max(register_fields(net.nodes[i].param).rank for i in regs)
    for i in regs:
        r = register_fields(net.nodes[i].param).rank
        worst[r - 1] = max(worst[r - 1], a.times[net.nodes[i].args[0]] or 0)
    return worst


def register_depths(net: Network) -> list[int | None]:
    """How many registers lie on the paths into each node (None: a constant). Raises ValueError where two
    paths into one cell cross different numbers of registers (a pipeline that mixes cycles), or where a
    register's rank is not its depth."""
    depth: list[int | None] = [None] * len(net.nodes)
    for i, n in enumerate(net.nodes):
        if n.op == "INPUT":
            depth[i] = 0
            continue
        seen = {depth[a] for a in n.args if depth[a] is not None}
        if len(seen) > 1:
            raise ValueError(f"{net.name}: node {n.name or i} reads values of different cycles {sorted(seen)}")
        d = seen.pop() if seen else None
        if CELLS[n.op].kind == "register":
            d = (d or 0) + 1
            if register_fields(n.param).rank != d:
                raise ValueError(f"{net.name}: register {n.name} has rank {register_fields(n.param).rank} but "
                                 f"sits behind {d} registers")
        depth[i] = d
    return depth


def latency_of(net: Network) -> int:
    """The registers on every input-to-output path, the same on all of them (ValueError if not)."""
    depth = register_depths(net)
    seen = {depth[b] for b in output_bits(net) if depth[b] is not None}
    if len(seen) > 1:
        raise ValueError(f"{net.name}: outputs come out after different numbers of cycles {sorted(seen)}")
    return seen.pop() if seen else 0
