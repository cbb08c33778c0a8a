"""The element list of a report: every value a note was computed with, in words.

Each element with its nodes and value (with its unit); each resistor's
tolerance and TCR where a grade was given; each op-amp's gain model, error
sources, the numbers given for it, and its parameter set by name with the
values the analyses take from it (at the budget's grade, 25 °C, and how they
move with temperature).

Examples
--------
>>> import opsym
>>> from opsym.numeric.params import opamp_parameters
>>> c = opsym.Circuit("inverting")
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n")
>>> c.resistor("R2", "n", "out", value="100k")
>>> c.opamp("U1", plus="0", minus="n", out="out")
>>> p = {"U1": opamp_parameters("generic JFET")}
>>> for line in element_lines(c, {"R1": "10k", "Vin": 0.5}, p):
...     print(line)
voltage source Vin (in-0) = 500 mV
resistor R1 (in-n) = 10 kΩ
resistor R2 (n-out) = 100 kΩ
op-amp U1 (+=0, -=n, out=out); ideal (nullor); error sources: offset, bias, vnoise, inoise; \
parameter set 'generic JFET' (grade max, at 25 °C): Vos 3 mV, drift 15 µV/°C, Ib 200 pA, \
Ios 100 pA, bias current doubles every 10 °C, CMRR 80 dB, PSRR 80 dB, en 12 nV/√Hz, \
in 10 fA/√Hz, fce 200 Hz, fci 0 Hz, rails -15 V and 15 V, output swing to 1.5 V of each \
rail, input common mode to 3 V of each rail
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import sympy as sp

from ..model.nonideal import MultiPole, SinglePole
from ..model.symbols import SYMBOLS
from ..numeric.params import registered_fields
from ..numeric.units import format_plain, format_si, parse_quantity

__all__ = ["element_lines", "parameter_text"]



def _number(value: Any, where: str) -> float | None:
    """A float from a SymPy number, a Python number or text like ``"10k"``; else None."""
    if isinstance(value, sp.Expr):
        return float(value) if value.is_number else None
    return parse_quantity(value, where=where)


def _quantity(x: float, unit: str) -> str:
    return format_si(x, unit) if unit else format_plain(x, "", 6)


def parameter_text(params: Any, grade: str = "max", omit: frozenset[str] = frozenset()) -> str:
    """The values the analyses take from an op-amp parameter set, in words.

    ``omit`` names values the op-amp does not use (``"A"`` for an ideal gain,
    ``"GBW"`` without the single-pole model).

    Examples
    --------
    >>> from opsym.numeric.params import opamp_parameters
    >>> parameter_text(opamp_parameters("generic CMOS"), "typical")[:62]
    "parameter set 'generic CMOS' (grade typical, at 25 °C): Vos 25"
    """
    limit = grade == "max"
    parts = [
        f"Vos {format_si(params.vos(grade), 'V')}",
        f"drift {format_si(params.drift_max if limit else params.drift_typ, 'V/°C')}",
        f"Ib {format_si(params.ib(grade), 'A')}",
        f"Ios {format_si(params.ios(grade), 'A')}",
        f"bias current {params.bias_law.describe()}",
    ]
    ratios = (("A", params.gain(grade), "V/V"),
              ("CMRR", params.cmrr_min_db if limit else params.cmrr_typ_db, "dB"),
              ("PSRR", params.psrr_min_db if limit else params.psrr_typ_db, "dB"))  # fmt: skip
    for what, v, unit in ratios:
        if math.isfinite(v) and what not in omit:
            parts.append(f"{what} {format_plain(v, unit, 6)}")
    for what, v, unit in (("GBW", params.gbw_typ, "Hz"), ("en", params.en_typ, "V/√Hz"),
                          ("in", params.in_typ, "A/√Hz"), ("fce", params.fce, "Hz"),
                          ("fci", params.fci, "Hz")):  # fmt: skip
        if v is not None and what not in omit:
            parts.append(f"{what} {format_si(v, unit)}")
    for stem in sorted({key.rpartition("_")[0] for key in params.extra}):
        v = params.value(stem, grade)
        spec = next((s for s in SYMBOLS.values() if s.datasheet == stem), None)
        if v is not None and spec is not None and spec.suffix not in omit:
            parts.append(f"{spec.suffix} {_quantity(v, spec.unit)}")
    if params.rail_neg is not None:
        rails = (format_si(params.rail_neg, "V"), format_si(params.rail_pos, "V"))
        parts.append(f"rails {rails[0]} and {rails[1]}")
    if params.swing_headroom is not None:
        parts.append(f"output swing to {format_si(params.swing_headroom, 'V')} of each rail")
    if params.cm_headroom is not None:
        parts.append(f"input common mode to {format_si(params.cm_headroom, 'V')} of each rail")
    return f"parameter set {params.name!r} (grade {grade}, at 25 °C): " + ", ".join(parts)


def _poles(amp: Any) -> int:
    """How many poles ``amp``'s gain has when it is the multi-pole model; else 0."""
    names = {s.name for s in amp.gain.free_symbols}
    poles = 1 + sum(1 for n in names if n.startswith(f"{amp.name}.f"))
    return poles if amp.gain == MultiPole(poles).gain(amp.name) else 0


def _opamp_text(amp: Any, given: Mapping[str, Any]) -> str:
    """The gain model, the error-source kinds and the op-amp's given parameters."""

    if amp.gain is None:
        gain = "ideal (nullor)"
    elif sp.simplify(amp.gain - SinglePole().gain(amp.name)) == 0:
        gain = "single-pole open-loop gain A0/(1 + s·A0/(2π·GBW))"
    elif (poles := _poles(amp)) > 1:
        further = "".join(f"(1 + s/(2π·f{k}))" for k in range(2, poles + 1))
        gain = f"{poles}-pole open-loop gain A0/((1 + s·A0/(2π·GBW)){further})"
    elif amp.gain.is_number:
        gain = f"open-loop gain {format_plain(float(amp.gain), 'V/V', 6)}"
    else:
        gain = f"open-loop gain {amp.gain}"
    kinds = ", ".join(n.kind for n in amp.nonideals) or "none"
    shown = []
    for what, spec in SYMBOLS.items():
        key = f"{amp.name}.{what}"
        if key in given:
            number = _number(given[key], key)
            if number is not None:
                shown.append(f"{what} = {_quantity(number, spec.unit)}")
    return f"; {gain}; error sources: {kinds}" + ("; " + ", ".join(shown) if shown else "")


def _unused(amp: Any) -> frozenset[str]:
    """The set values an op-amp does not use: A, GBW (A0 is shown as A) without its gain
    model, and the registered kinds' own fields (Ro, Rid, f2, ...) it does not carry."""
    used = {s.name.partition(".")[2] for s in getattr(amp.gain, "free_symbols", ())
            if s.name.startswith(amp.name + ".")}  # fmt: skip
    for kind in amp.nonideals:
        used |= {s.name.partition(".")[2]
                 for s in (*kind.sources(amp.name), *kind.parameters(amp.name))}  # fmt: skip
    stems = {key.rpartition("_")[0] for key in registered_fields()}
    out = {s.suffix for s in SYMBOLS.values() if s.datasheet in stems and s.suffix not in used}
    if not used & {"A", "A0"}:
        out.add("A")
    if "GBW" not in used:
        out.add("GBW")
    return frozenset(out)


def _value_text(e: Any, given: Mapping[str, Any], numbers: Mapping[str, float]) -> str:
    unit = e.unit
    value = getattr(e, "value", None)
    if e.name in given:
        number = _number(given[e.name], e.name)
        return "" if number is None else " = " + format_si(number, unit)
    if value is None or (isinstance(value, sp.Symbol) and value.name == e.name):
        return ""
    if value.is_number:
        return " = " + format_si(float(value), unit)
    text = f" = {value}"
    known = value.xreplace({s: numbers[s.name] for s in value.free_symbols if s.name in numbers})
    if known.is_number:  # an equation such as R2 = 100*R1, with R1 known
        text += " = " + format_si(float(known), unit)
    return text


def element_lines(
    circuit: Any,
    values: Mapping[Any, Any] | None = None,
    parameters: Mapping[str, Any] | None = None,
    resistors: Mapping[str, Any] | None = None,
    grade: str = "max",
) -> list[str]:
    """One line per element: nodes, value with its unit, grade or parameter set.

    Parameters
    ----------
    circuit : Circuit
    values : mapping, optional
        Numbers by name (or symbol) as given to the analyses.
    parameters : mapping of str to OpAmpParams, optional
        Each op-amp's parameter set.
    resistors : mapping of str to ResistorParams, optional
        Each resistor's tolerance and TCR.
    grade : {"max", "typical"}
        Which of the set's values the budget used.
    """
    given = {(k.name if isinstance(k, sp.Symbol) else str(k)): v
             for k, v in (values or {}).items()}  # fmt: skip
    numbers = {name: n for name, v in given.items() if (n := _number(v, name)) is not None}
    lines = []
    for e in circuit.elements:
        text = e.describe() + _value_text(e, given, numbers)
        grade_of = (resistors or {}).get(e.name)
        if grade_of is not None:
            text += f", tolerance {grade_of.tolerance * 100:g} %"
            if grade_of.tcr:
                text += f", TCR {grade_of.tcr * 1e6:g} ppm/°C"
        if e.kind in ("op-amp", "FDA"):  # an FDA carries the same gain, kinds and set
            text += _opamp_text(e, given)
            params = (parameters or {}).get(e.name)
            if params is not None:
                text += "; " + parameter_text(params, grade, _unused(e))
        lines.append(text)
    return lines
