"""Noise figure of an input stage against its source resistance, and the optimum resistance.

The noise factor compares the total noise with the part the source's own
resistance ``Rs`` makes (its thermal noise, ``4kT·Rs``); the noise figure is
its decibel form. For an op-amp of voltage noise ``en`` and current noise
``in`` (flowing through ``Rs``), with nothing else noisy,

    NF(Rs) = 10·log10(1 + (en² + in²·Rs²)/(4kT·Rs)),

smallest at ``Rs_opt = en/in``, where ``NF_min = 10·log10(1 + en·in/(2kT))``
(Motchenbacher & Connelly, "Low-Noise Electronic System Design", ch. 2 [from
memory]). :func:`circuit_noise_figure` takes every source of a
:class:`~opsym.NoiseResult` instead: the circuit's own resistors, both current
noises and the op-amp noise as the circuit weights them.

The temperature is in °C, 25 °C unless given, as everywhere in opsym. The
standard noise figure of radio practice refers to a source at 290 K
(16.85 °C; IRE/IEEE definition [from memory]): pass ``temperature=16.85`` for it.

Examples
--------
Invented op-amp noise, 4 nV/√Hz and 1 pA/√Hz:

>>> import opsym
>>> round(opsym.optimum_source_resistance("4n", "1p"), 6)
4000.0
>>> round(opsym.noise_figure("4k", "4n", "1p"), 4)
1.7198
>>> round(opsym.minimum_noise_figure("4n", "1p"), 4)
1.7198
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..errors import ArgumentTypeError, InvalidValueError, NoSolutionError
from ..model.elements import Resistor
from ..model.limits import check_frequencies, expect_text, shown
from ..numeric._inputs import read_number
from .noise import BOLTZMANN, NoiseResult, kelvin

__all__ = [
    "circuit_noise_figure",
    "circuit_optimum_source_resistance",
    "minimum_noise_figure",
    "noise_figure",
    "optimum_source_resistance",
]


def _kt(temperature: Any) -> float:
    celsius = read_number(temperature, "noise figure temperature (°C)")
    return float(BOLTZMANN * kelvin(celsius))


def _positive(value: Any, where: str, unit: str) -> float:
    number = read_number(value, where, unit)
    if number <= 0:
        raise InvalidValueError(f"{where} must be above zero; got {shown(value)}")
    return number


def _non_negative(value: Any, where: str, unit: str) -> float:
    number = read_number(value, where, unit)
    if number < 0:
        raise InvalidValueError(
            f"{where} is a noise density and cannot be negative; got {shown(value)}"
        )
    return number


def noise_figure(rs: Any, en: Any, in_: Any = 0, temperature: Any = 25) -> float:
    """``10·log10(1 + (en² + in²·Rs²)/(4kT·Rs))``, dB: an op-amp's noise against ``Rs``.

    Parameters
    ----------
    rs : number or text
        Source resistance, Ω (``"10k"``).
    en, in_ : number or text
        Voltage noise (V/√Hz) and current noise (A/√Hz) densities.
    temperature : number
        Of the source resistance, °C.
    """
    r = _positive(rs, "noise_figure rs", "Ω")
    e = _non_negative(en, "noise_figure en", "V")
    i = _non_negative(in_, "noise_figure in_", "A")
    return 10 * math.log10(1 + (e * e + (i * r) ** 2) / (4 * _kt(temperature) * r))


def optimum_source_resistance(en: Any, in_: Any) -> float:
    """``Rs_opt = en/in``, Ω: the source resistance of least noise figure."""
    e = _positive(en, "optimum_source_resistance en", "V")
    i = _non_negative(in_, "optimum_source_resistance in_", "A")
    if i == 0:
        raise NoSolutionError(
            "with no current noise the noise figure falls for ever as Rs grows; "
            "there is no optimum source resistance — give in_ > 0"
        )
    return e / i


def minimum_noise_figure(en: Any, in_: Any, temperature: Any = 25) -> float:
    """``NF_min = 10·log10(1 + en·in/(2kT))``, dB: the noise figure at ``Rs_opt``."""
    e = _positive(en, "minimum_noise_figure en", "V")
    i = _positive(in_, "minimum_noise_figure in_", "A")
    return 10 * math.log10(1 + e * i / (2 * _kt(temperature)))


def circuit_noise_figure(
    noise: NoiseResult,
    source: str,
    f: Any = None,
    band: tuple[Any, Any] | None = None,
) -> Any:
    """Noise figure, dB, of a circuit whose signal enters through resistor ``source``.

    ``10·log10(total output noise / output noise of source alone)``, in power:
    at frequencies ``f`` (Hz, a number or an array: the spot noise figure) or
    over ``band = (f_low, f_high)`` (the integrated one). The source resistor's
    noise is at the noise result's temperature.

    Examples
    --------
    A follower fed through Rs = 4 kΩ, the op-amp of the module example: the
    circuit gives the formula, since only ``en`` and ``in+`` reach the output.

    >>> import opsym
    >>> c = opsym.Circuit("follower")
    >>> c.voltage_source("Vs", "s", "0")
    >>> c.resistor("Rs", "s", "p", value="4k")
    >>> c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    >>> n = c.noise("out", values={"U1.en": "4n", "U1.in": "1p"})
    >>> round(float(opsym.circuit_noise_figure(n, "Rs", f=1e3)), 4)
    1.7198
    """
    if not isinstance(noise, NoiseResult):
        raise InvalidValueError("circuit_noise_figure: give the NoiseResult of circuit.noise(...)")
    expect_text(source, "circuit_noise_figure source", "'Rs'")
    element = noise.circuit.element(source)
    if not isinstance(element, Resistor):
        raise InvalidValueError(
            f"circuit_noise_figure: {source} is a {element.kind}; name the resistor "
            "that is the signal source's resistance"
        )
    if (f is None) == (band is None):
        raise InvalidValueError(
            "circuit_noise_figure: give either f= (spot) or band=(f_low, f_high)"
        )
    if band is not None:
        if not isinstance(band, (tuple, list)) or len(band) != 2:
            raise ArgumentTypeError(
                f"circuit_noise_figure band: give (f_low, f_high) in Hz, not {shown(band)}"
            )
        total = noise.rms(band[0], band[1])
        own = noise.rms(band[0], band[1], name=source)
        if own == 0:
            raise NoSolutionError(f"the noise of {source} does not reach the output in the band")
        return 10 * math.log10((total / own) ** 2)
    check_frequencies(f, "circuit_noise_figure f")
    if not np.all(np.isfinite(np.asarray(f, dtype=float))) or np.any(np.asarray(f, float) == 0):
        raise InvalidValueError("circuit_noise_figure: f must be finite and above 0 Hz")
    total_d = noise.density(f)
    own_d = noise.contribution(source, f)
    if np.any(own_d == 0):
        raise NoSolutionError(f"the noise of {source} does not reach the output at some f")
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        ratio = (total_d / own_d) ** 2
    if not np.all(np.isfinite(ratio) & (ratio >= 1 - 1e-9)):  # total ≥ own, but for rounding
        raise NoSolutionError(
            "circuit_noise_figure: the noise densities underflow or overflow at some f "
            "(floating point); give frequencies within the circuit's range"
        )
    return 10 * np.log10(np.maximum(ratio, 1.0))


def circuit_optimum_source_resistance(
    noise: NoiseResult, source: str, f: Any, bounds: tuple[Any, Any] = ("1", "1G")
) -> float:
    """The value of resistor ``source`` (Ω) of least spot noise figure at ``f`` Hz.

    ``source`` must be left without a value in the noise result; the search
    (golden section in ``ln Rs``, to 1e-9) runs over ``bounds`` and raises
    :class:`~opsym.NoSolutionError` when the least value lies on a bound. With
    the circuit's own resistors it differs from ``en/in``.

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit("follower")
    >>> c.voltage_source("Vs", "s", "0")
    >>> c.resistor("Rs", "s", "p")
    >>> c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    >>> n = c.noise("out", values={"U1.en": "4n", "U1.in": "1p"})
    >>> round(opsym.circuit_optimum_source_resistance(n, "Rs", f=1e3))  # en/in
    4000
    """
    expect_text(source, "circuit_optimum_source_resistance source", "'Rs'")
    sym = noise.circuit.symbol(source)
    element = noise.circuit.element(source)
    if not isinstance(element, Resistor) or element.value != sym or sym in noise._values:
        raise InvalidValueError(
            f"circuit_optimum_source_resistance: {source} must be a resistor without a "
            "value (c.resistor(name, a, b) and no values= entry) so it can be varied"
        )
    if not isinstance(bounds, (tuple, list)) or len(bounds) != 2:
        raise ArgumentTypeError(
            f"circuit_optimum_source_resistance bounds: give (low, high) in Ω, not {shown(bounds)}"
        )
    freq = _positive(f, "circuit_optimum_source_resistance f", "Hz")
    lo = math.log(_positive(bounds[0], "circuit_optimum_source_resistance bounds", "Ω"))
    hi = math.log(_positive(bounds[1], "circuit_optimum_source_resistance bounds", "Ω"))
    if not lo < hi:
        raise InvalidValueError("circuit_optimum_source_resistance: bounds must be (low, high)")

    def nf(x: float) -> float:
        return float(circuit_noise_figure(noise.subs({sym: math.exp(x)}), source, f=freq))

    best = _golden_minimum(nf, lo, hi)
    if min(best - lo, hi - best) < 1e-6 * (hi - lo):
        raise NoSolutionError(
            f"the noise figure keeps falling toward {source} = {math.exp(best):.4g} Ω, a bound "
            "of the search; widen bounds= or check the op-amp's current noise"
        )
    return math.exp(best)


def _golden_minimum(fn: Any, lo: float, hi: float, tol: float = 1e-9) -> float:
    """The minimum of a unimodal ``fn`` on ``[lo, hi]`` by golden-section search."""
    ratio = (math.sqrt(5) - 1) / 2
    a, b = lo, hi
    c, d = b - ratio * (b - a), a + ratio * (b - a)
    fc, fd = fn(c), fn(d)
    while b - a > tol:
        if fc < fd:
            b, d, fd = d, c, fc
            c = b - ratio * (b - a)
            fc = fn(c)
        else:
            a, c, fc = c, d, fd
            d = a + ratio * (b - a)
            fd = fn(d)
    return 0.5 * (a + b)
