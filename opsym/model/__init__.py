"""The circuit model: elements, op-amp non-idealities and symbol names."""

from .circuit import GROUND, Circuit
from .elements import (
    Capacitor,
    CurrentSource,
    Element,
    Inductor,
    OpAmp,
    Resistor,
    VoltageSource,
)
from .nonideal import (
    BiasCurrents,
    CommonModeRejection,
    CurrentNoise,
    InputOffset,
    NoiseSpectrum,
    NonIdeal,
    PinAdmittance,
    PinCurrent,
    SeriesVoltage,
    SinglePole,
    SupplyRejection,
    VoltageNoise,
)
from .symbols import LAPLACE

__all__ = [
    "GROUND",
    "LAPLACE",
    "BiasCurrents",
    "Capacitor",
    "Circuit",
    "CommonModeRejection",
    "CurrentNoise",
    "CurrentSource",
    "Element",
    "Inductor",
    "InputOffset",
    "NoiseSpectrum",
    "NonIdeal",
    "OpAmp",
    "PinAdmittance",
    "PinCurrent",
    "Resistor",
    "SeriesVoltage",
    "SinglePole",
    "SupplyRejection",
    "VoltageNoise",
    "VoltageSource",
]
