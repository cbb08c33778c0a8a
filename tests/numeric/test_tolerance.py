"""Tolerance studies (opsym.study.tolerance): corners, first-order bound, Monte Carlo."""

import math

import numpy as np
import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import opsym
from opsym.errors import BudgetError
from opsym.numeric.params import ResistorParams
from opsym.study.tolerance import (
    corner_values,
    first_order_bound,
    monte_carlo,
    tolerance_analysis,
)

R1, R2, R3, R4 = sp.symbols("R1 R2 R3 R4", positive=True)


def _non_inverting():
    c = opsym.Circuit("G = 10")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", bias=False, offset=False)
    return c.analyze("out")


def test_gain_tolerance_exact_corners():
    # G = 1 + R2/R1 = 10 (1 kΩ, 9 kΩ), t = 1 %: exact worst case +1.818 % / −1.782 %;
    # S(G,R2) = −S(G,R1) = (G − 1)/G. Source: reference-checks §11 [derived]; sensitivity
    # definition as in Franco, filter chapters [mem]
    study = tolerance_analysis(_non_inverting(), {"R1": "1k", "R2": "9k"},
                               ResistorParams(0.01), samples=4000, seed=11)  # fmt: skip
    assert study.method == "corners"
    assert study.high / study.nominal - 1 == pytest.approx(0.018182, abs=5e-6)
    assert study.low / study.nominal - 1 == pytest.approx(-0.017822, abs=5e-6)
    # first-order: each part contributes |S|·G·t = 0.9·10·0.01
    assert study.bound_shares == pytest.approx({"R1": 0.09, "R2": 0.09})
    assert study.corner_low <= study.mc.low and study.mc.high <= study.corner_high
    assert "corners" in study.to_markdown() and r"\toprule" in study.to_latex()


def test_difference_amplifier_cmrr_from_tolerance():
    # R1 = R3 = 2 kΩ, R2 = R4 = 200 kΩ, 1 % parts: CMRR ≈ (1 + K)/(4t) ≈ 68 dB, exact corner
    # 68.04 dB. Source: Sedra & Smith, Microelectronic Circuits 6th ed., §2.4 and
    # exercise 2.15 [pub]
    c = opsym.Circuit("difference amplifier")
    c.voltage_source("V1", "a", "0")
    c.voltage_source("V2", "b", "0")
    c.resistor("R1", "a", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "b", "p")
    c.resistor("R4", "p", "0")
    c.opamp("U1", plus="p", minus="n", out="out", bias=False, offset=False)
    res = c.analyze("out")
    g1, g2 = res.coefficient("V1"), res.coefficient("V2")
    acm, ad = g1 + g2, (g2 - g1) / 2
    values = {"R1": 2e3, "R3": 2e3, "R2": 200e3, "R4": 200e3}
    parts, signs, table = corner_values([ad, acm], values, ResistorParams(0.01))
    assert parts == ("R1", "R2", "R3", "R4") and signs.shape == (16, 4)
    cmrr_db = -20 * np.log10(np.max(np.abs(table[1] / table[0])))  # Acm = 0 at some corners
    assert cmrr_db == pytest.approx(68.04, abs=0.005)
    assert np.max(np.abs(table[1])) == pytest.approx(0.04, rel=0.05)  # worst Acm ≈ 0.04 V/V
    assert 20 * math.log10(101 / 0.04) == pytest.approx(cmrr_db, abs=0.02)  # (1 + K)/(4t)
    # Source: same, +9.009 mV for R4 = 101 kΩ, R1 = R3 = 10 kΩ, R2 = 100 kΩ, Vcm = 1 V
    vcm = acm.subs({R1: 10e3, R3: 10e3, R2: 100e3, R4: 101e3})
    assert float(vcm) == pytest.approx(9.009e-3, rel=1e-3)


def test_first_order_bound_beyond_corner_limit():
    parts = sp.symbols("Ra:n", positive=True)  # 14 parts (a…n): over the default corner limit
    expr = sum(parts) / parts[0]
    values = {p.name: 1e3 for p in parts}
    study = tolerance_analysis(expr, values, ResistorParams(0.001), samples=500, seed=2)
    assert study.method == "first-order bound" and study.corner_low is None
    y0, dy, _ = first_order_bound(expr, values, ResistorParams(0.001))
    assert study.low == pytest.approx(y0 - dy) and study.high == pytest.approx(y0 + dy)
    with pytest.raises(BudgetError, match="2\\^14"):
        corner_values(expr, values, ResistorParams(0.001))


def test_monte_carlo_is_seedable_and_normal_is_clipped():
    args = (R2 / R1, {"R1": 1e3, "R2": 1e3}, {"R1": 0.01, "R2": 0.01})
    a = monte_carlo(*args, samples=300, seed=5)
    b = monte_carlo(*args, samples=300, seed=5)
    assert np.array_equal(a.samples, b.samples)
    n = monte_carlo(*args, samples=3000, seed=5, distribution="normal")
    assert 0.99 / 1.01 <= n.low and n.high <= 1.01 / 0.99
    assert not a.samples.flags.writeable
    with pytest.raises(BudgetError, match="distribution"):
        monte_carlo(*args, distribution="triangular")


def test_errors_name_missing_values():
    with pytest.raises(BudgetError, match="R2"):
        tolerance_analysis(R2 / R1, {"R1": 1}, {"R1": 0.01})
    with pytest.raises(BudgetError, match="tolerance of R1"):
        tolerance_analysis(R2 / R1, {"R1": 1, "R2": 1}, {"R1": 2})


_resistor = st.floats(min_value=10.0, max_value=1e6, allow_nan=False)
_tol = st.sampled_from([0.0001, 0.001, 0.01, 0.05])
_QUANTITIES = [
    1 + R2 / R1,  # non-inverting gain
    -R2 / R1,  # inverting gain
    (R1 * R4 - R2 * R3) / (R1 * (R3 + R4)),  # difference-amp common-mode gain
    R4 / (R3 + R4) * (1 + R2 / R1),  # difference-amp + input gain
]


@settings(max_examples=30, deadline=None)
@given(
    st.sampled_from(range(len(_QUANTITIES))),
    st.lists(_resistor, min_size=4, max_size=4),
    st.lists(_tol, min_size=4, max_size=4),
    st.integers(min_value=0, max_value=2**31),
)
def test_corners_bound_every_monte_carlo_sample(which, rs, ts, seed):
    # Each quantity is linear-fractional in every resistor, hence monotone in each over the
    # tolerance box, so its extremes lie on corners [derived].
    expr = _QUANTITIES[which]
    values = dict(zip(("R1", "R2", "R3", "R4"), rs, strict=True))
    tols = dict(zip(("R1", "R2", "R3", "R4"), ts, strict=True))
    _, _, table = corner_values(expr, values, tols)
    mc = monte_carlo(expr, values, tols, samples=200, seed=seed)
    span = np.max(table) - np.min(table)
    slack = 1e-9 * max(span, abs(np.max(table)), 1e-300)
    assert np.min(table) - slack <= mc.low and mc.high <= np.max(table) + slack
