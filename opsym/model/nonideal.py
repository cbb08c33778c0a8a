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
* Noise: the voltage noise ``en`` is in series with the ``+`` pin, the current
  noises ``in+`` and ``in-`` flow into the pins; each density is white with an
  optional 1/f corner, ``S(f) = density²·(1 + fc/f)``. Noise kinds never enter
  the DC error terms, only :meth:`opsym.Circuit.noise`.
* Dynamics: :class:`SinglePole` gives the open-loop gain
  ``A(s) = A0/(1 + s·A0/(2π·GBW))``, so ``1/A(s) = 1/A0 + s/(2π·GBW)``.

Examples
--------
>>> from opsym.model.nonideal import InputOffset
>>> [str(s) for s in InputOffset().sources("U1")]
['U1.Vos']
"""

from __future__ import annotations

import re
from abc import ABC, abstractmethod
from dataclasses import dataclass
from typing import ClassVar

import sympy as sp

from ..errors import DuplicateNameError
from .symbols import LAPLACE, SymbolSpec, opamp_symbol, register_symbols

__all__ = [
    "KINDS",
    "BiasCurrents",
    "CommonModeRejection",
    "CommonModeVoltage",
    "CurrentNoise",
    "InputOffset",
    "MultiPole",
    "NoiseSpectrum",
    "NonIdeal",
    "OutputBalance",
    "OutputImpedance",
    "PinAdmittance",
    "PinCurrent",
    "SeriesVoltage",
    "SinglePole",
    "SupplyRejection",
    "VoltageNoise",
    "kind_of",
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


@dataclass(frozen=True)
class PinAdmittance:
    """An admittance ``admittance`` (siemens) between two terminals of the op-amp.

    ``a`` and ``b`` are ``"plus"``, ``"minus"``, ``"out"`` or ``"ground"``: a
    differential input resistance ``Rid`` is ``PinAdmittance("plus", "minus",
    1/Rid)``. It adds no source: an impedance changes the terms, not their list.
    """

    a: str
    b: str
    admittance: sp.Expr

    def __post_init__(self) -> None:
        for pin in (self.a, self.b):
            if pin not in ("plus", "minus", "out", "ground"):
                raise ValueError(f"PinAdmittance: {pin!r} is not plus, minus, out or ground")


@dataclass(frozen=True)
class OutputImpedance:
    """An impedance ``impedance`` (ohms) in series with the controlled source's output.

    The op-amp's output pin is then ``Vout = A·(V+ − V-) − Zo·I_out``, ``I_out``
    the current the op-amp drives *into* its output node. Divided by ``A``, the
    op-amp row gains ``+Zo·I_out/A``: with an ideal op-amp (``1/A = 0``) it has
    no effect, as ``Zo/(1 + A) → 0``. An open-loop output resistance ``Ro`` is
    ``OutputImpedance(Ro)``.
    """

    impedance: sp.Expr


@dataclass(frozen=True)
class CommonModeVoltage:
    """``weight·source`` volts added to a fully differential amplifier's output common mode.

    Only an FDA (:class:`~opsym.model.elements.FullyDifferentialAmp`) has one:
    its common-mode row reads ``(V(out+) + V(out-))/2 − V(vocm) − … = Σ``.
    """

    source: sp.Symbol
    weight: sp.Expr


@dataclass(frozen=True)
class OutputBalance:
    """An FDA's output balance error: the output common mode gains ``ratio·Vod``.

    ``Vod = V(out+) − V(out-)``; ``ratio`` is the signed ΔVout,cm/ΔVout,diff
    (ideal 0). It adds no source: it changes the terms, as an impedance does.
    """

    ratio: sp.Expr


#: The injection shapes only a fully differential amplifier can take.
FDA_ONLY_SHAPES = (CommonModeVoltage, OutputBalance)


@dataclass(frozen=True)
class NoiseSpectrum:
    """A noise source's power density ``density²·(1 + corner/f)`` (per hertz).

    ``density`` is the white level (V/√Hz or A/√Hz) and ``corner`` the 1/f
    corner frequency in Hz (zero: white noise only); both are symbols or
    numbers.
    """

    source: sp.Symbol
    density: sp.Expr
    corner: sp.Expr


_POSITIVE = (("positive", True),)
#: The gain models' symbols: the finite gain ``A`` and the single pole's ``A0``, ``GBW``.
register_symbols(
    SymbolSpec("A", "", "A", "open-loop gain A", _POSITIVE, datasheet="a", role="parameter"),
    SymbolSpec("A0", "", r"A_{0}", "DC open-loop gain A0", _POSITIVE, datasheet="a",
               file_value=True, role="parameter"),
    SymbolSpec("GBW", "Hz", r"\mathrm{GBW}", "gain-bandwidth product GBW", _POSITIVE,
               datasheet="gbw", file_value=True, role="parameter"),
)  # fmt: skip


#: Every kind, by its key, in the order they were defined (results list them so);
#: each :class:`NonIdeal` subclass with a ``kind`` adds itself.
KINDS: dict[str, type[NonIdeal]] = {}


class NonIdeal(ABC):
    """Base of every non-ideal source an op-amp can carry.

    A subclass declares its facts once and registers itself when it is defined:
    ``kind`` (the key of ``include`` lists and :data:`KINDS`), ``symbols`` (a
    :class:`~opsym.model.symbols.SymbolSpec` for each symbol it adds, sources
    and parameters alike) and ``convention`` (the sentence that states its sign
    convention in notes). Every layer — design files, budgets, notes, LaTeX —
    reads those facts from the registry, so a new kind is one class.
    """

    #: Short key used in ``OpAmp.nonideals`` and design files.
    kind: ClassVar[str] = ""
    #: Noise kinds are random: they enter only the noise analysis, in power.
    noise: ClassVar[bool] = False
    #: What each of its symbols is (suffix, unit, LaTeX, words, datasheet field, ...).
    symbols: ClassVar[tuple[SymbolSpec, ...]] = ()
    #: Its sign convention in one sentence, for notes and docs.
    convention: ClassVar[str] = ""
    #: The kind it builds on, which the op-amp must carry too (``cmrr-pole`` on ``cmrr``).
    requires: ClassVar[str | None] = None

    def __init_subclass__(cls, **kwargs: object) -> None:
        super().__init_subclass__(**kwargs)
        if not cls.kind:
            return  # an abstract helper class, not a kind
        known = KINDS.get(cls.kind)
        if known is not None and known.__qualname__ != cls.__qualname__:
            raise DuplicateNameError(
                f"non-ideality kind {cls.kind!r} is already {known.__name__}; "
                f"give {cls.__name__} another kind"
            )
        register_symbols(*cls.symbols)
        KINDS[cls.kind] = cls

    @abstractmethod
    def sources(self, opamp: str) -> tuple[sp.Symbol, ...]:
        """Independent source symbols this non-ideality adds to op-amp ``opamp``."""

    @abstractmethod
    def injections(
        self, opamp: str
    ) -> tuple[
        SeriesVoltage | PinCurrent | PinAdmittance | OutputImpedance | CommonModeVoltage
        | OutputBalance, ...
    ]:
        """Where each source acts on op-amp ``opamp``."""

    def parameters(self, opamp: str) -> tuple[sp.Symbol, ...]:
        """Symbols that scale the sources (not sources themselves), e.g. CMRR."""
        return ()

    def spectra(self, opamp: str) -> tuple[NoiseSpectrum, ...]:
        """Power densities of the sources of a noise kind (none for the others)."""
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
    symbols = (SymbolSpec("Vos", "V", r"V_{\mathrm{OS}}", "offset voltage Vos", datasheet="vos"),)
    convention = "Vos is a source in series with the + pin."

    def sources(self, opamp):
        return (opamp_symbol(opamp, "Vos"),)

    def injections(self, opamp):
        return (SeriesVoltage(opamp_symbol(opamp, "Vos"), sp.S.One),)


class BiasCurrents(NonIdeal):
    """Input bias currents ``Ib+`` and ``Ib-``, positive into the pins."""

    kind = "bias"
    symbols = (
        SymbolSpec("Ib+", "A", r"I_{\mathrm{B+}}", "bias current Ib+", signed=True,
                   datasheet="ib"),
        SymbolSpec("Ib-", "A", r"I_{\mathrm{B-}}", "bias current Ib-", signed=True,
                   datasheet="ib"),
        # the pair as results report it: Ib = (Ib+ + Ib-)/2, Ios = Ib+ - Ib-
        SymbolSpec("Ib", "A", r"I_{\mathrm{B}}", "bias current Ib", signed=True,
                   datasheet="ib"),
        SymbolSpec("Ios", "A", r"I_{\mathrm{OS}}", "offset current Ios", datasheet="ios"),
    )  # fmt: skip
    convention = "Ib+ and Ib- flow into the pins; Ib = (Ib+ + Ib-)/2 and Ios = Ib+ - Ib-."

    def sources(self, opamp):
        return (opamp_symbol(opamp, "Ib+"), opamp_symbol(opamp, "Ib-"))

    def injections(self, opamp):
        plus, minus = self.sources(opamp)
        return (PinCurrent(plus, "plus"), PinCurrent(minus, "minus"))


class CommonModeRejection(NonIdeal):
    """Finite CMRR: ``Vcm/CMRR`` in series with the ``+`` pin."""

    kind = "cmrr"
    symbols = (
        SymbolSpec("Vcm", "V", r"V_{\mathrm{CM}}", "common mode Vcm/CMRR", file_value=True),
        SymbolSpec("CMRR", "", r"\mathrm{CMRR}", "CMRR", (("real", True), ("nonzero", True)),
                   datasheet="cmrr", role="parameter"),
    )  # fmt: skip
    convention = (
        "The CMRR error is Vcm/CMRR in series with the + pin (Vcm at the pins, CMRR as V/V)."
    )

    def sources(self, opamp):
        return (opamp_symbol(opamp, "Vcm"),)

    def parameters(self, opamp):
        return (opamp_symbol(opamp, "CMRR"),)

    def injections(self, opamp):
        return (SeriesVoltage(opamp_symbol(opamp, "Vcm"), 1 / opamp_symbol(opamp, "CMRR")),)


class SupplyRejection(NonIdeal):
    """Finite PSRR: ``dVs/PSRR`` in series with the ``+`` pin (dVs: total span change)."""

    kind = "psrr"
    symbols = (
        SymbolSpec("dVs", "V", r"\Delta V_{\mathrm{S}}", "supply change dVs/PSRR",
                   file_value=True),
        SymbolSpec("PSRR", "", r"\mathrm{PSRR}", "PSRR", (("real", True), ("nonzero", True)),
                   datasheet="psrr", role="parameter"),
    )  # fmt: skip
    convention = "The PSRR error is dVs/PSRR, dVs the change of the total supply span."

    def sources(self, opamp):
        return (opamp_symbol(opamp, "dVs"),)

    def parameters(self, opamp):
        return (opamp_symbol(opamp, "PSRR"),)

    def injections(self, opamp):
        return (SeriesVoltage(opamp_symbol(opamp, "dVs"), 1 / opamp_symbol(opamp, "PSRR")),)


class VoltageNoise(NonIdeal):
    """Input voltage noise ``en`` in series with the ``+`` pin, 1/f corner ``fce``."""

    kind = "vnoise"
    noise = True
    symbols = (
        SymbolSpec("en", "V/√Hz", r"e_{\mathrm{n}}", "voltage noise en",
                   (("nonnegative", True),), datasheet="en", file_value=True),
        SymbolSpec("fce", "Hz", r"f_{\mathrm{ce}}", "voltage-noise 1/f corner fce",
                   (("nonnegative", True),), datasheet="fce", file_value=True, role="parameter"),
    )  # fmt: skip
    convention = "The voltage noise en is in series with the + pin."

    def sources(self, opamp):
        return (opamp_symbol(opamp, "en"),)

    def parameters(self, opamp):
        return (opamp_symbol(opamp, "fce"),)

    def injections(self, opamp):
        return (SeriesVoltage(opamp_symbol(opamp, "en"), sp.S.One),)

    def spectra(self, opamp):
        en = opamp_symbol(opamp, "en")
        return (NoiseSpectrum(en, en, opamp_symbol(opamp, "fce")),)


class CurrentNoise(NonIdeal):
    """Input current noise into each pin, ``in+`` and ``in-`` (uncorrelated).

    Both have the density ``in`` and the 1/f corner ``fci``.
    """

    kind = "inoise"
    noise = True
    symbols = (
        SymbolSpec("in+", "A/√Hz", r"i_{\mathrm{n+}}", "current noise in+",
                   (("nonnegative", True),)),
        SymbolSpec("in-", "A/√Hz", r"i_{\mathrm{n-}}", "current noise in-",
                   (("nonnegative", True),)),
        SymbolSpec("in", "A/√Hz", r"i_{\mathrm{n}}", "current noise in",
                   (("nonnegative", True),), datasheet="in", file_value=True, role="parameter"),
        SymbolSpec("fci", "Hz", r"f_{\mathrm{ci}}", "current-noise 1/f corner fci",
                   (("nonnegative", True),), datasheet="fci", file_value=True, role="parameter"),
    )  # fmt: skip
    convention = "The current noises in+ and in- flow into the pins, uncorrelated."

    def sources(self, opamp):
        return (opamp_symbol(opamp, "in+"), opamp_symbol(opamp, "in-"))

    def parameters(self, opamp):
        return (opamp_symbol(opamp, "in"), opamp_symbol(opamp, "fci"))

    def injections(self, opamp):
        plus, minus = self.sources(opamp)
        return (PinCurrent(plus, "plus"), PinCurrent(minus, "minus"))

    def spectra(self, opamp):
        density, corner = self.parameters(opamp)
        return tuple(NoiseSpectrum(s, density, corner) for s in self.sources(opamp))




class SinglePole:
    """Op-amp dynamics: a single-pole open-loop gain from ``A0`` and ``GBW``.

    ``A(s) = A0/(1 + s·A0/(2π·GBW))``: the dominant pole sits at
    ``GBW/A0`` hertz. At DC (``s = 0``) the gain is ``A0``; as ``A0`` and
    ``GBW`` grow without bound it becomes the ideal op-amp. Declare it with
    ``Circuit.opamp(..., gain="pole")``.

    Examples
    --------
    >>> SinglePole().gain("U1")
    2*pi*U1.A0*U1.GBW/(U1.A0*s + 2*pi*U1.GBW)
    >>> SinglePole().parameters("U1")
    (U1.A0, U1.GBW)
    """

    kind = "pole"

    def parameters(self, opamp: str) -> tuple[sp.Symbol, sp.Symbol]:
        """The DC gain ``A0`` (V/V) and gain-bandwidth product ``GBW`` (Hz)."""
        return opamp_symbol(opamp, "A0"), opamp_symbol(opamp, "GBW")

    def gain(self, opamp: str) -> sp.Expr:
        """The open-loop gain ``A(s)`` of op-amp ``opamp``."""

        a0, gbw = self.parameters(opamp)
        return 2 * sp.pi * gbw * a0 / (2 * sp.pi * gbw + a0 * LAPLACE)

    def __repr__(self) -> str:
        return "SinglePole()"


def _further_pole(k: int) -> SymbolSpec:
    """The spec of ``f<k>``, the k-th open-loop pole (k ≥ 2) of :class:`MultiPole`, Hz."""
    return SymbolSpec(f"f{k}", "Hz", rf"f_{{{k}}}", f"open-loop pole {k} f{k}", _POSITIVE,
                      datasheet=f"f{k}", file_value=True, role="parameter")  # fmt: skip


#: The first further poles are known everywhere (files, parameter sets) from the start.
register_symbols(*(_further_pole(k) for k in range(2, 5)))


class MultiPole:
    """Op-amp dynamics: the single pole and ``poles − 1`` further poles.

    ``A(s) = A0/((1 + s/ω1)(1 + s/ω2)…)`` with ``ω1 = 2π·GBW/A0`` (as in
    :class:`SinglePole`) and ``ωk = 2π·fk`` for the further poles ``U1.f2``,
    ``U1.f3``, … (hertz). As ``A0``, ``GBW`` and every ``fk`` grow without bound
    it becomes the ideal op-amp; ``fk → ∞`` alone gives the single pole.
    Declare it with ``Circuit.opamp(..., gain="pole2")`` or ``poles=2``.

    Examples
    --------
    >>> MultiPole(2).parameters("U1")
    (U1.A0, U1.GBW, U1.f2)
    >>> MultiPole(2).gain("U1").subs(LAPLACE, 0)
    U1.A0
    """

    def __init__(self, poles: int) -> None:
        if isinstance(poles, bool) or not isinstance(poles, int) or poles < 1:
            raise ValueError(f"MultiPole: poles={poles!r} must be a whole number >= 1")
        self.poles = poles
        register_symbols(*(_further_pole(k) for k in range(2, poles + 1)))

    @property
    def kind(self) -> str:
        """``"pole"`` for one pole, ``"pole<n>"`` for ``n`` (the ``gain=`` text)."""
        return "pole" if self.poles == 1 else f"pole{self.poles}"

    def parameters(self, opamp: str) -> tuple[sp.Symbol, ...]:
        """``A0``, ``GBW`` and the further poles ``f2``, ``f3``, … in hertz."""
        further = (opamp_symbol(opamp, f"f{k}") for k in range(2, self.poles + 1))
        return (*SinglePole().parameters(opamp), *further)

    def gain(self, opamp: str) -> sp.Expr:
        """The open-loop gain ``A(s)`` of op-amp ``opamp``."""
        a = SinglePole().gain(opamp)
        for fk in self.parameters(opamp)[2:]:
            a = a / (1 + LAPLACE / (2 * sp.pi * fk))
        return a

    def __repr__(self) -> str:
        return f"MultiPole({self.poles})"


def gain_model(text: str) -> MultiPole | None:
    """The gain model a ``gain=`` text names: ``"pole"``, ``"pole2"``, …; else ``None``.

    Examples
    --------
    >>> gain_model("pole3"), gain_model("finite")
    (MultiPole(3), None)
    """
    m = re.fullmatch(r"pole([1-9][0-9]?)?", text)
    return MultiPole(int(m.group(1) or 1)) if m else None


def kind_of(suffix: str) -> str | None:
    """The key of the kind, or gain model, that declares the op-amp symbol ``suffix``.

    Examples
    --------
    >>> kind_of("Vcm"), kind_of("GBW"), kind_of("A"), kind_of("f2"), kind_of("R1")
    ('cmrr', 'pole', 'finite', 'pole2', None)
    """
    for key, kind in KINDS.items():
        if any(spec.suffix == suffix for spec in kind.symbols):
            return key
    m = re.fullmatch(r"f([2-9]|[1-9][0-9])", suffix)
    if m:
        return f"pole{m.group(1)}"
    return {"A": "finite", "A0": SinglePole.kind, "GBW": SinglePole.kind}.get(suffix)
