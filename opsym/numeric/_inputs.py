"""Checks of the numbers given to the numeric studies (budgets, tolerances, temperature).

Each value is read (text through :func:`~opsym.parse_quantity`), must lie within
the limits of :mod:`opsym.model.limits`, and a value for a circuit symbol must
be admissible for it: a resistor, capacitor or inductor value is positive, a
noise density not negative, CMRR and PSRR not zero.

Examples
--------
>>> import opsym
>>> from opsym.numeric._inputs import check_values
>>> c = opsym.Circuit("t")
>>> c.resistor("R1", "a", "0")
>>> check_values({"R1": "-1k"}, "error_budget values", c)  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.BudgetError: error_budget values['R1'] = -1000: resistor R1 must be positive; ...
"""

from __future__ import annotations

from collections.abc import Mapping
from numbers import Real
from typing import Any

import sympy as sp

from ..errors import BudgetError, OpsymError
from ..model.limits import admissible, check_float, expect_mapping, shown
from .units import parse_quantity

__all__ = ["check_values", "read_number"]


def read_number(value: Any, where: str, unit: str | None = None) -> float:
    """A number, or text such as ``"10k"`` read by :func:`~opsym.parse_quantity`, in range.

    Examples
    --------
    >>> read_number("4k7", "R1", "Ω"), read_number(2, "gain")
    (4700.0, 2.0)
    """
    if isinstance(value, (Real, sp.Number)) and not isinstance(value, bool):
        return check_float(value, where)
    return check_float(parse_quantity(value, unit, where=where), where)


def check_values(values: Any, where: str, circuit: Any = None) -> Mapping:
    """Return ``values`` (a mapping; ``None`` is empty) once every value is admissible."""
    values = expect_mapping(values, where)
    for key, raw in values.items():
        if not isinstance(key, (str, sp.Symbol)):
            raise BudgetError(
                f"{where}: key {shown(key)} is not a name such as 'R1' or a symbol"
            )
        name = key.name if isinstance(key, sp.Symbol) else key
        field = f"{where}[{name!r}]"
        number = read_number(raw, field)
        if circuit is not None:
            _check_sign(circuit, name, number, field)
    return values


def _check_sign(circuit: Any, name: str, number: float, field: str) -> None:
    try:
        sym = circuit.symbol(name)
    except OpsymError:
        return  # not a circuit symbol: the study itself says so
    try:
        admissible(circuit, sym, sp.Float(number), "")
    except OpsymError as err:
        what = str(err).split(": ", 1)[-1]
        raise BudgetError(f"{field} = {number:g}: {what}") from None
