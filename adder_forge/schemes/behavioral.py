"""The baseline every user already has: one ``+``, left to the synthesis tool."""

from ..spec.registry import scheme
from .common import finish, start


@scheme("behavioral", doc="plain a + b + cin, the synthesis tool's own adder (the baseline)")
def behavioral(spec):
    f = start(spec)
    bits = f.build.ADD(f.a, f.b, f.cin, "add", "add")
    return finish(f, bits[: f.width], bits[f.width])
