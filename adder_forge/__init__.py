"""adder_forge: binary adders from a short YAML spec, with the evidence that they add.

The public API, in the order of the job (every name here is documented in the README's "From Python"):

    spec = load_spec("specs/alu_ks32.yaml")      # or make_spec(name, width, scheme, **keys)
    net = elaborate(spec)                          # the frozen gate-level IR
    d = emit_design(spec)                          # Verilog, testbench, vectors, summary (in memory)
    write_folders("out", [output_folder(d)])       # onto disk, keeping what the tool did not write
    check(net, builtin_plan(spec, 4096, seed=1))   # the built-in check against integer addition
    prove(net, d.verilog)                          # Yosys proof against Verilog's own `+`
    verify([d], ["icarus"], formal=True, random_count=4096, seed=1)
    measure([spec], ["generic"], "out")            # estimates and synthesis figures beside `+`

Everything else lives in layer folders (base, spec, ir, schemes, analysis, emit, checks, synth) that are
free to change; import from here. (The names never shadow a layer folder: ``adder_forge.emit`` and
``adder_forge.schemes`` stay the subpackages.)
"""

from .base.version import __version__
from .base.errors import AdderForgeError, NetworkError, OutputConflict, OutputError, SpecError, ToolError, UsageError
from .spec.loader import Spec, load_spec, make_spec, parse_spec
from .spec.registry import schemes as registered_schemes
from .ir.network import Network, dump
from .schemes import elaborate
from .analysis.structure import metrics
from .analysis.delay import estimates
from .emit.design import Design, design as emit_design
from .emit.outputs import write_folders
from .checks.builtin import check
from .checks.formal import prove
from .checks.verify import builtin_plan, verify
from .synth.measure import measure_specs as measure, output_folder

__all__ = [
    "__version__",
    # errors, each with its exit status
    "AdderForgeError", "SpecError", "UsageError", "ToolError", "OutputError", "OutputConflict", "NetworkError",
    # spec
    "Spec", "load_spec", "parse_spec", "make_spec", "registered_schemes",
    # IR
    "Network", "elaborate", "dump",
    # figures read off the IR
    "metrics", "estimates",
    # back ends
    "Design", "emit_design", "write_folders", "output_folder",
    # checks
    "check", "builtin_plan", "prove", "verify",
    # measurement
    "measure",
]
