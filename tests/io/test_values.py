"""The whitelist value parser: exact numbers, small expressions, safe failures."""

from __future__ import annotations

import builtins
from fractions import Fraction

import pytest
import sympy as sp
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from opsym.errors import OpsymError, ValueSyntaxError
from opsym.io.formatting import format_number, format_value
from opsym.values import MAX_LENGTH, parse_value

R1, R2, R3 = sp.symbols("R1 R2 R3", positive=True)
VOS = sp.Symbol("U1.Vos", real=True)
IBP = sp.Symbol("U1.Ib+", real=True)
IBM = sp.Symbol("U1.Ib-", real=True)
IB = sp.Symbol("U1.Ib", real=True)
NAMES = {"R1": R1, "R2": R2, "R3": R3, "U1.Vos": VOS, "U1.Ib+": IBP, "U1.Ib-": IBM, "U1.Ib": IB}


def read(text, **kw):
    return parse_value(text, where="test", **kw)


@pytest.mark.parametrize(
    ("text", "want"),
    [
        ("10k", 10_000),
        ("10K", 10_000),
        ("4.7n", sp.Rational(47, 10**10)),
        ("2k2", 2200),
        ("4k7", 4700),
        ("1M5", 1_500_000),
        ("2R2", sp.Rational(22, 10)),
        ("100R", 100),
        ("25u", sp.Rational(25, 10**6)),
        ("25µ", sp.Rational(25, 10**6)),  # MICRO SIGN
        ("25μ", sp.Rational(25, 10**6)),  # GREEK MU
        ("1.5M", 1_500_000),
        ("1.5 MΩ", 1_500_000),
        ("1.5 MΩ", 1_500_000),  # OHM SIGN U+2126
        ("10 kohm", 10_000),
        ("1e-9", sp.Rational(1, 10**9)),
        ("2.5E3", 2500),
        ("100 nA", sp.Rational(1, 10**7)),
        ("100nA", sp.Rational(1, 10**7)),
        ("-3.3", sp.Rational(-33, 10)),
        ("−3.3", sp.Rational(-33, 10)),  # MINUS SIGN
        ("1/3", sp.Rational(1, 3)),
        (".5", sp.Rational(1, 2)),
        ("3 mV", sp.Rational(3, 1000)),
        ("1 MHz", 10**6),
        ("1f", sp.Rational(1, 10**15)),
        ("1%", sp.Rational(1, 100)),
        ("25 ppm", sp.Rational(25, 10**6)),
        ("100 dB", 10**5),
        ("-20 dB", sp.Rational(1, 10)),
        ("2*3 + 4", 10),
        ("2×3÷4", sp.Rational(3, 2)),
        ("(1 + 2)*3", 9),
        ("1k ‖ 1k", 500),
        ("1k || 1k", 500),
        ("--1", 1),
        ("0", 0),
    ],
)
def test_numbers_are_exact(text, want):
    got = read(text)
    assert got == (sp.Integer(want) if isinstance(want, int) else want)
    assert got.is_Rational or got.is_number


def test_ninety_db_is_exact():
    assert read("90 dB") == 10000 * sp.sqrt(10)  # 10**(90/20)


def test_expressions_with_names():
    assert sp.simplify(read("R1 ‖ R2", names=NAMES) - R1 * R2 / (R1 + R2)) == 0
    assert sp.simplify(read("R1 + R2‖R3", names=NAMES) - (R1 + R2 * R3 / (R2 + R3))) == 0
    assert sp.simplify(read("2*R1 ‖ R2", names=NAMES) - 2 * R1 * R2 / (2 * R1 + R2)) == 0
    assert read("R1*R2/(R1+R2)", names=NAMES) == R1 * R2 / (R1 + R2)
    assert read("-R1", names=NAMES) == -R1
    assert read("U1.Ib+ - U1.Ib-", names=NAMES) == IBP - IBM
    assert read("U1.Ib -R1", names=NAMES) == IB - R1
    assert read("U1.Vos*1k", names=NAMES) == 1000 * VOS


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("", "empty"),
        ("10x", "unknown prefix or unit 'x' at column 3"),
        ("1 mil", "'mil' is SPICE's thousandth of an inch"),
        ("1 mega", "M or meg for mega"),
        ("1 MEGOHM", "meg (or M) with a unit"),
        ("1.2.3", "second decimal point"),
        ("1e", "exponent needs digits"),
        ("1e999", "too large"),
        ("1e3k", "either an exponent or an SI prefix"),
        ("2 3", "no implicit multiplication"),
        ("1/0", "division by zero"),
        ("1/(2-2)", "division by zero"),
        ("0 ‖ 0", "divides by zero"),
        ("(1", "not closed"),
        ("1)", "unexpected ')'"),
        ("1 +", "ends too early"),
        ("1 dB + 2", "must stand alone"),
        ("1k%", "unknown prefix or unit"),
        ("R1", "names are not allowed here"),
        ("(" * 60 + "1" + ")" * 60, "nested too deeply"),
        ("1" * (MAX_LENGTH + 1), "at most"),
    ],
)
def test_bad_text_says_what_and_where(text, fragment):
    with pytest.raises(ValueSyntaxError) as info:
        read(text)
    message = str(info.value)
    assert message.startswith("test: ")
    assert fragment in message


def test_unknown_name_suggests_close_ones():
    with pytest.raises(ValueSyntaxError, match="R2"):
        read("R4", names={"R1": R1, "R2": R2})
    with pytest.raises(ValueSyntaxError, match=r"U1\.Vos"):
        read("U1.vos", names=NAMES)


def test_r_notation_that_reads_like_a_product_is_refused():
    with pytest.raises(ValueSyntaxError, match=r"2\*R1 for the product"):
        read("2R1", names=NAMES)
    assert read("2R1") == sp.Rational(21, 10)  # no names: the trade's notation


def test_units_are_checked_against_the_field():
    assert read("10 kΩ", unit="Ω") == 10_000
    assert read("10k", unit="Ω") == 10_000
    with pytest.raises(ValueSyntaxError, match="does not fit"):
        read("10 nF", unit="Ω")
    with pytest.raises(ValueSyntaxError, match="does not fit"):
        read("100 dB", unit="V")
    assert read("90 dB", unit="ratio") == 10000 * sp.sqrt(10)


@pytest.mark.parametrize(
    "attack",
    [
        "__import__('os').system('touch /tmp/opsym-pwned')",
        "R1.__class__",
        "lambda: 0",
        "exec('1')",
        "eval('1')",
        "open('/etc/passwd')",
        "R1.__class__.__mro__",
        "[x for x in ()]",
        "{}",
        "1 if 1 else 0",
        "a=1",
        "`1`",
        "1;2",
        "R1**2",
        "Symbol('x')",
        "\x00",
    ],
)
def test_injection_attempts_are_syntax_errors(attack, monkeypatch):
    calls = []
    for fn in ("eval", "exec", "__import__"):
        original = getattr(builtins, fn)

        def spy(*a, _original=original, _fn=fn, **k):
            calls.append(_fn)
            return _original(*a, **k)

        monkeypatch.setattr(builtins, fn, spy)
    monkeypatch.setattr(sp, "sympify", lambda *a, **k: pytest.fail("sympify was called"))
    with pytest.raises(ValueSyntaxError):
        read(attack, names=NAMES)
    monkeypatch.undo()
    assert "eval" not in calls and "exec" not in calls


def test_non_text_is_refused():
    with pytest.raises(ValueSyntaxError, match="as text"):
        read(12)  # type: ignore[arg-type]


_ALPHABET = st.sampled_from(
    [*"0123456789.eE+-*/()|‖×÷·−RkMmunpµμΩ%_ aAVFHzdBU1.Ib ", "\x00", "'", "é", "\n"]
)


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.text(_ALPHABET, max_size=40))
def test_fuzz_only_value_syntax_errors(text):
    try:
        got = read(text, names=NAMES)
    except ValueSyntaxError:
        return
    assert isinstance(got, sp.Expr)
    assert not got.has(sp.nan, sp.zoo, sp.oo)


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=60))
def test_fuzz_any_unicode(text):
    try:
        read(text)
    except OpsymError as err:
        assert isinstance(err, ValueSyntaxError)


@settings(max_examples=300, deadline=None)
@given(st.fractions(max_denominator=10**6).filter(lambda f: abs(f) < 10**20))
def test_format_number_round_trips(f):
    text = format_number(sp.Rational(f.numerator, f.denominator))
    assert read(text) == sp.Rational(f.numerator, f.denominator)


@settings(max_examples=200, deadline=None)
@given(st.integers(-(10**9), 10**9), st.integers(-30, 20))
def test_format_number_decimals_round_trip(m, e):
    f = Fraction(m) * Fraction(10) ** e
    text = format_number(f)
    assert read(text) == sp.Rational(f.numerator, f.denominator)
    assert "/" not in text  # a finite decimal is written with a prefix, not as a fraction


_SYMS = [R1, R2, VOS, IBP, IBM]


def _exprs():
    leaf = st.one_of(
        st.sampled_from(_SYMS),
        st.fractions(max_denominator=1000)
        .filter(lambda f: f != 0 and abs(f) < 10**6)
        .map(lambda f: sp.Rational(f.numerator, f.denominator)),
    )

    def grow(children):
        pair = st.tuples(children, children)
        return st.one_of(
            pair.map(lambda ab: sp.Add(*ab)),
            pair.map(lambda ab: sp.Mul(*ab)),
            pair.filter(lambda ab: not ab[1].is_zero).map(lambda ab: ab[0] / ab[1]),
            children.map(lambda a: -a),
        )

    return st.recursive(leaf, grow, max_leaves=6)


@settings(max_examples=150, deadline=None)
@given(_exprs())
def test_format_value_round_trips(expr):
    text = format_value(expr)
    back = read(text, names=NAMES)
    assert sp.simplify(back - expr) == 0, text


@pytest.mark.parametrize("db", ["90 dB", "100 dB", "-3 dB", "4.5 dB", "1500 dB"])
def test_decibels_round_trip(db):
    value = read(db)
    assert read(format_value(value)) == value
    if not value.is_Rational:
        assert format_value(value) == db
