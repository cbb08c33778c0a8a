"""LaTeX of s-domain results: H(s) as gain over zeros and poles (opsym.output.laplace, latex)."""

from __future__ import annotations

import math
import os
import re

import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import opsym
from opsym.model.symbols import LAPLACE as s
from opsym.model.symbols import opamp_symbol
from opsym.output.laplace import hertz_latex, number_latex, transfer_parts, transfer_terms
from opsym.output.latex import result_latex, transfer_latex

SCALE = int(os.environ.get("OPSYM_HYPOTHESIS_SCALE", "1"))
PREFIX = {"T": 1e12, "G": 1e9, "M": 1e6, "k": 1e3, "": 1.0, "m": 1e-3, "n": 1e-9, "p": 1e-12}
HERTZ = re.compile(r"2\\pi \\cdot ([\d.]+)\\,(\\mu)?\\mathrm\{([TGMkmnp]?)Hz\}")


def hertz_values(text: str) -> list[float]:
    """Every frequency printed as ``2\\pi \\cdot 272.74\\,\\mathrm{kHz}``, in Hz."""
    return [
        float(number) * (1e-6 if mu else PREFIX[prefix])
        for number, mu, prefix in HERTZ.findall(text)
    ]


# -- the inverting stage with a single-pole op-amp --------------------------------------


def test_single_pole_stage_reads_as_gain_over_one_pole(inverting):
    text = transfer_latex(inverting)
    assert text.startswith(r"H(s) = \frac{V_{\mathrm{out}}}{V_{\mathrm{in}}} = ")
    # Closed-loop gain a/(1 + a·beta) with a = A0 = 200 000, beta = 1/11: -10·200000/200011
    # (Franco, Design with Operational Amplifiers, ch. 1 [from memory]; reference case 5).
    assert "-9.99945" in text and text.endswith("H(0) = -9.99945")
    # Closed-loop pole GBW·(beta + 1/A0) = 272.742 kHz, about GBW/NG (Franco ch. 6; Sedra &
    # Smith 6th ed. §2.8 [from memory]): one pole, printed in hertz.
    (f_pole,) = hertz_values(text)
    assert math.isclose(f_pole, 3e6 * (1 / 11 + 1 / 200e3), rel_tol=1e-5)
    # No exact fractions and no float residue: no run of six or more digits.
    assert not re.search(r"\d{7,}", text)
    assert "200011" not in text and "pi" not in text.replace(r"\pi", "")


def test_symbolic_stage_keeps_the_symbols_and_the_dc_gain(inverting_symbolic):
    text = transfer_latex(inverting_symbolic)
    for name in ("R_{1}", "R_{2}", r"A_{0,\mathrm{U1}}", r"\mathrm{GBW}_{\mathrm{U1}}"):
        assert name in text
    parts = transfer_parts(inverting_symbolic.coefficient("Vin"))
    R1, R2 = sp.symbols("R1 R2", positive=True)
    A0, GBW = opamp_symbol("U1", "A0"), opamp_symbol("U1", "GBW")
    # Inverting gain with finite A: -A·R2/(A·R1 + R1 + R2) (reference case 5/7; Franco ch. 1).
    assert sp.simplify(parts.gain - (-A0 * R2 / (A0 * R1 + R1 + R2))) == 0
    assert parts.order == 0 and parts.numerator == 1
    # One pole at GBW·(beta + 1/A0), beta = R1/(R1 + R2) [derived from the single-pole model].
    f_pole = GBW * (R1 / (R1 + R2) + 1 / A0)
    assert sp.simplify(parts.denominator - (1 + s / (2 * sp.pi * f_pole))) == 0
    assert r"H(0) = - \frac{R_{2} A_{0,\mathrm{U1}}}" in text


def test_result_latex_puts_each_source_on_its_own_line(inverting):
    text = inverting.latex()
    lines = text.splitlines()[1:-1]
    assert lines[0].startswith(r"V_{\mathrm{out}} ={} & - 9.99945")
    assert lines[0].endswith(r"V_{\mathrm{in}} \\")
    # Vos sees the noise gain 1 + R2/R1 = 11, times a0·beta/(1 + a0·beta) (reference case 1).
    assert lines[1].startswith(r" & + 10.9994 \cdot")
    assert r"V_{\mathrm{OS},\mathrm{U1}}" in lines[1]
    nonzero = [i for i in inverting.sources if inverting.coefficient(i.symbol) != 0]
    assert len(lines) == len(nonzero)
    assert result_latex(inverting) == text


def test_dc_results_print_as_before():
    c = opsym.Circuit()
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    text = c.analyze("out").latex()
    # Inverting gain -R2/R1, Vos times the noise gain (reference case 1).
    assert r"- \frac{R_{2}}{R_{1}}\, V_{\mathrm{in}}" in text
    assert r"\left(1 + \frac{R_{2}}{R_{1}}\right)\, V_{\mathrm{OS},\mathrm{U1}}" in text


# -- other shapes: pole pairs, integrators, high-pass ---------------------------------


def _buffered(build) -> opsym.Result:
    c = opsym.Circuit("buffered network")
    c.voltage_source("Vin", "in", "0")
    build(c)
    c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    return c.analyze("out", domain="s")


def test_series_rlc_prints_its_natural_frequency_and_q():
    # Series RLC, output across C: f0 = 1/(2π√(LC)), Q = (1/R)·√(L/C)
    # (standard second-order low-pass; Sedra & Smith 6th ed., ch. 17 [from memory]).
    def build(c):
        c.resistor("R1", "in", "a", value="100")
        c.inductor("L1", "a", "p", "10m")
        c.capacitor("C1", "p", "0", value="100n")

    text = transfer_latex(_buffered(build))
    f0 = 1 / (2 * math.pi * math.sqrt(10e-3 * 100e-9))
    q = math.sqrt(10e-3 / 100e-9) / 100
    printed = hertz_values(text)
    assert len(printed) == 2  # in the s/(Q·ω0) term and the (s/ω0)² term
    assert all(math.isclose(f, f0, rel_tol=1e-4) for f in printed)
    assert rf"\frac{{s}}{{{q:.4g} \cdot 2\pi" in text
    assert r"\right)^{2}" in text and text.endswith("H(0) = 1")


def test_integrator_and_high_pass_report_their_dc_gain():
    c = opsym.Circuit("integrator")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n", value="10k")
    c.capacitor("C1", "n", "out", value="10n")
    c.opamp("U1", plus="0", minus="n", out="out")
    text = transfer_latex(c.analyze("out", domain="s"))
    # Ideal integrator -1/(sRC), RC = 100 µs (Sedra & Smith §2.8 [from memory]).
    assert r"= -10000 \cdot \frac{1}{s}" in text and r"\left|H(0)\right| \to \infty" in text

    def build(c):
        c.capacitor("C1", "in", "p", value="100n")
        c.resistor("R1", "p", "0", value="10k")

    text = transfer_latex(_buffered(build))
    # First-order high-pass sRC/(1 + sRC): zero at DC, corner 1/(2πRC) = 159.15 Hz.
    assert r"0.001 \cdot \frac{s}{1 + \frac{s}{2\pi \cdot 159.15\,\mathrm{Hz}}}" in text
    assert text.endswith("H(0) = 0")


def test_number_and_frequency_formatting():
    assert number_latex(sp.Rational(-2000000, 200011)) == "-9.99945"
    assert number_latex(sp.Integer(12)) == "12"
    assert number_latex(2.2e-12) == r"2.2 \cdot 10^{-12}"
    assert hertz_latex(272742.27) == r"272.74\,\mathrm{kHz}"
    assert hertz_latex(5e-7) == r"500\,\mathrm{nHz}"


@settings(max_examples=40 * SCALE, deadline=None)
@given(
    gain=st.floats(1e-3, 1e6),
    negative=st.booleans(),
    f1=st.floats(1.0, 1e8),
    ratio=st.floats(1.5, 1e6),
)
def test_numeric_gain_and_poles_read_back(gain, negative, f1, ratio):
    # Two real poles f1 < f2: the printed gain and frequencies give back the numbers to
    # the printed digits (6 for the gain, 5 for frequencies) [derived].
    f2 = f1 * ratio
    k = sp.Rational(repr(-gain if negative else gain))  # exact, as values= gives them
    poles = [sp.Rational(repr(f)) for f in (f1, f2)]
    expr = k / sp.Mul(*[1 + s / (2 * sp.pi * f) for f in poles])
    sign, body = transfer_terms(expr, {})
    assert sign == ("-" if negative else "+")
    if body.startswith(r"\frac"):  # a gain of 1 to six digits is left out
        assert math.isclose(gain, 1.0, rel_tol=1e-5)
    else:
        head = body.split(r" \cdot \frac")[0]
        mantissa = head.replace(r" \cdot 10^{", "e").rstrip("}")
        assert math.isclose(float(mantissa), gain, rel_tol=1e-5)
    printed = hertz_values(body)
    assert len(printed) == 2
    assert math.isclose(printed[0], f1, rel_tol=1e-4)
    assert math.isclose(printed[1], f2, rel_tol=1e-4)


@settings(max_examples=40 * SCALE, deadline=None)
@given(f0=st.floats(1.0, 1e9), q=st.floats(0.55, 50.0))
def test_pole_pair_reads_back(f0, q):
    # Second-order section 1 + s/(Q·ω0) + (s/ω0)², complex poles for Q > 1/2 (standard
    # biquad form; Sedra & Smith 6th ed., ch. 17 [from memory]): Q and f0 read back [derived].
    w0 = 2 * sp.pi * sp.Rational(repr(f0))
    q_exact = sp.Rational(repr(q))
    _, body = transfer_terms(1 / (1 + s / (q_exact * w0) + s**2 / w0**2), {})
    printed_q = re.search(r"\\frac\{s\}\{([\d.]+) \\cdot 2\\pi", body)
    assert printed_q and math.isclose(float(printed_q.group(1)), q, rel_tol=1e-3)
    printed_f = hertz_values(body)
    assert len(printed_f) == 2 and all(math.isclose(f, f0, rel_tol=1e-4) for f in printed_f)


def test_repeated_poles_print_once_with_a_power():
    # Three equal RC sections (buffered): 1/(1 + sRC)³, corner 1/(2πRC) [derived].
    rc = sp.Rational(1, 1000)
    _, body = transfer_terms(1 / (1 + s * rc) ** 3, {})
    assert body == r"\frac{1}{\left(1 + \frac{s}{2\pi \cdot 159.15\,\mathrm{Hz}}\right)^{3}}"
    _, body = transfer_terms(1 / ((1 + s * rc) ** 2 * (1 + s / 7)), {})
    assert body.count(r"\left(1 + ") == 2 and body.endswith(r"\right)^{2}}")
