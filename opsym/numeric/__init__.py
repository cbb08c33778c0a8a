"""Numbers in the closed forms: error budgets, temperature, tolerances, preferred values.

One topic per module: :mod:`~opsym.numeric.units` (SI notation in and out),
:mod:`~opsym.numeric.eseries` (IEC 60063 tables), :mod:`~opsym.numeric.params`
(op-amp and resistor parameter sets), :mod:`~opsym.numeric.adc` (LSB and ppm),
:mod:`~opsym.numeric.budget`, :mod:`~opsym.numeric.temperature` and
:mod:`~opsym.numeric.tolerance`. The rules they follow are in ``docs/budget.md``.

Examples
--------
>>> from opsym.numeric import preferred_value
>>> preferred_value(9090.9, "E24")
9100.0
"""

from .adc import ADC, LSB_RULE
from .budget import RSS_RULE, WORST_CASE_RULE, Budget, BudgetRow, error_budget
from .eseries import SERIES, NullChoice, choose_for_null, preferred_value, series_values
from .params import (
    OPAMP_SETS,
    RESISTOR_SETS,
    BiasLaw,
    OpAmpParams,
    ResistorParams,
    opamp_parameters,
    resistor_parameters,
)
from .temperature import TemperatureSweep, budget_over_temperature
from .tolerance import (
    MonteCarlo,
    ToleranceStudy,
    corner_values,
    first_order_bound,
    monte_carlo,
    tolerance_analysis,
)
from .units import db_to_ratio, format_si, parse_fraction, parse_quantity, ratio_to_db

__all__ = [
    "ADC",
    "LSB_RULE",
    "OPAMP_SETS",
    "RESISTOR_SETS",
    "RSS_RULE",
    "SERIES",
    "WORST_CASE_RULE",
    "BiasLaw",
    "Budget",
    "BudgetRow",
    "MonteCarlo",
    "NullChoice",
    "OpAmpParams",
    "ResistorParams",
    "TemperatureSweep",
    "ToleranceStudy",
    "budget_over_temperature",
    "choose_for_null",
    "corner_values",
    "db_to_ratio",
    "error_budget",
    "first_order_bound",
    "format_si",
    "monte_carlo",
    "opamp_parameters",
    "parse_fraction",
    "parse_quantity",
    "preferred_value",
    "ratio_to_db",
    "resistor_parameters",
    "series_values",
    "tolerance_analysis",
]
