"""Carry schemes, one module each; importing this package registers every one of them in
``spec.registry.SCHEMES`` (the package's ``__init__`` imports it, so the registry is full whenever
adder_forge is imported)."""

from ..spec.registry import SCHEMES
from . import (behavioral, block_lookahead, carry_select, carry_skip, conditional_sum,  # noqa: F401
               lookahead, prefix, ripple, chain_prefix, chain_select)


def elaborate(spec):
    """Build the gate-level network of a validated spec with the scheme it names."""
    return SCHEMES[spec.scheme].build(spec)
