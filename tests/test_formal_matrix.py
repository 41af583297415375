"""The formal matrix (issue 8): every scheme and every prefix network, with its Ling and sparse variants, at
widths 1-8, 13, 16, 31, 32, 33, 64, 100 and 128, with carry-in and carry-out each on and off, proved equal
to Verilog's `+` by Yosys (the reference is Yosys's own adder, a general reference tool; see formal.py for
what a proof covers: x modelled, outputs defined, Yosys check clean).

One test per variant proves all its widths and port sets in one Yosys run (formal.prove_all), so the
matrix costs a few dozen process starts, not about 2,000. Widths up to 33 run in CI's default selection;
64, 100 and 128 are the slow part. The variants and widths come from the registries, so a new scheme or
network joins the matrix without an edit here (and the test for it fails until it proves).

Combinations a scheme rejects are skipped and counted, not hidden: test_what_the_matrix_skips pins them.
docs/formal.md has the matrix size and its time on the project's machine.
"""

from __future__ import annotations

import pytest

from adder_forge.emit.design import design
from adder_forge.base.errors import SpecError
from adder_forge.checks.formal import prove_all
from adder_forge.schemes.prefix_networks import NETWORKS, param_levels
from adder_forge.spec.registry import schemes

pytestmark = pytest.mark.formal

FAST_WIDTHS = (1, 2, 3, 4, 5, 6, 7, 8, 13, 16, 31, 32, 33)
SLOW_WIDTHS = (64, 100, 128)
PORTS = ((True, True), (True, False), (False, True), (False, False))  # (carry_in, carry_out)
LING = ("lookahead", "block-lookahead")  # the non-prefix schemes with a ling option
# The flat lookahead is the one scheme Yosys's SAT finds hard (its carries are wide AND-OR sums, not a chain
# the reference's ripple matches): about 3 s a proof at 32 bits, 10-16 s at 64, 140-175 s at 128 here. Its
# widths above 16 move to the slow part, and at 100 and 128 bits it proves one port set (carry-in and
# carry-out on) rather than four: the other three would add about 40 minutes.
HARD = ("lookahead",)
HARD_FAST = 16
HARD_WIDE = (100, 128)


def network_value(network: str, n: int):
    """A legal parameter for a parameterised network over n prefix inputs: the middle of its family."""
    levels = param_levels(n)
    if NETWORKS[network].param == "taxonomy":
        left = levels - 1
        l = min(1, left)
        f = (left - l) // 2
        return [l, f, left - l - f]
    if NETWORKS[network].param == "fanouts":
        per_level = [1] * (levels - 1) + [1 << (levels - 1)]  # Kogge-Stone below, Sklansky's fanout last
        return list(reversed(per_level))
    return None


def variants() -> list[tuple[str, str, dict]]:
    """(label, scheme, options): every scheme; every network dense, sparse (block 4) and Ling; Ling and sparse
    together on one network; and the ling option of the other schemes."""
    out = []
    for name in schemes():
        if name != "prefix":
            out.append((name, name, {}))
            if name in LING:
                out.append((f"{name}+ling", name, {"ling": True}))
            continue
        for net in NETWORKS:
            out.append((f"prefix:{net}", name, {"prefix": net}))
            out.append((f"prefix:{net}+sparse4", name, {"prefix": net, "block": 4}))
            out.append((f"prefix:{net}+ling", name, {"prefix": net, "ling": True}))
        out.append(("prefix:kogge-stone+ling+sparse4", name, {"prefix": "kogge-stone", "ling": True, "block": 4}))
    return out


def make(label: str, scheme: str, opts: dict, width: int, cin: bool, cout: bool):
    from adder_forge.spec.loader import make_spec

    opts = dict(opts)
    net = opts.get("prefix")
    if net and NETWORKS[net].param:
        opts[NETWORKS[net].param] = network_value(net, width + cin)
    name = f"m_{label}_{width}_{int(cin)}{int(cout)}".replace(":", "_").replace("-", "_").replace("+", "_")
    spec = make_spec(name, width, scheme, carry_in=cin, carry_out=cout, **opts)
    return design(spec, tb_random=0, tb_exhaustive_limit=0)


def cases(label, scheme, opts, widths, ports=PORTS):
    built, skipped = [], []
    for w in widths:
        for cin, cout in ports:
            try:
                built.append(((w, cin, cout), make(label, scheme, opts, w, cin, cout)))
            except SpecError as exc:
                skipped.append(((w, cin, cout), exc.message))
    return built, skipped


def check(label, scheme, opts, widths, ports=PORTS):
    built, _ = cases(label, scheme, opts, widths, ports)
    if not built:
        pytest.skip(f"{label} accepts none of the widths {widths}")
    proofs = prove_all([(d.net, d.verilog) for _, d in built])
    failed = [f"{label} width {w} cin={int(ci)} cout={int(co)}: {p.describe(w)}"
              for ((w, ci, co), _), p in zip(built, proofs) if not p.ok]
    assert not failed, "\n".join(failed)
    assert len(proofs) == len(built)


VARIANTS = variants()
IDS = [v[0] for v in VARIANTS]


@pytest.mark.parametrize("label, scheme, opts", VARIANTS, ids=IDS)
def test_matrix_up_to_33_bits(label, scheme, opts):
    hard = scheme in HARD
    check(label, scheme, opts, tuple(w for w in FAST_WIDTHS if w <= HARD_FAST or not hard))


@pytest.mark.slow
@pytest.mark.parametrize("label, scheme, opts", VARIANTS, ids=IDS)
def test_matrix_at_64_100_128_bits(label, scheme, opts):
    if scheme in HARD:
        check(label, scheme, opts, tuple(w for w in FAST_WIDTHS if w > HARD_FAST) + (64,))
        check(label, scheme, opts, HARD_WIDE, ports=((True, True),))
    else:
        check(label, scheme, opts, SLOW_WIDTHS)


def test_what_the_matrix_skips():
    """Only the flat lookahead's own width limit may take a combination out of the matrix."""
    skipped = []
    for label, scheme, opts in VARIANTS:
        for w in FAST_WIDTHS + SLOW_WIDTHS:
            for cin, cout in PORTS:
                try:
                    from adder_forge.spec.loader import make_spec

                    o = dict(opts)
                    if o.get("prefix") and NETWORKS[o["prefix"]].param:
                        o[NETWORKS[o["prefix"]].param] = network_value(o["prefix"], w + cin)
                    make_spec("m", w, scheme, carry_in=cin, carry_out=cout, **o)
                except SpecError as exc:
                    skipped.append((label, w, exc.message))
    assert skipped == [], skipped
    assert len(VARIANTS) >= len(schemes()) + 3 * len(NETWORKS)
