"""Dominant terms with a stated error bound (``opsym/analyses/dominant.py``).

Every check compares with something outside the module: the textbook
first-order gain error ``1/(A·β)`` of a non-inverting stage (any op-amp text,
e.g. S. Franco, *Design with Operational Amplifiers and Analog Integrated
Circuits*, ch. 1 — from memory), the inverting stage's bias error ``Ib−·Rf``
(KCL at the virtual ground), and the exact coefficient evaluated by SymPy in
rational arithmetic (independent of the module's own ``Fraction`` sums).
"""

from __future__ import annotations

import sys
from pathlib import Path

import circuits
import nodal
import pytest
import sympy as sp
from drawing import DrawPicker, example_settings
from hypothesis import assume, given
from hypothesis import strategies as st

import opsym
from opsym.analyses.dominant import dominant_form

sys.path.insert(0, str(Path(__file__).resolve().parent / "benchmarks"))
from bench_circuits import r2r_dac  # on the path above


def _true_error(d, values) -> sp.Rational:
    """``|H̃/H − 1|`` at the values, by SymPy's exact rational evaluation."""
    exact = {k: sp.Rational(v) for k, v in values.items()}
    h = d.exact.xreplace(exact)
    return abs(d.expression.xreplace(exact) / h - 1)


def _follower_with_gain():
    c = opsym.Circuit("non-inverting")
    c.voltage_source("Vs", "p", "0")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", gain="finite", bias=False)
    return c.analyze("out")


def test_non_inverting_keeps_r1_a_and_bounds_by_one_over_a_beta():
    # Textbook: G = (1/β)/(1 + 1/(Aβ)), β = R1/(R1 + R2); the first-order gain error is
    # 1/(Aβ) = (R1 + R2)/(R1·A) (Franco ch. 1, from memory).
    res = _follower_with_gain()
    d = res.dominant("Vs", values={"R1": "1k", "R2": "9k", "U1.A": "100k"})
    assert sp.simplify(d.expression - res.circuit.symbol("R2") / res.circuit.symbol("R1") - 1) == 0
    assert (d.kept, d.dropped) == (3, 2)  # numerator R1 + R2 whole; denominator R1·A kept
    one_over_a_beta = (1000 + 9000) / (1000 * 1e5)
    assert d.bound == pytest.approx(one_over_a_beta, rel=2 * one_over_a_beta)
    assert d.actual is not None and d.actual <= d.bound


def test_two_part_bound_is_the_documented_formula():
    # |Nd| ≤ εn|Nk|, |Dd| ≤ εd|Dk| ⇒ |H/H̃ − 1| ≤ (εn + εd)/(1 − εd) and
    # |H̃/H − 1| ≤ (εn + εd)/(1 − εn); opsym states the larger, (εn + εd)/(1 − max).
    a, b, c, e = sp.symbols("a b c e", positive=True)
    values = {a: 1000, b: 3, c: 1000, e: 7}
    d = dominant_form((a + b) / (c + e), values, error=0.05)
    en, ed = sp.Rational(3, 1000), sp.Rational(7, 1000)
    assert d.expression == a / c
    assert d.bound == pytest.approx(float((en + ed) / (1 - max(en, ed))), rel=1e-12)
    assert _true_error(d, values) <= d.bound


def test_zero_error_returns_the_exact_coefficient():
    res = _follower_with_gain()
    d = res.dominant("Vs", error=0, values={"R1": "1k", "R2": "9k", "U1.A": "100k"})
    assert d.expression == d.exact == res.compact_coefficient("Vs")
    assert (d.bound, d.dropped) == (0.0, 0)


def test_missing_values_name_the_symbols():
    res = _follower_with_gain()
    with pytest.raises(opsym.MissingValueError, match=r"R2, U1\.A"):
        res.dominant("Vs", values={"R1": "1k"})


def test_refuses_a_part_too_large_to_expand():
    x = sp.symbols("x0:6", positive=True)
    big = sp.Mul(*[(x[i] + x[(i + 1) % 6] + 1) for i in range(6)]) + 1
    with pytest.raises(opsym.ExpressionTooLargeError, match="about 730 monomials"):
        dominant_form(1 / big, dict.fromkeys(x, 1), limit=100)


def test_error_out_of_range_is_refused():
    a = sp.Symbol("a", positive=True)
    with pytest.raises(opsym.InvalidValueError, match="error"):
        dominant_form(1 / (a + 1), {a: 2}, error=1.5)


def test_s_domain_truncates_each_power_of_s():
    # A single-pole low-pass behind a finite-gain follower: 1 + s·R·C keeps both powers.
    c = opsym.Circuit("RC, buffered")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "p")
    c.capacitor("C1", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out", gain="finite", bias=False)
    res = c.analyze("out", domain="s")
    d = res.dominant("Vin", values={"R1": "10k", "C1": "10n", "U1.A": "100k"})
    R1, C1 = res.circuit.symbol("R1"), res.circuit.symbol("C1")
    assert sp.simplify(d.expression - 1 / (1 + opsym.s * R1 * C1)) == 0
    assert "per power of s" in d.scope
    assert d.actual is not None and d.actual <= d.bound < 2e-5


def test_dac_bias_term_is_rf_within_the_bound():
    # 6-bit R-2R DAC into an inverting stage, + pin grounded: with an ideal op-amp the
    # − pin's bias current flows through Rf alone (KCL at the virtual ground), so the
    # dominant form at A = 10⁵ is Rf; the exact coefficient evaluated by SymPy lies
    # within the stated bound of it.
    c = r2r_dac(6)
    res = c.analyze("out")
    coeff = res.compact_coefficient("U1.Ib-")
    values = {}
    for x in coeff.free_symbols:
        n = str(x)
        values[x] = 100_000 if n == "U1.A" else (20_000 if n.startswith("R2_") or n == "Rt" else
                                                10_000)  # fmt: skip
    d = dominant_form(coeff, values, error=0.01)
    assert d.expression == c.symbol("Rf")
    assert d.dropped > 0 and d.bound <= 0.01
    assert _true_error(d, values) <= d.bound
    assert d.actual == pytest.approx(float(_true_error(d, values)), rel=1e-12)


@st.composite
def _random_case(draw):
    desc, output, _ = circuits.random_circuit(DrawPicker(draw), max_opamps=2, finite=True)
    error = draw(st.sampled_from([0.001, 0.01, 0.1, 0.3]))
    return desc, output, error


@example_settings(40)
@given(_random_case())
def test_bound_holds_on_random_circuits(case):
    # Every resistor and gain symbolic, values from the drawing; the true error is
    # SymPy's exact evaluation of the exact and the approximate coefficients.
    desc, output, error = case
    symbolic = sorted({it[1] for it in desc if it[0] in ("R", "OA")})
    c = nodal.to_circuit(desc, symbolic)
    try:
        res = c.analyze(output)
    except opsym.SingularCircuitError:
        assume(False)
    values = nodal.numeric_values(c, desc, symbolic)
    values = {k: sp.Rational(v) for k, v in values.items()}
    for sym, coeff in res.terms.items():
        if coeff == 0 or not coeff.free_symbols:
            continue
        h = coeff.xreplace(values)
        assume(h != 0)
        d = dominant_form(coeff, values, error=error)
        assert d.bound <= error * (1 + 1e-9), (sym, d.bound)
        assert _true_error(d, values) <= d.bound, (sym, coeff, d.expression)


@example_settings(60)
@given(
    st.lists(st.tuples(st.integers(-9, 9), st.integers(0, 2), st.integers(0, 2)),
             min_size=1, max_size=8),
    st.lists(st.tuples(st.integers(1, 9), st.integers(0, 2), st.integers(0, 2)),
             min_size=1, max_size=8),
    st.fractions(min_value=sp.Rational(1, 100), max_value=100),
    st.fractions(min_value=sp.Rational(1, 100), max_value=100),
    st.sampled_from([0.001, 0.05, 0.5]),
)  # fmt: skip
def test_bound_holds_with_signed_terms(num, den, xv, yv, error):
    # Signed monomials, so kept and dropped parts may partly cancel: the bound must hold.
    x, y = sp.symbols("x y", positive=True)
    n = sp.Add(*[k * x**i * y**j for k, i, j in num])
    dd = sp.Add(*[k * x**i * y**j for k, i, j in den]) + x * y + 1
    values = {x: sp.Rational(xv), y: sp.Rational(yv)}
    h = (n / dd).xreplace(values)
    assume(n != 0 and h != 0)
    d = dominant_form(n / dd, values, error=error)
    assert _true_error(d, values) <= d.bound <= error * (1 + 1e-9)


# -- design notes -------------------------------------------------------------------


def _dac_nominal(c) -> dict[str, int]:
    """Invented values: R = 10 kΩ, 2R = 20 kΩ, Rf = 10 kΩ, A = 10⁵."""
    out = {}
    for name in c.free_symbols_by_name():
        out[name] = 20_000 if name.startswith("R2_") or name == "Rt" else 10_000
    out["U1.A"] = 100_000
    return out


def test_note_prints_the_dac_bias_term_as_rf_with_its_bound():
    # 4-bit DAC: every coefficient's denominator has 76 monomials. With the nominal
    # values the note shows the bias term as Rf·Ib (KCL at the virtual ground) marked
    # with its bound, says how long the exact form is, and the budget is unaffected.
    c = r2r_dac(4)
    res = c.analyze("out")
    text = opsym.design_note(res, fmt="markdown", nominal=_dac_nominal(c))
    assert r"\approx{}" in text
    assert r"R_{f}\, I_{\mathrm{B},\mathrm{U1}} \quad \text{(dropped terms $\le$" in text
    assert "U1.Ib: the exact coefficient has about 21 monomials over 76 monomials" in text
    # the MSB's weight at these values: −Rf/(2R)·(1 − about 1/(A·β)), its value printed
    # to six digits where the dominant form is still long, or Rf/R2_3 with its bound
    assert r"\frac{R_{f}}{R_{23}}\, B_{3}" in text or "0.499" in text


def test_note_without_values_prints_as_before():
    c = r2r_dac(4)
    res = c.analyze("out")
    text = opsym.design_note(res, fmt="markdown")
    assert "dropped terms" not in text and "too long to print (their sizes" not in text


def test_note_of_a_short_result_is_unchanged_by_values():
    c = opsym.Circuit("follower")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", gain="finite")
    res = c.analyze("out")
    nominal = {"R1": 1000, "R2": 9000, "U1.A": 100_000}
    assert opsym.design_note(res, fmt="markdown", nominal=nominal, date="2026-01-01") == \
        opsym.design_note(res, fmt="markdown", date="2026-01-01")


def test_note_with_dominant_terms_compiles(tmp_path, pdflatex):
    c = r2r_dac(4)
    tex = opsym.design_note(c.analyze("out"), nominal=_dac_nominal(c), standalone=True)
    (tmp_path / "note.tex").write_text(tex, encoding="utf-8")
    assert pdflatex(tmp_path, "note.tex").exists()


def test_a_sum_of_fractions_is_brought_over_one_denominator_first():
    # Rx·(1 − A/(A + 1)) = Rx/(A + 1) exactly (algebra); the dominant form of a
    # coefficient written as a sum of fractions is taken of that one fraction.
    rx, a = sp.symbols("Rx1 U1.A", positive=True)
    d = dominant_form(-rx * a / (a + 1) + rx, {rx: 100, a: 1000}, error=0.001)
    assert sp.simplify(d.expression - rx / (a + 1)) == 0 and d.bound == 0
