"""adder_forge: binary adders from a short YAML spec, with the evidence that they add."""

from .base.version import __version__
