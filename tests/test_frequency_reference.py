"""The Laplace-domain and noise analyses against the independent complex nodal solver.

``tests/reference/nodal_ac.py`` writes its own KCL equations from the circuit's
elements at one complex frequency and solves them in complex float64 or 40-digit
arithmetic; it never uses ``opsym.equations``. Random networks (one to three
op-amps, ideal, fixed-gain, symbolic-gain and single-pole; capacitors and
inductors) are compared at log-uniform frequencies from 1 Hz to 10 MHz. These
checks are [derived] (KCL and superposition). The published checks at the end
name their sources.

``OPSYM_HYPOTHESIS_SCALE=<n>`` multiplies the number of examples.
"""

from __future__ import annotations

import math

import circuits
import circuits_ac
import mpmath
import nodal_ac
import numpy as np
import pytest
import sympy as sp
from compare import evaluate
from drawing import DrawPicker, example_settings
from hypothesis import assume, event, given
from hypothesis import strategies as st

import opsym
from opsym.numeric.frequency import evaluator

K_BOLTZMANN = 1.380649e-23  # J/K, exact: BIPM SI Brochure, 9th ed. (2019) [pub]
T_25C = 298.15

REL = 1e-9  # relative agreement of every transfer
# Absolute floors, as fractions of the largest node voltage of the reference run
# (a transfer that is nearly zero by cancellation is only known to that level):
FLOOR = 1e-12  # collected forms (coefficient(), NoiseResult.transfer) in float64
# Result.response evaluates a sum over paths in its collected form too, so the same
# floor holds (before that fix the as-solved sum lost up to 5e-13 of the scale).
REL_EXACT = 1e-20  # the exact form at 30 digits against the 40-digit reference
_NOISE = (".en", ".in+", ".in-")


@st.composite
def ac_networks(draw, max_opamps=3):
    desc, output, symbolic = circuits_ac.random_ac_circuit(DrawPicker(draw), max_opamps)
    cmrr = draw(st.integers(0, 99)) < 25
    return desc, output, symbolic, {"cmrr": True} if cmrr else {}


# log-uniform over 1 Hz … 10 MHz
frequencies = st.lists(st.floats(0.0, 7.0).map(lambda x: 10.0**x), min_size=1, max_size=3)


def _close(got, want, scale, rel=REL, floor=FLOOR) -> bool:
    return abs(got - want) <= rel * abs(want) + floor * scale


def _reference(c, output, f, values, thermal=False):
    try:
        return nodal_ac.transfers_with_scale(c, output, f, values, thermal, precise=True)
    except nodal_ac.ReferenceSingularError:
        return None


def _exact_at(expr, f: float) -> complex:
    """``expr`` (numbers and ``s`` only) at ``s = j·2π·f`` in 30-digit arithmetic."""
    fn = sp.lambdify(opsym.s, expr, modules="mpmath")
    with mpmath.workdps(30):
        return complex(fn(mpmath.mpc(0, 2 * mpmath.pi * mpmath.mpf(repr(f)))))


# -- the reference itself against closed forms ---------------------------------------


def _rc(r=1e3, cap=1e-9):
    c = opsym.Circuit("RC")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "o", value=r)
    c.capacitor("C1", "o", "0", value=cap)
    return c


@pytest.mark.parametrize("f", [1.0, 159154.94309189535, 1e7])
def test_reference_rc_low_pass(f):
    # H = 1/(1 + jωRC): the first-order low-pass, Sedra & Smith, ch. 1 [mem]
    h = nodal_ac.transfers(_rc(), "o", f)["Vin"]
    assert h == pytest.approx(1 / (1 + 2j * math.pi * f * 1e-6), rel=1e-14)


def test_reference_series_rl_and_inductor_at_dc():
    # H = R/(R + jωL); at DC the inductor is a wire [derived, KVL]
    c = opsym.Circuit("RL")
    c.voltage_source("Vin", "in", "0")
    c.inductor("L1", "in", "o", value=1e-3)
    c.resistor("R1", "o", "0", value=100.0)
    for f in (10.0, 15915.494309189535, 1e6):
        want = 100 / (100 + 2j * math.pi * f * 1e-3)
        assert nodal_ac.transfers(c, "o", f)["Vin"] == pytest.approx(want, rel=1e-14)
    assert nodal_ac.transfers(c, "o", 0.0)["Vin"] == pytest.approx(1.0, rel=1e-15)


def test_reference_single_pole_inverter():
    # Closed loop −(R2/R1)/(1 + (1 + R2/R1)/A(jω)) with A = A0/(1 + jω·A0/(2π·GBW)):
    # Franco, Design with Operational Amplifiers…, ch. 6 [mem]
    c = opsym.Circuit("inverter")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n", value=1e3)
    c.resistor("R2", "n", "out", value=1e4)
    c.opamp("U1", plus="0", minus="n", out="out", gain="pole")
    values = {"U1.A0": 1e5, "U1.GBW": 1e6}
    for f in (1.0, 1e3, 9.09e4, 1e6):
        a = 1e5 / (1 + 2j * math.pi * f * 1e5 / (2 * math.pi * 1e6))
        want = -10 / (1 + 11 / a)
        got = nodal_ac.transfers(c, "out", f, values)
        assert got["Vin"] == pytest.approx(want, rel=1e-13)
        assert got["U1.Vos"] == pytest.approx(11 / (1 + 11 / a), rel=1e-13)  # noise gain


def test_reference_thermal_source_polarity():
    # opsym's convention: R.en in series with R, V(a) − V(b) = R·I(a→b) − R.en
    c = opsym.Circuit("lone resistor")
    c.resistor("R1", "a", "0", value=1e3)
    c.current_source("I1", "0", "a", value=0)
    assert nodal_ac.transfers(c, "a", 1e3, thermal=True)["R1"] == pytest.approx(-1.0)
    assert c.noise("a").transfer("R1") == -1


# -- the property tests ----------------------------------------------------------------


@example_settings(60)
@given(ac_networks(), frequencies)
def test_s_domain_coefficients_match_reference(case, freqs):
    desc, output, symbolic, options = case
    c, values = circuits_ac.to_circuit(desc, symbolic, opamp_options=options)
    try:
        res = c.analyze(output, domain="s", values=values)
    except opsym.SingularCircuitError:
        # no unique solution for any s: the reference finds it singular too
        event("singular")
        assert _reference(c, output, freqs[0], values) is None
        return
    for f in freqs:
        ref = _reference(c, output, f, values)
        if ref is None:
            event("reference singular at one frequency only")
        assume(ref is not None)  # singular only at this frequency (measure zero)
        # noise sources enter only c.noise(); every other source is a term
        assert {x.name for x in res.terms} == {k for k in ref if not k.endswith(_NOISE)}
        for source in res.terms:
            want, scale = ref[source.name]
            got = complex(res.response(f, source=source)[()])
            assert _close(got, want, scale, floor=FLOOR), (source, f, got, want)
            collected = complex(evaluator(res.coefficient(source), "H")(f)[()])
            assert _close(collected, want, scale), (source, f, collected, want)
    # the exact form, at 30 digits, at one frequency
    f = freqs[0]
    ref = _reference(c, output, f, values)
    for source in res.terms:
        want, scale = ref[source.name]
        got = _exact_at(res.compact_coefficient(source), f)
        assert _close(got, want, scale, REL_EXACT, 1e-25), (source, f, got, want)


@example_settings(30)
@given(ac_networks(max_opamps=2), frequencies)
def test_noise_transfers_and_density_match_reference(case, freqs):
    desc, output, symbolic, _ = case
    c, values = circuits_ac.to_circuit(desc, symbolic)
    try:
        n = c.noise(output, values=values)
    except opsym.SingularCircuitError:
        assume(False)  # covered by the test above
    en, i_n = 7e-9, 2e-12
    noisy = n.subs({f"{it[1]}.{p}": v for it in desc if it[0] == "OA"
                    for p, v in (("en", en), ("in", i_n))})  # fmt: skip
    for f in freqs:
        ref = _reference(c, output, f, values, thermal=True)
        assume(ref is not None)
        power = 0.0
        for name in n.names:
            want, scale = ref[name]
            got = complex(evaluator(n.transfer(name), name)(f)[()])
            assert _close(got, want, scale), (name, f, got, want)
            if "." in name:
                density = en if name.endswith(".en") else i_n
            else:
                density = nodal_ac.thermal_density(values.get(name) or _value(c, name), T_25C)
            power += abs(want) ** 2 * density**2
        assert float(noisy.density(f)) == pytest.approx(math.sqrt(power), rel=REL, abs=1e-30)


def _value(c, name):
    return float(c.element(name).value)


@example_settings(30)
@given(ac_networks(max_opamps=2))
def test_dc_result_is_the_s_domain_result_at_zero(case):
    desc, output, symbolic, _ = case
    c, values = circuits_ac.to_circuit(desc, symbolic)
    try:
        dc = c.analyze(output, values=values)
    except opsym.OpsymError:
        # no DC solution: the reference agrees at s = 0
        event("not DC-solvable")
        assert _reference(c, output, 0.0, values) is None
        return
    res = c.analyze(output, domain="s", values=values)
    ref = _reference(c, output, 0.0, values)
    assert ref is not None
    for source in dc.terms:
        want, scale = ref[source.name]
        got_dc = evaluate(dc.coefficient(source))
        at_zero = res.coefficient(source).subs(opsym.s, 0)
        got_s = evaluate(at_zero)
        assert _close(got_dc, want.real, scale, 1e-12, 1e-15), (source, got_dc, want)
        assert _close(got_s, got_dc, scale, 1e-15, 1e-20), (source, got_s, got_dc)
        assert abs(want.imag) <= 1e-20 * scale


# -- band integrals against an independent quadrature -------------------------------------


def _gauss_legendre_log(fn, f_lo, f_hi, nodes=40):
    """``∫ fn(f) df`` by Gauss–Legendre in ``ln f``, one panel per decade [numerical]."""
    x, w = np.polynomial.legendre.leggauss(nodes)
    edges = np.logspace(math.log10(f_lo), math.log10(f_hi), round(math.log10(f_hi / f_lo)) + 1)
    total = 0.0
    for a, b in zip(np.log(edges[:-1]), np.log(edges[1:]), strict=True):
        u = (b - a) / 2 * x + (a + b) / 2
        f = np.exp(u)
        total += float(np.sum(w * np.array([fn(v) for v in f]) * f)) * (b - a) / 2
    return total


def test_band_rms_matches_quadrature_of_reference_densities():
    # opsym's adaptive rms against Gauss–Legendre over the reference's densities
    desc = circuits_ac.inverting_pole()
    c, values = circuits_ac.to_circuit(desc)
    values.update({"U1.en": 8e-9, "U1.in": 0.6e-12})
    n = c.noise("out", values=values)
    ref_values = {k: v for k, v in values.items() if not k.endswith((".en", ".in"))}
    densities = {"U1.en": 8e-9, "U1.in+": 0.6e-12, "U1.in-": 0.6e-12}
    for it in desc:
        if it[0] == "R":
            densities[it[1]] = nodal_ac.thermal_density(it[4], T_25C)
    power = _gauss_legendre_log(
        lambda f: nodal_ac.noise_density(c, "out", f, densities, ref_values) ** 2, 10.0, 1e7
    )
    assert n.rms(10.0, 1e7) == pytest.approx(math.sqrt(power), rel=1e-6)


# -- published checks --------------------------------------------------------------------


@pytest.mark.parametrize(("ohms", "nv", "digits"), [(1e3, 4.0578, 4), (10e3, 12.832, 3)])
def test_johnson_density_reference_and_opsym(ohms, nv, digits):
    # Reference case 13: √(4kTR) at 298.15 K — 1 kΩ → 4.0578 nV/√Hz, 10 kΩ → 12.832 nV/√Hz.
    # BIPM SI Brochure (2019), exact k [pub]; Horowitz & Hill, noise chapter [mem].
    # The reference's transfer (−1) times the published density is opsym's density.
    c = opsym.Circuit("resistor")
    c.resistor("R1", "a", "0", value=ohms)
    c.current_source("I1", "0", "a", value=0)
    h = nodal_ac.transfers(c, "a", 1e3, thermal=True)["R1"]
    want = abs(h) * nodal_ac.thermal_density(ohms, T_25C)
    assert round(want * 1e9, digits) == nv
    assert float(c.noise("a").density(1e3)) == pytest.approx(want, rel=1e-14)


def test_johnson_rms_of_10k_over_10_khz():
    # Reference case 13: 10 kΩ over a 10 kHz band → 1.283 µV rms [pub, numbers derived]
    c = opsym.Circuit("resistor")
    c.resistor("R1", "a", "0", value=10e3)
    c.current_source("I1", "0", "a", value=0)
    assert round(c.noise("a").rms(0, 10e3) * 1e6, 3) == 1.283
    assert round(nodal_ac.thermal_density(10e3, T_25C) * math.sqrt(10e3) * 1e6, 3) == 1.283


def _rc_noise(ohms, farads):
    c = opsym.Circuit("RC")
    c.resistor("R1", "a", "0", value=ohms)
    c.capacitor("C1", "a", "0", value=farads)
    c.current_source("I1", "0", "a", value=0)
    return c


def _tan_quadrature(fn, fc, nodes=48):
    """``∫₀^∞ fn(f) df`` with ``f = fc·tan θ`` and Gauss–Legendre in θ ∈ (0, π/2)."""
    x, w = np.polynomial.legendre.leggauss(nodes)
    theta = (x + 1) * math.pi / 4
    f = fc * np.tan(theta)
    jac = fc / np.cos(theta) ** 2 * math.pi / 4
    return float(sum(wi * fn(fi) * ji for wi, fi, ji in zip(w, f, jac, strict=True)))


def test_noise_bandwidth_of_a_single_rc_pole():
    # ENBW = ∫|H|² df / |H(0)|² = (π/2)·fc for a single pole. Motchenbacher & Connelly,
    # Low-Noise Electronic System Design (1993), ch. 1 [mem]. Integrated here over the
    # reference's transfer, independently of opsym's integrator.
    fc = 1 / (2 * math.pi * 1e3 * 1e-9)
    c = _rc()
    enbw = _tan_quadrature(lambda f: abs(nodal_ac.transfers(c, "o", f)["Vin"]) ** 2, fc)
    assert enbw == pytest.approx(math.pi / 2 * fc, rel=1e-12)
    res = c.analyze("o", domain="s")
    got = opsym.numeric.frequency.noise_bandwidth(evaluator(res.coefficient("Vin"), "H"))
    assert got == pytest.approx(math.pi / 2 * fc, rel=1e-6)


@pytest.mark.parametrize("ohms", [100.0, 47e3, 10e6])
def test_kt_over_c_is_independent_of_r(ohms):
    # An RC low-pass's thermal noise over 0…∞ is √(kT/C), whatever R. A standard
    # result, e.g. Horowitz & Hill, noise chapter [mem]. 1 nF at 298.15 K: 2.029 µV.
    farads = 1e-9
    c = _rc_noise(ohms, farads)
    fc = 1 / (2 * math.pi * ohms * farads)
    en2 = nodal_ac.thermal_density(ohms, T_25C) ** 2
    power = _tan_quadrature(
        lambda f: abs(nodal_ac.transfers(c, "a", f, thermal=True)["R1"]) ** 2 * en2, fc
    )
    want = math.sqrt(K_BOLTZMANN * T_25C / farads)
    assert round(want * 1e6, 3) == 2.029
    assert math.sqrt(power) == pytest.approx(want, rel=1e-12)
    assert c.noise("a").rms(0, math.inf) == pytest.approx(want, rel=1e-6)


def test_generator_draws_every_model():
    # the random networks do exercise every op-amp model and both reactances
    seen = set()
    for seed in range(60):
        desc, _, _ = circuits_ac.random_ac_circuit(circuits.RandomPicker(seed))
        for it in desc:
            if it[0] == "OA":
                m = it[5]
                seen.add("ideal" if m is None else m[0] if isinstance(m, tuple) else "number")
            seen.add(it[0])
    assert {"ideal", "number", "finite", "pole", "C", "L", "R", "OA"} <= seen
