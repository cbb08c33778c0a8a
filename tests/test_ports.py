"""Branch currents as outputs and port impedances, against published formulas and KCL.

Sources (citations marked [mem] are from memory):

* Franco, *Design with Operational Amplifiers and Analog Integrated Circuits*,
  §2.4 "the Howland current pump" [mem]: with the bridge balanced
  (``R2/R1 = R4/R3``) the load current is independent of the load, and with a
  mismatch the pump has a finite output resistance; the improved Howland pump
  (the positive-feedback resistor split by a sense resistor) gives a load current
  ``−Vin·R2/(R1·R5)`` in the labelling below [mem]. Each formula is derived again
  by hand (KCL) in the comment beside its check.
* Inverting stage: input impedance ``R1`` with an ideal op-amp (virtual ground),
  ``R1 + R2/(1 + A)`` with a finite gain (Miller, Franco ch. 1 [mem]).
"""

from __future__ import annotations

import pytest
import sympy as sp

import opsym
from opsym import InvalidValueError, NoSolutionError

R1, R2, R3, R4, R5, RL, A = sp.symbols("R1 R2 R3 R4 R5 RL U1.A", positive=True)
VIN = sp.Symbol("Vin")


def _basic_howland(gain="ideal", load=True):
    # R1: Vin → n, R2: n → out, R3: ground → L (= +), R4: out → L, load RL: L → ground.
    c = opsym.Circuit("basic Howland pump")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "L", "0")
    c.resistor("R4", "out", "L")
    if load:
        c.resistor("RL", "L", "0")
    c.opamp("U1", plus="L", minus="n", out="out", gain=gain, bias=False, offset=False)
    return c


def _improved_howland():
    # R1: Vin → n, R2: n → out, R3: ground → p, R4: p → L, R5: out → L (sense),
    # load RL: L → ground.
    c = opsym.Circuit("improved Howland pump")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "p", "0")
    c.resistor("R4", "p", "L")
    c.resistor("R5", "out", "L")
    c.resistor("RL", "L", "0")
    c.opamp("U1", plus="p", minus="n", out="out", bias=False, offset=False)
    return c


def test_improved_howland_balanced_load_current():
    # Hand KCL (ideal op-amp, v = V(p) = V(n)): at p, v = VL·R3/(R3 + R4); at n,
    # Vout = v·(1 + R2/R1) − Vin·R2/R1. Into L: (Vout − VL)/R5 − v/R3. With the
    # bridge balanced, R2/R1 = (R4 + R5)/R3, the VL terms cancel and
    # I(RL) = −Vin·R2/(R1·R5) (Franco §2.4 [mem]), whatever RL.
    i = _improved_howland().analyze("I(RL)").coefficient("Vin")
    balanced = i.subs(R2, R1 * (R4 + R5) / R3)
    assert sp.simplify(balanced - (-R2 / (R1 * R5)).subs(R2, R1 * (R4 + R5) / R3)) == 0
    assert RL not in sp.simplify(balanced).free_symbols


def test_branch_currents_obey_kcl():
    # KCL at L: the currents of R4 (p → L) and R5 (out → L) leave through RL (L → 0).
    c = _improved_howland()
    got = {n: c.analyze(f"I({n})").coefficient("Vin") for n in ("R4", "R5", "RL")}
    assert sp.simplify(got["R4"] + got["R5"] - got["RL"]) == 0
    # The op-amp's output current all flows into R2 and R5 (ideal inputs draw none);
    # I(R2) runs n → out, so the op-amp delivers I(R5) − I(R2).
    i_out = c.analyze("I(U1)").coefficient("Vin")
    i_r2 = c.analyze("I(R2)").coefficient("Vin")
    assert sp.simplify(i_out - (got["R5"] - i_r2)) == 0
    # A voltage source's current runs plus → minus through it: −(current into R1).
    i_src = c.analyze("I(Vin)").coefficient("Vin")
    i_r1 = c.analyze("I(R1)").coefficient("Vin")
    assert sp.simplify(i_src + i_r1) == 0


def test_basic_howland_output_resistance_with_mismatch():
    # Hand KCL (ideal op-amp, V(n) = VL): Vout = VL·(1 + R2/R1) − Vin·R2/R1; current
    # into L from R3 and R4: −VL/R3 + (Vout − VL)/R4 = −Vin·R2/(R1·R4) − VL·(1/R3 −
    # R2/(R1·R4)). So Rout = 1/(1/R3 − R2/(R1·R4)) = R1·R3·R4/(R1·R4 − R2·R3), infinite
    # for a balanced bridge R2/R1 = R4/R3 (Franco §2.4 [mem]).
    z = opsym.output_impedance(_basic_howland(load=False), "L").impedance
    assert sp.simplify(z - R1 * R3 * R4 / (R1 * R4 - R2 * R3)) == 0
    # Mismatch: R4 = R3·(R2/R1)·(1 + e) gives Rout = R3·(1 + e)/e.
    e = sp.Symbol("e", positive=True)
    assert sp.simplify(z.subs(R4, R3 * R2 / R1 * (1 + e)) - R3 * (1 + e) / e) == 0
    # Balanced: I(RL) = −Vin/R3, independent of RL.
    i = _basic_howland().analyze("I(RL)").coefficient("Vin").subs(R4, R2 * R3 / R1)
    assert sp.simplify(i + 1 / R3) == 0


def test_basic_howland_output_resistance_finite_gain_by_hand():
    # Independent computation: the node equations written by hand (not by the
    # stamps) with a test current It into L, Vin = 0, solved by SymPy.
    vn, vl, vo, it = sp.symbols("vn vl vo It")
    eqs = [
        sp.Eq((0 - vn) / R1 + (vo - vn) / R2, 0),
        sp.Eq(it + (0 - vl) / R3 + (vo - vl) / R4, 0),
        sp.Eq(vo, A * (vl - vn)),
    ]
    sol = sp.solve(eqs, [vn, vl, vo], dict=True)[0]
    want = sp.simplify(sol[vl] / it)
    got = opsym.output_impedance(_basic_howland("finite", load=False), "L")
    assert sp.simplify(got.impedance - want) == 0
    # Normalized sensitivity (x/Z)·∂Z/∂x, through the same closed form.
    assert sp.simplify(got.sensitivity("R4") - sp.simplify(R4 * sp.diff(want, R4) / want)) == 0


def test_inverting_input_impedance():
    # Virtual ground: Zin = R1 (ideal); R1 + R2/(1 + A) with finite gain (Miller).
    c = opsym.Circuit()
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    assert opsym.input_impedance(c, "Vin").impedance == R1
    c2 = opsym.Circuit()
    c2.voltage_source("Vin", "in", "0")
    c2.resistor("R1", "in", "n")
    c2.resistor("R2", "n", "out")
    c2.opamp("U1", plus="0", minus="n", out="out", gain="finite", bias=False)
    z = opsym.input_impedance(c2, "Vin").impedance
    assert sp.simplify(z - (R1 + R2 / (1 + A))) == 0


def test_current_source_input_impedance_and_rc_output():
    # A current source into the − node of a transimpedance stage sees 0 Ω with an
    # ideal op-amp; an RC divider's output impedance is R ‖ 1/(sC) (hand analysis).
    c = opsym.Circuit()
    c.current_source("Iin", "0", "n")
    c.resistor("Rf", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    assert opsym.input_impedance(c, "Iin").impedance == 0
    d = opsym.Circuit()
    d.voltage_source("Vin", "in", "0")
    d.resistor("R", "in", "out")
    d.capacitor("C", "out", "0")
    z = opsym.output_impedance(d, "out", domain="s").impedance
    r, cap, s = sp.Symbol("R", positive=True), sp.Symbol("C", positive=True), opsym.s
    assert sp.simplify(z - r / (1 + s * r * cap)) == 0


def test_refusals():
    c = opsym.Circuit()
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.current_source("I1", "0", "out")
    c.opamp("U1", plus="p", minus="n", out="out", bias=False)
    with pytest.raises(NoSolutionError, match="Vin"):
        opsym.input_impedance(c, "Vin")  # drives only the + input: an open port
    with pytest.raises(InvalidValueError, match="I1"):
        c.analyze("I(I1)")
    with pytest.raises(opsym.UnknownNameError, match="R9"):
        c.analyze("I(R9)")


def test_current_output_budget_is_in_amperes():
    # Basic Howland pump, every resistor R, ideal op-amp, Vos in series with the +
    # pin (docs/conventions.md): KCL at n and L gives I(RL) = (2·Vos − Vin)/R, so Vos
    # moves the load current by 2·Vos/R (hand analysis; the textbook Howland result
    # I = −Vin/R with matched resistors, e.g. Franco, Design with Operational
    # Amplifiers, 3rd ed., §2.5, from memory). With A = 100k it is within 1e-4 of that.
    c = opsym.Circuit("basic Howland pump")
    c.voltage_source("Vin", "in", "0")
    for name, a, b in (("R1", "in", "n"), ("R2", "n", "out"), ("R3", "L", "0"),
                       ("R4", "out", "L"), ("RL", "L", "0")):  # fmt: skip
        c.resistor(name, a, b)
    c.opamp("U1", plus="L", minus="n", out="out", gain="finite", bias=False)
    values = {"R1": "10k", "R2": "10k", "R3": "10k", "R4": "10k", "RL": "1k",
              "U1.A": "100k", "Vin": "1 V", "U1.Vos": "1 mV"}  # fmt: skip
    b = opsym.error_budget(c.analyze("I(RL)"), values)
    assert b.output_unit == "A" and b.input_unit == "V"
    vos = b.row("U1.Vos")
    assert vos.coefficient == pytest.approx(2 / 10e3, rel=1e-4)
    assert abs(vos.output) == pytest.approx(200e-9, rel=1e-4)
    text = b.to_markdown()
    assert "200 µS" in text and "±200 nA" in text and "V/V" not in text
    assert "G = -99.99" in text and "µS from Vin" in text  # −1/R, written as the trade does
    assert "ΔG = +2.4 nS" in text  # finite A: G(A) − G(∞), in siemens
    assert "PASS" in opsym.Requirement(max_output_error="1 µA").verdict(b).line()
    with pytest.raises(opsym.BudgetError, match=r"limit is in V but .* is in A"):
        opsym.Requirement(max_output_error="5 mV").verdict(b)
    with pytest.raises(opsym.BudgetError, match="ADC converts a voltage"):
        opsym.error_budget(c.analyze("I(RL)"), values, adc=opsym.ADC.unipolar(16, 5.0))
    # Its noise is in A/√Hz (tests/test_noise_currents.py checks the numbers).
    assert c.noise("I(RL)", values=values).output_unit == "A"


def test_current_input_requirement_is_in_amperes():
    # Transimpedance stage: Vos at the output is Vos·(1 + Rf/∞) = Vos, referred to the
    # input current it is Vos/Rf (hand analysis): 1 mV / 1 MΩ = 1 nA.
    c = opsym.Circuit("transimpedance")
    c.current_source("Iin", "0", "n")
    c.resistor("Rf", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    b = opsym.error_budget(c.analyze("out"), {"Rf": "1meg", "Iin": "1 uA", "U1.Vos": "1 mV"})
    assert b.input_unit == "A" and b.output_unit == "V"
    assert b.worst_case_input == pytest.approx(1e-9)
    assert "PASS" in opsym.Requirement(max_input_error="2 nA").verdict(b).line()
    assert "FAIL" in opsym.Requirement(max_input_error=0.5e-9).verdict(b).line()
    with pytest.raises(opsym.BudgetError, match=r"limit is in V but .* is in A"):
        opsym.Requirement(max_input_error="2 mV").verdict(b)
