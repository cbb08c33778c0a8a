"""Band integrals of noise that hold for resonant responses, against published results.

The series RLC is the test bed: the thermal noise of R seen across C integrates
to kT/C whatever R, L and the Q; a fixed integration grid under-resolves the
resonance once Q reaches about 100. Every reference is outside opsym: a
published formula, or an antiderivative derived by hand below (partial
fractions in ``x² = (f/f0)²``), itself checked against the published kT/C.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
import sympy as sp

import opsym
from opsym.model.symbols import LAPLACE as s
from opsym.numeric._quadrature import GAUSS_WEIGHTS, KRONROD_WEIGHTS, NODES
from opsym.numeric.frequency import (
    evaluator,
    integrate_with_error,
    natural_frequencies,
    noise_bandwidth,
)

K_BOLTZMANN = 1.380649e-23  # J/K, exact (SI 2019)
T_KELVIN = 298.15
L_VALUE, C_VALUE = 1e-3, 1e-9  # invented values: f0 ≈ 159.155 kHz
F0 = 1 / (2 * math.pi * math.sqrt(L_VALUE * C_VALUE))
QS = [0.5, 0.7, 2.0, 20.0, 100.0, 300.0, 1000.0, 1e4]


def series_rlc(q: float, driven: bool = False) -> opsym.NoiseResult:
    """R, L and C in series, output across C; ``driven`` puts a follower's en in front."""
    c = opsym.Circuit(f"series RLC, Q = {q:g}")
    values = {"R1": math.sqrt(L_VALUE / C_VALUE) / q, "L1": L_VALUE, "C1": C_VALUE}
    if driven:
        c.voltage_source("Vin", "p", "0", value=0)
        c.opamp("U1", plus="p", minus="o", out="o", bias=False)
        values.update({"U1.en": "10n", "U1.in": 0, "U1.fce": "1k"})
        c.resistor("R1", "o", "a")
    else:
        c.resistor("R1", "0", "a")
    c.inductor("L1", "a", "b")
    c.capacitor("C1", "b", "0")
    return c.noise("b", values=values)


# -- Hand-derived antiderivatives for |H|² = 1/((1 − x²)² + (x/Q)²), x = f/f0 ----------
# With y = x² the denominator is y² − b·y + 1, b = 2 − 1/Q², whose roots r, r̄ lie on
# the unit circle (Q > 1/2): r = b/2 + j·a, a = √(4 − 1/Q²)/(2Q).


def _b_and_a(q: float) -> tuple[float, float]:
    return 2 - 1 / q**2, math.sqrt(4 - 1 / q**2) / (2 * q)


def white_antiderivative(x: float, q: float) -> float:
    """∫ dx/((1 − x²)² + (x/Q)²) for x > 0: (1/a)·Im[ln((x − √r)/(x + √r))/(2√r)] [derived]."""
    b, a = _b_and_a(q)
    w = cmath.sqrt(complex(b / 2, a))
    if x == 0:  # the limit x → 0+: the logarithm tends to −jπ
        return (-1j * math.pi / (2 * w)).imag / a
    if math.isinf(x):
        return 0.0
    return (cmath.log((x - w) / (x + w)) / (2 * w)).imag / a


def flicker_antiderivative(x: float, q: float) -> float:
    """∫ dx/(x·((1 − x²)² + (x/Q)²)) for x > 0, by partial fractions in y = x² [derived]:
    ½·[ln y − ½·ln P(y) + (b/2a)·atan((y − b/2)/a)], P(y) = (1 − y)² + y/Q².
    """
    b, a = _b_and_a(q)
    if math.isinf(x):
        return 0.5 * (b / (2 * a)) * (math.pi / 2)
    y = x * x
    p = (1 - y) ** 2 + y / q**2
    return 0.5 * (math.log(y) - 0.5 * math.log(p) + b / (2 * a) * math.atan((y - b / 2) / a))


def test_hand_antiderivative_gives_the_published_noise_bandwidth():
    # The reference itself: ∫0^∞ |H|² df = (π/2)·Q·f0 (= 1/(4RC), i.e. kT/C), Q > 1/2.
    for q in QS[1:]:
        whole = white_antiderivative(math.inf, q) - white_antiderivative(0.0, q)
        assert whole == pytest.approx(math.pi / 2 * q, rel=1e-12)


# -- kT/C --------------------------------------------------------------------------------


@pytest.mark.parametrize("q", QS)
def test_kt_over_c_for_any_q(q):
    # kT/C: the thermal noise of any resistance R filtered by the capacitance C it sees
    # integrates to v² = kT/C, independent of R (and of L in a series RLC).
    # Johnson–Nyquist; Sarpeshkar, Delbrück & Mead, "White noise in MOS transistors and
    # resistors", IEEE Circuits & Devices Magazine, 1993 [mem].
    n = series_rlc(q)
    value, error = n.rms_with_error(0, math.inf)
    want = math.sqrt(K_BOLTZMANN * T_KELVIN / C_VALUE)
    assert value == pytest.approx(want, rel=1e-6)
    assert n.rms(0, math.inf) == value
    # The error estimate is honest: the true error is within it (or at rounding level).
    assert abs(value - want) <= max(error, 1e-12 * want)
    assert error <= 1e-8 * want


@pytest.mark.parametrize("q", QS[1:])
def test_thermal_noise_of_a_resonance_over_a_finite_band(q):
    # A band holding the peak, f0/3 … 2·f0: 4kTR·f0·∫|H|² dx from the hand antiderivative,
    # whose 0 … ∞ value is kT/C above.
    n = series_rlc(q)
    r = math.sqrt(L_VALUE / C_VALUE) / q
    x1, x2 = 1 / 3, 2.0
    part = white_antiderivative(x2, q) - white_antiderivative(x1, q)
    want = math.sqrt(4 * K_BOLTZMANN * T_KELVIN * r * F0 * part)
    assert n.rms(F0 * x1, F0 * x2) == pytest.approx(want, rel=1e-6)


@pytest.mark.parametrize("q", QS[1:])
@pytest.mark.parametrize("band", [(1 / 50, 3.0), (1 / 50, math.inf)])
def test_flicker_noise_through_a_resonance(q, band):
    # en²·(1 + fc/f) through H = 1/(1 + s·RC + s²·LC):
    # ∫ = en²·[f0·∫|H|² dx + fc·∫|H|²/x dx], both from the hand antiderivatives [derived];
    # the 1/f integral of a flat response is Motchenbacher & Connelly, ch. 1 [mem].
    n = series_rlc(q, driven=True)
    en, fc = 10e-9, 1e3
    x1, x2 = band
    white = white_antiderivative(x2, q) - white_antiderivative(x1, q)
    flicker = flicker_antiderivative(x2, q) - flicker_antiderivative(x1, q)
    want = en * math.sqrt(F0 * white + fc * flicker)
    value, error = n.rms_with_error(F0 * x1, F0 * x2, "U1.en")
    assert value == pytest.approx(want, rel=1e-6)
    assert error <= 1e-8 * want


def test_budget_states_its_accuracy():
    n = series_rlc(1000.0)
    budget = n.budget(0, math.inf)
    want = math.sqrt(K_BOLTZMANN * T_KELVIN / C_VALUE)  # kT/C, as above
    assert budget.total == pytest.approx(want, rel=1e-6)
    assert budget.total_error is not None and 0 <= budget.total_error <= 1e-8 * want
    assert "estimated error of the total" in budget.to_text()


# -- Noise bandwidth of a resonator --------------------------------------------------------


@pytest.mark.parametrize("q", [1.0, 10.0, 1e3, 1e4])
def test_noise_bandwidth_of_a_second_order_band_pass(q):
    # A single-tuned (second-order band-pass) response has a noise bandwidth of
    # (π/2)·(f0/Q), π/2 times its −3 dB bandwidth, referred to the peak gain.
    # Motchenbacher & Connelly, Low-Noise Electronic System Design (1993), ch. 1 [mem].
    f0 = 1e4
    w0 = 2 * sp.pi * f0
    expr = (s / (q * w0)) / (1 + s / (q * w0) + (s / w0) ** 2)
    breaks = natural_frequencies(expr)
    assert breaks == pytest.approx([f0], rel=1e-9)
    enbw = noise_bandwidth(evaluator(expr, "H"), reference=f0, breakpoints=breaks)
    assert enbw == pytest.approx(math.pi / 2 * f0 / q, rel=1e-8)


# -- The quadrature itself ------------------------------------------------------------------


def test_gauss_kronrod_tables():
    # G7 nodes and weights are Gauss–Legendre (NumPy's leggauss); K15 is exact for
    # polynomials up to degree 3·7 + 1 = 22 (Kronrod 1965; QUADPACK, Piessens et al.
    # 1983 [mem]).
    x, w = np.polynomial.legendre.leggauss(7)
    assert NODES[1::2] == pytest.approx(x, abs=1e-15)
    assert GAUSS_WEIGHTS == pytest.approx(w, abs=1e-15)
    for k in range(23):
        exact = 2 / (k + 1) if k % 2 == 0 else 0.0
        assert KRONROD_WEIGHTS @ NODES**k == pytest.approx(exact, abs=1e-14)


def test_integral_of_a_lorentzian_without_break_points():
    # ∫0^∞ df / (1 + ((f − f0)/γ)²) = γ·(π/2 + atan(f0/γ)) [calculus]; a narrow line
    # (γ = f0/10⁵) found by the refinement alone.
    f0, gamma = 1e4, 0.1
    value, error = integrate_with_error(lambda f: 1 / (1 + ((f - f0) / gamma) ** 2), 0, 1e6)
    want = gamma * (math.atan((1e6 - f0) / gamma) + math.atan(f0 / gamma))
    assert value == pytest.approx(want, rel=1e-8)
    assert error < 1e-8 * want


def test_natural_frequencies_fall_back_quietly():
    # Break points are a help: a factor too high in degree or not rational gives none.
    assert natural_frequencies(1 / sp.expand((1 + s) ** 30)) == ()
    assert natural_frequencies(sp.exp(-s)) == ()
    assert natural_frequencies(1 / (1 + s / (2 * sp.pi * 50))) == pytest.approx([50.0])


def test_input_referred_noise_across_a_notch_is_refused():
    # A parallel L‖C in series with the signal blocks it at f0 = 1/(2π√(LC)) ≈ 159 kHz
    # (an ideal tank's impedance is infinite at resonance [circuit theory]): referred to
    # the input, the noise is unbounded there, so no number is given for a band holding
    # f0; below f0 the gain only dips and the figure stands.
    c = opsym.Circuit("tank in series")
    c.voltage_source("Vin", "in", "0")
    c.inductor("L1", "in", "out", value="1m")
    c.capacitor("C1", "in", "out", value="1n")
    c.resistor("R1", "out", "0", value="1k")
    n = c.noise("out")
    with pytest.raises(opsym.BudgetError, match="falls to"):
        n.input_rms(1e3, 1e6)
    assert n.budget(1e3, 1e6).input_rms is None
    assert n.input_rms(1e3, 1e5) > 0


def test_an_integral_that_does_not_converge_warns():
    # ∫ df/(f − 100)² over 50…150 Hz diverges [calculus]: the estimate never settles.
    from opsym.numeric.frequency import IntegrationWarning

    with pytest.warns(IntegrationWarning, match="estimated relative error"):
        integrate_with_error(lambda f: 1 / (f - 100.0) ** 2, 50, 150)
