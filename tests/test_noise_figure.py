"""Noise figure against source resistance, and the optimum source resistance.

NF(Rs) = 10·log10(1 + (en² + in²·Rs²)/(4kT·Rs)), least at Rs_opt = en/in with
NF_min = 10·log10(1 + en·in/(2kT)) (Motchenbacher & Connelly, "Low-Noise
Electronic System Design", ch. 2 [from memory]); k = 1.380649e-23 J/K exactly
(SI 2019). Op-amp densities are invented.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import opsym

K = 1.380649e-23
T = 298.15  # 25 °C
EN, IN = 6e-9, 0.5e-12  # invented: 6 nV/√Hz, 0.5 pA/√Hz → Rs_opt = 12 kΩ


def _formula(rs: float, en: float = EN, i_n: float = IN, t: float = T) -> float:
    return 10 * math.log10(1 + (en**2 + (i_n * rs) ** 2) / (4 * K * t * rs))


@pytest.mark.parametrize("rs", [100.0, 1e3, 12e3, 1e5, 1e6])
def test_formula(rs):
    assert opsym.noise_figure(rs, EN, IN) == pytest.approx(_formula(rs), rel=1e-12)


def test_optimum_and_minimum():
    rs_opt = opsym.optimum_source_resistance(EN, IN)
    assert rs_opt == pytest.approx(12e3, rel=1e-12)  # en/in [Motchenbacher & Connelly]
    nf_min = opsym.minimum_noise_figure(EN, IN)
    assert nf_min == pytest.approx(10 * math.log10(1 + EN * IN / (2 * K * T)), rel=1e-12)
    assert opsym.noise_figure(rs_opt, EN, IN) == pytest.approx(nf_min, rel=1e-12)
    grid = np.geomspace(1e2, 1e6, 2001)  # independent: the least NF on a fine grid
    best = grid[np.argmin([_formula(r) for r in grid])]
    assert best == pytest.approx(rs_opt, rel=0.01)


def test_text_values_and_temperature():
    assert opsym.noise_figure("12k", "6n", "0.5p") == pytest.approx(_formula(12e3), rel=1e-12)
    # 290 K, the reference of the standard noise figure [IRE/IEEE, from memory]
    nf = opsym.noise_figure(1e3, EN, IN, temperature=16.85)
    assert nf == pytest.approx(_formula(1e3, t=290.0), rel=1e-12)


def test_refusals():
    with pytest.raises(opsym.NoSolutionError, match="in_ > 0"):
        opsym.optimum_source_resistance(EN, 0)
    with pytest.raises(opsym.InvalidValueError, match="rs"):
        opsym.noise_figure(0, EN, IN)
    with pytest.raises(opsym.InvalidValueError, match="negative"):
        opsym.noise_figure(1e3, -EN, IN)


def _follower(rs: str, feedback: bool = False) -> opsym.NoiseResult:
    c = opsym.Circuit("follower")
    c.voltage_source("Vs", "s", "0")
    c.resistor("Rs", "s", "p", value=rs)
    if feedback:  # a gain of 2: R1 = R2 = 1 kΩ
        c.resistor("R1", "n", "0", value="1k")
        c.resistor("R2", "n", "out", value="1k")
        c.opamp("U1", plus="p", minus="n", out="out", bias=False)
    else:
        c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    return c.noise("out", values={"U1.en": EN, "U1.in": IN})


@pytest.mark.parametrize("rs", ["1k", "12k", "100k"])
def test_circuit_follower_is_the_formula(rs):
    """A follower: only en and in+ (through Rs) reach the output, so NF is the formula."""
    n = _follower(rs)
    r = opsym.parse_quantity(rs)
    f = np.array([10.0, 1e3, 1e5])
    assert np.allclose(opsym.circuit_noise_figure(n, "Rs", f=f), _formula(r), rtol=1e-9)
    band = opsym.circuit_noise_figure(n, "Rs", band=(10, 1e4))
    assert band == pytest.approx(_formula(r), rel=1e-6)  # white noise: band NF = spot NF


def test_circuit_resistors_add_noise():
    """Gain 2 with R1 = R2 = 1 kΩ: their noise adds 4kT·(R1‖R2) at the + pin [derived]."""
    n = _follower("12k", feedback=True)
    rs, rpar = 12e3, 500.0
    # referred to the + pin: en, in+·Rs, in-·(R1‖R2), thermal of Rs and of R1‖R2
    total = EN**2 + (IN * rs) ** 2 + (IN * rpar) ** 2 + 4 * K * T * (rs + rpar)
    expected = 10 * math.log10(total / (4 * K * T * rs))
    assert float(opsym.circuit_noise_figure(n, "Rs", f=1e3)) == pytest.approx(expected, rel=1e-9)
    assert expected > _formula(rs)


def test_circuit_refusals():
    n = _follower("1k")
    with pytest.raises(opsym.InvalidValueError, match="either f="):
        opsym.circuit_noise_figure(n, "Rs")
    with pytest.raises(opsym.InvalidValueError, match="resistor"):
        opsym.circuit_noise_figure(n, "Vs", f=1e3)
    with pytest.raises(opsym.UnknownNameError):
        opsym.circuit_noise_figure(n, "Rx", f=1e3)


def test_circuit_optimum_with_feedback_resistors():
    """NF ∝ (A + in²·Rs²)/Rs with A = en² + in²·Rp² + 4kT·Rp, least at Rs = √A/in [derived]."""
    c = opsym.Circuit("gain of two")
    c.voltage_source("Vs", "s", "0")
    c.resistor("Rs", "s", "p")
    c.resistor("R1", "n", "0", value="1k")
    c.resistor("R2", "n", "out", value="1k")
    c.opamp("U1", plus="p", minus="n", out="out", bias=False)
    n = c.noise("out", values={"U1.en": EN, "U1.in": IN})
    rp = 500.0
    a = EN**2 + (IN * rp) ** 2 + 4 * K * T * rp
    expected = math.sqrt(a) / IN
    found = opsym.circuit_optimum_source_resistance(n, "Rs", f=1e3)
    assert found == pytest.approx(expected, rel=1e-6)
    assert found > opsym.optimum_source_resistance(EN, IN)  # the resistors move it up
    with pytest.raises(opsym.NoSolutionError, match="bound"):
        opsym.circuit_optimum_source_resistance(n, "Rs", f=1e3, bounds=(1, 1e3))
    with pytest.raises(opsym.InvalidValueError, match="without a value"):
        opsym.circuit_optimum_source_resistance(_follower("1k"), "Rs", f=1e3)
