"""The input limits opsym enforces, and the argument checks of the public API.

Every number a user gives (element values, ``values=``, ``subs``, budget
values, band edges, :func:`~opsym.preferred_value`) is checked where it is
read: its magnitude must lie within :data:`MAX_MAGNITUDE` (and, unless it is
zero, at least :data:`MIN_MAGNITUDE`), so that every later floating-point step
stays finite. Arguments of the wrong Python type raise
:class:`~opsym.ArgumentTypeError` (also a :class:`TypeError`) saying what is
expected.

Examples
--------
>>> import sympy as sp
>>> from opsym.model.limits import check_magnitude, expect_mapping
>>> check_magnitude(sp.Integer(10) ** 40, "resistor R1")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.InvalidValueError: resistor R1: the number 1.000e+40 is out of range; ...
>>> expect_mapping(["R1", 1], "values")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.ArgumentTypeError: values: expected a mapping such as {'R1': '10k'}, not a list
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from numbers import Real
from typing import Any

import sympy as sp

from ..errors import ArgumentTypeError, InvalidValueError

__all__ = [
    "MAX_ELEMENTS",
    "MAX_MAGNITUDE",
    "MIN_MAGNITUDE",
    "check_band",
    "check_float",
    "check_frequencies",
    "check_magnitude",
    "expect_mapping",
    "expect_text",
    "read_number",
    "shown",
]

#: Largest magnitude of any number given (1e30: above every SI prefix, yotta is 1e24).
MAX_MAGNITUDE = sp.Integer(10) ** 30
#: Smallest magnitude of a non-zero number given (1e-30: below yocto, 1e-24).
MIN_MAGNITUDE = sp.Integer(10) ** -30
#: Most elements one circuit may hold.
MAX_ELEMENTS = 2000

_RANGE = "numbers must lie within 1e-30 ... 1e30 in magnitude (or be 0)"


def check_magnitude(value: sp.Expr, where: str) -> sp.Expr:
    """Return ``value`` if every number in it is within the limits; else raise.

    ``where`` names the field. Numbers inside an expression are checked one by
    one (``10**40*R1`` is refused as well as ``10**40``).
    """
    numbers = [value] if isinstance(value, sp.Number) else value.atoms(sp.Number)
    for x in numbers:
        if x.is_zero or not x.is_finite:
            continue
        size = abs(x)
        if size > MAX_MAGNITUDE or size < MIN_MAGNITUDE:
            raise InvalidValueError(
                f"{where}: the number {_sci(x)} is out of range; {_RANGE}; "
                "give the value in its SI unit (ohms, farads, henries, volts, amperes, hertz)"
            )
    return value


def check_float(value: Any, where: str) -> float:
    """Return ``value`` as a finite float within the limits; else raise.

    Examples
    --------
    >>> check_float(4.7e-9, "C1")
    4.7e-09
    """
    if isinstance(value, bool) or not isinstance(value, (Real, sp.Number)):
        raise ArgumentTypeError(
            f"{where}: expected a number, not a {type(value).__name__}"
            + ("; read text with opsym.parse_quantity" if isinstance(value, str) else "")
        )
    try:
        x = float(value)
    except (OverflowError, TypeError, ValueError):  # huge, or sympy's complex infinity
        x = math.inf
    if not math.isfinite(x) or (x != 0 and not 1e-30 <= abs(x) <= 1e30):
        raise InvalidValueError(f"{where}: the number {_sci(value)} is out of range; {_RANGE}")
    return x


def check_frequencies(f: Any, where: str) -> Any:
    """Return ``f`` (Hz, a number or an array of numbers) if every frequency is admissible.

    Frequencies are numbers (not text: read text with
    :func:`~opsym.parse_quantity`), not negative (``inf`` evaluates a limit).

    Examples
    --------
    >>> check_frequencies([10.0, 1e3], "response f")
    [10.0, 1000.0]
    >>> check_frequencies("1k", "response f")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    opsym.errors.ArgumentTypeError: response f: expected frequencies in Hz as numbers ...
    """
    import numpy as np

    if isinstance(f, (str, bytes, bool)) or f is None:
        raise ArgumentTypeError(
            f"{where}: expected frequencies in Hz as numbers (a number or an array), not "
            f"{_short(f)}; read text with opsym.parse_quantity('1k', 'Hz')"
        )
    try:
        arr = np.asarray(f, dtype=float)
    except (TypeError, ValueError, OverflowError):
        raise ArgumentTypeError(
            f"{where}: expected frequencies in Hz as numbers (a number or an array), not "
            f"{_short(f)}"
        ) from None
    if not np.all(arr >= 0):  # NaN fails too
        raise InvalidValueError(f"{where}: frequencies must be numbers of at least 0 Hz")
    return f


def check_band(f_low: Any, f_high: Any, where: str) -> tuple[float, float]:
    """Return a band's edges in Hz as floats; ``f_high`` may be ``inf``.

    Examples
    --------
    >>> check_band(0.1, 10, "rms")
    (0.1, 10.0)
    >>> check_band("0.1", 10, "rms")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    opsym.errors.ArgumentTypeError: rms f_low: expected a number, not a str...
    """
    low = check_float(f_low, f"{where} f_low")
    high = math.inf if _is_inf(f_high) else check_float(f_high, f"{where} f_high")
    if low < 0 or not high > low:
        raise InvalidValueError(
            f"{where}: band {low:g} Hz to {high:g} Hz is not a band; give 0 <= f_low < f_high"
        )
    return low, high


def _is_inf(x: Any) -> bool:
    try:
        return not isinstance(x, (str, bool)) and float(x) == math.inf
    except (TypeError, ValueError, OverflowError):
        return False


def expect_mapping(value: Any, where: str, example: str = "{'R1': '10k'}") -> Mapping:
    """Return ``value`` if it is a mapping (``None`` gives an empty one); else raise."""
    if value is None:
        return {}
    if not isinstance(value, Mapping):
        raise ArgumentTypeError(
            f"{where}: expected a mapping such as {example}, not a {type(value).__name__}"
        )
    return value


def expect_text(value: Any, where: str, example: str = "'R1'") -> str:
    """Return ``value`` if it is text; else raise, saying an example of what is expected."""
    if not isinstance(value, str):
        raise ArgumentTypeError(
            f"{where}: expected text such as {example}, not a {type(value).__name__} "
            f"({_short(value)})"
        )
    return value


def _sci(x: Any) -> str:
    """A short scientific form of a number that may not fit a float."""
    try:
        f = float(x)
        if math.isfinite(f) and f != 0:
            return f"{f:.3e}"
    except (OverflowError, TypeError, ValueError):
        pass
    try:
        r = sp.Rational(x)
        digits = round((int(abs(r.p)).bit_length() - int(r.q).bit_length()) * math.log10(2))
        return f"about 1e{digits}"
    except (TypeError, ValueError):
        return "a number"


def read_number(value: Any, where: str, unit: str | None = None) -> float:
    """A number, or text such as ``"10k"`` read by :func:`~opsym.parse_quantity`, in range.

    Examples
    --------
    >>> read_number("4k7", "R1", "Ω"), read_number(2, "gain")
    (4700.0, 2.0)
    """
    if isinstance(value, (Real, sp.Number)) and not isinstance(value, bool):
        return check_float(value, where)
    from ..numeric.units import parse_quantity

    return check_float(parse_quantity(value, unit, where=where), where)


def shown(value: Any) -> str:
    """``repr(value)`` cut to 40 characters, safe for integers too long to print."""
    return _short(value)


def _short(value: Any) -> str:
    try:
        text = repr(value)
    except ValueError:  # an integer too long to print
        return "a very long number"
    return text if len(text) <= 40 else text[:37] + "..."
