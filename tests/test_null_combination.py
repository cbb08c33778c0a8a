"""The null of a sum of terms: a trim network that zeroes a stage's total output offset.

The stage (invented values): a non-inverting amplifier of gain G = 1 + R2/R1 = 11
whose + pin sits on R3 = 100 Ω to ground and is pulled by a trim resistor R7 from
a −15 V reference. KCL at the + pin (Ib+ leaving the node into the pin) gives

    V(+) = (Vref·R3 − Ib+·R3·R7)/(R3 + R7),

and at the − pin (Ib- into the pin, fed through R2 from the output)

    Vout = G·(V(+) + Vos) + Ib-·R2.

Setting Vout = 0 is linear in R7:

    R7·(G·Vos − G·Ib+·R3 + Ib-·R2) = −R3·(G·Vos + G·Vref + Ib-·R2)   [derived, KCL]
"""

from __future__ import annotations

from fractions import Fraction

import pytest
import sympy as sp

import opsym


def _trim_stage(vref: str = "-15") -> opsym.Result:
    c = opsym.Circuit("trimmed stage")
    c.voltage_source("Vref", "ref", "0", value=vref)
    c.resistor("R7", "ref", "p")
    c.resistor("R3", "p", "0", value=100)
    c.resistor("R1", "n", "0", value="10k")
    c.resistor("R2", "n", "out", value="100k")
    c.opamp("U1", plus="p", minus="n", out="out")
    return c.analyze("out")


VALUES = {"U1.Vos": "1m", "U1.Ib+": "100n", "U1.Ib-": "80n"}


def _hand_r7(vref: Fraction) -> Fraction:
    """R7 from the KCL derivation of the module docstring, in exact fractions."""
    g, r2, r3 = Fraction(11), Fraction(100_000), Fraction(100)
    vos, ibp, ibm = Fraction(1, 1000), Fraction(100, 10**9), Fraction(80, 10**9)
    return -r3 * (g * vos + g * vref + ibm * r2) / (g * vos - g * ibp * r3 + ibm * r2)


def test_trim_resistor_against_kcl():
    res = _trim_stage()
    eq = res.null(["U1.Vos", "U1.Ib+", "U1.Ib-", "Vref"], by="R7", values=VALUES)
    expected = _hand_r7(Fraction(-15))  # [derived, KCL] — about 873.4 kΩ
    assert eq.rhs == sp.Rational(expected.numerator, expected.denominator)
    # the total output at that R7 is zero (the check, independent of the solver)
    total = res.subs({"R7": eq.rhs}).expression.subs(
        {res.circuit.symbol(k): opsym.parse_value(v, where=k) for k, v in VALUES.items()}
    )
    assert sp.simplify(total) == 0


def test_symbolic_source_value():
    """A symbol as a value: R7 = R3·(−Vref/Vos − 1) for offset alone [derived, KCL]."""
    res = _trim_stage()
    v = sp.Symbol("Vx", positive=True)
    eq = res.null(["U1.Vos", "Vref"], by="R7", values={"U1.Vos": v})
    assert sp.simplify(eq.rhs - 100 * (15 / v - 1)) == 0


def test_average_bias_names_and_wrong_polarity():
    res = _trim_stage(vref="15")
    # a positive reference pulls the same way as a positive Vos: no positive R7 nulls it
    with pytest.raises(opsym.NoSolutionError, match="R7"):
        res.null(["U1.Vos", "Vref"], by="R7", values={"U1.Vos": "1m"})
    # Ib (averaged) is accepted as a source name in the sum
    eq = _trim_stage().null(
        ["U1.Vos", "U1.Ib", "Vref"], by="R7", values={"U1.Vos": "1m", "U1.Ib": "100n"}
    )
    ib = Fraction(100, 10**9)
    g, r2, r3, vos = Fraction(11), Fraction(100_000), Fraction(100), Fraction(1, 1000)
    expected = -r3 * (g * vos - 15 * g + ib * r2) / (g * vos - g * ib * r3 + ib * r2)
    assert eq.rhs == sp.Rational(expected.numerator, expected.denominator)


def test_values_for_sources_not_summed_are_refused():
    with pytest.raises(opsym.UnknownNameError, match=r"U1\.Ib-"):
        _trim_stage().null(["U1.Vos", "Vref"], by="R7", values={"U1.Ib-": "1n"})


def test_component_not_in_the_sum():
    with pytest.raises(opsym.NoSolutionError, match="does not appear"):
        _trim_stage().null(["U1.Vos"], by="R7", values={"U1.Vos": "1m"})
