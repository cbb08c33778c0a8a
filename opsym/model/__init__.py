"""The circuit model: elements, op-amp non-idealities and symbol names."""

from .circuit import GROUND, Circuit
from .elements import Capacitor, CurrentSource, Element, OpAmp, Resistor, VoltageSource
from .nonideal import (
    BiasCurrents,
    CommonModeRejection,
    InputOffset,
    NonIdeal,
    PinCurrent,
    SeriesVoltage,
    SupplyRejection,
)

__all__ = [
    "GROUND",
    "BiasCurrents",
    "Capacitor",
    "Circuit",
    "CommonModeRejection",
    "CurrentSource",
    "Element",
    "InputOffset",
    "NonIdeal",
    "OpAmp",
    "PinCurrent",
    "Resistor",
    "SeriesVoltage",
    "SupplyRejection",
    "VoltageSource",
]
