"""Published and derived reference cases for the symbolic core, and error handling.

Case numbers are those of ``/work/shared/reference-checks.md``; each check names its
source beside it with the tags used there: [pub] published, [mem] cited from memory,
[trade] common practice, [derived] KCL/superposition. Symbolic checks use
``simplify(got - want) == 0``; published numbers are compared at the source's own
rounding. All component values are invented demo values.
"""

from __future__ import annotations

import math
from itertools import product

import pytest
import sympy as sp

import opsym

R1, R2, R3, R4, Rp, Rs, RG, Rf, Rsh = sp.symbols("R1 R2 R3 R4 Rp Rs RG Rf Rsh", positive=True)
A = sp.Symbol("U1.A", positive=True)
Vos, Ibp, Ibm = (sp.Symbol(f"U1.{n}", real=True) for n in ("Vos", "Ib+", "Ib-"))
Ib, Ios = sp.Symbol("U1.Ib", real=True), sp.Symbol("U1.Ios", real=True)


def same(got, want) -> bool:
    return sp.simplify(sp.sympify(got) - sp.sympify(want)) == 0


def num(expr, values) -> float:
    return float(sp.sympify(expr).subs({sp.Symbol(k, **_assume(k)): v for k, v in values.items()}))


def _assume(name: str) -> dict:
    if name.startswith("U1."):
        return {"positive": True} if name.endswith(".A") else {"real": True}
    return {"real": True} if name[0] in "VI" else {"positive": True}


def inverting(rp=False, gain="ideal", **opts):
    c = opsym.Circuit("inverting")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    plus = "0"
    if rp:
        c.resistor("Rp", "p", "0")
        plus = "p"
    c.opamp("U1", plus=plus, minus="n", out="out", gain=gain, **opts)
    return c


def noninverting(rs=False, gain="ideal", **opts):
    c = opsym.Circuit("non-inverting")
    c.voltage_source("Vin", "in", "0")
    plus = "in"
    if rs:
        c.resistor("Rs", "in", "p")
        plus = "p"
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus=plus, minus="n", out="out", gain=gain, **opts)
    return c


# -- case 1: inverting amplifier, output offset from Vos ------------------------------


def test_case1_inverting_offset():
    res = inverting().analyze("out")
    # Sedra & Smith, Microelectronic Circuits 6th ed., ch. 2 §2.6.1 [mem]: Vo = Vos·(1 + R2/R1)
    assert same(res.coefficient("U1.Vos"), 1 + R2 / R1)
    vo = num(res.coefficient("U1.Vos") * Vos, {"R1": 1000, "R2": 100_000, "U1.Vos": 1e-3})
    assert round(vo * 1e3, 1) == 101.0  # Sedra & Smith §2.6.1 [mem]: 101.0 mV


# -- case 2: bias currents, no compensation -----------------------------------------


def test_case2_inverting_bias_currents():
    res = inverting(rp=True).analyze("out")
    # Eggleston, Basic Electronics for Scientists and Engineers (CUP 2011) §6.4 eq. 6.16 [pub]
    want = Ibm * R2 - Ibp * Rp * (1 + R2 / R1)
    got = res.coefficient("U1.Ib-") * Ibm + res.coefficient("U1.Ib+") * Ibp
    assert same(got, want)
    # Rp = 0: + pin grounded; Vo = Ib-·R2, Eggleston §6.4 eq. 6.16 [pub]
    res0 = inverting().analyze("out")
    assert same(res0.coefficient("U1.Ib-"), R2) and res0.coefficient("U1.Ib+") == 0
    vo = num(res0.coefficient("U1.Ib-"), {"R2": 100_000}) * 95e-9
    assert f"{vo * 1e3:+.2f}" == "+9.50"  # Eggleston §6.4 [pub]: +9.50 mV


# -- case 3: optimum bias-compensation resistor and residual -------------------------


def test_case3_compensation_resistor_and_residual():
    res = inverting(rp=True).analyze("out")
    eq = res.null("U1.Ib", by="Rp")
    # Eggleston §6.4 eqs. 6.16–6.18 [pub]; Franco ch. 5 [mem]; Rp = R1‖R2 [trade]
    assert eq.lhs == Rp and same(eq.rhs, R1 * R2 / (R1 + R2))
    nulled = res.subs({"Rp": eq.rhs})
    # after the substitution the bias error is exactly -R2·(Ib+ - Ib-) (Eggleston
    # defines Ios = Ib- - Ib+; mapped here to Ios = Ib+ - Ib-) [pub]
    bias = nulled.coefficient("U1.Ib+") * Ibp + nulled.coefficient("U1.Ib-") * Ibm
    assert same(bias, -R2 * (Ibp - Ibm))
    avg = nulled.with_average_bias()
    assert same(avg.coefficient("U1.Ib"), 0)
    assert same(avg.coefficient("U1.Ios"), -R2)
    # with Vos: Vo = Vos·(1 + R2/R1) - Ios·R2  [pub, Eggleston eq. 6.18]
    errors = sum(avg.coefficient(s) * sp.Symbol(s, real=True) for s in ("U1.Vos", "U1.Ios"))
    assert same(errors, Vos * (1 + R2 / R1) - Ios * R2)
    # numbers: R1 = 10 kΩ, R2 = 100 kΩ -> Rp = 9.0909 kΩ; Ios = +10 nA -> -1.000 mV [pub]
    assert round(num(eq.rhs, {"R1": 1e4, "R2": 1e5}) / 1e3, 4) == 9.0909
    vo = num(avg.coefficient("U1.Ios"), {"R2": 1e5}) * 10e-9
    assert f"{vo * 1e3:.3f}" == "-1.000"
    # and against no compensation, Ib = 100 nA, Ios = +10 nA (Ib- = 95 nA): +9.50 mV [pub]
    plain = inverting().analyze("out").with_average_bias()
    vo0 = num(plain.coefficient("U1.Ib") * 100e-9 + plain.coefficient("U1.Ios") * 10e-9,
              {"R2": 1e5})  # fmt: skip
    assert f"{vo0 * 1e3:+.2f}" == "+9.50"


# -- case 4: non-inverting amplifier with source resistance ---------------------------


def test_case4_noninverting_with_source_resistance():
    res = noninverting(rs=True).analyze("out")
    g = 1 + R2 / R1
    # Sedra & Smith 6th ed., problem 2.104 (problem [pub], numbers [derived])
    assert same(res.coefficient("U1.Vos"), g)
    assert same(res.coefficient("U1.Ib-"), R2)
    assert same(res.coefficient("U1.Ib+"), -Rs * g)
    eq = res.null("U1.Ib", by="Rs")
    assert same(eq.rhs, R1 * R2 / (R1 + R2)) and same(eq.rhs, R2 / g)  # R1‖R2 = R2/G
    avg = res.subs({"Rs": eq.rhs}).with_average_bias()
    assert same(avg.coefficient("U1.Vos") * Vos + avg.coefficient("U1.Ios") * Ios,
                g * Vos - Ios * R2)  # fmt: skip
    # G = 100, R2 = 1 MΩ, R1 = 1 MΩ/99 (10.101 kΩ), Ib = 100 nA, Rs = 0 -> 0.100 V [derived]
    values = {"R1": sp.Rational(10**6, 99), "R2": 10**6}
    plain = noninverting().analyze("out").with_average_bias()
    assert f"{num(plain.coefficient('U1.Ib'), values) * 100e-9:.3f}" == "0.100"
    # the compensation resistor is 10.000 kΩ [derived]
    assert f"{num(eq.rhs, values) / 1e3:.3f}" == "10.000"
    # |Ios| ≤ 10 nA -> |Vo| ≤ 10 mV with it fitted (Vos aside) [derived]
    assert round(abs(num(avg.coefficient("U1.Ios"), values)) * 10e-9 * 1e3, 3) == 10.0


# -- case 5: finite open-loop gain ----------------------------------------------------


def test_case5_finite_gain_closed_forms():
    beta = R1 / (R1 + R2)
    ni = noninverting(gain="finite").analyze("out")
    inv = inverting(gain="finite").analyze("out")
    # Franco ch. 1, closed-loop gain a/(1 + a·beta) [mem]
    assert same(ni.coefficient("Vin"), A / (1 + A * beta))
    assert same(inv.coefficient("Vin"), -A * R2 / (A * R1 + R1 + R2))
    # fractional gain error 1/(1 + A·beta), negative: the gain falls short [mem, Franco ch. 1]
    assert same(ni.gain_error(), -1 / (1 + A * beta))
    assert same(inv.gain_error(), -1 / (1 + A * beta))
    # first order in 1/A: -1/(A·beta) [mem, Jung (ed.) Op Amp Applications Handbook ch. 1]
    assert same(ni.gain_error(order=1), -1 / (A * beta))
    assert same(inv.gain_error(order=1), -1 / (A * beta))
    assert same(inv.ideal().coefficient("Vin"), -R2 / R1)


@pytest.mark.parametrize(("g_ideal", "printed"), [(10, "0.04998"), (1000, "4.762")])
def test_case5_gain_error_numbers(g_ideal, printed):
    # Franco ch. 1 [mem]; Jung (ed.) ch. 1 [mem]: A = 20 000; G = 10 -> 0.04998 %,
    # G = 1000 -> 4.762 % (not 5 %)
    res = noninverting(gain="finite").analyze("out")
    err = num(res.gain_error(), {"R1": 1000, "R2": 1000 * (g_ideal - 1), "U1.A": 20_000})
    digits = len(printed.split(".")[1])
    assert f"{abs(err) * 100:.{digits}f}" == printed


def test_case5_inverting_number():
    # Franco ch. 1 [mem]: R1 = 1 kΩ, R2 = 10 kΩ, A = 1e5 -> G = -9.998900121
    res = inverting(gain="finite").analyze("out")
    g = num(res.coefficient("Vin"), {"R1": 1000, "R2": 10_000, "U1.A": 100_000})
    assert f"{g:.9f}" == "-9.998900121"


# -- case 6: noise gain, not signal gain -----------------------------------------------


def test_case6_noise_gain():
    res = inverting(gain="finite").analyze("out")
    values = {"R1": 10_000, "R2": 10_000, "U1.A": 100_000}
    # Jung (ed.), Op Amp Applications Handbook, ch. 1, noise gain [mem]
    assert num(res.ideal().coefficient("Vin"), values) == -1  # signal gain -1
    assert num(res.ideal().coefficient("U1.Vos"), values) == 2  # Vos appears ×2 [mem]
    ppm = abs(num(res.gain_error(), values)) * 1e6
    assert f"{ppm:.4f}" == "19.9996"  # not 10 ppm [mem, Jung ch. 1]


# -- case 7: MNA formulation -------------------------------------------------------------


def test_case7_mna_example():
    # Ho, Ruehli & Brennan, IEEE Trans. Circuits and Systems CAS-22(6), 1975 [mem]
    c = opsym.Circuit("MNA example")
    c.voltage_source("Vin", "1", "0")
    c.resistor("R1", "1", "2")
    c.resistor("R2", "2", "3")
    c.opamp("U1", plus="0", minus="2", out="3", gain="finite")
    res = c.analyze("3")
    assert same(res.coefficient("Vin"), -A * R2 / (A * R1 + R1 + R2))
    assert same(sp.limit(res.coefficient("Vin"), A, sp.oo), -R2 / R1)
    assert same(res.ideal().coefficient("Vin"), -R2 / R1)
    v3 = num(res.coefficient("Vin"), {"R1": 1000, "R2": 10_000, "U1.A": 100_000}) * 1.0
    assert f"{v3:.9f}" == "-9.998900121"  # CAS-22(6) 1975 [mem]: V3 = -9.998900121 V


# -- case 8: difference amplifier -------------------------------------------------------


def difference():
    c = opsym.Circuit("difference")
    c.voltage_source("V1", "a", "0")
    c.voltage_source("V2", "b", "0")
    c.resistor("R1", "a", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "b", "p")
    c.resistor("R4", "p", "0")
    c.opamp("U1", plus="p", minus="n", out="out")
    return c.analyze("out")


def test_case8_difference_amplifier():
    res = difference()
    # Sedra & Smith 6th ed., §2.4 and exercise 2.15 [pub]
    assert same(res.coefficient("V2"), R4 / (R3 + R4) * (1 + R2 / R1))
    assert same(res.coefficient("V1"), -R2 / R1)
    acm = res.coefficient("V1") + res.coefficient("V2")
    assert same(acm, (R1 * R4 - R2 * R3) / (R1 * (R3 + R4)))  # [pub] §2.4
    # balance: R4/R3 = R2/R1 [pub] §2.4
    assert [same(s, R2 * R3 / R1) for s in sp.solve(sp.numer(sp.together(acm)), R4)] == [True]
    # R1 = R3 = 10 kΩ, R2 = 100 kΩ, R4 = 101 kΩ, Vcm = 1 V -> +9.009 mV [pub]
    v = num(acm, {"R1": 1e4, "R3": 1e4, "R2": 1e5, "R4": 1.01e5})
    assert f"{v * 1e3:+.3f}" == "+9.009"


def test_case8_worst_case_cmrr():
    # Sedra & Smith §2.4 [pub]; worst case from tolerance t, K = R2/R1: CMRR ≈ (1 + K)/(4t)
    res = difference()
    acm = res.coefficient("V1") + res.coefficient("V2")
    ad = (res.coefficient("V2") - res.coefficient("V1")) / 2
    nominal = {"R1": 2e3, "R3": 2e3, "R2": 2e5, "R4": 2e5}
    worst = None
    for signs in product((-1, 1), repeat=4):
        vals = {k: v * (1 + s * 0.01) for (k, v), s in zip(nominal.items(), signs, strict=True)}
        a = num(acm, vals)
        if worst is None or abs(a) > abs(worst[0]):
            worst = (a, num(ad, vals))
    a_cm, a_d = worst
    assert round(abs(a_cm), 2) == 0.04  # worst Acm ≈ 0.04 V/V [pub]
    assert round(20 * math.log10((1 + 100) / (4 * 0.01))) == 68  # ≈ 68 dB [pub]
    assert f"{20 * math.log10(abs(a_d / a_cm)):.2f}" == "68.04"  # exact corner [derived]


# -- case 9: three-op-amp instrumentation amplifier ------------------------------------


def test_case9_instrumentation_gain():
    r2, rg, r3, r4 = R2, RG, R3, R4
    c = opsym.Circuit("instrumentation")
    c.voltage_source("V1", "i1", "0")
    c.voltage_source("V2", "i2", "0")
    c.resistor("R2a", "o1", "n1", value=r2)
    c.resistor("RG", "n1", "n2")
    c.resistor("R2b", "n2", "o2", value=r2)
    c.resistor("R3a", "o1", "n3", value=r3)
    c.resistor("R4a", "n3", "out", value=r4)
    c.resistor("R3b", "o2", "p3", value=r3)
    c.resistor("R4b", "p3", "0", value=r4)
    c.opamp("A1", plus="i1", minus="n1", out="o1")
    c.opamp("A2", plus="i2", minus="n2", out="o2")
    c.opamp("A3", plus="p3", minus="n3", out="out")
    res = c.analyze("out")
    # Sedra & Smith §2.4.2 (labels mapped by topology) [pub]; Horowitz & Hill [mem]
    g = (1 + 2 * r2 / rg) * r4 / r3
    assert same(res.coefficient("V2"), g)
    assert same(res.coefficient("V1"), -g)
    assert num(g, {"R2": 49_500, "RG": 1000, "R3": 1, "R4": 1}) == 100  # G = 100 [pub]


# -- case 10: transimpedance amplifier ---------------------------------------------------


def tia(rp=True):
    c = opsym.Circuit("transimpedance")
    c.current_source("Iin", "0", "n")
    c.resistor("Rsh", "n", "0")
    c.resistor("Rf", "n", "out")
    plus = "0"
    if rp:
        c.resistor("Rp", "p", "0")
        plus = "p"
    c.opamp("U1", plus=plus, minus="n", out="out")
    return c.analyze("out")


def test_case10_transimpedance():
    res = tia()
    iin = sp.Symbol("Iin", real=True)
    # Shinar & Shinar (eds.), Organic Electronics in Sensors and Biotechnology
    # (McGraw-Hill 2009) ch. 6, eqs. 6.50–6.51 [pub]
    want = -iin * Rf + Vos * (1 + Rf / Rsh) + Ibm * Rf - Ibp * Rp * (1 + Rf / Rsh)
    assert same(res.expression, want)
    # Rf = 10 MΩ, Rsh = 100 MΩ, Vos = 500 µV, Ib- = 2 pA, Rp = 0 -> 570 µV [pub]
    plain = tia(rp=False)
    vo = num(plain.coefficient("U1.Vos"), {"Rf": 1e7, "Rsh": 1e8}) * 500e-6
    vo += num(plain.coefficient("U1.Ib-"), {"Rf": 1e7}) * 2e-12
    assert round(vo * 1e6) == 570


# -- case 11: resistor tolerance to gain error --------------------------------------------


def test_case11_sensitivity_and_tolerance():
    res = noninverting().analyze("out")
    g = 1 + R2 / R1
    # [derived]; normalized sensitivity (x/y)·dy/dx as in Franco, filter chapters [mem]
    assert same(res.sensitivity("R2", of="gain"), (g - 1) / g)
    assert same(res.sensitivity("R1", of="gain"), -(g - 1) / g)
    assert same(res.sensitivity("R2", of="Vin"), (g - 1) / g)
    assert same(res.sensitivity("R2", of="gain", normalized=False), 1 / R1)
    gain = res.coefficient("Vin")
    nominal = num(gain, {"R1": 1000, "R2": 9000})
    corners = [num(gain, {"R1": 1000 * (1 + a), "R2": 9000 * (1 + b)})
               for a, b in product((-0.01, 0.01), repeat=2)]  # fmt: skip
    hi, lo = max(corners) / nominal - 1, min(corners) / nominal - 1
    assert f"{hi * 100:+.3f}" == "+1.818" and f"{lo * 100:+.3f}" == "-1.782"  # [derived]


# -- case 12: CMRR and PSRR referred to input ----------------------------------------------


def test_case12_cmrr_psrr():
    res = noninverting(cmrr=True, psrr=True).analyze("out")
    cmrr, vcm = sp.Symbol("U1.CMRR", real=True, nonzero=True), sp.Symbol("U1.Vcm", real=True)
    psrr, dvs = sp.Symbol("U1.PSRR", real=True, nonzero=True), sp.Symbol("U1.dVs", real=True)
    g = 1 + R2 / R1
    # [derived]: ΔVos = ΔVcm/CMRR + ΔVs/PSRR; output error = NG·ΔVos
    assert same(res.coefficient("U1.Vcm"), g / cmrr)
    assert same(res.coefficient("U1.dVs"), g / psrr)
    rti = res.input_referred("Vin")
    assert same(rti[vcm] * vcm + rti[dvs] * dvs, vcm / cmrr + dvs / psrr)
    # G = 10, Vcm = 1 V, CMRR = 90 dB -> 31.6 µV RTI, 316 µV RTO [derived]
    values = {R1: 1000, R2: 9000, cmrr: 10 ** (90 / 20), vcm: 1}
    assert round(float((rti[vcm] * vcm).subs(values)) * 1e6, 1) == 31.6
    assert round(float((res.coefficient("U1.Vcm") * vcm).subs(values)) * 1e6) == 316


# -- error handling --------------------------------------------------------------------------


def test_errors_share_one_root():
    for cls in (
        opsym.DuplicateNameError,
        opsym.InvalidValueError,
        opsym.FloatingNodeError,
        opsym.NoFeedbackError,
        opsym.UnknownNameError,
        opsym.SingularCircuitError,
        opsym.NoSolutionError,
    ):
        assert issubclass(cls, opsym.OpsymError)
    assert issubclass(opsym.SingularCircuitError, ArithmeticError)
    assert issubclass(opsym.UnknownNameError, LookupError)
    assert issubclass(opsym.InvalidValueError, ValueError)


def test_duplicate_names():
    c = opsym.Circuit("dup")
    c.resistor("R1", "a", "0", value=1000)
    with pytest.raises(opsym.DuplicateNameError, match="R1"):
        c.resistor("R1", "a", "b")
    with pytest.raises(opsym.DuplicateNameError, match="R1"):
        c.opamp("R1", plus="a", minus="b", out="c")
    c.opamp("U1", plus="a", minus="n", out="out")
    with pytest.raises(opsym.DuplicateNameError, match="U1"):
        c.voltage_source("U1", "a", "0")


def test_unknown_nodes_and_symbols():
    c = inverting(rp=True)
    with pytest.raises(opsym.UnknownNameError, match="nowhere"):
        c.analyze("nowhere")
    with pytest.raises(opsym.UnknownNameError, match="nowhere"):
        c.analyze(("out", "nowhere"))
    with pytest.raises(opsym.UnknownNameError, match="R9"):
        c.symbol("R9")
    with pytest.raises(opsym.UnknownNameError, match=r"U1\.Vxx"):
        c.symbol("U1.Vxx")
    res = c.analyze("out")
    with pytest.raises(opsym.UnknownNameError, match="U9"):
        res.coefficient("U9.Vos")
    with pytest.raises(opsym.UnknownNameError, match="Rzz"):
        res.null("U1.Ib", by="Rzz")
    with pytest.raises(opsym.UnknownNameError, match="Rzz"):
        res.sensitivity("Rzz", of="U1.Vos")


@pytest.mark.parametrize("bad", [0, -1, -1e3, float("nan"), float("inf"), -float("inf"), sp.nan,
                                 sp.oo, sp.zoo, 0.0, sp.Integer(-5)])  # fmt: skip
def test_invalid_component_values(bad):
    c = opsym.Circuit("bad values")
    with pytest.raises(opsym.InvalidValueError, match="R1"):
        c.resistor("R1", "a", "0", value=bad)
    with pytest.raises(opsym.InvalidValueError, match="C1"):
        c.capacitor("C1", "a", "0", value=bad)
    with pytest.raises(opsym.InvalidValueError, match="U1"):
        c.opamp("U1", plus="a", minus="n", out="out", gain=bad)


@pytest.mark.parametrize("bad", [float("nan"), float("inf"), sp.nan, sp.oo, sp.zoo])
def test_invalid_source_values(bad):
    c = opsym.Circuit("bad sources")
    with pytest.raises(opsym.InvalidValueError, match="V1"):
        c.voltage_source("V1", "a", "0", value=bad)
    with pytest.raises(opsym.InvalidValueError, match="I1"):
        c.current_source("I1", "a", "0", value=bad)


def test_invalid_values_in_analyze_and_subs():
    c = inverting()
    with pytest.raises(opsym.InvalidValueError, match="R1"):
        c.analyze("out", values={"R1": 0})
    with pytest.raises(opsym.InvalidValueError, match="R1"):
        c.analyze("out", values={"R1": float("nan")})


def test_floating_island_names_its_nodes():
    c = inverting()
    c.resistor("Rx", "island_a", "island_b", value=1000)
    c.current_source("Ix", "island_a", "island_b")
    with pytest.raises(opsym.FloatingNodeError) as err:
        c.analyze("out")
    assert "island_a" in str(err.value) and "island_b" in str(err.value)
    # a node reached only through a capacitor floats at DC
    c = inverting()
    c.capacitor("Cx", "out", "cap_only", value=1e-9)
    c.resistor("Rx", "cap_only", "cap_two", value=1000)
    with pytest.raises(opsym.FloatingNodeError, match="cap_only"):
        c.analyze("out")


def test_loop_of_voltage_sources():
    c = opsym.Circuit("loop")
    c.voltage_source("Va", "a", "0")
    c.voltage_source("Vb", "b", "a")
    c.voltage_source("Vc", "b", "0")
    c.resistor("R1", "b", "0", value=1000)
    with pytest.raises(opsym.SingularCircuitError) as err:
        c.analyze("b")
    msg = str(err.value)
    assert all(name in msg for name in ("Va", "Vb", "Vc")), msg


def test_source_across_opamp_output():
    c = inverting()
    c.voltage_source("Vx", "out", "0")
    with pytest.raises(opsym.SingularCircuitError) as err:
        c.analyze("out")
    assert "Vx" in str(err.value) and "U1" in str(err.value)


def test_two_opamp_outputs_tied():
    c = inverting()
    c.resistor("R5", "n2", "out", value=1e4)
    c.resistor("R6", "n2", "0", value=1e4)
    c.opamp("U2", plus="0", minus="n2", out="out")
    with pytest.raises(opsym.SingularCircuitError) as err:
        c.analyze("out")
    assert "U1" in str(err.value) and "U2" in str(err.value)


def test_opamp_without_dc_feedback():
    # comparator: nothing from the output back to the - pin
    c = opsym.Circuit("open loop")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0", value=1000)
    c.resistor("RL", "out", "0", value=1000)
    c.opamp("U1", plus="p", minus="n", out="out")
    with pytest.raises(opsym.NoFeedbackError, match="U1"):
        c.analyze("out")
    # integrator: the only feedback is a capacitor, open at DC
    c = opsym.Circuit("integrator")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.capacitor("C1", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out")
    with pytest.raises(opsym.NoFeedbackError, match="U1"):
        c.analyze("out")


def test_null_without_positive_solution():
    res = inverting(rp=True).analyze("out")
    # Vos·(1 + R2/R1) cannot vanish for a positive R2
    with pytest.raises(opsym.NoSolutionError, match="R2"):
        res.null("U1.Vos", by="R2")
    # R1 does not appear in the coefficient of Ib-  (= R2)
    with pytest.raises(opsym.NoSolutionError):
        res.null("U1.Ib-", by="R1")
    # the Ib+ term -Rp·(1 + R2/R1) vanishes only at Rp = 0, not positive
    with pytest.raises(opsym.NoSolutionError, match="Rp"):
        res.null("U1.Ib+", by="Rp")


def test_singular_part_away_from_the_output():
    # Minimal reproducer from test_properties: a degenerate follower (its + pin hangs
    # off its own output through Rx) next to a well-posed source. The circuit has no
    # unique DC solution, whichever node is asked for.
    c = opsym.Circuit("singular elsewhere")
    c.voltage_source("Vs1", "v1", "0")
    c.resistor("R1", "v1", "0", value=1000)
    c.resistor("Rx", "x", "o1", value=150)
    c.opamp("U1", plus="x", minus="o1", out="o1")
    with pytest.raises(opsym.SingularCircuitError, match="U1"):
        c.analyze("o1")
    with pytest.raises(opsym.SingularCircuitError, match="U1"):
        c.analyze("v1")


def test_gain_must_be_ideal_finite_or_a_number():
    c = opsym.Circuit("gain words")
    with pytest.raises(opsym.InvalidValueError, match="'ideal', 'finite', 'pole' or a number"):
        c.opamp("U1", plus="p", minus="n", out="o", gain="fast")
    with pytest.raises(opsym.InvalidValueError, match="ambiguous"):
        c.opamp("U2", plus="p", minus="n", out="o", gain=None)
    c.opamp("U3", plus="p", minus="n", out="o", gain="200k")
    assert c.element("U3").gain == 200_000
