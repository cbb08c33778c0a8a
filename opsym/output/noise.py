"""Noise budgets as tables: each source's RMS and share, the totals and the rules.

Examples
--------
>>> from opsym.analyses.noise import NoiseBudget, NoiseRow
>>> b = NoiseBudget("out", 10.0, 1e4, 298.15,
...                 (NoiseRow("U1.en", "voltage noise en of U1", 3e-6, 0.9),
...                  NoiseRow("R2", "thermal noise √(4kTR) of R2", 1e-6, 0.1)), 3.16e-6, None)
>>> print(noise_table(b).to_markdown().splitlines()[4])
| U1.en | voltage noise en of U1 | 3 µV | 90.0 % |
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..numeric.units import format_si
from .tables import Table

if TYPE_CHECKING:
    from ..analyses.noise import NoiseBudget

__all__ = ["noise_table"]


def noise_table(budget: NoiseBudget) -> Table:
    """The rows of ``budget`` largest first, totals in the footer, rules as notes."""
    from ..analyses.noise import PEAK_TO_PEAK_RULE
    from ..numeric._plan import SHORT_CAUTION

    band = f"{format_si(budget.f_low, 'Hz')} to {format_si(budget.f_high, 'Hz')}"
    if budget.f_high == float("inf"):
        band = f"{format_si(budget.f_low, 'Hz')} to ∞"
    rows = tuple(
        (r.name, r.what, format_si(r.rms, "V"), f"{100 * r.share:.1f} %") for r in budget.rows
    )
    footer = [
        ("total", "root-sum-square", format_si(budget.total, "V") + " rms", "100 %"),
        ("", "peak-to-peak estimate", format_si(budget.peak_to_peak, "V") + " p-p", ""),
    ]
    if budget.input_rms is not None:
        footer.append(
            (
                "",
                "referred to the input",
                format_si(budget.input_rms, budget.input_unit) + " rms",
                "",
            )
        )
    notes = (
        "Sources are uncorrelated: powers add, RMS = √(Σ rms_k²); share = rms_k²/total².",
        f"Resistors at {budget.temperature - 273.15:g} °C ({budget.temperature:g} K), "
        "4kTR with k = 1.380649e-23 J/K (SI, exact).",
        PEAK_TO_PEAK_RULE + ".",
        SHORT_CAUTION,
    )
    return Table(
        ("source", "what", "output rms", "share of power"),
        rows,
        "llrr",
        f"Noise budget at {budget.output}, {band}",
        tuple(footer),
        notes,
    )
