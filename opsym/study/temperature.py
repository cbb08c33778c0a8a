"""The error budget across a temperature range, and the worst temperature.

At each temperature T (°C), relative to the 25 °C datasheet values:

* offset: ``|Vos(T)| = Vos + drift·|T − 25|`` (drift may add either way, so
  its magnitude adds to the limit);
* bias and offset current: scaled by the parameter set's :class:`BiasLaw`
  (constant, or doubling every N °C — a rule of thumb for FET and CMOS inputs);
* resistors: the tolerance widens to ``tolerance + TCR·|T − 25|``, each part
  drifting either way independently (conservative; parts that track do better).

Error coefficients are evaluated once, at the nominal component values: TCR
changes them only to second order. The worst temperature is the grid point
with the largest worst-case sum; the grid always holds both ends and 25 °C.

Examples
--------
>>> import opsym
>>> from opsym.numeric.params import opamp_parameters
>>> c = opsym.Circuit("TIA")
>>> c.current_source("Iin", "0", "n")
>>> c.resistor("Rf", "n", "out", value=10e6)
>>> c.opamp("U1", plus="0", minus="n", out="out")
>>> sweep = budget_over_temperature(c.analyze("out"), {}, {"U1": opamp_parameters("JFET")},
...                                 low=-40, high=85, step=25)
>>> sweep.worst_temperature
85.0
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import BudgetError
from ..model.limits import check_float
from ..numeric._inputs import check_values
from ..numeric.params import REFERENCE_TEMPERATURE, OpAmpParams
from ..numeric.units import format_si
from ..output.tables import Table
from ._views import TableViews
from .budget import Budget, _evaluate, _prepare

__all__ = ["TemperatureSweep", "budget_over_temperature"]


@dataclass(frozen=True)
class TemperatureSweep(TableViews):
    """Budgets at each temperature of a grid.

    Attributes
    ----------
    temperatures : tuple of float
        °C, ascending.
    budgets : tuple of Budget
        One per temperature.
    """

    temperatures: tuple[float, ...]
    budgets: tuple[Budget, ...]

    @property
    def worst_case(self) -> np.ndarray:
        """Worst-case sum at each temperature, V."""
        return np.array([b.worst_case for b in self.budgets])

    @property
    def rss(self) -> np.ndarray:
        """RSS at each temperature, V."""
        return np.array([b.rss for b in self.budgets])

    @property
    def worst_index(self) -> int:
        """Index of the temperature with the largest worst-case sum."""
        return int(np.argmax(self.worst_case))

    @property
    def worst_temperature(self) -> float:
        """The temperature (°C) with the largest worst-case sum."""
        return self.temperatures[self.worst_index]

    @property
    def worst_budget(self) -> Budget:
        """The budget at :attr:`worst_temperature`."""
        return self.budgets[self.worst_index]

    def contribution(self, source: str) -> np.ndarray:
        """One row's ``|output|`` at each temperature (e.g. ``"U1.Vos"``)."""
        return np.array([b.row(source).magnitude for b in self.budgets])

    def sources(self) -> tuple[str, ...]:
        """Row names, largest first at the worst temperature."""
        return tuple(r.source for r in self.worst_budget.rows)

    def _math_names(self) -> dict[str, str]:
        return self.worst_budget._math_names()

    def table(self, top: int = 3):
        """Temperature, totals and the largest contributors, as a Table."""

        names = self.sources()[:top]
        labels = {r.source: r.label for r in self.worst_budget.rows}
        headers = ("T", "worst case", "RSS", *(labels[n] for n in names))
        rows = []
        for t, b in zip(self.temperatures, self.budgets, strict=True):
            mark = " (worst)" if t == self.worst_temperature else ""
            cells = [f"{t:g} °C{mark}", "±" + format_si(b.worst_case, b.output_unit),
                     "±" + format_si(b.rss, b.output_unit)]  # fmt: skip
            cells += ["±" + format_si(b.row(n).magnitude, "V") for n in names]
            rows.append(tuple(cells))
        lo, hi = self.temperatures[0], self.temperatures[-1]
        return Table(
            headers, tuple(rows), "l" + "r" * (len(headers) - 1),
            f"Error over {lo:g} … {hi:g} °C (worst at {self.worst_temperature:g} °C)",
            notes=(
                "|Vos(T)| = Vos + drift·|T − 25 °C|; Ib, Ios by each set's bias law; "
                "resistor spread tolerance + TCR·|T − 25 °C|",
            ),
        )  # fmt: skip


def _grid(low: float, high: float, step: float) -> list[float]:
    if not high > low:
        raise BudgetError(f"temperature range {low} … {high} °C is empty; give high > low")
    if not step > 0:
        raise BudgetError(f"temperature step {step} must be > 0 °C")
    n = int(np.floor((high - low) / step + 1e-9))
    points = {float(low + i * step) for i in range(n + 1)} | {float(low), float(high)}
    if low <= REFERENCE_TEMPERATURE <= high:
        points.add(REFERENCE_TEMPERATURE)
    return sorted(points)


def budget_over_temperature(
    result: Any,
    values: Mapping[Any, Any] | None = None,
    opamps: Mapping[str, OpAmpParams] | None = None,
    *,
    low: float = -40.0,
    high: float = 85.0,
    step: float = 5.0,
    temperatures: Sequence[float] | None = None,
    **options: Any,
) -> TemperatureSweep:
    """The budget of ``result`` at each temperature from ``low`` to ``high``.

    Parameters
    ----------
    result, values, opamps
        As for :func:`~opsym.study.budget.error_budget`.
    low, high, step : float
        The grid in °C (both ends and 25 °C always included).
    temperatures : sequence of float, optional
        An explicit grid instead.
    **options
        Passed on to :func:`~opsym.study.budget.error_budget` (``resistors``,
        ``grade``, ``signal``, ``adc``, ``full_scale``, ``progress``...).
    """
    unknown = set(options) - {
        "resistors", "grade", "signal", "input_gain", "full_scale", "adc", "title", "progress"
    }  # fmt: skip
    if unknown:
        raise BudgetError(
            f"budget_over_temperature: unknown option(s) {', '.join(sorted(unknown))}"
        )
    if temperatures is not None:
        if isinstance(temperatures, (str, bytes)) or not hasattr(temperatures, "__iter__"):
            raise BudgetError("budget_over_temperature: temperatures must be a list of °C")
        where = "budget_over_temperature temperatures"
        grid = sorted({check_float(t, where) for t in temperatures})
        if not grid:
            raise BudgetError("budget_over_temperature: temperatures is empty")
    else:
        grid = _grid(*(check_float(x, f"budget_over_temperature {w}")
                       for x, w in ((low, "low"), (high, "high"), (step, "step"))))
    values = check_values(values, "budget_over_temperature values",
                          getattr(result, "circuit", None))
    kw = {"resistors": None, "grade": "max", "signal": None, "input_gain": None,
          "full_scale": None, "adc": None, "title": None, "progress": None,
          **options}  # fmt: skip
    plan = _prepare(result, values, opamps, **kw)  # numbers in once; each T is cheap
    budgets = []
    for i, t in enumerate(grid):
        if kw["progress"] is not None:
            kw["progress"](i, len(grid), f"budget at {t:g} °C")
        budgets.append(_evaluate(plan, t))
    return TemperatureSweep(tuple(grid), tuple(budgets))
