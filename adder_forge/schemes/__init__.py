"""Carry schemes, one module each; importing this package registers every one of them in
``spec.registry.SCHEMES`` (the package's ``__init__`` imports it, so the registry is full whenever
adder_forge is imported)."""

from ..ir.pipeline import pipeline
from ..spec.registry import SCHEMES
from . import (behavioral, block_lookahead, carry_select, carry_skip, conditional_sum,  # noqa: F401
               lookahead, prefix, ripple, chain_prefix, chain_select)


def elaborate(spec):
    """Build the gate-level network of a validated spec with the scheme it names, with the register ranks
    its ``pipeline`` key asks for (ir/pipeline.py)."""
    return pipeline(SCHEMES[spec.scheme].build(spec), spec.pipeline)[0]
