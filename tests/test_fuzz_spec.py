"""Spec fuzzing (issue 8, hardening): random and mutated YAML never ends in a traceback, a hang, a tool error or
a write outside the output folder. Every case ends either in a valid build or in exactly one line
``FILE:LINE:COL: error: ...`` with exit status 2.

Most cases run through ``cli.main`` in-process (fast); a sample runs through a real ``adder-forge`` process.
Hypothesis runs derandomized (the same cases every run, so CI is not flaky) with no example database.
Valid specs wider than BUILD_LIMIT bits are checked to load but not built: building wide adders is the
benchmarks' job (bench/), and one 16384-bit build would take longer than this whole file.
"""

from __future__ import annotations

import contextlib
import io
import os
import re
import shutil
import signal
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from adder_forge import cli
from adder_forge.base.errors import SpecError
from adder_forge.base.keywords import RESERVED
from adder_forge.spec.registry import schemes
from adder_forge.spec.loader import load_spec

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = [p.read_bytes() for p in sorted((ROOT / "specs").glob("*.yaml"))]
BUILD_LIMIT = {"lookahead": 24}  # flat lookahead is O(n^3) gates
BUILD_WIDTH = 96
CASE_SECONDS = 60  # a case that takes longer is a hang (generous: CI machines are shared and slow)

_SCHEMES = sorted(schemes())
_OPTION_KEYS = sorted({o.key for s in schemes().values() for o in s.options})
_KEYS = ["name", "width", "scheme", "carry_in", "carry_out", *_OPTION_KEYS]
_JUNK_KEYS = ["widht", "Name", "", "<<", "name ", "ñame", "名前", "x" * 300, "8", "~", "null", "true", "? a"]

# Plain YAML fragments: YAML 1.1 spellings, tags, aliases, paths, keywords, control characters.
_FRAGMENTS = [
    "yes", "no", "on", "off", "y", "n", "~", "null", "NULL", "", "0x10", "0o17", "010", "00", "1_000", "1:30",
    "0b11", ".inf", "-.inf", ".nan", "1e3", "8.0", "-0", "+8", "'8'", '"8"', "!!str 8", "!!int 8", "!!int abc",
    "!!float 8", "!!float abc", "!!bool yes", "!!null x", "!!binary aGVsbG8=", "!!binary '!!!'",
    "!!python/object/apply:os.system [echo hi]", "!!python/name:os.system", "!!python/tuple [1, 2]",
    "!custom 8", "!!set {a, b}", "!!omap [a: 1]", "!!pairs [a: 1]", "!!timestamp 2001-12-14", "2001-12-14",
    "&a 8", "*a", "*undefined", "&a [*a]", "[1, 2, 3]", "[]", "{}", "{a: 1}", "[[[[1]]]]", "[1, [2, 3]]",
    "|\n  literal", ">\n  folded", "'../x'", "../x", "/abs/path", "../../etc/passwd", "'C:\\x'", "'a b'",
    '"a\\nb"', '"\\x00"', '"\\u2028"', '"\\ud800"', "ünïcödé", "名前", "module", "logic", "wire", "adder_forge_miter",
    "x_tb", "kogge-stone", "KOGGE-STONE", "auto", "Auto", "true", "false", "True", "- 1", "[", "]", "{", "}", ":",
    "'", '"', "&", "*", "!", "%", "@", "`", "#", "- - -", "? x", "9" * 5000, "0x" + "f" * 3000, "-" + "9" * 40,
    "9" * 30, "1e400", "-1e400", "[" * 200 + "]" * 200, "{a: " * 100 + "1" + "}" * 100, "\t8",
]
_IDENT = st.from_regex(r"[A-Za-z_][A-Za-z0-9_]{0,24}", fullmatch=True)
_TEXT = st.text(st.characters(blacklist_categories=("Cs",)), max_size=30)


def _scalar_text(v) -> str:
    return yaml.safe_dump(v, default_flow_style=True, width=10 ** 6).strip().removesuffix("\n...").strip()


_VALUES = st.one_of(
    st.sampled_from(_FRAGMENTS),
    st.integers(-3, 40).map(str),
    st.integers(-(2 ** 70), 2 ** 70).map(str),
    st.sampled_from([0, 1, 2, 3, 7, 8, 16, 31, 32, 33, 64, 128, 129, 16384, 16385, -1, 2 ** 31, 2 ** 63]).map(str),
    st.sampled_from(_SCHEMES).map(str),
    st.sampled_from(["kogge-stone", "brent-kung", "sklansky", "han-carlson", "ladner-fischer",
                     "ladner-fischer-p0", "knowles", "harris", "ripple", "kogge_stone"]),
    st.sampled_from(sorted(RESERVED)),
    _IDENT,
    _TEXT.map(_scalar_text),
    st.lists(st.integers(-2, 40), max_size=8).map(_scalar_text),
    st.lists(st.sampled_from([1, 2, 4, 8, 16, 0, 3]), max_size=8).map(_scalar_text),
    st.floats(allow_nan=True, allow_infinity=True).map(_scalar_text),
    st.booleans().map(_scalar_text),
)


@st.composite
def random_specs(draw) -> bytes:
    """A mapping of mostly-real keys to values of every kind, sometimes with a key twice or out of order."""
    lines = []
    for key in draw(st.lists(st.one_of(st.sampled_from(_KEYS), st.sampled_from(_JUNK_KEYS)), max_size=8)):
        lines.append(f"{key}: {draw(_VALUES)}")
    if draw(st.booleans()):  # most of a good spec, so the deeper checks are reached
        base = [f"name: {draw(st.one_of(_IDENT, st.sampled_from(_FRAGMENTS)))}",
                f"width: {draw(st.one_of(st.integers(1, 40).map(str), _VALUES))}",
                f"scheme: {draw(st.sampled_from(_SCHEMES))}"]
        lines = base + lines if draw(st.booleans()) else lines + base
    return ("\n".join(lines) + draw(st.sampled_from(["\n", "", "\r\n", "\n\n# end\n"]))).encode("utf-8")


# Values a real spec would give each scheme key, with a few just outside what is allowed.
_NEAR = {
    "prefix": st.sampled_from(["kogge-stone", "brent-kung", "sklansky", "han-carlson", "ladner-fischer",
                               "ladner-fischer-p0", "knowles", "harris", "Kogge-Stone", "koggestone"]),
    "taxonomy": st.lists(st.integers(-1, 6), min_size=2, max_size=4).map(_scalar_text),
    "fanouts": st.lists(st.sampled_from([1, 2, 4, 8, 16, 3, 0]), min_size=1, max_size=7).map(_scalar_text),
    "block": st.one_of(st.integers(-1, 70).map(str), st.sampled_from(["auto", "AUTO", "[]", "[0]", "1.5"]),
                       st.lists(st.integers(0, 12), min_size=1, max_size=8).map(_scalar_text)),
    "group": st.integers(0, 10).map(str),
    "ling": st.sampled_from(["true", "false", "yes", "1"]),
}


@st.composite
def near_valid_specs(draw) -> bytes:
    """A well-formed spec for a random scheme with its own keys set to plausible values: reaches the option
    parsers and the cross-key rules (taxonomy sums, fanout rules, block sums) that junk never gets to."""
    scheme = draw(st.sampled_from(_SCHEMES))
    width = draw(st.one_of(st.integers(1, 40), st.sampled_from([48, 63, 64, 65, 127, 128, 129, 0])))
    lines = [f"name: {draw(_IDENT)}", f"width: {width}", f"scheme: {scheme}"]
    own = [o.key for o in schemes()[scheme].options]
    for key in draw(st.lists(st.sampled_from(own or ["ling"]), unique=True, max_size=4)):
        lines.append(f"{key}: {draw(_NEAR.get(key, _VALUES))}")
    for key in ("carry_in", "carry_out"):
        if draw(st.booleans()):
            lines.append(f"{key}: {draw(st.sampled_from(['true', 'false', 'false', 'no']))}")
    order = draw(st.permutations(lines))
    return ("\n".join(order) + "\n").encode()


@st.composite
def mutated_specs(draw) -> bytes:
    """An example spec with a few byte-level changes: deletions, insertions, duplicated or swapped lines."""
    data = bytearray(draw(st.sampled_from(EXAMPLES)))
    pool = b":-[]{}&*!#|>'\"\t\n ,?%@`0123456789abcxyz_\x00\xff\xfe\xef\xbb\xbf"
    for _ in range(draw(st.integers(1, 4))):
        kind = draw(st.integers(0, 5))
        at = draw(st.integers(0, len(data)))
        if kind == 0 and data:
            end = min(len(data), at + draw(st.integers(1, 12)))
            del data[at:end]
        elif kind == 1:
            data[at:at] = bytes(draw(st.lists(st.sampled_from(pool), min_size=1, max_size=6)))
        elif kind == 2:
            data[at:at] = draw(st.sampled_from(_FRAGMENTS)).encode("utf-8")
        else:
            lines = bytes(data).split(b"\n")
            i, j = draw(st.integers(0, len(lines) - 1)), draw(st.integers(0, len(lines) - 1))
            if kind == 3:
                lines.insert(j, lines[i])  # a key twice
            elif kind == 4:
                lines[i], lines[j] = lines[j], lines[i]
            else:
                lines[i] = b"  " + lines[i]  # indentation
            data = bytearray(b"\n".join(lines))
    return bytes(data)


def _billion_laughs(levels: int = 9) -> bytes:
    out = ['lol0: &l0 "lol"']
    for k in range(1, levels + 1):
        out.append(f"lol{k}: &l{k} [" + ", ".join([f"*l{k - 1}"] * 9) + "]")
    return ("\n".join(out) + "\n").encode()


def _laughs_under(key: str, levels: int = 9) -> bytes:
    anchors = ['a0: &l0 8'] + [f"a{k}: &l{k} [" + ", ".join([f"*l{k - 1}"] * 9) + "]" for k in range(1, levels + 1)]
    # the anchors under one known key (a list the parser walks), then the key itself aliased
    return (f"name: x\nwidth: 8\nscheme: prefix\nprefix: knowles\n{key}: &top [{', '.join(anchors)}]\n").encode()


FIXED = {
    "empty": b"",
    "only a comment": b"# nothing here\n",
    "only a document marker": b"---\n",
    "two documents": b"name: a\nwidth: 8\nscheme: ripple\n---\nname: b\n",
    "binary": bytes(range(256)) * 4,
    "nul bytes": b"name: a\x00\nwidth: 8\nscheme: ripple\n",
    "utf-16": "name: a\nwidth: 8\nscheme: ripple\n".encode("utf-16"),
    "utf-8 bom": b"\xef\xbb\xbfname: bom8\nwidth: 8\nscheme: ripple\n",
    "crlf": b"name: crlf8\r\nwidth: 8\r\nscheme: ripple\r\n",
    "latin-1": "name: a\nwidth: 8\nscheme: ripple # caf\xe9\n".encode("latin-1"),
    "billion laughs": _billion_laughs(),
    "billion laughs as a name": _billion_laughs() + b"name: *l9\nwidth: 8\nscheme: ripple\n",
    "billion laughs as fanouts": _laughs_under("fanouts"),
    "billion laughs as block": _laughs_under("block"),
    "recursive alias": b"name: &n [*n]\nwidth: 8\nscheme: ripple\n",
    "recursive block": b"name: r\nwidth: 8\nscheme: carry-skip\nblock: &b [1, *b]\n",
    "deep list": b"name: d\nwidth: " + b"[" * 20000 + b"]" * 20000 + b"\nscheme: ripple\n",
    "deep mapping": b"".join(b"  " * k + b"k:\n" for k in range(3000)),
    "deep flow mapping": b"name: {a: " * 5000 + b"1" + b"}" * 5000 + b"\n",
    "python tag": b"name: !!python/object/apply:os.system ['touch PWNED']\nwidth: 8\nscheme: ripple\n",
    "python module tag": b"!!python/module:os\n",
    "tagged root": b"!!map {name: a, width: 8, scheme: ripple}\n",
    "flow root": b"{name: flow8, width: 8, scheme: ripple}\n",
    "merge key": b"base: &b {width: 8, scheme: ripple}\nname: m\n<<: *b\n",
    "complex key": b"? [a, b]\n: 1\n",
    "huge int": b"name: a\nwidth: " + b"9" * 100000 + b"\nscheme: ripple\n",
    "huge hex": b"name: a\nwidth: 0x" + b"f" * 100000 + b"\nscheme: ripple\n",
    "huge string": b"name: " + b"a" * 1000000 + b"\nwidth: 8\nscheme: ripple\n",
    "long line of keys": b"".join(b"k%d: 1\n" % k for k in range(5000)),
    "path name": b"name: ../escape\nwidth: 8\nscheme: ripple\n",
    "absolute name": b"name: /tmp/escape\nwidth: 8\nscheme: ripple\n",
    "dotted name": b"name: ..\nwidth: 8\nscheme: ripple\n",
    "unicode name": "name: sümme\nwidth: 8\nscheme: ripple\n".encode(),
    "keyword name": b"name: always_ff\nwidth: 8\nscheme: ripple\n",
    "line separator in a key": "na\u2028me: a\nwidth: 8\nscheme: ripple\n".encode(),
    "newline in a value": b'name: "a\\nb"\nwidth: 8\nscheme: "ripp\\nle"\n',
    "tabs": b"name:\ta\nwidth:\t8\nscheme:\tripple\n",
    "negative width": b"name: a\nwidth: -8\nscheme: ripple\n",
    "widest": b"name: wide\nwidth: 16384\nscheme: ripple\n",
    "widest lookahead": b"name: wide\nwidth: 129\nscheme: lookahead\n",
    "knowles fanouts huge": b"name: k\nwidth: 8\nscheme: prefix\nprefix: knowles\nfanouts: [1152921504606846976, 1, 1, 1]\n",
    "harris taxonomy huge": b"name: h\nwidth: 8\nscheme: prefix\nprefix: harris\ntaxonomy: [100000000000, 0, 0]\n",
    "harris taxonomy of 900 digits": b"name: h\nwidth: 8\nscheme: prefix\nprefix: harris\ntaxonomy: [" + b"9" * 900 +
                                     b", 0, 0]\n",
    "knowles fanouts long": b"name: k\nwidth: 8\nscheme: prefix\nprefix: knowles\nfanouts: [" +
                            b", ".join([b"1"] * 3000) + b"]\n",
    "block list huge": b"name: b\nwidth: 8\nscheme: carry-skip\nblock: [" + b", ".join([b"1"] * 20000) + b"]\n",
    "block huge": b"name: b\nwidth: 8\nscheme: carry-select\nblock: 1000000000000000000000\n",
    "group huge": b"name: g\nwidth: 8\nscheme: block-lookahead\ngroup: 99999999999\n",
}


class _Hang(Exception):
    pass


@contextlib.contextmanager
def _time_limit(seconds: int):
    def on_alarm(signum, frame):
        raise _Hang(f"no result after {seconds} s")

    old = signal.signal(signal.SIGALRM, on_alarm)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)


def _too_big_to_build(path: Path) -> bool:
    """True for a valid spec wider than this file builds (see the module docstring)."""
    try:
        s = load_spec(path)
    except SpecError:
        return False
    return s.width > BUILD_LIMIT.get(s.scheme, BUILD_WIDTH)


def _listing(folder: Path) -> set[str]:
    return {str(p.relative_to(folder)) for p in folder.rglob("*")}


def check_case(data: bytes, subprocess_run: bool = False) -> str:
    """Run `build` on one spec file in a sandbox folder; returns "built", "valid" (not built) or "rejected"."""
    with tempfile.TemporaryDirectory(prefix="adder_forge_fuzz_") as tmp:
        box = Path(tmp)
        if (ROOT / "specs" / "nets").is_dir():  # network files the examples name (prefix: file)
            shutil.copytree(ROOT / "specs" / "nets", box / "nets")
        spec = box / "case.yaml"
        spec.write_bytes(data)
        out = box / "out"
        if _too_big_to_build(spec):
            return "valid"
        argv = ["build", str(spec), "--out", str(out), "--tb-vectors", "16"]
        cwd = os.getcwd()
        os.chdir(box)  # a relative path the tool might wrongly write to lands here, where it is seen
        try:
            if subprocess_run:
                r = subprocess.run([sys.executable, "-m", "adder_forge", *argv], capture_output=True, text=True,
                                   timeout=CASE_SECONDS * 2)
                code, err = r.returncode, r.stderr
            else:
                buf_out, buf_err = io.StringIO(), io.StringIO()
                with _time_limit(CASE_SECONDS), contextlib.redirect_stdout(buf_out), contextlib.redirect_stderr(buf_err):
                    try:
                        code = cli.main(argv)
                    except SystemExit as exc:
                        code = exc.code
                err = buf_err.getvalue()
        finally:
            os.chdir(cwd)
        assert "Traceback" not in err, err
        listing = _listing(box)
        outside = {p for p in listing if p not in ("case.yaml", "out", "nets") and not p.startswith("out" + os.sep)
                   and not (p.startswith("nets" + os.sep) and (ROOT / "specs" / p).is_file())}
        assert not outside, f"wrote outside the output folder: {sorted(outside)}"
        if code == 0:
            name = load_spec(spec).name
            assert (out / name / f"{name}.v").is_file()
            assert {p.split(os.sep)[1] for p in listing if p.startswith("out" + os.sep)} == {name}, listing
            return "built"
        lines = err.splitlines()
        assert code == 2, f"exit {code}: {err[-2000:]}"
        assert len(lines) == 1, err[-2000:]
        assert re.fullmatch(re.escape(str(spec)) + r":[1-9][0-9]*:[1-9][0-9]*: error: \S.*", lines[0]), lines[0][:500]
        assert len(lines[0]) < 1000, lines[0][:500]
        assert not out.exists()
        return "rejected"


_SETTINGS = dict(deadline=None, derandomize=True, database=None,
                 suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.filter_too_much])
TALLY: dict[str, int] = {}


def _count(kind: str, outcome: str) -> None:
    TALLY[f"{kind} {outcome}"] = TALLY.get(f"{kind} {outcome}", 0) + 1


@settings(max_examples=800, **_SETTINGS)
@given(random_specs())
def test_random_specs(data):
    _count("random", check_case(data))


@pytest.mark.slow
@settings(max_examples=600, **_SETTINGS)
@given(near_valid_specs())
def test_near_valid_specs(data):
    _count("near-valid", check_case(data))


@pytest.mark.slow
@settings(max_examples=650, **_SETTINGS)
@given(mutated_specs())
def test_mutated_examples(data):
    _count("mutated", check_case(data))


@pytest.mark.parametrize("label", sorted(FIXED))
def test_adversarial(label):
    outcome = check_case(FIXED[label])
    _count("adversarial", outcome)
    if label in ("python tag", "python module tag"):
        assert outcome == "rejected" and not Path("PWNED").exists()
    if label in ("utf-8 bom", "crlf", "flow root", "tabs"):
        assert outcome in ("built", "rejected")


def test_examples_build():
    # The unmutated examples are the mutations' starting points: each must build, or the fuzz starts from junk.
    for data in EXAMPLES:
        assert check_case(data) in ("built", "valid")


@pytest.mark.slow
@settings(max_examples=250, **_SETTINGS)
@given(st.one_of(random_specs(), near_valid_specs(), mutated_specs(), st.sampled_from(sorted(FIXED.values()))))
def test_through_a_real_process(data):
    # The same promise from a separate `adder-forge` process: exit status, stderr and files as a user sees them.
    _count("subprocess", check_case(data, subprocess_run=True))


def test_spec_not_a_regular_file(tmp_path):
    # A FIFO given as the spec would block a plain read forever; a folder is not a spec either.
    fifo = tmp_path / "spec.fifo"
    os.mkfifo(fifo)
    for path in (fifo, tmp_path):
        buf = io.StringIO()
        with _time_limit(10), contextlib.redirect_stderr(buf):
            code = cli.main(["build", str(path), "--out", str(tmp_path / "out")])
        assert code == 2 and re.fullmatch(re.escape(str(path)) + r":1:1: error: .+\n", buf.getvalue()), buf.getvalue()


def teardown_module(module):
    if TALLY:
        print("\nfuzz cases: " + ", ".join(f"{k} {v}" for k, v in sorted(TALLY.items())) +
              f"; total {sum(TALLY.values())}")
