"""The :class:`Design` record: what a design file holds, once read.

A circuit, its nominal numbers, the op-amp parameter sets and resistor grades,
and the analyses wanted. :mod:`opsym.io.designfile` reads it from TOML and
:mod:`opsym.io.writer` writes it back.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import TYPE_CHECKING, Any

import sympy as sp

from ..model.circuit import Circuit
from ..model.elements import TWO_TERMINALS, FullyDifferentialAmp, OpAmp
from ..model.nonideal import kind_of
from ..model.symbols import SYMBOLS
from ..numeric.params import OpAmpParams, ResistorParams
from ..numeric.requirement import Requirement

if TYPE_CHECKING:
    from ..analyses.result import Result

__all__ = [
    "DEFAULT_INCLUDE",
    "ELEMENT_TABLES",
    "FDA_DEFAULT_INCLUDE",
    "FORMAT",
    "BudgetSettings",
    "Design",
    "NoiseSettings",
    "NullRequest",
    "ResponseSettings",
    "SensitivityRequest",
    "ToleranceSettings",
    "opamp_values",
]

#: The design-file format this version reads and writes.
FORMAT = 1

#: Element tables, in the order they are read and written.
ELEMENT_TABLES = (
    *(cls.table for cls in TWO_TERMINALS), OpAmp.table, FullyDifferentialAmp.table,
)  # fmt: skip
#: What an op-amp carries without ``include``: the defaults of ``Circuit.opamp``.
DEFAULT_INCLUDE = ("offset", "bias", "vnoise", "inoise")
#: What an FDA (``[fdas.U1]``) carries without ``include``: the defaults of ``Circuit.fda``.
FDA_DEFAULT_INCLUDE = (*DEFAULT_INCLUDE, "ocm-offset")
def opamp_values() -> dict[str, tuple[str, str]]:
    """Numbers an op-amp table may give for its own symbols (``U1.Vcm`` ...).

    Each registered symbol declared with ``file_value=True``, with its unit and
    the kind (or gain model) that uses it.

    Examples
    --------
    >>> opamp_values()["Vcm"], opamp_values()["A0"]
    (('V', 'cmrr'), ('ratio', 'pole'))
    """
    return {
        spec.suffix: (spec.unit or "ratio", kind_of(spec.suffix) or "")
        for spec in SYMBOLS.values()
        if spec.file_value
    }


@dataclass(frozen=True)
class NullRequest:
    """``term by component``: the value of ``component`` that nulls ``term``'s coefficient."""

    term: str
    by: str

    def __str__(self) -> str:
        return f"{self.term} by {self.by}"


@dataclass(frozen=True)
class SensitivityRequest:
    """Sensitivities of the coefficients ``of`` (``"gain"`` or sources) to components ``to``."""

    of: tuple[str, ...] = ("gain",)
    to: tuple[str, ...] = ()
    normalized: bool = True


@dataclass(frozen=True)
class BudgetSettings:
    """How to put numbers into the error budget (see :func:`opsym.study.budget.error_budget`).

    ``temperatures`` lists the temperatures (°C) to evaluate; ``adc_bits`` with
    ``adc_reference`` (V) and ``adc_range`` describe the converter;
    ``full_scale`` (V) is the output span for ppm of full scale.
    """

    grade: str = "max"
    temperatures: tuple[float, ...] = (25.0,)
    full_scale: sp.Expr | None = None
    adc_bits: int | None = None
    adc_reference: sp.Expr | None = None
    adc_range: str = "unipolar"


@dataclass(frozen=True)
class ToleranceSettings:
    """A tolerance study of ``of`` (``"gain"`` or sources): corners, bound and Monte Carlo."""

    of: tuple[str, ...] = ("gain",)
    samples: int = 10000
    seed: int | None = None
    distribution: str = "uniform"


@dataclass(frozen=True)
class ResponseSettings:
    """The ``[response]`` table: a frequency response of the output to ``signal``.

    Frequencies are in hertz; ``None`` means "not given" (the study uses its
    defaults: 10 Hz to 10 MHz, one point per decade). ``at`` lists the
    frequencies where gain and gain error are reported. ``phase_margin``
    (degrees) is the threshold under which an op-amp loop is flagged
    (``None``: 45°, common practice).
    """

    signal: str | None = None
    f_start: sp.Expr | None = None
    f_stop: sp.Expr | None = None
    points_per_decade: int | None = None
    at: tuple[sp.Expr, ...] = ()
    phase_margin: float | None = None


@dataclass(frozen=True)
class NoiseSettings:
    """The ``[noise]`` table: the band (Hz; ``f_stop`` may be ``inf``) and temperature (°C)."""

    f_start: sp.Expr
    f_stop: sp.Expr
    temperature: float | None = None
    signal: str | None = None


@dataclass(frozen=True)
class Design:
    """A loaded design file: the circuit, its numbers and the analyses wanted.

    Attributes
    ----------
    circuit : opsym.Circuit
        Elements with ``symbolic = false`` carry their number; the rest are
        symbols, so results stay in closed form.
    output : str or (str, str)
        Output node, or the (plus, minus) pair of a differential output.
    values : mapping of str to sympy.Expr
        Nominal numbers by name (``"R1"``, ``"Vin"``, ``"U1.Vcm"``), put in
        after the derivation.
    signal : str or None
        The input signal for gain, gain error and input-referred errors.
    opamps : mapping of str to OpAmpParams
        The parameter set of each op-amp that has one.
    resistors : mapping of str to ResistorParams
        Tolerance and TCR of each resistor that has them (own or the default).
    resistor_default : ResistorParams or None
        The grade ``[tolerance] resistors`` gives every resistor without its own.
    nulls, sensitivity, budget, tolerance, response, noise
        The analyses asked for (``None``: not asked).
    average_bias : bool
        Report bias terms as ``Ib``/``Ios`` (true) or ``Ib+``/``Ib-``.
    notes : str
        Free text for the design notes.
    rails : mapping of str to (sympy.Expr, sympy.Expr)
        Supply rails (V, negative then positive) an op-amp's table gives.
    supply : (sympy.Expr, sympy.Expr) or None
        The design-wide rails, for every op-amp without its own.
    series : str
        The E-series for the standard values that meet null conditions.
    source : str
        The file it came from (``"<text>"`` for text).
    revision, date : str
        The design's revision and date for the notes (``""``: not given; the
        notes then print today's date).
    requirement : Requirement or None
        The ``[requirement]`` the budget is checked against (PASS/FAIL).
    """

    circuit: Circuit
    output: str | tuple[str, str]
    values: Mapping[str, sp.Expr] = field(default_factory=dict)
    signal: str | None = None
    opamps: Mapping[str, OpAmpParams] = field(default_factory=dict)
    resistors: Mapping[str, ResistorParams] = field(default_factory=dict)
    nulls: tuple[NullRequest, ...] = ()
    sensitivity: SensitivityRequest | None = None
    budget: BudgetSettings | None = None
    tolerance: ToleranceSettings | None = None
    average_bias: bool = True
    notes: str = ""
    source: str = "<text>"
    resistor_default: ResistorParams | None = None
    series: str = "E96"
    response: ResponseSettings | None = None
    noise: NoiseSettings | None = None
    rails: Mapping[str, tuple[sp.Expr, sp.Expr]] = field(default_factory=dict)
    supply: tuple[sp.Expr, sp.Expr] | None = None
    revision: str = ""
    date: str = ""
    requirement: Requirement | None = None

    def __post_init__(self) -> None:
        for name in ("values", "opamps", "resistors", "rails"):
            object.__setattr__(self, name, MappingProxyType(dict(getattr(self, name))))

    @property
    def title(self) -> str:
        """The circuit's title."""
        return self.circuit.title

    def analyze(
        self, progress: Callable[[int, int, str], Any] | None = None, domain: str = "dc"
    ) -> Result:
        """Derive the output in closed form (``Ib±`` as ``Ib``/``Ios`` if ``average_bias``).

        ``domain="s"`` gives transfer functions in the Laplace variable ``s``
        (see :meth:`opsym.Circuit.analyze`).
        """
        result = self.circuit.analyze(self.output, progress=progress, domain=domain)
        return result.with_average_bias() if self.average_bias else result

    def numeric_values(self) -> dict[str, float]:
        """The nominal numbers as floats, for the numeric analyses."""
        return {k: float(v) for k, v in self.values.items()}
