"""opsym: closed-form error terms of op-amp circuits.

Declare a circuit, and opsym writes its nodal equations, solves them by
superposition and returns every error term (offset, bias currents, finite gain,
CMRR, PSRR) in closed form, with null conditions, sensitivities and LaTeX. In
the Laplace domain it gives transfer functions, bandwidth and gain error versus
frequency, and a noise analysis adds every source's density in power.

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

from ._version import __version__
from .analyses.loop import LoopGain, loop_gain
from .analyses.noise import NoiseResult
from .analyses.noise_figure import (
    circuit_noise_figure,
    circuit_optimum_source_resistance,
    minimum_noise_figure,
    noise_figure,
    optimum_source_resistance,
)
from .analyses.ports import PortImpedance, input_impedance, output_impedance
from .analyses.result import Result, SourceInfo
from .analyses.transfer import TransferFunction, transfer_function
from .errors import (
    ArgumentTypeError,
    BudgetError,
    CircuitError,
    DesignFileError,
    DuplicateNameError,
    ExpansionTooLargeError,
    FloatingNodeError,
    InvalidValueError,
    MissingDependencyError,
    NoFeedbackError,
    NoSolutionError,
    OpsymError,
    SingularCircuitError,
    UnknownNameError,
    ValueRangeError,
    ValueSyntaxError,
)
from .io.design import Design
from .io.designfile import load_design, parse_design
from .io.spice import read_netlist, write_netlist
from .io.writer import dump_design
from .model import (
    BiasCurrents,
    Circuit,
    CommonModeCapacitance,
    CommonModeRejection,
    CommonModeRejectionPole,
    CommonModeResistance,
    CurrentNoise,
    InputCapacitance,
    InputOffset,
    InputResistance,
    MultiPole,
    NonIdeal,
    OutputImpedance,
    OutputInductance,
    OutputResistance,
    PinAdmittance,
    PinCurrent,
    SeriesVoltage,
    SinglePole,
    SupplyRejection,
    SupplyRejectionPole,
    VoltageNoise,
)
from .model.symbols import LAPLACE as s
from .numeric import (
    ADC,
    BiasLaw,
    OpAmpParams,
    ResistorParams,
    choose_for_null,
    format_si,
    opamp_parameters,
    parse_quantity,
    preferred_value,
    resistor_parameters,
)
from .numeric.requirement import Requirement
from .numeric.stability import Margins
from .output import FrequencySection, NoiseSection, design_note
from .output.latex import transfer_latex
from .output.noise import noise_latex
from .study import (
    Budget,
    budget_over_temperature,
    corner_values,
    error_budget,
    monte_carlo,
    tolerance_analysis,
)
from .study.noise import NoiseBudget
from .values import parse_value

__all__ = [
    "ADC",
    "ArgumentTypeError",
    "BiasCurrents",
    "BiasLaw",
    "Budget",
    "BudgetError",
    "Circuit",
    "CircuitError",
    "CommonModeCapacitance",
    "CommonModeRejection",
    "CommonModeRejectionPole",
    "CommonModeResistance",
    "CurrentNoise",
    "Design",
    "DesignFileError",
    "DuplicateNameError",
    "ExpansionTooLargeError",
    "FloatingNodeError",
    "FrequencySection",
    "InputCapacitance",
    "InputOffset",
    "InputResistance",
    "InvalidValueError",
    "LoopGain",
    "Margins",
    "MissingDependencyError",
    "MultiPole",
    "NoFeedbackError",
    "NoSolutionError",
    "NoiseBudget",
    "NoiseResult",
    "NoiseSection",
    "NonIdeal",
    "OpAmpParams",
    "OpsymError",
    "OutputImpedance",
    "OutputInductance",
    "OutputResistance",
    "PinAdmittance",
    "PinCurrent",
    "PortImpedance",
    "Requirement",
    "ResistorParams",
    "Result",
    "SeriesVoltage",
    "SinglePole",
    "SingularCircuitError",
    "SourceInfo",
    "SupplyRejection",
    "SupplyRejectionPole",
    "TransferFunction",
    "UnknownNameError",
    "ValueRangeError",
    "ValueSyntaxError",
    "VoltageNoise",
    "__version__",
    "budget_over_temperature",
    "choose_for_null",
    "circuit_noise_figure",
    "circuit_optimum_source_resistance",
    "corner_values",
    "design_note",
    "dump_design",
    "error_budget",
    "format_si",
    "input_impedance",
    "load_design",
    "loop_gain",
    "minimum_noise_figure",
    "monte_carlo",
    "noise_figure",
    "noise_latex",
    "opamp_parameters",
    "optimum_source_resistance",
    "output_impedance",
    "parse_design",
    "parse_quantity",
    "parse_value",
    "preferred_value",
    "read_netlist",
    "resistor_parameters",
    "s",
    "tolerance_analysis",
    "transfer_function",
    "transfer_latex",
    "write_netlist",
]
