"""The interface record: roles, the reference against Python's own integers, the JSON form, and that every
scheme's network carries the record its spec asks for.

References: integer addition and two's complement as defined in common practice (a w-bit word x stands for
x - 2^w when its top bit is set; a signed sum overflows when it lies outside [-2^(w-1), 2^(w-1) - 1]);
subtraction as a + ~b + 1 with the carry out meaning "no borrow" is the common-practice ALU convention.
"""

from __future__ import annotations

import itertools
import random
import re
from pathlib import Path

import pytest

import adder_forge
from adder_forge.ir.interface import OPERATIONS, Interface, Pin, adder, of_spec
from adder_forge.ir.network import check_well_formed, dump
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec
from adder_forge.spec.registry import SCHEMES


def signed(x: int, w: int) -> int:
    return x - (1 << w) if x >> (w - 1) & 1 else x


def by_hand(w: int, op: str, a: int, b: int, cin: int | None, sub: int) -> tuple[int, int, int]:
    """(sum, cout, overflow) with Python's + and - on unbounded integers, written without the record."""
    m = (1 << w) - 1
    subtracting = op == "subtract" or (op == "add-subtract" and sub)
    if subtracting:
        borrow_in = 0 if cin is None else 1 - cin  # cin is the not-borrow
        diff = a - b - borrow_in
        s, cout = diff & m, int(diff >= 0)
        exact = signed(a, w) - signed(b, w) - borrow_in
    else:
        c = cin or 0
        s, cout = (a + b + c) & m, (a + b + c) >> w
        exact = signed(a, w) + signed(b, w) + c
    return s, cout, int(not -(1 << (w - 1)) <= exact < (1 << (w - 1)))


@pytest.mark.parametrize("op", OPERATIONS)
@pytest.mark.parametrize("w", [1, 2, 3, 4])
def test_reference_is_integer_arithmetic_exhaustively(op, w):
    for ci in (True, False):
        iface = adder(w, ci, True, op, True)
        subs = (0, 1) if op == "add-subtract" else (0,)
        for a, b, c, s in itertools.product(range(1 << w), range(1 << w), (0, 1) if ci else (None,), subs):
            values = {"a": a, "b": b, "sub": s, "cin": c if c is not None else 0}
            got = iface.reference(values)
            want = by_hand(w, op, a, b, c, s)
            assert (got["sum"], got["cout"], got["overflow"]) == want, (values, ci)


@pytest.mark.parametrize("op", OPERATIONS)
def test_reference_at_64_bits_against_python(op):
    rng = random.Random(5)
    w, m = 64, (1 << 64) - 1
    iface = adder(w, True, True, op, True)
    corners = [(m, m), (m, 0), (0, m), (1 << 63, 1 << 63), (m >> 1, m >> 1), (1 << 63, 1), (0, 0)]
    cases = corners + [(rng.getrandbits(w), rng.getrandbits(w)) for _ in range(500)]
    for (a, b), c, s in itertools.product(cases, (0, 1), (0, 1) if op == "add-subtract" else (0,)):
        got = iface.reference({"a": a, "b": b, "cin": c, "sub": s})
        assert (got["sum"], got["cout"], got["overflow"]) == by_hand(w, op, a, b, c, s)


def test_roles_and_order():
    iface = adder(8, True, True, "add-subtract", True)
    assert [p.role for p in iface.inputs] == ["a", "b", "cin", "sub"]
    assert [p.role for p in iface.outputs] == ["sum", "cout", "overflow"]
    assert iface.in_bits == 18 and iface.out_bits == 10
    assert iface.latency == 0
    bare = adder(5, False, False)
    assert [p.role for p in bare.pins] == ["a", "b", "sum"]
    assert bare.claim() == "sum = (a + b) mod 2^5"
    assert adder(5).claim() == "{cout, sum} = a + b + cin"
    assert adder(5, False, True, "subtract").claim() == "{cout, sum} = a + ~b + 1"
    assert "overflow" in adder(5, overflow=True).claim()
    # packing: sum low, then cout, then overflow; inputs a low, then b, cin, sub
    assert iface.pack_outputs({"sum": 0x12, "cout": 1, "overflow": 1}) == 0x12 | 1 << 8 | 1 << 9
    assert iface.unpack_outputs(0x12 | 1 << 9) == {"sum": 0x12, "cout": 0, "overflow": 1}
    assert iface.pack_inputs({"a": 1, "b": 2, "cin": 1, "sub": 1}) == 1 | 2 << 8 | 1 << 16 | 1 << 17


def test_json_round_trip_and_bad_records():
    for op, ci, co, ov in itertools.product(OPERATIONS, (True, False), (True, False), (True, False)):
        iface = adder(13, ci, co, op, ov)
        assert Interface.from_json(iface.to_json()) == iface
    with pytest.raises(ValueError):
        Interface(4, "multiply", adder(4).pins).validate()
    with pytest.raises(ValueError):  # a sub port on a plain adder
        Interface(4, "add", adder(4).pins + (Pin("sub", "in", 1, True),)).validate()
    with pytest.raises(ValueError):  # a sum of the wrong width
        Interface(4, "add", (Pin("a", "in", 4), Pin("b", "in", 4), Pin("sum", "out", 3))).validate()


@pytest.mark.parametrize("scheme", sorted(SCHEMES))
def test_every_scheme_carries_the_interface_of_its_spec(scheme):
    for ci, co in itertools.product((True, False), repeat=2):
        spec = make_spec(f"if_{scheme.replace('-', '_')}", 6, scheme, carry_in=ci, carry_out=co)
        net = elaborate(spec)
        assert net.interface == of_spec(spec)
        check_well_formed(net)  # ports as the record declares them, in its order
        assert dump(net).splitlines()[1] == "interface " + net.interface.describe()


def test_network_width_is_the_interface_s():
    net = elaborate(make_spec("w9", 9, "ripple"))
    assert not hasattr(net, "width")  # no silent "width of port a"
    assert net.iface.width == 9


def test_reference_lives_in_one_place():
    """The operation's arithmetic is written once, in ir/interface.py: no other module of the package
    computes a + b + cin (docstrings and comments aside)."""
    pkg = Path(adder_forge.__file__).parent
    pattern = re.compile(r"\ba\s*\+\s*b\s*\+\s*(cin|c)\b|\bx\s*\+\s*y\s*\+\s*c\b|\ba\s*\+\s*y\s*\+\s*c\b")
    found = []
    for path in sorted(pkg.rglob("*.py")):
        text = path.read_text(encoding="utf-8")
        code = re.sub(r'("""|\'\'\')(.*?)\1', "", text, flags=re.S)  # docstrings
        code = re.sub(r'"(?:\\.|[^"\\\n])*"', '""', code)  # string literals (claims, help texts)
        code = re.sub(r"#[^\n]*", "", code)
        for line in code.splitlines():
            if pattern.search(line):
                found.append((path.relative_to(pkg).as_posix(), line.strip()))
    assert {f for f, _ in found} == {"ir/interface.py"}, found  # the Python form and its numpy twin
