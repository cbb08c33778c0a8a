"""opsym: closed-form error terms of op-amp circuits.

Declare a circuit, and opsym writes its nodal equations, solves them by
superposition and returns every error term (offset, bias currents, finite gain,
CMRR, PSRR) in closed form, with null conditions, sensitivities and LaTeX.

Examples
--------
>>> import opsym
>>> c = opsym.Circuit("non-inverting")
>>> c.voltage_source("Vin", "p", "0")
>>> c.resistor("R1", "n", "0")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="p", minus="n", out="out")
>>> opsym.Circuit  # doctest: +ELLIPSIS
<class 'opsym.model.circuit.Circuit'>
"""

from .errors import (
    CircuitError,
    DesignFileError,
    DuplicateNameError,
    FloatingNodeError,
    InvalidValueError,
    NoFeedbackError,
    NoSolutionError,
    OpsymError,
    SingularCircuitError,
    UnknownNameError,
    ValueSyntaxError,
)
from .model import (
    BiasCurrents,
    Circuit,
    CommonModeRejection,
    InputOffset,
    NonIdeal,
    PinCurrent,
    SeriesVoltage,
    SupplyRejection,
)

__version__ = "0.1.0"

__all__ = [
    "BiasCurrents",
    "Circuit",
    "CircuitError",
    "CommonModeRejection",
    "DesignFileError",
    "DuplicateNameError",
    "FloatingNodeError",
    "InputOffset",
    "InvalidValueError",
    "NoFeedbackError",
    "NoSolutionError",
    "NonIdeal",
    "OpsymError",
    "PinCurrent",
    "SeriesVoltage",
    "SingularCircuitError",
    "SupplyRejection",
    "UnknownNameError",
    "ValueSyntaxError",
    "__version__",
]
