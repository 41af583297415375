"""The ``block`` key, its resolution against the width, and the automatic sizing rules.

Carry-skip check values: the textbook unit-delay model D(k) = 2(k - 1) + (n/k - 2), optimum near
k = sqrt(n/2), n = 32 -> k = 4, D = 12; n = 64 -> D = 20 (Parhami, "Computer Arithmetic"; Koren,
"Computer Arithmetic Algorithms"; from memory, the algebra re-checked below).
"""

import itertools

import pytest

from adder_forge.schemes.blocksizes import resolve, select_auto, select_carry_levels, skip_auto, skip_delay
from adder_forge.base.errors import SpecError
from adder_forge.analysis.structure import arrival_levels
from adder_forge.schemes import elaborate
from adder_forge.spec.loader import make_spec, parse_spec

BLOCK_SCHEMES = ("carry-skip", "carry-select", "conditional-sum", "block-lookahead")


def compositions(n):
    """Every list of positive sizes adding up to n."""
    for cuts in itertools.product((False, True), repeat=n - 1):
        out, k = [], 1
        for cut in cuts:
            if cut:
                out.append(k)
                k = 1
            else:
                k += 1
        yield out + [k]


# -- resolution -------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("k,width,sizes", [
    (4, 16, (4, 4, 4, 4)),
    (5, 16, (5, 5, 5, 1)),  # the remainder is the most significant block
    (3, 7, (3, 3, 1)),
    (1, 3, (1, 1, 1)),
    (8, 5, (5,)),  # a block wider than the adder is the whole adder
    (1, 1, (1,)),
    ((2, 3, 2), 7, (2, 3, 2)),
])
def test_resolve(k, width, sizes):
    assert resolve(k, width) == sizes


def test_textbook_uniform_values():
    # D(k) = 2(k - 1) + (n/k - 2) for k dividing n
    for n in (16, 32, 64, 128):
        for k in (1, 2, 4, 8, 16):
            if k < n and n % k == 0:
                assert skip_delay(resolve(k, n)) == 2 * (k - 1) + (n // k - 2)
    best32 = min((skip_delay(resolve(k, 32)), k) for k in (1, 2, 4, 8, 16))
    assert best32 == (12, 4)
    assert min(skip_delay(resolve(k, 64)) for k in (1, 2, 4, 8, 16, 32)) == 20


@pytest.mark.parametrize("n", [32, 64])
def test_auto_skip_no_worse_than_any_uniform_size(n):
    """The issue's check: automatic sizing vs the best uniform block, dividing or not."""
    auto = skip_delay(skip_auto(n))
    uniform = min(skip_delay(resolve(k, n)) for k in range(1, n + 1))
    assert auto <= uniform
    assert auto <= {32: 12, 64: 20}[n]
    # the figures reported in docs/block_tradeoffs.md
    assert (auto, uniform) == {32: (9, 12), 64: (13, 18)}[n]


@pytest.mark.parametrize("n", range(1, 15))
def test_auto_skip_is_optimal_against_every_composition(n):
    """Exhaustive: no list of block sizes has a smaller unit delay, nor as small with fewer blocks."""
    best = min((skip_delay(c), len(c)) for c in compositions(n))
    auto = skip_auto(n)
    assert sum(auto) == n and (skip_delay(auto), len(auto)) == best


def test_skip_delay_model_by_brute_force():
    """skip_delay against the path enumeration it describes, on every composition of 9 bits."""
    for c in compositions(9):
        paths = [k - 1 for k in c]
        paths += [(c[i] - 1) + (j - i - 1) + (c[j] - 1) for i in range(len(c)) for j in range(i + 1, len(c))]
        assert skip_delay(c) == max(paths)


def test_auto_skip_sizes_grow_then_shrink():
    """Oklobdzija and Barnes 1985: variable skip blocks are small at both ends and large in the middle."""
    for n in (16, 32, 64, 128, 1000):
        s = skip_auto(n)
        top = s.index(max(s))
        assert list(s[: top + 1]) == sorted(s[: top + 1])
        assert list(s[top:]) == sorted(s[top:], reverse=True)


def test_select_model_matches_the_ir():
    """select_carry_levels predicts the carry-out level the carry-select IR really has."""
    for sizes in [(1,), (4,), (1, 1), (3, 3, 2), (2, 3, 4, 5), (5, 1, 7), (1, 2, 3, 4, 5, 6), (8, 8, 8, 8)]:
        net = elaborate(make_spec("cs", sum(sizes), "carry-select", block=list(sizes)))
        assert arrival_levels(net)[net.port("cout").bits[0]] == select_carry_levels(sizes)


@pytest.mark.parametrize("n", [7, 16, 32, 33, 64, 128])
def test_auto_select_increases_and_beats_uniform(n):
    s = select_auto(n)
    assert sum(s) == n
    body = s[:-1]  # the top block takes what is left
    assert all(y == x + 1 for x, y in zip(body, body[1:]))
    assert select_carry_levels(s) <= min(select_carry_levels(resolve(k, n)) for k in range(1, n + 1))


# -- errors -----------------------------------------------------------------------------------------------------
def _err(text):
    with pytest.raises(SpecError) as e:
        parse_spec(text, "blk.yaml")
    return str(e.value)


@pytest.mark.parametrize("value,message", [
    ("0", "blk.yaml:4:8: error: 'block' must be at least 1 bit, got 0"),
    ("-3", "blk.yaml:4:8: error: 'block' must be at least 1 bit, got -3"),
    ("2.5", "blk.yaml:4:8: error: 'block' must be an integer, a list of integers or 'auto', got number 2.5"),
    ("true", "blk.yaml:4:8: error: 'block' must be an integer, a list of integers or 'auto', got boolean true"),
    ("aut", "blk.yaml:4:8: error: 'block' must be an integer, a list of integers or 'auto', got string 'aut' "
            "(did you mean 'auto'?)"),
    ("[]", "blk.yaml:4:8: error: 'block' list is empty: give at least one block size"),
    ("[4, two, 6]", "blk.yaml:4:8: error: 'block' entry 1 must be an integer number of bits, got string 'two'"),
    ("[4, 0, 6]", "blk.yaml:4:8: error: 'block' entry 1 must be at least 1 bit, got 0"),
    ("[4, 4]", "blk.yaml:4:8: error: 'block' sizes [4, 4] add up to 8 bits but 'width' is 10"),
    ("[12]", "blk.yaml:4:8: error: 'block' sizes [12] add up to 12 bits but 'width' is 10"),
])
def test_bad_block_values(value, message):
    assert _err(f"name: x\nwidth: 10\nscheme: carry-skip\nblock: {value}\n") == message


def test_auto_only_where_there_is_a_rule():
    for s in ("conditional-sum", "block-lookahead"):
        assert _err(f"name: x\nwidth: 10\nscheme: {s}\nblock: auto\n") == (
            f"blk.yaml:4:8: error: 'block' has no automatic sizing for scheme '{s}': give an integer or a list "
            "of integers")


def test_keys_of_other_schemes():
    msg = _err("name: x\nwidth: 10\nscheme: carry-select\nling: true\n")
    assert msg.startswith("blk.yaml:4:1: error: key 'ling' does not apply to scheme 'carry-select' (it is for: ")
    assert {"block-lookahead", "lookahead"} <= set(msg.split("(it is for: ")[1].rstrip(")").split(", "))
    assert _err("name: x\nwidth: 10\nscheme: block-lookahead\ngroup: 1\n") == (
        "blk.yaml:4:8: error: 'group' must be between 2 and 8, got 1")


@pytest.mark.parametrize("scheme", BLOCK_SCHEMES)
def test_every_block_scheme_accepts_lists_and_wide_blocks(scheme):
    assert make_spec("x", 10, scheme, block=[3, 3, 4]).opt("block") == (3, 3, 4)
    assert make_spec("x", 10, scheme, block=99).opt("block") == 99
