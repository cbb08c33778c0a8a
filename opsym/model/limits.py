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
>>> check_magnitude(sp.Integer(10) ** 200, "resistor R1")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.InvalidValueError: resistor R1: the number 1.000e+200 is out of range; ...
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

import numpy as np
import sympy as sp

from ..errors import ArgumentTypeError, InvalidValueError
from ..values import MAX_EXPONENT, to_exact

__all__ = [
    "MAX_ELEMENTS",
    "MAX_MAGNITUDE",
    "MIN_MAGNITUDE",
    "admissible",
    "check_band",
    "check_float",
    "check_frequencies",
    "check_magnitude",
    "exact_value",
    "expect_mapping",
    "expect_text",
    "shown",
]

#: Largest magnitude of any number given: 1e150, as for values written as text
#: (:mod:`opsym.values`), so that floats computed from it stay finite.
MAX_MAGNITUDE = sp.Integer(10) ** MAX_EXPONENT
#: Smallest magnitude of a non-zero number given (1e-150).
MIN_MAGNITUDE = sp.Integer(10) ** -MAX_EXPONENT
#: Most elements one circuit may hold.
MAX_ELEMENTS = 2000

_RANGE = "numbers must lie within 1e-150 ... 1e150 in magnitude (or be 0)"


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


def exact_value(value: Any, where: str, unit: str | None = None) -> sp.Expr:
    """:func:`opsym.values.to_exact` with the number limits: the reader of every user value.

    Examples
    --------
    >>> exact_value("4.7 nF", "C1", "F")
    47/10000000000
    >>> exact_value(sp.Float("1e400"), "C1")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    opsym.errors.InvalidValueError: C1: the number about 1e400 is out of range; ...
    """
    if isinstance(value, (float, sp.Float)):
        check_float(value, where)  # before an infinite float reaches the exact form
    return check_magnitude(to_exact(value, where, unit=unit), where)


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
    if not math.isfinite(x) or (x != 0 and not 1e-150 <= abs(x) <= 1e150):
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


def admissible(circuit: Any, sym: sp.Symbol, v: sp.Expr, where: str) -> sp.Expr:
    """Return ``v`` if it can be the value of ``sym``; else say what ``sym`` needs.

    A component value (R, C, L), gain, GBW are positive; densities and corners
    are not negative; CMRR and PSRR are not zero. ``circuit`` names the element.

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit("t")
    >>> c.resistor("R1", "a", "0")
    >>> admissible(c, c.symbol("R1"), sp.Integer(-5), "subs")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    opsym.errors.InvalidValueError: subs[R1] = -5: resistor R1 must be positive; ...
    """
    rules = [
        (sym.is_positive, v.is_positive, "must be positive"),
        (sym.is_nonnegative, v.is_nonnegative, "must not be negative"),
        (sym.is_nonzero, v.is_nonzero, "must not be zero"),
        (sym.is_real, v.is_real, "must be real"),
    ]
    for needed, holds, what in rules:
        if needed and holds is False:
            owner = sym.name.partition(".")[0]
            element = {e.name: e for e in circuit.elements}.get(owner)
            named = f"{element.kind} {sym.name}" if element is not None else sym.name
            raise InvalidValueError(
                f"{where}[{sym.name}] = {v}: {named} {what}; give a physical value"
            )
    return v


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


def shown(value: Any) -> str:
    """``repr(value)`` cut to 40 characters, safe for integers too long to print."""
    return _short(value)


def _short(value: Any) -> str:
    try:
        text = repr(value)
    except ValueError:  # an integer too long to print
        return "a very long number"
    return text if len(text) <= 40 else text[:37] + "..."
