"""The circuit elements: plain, immutable records that know nothing of solving.

Examples
--------
>>> from opsym.model.elements import Resistor
>>> import sympy as sp
>>> Resistor("R1", "in", "n", sp.Integer(1000))
Resistor(name='R1', a='in', b='n', value=1000)
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import ClassVar

import sympy as sp

from .nonideal import NonIdeal

__all__ = [
    "TWO_TERMINALS",
    "Capacitor",
    "CurrentSource",
    "Element",
    "FullyDifferentialAmp",
    "Inductor",
    "OpAmp",
    "Resistor",
    "VoltageSource",
]


@dataclass(frozen=True)
class Element:
    """Common base: every element has a unique name."""

    name: str

    #: The unit of its value as opsym writes it ("" for an op-amp, which has none).
    unit: ClassVar[str] = ""
    #: The design-file table that lists elements of this class.
    table: ClassVar[str] = ""

    @property
    def nodes(self) -> tuple[str, ...]:
        """Nodes the element touches, in declaration order."""
        raise NotImplementedError

    @property
    def kind(self) -> str:
        """Lower-case element kind, as used in messages and design files."""
        return _KIND_NAMES[type(self)]

    def describe(self) -> str:
        """Return e.g. ``resistor R1 (in-n)`` for messages."""
        return f"{self.kind} {self.name} ({'-'.join(self.nodes)})"


@dataclass(frozen=True)
class TwoTerminal(Element):
    """An element between nodes ``a`` and ``b`` with a value."""

    a: str
    b: str
    value: sp.Expr

    @property
    def nodes(self) -> tuple[str, ...]:
        return (self.a, self.b)


@dataclass(frozen=True)
class Resistor(TwoTerminal):
    """A resistor; ``value`` in ohms."""

    unit = "Ω"
    table = "resistors"


@dataclass(frozen=True)
class Capacitor(TwoTerminal):
    """A capacitor; ``value`` in farads. Open at DC, admittance ``s·C`` in the s domain."""

    unit = "F"
    table = "capacitors"


@dataclass(frozen=True)
class Inductor(TwoTerminal):
    """An inductor; ``value`` in henries. A wire at DC, impedance ``s·L`` in the s domain."""

    unit = "H"
    table = "inductors"


@dataclass(frozen=True)
class VoltageSource(TwoTerminal):
    """An independent voltage source: ``V(a) - V(b) = value`` (``a`` is the plus node)."""

    unit = "V"
    table = "voltage-sources"


@dataclass(frozen=True)
class CurrentSource(TwoTerminal):
    """An independent current source: ``value`` amperes flow through it from ``a`` into ``b``."""

    unit = "A"
    table = "current-sources"


@dataclass(frozen=True)
class OpAmp(Element):
    """An op-amp with pins ``plus``, ``minus`` and ``out`` (output referred to ground).

    ``gain`` is ``None`` for the ideal op-amp (a nullor) or the open-loop gain
    expression (``Vout = A·(V+ − V-)``). ``nonideals`` are the error sources it
    carries.
    """

    table: ClassVar[str] = "opamps"

    plus: str
    minus: str
    out: str
    gain: sp.Expr | None = None
    nonideals: tuple[NonIdeal, ...] = field(default=())

    @property
    def nodes(self) -> tuple[str, ...]:
        return (self.plus, self.minus, self.out)

    def sources(self) -> tuple[sp.Symbol, ...]:
        """Every independent error source this op-amp adds."""
        return tuple(s for n in self.nonideals for s in n.sources(self.name))

    def describe(self) -> str:
        return f"op-amp {self.name} (+={self.plus}, -={self.minus}, out={self.out})"


@dataclass(frozen=True)
class FullyDifferentialAmp(OpAmp):
    """A fully differential amplifier (FDA): inputs ``plus``/``minus``, outputs ``out``
    (the + output) and ``out_minus``, and the output common-mode input ``vocm``.

    ``V(out) − V(out_minus) = A·(V(plus) − V(minus) + Σ series sources)`` (a
    nullor when ``gain`` is ``None``) and ``(V(out) + V(out_minus))/2 = V(vocm) +
    Voscm + ebal·(V(out) − V(out_minus))`` (``docs/conventions.md``). ``vocm`` is
    ground (``"0"``) when the output common mode is ideal 0 V. As a subclass of
    :class:`OpAmp` it shares the input side (gain, ``Vos``, ``Ib±``, noise); code
    that reads an op-amp's single ``out`` checks for this class first.
    """

    table: ClassVar[str] = "fdas"

    out_minus: str = ""
    vocm: str = "0"

    @property
    def nodes(self) -> tuple[str, ...]:
        return (self.plus, self.minus, self.out, self.out_minus, self.vocm)

    def describe(self) -> str:
        return (
            f"FDA {self.name} (+={self.plus}, -={self.minus}, out+={self.out}, "
            f"out-={self.out_minus}, vocm={self.vocm})"
        )


_KIND_NAMES = {
    Resistor: "resistor",
    Capacitor: "capacitor",
    Inductor: "inductor",
    VoltageSource: "voltage source",
    CurrentSource: "current source",
    OpAmp: "op-amp",
    FullyDifferentialAmp: "FDA",
}

#: The two-terminal element classes, in the order files list them.
TWO_TERMINALS: tuple[type[TwoTerminal], ...] = (
    Resistor, Capacitor, Inductor, VoltageSource, CurrentSource,
)  # fmt: skip
