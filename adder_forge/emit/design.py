"""From a validated spec to the files of its output folder, in memory."""

from __future__ import annotations

from dataclasses import dataclass

from ..ir.network import Network
from ..analysis.structure import metrics
from ..schemes import elaborate
from .summary import header_lines, design_summary, to_json
from ..spec.loader import Spec
from .testbench import Testbench, clocking_summary, emit_testbench, line_bits, line_bytes
from .verilog import KEEP_ROLES, emit_module
from .vectors import plan_for

TB_EXHAUSTIVE_LIMIT = 1 << 20  # the emitted testbench enumerates every input up to this many vectors
TB_RANDOM = 2000  # random vectors beside the directed ones when it does not
# The vectors file stays under this many bytes: a plan that would pass it is sampled (testbench.Sample).
# 16 MiB holds every default plan up to 2414 bits, and 1365 vectors of a 16384-bit adder (a whole
# plan there would be 629 MB). Exhaustive files stay below it: 2^20 lines of 9 bytes are 9 MiB.
TB_MAX_BYTES = 16 << 20


@dataclass(frozen=True)
class Design:
    spec: Spec
    net: Network
    metrics: dict
    verilog: str
    testbench: Testbench
    plan: str  # how the testbench's vectors were chosen
    hdl: tuple[str, ...] = ("verilog",)  # the forms files() writes: verilog, vhdl

    def files(self) -> dict[str, str]:
        n = self.spec.name
        out = {f"{n}.v": self.verilog, f"{n}_tb.v": self.testbench.verilog} if "verilog" in self.hdl else {}
        if "verilog" in self.hdl:  # for the user's build: what to compile, and how to instantiate it
            from ..base.version import __version__
            from .build_files import file_list, instantiation

            out[f"{n}.f"] = file_list([f"{n}.v"])
            out[f"{n}_inst.v"] = instantiation(self.net, __version__)
        if "vhdl" in self.hdl:
            from .vhdl import vhdl_files

            out.update(vhdl_files(self))
        out[f"{n}_vectors.hex"] = self.testbench.vectors_hex
        out[f"{n}.json"] = to_json(self.summary())
        return out

    def summary(self, extra: dict | None = None) -> dict:
        iface = self.net.iface
        tb = {"ports": [{"name": p.name, "direction": p.direction, "width": p.width} for p in iface.pins],
              "latency": iface.latency, "claim": iface.claim(),
              "testbench": {"vectors": self.testbench.count, "plan": self.plan}}
        tb.update(extra or {})
        return design_summary(self.spec, self.metrics, tb, self.net.meta)


def design(spec: Spec, net: Network | None = None, tb_random: int = TB_RANDOM, seed: int = 1,
           tb_exhaustive_limit: int = TB_EXHAUSTIVE_LIMIT, tb_max_bytes: int = TB_MAX_BYTES) -> Design:
    """Elaborate (unless a network is given, e.g. a deliberately broken one) and emit everything."""
    net = net if net is not None else elaborate(spec)
    m = metrics(net)
    # exhaustive only when the whole enumeration fits the file cap; a sampled enumeration would be neither
    iface = net.iface
    limit = min(tb_exhaustive_limit, tb_max_bytes // line_bytes(line_bits(iface)))
    plan = plan_for(iface, limit, tb_random, seed)
    tb = emit_testbench(spec.name, iface, plan, tb_max_bytes)
    header = header_lines(spec, m, net.meta)
    if spec.form == "parameterized":
        from .param_verilog import emit_param

        verilog = emit_param(spec, header)
    else:  # flat, or kept: the same module with (* keep *) on the structure's nets
        verilog = emit_module(net, header, keep=KEEP_ROLES if spec.form == "kept" else frozenset())
    clocked = clocking_summary(iface)  # the simulators' rows say how a pipelined adder was driven
    return Design(spec, net, m, verilog, tb, plan.describe() + tb.pick.summary() + (f"; {clocked}" if clocked else ""))
