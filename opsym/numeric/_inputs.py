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
from typing import Any

import sympy as sp

from ..errors import BudgetError, OpsymError
from ..model.limits import expect_mapping, read_number

__all__ = ["check_values"]


def check_values(values: Any, where: str, circuit: Any = None) -> Mapping:
    """Return ``values`` (a mapping; ``None`` is empty) once every value is admissible."""
    values = expect_mapping(values, where)
    for key, raw in values.items():
        if not isinstance(key, (str, sp.Symbol)):
            raise BudgetError(f"{where}: key {key!r} is not a name such as 'R1' or a symbol")
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
    from ..analyses.derive import admissible

    try:
        admissible(circuit, sym, sp.Float(number), "")
    except OpsymError as err:
        what = str(err).split(": ", 1)[-1]
        raise BudgetError(f"{field} = {number:g}: {what}") from None
