"""A requirement on an error budget, and the PASS/FAIL verdict against it.

A :class:`Requirement` bounds the output error (``max_output_error``, at the
output: volts, or amperes for a branch-current output) or the input-referred
error (``max_input_error``, the output error over the signal gain: in the
signal's unit), summed worst case (Σ|e|) or RSS (√Σe²). A limit written with a
unit must match the budget's; a bare number is taken in the budget's unit. Its
:meth:`~Requirement.verdict` compares a budget's total and gives the margin:
the limit less the total (negative: failed by that much).

Examples
--------
>>> from types import SimpleNamespace as S
>>> budget = S(worst_case=3.2e-3, rss=1.9e-3, input_gain=-10.0)
>>> req = Requirement(max_output_error="5 mV")
>>> print(req.verdict(budget).line())
PASS: worst-case output error ±3.2 mV ≤ 5 mV required; margin 1.8 mV (36 % of the limit)
>>> print(Requirement(max_input_error="150 µV", sum="rss").verdict(budget).line())
FAIL: RSS input-referred error ±190 µV > 150 µV required; short by 40 µV (27 % of the limit)
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ..errors import BudgetError, ValueSyntaxError
from .units import format_si, parse_quantity

__all__ = ["SUMS", "Requirement", "Verdict"]

#: How the budget's contributions are summed for the comparison.
SUMS = ("worst-case", "rss")


def _limit(text: Any, where: str) -> tuple[float, str | None]:
    """The limit's number and the unit it is written in (``None``: a bare number)."""
    try:
        value = parse_quantity(text, "V", where=where)
    except ValueSyntaxError as in_volts:
        try:
            return parse_quantity(text, "A", where=where), "A"
        except ValueSyntaxError:
            raise in_volts from None
    try:
        parse_quantity(text, "A", where=where)
    except ValueSyntaxError:  # read as volts only: the text says V
        return value, "V"
    return value, None


def _percent(x: float) -> str:
    """A percentage without e-notation: whole above 10 %, two digits down to 0.1 %."""
    if x >= 10:
        return f"{x:,.0f} %"
    return f"{x:.2g} %" if x >= 0.1 else "< 0.1 %"


@dataclass(frozen=True)
class Verdict:
    """The comparison of one budget with one requirement."""

    requirement: Requirement
    total: float
    passed: bool
    unit: str = "V"  # of the total and the limit

    @property
    def margin(self) -> float:
        """The limit less the total (in ``unit``); negative when the budget fails."""
        return self.requirement.limit - self.total

    def line(self) -> str:
        """One line: PASS or FAIL, the total against the limit, the margin."""
        req = self.requirement
        u = self.unit
        total, limit = format_si(self.total, u, 3), format_si(req.limit, u, 3)
        share = f"{_percent(abs(self.margin) / req.limit * 100)} of the limit"
        what = f"{'worst-case' if req.sum == 'worst-case' else 'RSS'} {req.quantity}"
        if self.passed:
            return (f"PASS: {what} ±{total} ≤ {limit} required; "
                    f"margin {format_si(self.margin, u, 3)} ({share})")  # fmt: skip
        return (f"FAIL: {what} ±{total} > {limit} required; "
                f"short by {format_si(-self.margin, u, 3)} ({share})")  # fmt: skip


@dataclass(frozen=True)
class Requirement:
    """The largest error a design may have.

    Parameters
    ----------
    max_output_error : str or float, optional
        The limit on the output error (``"5 mV"``; ``"20 µA"`` for a
        branch-current output).
    max_input_error : str or float, optional
        The limit on the input-referred error (``"50 µV"``; ``"1 nA"`` for a
        current signal); needs a budget with a signal gain. Give exactly one of
        the two.
    sum : {"worst-case", "rss"}
        Which total of the budget is compared.
    """

    max_output_error: Any = None
    max_input_error: Any = None
    sum: str = "worst-case"
    #: The unit the limit was written in ("V", "A"), ``None`` for a bare number.
    unit: str | None = field(default=None, init=False, compare=False)

    def __post_init__(self) -> None:
        keys = ("max_output_error", "max_input_error")
        given = [k for k in keys if getattr(self, k) is not None]
        if len(given) != 1:
            raise BudgetError(
                "Requirement: give exactly one of max_output_error and max_input_error, "
                "e.g. Requirement(max_output_error='5 mV')"
            )
        key = given[0]
        value, unit = _limit(getattr(self, key), key.replace("_", "-"))
        if not value > 0:
            raise BudgetError(f"Requirement {key}: give a limit above 0, not {value:g}")
        object.__setattr__(self, key, value)
        object.__setattr__(self, "unit", unit)
        if self.sum not in SUMS:
            raise BudgetError(
                f"Requirement sum: {self.sum!r} is not known; use 'worst-case' or 'rss'"
            )

    @property
    def referred(self) -> str:
        """``"output"`` or ``"input"``: where the limit applies."""
        return "output" if self.max_output_error is not None else "input"

    @property
    def quantity(self) -> str:
        """What is compared, in words."""
        return "output error" if self.referred == "output" else "input-referred error"

    @property
    def limit(self) -> float:
        """The limit, in the unit of the budget it is compared with."""
        value = self.max_output_error if self.referred == "output" else self.max_input_error
        return float(value)

    def verdict(self, budget: Any) -> Verdict:
        """Compare ``budget``'s total (worst case or RSS, at the output or the input)."""
        total = float(budget.worst_case if self.sum == "worst-case" else budget.rss)
        if self.referred == "input":
            gain = getattr(budget, "input_gain", None)
            if not gain:
                raise BudgetError(
                    "requirement max-input-error: the budget has no signal gain to refer "
                    "the error to the input; name the input signal or use max-output-error"
                )
            total /= abs(float(gain))
        unit = getattr(budget, "output_unit" if self.referred == "output" else "input_unit", "V")
        if self.unit is not None and self.unit != unit:
            key = "max-output-error" if self.referred == "output" else "max-input-error"
            raise BudgetError(
                f"requirement {key}: the limit is in {self.unit} but the budget's "
                f"{self.quantity} is in {unit}; give the limit in {unit}"
            )
        return Verdict(self, total, total <= self.limit, unit)
