"""Studies of a result: what the numbers around a closed form say.

Above the numeric kernels and the output layer, each study turns a symbolic
result and the user's values into figures and renders them:
:mod:`~opsym.study.budget` (the error budget, worst case and RSS, over
:mod:`~opsym.study._plan`), :mod:`~opsym.study.temperature` (the budget over
temperature), :mod:`~opsym.study.tolerance` (corners, first-order bound, Monte
Carlo), :mod:`~opsym.study.noise` (the noise budget over a band) and, for a
design file, :mod:`~opsym.study.design` (every analysis the file asks for) with
:mod:`~opsym.study.frequency` (its response and noise parts).

Examples
--------
>>> from opsym.study import error_budget
>>> error_budget.__module__
'opsym.study.budget'
"""

from .budget import RSS_RULE, WORST_CASE_RULE, Budget, BudgetRow, error_budget
from .design import Study, run_design
from .noise import NoiseBudget, NoiseRow, noise_budget
from .temperature import TemperatureSweep, budget_over_temperature
from .tolerance import (
    MonteCarlo,
    ToleranceStudy,
    corner_values,
    first_order_bound,
    monte_carlo,
    tolerance_analysis,
)

__all__ = [
    "RSS_RULE",
    "WORST_CASE_RULE",
    "Budget",
    "BudgetRow",
    "MonteCarlo",
    "NoiseBudget",
    "NoiseRow",
    "Study",
    "TemperatureSweep",
    "ToleranceStudy",
    "budget_over_temperature",
    "corner_values",
    "error_budget",
    "first_order_bound",
    "monte_carlo",
    "noise_budget",
    "run_design",
    "tolerance_analysis",
]
