"""The Laplace-domain and noise analyses against published results.

Each check names its source (tags as in the shared reference checks: [pub]
published, [mem] citation from memory, [trade] common practice, [derived]).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import sympy as sp

import opsym
from opsym.numeric.frequency import evaluator, noise_bandwidth

s = opsym.s
K_BOLTZMANN = 1.380649e-23  # J/K, exact: BIPM SI Brochure, 9th ed. (2019) [pub]


def same(got, want) -> bool:
    return sp.simplify(sp.sympify(got) - want) == 0


def noninverting(gain="pole", **values):
    c = opsym.Circuit("non-inverting")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", gain=gain, bias=False)
    return c


def lone_resistor(value):
    c = opsym.Circuit("resistor")
    c.resistor("R1", "a", "0", value=value)
    c.current_source("I1", "0", "a", value=0)
    return c


# -- Johnson–Nyquist noise: reference case 13 ------------------------------------------


@pytest.mark.parametrize(
    ("ohms", "nv"),
    [(1e3, 4.0578), (10e3, 12.832)],
)
def test_johnson_density_at_25_celsius(ohms, nv):
    # Case 13: en = √(4kTR) at 298.15 K. BIPM SI Brochure (2019), exact k [pub];
    # Horowitz & Hill, noise chapter [mem]. Rounded as published (5 significant digits).
    n = lone_resistor(ohms).noise("a")
    assert round(float(n.density(1e3)) * 1e9, 4 if nv < 10 else 3) == nv


def test_johnson_rms_over_10_khz():
    # Case 13: 10 kΩ over a 10 kHz brick-wall band → 1.283 µV rms [pub, numbers derived].
    n = lone_resistor(10e3).noise("a")
    assert round(n.rms(0, 10e3) * 1e6, 3) == 1.283


def test_johnson_density_at_300_kelvin():
    # Case 13: at 300 K (26.85 °C) 1 kΩ gives 4.0704 nV/√Hz — the temperature is settable.
    n = lone_resistor(1e3).noise("a", temperature=26.85)
    assert n.temperature == pytest.approx(300.0, rel=1e-12)
    assert round(float(n.density(1.0)) * 1e9, 4) == 4.0704


def test_thermal_noise_of_an_rc_is_kt_over_c():
    # The kT/C result: an RC low-pass's total thermal noise over 0…∞ is √(kT/C),
    # independent of R. Standard result, e.g. Horowitz & Hill, noise chapter [mem].
    c = opsym.Circuit("RC")
    c.resistor("R1", "a", "0", value="47k")
    c.capacitor("C1", "a", "0", value="1n")
    c.current_source("I1", "0", "a", value=0)
    n = c.noise("a")
    want = math.sqrt(K_BOLTZMANN * 298.15 / 1e-9)  # 2.029 µV for 1 nF
    assert n.rms(0, math.inf) == pytest.approx(want, rel=1e-6)


# -- Single-pole op-amp: bandwidth and gain error --------------------------------------


def test_single_pole_closed_loop_bandwidth_is_gbw_over_noise_gain():
    # Closed-loop bandwidth of a single-pole op-amp: f_B = f_t·β = GBW/NG (exactly
    # f_p·(1 + A0·β) with f_p = GBW/A0). Franco, Design with Operational Amplifiers
    # and Analog Integrated Circuits, ch. 6 [mem].
    c = noninverting()
    values = {"R1": "1k", "R2": "9k", "U1.A0": 1e5, "U1.GBW": "1M"}
    res = c.analyze("out", domain="s", values=values)
    beta, a0, gbw = 0.1, 1e5, 1e6
    assert res.bandwidth() == pytest.approx(gbw / a0 * (1 + a0 * beta), rel=1e-9)
    assert res.bandwidth() == pytest.approx(gbw * beta, rel=2e-4)  # 100 kHz = GBW/NG


def test_unity_gain_inverter_has_half_the_gbw():
    # Noise gain, not signal gain, sets the bandwidth: the −1 inverter (NG = 2) has
    # GBW/2. Jung (ed.), Op Amp Applications Handbook, ch. 1, noise gain [mem].
    c = opsym.Circuit("inverter")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n", value="10k")
    c.resistor("R2", "n", "out", value="10k")
    c.opamp("U1", plus="0", minus="n", out="out", gain="pole", bias=False)
    res = c.analyze("out", domain="s", values={"U1.A0": 1e6, "U1.GBW": "2M"})
    assert res.bandwidth() == pytest.approx(1e6, rel=1e-5)


def test_single_pole_gain_error_closed_form():
    # Closed-loop gain A/(1 + Aβ), so the fractional error is −1/(1 + A(s)·β) and its
    # first-order term −1/(A(s)·β). Franco ch. 1 and ch. 6 [mem]; reference case 5.
    c = noninverting()
    res = c.analyze("out", domain="s")
    a = opsym.SinglePole().gain("U1")
    r1, r2 = c.symbol("R1"), c.symbol("R2")
    beta = r1 / (r1 + r2)
    assert same(res.gain_error(), -1 / (1 + a * beta))
    assert same(res.gain_error(order=1), -1 / (a * beta))
    # The DC limit is reference case 5's 1/(1 + A0·β) with A = A0.
    dc = c.analyze("out")
    assert same(dc.gain_error(), -1 / (1 + c.symbol("U1.A0") * beta))


def test_gain_error_well_above_the_pole_is_f_times_ng_over_gbw():
    # Above the open-loop pole A(jf) ≈ GBW/(jf), so |ε| ≈ f·NG/GBW for |ε| ≪ 1
    # (Franco ch. 6 [mem]). G = 10, GBW = 10 MHz, f = 10 kHz: 1 %.
    c = noninverting()
    values = {"R1": "1k", "R2": "9k", "U1.A0": 1e6, "U1.GBW": "10M"}
    res = c.analyze("out", domain="s", values=values)
    err = abs(res.gain_error_response(10e3)[()])
    assert err == pytest.approx(0.01, rel=2e-3)


def test_ideal_and_dc_results_are_limits_of_the_pole_model():
    # The nullor is the limit A0, GBW → ∞; the DC result is s = 0 [derived].
    c = noninverting()
    res = c.analyze("out", domain="s")
    assert same(res.ideal().coefficient("Vin"), 1 + c.symbol("R2") / c.symbol("R1"))
    dc = c.analyze("out")
    assert same(res.coefficient("Vin").subs(s, 0), dc.coefficient("Vin"))
    assert same(res.coefficient("U1.Vos").subs(s, 0), dc.coefficient("U1.Vos"))


# -- Transfer functions of classic stages -----------------------------------------------


def test_integrator():
    # Inverting integrator: H = −1/(s·R·C). Sedra & Smith, 6th ed., §2.8 [mem].
    c = opsym.Circuit("integrator")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.capacitor("C1", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out")
    h = c.analyze("out", domain="s").coefficient("Vin")
    assert same(h, -1 / (s * c.symbol("R1") * c.symbol("C1")))


def test_unity_gain_sallen_key_low_pass():
    # Unity-gain Sallen–Key low-pass: H = 1/(1 + s·C2·(R1 + R2) + s²·R1·R2·C1·C2),
    # C1 the feedback capacitor. Sedra & Smith, active-filter chapter [mem].
    c = opsym.Circuit("Sallen-Key")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "a")
    c.resistor("R2", "a", "p")
    c.capacitor("C1", "a", "out")
    c.capacitor("C2", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out")
    r1, r2, c1, c2 = (c.symbol(n) for n in ("R1", "R2", "C1", "C2"))
    h = c.analyze("out", domain="s").coefficient("Vin")
    assert same(h, 1 / (1 + s * c2 * (r1 + r2) + s**2 * r1 * r2 * c1 * c2))


def test_transimpedance_with_feedback_capacitor():
    # Photodiode amplifier with Rf ∥ Cf: Vo/Iin = −Rf/(1 + s·Rf·Cf) with an ideal
    # op-amp, whatever the diode capacitance. Graeme, Photodiode Amplifiers (1996),
    # ch. 1 [mem].
    c = opsym.Circuit("TIA")
    c.current_source("Iin", "n", "0")  # photocurrent drawn from the − node: Vo = +…
    c.capacitor("Cd", "n", "0")
    c.resistor("Rf", "n", "out")
    c.capacitor("Cf", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out")
    rf, cf = c.symbol("Rf"), c.symbol("Cf")
    h = c.analyze("out", domain="s").coefficient("Iin")
    assert same(h, rf / (1 + s * rf * cf))


def test_inductor_is_a_wire_at_dc_and_sl_in_s():
    # Series RL: H = R/(R + s·L); at DC the inductor is a short [derived].
    c = opsym.Circuit("RL")
    c.voltage_source("Vin", "in", "0")
    c.inductor("L1", "in", "o")
    c.resistor("R1", "o", "0")
    r, l_ = c.symbol("R1"), c.symbol("L1")
    assert same(c.analyze("o", domain="s").coefficient("Vin"), r / (r + s * l_))
    assert c.analyze("o").coefficient("Vin") == 1


# -- Noise bandwidth, 1/f noise, op-amp noise ------------------------------------------


def test_noise_equivalent_bandwidth_of_a_single_pole():
    # ENBW of a single pole at fc is (π/2)·fc. Motchenbacher & Connelly, Low-Noise
    # Electronic System Design (1993), ch. 1 [mem].
    fc = 1e3
    h = evaluator(1 / (1 + s / (2 * sp.pi * fc)), "H")
    assert noise_bandwidth(h) == pytest.approx(math.pi / 2 * fc, rel=1e-6)


def test_follower_noise_uses_its_closed_loop_noise_bandwidth():
    # A single-pole follower's closed-loop pole is at ≈ GBW, so its output en noise
    # is en·√((π/2)·f_-3dB) over 0…∞ [derived from the ENBW above].
    c = opsym.Circuit("follower")
    c.voltage_source("Vin", "p", "0", value=0)
    c.opamp("U1", plus="p", minus="out", out="out", gain="pole", bias=False)
    values = {"U1.A0": 1e6, "U1.GBW": "1M", "U1.en": "10n", "U1.in": 0}
    n = c.noise("out", values=values)
    f3 = c.analyze("out", domain="s", values=values).bandwidth()
    assert n.rms(0, math.inf) == pytest.approx(10e-9 * math.sqrt(math.pi / 2 * f3), rel=1e-5)


def test_one_over_f_noise_integral():
    # ∫ en²(1 + fc/f) df from f1 to f2 = en²·((f2 − f1) + fc·ln(f2/f1)).
    # Motchenbacher & Connelly, ch. 1 [mem].
    c = opsym.Circuit("follower")
    c.voltage_source("Vin", "p", "0", value=0)
    c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    en, fc, f1, f2 = 8e-9, 200.0, 0.1, 10.0
    n = c.noise("out", values={"U1.en": en, "U1.fce": fc, "U1.in": 0})
    want = en * math.sqrt((f2 - f1) + fc * math.log(f2 / f1))
    assert n.rms(f1, f2) == pytest.approx(want, rel=1e-6)
    assert float(n.density(fc)) == pytest.approx(en * math.sqrt(2), rel=1e-12)


def test_noninverting_stage_noise_sources_in_power():
    # Output noise of a non-inverting stage, each source in power:
    # en·NG, in-·R2, in+·Rs·NG, √(4kT·Rs)·NG, √(4kT·R1)·(R2/R1), √(4kT·R2).
    # Franco, ch. 7 (noise) [mem]; Horowitz & Hill, noise chapter [mem].
    c = opsym.Circuit("non-inverting with Rs")
    c.voltage_source("Vs", "s", "0", value=0)
    c.resistor("Rs", "s", "p", value="2k")
    c.resistor("R1", "n", "0", value="1k")
    c.resistor("R2", "n", "out", value="9k")
    c.opamp("U1", plus="p", minus="n", out="out", bias=False)
    en, i_n = 5e-9, 1e-12
    n = c.noise("out", values={"U1.en": en, "U1.in": i_n})
    kt4 = 4 * K_BOLTZMANN * 298.15
    parts = {
        "U1.en": en * 10,
        "U1.in-": i_n * 9e3,
        "U1.in+": i_n * 2e3 * 10,
        "Rs": math.sqrt(kt4 * 2e3) * 10,
        "R1": math.sqrt(kt4 * 1e3) * 9,
        "R2": math.sqrt(kt4 * 9e3),
    }
    got = n.contributions(np.array([10.0, 1e3]))
    for name, want in parts.items():
        assert got[name] == pytest.approx([want, want], rel=1e-12), name
    total = math.sqrt(sum(v**2 for v in parts.values()))
    assert float(n.density(1e3)) == pytest.approx(total, rel=1e-12)
    assert float(n.input_density(1e3)) == pytest.approx(total / 10, rel=1e-12)
    budget = n.budget(1, 1e3)
    assert sum(r.share for r in budget.rows) == pytest.approx(1.0)
    assert [r.name for r in budget.rows] == sorted(parts, key=lambda k: -parts[k])  # largest first
    assert budget.rows[0].name == "Rs"  # 57.6 nV/√Hz against en·NG = 50 nV/√Hz
    # Peak-to-peak ≈ 6.6 × rms: Gaussian ±3.3σ, common practice [trade].
    assert budget.peak_to_peak == pytest.approx(6.6 * budget.total)


# -- Mistakes get named errors ------------------------------------------------------------


def test_unknown_domain_is_refused():
    with pytest.raises(opsym.InvalidValueError, match="domain 'ac'"):
        noninverting().analyze("out", domain="ac")


def test_frequency_methods_need_the_s_domain():
    with pytest.raises(opsym.InvalidValueError, match="domain='s'"):
        noninverting().analyze("out").response(10.0)


def test_missing_values_are_named():
    res = noninverting().analyze("out", domain="s", values={"R1": 1, "R2": 9})
    with pytest.raises(opsym.BudgetError, match=r"U1\.A0, U1\.GBW"):
        res.response(10.0)
    c = opsym.Circuit("needs en")
    c.voltage_source("Vin", "p", "0", value=0)
    c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    with pytest.raises(opsym.BudgetError, match=r"U1\.en"):
        c.noise("out").density(1.0)
    assert lone_resistor(1e3).noise("a").names == ("R1",)


def test_laplace_variable_cannot_be_fixed():
    with pytest.raises(opsym.InvalidValueError, match="Laplace variable"):
        noninverting().analyze("out", domain="s", values={"s": 1})


def test_bad_temperature_and_band():
    with pytest.raises(opsym.InvalidValueError, match="absolute zero"):
        lone_resistor(1e3).noise("a", temperature=-300)
    c = opsym.Circuit("follower")
    c.voltage_source("Vin", "p", "0", value=0)
    c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    n = c.noise("out", values={"U1.en": 1e-8, "U1.fce": 100, "U1.in": 0})
    with pytest.raises(opsym.InvalidValueError, match="f_low > 0"):
        n.rms(0, 1e3)
    with pytest.raises(opsym.InvalidValueError, match="f_low < f_high"):
        n.rms(1e3, 10)


def test_integrator_passes_in_s_but_not_at_dc():
    c = opsym.Circuit("integrator")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.capacitor("C1", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out")
    with pytest.raises(opsym.NoFeedbackError, match="no DC feedback path"):
        c.analyze("out")
    assert c.analyze("out", domain="s").coefficient("U1.Vos") != 0
