"""adder_forge: binary adders from a short YAML spec, with the evidence that they add."""

__version__ = "0.1.0"
