"""Numbers with SI prefixes in and out, ratios in dB, and fractions in % or ppm.

Text is read by :func:`opsym.values.parse_value`, the one value syntax of
opsym (design files, ``Circuit`` values and the numeric layer alike); this
module turns its exact numbers into floats and adds the checks the numeric
layer needs (the expected unit) with messages that name the field. Writing SI
notation (:func:`format_si`) is delegated to :mod:`quantiphy`.

Prefixes follow SI and are case-sensitive: ``M`` is mega and ``m`` milli
(``"1M"`` is 1e6, ``"1m"`` is 1e-3); SPICE's ``meg`` is mega too; ``u`` and
``µ`` are both micro; ``k`` and ``K`` are both kilo.

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
from numbers import Real
from typing import Any

import sympy as sp
from quantiphy import Quantity

from ..errors import ArgumentTypeError, ValueRangeError, ValueSyntaxError
from ..values import _MAX_DB, parse_value, to_exact

__all__ = [
    "db_to_ratio",
    "format_plain",
    "format_si",
    "parse_db",
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

    Text is read by :func:`opsym.values.parse_value`, the one reader of
    values in opsym, so it means the same here as in a design file or a
    ``Circuit`` value (``"4k7"``, ``"1meg"``, ``"2R2"``, ``"1%"``); the exact
    result is then made a float, which the parser's range keeps finite.

    Parameters
    ----------
    text : str or real number
        e.g. ``"10k"``, ``"4.7n"``, ``"25u"``, ``"1.5 MΩ"``, ``"100 nA"``.
        A plain number is accepted as it is.
    unit : str, optional
        The unit the value must carry, if it carries one (``"Ω"``, ``"V"``,
        ``"A"``, ...). Text without a unit is taken to be in this unit; text
        with another unit is an error. ``"ohm"`` is accepted for ``"Ω"``;
        ``"V/V"`` fields take ratios (``%``, ``ppm``, ``dB``).
    where : str
        The field being read, for error messages.

    Returns
    -------
    float

    Raises
    ------
    opsym.ValueSyntaxError
        The text is not a value (an unknown word is never dropped), is out of
        range (:class:`~opsym.ValueRangeError`), or carries another unit than
        ``unit``.

    Examples
    --------
    >>> parse_quantity("10k")
    10000.0
    >>> parse_quantity("100 nA", unit="A")
    1e-07
    >>> parse_quantity("25u", unit="V"), parse_quantity("1meg", unit="Ω")
    (2.5e-05, 1000000.0)
    >>> parse_quantity("3 mV", unit="A", where="U1 Ib")
    Traceback (most recent call last):
    ...
    opsym.errors.ValueSyntaxError: U1 Ib: '3 mV' is in V, expected amperes (A); write e.g. '100 nA'
    """
    if isinstance(text, bool):
        raise ValueSyntaxError(f"{where}: {text!r} is not a number; give e.g. '10k' or 1e4")
    if isinstance(text, Real):
        value = float(to_exact(text, where))  # an int past the range is refused, not overflowed
        if not math.isfinite(value):
            raise ValueRangeError(f"{where}: {value} is not finite; give a finite number")
        return value
    if not isinstance(text, str):
        raise ValueSyntaxError(
            f"{where}: cannot read a {type(text).__name__}; give a number or text such as '10k'"
        )
    exact = parse_value(text, where=where)  # the syntax, every word known, the range
    if unit is not None:
        want = _canonical_unit(unit)
        try:
            parse_value(text, where=where, unit=_PARSER_UNITS.get(want, want))
        except ValueSyntaxError as err:
            got = getattr(err, "unit", None)
            if got is None:
                raise
            word = _UNIT_WORDS.get(want)
            expected = _EXPECTED.get(want, f"{word} ({want})" if word else want)
            raise ValueSyntaxError(
                f"{where}: {text!r} is in {got}, expected {expected}; "
                f"write e.g. {_example(unit)!r}"
            ) from None
    return _to_float(exact, text, where)


#: Units a caller may name and the unit the value parser checks for each.
_PARSER_UNITS = {"V/V": "ratio", "%": "ratio", "ppm": "ratio", "dB": "ratio"}
#: The unit of a level in dB once "dB" is taken off: a plain number, no unit word.
_DB_NUMBER = "dB number"
_EXPECTED = {"V/V": "a ratio (a number, %, ppm or dB)", _DB_NUMBER: "a number of decibels"}


def _to_float(exact: Any, text: str, where: str) -> float:
    value = float(exact)
    if not math.isfinite(value) or (value == 0.0 and exact != 0):  # the parser's range forbids
        raise ValueRangeError(f"{where}: {text!r} is out of range; give a finite number")
    return value


def parse_db(text: Any, *, where: str = "value") -> float:
    """Read a level in dB: ``"100 dB"``, ``"-3 dB"`` or a plain number (in dB).

    The number is read by :func:`opsym.values.parse_value` and must lie
    within ±3000 dB, the parser's range for values in dB.

    Examples
    --------
    >>> parse_db("100 dB"), parse_db("-3dB"), parse_db(90)
    (100.0, -3.0, 90.0)
    >>> parse_db("1e6 dB", where="CMRR")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    opsym.errors.ValueRangeError: CMRR: '1e6 dB' is out of range; give a level within ±3000 dB
    """
    if isinstance(text, str):
        body = text.strip()
        body = body[:-2] if body.endswith("dB") else body
        level = parse_quantity(body, _DB_NUMBER, where=where)
    else:
        level = parse_quantity(text, where=where)
    if abs(level) > _MAX_DB:
        raise ValueRangeError(
            f"{where}: {text!r} is out of range; give a level within ±{_MAX_DB} dB"
        )
    return level


def _example(unit: str | None) -> str:
    examples = {
        "Ω": "10 kΩ", "V": "25 µV", "A": "100 nA", "F": "4.7 nF", "Hz": "10 kHz",
        "V/V": "1%", _DB_NUMBER: "100 dB",
    }  # fmt: skip
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
    if isinstance(x, bool) or not isinstance(x, (Real, sp.Number)) or x in (sp.zoo, sp.nan):
        raise ArgumentTypeError(f"format_si: expected a real number, not {type(x).__name__}")
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


def format_plain(x: float, unit: str = "", digits: int = 4) -> str:
    """Write ``x`` to ``digits`` significant figures, never in e-notation.

    Between 0.001 and 10⁹ the number is written in full (``57710``,
    ``0.01234``); outside that range with an SI prefix on ``unit``
    (``31.94 µV/V``, ``5 GV/V``), as a table cell or a note can print it.

    Examples
    --------
    >>> format_plain(57712.3, "V/V")
    '57710 V/V'
    >>> format_plain(3.1939e-05, "V/V")
    '31.94 µV/V'
    >>> format_plain(5e6)
    '5000000'
    >>> format_plain(-0.0123456, digits=3)
    '-0.0123'
    >>> format_plain(0.0)
    '0'
    """
    value = float(x)
    suffix = f" {unit}" if unit else ""
    if value == 0 or not math.isfinite(value):
        return ("0" if value == 0 else format_si(value)) + suffix
    if not 1e-3 <= abs(value) < 1e9:
        return format_si(value, unit, digits)
    exponent = math.floor(math.log10(abs(float(f"{value:.{digits - 1}e}"))))
    decimals = max(0, digits - 1 - exponent)
    text = f"{round(value, decimals - 0):.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    if decimals == 0:  # round to the significant figures left of the point
        text = str(int(round(value, digits - 1 - exponent)))
    return text + suffix


def parse_fraction(text: Any, *, where: str = "value") -> float:
    """Read a fraction written as a number, a percentage or parts per million.

    Text is read by :func:`opsym.values.parse_value` as a ratio: ``%``,
    ``ppm`` and ``dB`` fit, other units are an error that names ``where``.

    Examples
    --------
    >>> parse_fraction("1%")
    0.01
    >>> parse_fraction("25 ppm")
    2.5e-05
    >>> parse_fraction(0.001)
    0.001
    """
    return parse_quantity(text, "V/V", where=where)


def db_to_ratio(db: float, *, where: str = "ratio in dB") -> float:
    """Turn a rejection ratio in dB (a voltage ratio, 20·log10) into V/V.

    ``inf`` dB (no limit) gives an infinite ratio; a finite level beyond
    ±3000 dB is a :class:`~opsym.ValueRangeError` naming ``where``.

    Examples
    --------
    >>> round(db_to_ratio(90.0))
    31623
    """
    level = float(db)
    if math.isfinite(level) and abs(level) > _MAX_DB:
        raise ValueRangeError(
            f"{where}: {level:g} dB is out of range; give a level within ±{_MAX_DB} dB "
            "(inf for no limit)"
        )
    return 10.0 ** (level / 20.0)


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
