"""The noise budget: each source's RMS over a band, its share, the total.

:func:`noise_budget` is what :meth:`opsym.NoiseResult.budget` runs: it
integrates every source's output density over the band (adaptive quadrature
with break points at the poles and zeros, :mod:`opsym.numeric.frequency`),
adds the powers of the uncorrelated sources and refers the total to the input
where a single signal allows.

Examples
--------
>>> import opsym
>>> c = opsym.Circuit("divider")
>>> c.resistor("R1", "a", "0", value="10k")
>>> c.current_source("I1", "0", "a", value=0)
>>> b = c.noise("a").budget(10, 10e3)
>>> b.rows[0].name, round(b.total * 1e9)  # 12.83 nV/√Hz × √9990 Hz
('R1', 1283)
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from .._services import provides
from ..analyses.noise import PEAK_TO_PEAK_FACTOR, rms_and_error
from ..errors import BudgetError, InvalidValueError, UnknownNameError
from ..model.limits import check_band
from ..output.noise import noise_table
from ..output.tables import Table, math_label
from ._views import TableViews

__all__ = ["NoiseBudget", "NoiseRow", "noise_budget"]


@dataclass(frozen=True)
class NoiseRow:
    """One line of a noise budget: RMS at the output over the band, share of power."""

    name: str
    what: str
    rms: float
    share: float


@dataclass(frozen=True)
class NoiseBudget(TableViews):
    """RMS noise over a band, source by source, with the total and a p-p estimate.

    ``total_error`` is the estimated absolute error of ``total`` from the band
    integrals (adaptive quadrature), rms in ``output_unit``; ``None`` when not known.
    """

    output: str
    f_low: float
    f_high: float
    temperature: float
    rows: tuple[NoiseRow, ...]
    total: float
    input_rms: float | None
    input_unit: str = "V"
    total_error: float | None = None
    output_unit: str = "V"  # "A" for a branch-current output I(name)

    @property
    def peak_to_peak(self) -> float:
        """``6.6 × total RMS``: see ``PEAK_TO_PEAK_RULE`` (common practice)."""
        return PEAK_TO_PEAK_FACTOR * self.total

    def _math_names(self) -> dict[str, str]:
        # A resistor's row is its thermal noise voltage, R1.en (e_{n,R1}).
        return {r.name: math_label(r.name if "." in r.name else f"{r.name}.en")
                for r in self.rows}  # fmt: skip

    def table(self) -> Table:
        """The budget as an :class:`opsym.output.tables.Table`."""
        return noise_table(self)


@provides("noise_budget")
def noise_budget(
    result: Any, f_low: float, f_high: float, signal: str | None = None
) -> NoiseBudget:
    """Each source's RMS over ``f_low``–``f_high`` Hz and its share of the total power."""
    f_low, f_high = check_band(f_low, f_high, "noise budget")
    found = {name: result.rms_with_error(f_low, f_high, name) for name in result.names}
    parts = {name: v for name, (v, _) in found.items()}
    total = math.sqrt(sum(v**2 for v in parts.values()))
    power_error = sum(2 * v * e + e**2 for v, e in found.values())
    total_error = rms_and_error(total**2, power_error)[1]
    rows = tuple(
        NoiseRow(
            name=n,
            what=f"{result.source(n).what} of {result.source(n).owner}",
            rms=v,
            share=(v**2 / total**2) if total > 0 else 0.0,
        )
        for n, v in sorted(parts.items(), key=lambda kv: -kv[1])
    )
    input_rms, input_unit = _input_row(result, f_low, f_high, signal)
    output = result.output
    return NoiseBudget(
        output=output if isinstance(output, str) else "-".join(output),
        f_low=float(f_low),
        f_high=float(f_high),
        temperature=float(result.temperature),
        rows=rows,
        total=total,
        input_rms=input_rms,
        input_unit=input_unit,
        total_error=total_error,
        output_unit=result.output_unit,
    )


def _input_row(
    result: Any, f_low: float, f_high: float, signal: str | None
) -> tuple[float | None, str]:
    """The input-referred RMS and its unit, or ``(None, "V")`` when there is none."""
    if not result.signals:
        return None, "V"
    try:
        return result.input_rms(f_low, f_high, signal), result.input_unit(signal)
    except (BudgetError, UnknownNameError, InvalidValueError):
        # No single signal, a zero gain somewhere, or an input-referred density
        # that does not fall off (f_high = ∞): the budget has no input row.
        return None, "V"
