"""Behaviour of the s-domain and noise analyses that no textbook states: limits,
consistency between analyses, numerics of long cascades, and the errors users get.
Values are invented; each expected number is derived in the comment beside it."""

from __future__ import annotations

import math

import numpy as np
import pytest
import sympy as sp

import opsym
from opsym.numeric.frequency import evaluator, frequency_grid, integrate

s = opsym.s


def low_pass_cascade(stages: int) -> opsym.Circuit:
    c = opsym.Circuit(f"{stages}-stage low-pass cascade")
    c.voltage_source("Vin", "s0", "0")
    for k in range(1, stages + 1):
        c.resistor(f"R1_{k}", f"s{k - 1}", f"n{k}", value="10k")
        c.resistor(f"R2_{k}", f"n{k}", f"s{k}", value="10k")
        c.capacitor(f"C2_{k}", f"n{k}", f"s{k}", value="1n")
        c.opamp(f"U{k}", plus="0", minus=f"n{k}", out=f"s{k}", gain="pole", bias=False)
    return c


def pole_values(stages: int) -> dict:
    out: dict = {}
    for k in range(1, stages + 1):
        out.update({f"U{k}.A0": "100k", f"U{k}.GBW": "1M", f"U{k}.en": "10n", f"U{k}.in": 0})
    return out


def test_long_cascade_evaluates_without_overflow():
    # 48 identical stages, each −1/(1 + s·R2·C2) with a slightly low gain: the exact
    # gain constant has hundreds of digits. |H(0)| = (A0β/(1 + A0β))^48 with
    # β = 1/2, A0 = 1e5: (1 − 1/50001)^48 [derived].
    n = 48
    c = low_pass_cascade(n)
    res = c.analyze(f"s{n}", domain="s", values=pole_values(n))
    f = np.array([0.0, 1e3, 1 / (2 * np.pi * 1e-5)])
    h = res.response(f)
    assert abs(h[0]) == pytest.approx((1 - 1 / 50001) ** n, rel=1e-9)
    # Each stage is −(Z2/R1)/(1 + (1 + Z2/R1)/A(jω)), Z2 = R2 ∥ C2 [derived].
    w = 2j * np.pi * f
    z2 = 1e4 / (1 + w * 1e-5)
    a = 1e5 / (1 + w * 1e5 / (2 * np.pi * 1e6))
    stage = -(z2 / 1e4) / (1 + (1 + z2 / 1e4) / a)
    assert h == pytest.approx(stage**n, rel=1e-9)
    # At one stage's ideal pole, 1/(2π·10k·1n) = 15.9155 kHz, 48 ideal stages give 2^-24.
    assert abs(res.response(f[2], ideal=True)) == pytest.approx(2.0 ** (-n / 2), rel=1e-9)


def test_at_dc_equals_a_dc_derivation():
    c = low_pass_cascade(2)
    res = c.analyze("s2", domain="s")
    dc = c.analyze("s2")
    for sym in dc.terms:
        assert sp.simplify(res.at_dc().coefficient(sym) - dc.coefficient(sym)) == 0
    assert res.at_dc().domain == "dc"


def test_budget_of_an_s_domain_result_is_its_dc_budget():
    c = opsym.Circuit("inverting, C across R2")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.capacitor("C2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", gain="pole")
    values = {"R1": "10k", "R2": "100k", "C2": "1n", "Vin": "-0.5", "U1.GBW": "1M"}
    params = {"U1": opsym.opamp_parameters("generic precision bipolar")}
    from_s = opsym.error_budget(c.analyze("out", domain="s"), values, params)
    from_dc = opsym.error_budget(c.analyze("out"), values, params)
    assert from_s.worst_case == pytest.approx(from_dc.worst_case, rel=1e-12)
    assert from_s.rss == pytest.approx(from_dc.rss, rel=1e-12)


def test_ac_coupled_input_is_fine_in_s_but_floating_at_dc():
    c = opsym.Circuit("AC-coupled follower")
    c.voltage_source("Vin", "in", "0")
    c.capacitor("C1", "in", "p")
    c.opamp("U1", plus="p", minus="out", out="out")
    with pytest.raises(opsym.FloatingNodeError, match="no DC path"):
        c.analyze("out")
    res = c.analyze("out", domain="s")  # the capacitor carries the signal to p
    assert res.coefficient("Vin") == 1
    assert sp.simplify(res.coefficient("U1.Ib+") + 1 / (s * c.symbol("C1"))) == 0
    c.resistor("Rb", "p", "0")
    h = c.analyze("out", domain="s").coefficient("Vin")
    rb, c1 = c.symbol("Rb"), c.symbol("C1")
    assert sp.simplify(h - s * rb * c1 / (1 + s * rb * c1)) == 0  # a high-pass [derived]


def test_inductor_across_a_source_is_a_loop_at_dc_only():
    c = opsym.Circuit("L across a source")
    c.voltage_source("Vin", "a", "0")
    c.inductor("L1", "a", "0")
    c.resistor("R1", "a", "0")
    with pytest.raises(opsym.SingularCircuitError, match="inductor L1"):
        c.analyze("a")
    assert c.analyze("a", domain="s").coefficient("Vin") == 1


def test_noise_transfer_signs_do_not_matter_but_magnitudes_do():
    # A resistor's transfer is from its series noise voltage: for R2 in an inverting
    # stage it is 1 (R2's voltage appears at the output), for R1 it is −R2/R1 [derived].
    c = opsym.Circuit("inverting")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out")
    n = c.noise("out")
    r1, r2 = c.symbol("R1"), c.symbol("R2")
    assert abs(n.transfer("R2")) == 1
    assert sp.simplify(n.transfer("R1") ** 2 - (r2 / r1) ** 2) == 0
    assert sp.simplify(n.transfer("U1.in-") ** 2 - r2**2) == 0
    assert n.transfer("U1.in+") == 0  # the + pin is grounded
    with pytest.raises(opsym.UnknownNameError, match=r"R1, R2, U1\.en"):
        n.transfer("R9")


def test_current_signal_refers_noise_in_amperes():
    c = opsym.Circuit("transimpedance")
    c.current_source("Ipd", "n", "0")
    c.resistor("Rf", "n", "out", value="1M")
    c.capacitor("Cf", "n", "out", value="1p")
    c.opamp("U1", plus="0", minus="n", out="out")
    n = c.noise("out", values={"U1.en": "5n", "U1.in": "1f"})
    b = n.budget(1, 1e4)
    assert b.input_unit == "A"
    assert "referred to the input" in b.to_text() and "A rms" in b.to_text()
    # Rf's own noise current √(4kT/Rf) = 128.3 fA/√Hz dominates at low frequency.
    assert float(n.input_density(1.0)) == pytest.approx(
        math.sqrt(4 * 1.380649e-23 * 298.15 / 1e6 + 1e-30 + (5e-9 / 1e6) ** 2), rel=1e-6
    )


def test_noise_subs_and_missing_density():
    c = opsym.Circuit("follower")
    c.voltage_source("Vin", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    n = c.noise("out")
    with pytest.raises(opsym.BudgetError, match=r"U1\.en"):
        n.rms(1, 10)
    n2 = n.subs({"U1.en": "4n", "U1.in": 0})
    assert n2.rms(1, 101) == pytest.approx(4e-9 * 10, rel=1e-6)  # en·√(100 Hz)


def test_noise_off_leaves_op_amp_sources_out():
    c = opsym.Circuit("quiet op-amp")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", noise=False)
    assert c.noise("out").names == ("R1", "R2")
    assert "U1.en" not in {str(x) for x in c.analyze("out").terms}


def test_frequency_helpers_refuse_bad_input():
    with pytest.raises(opsym.InvalidValueError, match="0 < start < stop"):
        frequency_grid(10, 1)
    with pytest.raises(opsym.BudgetError, match="R1"):
        evaluator(sp.Symbol("R1") * s, "H")
    with pytest.raises(opsym.InvalidValueError, match="finite upper frequency"):
        integrate(lambda f: np.ones_like(f), 1, math.inf)


def test_response_of_named_source_and_ideal():
    c = low_pass_cascade(1)
    res = c.analyze("s1", domain="s", values=pole_values(1))
    f = np.array([10.0, 1e5])
    ideal = res.response(f, "Vin", ideal=True)
    want = -1 / (1 + 2j * np.pi * f * 1e-5)  # −R2/R1/(1 + jωR2C2)
    assert ideal == pytest.approx(want, rel=1e-12)
    assert res.response(f, "U1.Vos")[0] == pytest.approx(2.0, rel=1e-3)  # NG = 2 at low f


def test_noise_takes_densities_from_a_parameter_set():
    params = opsym.opamp_parameters("generic CMOS")
    c = opsym.Circuit("follower")
    c.voltage_source("Vin", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out", gain="pole", bias=False)
    n = c.noise("out", opamps={"U1": params})
    # Well below the closed-loop pole a follower passes en unchanged [derived].
    white = params.en_typ * math.sqrt(1 + (params.fce or 0) / 1e3)
    assert float(n.density(1e3)) == pytest.approx(white, rel=1e-4)
    given = c.noise("out", opamps={"U1": params}, values={"U1.en": "1n", "U1.fce": 0})
    assert float(given.density(1e3)) == pytest.approx(1e-9, rel=1e-4)  # values win
    with pytest.raises(opsym.InvalidValueError, match="OpAmpParams"):
        c.noise("out", opamps={"U1": {"en": 1e-9}})


def test_evaluator_never_runs_text():
    # Text goes through the whitelist value parser, never sympify: code is refused.
    with pytest.raises(opsym.ValueSyntaxError):
        evaluator('__import__("os").getcwd()', "H")
    assert evaluator("2k", "H")(1.0) == pytest.approx(2000.0)


def _two_pole_follower() -> tuple[opsym.Circuit, sp.Symbol, sp.Symbol, sp.Symbol]:
    """A non-inverting stage whose op-amp gain has two poles, with user symbols."""
    a0, w1, w2 = sp.symbols("A0 w1 w2", positive=True)
    c = opsym.Circuit("two-pole non-inverting stage")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0", value="1k")
    c.resistor("R2", "n", "out", value="9k")
    c.opamp("U1", plus="p", minus="n", out="out", gain=a0 / ((1 + s / w1) * (1 + s / w2)),
            offset=False, bias=False)  # fmt: skip
    return c, a0, w1, w2


@pytest.mark.parametrize("how", ["values-name", "values-symbol", "subs-name"])
def test_a_symbol_only_in_gain_can_be_given_a_value(how):
    # Any symbol but s can be set (docs/conventions.md). Hand formula, the closed-loop
    # gain of a non-inverting stage [derived, KCL at n]: H = A/(1 + A·β), β = R1/(R1 + R2)
    # = 1/10, with A(s) = A0/((1 + s/w1)(1 + s/w2)).
    c, a0, w1, w2 = _two_pole_follower()
    numbers = {"A0": 10**5, "w1": 10, "w2": 10**6}
    if how == "values-name":
        res = c.analyze("out", values=numbers, domain="s")
    elif how == "values-symbol":
        res = c.analyze("out", values={a0: 10**5, w1: 10, w2: 10**6}, domain="s")
    else:
        res = c.analyze("out", domain="s").subs(numbers)
    f = 1e3
    jw = 2j * math.pi * f
    a = 1e5 / ((1 + jw / 10) * (1 + jw / 1e6))
    expected = a / (1 + a / 10)
    got = complex(res.coefficient("Vin").subs(s, sp.I * 2 * sp.pi * f).evalf(30))
    assert got == pytest.approx(expected, rel=1e-12)
    assert res.coefficient("Vin").free_symbols == {s}
