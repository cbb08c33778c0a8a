"""Numbers in the closed forms: error budgets, temperature, tolerances, preferred values.

One topic per module: :mod:`~opsym.numeric.units` (SI notation),
:mod:`~opsym.numeric.eseries` (IEC 60063 tables), :mod:`~opsym.numeric.params`
(op-amp and resistor parameter sets), :mod:`~opsym.numeric.adc` (LSB and ppm),
:mod:`~opsym.numeric.frequency` (closed forms evaluated over frequency, band
integrals) and the private kernels behind the studies of :mod:`opsym.study`
(exact values in, compiled coefficients, tolerance corners). Nothing here
knows of results or renders text.

Examples
--------
>>> from opsym.numeric import preferred_value
>>> preferred_value(9090.9, "E24")
9100.0
"""

from .adc import ADC, LSB_RULE
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
from .units import db_to_ratio, format_si, parse_fraction, parse_quantity, ratio_to_db

__all__ = [
    "ADC",
    "LSB_RULE",
    "OPAMP_SETS",
    "RESISTOR_SETS",
    "SERIES",
    "BiasLaw",
    "NullChoice",
    "OpAmpParams",
    "ResistorParams",
    "choose_for_null",
    "db_to_ratio",
    "format_si",
    "opamp_parameters",
    "parse_fraction",
    "parse_quantity",
    "preferred_value",
    "ratio_to_db",
    "resistor_parameters",
    "series_values",
]
