"""Numbers with SI prefixes in and out, ratios in dB, and fractions in % or ppm.

Reading and writing SI notation is delegated to :mod:`quantiphy`; this module
adds the checks opsym needs (a finite number, the expected unit) and error
messages that name the field. Text is never evaluated: quantiphy reads a number,
an optional SI prefix and an optional unit, nothing else.

Prefixes follow SI: ``M`` is mega and ``m`` milli (``"1M"`` is 1e6, ``"1m"``
is 1e-3); ``u`` and ``µ`` are both micro; ``k`` and ``K`` are both kilo.

Examples
--------
>>> parse_quantity("4.7n")
4.7e-09
>>> parse_quantity("1.5 MΩ", unit="Ω")
1500000.0
>>> format_si(152.587890625e-6, "V")
'152.6 µV'
>>> parse_fraction("0.1%")
0.001
"""

from __future__ import annotations

import math
import re
from numbers import Real
from typing import Any

from quantiphy import QuantiPhyError, Quantity

from ..errors import ValueSyntaxError
from ..values import parse_value

__all__ = [
    "db_to_ratio",
    "format_si",
    "parse_fraction",
    "parse_quantity",
    "ratio_to_db",
]

#: Spellings accepted for each unit opsym checks, mapped to its symbol.
_UNIT_ALIASES: dict[str, str] = {
    "Ω": "Ω",
    "\u2126": "Ω",  # OHM SIGN, which some keyboards produce instead of the Greek letter
    "ohm": "Ω",
    "ohms": "Ω",
    "Ohm": "Ω",
    "Ohms": "Ω",
    "V": "V",
    "A": "A",
    "F": "F",
    "Hz": "Hz",
    "s": "s",
    "W": "W",
    "K": "K",
    "°C": "°C",
    "V/V": "V/V",
    "V/°C": "V/°C",
    "A/°C": "A/°C",
    "V/K": "V/°C",  # a kelvin step equals a degree-Celsius step
}

_UNIT_WORDS = {
    "Ω": "ohms",
    "V": "volts",
    "A": "amperes",
    "F": "farads",
    "Hz": "hertz",
    "s": "seconds",
    "W": "watts",
    "K": "kelvin",
    "°C": "degrees Celsius",
    "V/°C": "volts per degree Celsius",
}


class _SI(Quantity):
    """quantiphy with opsym's output preferences, kept apart from the global ones."""


_SI.set_prefs(map_sf=Quantity.map_sf_to_greek, spacer=" ", strip_zeros=True)


def _canonical_unit(unit: str) -> str:
    return _UNIT_ALIASES.get(unit.strip(), unit.strip())


def parse_quantity(text: Any, unit: str | None = None, *, where: str = "value") -> float:
    """Read a number written with an optional SI prefix and unit.

    Parameters
    ----------
    text : str or real number
        e.g. ``"10k"``, ``"4.7n"``, ``"25u"``, ``"1.5 MΩ"``, ``"100 nA"``.
        A plain number is accepted as it is.
    unit : str, optional
        The unit the value must carry, if it carries one (``"Ω"``, ``"V"``,
        ``"A"``, ...). Text without a unit is taken to be in this unit; text
        with another unit is an error. ``"ohm"`` is accepted for ``"Ω"``.
    where : str
        The field being read, for error messages.

    Returns
    -------
    float

    Raises
    ------
    opsym.ValueSyntaxError
        The text is not a number with an optional prefix and unit, is not
        finite, or carries another unit than ``unit``.

    Examples
    --------
    >>> parse_quantity("10k")
    10000.0
    >>> parse_quantity("100 nA", unit="A")
    1e-07
    >>> parse_quantity("25u", unit="V")
    2.5e-05
    >>> parse_quantity("3 mV", unit="A", where="U1 Ib")
    Traceback (most recent call last):
    ...
    opsym.errors.ValueSyntaxError: U1 Ib: '3 mV' is in V, expected amperes (A); write e.g. '100 nA'
    """
    if isinstance(text, bool):
        raise ValueSyntaxError(f"{where}: {text!r} is not a number; give e.g. '10k' or 1e4")
    if isinstance(text, Real):
        value = float(text)
        if not math.isfinite(value):
            raise ValueSyntaxError(f"{where}: {value} is not finite; give a finite number")
        return value
    if not isinstance(text, str):
        raise ValueSyntaxError(
            f"{where}: cannot read a {type(text).__name__}; give a number or text such as '10k'"
        )
    stripped = text.strip()
    example = _example(unit)
    if _NOT_SI_PREFIX.fullmatch(stripped):
        # quantiphy reads R, Q, r, q as the 2022 SI prefixes ronna, quetta, ronto and
        # quecto; in a circuit "100R" is 100 Ω (the trade's R-notation), so it goes to
        # the design-file parser, which knows that and refuses the rest.
        trade = _trade_notation(stripped, unit, where)
        if trade is None:
            raise ValueSyntaxError(
                f"{where}: cannot read {text!r}; R marks the decimal point in ohms (4R7 = "
                "4.7 Ω), and opsym does not use the prefixes ronna/quetta (R, Q) or "
                "ronto/quecto (r, q)"
            )
        return trade
    try:
        q = Quantity(stripped)
    except QuantiPhyError:
        trade = _trade_notation(stripped, unit, where)
        if trade is not None:
            return trade
        raise ValueSyntaxError(
            f"{where}: cannot read {text!r}; write a number with an optional SI prefix "
            f"and unit, e.g. {example!r}"
        ) from None
    value = float(q)
    if not math.isfinite(value):
        raise ValueSyntaxError(f"{where}: {text!r} is not finite; give a finite number")
    got = _canonical_unit(q.units) if q.units else ""
    if got and (unit is None or got != _canonical_unit(unit)) and got not in _UNIT_WORDS:
        trade = _trade_notation(stripped, unit, where)  # "2R2" reads as 2 with unit "R2"
        if trade is not None:
            return trade
    if unit is not None and got and got != _canonical_unit(unit):
        want = _canonical_unit(unit)
        word = _UNIT_WORDS.get(want)
        expected = f"{word} ({want})" if word else want
        raise ValueSyntaxError(
            f"{where}: {text!r} is in {got}, expected {expected}; write e.g. {example!r}"
        )
    return value


#: A number whose prefix letter is R, Q, r or q.
_NOT_SI_PREFIX = re.compile(r"[+-]?(\d+\.?\d*|\.\d+)\s*[RQrq]\d*\s*(Ω|ohms?)?")

#: Units the whitelist value parser can check.
_PARSER_UNITS = {"Ω", "V", "A", "F", "Hz", "V/°C", "A/°C"}


def _trade_notation(text: str, unit: str | None, where: str) -> float | None:
    """Forms quantiphy does not read but the design-file parser does (``4k7``, ``2R2``,
    ``5 µV/°C``), so one syntax holds everywhere; ``None`` if it cannot read them either."""

    want = _canonical_unit(unit) if unit else None
    try:
        value = parse_value(text, where=where, unit=want if want in _PARSER_UNITS else None)
    except ValueSyntaxError:
        return None
    return float(value) if value.is_number else None


def _example(unit: str | None) -> str:
    examples = {"Ω": "10 kΩ", "V": "25 µV", "A": "100 nA", "F": "4.7 nF", "Hz": "10 kHz"}
    if unit is None:
        return "10k"
    return examples.get(_canonical_unit(unit), f"1.5 k{unit}")


def format_si(x: float, unit: str = "", digits: int = 4, *, latex: bool = False) -> str:
    """Write ``x`` with an SI prefix, e.g. ``152.6 µV``.

    Parameters
    ----------
    x : float
        The value, in base units.
    unit : str
        Unit symbol to append (``"V"``, ``"A"``, ``"Ω"``...).
    digits : int
        Significant digits (trailing zeros are dropped).
    latex : bool
        Return text safe for LaTeX text mode (``\\textmu``, ``$\\Omega$``).

    Examples
    --------
    >>> format_si(0.0101, "V")
    '10.1 mV'
    >>> format_si(9090.9, "Ω", digits=3)
    '9.09 kΩ'
    >>> format_si(-2.5e-12, "A")
    '-2.5 pA'
    >>> format_si(25e-6, "V", latex=True)
    '25~\\\\textmu{}V'
    """
    if digits < 1:
        raise ValueSyntaxError(f"format_si: digits={digits} must be at least 1")
    value = float(x)
    if not math.isfinite(value):
        if math.isnan(value):
            return "NaN"
        sign = "" if value > 0 else "-"
        return f"${sign}\\infty$" if latex else f"{sign}∞"
    text = _SI(value, unit).render(prec=digits - 1)
    if latex:
        text = (
            text.replace(" ", "~")
            .replace("µ", r"\textmu{}")
            .replace("Ω", r"$\Omega$")
            .replace("°C", r"\textdegree{}C")
            .replace("%", r"\%")
        )
    return text


def parse_fraction(text: Any, *, where: str = "value") -> float:
    """Read a fraction written as a number, a percentage or parts per million.

    Examples
    --------
    >>> parse_fraction("1%")
    0.01
    >>> parse_fraction("25 ppm")
    2.5e-05
    >>> parse_fraction(0.001)
    0.001
    """
    if isinstance(text, str):
        s = text.strip()
        for suffix, per in (("%", 100.0), ("ppm", 1e6)):
            if s.endswith(suffix):
                body = s[: -len(suffix)].strip()
                if not body:
                    break
                return parse_quantity(body, where=where) / per
        return parse_quantity(s, where=where)
    return parse_quantity(text, where=where)


def db_to_ratio(db: float) -> float:
    """Turn a rejection ratio in dB (a voltage ratio, 20·log10) into V/V.

    Examples
    --------
    >>> round(db_to_ratio(90.0))
    31623
    """
    return 10.0 ** (float(db) / 20.0)


def ratio_to_db(ratio: float) -> float:
    """Turn a voltage ratio (V/V) into dB, 20·log10|ratio|.

    Examples
    --------
    >>> ratio_to_db(1000.0)
    60.0
    """
    r = abs(float(ratio))
    if r == 0.0:
        return -math.inf
    return 20.0 * math.log10(r)
