"""``opsym demo``: a complete worked example in an invented scenario.

A greenhouse leaf-wetness probe (a resistive sensor with 4.7 kΩ source
resistance) feeds a two-stage front end: a non-inverting gain stage U1, then an
inverting stage U2 with a bias-compensation resistor R5 at its + pin, into a
data-acquisition input. The demo derives every error term in closed form, the
null condition for R5, and the numbers with SI prefixes.

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
from typing import TextIO

import sympy as sp

from .model.circuit import Circuit

__all__ = ["VALUES", "build_circuit", "run"]

#: Invented values for the scenario: two generic precision op-amps.
VALUES = {
    "Vs": 0.05,  # sensor signal, 50 mV
    "Rs": 4700,
    "R1": 2000,
    "R2": 18000,
    "R3": 10000,
    "R4": 20000,
    "U1.A": 200_000,
    "U2.A": 200_000,
    "U1.Vos": 150e-6,
    "U2.Vos": 150e-6,
    "U1.Ib": 15e-9,
    "U2.Ib": 15e-9,
    "U1.Ios": 1.5e-9,
    "U2.Ios": 1.5e-9,
}


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
    from .numeric.units import format_si

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
    u1_null = ideal.null("U1.Ib", by="R2")
    say("U1's bias error is nulled when R1 || R2 equals the probe resistance:")
    say(f"  {u1_null.lhs} = {u1_null.rhs}")
    gain_err = res.gain_error(order=1)
    say(f"\nFirst-order gain error from finite open-loop gain:\n  {gain_err}")

    values = {k: v for k, v in VALUES.items()}
    r5 = float(null.rhs.xreplace({c.symbol("R3"): 10000, c.symbol("R4"): 20000}))
    values["R5"] = r5
    numeric = res.subs(values)
    say(f"\nWith the scenario's values (R5 = {format_si(r5, 'Ω')}):")
    total_worst = 0.0
    for info in numeric.sources:
        coeff = float(numeric.terms[info.symbol])
        value = float(values[info.symbol.name])
        contribution = coeff * value
        if info.kind != "signal":
            total_worst += abs(contribution)
        say(
            f"  {info.symbol!s:>8}: {format_si(value, _unit(info.symbol.name)):>10}"
            f"  x {coeff:+.6g}  ->  {format_si(contribution, 'V'):>11}"
        )
    gain = float(numeric.coefficient("Vs"))
    say(
        f"  signal gain {gain:.6f} V/V; error sources, worst case at the output: "
        f"{format_si(total_worst, 'V')} ({format_si(total_worst / abs(gain), 'V')} at the input)"
    )
    say(
        "\nA design aid: verify by measurement, and for medical or safety instrumentation "
        "follow local codes and licensed review."
    )
    return 0


def _unit(name: str) -> str:
    return "A" if name.rsplit(".", 1)[-1] in ("Ib", "Ios", "Ib+", "Ib-") else "V"
