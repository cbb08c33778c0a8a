"""Transfer-function export: coefficients, poles, step response, settling time, SciPy.

Sources, each named beside its check:
- first-order step 1 − e^(−t/τ), settling to 0.1 % at τ·ln(1000) = 6.91·τ [textbook];
- second-order overshoot exp(−π·ζ/√(1 − ζ²)) at t_p = π/(ω0·√(1 − ζ²))
  (Ogata, "Modern Control Engineering", ch. 5 [from memory]);
- unity-gain Sallen–Key low-pass: ω0 = 1/√(R1·R2·C1·C2),
  Q = √(R1·R2·C1·C2)/(C2·(R1 + R2)) (C1 the feedback capacitor; Sedra & Smith,
  "Microelectronic Circuits", active-filter chapter [from memory]).
"""

from __future__ import annotations

import math
import sys

import numpy as np
import pytest

import opsym

TAU = 1e-3  # R·C = 10 kΩ · 100 nF


def _rc():
    c = opsym.Circuit("RC low-pass")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "p", value="10k")
    c.capacitor("C1", "p", "0", value="100n")
    c.opamp("U1", plus="p", minus="out", out="out")
    return c


R, C1, C2 = 10e3, 22e-9, 2.2e-9  # invented: Q = ½·√(C1/C2) = 1.581


def _sallen_key(symbolic: bool = False):
    c = opsym.Circuit("Sallen-Key low-pass")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "a", value=None if symbolic else "10k")
    c.resistor("R2", "a", "p", value=None if symbolic else "10k")
    c.capacitor("C1", "a", "out", value=None if symbolic else "22n")
    c.capacitor("C2", "p", "0", value=None if symbolic else "2.2n")
    c.opamp("U1", plus="p", minus="out", out="out")
    return c.analyze("out", domain="s")


def test_first_order_coefficients_step_and_settling():
    h = opsym.transfer_function(_rc().analyze("out", domain="s"))
    assert np.allclose(h.numerator, [1 / TAU], rtol=1e-15)  # highest power first
    assert np.allclose(h.denominator, [1, 1 / TAU], rtol=1e-15)
    assert np.allclose(h.poles, [-1 / TAU], rtol=1e-15)
    assert h.zeros.size == 0 and h.dc_gain == 1.0
    t = np.linspace(0, 8 * TAU, 41)
    assert np.allclose(h.step_response(t), 1 - np.exp(-t / TAU), rtol=0, atol=1e-13)  # [textbook]
    # settles to 0.1 % in τ·ln(1000) = 6.9078·τ [textbook]
    assert h.settling_time(0.001) == pytest.approx(TAU * math.log(1000), rel=1e-9)
    assert h.settling_time(0.01) == pytest.approx(TAU * math.log(100), rel=1e-9)


def test_sallen_key_poles_against_w0_and_q():
    h = opsym.transfer_function(_sallen_key())
    w0 = 1 / math.sqrt(R * R * C1 * C2)  # [Sedra & Smith, from memory]
    q = math.sqrt(R * R * C1 * C2) / (C2 * 2 * R)
    assert q == pytest.approx(0.5 * math.sqrt(10))
    expected = -w0 / (2 * q) + 1j * w0 * math.sqrt(1 - 1 / (4 * q * q)) * np.array([1, -1])
    assert np.allclose(np.sort_complex(h.poles), np.sort_complex(expected), rtol=1e-12)
    assert np.allclose(h.denominator, [1, w0 / q, w0**2], rtol=1e-12)
    assert h.zeros.size == 0 and h.dc_gain == pytest.approx(1.0, rel=1e-14)


def test_second_order_overshoot():
    h = opsym.transfer_function(_sallen_key())
    w0 = 1 / math.sqrt(R * R * C1 * C2)
    zeta = 1 / (2 * 0.5 * math.sqrt(10))
    t_peak = math.pi / (w0 * math.sqrt(1 - zeta**2))
    overshoot = math.exp(-math.pi * zeta / math.sqrt(1 - zeta**2))  # [Ogata, from memory]
    assert float(h.step_response(t_peak)) - 1 == pytest.approx(overshoot, rel=1e-10)
    t = np.linspace(0, 3 * t_peak, 3001)
    assert np.max(h.step_response(t)) - 1 == pytest.approx(overshoot, rel=1e-5)
    # the envelope 1 + e^(−ζω0t)/√(1−ζ²) bounds the error after t: settling within it
    ts = h.settling_time(0.001)
    bound = math.log(1 / (0.001 * math.sqrt(1 - zeta**2))) / (zeta * w0)  # envelope [Ogata]
    assert 0.8 * bound < ts <= bound * (1 + 1e-9)
    y = h.step_response(np.linspace(ts * (1 + 1e-9), 3 * ts, 4000))
    assert np.all(np.abs(y - 1) <= 0.001 * (1 + 1e-9))
    assert abs(float(h.step_response(ts)) - 1) == pytest.approx(0.001, rel=1e-6)


def test_scipy_lti_agrees():
    signal = pytest.importorskip("scipy.signal")
    h = opsym.transfer_function(_sallen_key())
    lti = h.to_lti()
    assert isinstance(lti, signal.lti)
    t = np.linspace(0, 2e-3, 201)
    _, y = lti.step(T=t)
    assert np.allclose(y, h.step_response(t), rtol=0, atol=1e-9)  # independent solver
    w, resp = lti.freqresp(w=np.array([1e3, 1e4, 1e5]))
    assert np.allclose(resp, h(1j * w), rtol=1e-12)
    assert np.allclose(np.sort_complex(lti.poles), np.sort_complex(h.poles), rtol=1e-12)


def test_missing_scipy_says_how_to_install(monkeypatch):
    monkeypatch.setitem(sys.modules, "scipy", None)
    h = opsym.transfer_function(_rc().analyze("out", domain="s"))
    with pytest.raises(opsym.MissingDependencyError, match="pip install scipy"):
        h.to_lti()


def test_refusals_name_what_to_do():
    with pytest.raises(opsym.InvalidValueError, match="domain='s'"):
        opsym.transfer_function(_rc().analyze("out"))
    with pytest.raises(opsym.InvalidValueError, match="C1, C2, R1, R2"):
        opsym.transfer_function(_sallen_key(symbolic=True))
    with pytest.raises(opsym.InvalidValueError, match="between 0 and 1"):
        opsym.transfer_function(_rc().analyze("out", domain="s")).settling_time(2)


def test_integrator_has_no_settling_time():
    c = opsym.Circuit("integrator")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n", value="10k")
    c.capacitor("C1", "n", "out", value="10n")
    c.opamp("U1", plus="0", minus="n", out="out")
    h = opsym.transfer_function(c.analyze("out", domain="s"))
    assert np.allclose(h.poles, [0])
    t = np.array([0.0, 1e-4, 1e-3])
    assert np.allclose(h.step_response(t), -t / 1e-4, rtol=1e-12)  # −t/(R·C) [textbook]
    with pytest.raises(opsym.NoSolutionError, match="no final value"):
        h.settling_time()


def test_critically_damped_double_pole():
    """Q = 0.5 (equal R, equal C): double pole at −1/τ; step 1 − (1 + t/τ)·e^(−t/τ) [textbook]."""
    c = opsym.Circuit("critically damped Sallen-Key")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "a", value="10k")
    c.resistor("R2", "a", "p", value="10k")
    c.capacitor("C1", "a", "out", value="10n")
    c.capacitor("C2", "p", "0", value="10n")
    c.opamp("U1", plus="p", minus="out", out="out")
    h = opsym.transfer_function(c.analyze("out", domain="s"))
    tau = 1e-4
    assert np.allclose(h.denominator, [1, 2 / tau, 1 / tau**2], rtol=1e-14)
    t = np.linspace(0, 12 * tau, 49)
    expected = 1 - (1 + t / tau) * np.exp(-t / tau)
    assert np.allclose(h.step_response(t), expected, rtol=0, atol=1e-12)
    # settling to 0.1 %: (1 + x)·e^(−x) = 0.001, solved here by Newton (independent)
    x = 9.0
    for _ in range(50):
        x -= ((1 + x) * math.exp(-x) - 0.001) / (-x * math.exp(-x))
    assert h.settling_time(0.001) == pytest.approx(x * tau, rel=1e-9)


def test_widely_spread_poles_to_rounding():
    """Poles at −1, −1e4, −1e8 rad/s: the step against its partial fractions [textbook]."""
    from opsym.numeric.lti import step_response

    poles = (1.0, 1e4, 1e8)
    t = np.array([1e-9, 1e-6, 1e-4, 1e-2, 1.0, 5.0])
    expected = np.ones_like(t)
    for i, p in enumerate(poles):
        r = np.prod([q / (q - p) for j, q in enumerate(poles) if j != i])
        expected -= r * np.exp(-p * t)
    den = np.poly([-p for p in poles])
    assert np.allclose(step_response([1e12], den, t), expected, rtol=0, atol=1e-14)
