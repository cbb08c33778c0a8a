"""Noise of a branch-current output ``I(name)``: densities in A/√Hz.

Independent expectations: the Johnson–Nyquist current density √(4kT/R) (J. B.
Johnson and H. Nyquist, Phys. Rev. 32, 1928), KVL round a loop, and KCL at a
virtual ground. k is the SI value 1.380649e-23 J/K (exact since 2019).
"""

from __future__ import annotations

import math

import pytest
import sympy as sp

import opsym
from opsym.output import figures
from opsym.output.noise import noise_latex

K_B = 1.380649e-23
T = 298.15  # 25 °C, opsym's default


def test_loop_current_of_a_divider_takes_both_resistors_equally():
    # KVL: the same current flows in R1 and R2, i = (e1 + e2)/(R1 + R2); each
    # resistor's own noise counts in full, not only through its node voltages.
    c = opsym.Circuit("divider")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "m")
    c.resistor("R2", "m", "0")
    R1, R2 = sp.symbols("R1 R2", positive=True)
    for out in ("I(R1)", "I(R2)"):
        n = c.noise(out)
        assert n.output_unit == "A"
        assert sp.simplify(n.transfer("R1") - 1 / (R1 + R2)) == 0
        assert sp.simplify(n.transfer("R2") - 1 / (R1 + R2)) == 0


def test_feedback_resistor_current_of_an_inverting_stage():
    # KCL at the virtual ground: I(R2) = (Vin − V(n))/R1, whatever R2 and its noise,
    # so its density is √(4kT/R1) (Johnson–Nyquist) plus en/R1 from the op-amp.
    c = opsym.Circuit("inverting")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n", "10k")
    c.resistor("R2", "n", "out", "100k")
    c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    n = c.noise("I(R2)", values={"U1.en": "10n", "U1.in": "0"})
    assert n.transfer("R2") == 0
    expected = math.sqrt(4 * K_B * T / 10e3 + (10e-9 / 10e3) ** 2)
    assert float(n.density(1e3)) == pytest.approx(expected, rel=1e-12)
    budget = n.budget(10, 1e4)
    assert budget.output_unit == "A"
    assert budget.total == pytest.approx(expected * math.sqrt(1e4 - 10), rel=1e-9)
    text = budget.to_text()
    assert "pA rms" in text and " V rms" not in text.split("referred to the input")[0]
    assert noise_latex(n).startswith("\\begin{aligned}\ni_{\\mathrm{out}}^{2}(f)")
    assert "\\frac{I_{\\mathrm{R2}}}{e_{\\mathrm{n},\\mathrm{R1}}}" in noise_latex(n)
    pytest.importorskip("matplotlib")
    fig = figures.noise_density_chart(n, f_start=10, f_stop=1e4)
    label = fig.axes[0].yaxis.get_major_formatter()(1e-12, 0)
    assert label.endswith("A/√Hz")
