"""``opsym demo``: a complete worked example in an invented scenario.

A greenhouse leaf-wetness probe (a resistive sensor with 4.7 kΩ source
resistance) feeds a two-stage front end: a non-inverting gain stage U1, then an
inverting stage U2 with a bias-compensation resistor R5 at its + pin, into a
data-acquisition input. The demo derives every error term in closed form, the
null condition for R5 met with an E96 value, the numeric error budget with
SI prefixes, then the bandwidth with single-pole op-amps and the noise budget
over the probe's band.

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
from .numeric.adc import ADC
from .numeric.eseries import choose_for_null
from .numeric.params import opamp_parameters, resistor_parameters
from .numeric.units import format_si
from .study.budget import error_budget

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

#: Dynamics and noise of both op-amps for the frequency part (invented values).
DYNAMICS = {"A0": "1M", "GBW": "1.5M", "en": "9n", "fce": "8", "in": "0.3p", "fci": "120"}

#: The band the probe's readings are filtered to, Hz (invented).
NOISE_BAND = (0.1, 1e3)


def build_circuit(gain: str = "finite") -> Circuit:
    """The scenario's circuit, every component symbolic; ``gain`` of both op-amps."""
    c = Circuit("leaf-wetness probe front end")
    c.voltage_source("Vs", "s", "0")
    c.resistor("Rs", "s", "p1")  # the probe's own resistance
    c.resistor("R1", "n1", "0")
    c.resistor("R2", "n1", "o1")
    c.opamp("U1", plus="p1", minus="n1", out="o1", gain=gain)
    c.resistor("R3", "o1", "n2")
    c.resistor("R4", "n2", "out")
    c.resistor("R5", "p2", "0")  # bias compensation for U2
    c.opamp("U2", plus="p2", minus="n2", out="out", gain=gain)
    return c


def run(stream: TextIO | None = None) -> int:
    """Print the worked example to ``stream`` (standard output by default)."""

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

    dynamic = build_circuit("pole")
    numbers = dict(values)
    for amp in ("U1", "U2"):
        numbers.update({f"{amp}.{k}": v for k, v in DYNAMICS.items()})
    ac = dynamic.analyze("out", domain="s", values={k: v for k, v in numbers.items()
                                                      if k != "Vs"})  # fmt: skip
    say(f"\nWith single-pole op-amps (A0 = {DYNAMICS['A0']}, GBW = {DYNAMICS['GBW']}Hz):")
    error_1k = abs(ac.gain_error_response(1e3, "Vs")[()])
    say(f"  -3 dB bandwidth {format_si(ac.bandwidth('Vs'), 'Hz')}; "
        f"gain error at 1 kHz {100 * error_1k:.3g} %")  # fmt: skip
    noise = dynamic.noise("out", values={k: v for k, v in numbers.items() if k != "Vs"})
    low, high = NOISE_BAND
    say(f"\nNoise over {format_si(low, 'Hz')} to {format_si(high, 'Hz')} at 25 °C "
        f"(en = {DYNAMICS['en']}V/√Hz, in = {DYNAMICS['in']}A/√Hz, 1/f corners "
        f"{DYNAMICS['fce']} Hz and {DYNAMICS['fci']} Hz):\n")  # fmt: skip
    say(noise.budget(low, high, "Vs").to_text())
    return 0
