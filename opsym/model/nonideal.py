"""Non-ideal sources of an op-amp: one small class per kind.

Each kind says which independent sources it adds (its :meth:`sources`) and where
they act (its :meth:`injections`): either as a voltage in series with the
non-inverting pin (:class:`SeriesVoltage`) or as a current into a pin
(:class:`PinCurrent`). The equation builder turns injections into stamps; adding
a new non-ideality of either shape is one class here and nothing else.

Conventions (stated once, in ``docs/conventions.md``):

* ``Vos`` is in series with the ``+`` pin: with signals zeroed a single stage
  puts ``+NG·Vos`` at its output.
* ``Ib+`` and ``Ib-`` are positive *into* the pins.
* The CMRR error is the input-referred voltage ``Vcm/CMRR`` in series with the
  ``+`` pin; ``Vcm`` is the common-mode voltage at the pins, a source of its own.
* The PSRR error is ``dVs/PSRR``, where ``dVs`` is the change of the *total*
  supply span (V+ minus V-), not of one rail.

Examples
--------
>>> from opsym.model.nonideal import InputOffset
>>> [str(s) for s in InputOffset().sources("U1")]
['U1.Vos']
"""

from __future__ import annotations

from abc import ABC, abstractmethod
from dataclasses import dataclass

import sympy as sp

from .symbols import opamp_symbol

__all__ = [
    "BiasCurrents",
    "CommonModeRejection",
    "InputOffset",
    "NonIdeal",
    "PinCurrent",
    "SeriesVoltage",
    "SupplyRejection",
]


@dataclass(frozen=True)
class SeriesVoltage:
    """``weight·source`` volts in series with the ``+`` pin (adds to V+ − V-)."""

    source: sp.Symbol
    weight: sp.Expr


@dataclass(frozen=True)
class PinCurrent:
    """``source`` amperes flowing *into* the op-amp at ``pin`` ("plus"/"minus")."""

    source: sp.Symbol
    pin: str


class NonIdeal(ABC):
    """Base of every non-ideal source an op-amp can carry."""

    #: Short key used in ``OpAmp.nonideals`` and design files.
    kind: str = ""

    @abstractmethod
    def sources(self, opamp: str) -> tuple[sp.Symbol, ...]:
        """Independent source symbols this non-ideality adds to op-amp ``opamp``."""

    @abstractmethod
    def injections(self, opamp: str) -> tuple[SeriesVoltage | PinCurrent, ...]:
        """Where each source acts on op-amp ``opamp``."""

    def parameters(self, opamp: str) -> tuple[sp.Symbol, ...]:
        """Symbols that scale the sources (not sources themselves), e.g. CMRR."""
        return ()

    def nominal(self, opamp: str) -> dict[sp.Symbol, sp.Expr]:
        """Nominal value of each source: zero, the ideal part."""
        return dict.fromkeys(self.sources(opamp), sp.S.Zero)

    def __repr__(self) -> str:
        return f"{type(self).__name__}()"

    def __eq__(self, other: object) -> bool:
        return type(self) is type(other)

    def __hash__(self) -> int:
        return hash(type(self))


class InputOffset(NonIdeal):
    """Input offset voltage ``Vos``, in series with the ``+`` pin."""

    kind = "offset"

    def sources(self, opamp):
        return (opamp_symbol(opamp, "Vos"),)

    def injections(self, opamp):
        return (SeriesVoltage(opamp_symbol(opamp, "Vos"), sp.S.One),)


class BiasCurrents(NonIdeal):
    """Input bias currents ``Ib+`` and ``Ib-``, positive into the pins."""

    kind = "bias"

    def sources(self, opamp):
        return (opamp_symbol(opamp, "Ib+"), opamp_symbol(opamp, "Ib-"))

    def injections(self, opamp):
        plus, minus = self.sources(opamp)
        return (PinCurrent(plus, "plus"), PinCurrent(minus, "minus"))


class CommonModeRejection(NonIdeal):
    """Finite CMRR: ``Vcm/CMRR`` in series with the ``+`` pin."""

    kind = "cmrr"

    def sources(self, opamp):
        return (opamp_symbol(opamp, "Vcm"),)

    def parameters(self, opamp):
        return (opamp_symbol(opamp, "CMRR"),)

    def injections(self, opamp):
        return (SeriesVoltage(opamp_symbol(opamp, "Vcm"), 1 / opamp_symbol(opamp, "CMRR")),)


class SupplyRejection(NonIdeal):
    """Finite PSRR: ``dVs/PSRR`` in series with the ``+`` pin (dVs: total span change)."""

    kind = "psrr"

    def sources(self, opamp):
        return (opamp_symbol(opamp, "dVs"),)

    def parameters(self, opamp):
        return (opamp_symbol(opamp, "PSRR"),)

    def injections(self, opamp):
        return (SeriesVoltage(opamp_symbol(opamp, "dVs"), 1 / opamp_symbol(opamp, "PSRR")),)


#: Every kind, by its key, in the order results list them.
KINDS: dict[str, type[NonIdeal]] = {
    cls.kind: cls for cls in (InputOffset, BiasCurrents, CommonModeRejection, SupplyRejection)
}
