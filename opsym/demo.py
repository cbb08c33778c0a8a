"""``opsym demo``: a complete worked example in an invented scenario.

A greenhouse leaf-wetness probe (a resistive sensor with 4.7 kΩ source
resistance) feeds a two-stage front end: a non-inverting gain stage U1, then an
inverting stage U2 with a bias-compensation resistor R5 at its + pin, into a
data-acquisition input. The demo derives every error term in closed form, the
null condition for R5 met with an E96 value, and the numeric error budget with
SI prefixes.

Examples
--------
>>> import io
>>> from opsym.demo import build_circuit, run
>>> build_circuit().title
'leaf-wetness probe front end'
>>> buf = io.StringIO()
>>> run(buf)
0
>>> "R5 = R3*R4/(R3 + R4)" in buf.getvalue()
True
"""

from __future__ import annotations

import sys
from typing import Any, TextIO

import sympy as sp

from .model.circuit import Circuit

__all__ = ["VALUES", "build_circuit", "run"]

#: Component values of the scenario (invented); R5 comes from its null condition.
VALUES = {
    "Vs": "50m",  # the probe's full-scale signal
    "Rs": "4.7k",
    "R1": "2k",
    "R2": "18k",
    "R3": "10k",
    "R4": "20k",
}

#: Both op-amps: the invented generic precision bipolar set shipped with opsym.
OPAMP_SET = "generic precision bipolar"


def build_circuit() -> Circuit:
    """The scenario's circuit, every component symbolic."""
    c = Circuit("leaf-wetness probe front end")
    c.voltage_source("Vs", "s", "0")
    c.resistor("Rs", "s", "p1")  # the probe's own resistance
    c.resistor("R1", "n1", "0")
    c.resistor("R2", "n1", "o1")
    c.opamp("U1", plus="p1", minus="n1", out="o1", gain="finite")
    c.resistor("R3", "o1", "n2")
    c.resistor("R4", "n2", "out")
    c.resistor("R5", "p2", "0")  # bias compensation for U2
    c.opamp("U2", plus="p2", minus="n2", out="out", gain="finite")
    return c


def run(stream: TextIO | None = None) -> int:
    """Print the worked example to ``stream`` (standard output by default)."""
    from .numeric.adc import ADC
    from .numeric.budget import error_budget
    from .numeric.eseries import choose_for_null
    from .numeric.params import opamp_parameters, resistor_parameters

    out = stream or sys.stdout

    def say(text: str = "") -> None:
        print(text, file=out)

    c = build_circuit()
    say(f"opsym demo: {c.title} (an invented scenario)")
    say("=" * 72)
    for e in c.elements:
        say(f"  {e.describe()}")
    res = c.analyze("out").with_average_bias()
    ideal = res.ideal()
    say("\nEvery term of V(out), ideal op-amp gain (A -> oo), in closed form:")
    for sym, coeff in ideal.terms.items():
        say(f"  {sym!s:>8} x  {coeff}")
    null = ideal.null("U2.Ib", by="R5")
    say("\nBias-compensation resistor that cancels U2's equal bias currents:")
    say(f"  {null.lhs} = {null.rhs}      (R3 || R4)")
    residual = ideal.subs({"R5": null.rhs}).coefficient("U2.Ios")
    say(f"  left over: U2.Ios x {sp.factor(residual)}")
    values: dict[str, Any] = dict(VALUES)
    pick = choose_for_null(null, values, "E96")
    values["R5"] = pick.chosen
    say(f"  for the build: {pick.describe()}")
    u1_null = ideal.null("U1.Ib", by="R2")
    say("U1's bias error is nulled when R1 || R2 equals the probe resistance:")
    say(f"  {u1_null.lhs} = {u1_null.rhs}")
    gain_err = res.gain_error(order=1)
    say(f"\nFirst-order gain error from finite open-loop gain:\n  {gain_err}")

    params = opamp_parameters(OPAMP_SET)
    budget = error_budget(
        c.analyze("out"),
        values,
        {"U1": params, "U2": params},
        resistors=resistor_parameters("thin film 0.1%"),
        adc=ADC.bipolar(16, 2.5),
        title=f"{c.title}, both op-amps '{OPAMP_SET}'",
    )
    say("\nNumeric error budget: datasheet limits of the generic set, 0.1 % resistors,")
    say(f"a 16-bit ±2.5 V converter; signal gain {budget.input_gain:.5g} V/V:\n")
    say(budget.to_text())
    return 0
