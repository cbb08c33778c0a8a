"""Preferred values (E-series) from the IEC 60063 tables, and choosing them for a null.

The series are stored as the tables IEC 60063:2015 gives, one decade each as
integers (mantissa × 10 for E3…E24, × 100 for E48…E192). They are *tables*,
not a formula: E24 is not round(10^(i/24)) (2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7,
8.2 differ), and E192 has 9.20 where round(100·10^(185/192)) gives 9.19.

Rounding rule: **nearest by ratio**. The value chosen minimises
``|log(chosen/x)|``, i.e. the relative error measured on the logarithmic
scale the series are built on; an exact tie (a geometric midpoint) goes to the
lower value. Nearest by ratio and nearest by difference differ near the top of
a decade: 9.545 kΩ is nearer 10 kΩ by ratio (E24), but nearer 9.1 kΩ by
difference.

Examples
--------
>>> preferred_value(9090.9, "E24")
9100.0
>>> preferred_value(9090.9, "E96")
9090.0
>>> preferred_value(9545.0, "E24")
10000.0
"""

from __future__ import annotations

import bisect
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import sympy as sp

from ..errors import BudgetError, NoSolutionError, UnknownNameError
from ..model.limits import shown
from ._inputs import check_values, read_number
from .units import format_si, parse_quantity

__all__ = ["SERIES", "NullChoice", "choose_for_null", "preferred_value", "series_values"]

# IEC 60063:2015 tables, one decade each. Which values were checked against what:
# * E24: value by value against the E24 list of reference-checks §15 (IEC 60063:2015).
# * E96: value by value against the E96 list of reference-checks §15 (IEC 60063:2015).
# * E48: checked equal to every second E96 value (the standard's construction).
# * E192: the 96 even-index values checked equal to E96 (above); the 96 odd-index values
#   checked against round(100·10^(i/192)), which they all match except 920 (i = 185,
#   formula 919), the one exception the standard makes [mem]; strictly increasing.
#   tests/numeric/test_eseries.py repeats these checks.
# * E3, E6, E12: checked to be subsets of E24 in the standard's pattern (every 8th, 4th,
#   2nd value) [mem].
_E3 = (10, 22, 47)
_E6 = (10, 15, 22, 33, 47, 68)
_E12 = (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82)
_E24 = (
    10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
    33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91,
)  # fmt: skip
_E192 = (
    100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114, 115, 117, 118, 120,
    121, 123, 124, 126, 127, 129, 130, 132, 133, 135, 137, 138, 140, 142, 143, 145,
    147, 149, 150, 152, 154, 156, 158, 160, 162, 164, 165, 167, 169, 172, 174, 176,
    178, 180, 182, 184, 187, 189, 191, 193, 196, 198, 200, 203, 205, 208, 210, 213,
    215, 218, 221, 223, 226, 229, 232, 234, 237, 240, 243, 246, 249, 252, 255, 258,
    261, 264, 267, 271, 274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309, 312,
    316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361, 365, 370, 374, 379,
    383, 388, 392, 397, 402, 407, 412, 417, 422, 427, 432, 437, 442, 448, 453, 459,
    464, 470, 475, 481, 487, 493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556,
    562, 569, 576, 583, 590, 597, 604, 612, 619, 626, 634, 642, 649, 657, 665, 673,
    681, 690, 698, 706, 715, 723, 732, 741, 750, 759, 768, 777, 787, 796, 806, 816,
    825, 835, 845, 856, 866, 876, 887, 898, 909, 920, 931, 942, 953, 965, 976, 988,
)  # fmt: skip
_E96 = (
    100, 102, 105, 107, 110, 113, 115, 118, 121, 124, 127, 130, 133, 137, 140, 143,
    147, 150, 154, 158, 162, 165, 169, 174, 178, 182, 187, 191, 196, 200, 205, 210,
    215, 221, 226, 232, 237, 243, 249, 255, 261, 267, 274, 280, 287, 294, 301, 309,
    316, 324, 332, 340, 348, 357, 365, 374, 383, 392, 402, 412, 422, 432, 442, 453,
    464, 475, 487, 499, 511, 523, 536, 549, 562, 576, 590, 604, 619, 634, 649, 665,
    681, 698, 715, 732, 750, 768, 787, 806, 825, 845, 866, 887, 909, 931, 953, 976,
)  # fmt: skip
_E48 = (
    100, 105, 110, 115, 121, 127, 133, 140, 147, 154, 162, 169, 178, 187, 196, 205,
    215, 226, 237, 249, 261, 274, 287, 301, 316, 332, 348, 365, 383, 402, 422, 442,
    464, 487, 511, 536, 562, 590, 619, 649, 681, 715, 750, 787, 825, 866, 909, 953,
)  # fmt: skip


def _decade(table: tuple[int, ...], scale: int) -> tuple[float, ...]:
    return tuple(v / scale for v in table)


#: Each series as one decade of mantissas in [1, 10).
SERIES: dict[str, tuple[float, ...]] = {
    "E3": _decade(_E3, 10),
    "E6": _decade(_E6, 10),
    "E12": _decade(_E12, 10),
    "E24": _decade(_E24, 10),
    "E48": _decade(_E48, 100),
    "E96": _decade(_E96, 100),
    "E192": _decade(_E192, 100),
}

# The same tables as integers, so that candidates are built exactly (9.09 k = 909 × 10).
_INTEGERS = {
    "E3": (_E3, 1),
    "E6": (_E6, 1),
    "E12": (_E12, 1),
    "E24": (_E24, 1),
    "E48": (_E48, 2),
    "E96": (_E96, 2),
    "E192": (_E192, 2),
}


def _series_key(series: Any) -> str:
    key = str(series).strip().upper() if isinstance(series, str) else None
    if key not in SERIES:
        raise UnknownNameError(
            f"unknown E-series {shown(series)}; choose one of {', '.join(SERIES)}"
        )
    return key


def series_values(series: str = "E96", low: float = 1.0, high: float = 10.0) -> list[float]:
    """Every value of ``series`` between ``low`` and ``high`` (inclusive).

    Examples
    --------
    >>> series_values("E6", 100, 1000)
    [100.0, 150.0, 220.0, 330.0, 470.0, 680.0, 1000.0]
    """
    key = _series_key(series)
    if not (low > 0 and high >= low and math.isfinite(high)):
        raise BudgetError(f"series_values: need 0 < low <= high, got low={low}, high={high}")
    table, places = _INTEGERS[key]
    out = []
    for decade in range(math.floor(math.log10(low)) - 1, math.floor(math.log10(high)) + 2):
        for m in table:
            v = _scaled(m, decade - places)
            if low * (1 - 1e-12) <= v <= high * (1 + 1e-12):
                out.append(v)
    return out


def _scaled(mantissa: int, exponent: int) -> float:
    # Exact decimal construction: 909 × 10^1 is 9090.0, not 9089.999….
    if exponent >= 0:
        return float(mantissa * 10**exponent)
    return mantissa / 10**-exponent


def preferred_value(x: Any, series: str = "E96") -> float:
    """The standard value of ``series`` nearest to ``x`` by ratio.

    Parameters
    ----------
    x : float or str
        A positive value (``"9.0909k"`` is read with SI prefixes).
    series : str
        ``"E3"``, ``"E6"``, ``"E12"``, ``"E24"``, ``"E48"``, ``"E96"`` or ``"E192"``.

    Returns
    -------
    float
        The chosen value, in the same unit as ``x``; minimises ``|log(v/x)|``,
        ties go to the lower value.

    Examples
    --------
    >>> preferred_value(666.67, "E24"), preferred_value(666.67, "E96")
    (680.0, 665.0)
    >>> preferred_value("9.0909k", "E96")
    9090.0
    """
    key = _series_key(series)
    value = read_number(x, "preferred_value x")
    if not value > 0:
        raise BudgetError(f"preferred_value: x = {value} is not positive; give a value > 0")
    table, places = _INTEGERS[key]
    exponent = math.floor(math.log10(value))
    # Candidates: this decade, the top of the one below and the bottom of the next.
    cands = [_scaled(table[-1], exponent - places - 1)]
    cands += [_scaled(m, exponent - places) for m in table]
    cands.append(_scaled(table[0], exponent - places + 1))
    cands.sort()
    i = bisect.bisect_left(cands, value)
    lo, hi = cands[max(i - 1, 0)], cands[min(i, len(cands) - 1)]
    if lo == hi:
        return lo
    # Nearest by ratio; compare value^2 with lo*hi (the geometric midpoint) exactly.
    return hi if value * value > lo * hi else lo


@dataclass(frozen=True)
class NullChoice:
    """A null condition met with a standard value, and the error it leaves.

    Attributes
    ----------
    element : str
        The component chosen (e.g. ``"R3"``).
    exact : float
        The value that meets the condition exactly.
    chosen : float
        The standard value picked (nearest by ratio).
    series : str
        The E-series used.
    deviation : float
        ``chosen/exact - 1``.
    residual_coefficient : float or None
        The nulled source's coefficient with the chosen value (``None`` when no
        result was given).
    residual : float or None
        ``residual_coefficient × magnitude`` (``None`` without a magnitude).
    """

    element: str
    exact: float
    chosen: float
    series: str
    deviation: float
    residual_coefficient: float | None = None
    residual: float | None = None

    def describe(self, unit: str = "Ω") -> str:
        """One line for reports.

        Examples
        --------
        >>> NullChoice("R3", 9090.909, 9090.0, "E96", -1e-4).describe()
        'R3 = 9.091 kΩ exactly; E96 9.09 kΩ (-0.01 %)'
        """
        text = (
            f"{self.element} = {format_si(self.exact, unit)} exactly; {self.series} "
            f"{format_si(self.chosen, unit)} ({self.deviation * 100:+.2g} %)"
        )
        if self.residual is not None:
            text += f"; residual {format_si(self.residual, 'V')}"
        return text


def choose_for_null(
    condition: sp.Eq,
    values: Mapping[Any, Any],
    series: str = "E96",
    *,
    result: Any = None,
    source: Any = None,
    magnitude: Any = None,
) -> NullChoice:
    """Meet a null condition ``Eq(R3, expr)`` with a standard value.

    Parameters
    ----------
    condition : sympy.Eq
        As returned by ``Result.null(...)``: the component on the left, its
        exact value in terms of the others on the right.
    values : mapping
        Values (names or symbols → numbers or text like ``"10k"``) for every
        symbol on the right-hand side; also used for ``result``.
    series : str
        E-series to choose from (nearest by ratio).
    result : opsym Result, optional
        If given with ``source``, the coefficient of ``source`` is evaluated
        with the chosen value: the residual the rounding leaves.
    source : str or Symbol, optional
        The source that was nulled, e.g. ``"U1.Ib"``.
    magnitude : float or str, optional
        The source's value (e.g. ``"100n"``), to turn the residual
        coefficient into an output error.

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2, R3 = sp.symbols("R1 R2 R3", positive=True)
    >>> pick = choose_for_null(sp.Eq(R3, R1 * R2 / (R1 + R2)), {"R1": "10k", "R2": "100k"})
    >>> pick.chosen, round(pick.exact, 2)
    (9090.0, 9090.91)
    """
    if not isinstance(condition, sp.Equality) or not isinstance(condition.lhs, sp.Symbol):
        raise BudgetError(
            f"choose_for_null: {condition!r} is not a condition Eq(R, expr); "
            "pass what Result.null(...) returns"
        )
    values = check_values(values, "choose_for_null values", getattr(result, "circuit", None))
    element = condition.lhs.name
    subs = _numeric_subs(values, condition.rhs.free_symbols, "choose_for_null")
    exact_expr = condition.rhs.xreplace(subs)  # xreplace: linear in the tree, unlike subs
    if exact_expr.free_symbols:
        missing = ", ".join(sorted(s.name for s in exact_expr.free_symbols))
        raise BudgetError(f"choose_for_null: give values for {missing} to evaluate {element}")
    exact = float(exact_expr)
    if not (math.isfinite(exact) and exact > 0):
        raise NoSolutionError(
            f"choose_for_null: the condition gives {element} = {exact}, which no "
            "standard value can meet; check the condition and the values"
        )
    chosen = preferred_value(exact, series)
    coefficient = residual = None
    if result is not None and source is not None:
        name = source.name if isinstance(source, sp.Symbol) else str(source)
        raw = {s.name: c for s, c in getattr(result, "terms", {}).items()}  # as solved
        expr = raw[name] if name in raw else result.coefficient(source)
        syms = expr.free_symbols
        fixed = _numeric_subs(values, syms, "choose_for_null")
        fixed.update({s: sp.Float(chosen) for s in syms if s.name == element})
        left = expr.xreplace(fixed)
        if left.free_symbols:
            missing = ", ".join(sorted(s.name for s in left.free_symbols))
            raise BudgetError(
                f"choose_for_null: give values for {missing} to evaluate the residual"
            )
        coefficient = float(left)
        if magnitude is not None:
            residual = coefficient * parse_quantity(magnitude, where=f"magnitude of {source}")
    return NullChoice(
        element, exact, chosen, _series_key(series), chosen / exact - 1, coefficient, residual
    )


def _numeric_subs(values: Mapping[Any, Any], symbols: Any, where: str) -> dict:
    by_name = {s.name: s for s in symbols}
    out: dict = {}
    for key, raw in values.items():
        name = key.name if isinstance(key, sp.Symbol) else str(key)
        if name in by_name:
            out[by_name[name]] = sp.Float(parse_quantity(raw, where=f"{where} value of {name}"))
    return out
