"""Loop gain, margins, peaking and Q against published formulas and hand analysis.

Sources (citations marked [mem] are from memory):

* Franco, *Design with Operational Amplifiers and Analog Integrated Circuits*,
  ch. 1: loop gain ``T = a·β`` with ``β = R1/(R1 + R2)`` for the inverting and
  non-inverting stages [mem]; ch. 8: phase margin ``φm = 180° + ∠T(fc)``, for a
  dominant pole with a second pole ``φm = 180° − 90° − atan(fc/f2)`` [mem].
* The standard second-order form ``s²/ω0² + s/(Q·ω0) + 1`` (any circuits or control
  text, e.g. Ogata, *Modern Control Engineering*, ch. 7 [mem]): resonant peak
  ``Mr = 1/(2ζ·√(1 − ζ²))``, ``ζ = 1/(2Q)``, i.e. ``Mr = Q²/√(Q² − 1/4)`` for
  ``Q > 1/√2``.
* Phase margin and Q of a loop ``T = ωt/(s·(1 + s/ω2))`` (integrator and one pole):
  ``Q = √(cos φm)/sin φm`` — Franco ch. 8 [mem]; derived again below.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
import sympy as sp

import opsym
from opsym import InvalidValueError
from opsym.equations.mna import INJECTIONS
from opsym.model.nonideal import NonIdeal
from opsym.model.symbols import LAPLACE as s
from opsym.model.symbols import SymbolSpec, opamp_symbol


def _stage(gain, *, follower=False, cin=None):
    c = opsym.Circuit()
    c.voltage_source("Vin", "in", "0")
    if follower:
        c.opamp("U1", plus="in", minus="out", out="out", gain=gain, bias=False, offset=False)
        return c
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    if cin:
        c.capacitor("Cin", "n", "0")
    c.opamp("U1", plus="0", minus="n", out="out", gain=gain, bias=False, offset=False)
    return c


def test_inverting_loop_gain_is_a_beta():
    # Franco ch. 1 [mem]: T = a·β, β = R1/(R1 + R2); T > 0 for negative feedback.
    lg = opsym.loop_gain(_stage("finite"), "U1")
    r1, r2, a = sp.symbols("R1 R2 U1.A", positive=True)
    assert sp.simplify(lg.feedback - r1 / (r1 + r2)) == 0
    assert sp.simplify(lg.gain - a * r1 / (r1 + r2)) == 0


def test_loading_kept_input_capacitance():
    # Hand analysis: with Cin from the − input to ground the feedback network is
    # the divider Z1/(Z1 + R2), Z1 = R1 ‖ 1/(s·Cin) — the source's zero impedance
    # grounds R1 (independent sources set to zero).
    lg = opsym.loop_gain(_stage("finite", cin=True), "U1")
    r1, r2, cin = sp.symbols("R1 R2 Cin", positive=True)
    z1 = r1 / (1 + s * r1 * cin)
    assert sp.simplify(lg.feedback - z1 / (z1 + r2)) == 0


def test_follower_single_pole_is_a_and_ninety_degrees():
    # T = A(s) for a follower (β = 1); single pole: PM = 180° − atan(fc/fp) ≈ 90°
    # (Franco ch. 8 [mem]), fc from |T(fc)| = 1: fc = fp·√(A0² − 1).
    a0, gbw = 10**5, 10**6
    lg = opsym.loop_gain(_stage("pole", follower=True), "U1")
    a = opsym.SinglePole().gain("U1")
    assert sp.simplify(lg.gain - a) == 0
    m = lg.margins({"U1.A0": a0, "U1.GBW": gbw})
    fp = gbw / a0
    fc = fp * math.sqrt(a0**2 - 1)
    assert m.crossover_hz == pytest.approx(fc, rel=1e-9)
    assert m.phase_margin_deg == pytest.approx(180 - math.degrees(math.atan(fc / fp)), abs=1e-8)
    assert m.phase_margin_deg == pytest.approx(90, abs=0.01)
    assert m.gain_margin_db is None  # the phase never reaches −180°
    assert m.stable is True


def _two_pole(a0, f1, f2):
    w1, w2 = 2 * sp.pi * f1, 2 * sp.pi * f2
    return a0 / ((1 + s / w1) * (1 + s / w2))


@pytest.mark.parametrize("f2", [2e5, 1e6, 5e6])
def test_two_pole_phase_margin(f2):
    # Non-inverting gain of 2 (β = 1/2, Franco ch. 1 [mem]); a dominant pole f1
    # and a second pole f2. Exact: PM = 180° − atan(fc/f1) − atan(fc/f2) with
    # (β·a0)² = (1 + (fc/f1)²)(1 + (fc/f2)²), a quadratic in fc² solved by hand.
    # Franco ch. 8 [mem]: PM ≈ 90° − atan(fc/f2) when fc ≫ f1.
    a0, f1 = 10**5, 10
    c = opsym.Circuit()
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0", "10k")
    c.resistor("R2", "n", "out", "10k")
    c.opamp("U1", plus="p", minus="n", out="out", gain=_two_pole(a0, f1, f2), bias=False)
    m = opsym.loop_gain(c, "U1").margins()
    t0 = a0 / 2
    # x = fc²: x²/(f1²f2²) + x(1/f1² + 1/f2²) + 1 − t0² = 0
    qa, qb, qc = 1 / (f1 * f2) ** 2, 1 / f1**2 + 1 / f2**2, 1 - t0**2
    fc = math.sqrt((-qb + math.sqrt(qb * qb - 4 * qa * qc)) / (2 * qa))
    pm = 180 - math.degrees(math.atan(fc / f1) + math.atan(fc / f2))
    assert m.crossover_hz == pytest.approx(fc, rel=1e-9)
    assert m.phase_margin_deg == pytest.approx(pm, abs=1e-7)
    franco = 90 - math.degrees(math.atan(fc / f2))
    assert abs(m.phase_margin_deg - franco) < math.degrees(math.atan(f1 / fc)) + 1e-9
    # Two poles: the phase tends to −180° but never reaches it: no gain margin.
    assert m.gain_margin_db is None
    # Q of the closed loop: 1 + T = 0 ⇔ s²/(ω1ω2) + s(1/ω1 + 1/ω2) + 1 + t0 = 0,
    # so ω0 = √((1 + t0)·ω1·ω2) and Q = ω0/(ω1 + ω2) (standard second-order form).
    w1, w2 = 2 * math.pi * f1, 2 * math.pi * f2
    w0 = math.sqrt((1 + t0) * w1 * w2)
    assert m.q == pytest.approx(w0 / (w1 + w2), rel=1e-9)
    assert m.f0_hz == pytest.approx(w0 / (2 * math.pi), rel=1e-9)
    assert m.stable is True


@pytest.mark.parametrize("pm_deg", [30.0, 45.0, 60.0, 76.0])
def test_q_and_peaking_versus_phase_margin(pm_deg):
    # Loop T = ωt/(s·(1 + s/ω2)) (integrator and one pole), as an op-amp's gain in a
    # follower. Crossover r = ωc/ω2 = cot φm; ωt/ω2 = r·√(1 + r²). Closed loop
    # T/(1 + T) = 1/(s²/(ωt·ω2) + s/ωt + 1): Q = √(ωt/ω2) = √(cos φm)/sin φm
    # (Franco ch. 8 [mem]); peak Mr = Q²/√(Q² − 1/4) for Q > 1/√2 (Ogata [mem]).
    phi = math.radians(pm_deg)
    f2 = 10**6
    r = sp.nsimplify(1 / math.tan(phi), rational=True)
    wt_over_w2 = r * sp.sqrt(1 + r**2)
    w2 = 2 * sp.pi * f2
    gain = wt_over_w2 * w2 / (s * (1 + s / w2))
    m = opsym.loop_gain(_stage(gain, follower=True), "U1").margins()
    assert m.phase_margin_deg == pytest.approx(pm_deg, abs=1e-6)
    q = math.sqrt(math.cos(phi)) / math.sin(phi)
    assert m.q == pytest.approx(q, rel=1e-8)
    if q > 1 / math.sqrt(2):
        mr = q**2 / math.sqrt(q**2 - 0.25)
        assert m.peaking_db == pytest.approx(20 * math.log10(mr), abs=1e-6)
    else:
        assert m.peaking_db == 0.0
    assert m.dc_gain == math.inf


def test_three_poles_gain_margin_and_instability():
    # Three equal poles: T = T0/(1 + s/ω)³. The phase is −180° at ω·√3 (3·60°),
    # where |T| = T0/8 (hand analysis): GM = −20·log10(T0/8). T0 = 10 > 8 makes the
    # closed loop unstable (Routh, any control text [mem]).
    f = 1e4
    for t0, stable in ((4, True), (10, False)):
        c = _stage("finite", follower=True)
        gain = sp.Integer(t0) / (1 + s / (2 * sp.pi * f)) ** 3
        c = _stage(gain, follower=True)
        m = opsym.loop_gain(c, "U1").margins()
        assert m.phase_crossover_hz == pytest.approx(f * math.sqrt(3), rel=1e-9)
        assert m.gain_margin_db == pytest.approx(-20 * math.log10(t0 / 8), abs=1e-8)
        assert m.stable is stable
        assert m.below(45.0) is (not stable or m.phase_margin_deg < 45)
        poles = np.array(m.poles_hz)
        # 1 + T = 0 ⇔ (1 + s/ω)³ = −T0 ⇔ s = ω·(−1 + T0^(1/3)·e^(±jπ/3)) or ω·(−1 − T0^(1/3))
        assert max(poles.real) == pytest.approx(f * (-1 + t0 ** (1 / 3) / 2), rel=1e-9)


def test_ideal_opamp_has_no_finite_loop_gain():
    lg = opsym.loop_gain(_stage("ideal"), "U1")
    r1, r2 = sp.symbols("R1 R2", positive=True)
    assert sp.simplify(lg.feedback - r1 / (r1 + r2)) == 0
    with pytest.raises(InvalidValueError, match="gain='finite'"):
        _ = lg.gain


def test_positive_feedback_gives_negative_loop_gain():
    # More feedback to the + input (divider 9k/1k, β+ = 0.9) than to the − input
    # (1k/1k, β− = 0.5): hand analysis gives T = A·(β− − β+) = −0.4·A, negative at
    # DC by the convention T > 0 for negative feedback; with A = 1000/(1 + s/100),
    # 1 + T = 0 at s = +39 900 rad/s, a right-half-plane pole.
    c = opsym.Circuit()
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "p", "9k")
    c.resistor("R2", "p", "out", "1k")
    c.resistor("R3", "n", "0", "1k")
    c.resistor("R4", "n", "out", "1k")
    c.opamp("U1", plus="p", minus="n", out="out", gain=1000 / (1 + s / 100), bias=False)
    m = opsym.loop_gain(c, "U1").margins()
    assert m.dc_gain == pytest.approx(-400)
    assert m.stable is False
    assert m.poles_hz[0].real == pytest.approx(39900 / (2 * math.pi), rel=1e-12)
    assert m.below(45.0)


def test_other_opamps_keep_their_loops():
    # Two followers in a row: breaking U2 leaves U1 closed; U2's loop is its own
    # output to its − input: T = A2 whatever U1 does.
    c = opsym.Circuit()
    c.voltage_source("Vin", "in", "0")
    c.opamp("U1", plus="in", minus="m", out="m", gain="finite", bias=False)
    c.opamp("U2", plus="m", minus="out", out="out", gain="finite", bias=False)
    assert opsym.loop_gain(c, "U2").gain == c.symbol("U2.A")


def test_not_an_opamp():
    with pytest.raises(opsym.UnknownNameError, match="R1"):
        opsym.loop_gain(_stage("finite"), "R1")


def test_bode_plot_of_the_loop_gain_draws_on_given_axes(tmp_path):
    pytest.importorskip("matplotlib")
    from matplotlib.figure import Figure

    from opsym.output.figures import loop_gain_chart

    lg = opsym.loop_gain(_stage("pole", follower=True), "U1", {"U1.A0": 10**5, "U1.GBW": 10**6})
    fig = Figure()
    axes = fig.subplots(2, 1)
    assert loop_gain_chart(lg, ax=axes, path=tmp_path / "t.png") is fig
    assert (tmp_path / "t.png").stat().st_size > 0
    # The magnitude line crosses 0 dB at the crossover, marked: 1 MHz (T = A, fc ≈ GBW).
    x, y = axes[0].get_lines()[0].get_data()
    assert np.interp(0.0, -y, x) == pytest.approx(1e6, rel=1e-3)
    marks = [ln.get_xdata()[0] for ln in axes[0].get_lines()[1:] if ln.get_linestyle() == ":"]
    assert marks and marks[0] == pytest.approx(1e6 * math.sqrt(1 - 1e-10), rel=1e-9)


# An output resistance Ro inside the gain stage (symbol U1.Rx here, so as not to clash
# with a built-in kind), a shape none of the three built-in injections gives:
# Vout = A·(V+ − V−) − Ro·Iout, i.e. the op-amp's row gains the term (Ro/A)·I(U1).
# Declared here alone (DEVELOPERS.md, "how to add … (b)").
@dataclasses.dataclass(frozen=True)
class _RowTerm:
    ro: sp.Expr


class _OutputResistance(NonIdeal):
    kind = "rout-loop-test"
    symbols = (
        SymbolSpec("Rx", "Ω", r"R_{\mathrm{x}}", "output resistance Rx (test kind)",
                   (("positive", True),), role="parameter"),
    )  # fmt: skip
    convention = "Ro is the output resistance inside the gain stage."

    def sources(self, opamp):
        return ()

    def injections(self, opamp):
        return (_RowTerm(opamp_symbol(opamp, "Rx")),)


def _row_term(b, amp, row, inj):
    b.add(row, b.index[f"I({amp.name})"], b.value(inj.ro) / b.value(amp.gain), amp.name)


def test_loading_inside_the_opamp_row_is_kept(monkeypatch):
    # Hand analysis: a follower with Ro inside and a load RL. Broken at the controlled
    # source A·x, the output is the divider A·x·RL/(RL + Ro) and it is the − input:
    # T = A·RL/(RL + Ro) (Franco ch. 8 [mem]: output resistance and load reduce β·A).
    monkeypatch.setitem(INJECTIONS, _RowTerm, _row_term)
    c = opsym.Circuit()
    c.voltage_source("Vin", "p", "0")
    c.resistor("RL", "out", "0")
    c.opamp("U1", plus="p", minus="out", out="out", gain="finite", bias=False,
            extra=[_OutputResistance()])  # fmt: skip
    a, ro, rl = sp.symbols("U1.A U1.Rx RL", positive=True)
    lg = opsym.loop_gain(c, "U1")
    assert sp.simplify(lg.gain - a * rl / (rl + ro)) == 0
    # and the closed loop agrees: Vout/Vin = T/(1 + T) for a follower
    h = c.analyze("out").coefficient("Vin")
    assert sp.simplify(h - lg.gain / (1 + lg.gain)) == 0


def test_phase_followed_through_a_sharp_double_resonance():
    # T = T0/(1 + s/ω1) · 1/(1 + s/(Q·ω0) + (s/ω0)²)², Q = 10⁴: the phase falls 360°
    # within about f0/Q, far less than one grid step (the pole at f1 sets the grid, so
    # f0 is not on it). By hand, ∠T = −atan(f/f1) − 2·atan2(x/Q, 1 − x²), x = f/f0,
    # each atan2 continuous in (0°, 180°): above f0 the phase is below −360°, and the
    # phase margin at the upper crossover is negative — not the ≈ 0…180° a phase folded
    # back by 360° would give.
    f1, f0, q, t0 = 10, 12345.6, 10**4, 5
    w1, w0 = 2 * sp.pi * f1, 2 * sp.pi * sp.nsimplify(f0)
    gain = t0 / (1 + s / w1) / (1 + s / (q * w0) + (s / w0) ** 2) ** 2
    m = opsym.loop_gain(_stage(gain, follower=True), "U1").margins()
    x = m.crossover_hz / f0
    phase = -math.degrees(math.atan(m.crossover_hz / f1)) - 2 * math.degrees(
        math.atan2(x / q, 1 - x * x)
    )
    assert x > 1 and phase < -360
    assert m.phase_margin_deg == pytest.approx(180 + phase, abs=1e-6)
    mag = t0 / math.hypot(1, m.crossover_hz / f1) / abs(1 - x * x + 1j * x / q) ** 2
    assert mag == pytest.approx(1, rel=1e-9)  # |T| = 1 there, by hand
    assert m.below(45.0) and m.stable is False


def test_loop_with_a_delay_uses_the_bisected_phase():
    # T = T0·e^(−s·τ)/(1 + s/ωp): not a ratio of polynomials, so no closed-loop poles;
    # by hand, fc = fp·√(T0² − 1) and PM = 180° − atan(fc/fp) − 360°·fc·τ (a delay's
    # phase −ω·τ, any control text [mem]). The delay's phase falls without bound
    # (−3600° at 1 MHz here), so the phase is followed by bisecting the grid's steps.
    t0, fp, tau = 1000, 100.0, sp.Rational(1, 10**5)
    gain = t0 * sp.exp(-s * tau) / (1 + s / (2 * sp.pi * fp))
    m = opsym.loop_gain(_stage(gain, follower=True), "U1").margins()
    fc = fp * math.sqrt(t0**2 - 1)
    pm = 180 - math.degrees(math.atan(fc / fp)) - 360 * fc * float(tau)
    assert m.crossover_hz == pytest.approx(fc, rel=1e-9)
    assert m.phase_margin_deg == pytest.approx(pm, abs=1e-6)
    assert m.stable is None and m.poles_hz == ()
