"""The frequency analyses of a design file: ``[response]`` and ``[noise]``.

:func:`run_response` derives the output in the Laplace domain, puts the
design's numbers in and evaluates the signal's transfer function: the −3 dB
bandwidth, a table over a logarithmic grid and the gain and gain error at the
frequencies asked for (the error against the same circuit with ideal
op-amps). :func:`run_noise` runs the noise analysis over the band asked for
and keeps its budget. Both compute; :func:`opsym.study.design.run_design` calls
them and the command line presents them.

Examples
--------
>>> from opsym.io.designfile import parse_design
>>> d = parse_design('''
... output = "out"
... [resistors]
... R1 = { between = ["n", "0"], value = "1k" }
... R2 = { between = ["n", "out"], value = "9k" }
... [voltage-sources]
... Vin = { plus = "p", minus = "0" }
... [opamps.U1]
... plus = "p"
... minus = "n"
... out = "out"
... gain = "pole"
... A0 = "100 dB"
... GBW = "1 MHz"
... en = "10 nV/√Hz"
... in = "0"
... [response]
... at = ["10 kHz"]
... [noise]
... from = "10 Hz"
... to = "10 kHz"
... ''')
>>> from opsym.study.design import design_values
>>> r = run_response(d, design_values(d), d.response)
>>> round(r.bandwidth / 1e3, 1)  # GBW / noise gain 10, as the trade estimates it
100.0
>>> round(abs(r.points[0].error) * 100, 2)  # |H/H_ideal - 1| at 10 kHz, in %: f·NG/GBW
9.95
>>> n = run_noise(d, design_values(d), d.noise)
>>> round(n.budget.total * 1e6, 2)  # µV: √((10n·10)² + (4.06n·9)² + 12.2n²)·√(9990 Hz)
10.69
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import sympy as sp

from ..errors import BudgetError, DesignFileError, InvalidValueError, NoSolutionError
from ..io.design import Design, NoiseSettings, ResponseSettings
from ..model.elements import CurrentSource
from ..numeric.frequency import HALF_POWER_DB, frequency_grid
from ..numeric.units import format_si
from ..output.tables import Table, latex_text

__all__ = [
    "DEFAULT_POINTS_PER_DECADE",
    "DEFAULT_START",
    "DEFAULT_STOP",
    "NoiseReport",
    "ResponsePoint",
    "ResponseReport",
    "run_noise",
    "run_response",
]

#: The response grid when ``[response]`` does not give it: 10 Hz to 10 MHz, per decade.
DEFAULT_START = 10.0
DEFAULT_STOP = 1e7
DEFAULT_POINTS_PER_DECADE = 1
_DESIGN_HINT = (
    "in a design file: a 'value' for each element; for gain = \"pole\", A0 and GBW on the "
    "op-amp table or 'parameters'"
)
_NOISE_HINT = (
    "in a design file: en, in (and the corners fce, fci) on the op-amp table, or "
    "'parameters' with en_typ and in_typ; a 'value' for each resistor"
)


@dataclass(frozen=True)
class ResponsePoint:
    """The signal's gain at one frequency, and the gain with ideal op-amps."""

    frequency: float
    gain: complex
    ideal: complex

    @property
    def error(self) -> complex:
        """Complex gain error ``H/H_ideal − 1`` (``nan`` where the ideal gain is zero)."""
        return self.gain / self.ideal - 1 if self.ideal != 0 else complex("nan")


@dataclass(frozen=True)
class ResponseReport:
    """What :func:`run_response` found for one design.

    Attributes
    ----------
    result : opsym Result
        The Laplace-domain result with the design's numbers put in.
    symbolic : opsym Result
        The same, before the numbers (for the transfer function in notes).
    signal, output, unit : str
        The source, the output label and the gain's unit (``V/V`` or ``V/A``).
    f_start, f_stop : float
        The grid's ends, Hz.
    bandwidth : float or None
        Where ``|H|`` first falls 3.01 dB below its DC value (``None``: never,
        or the DC gain is zero or infinite).
    dc_gain : float
        ``|H(0)|``.
    grid, points : tuple of ResponsePoint
        The logarithmic grid, and the frequencies the file lists in ``at``.
    passband : Passband or None
        The kind of response, its −3 dB edges and figures of merit, found
        exactly (:func:`opsym.numeric.passband.passband`).
    reference : ResponsePoint or None
        Where the gain error is quoted: 0 Hz, or the passband when the ideal
        gain is zero at DC (``Result.gain_error_frequency``); ``None``
        without an op-amp gain model.
    reference_where : str
        ``"DC"`` or ``"passband"``.
    """

    result: Any
    symbolic: Any
    signal: str
    output: str
    unit: str
    f_start: float
    f_stop: float
    bandwidth: float | None
    dc_gain: float
    grid: tuple[ResponsePoint, ...]
    points: tuple[ResponsePoint, ...] = ()
    passband: Any = None
    reference: ResponsePoint | None = None
    reference_where: str = ""

    def tables(self) -> list[Table]:
        """The grid table and, if frequencies were listed, the gain-error table."""
        notes = [f"{self._gain(self.dc_gain)} at DC; {self._bandwidth()}."]
        notes.append("Gain error: |H/H_ideal − 1|, H_ideal the same circuit with ideal op-amps.")
        if self.reference is not None:
            p = self.reference
            notes.append(f"Gain error at f = {format_si(p.frequency, 'Hz')} "
                         f"({self.reference_where}): {_percent(abs(p.error))}.")  # fmt: skip
        band = f"{format_si(self.f_start, 'Hz')} to {format_si(self.f_stop, 'Hz')}"
        db = "dB" if self.unit == "V/V" else "dBΩ"
        grid = Table(
            ("frequency", "|H|", f"|H| ({db})", "phase", "gain error"),
            tuple(self._row(p) for p in self.grid),
            "rrrrr",
            f"Frequency response of V({self.output}) from {self.signal}, {band}",
            (),
            tuple(notes),
        )
        out = [grid]
        if self.points:
            out.append(
                Table(
                    ("frequency", "|H|", "ideal |H|", "gain error", "magnitude", "phase"),
                    tuple(self._error_row(p) for p in self.points),
                    "rrrrrr",
                    f"Gain and gain error of V({self.output}) from {self.signal}",
                    (),
                    (
                        "gain error = |H/H_ideal − 1|; magnitude = |H|/|H_ideal| − 1; "
                        "phase = arg H − arg H_ideal.",
                    ),
                )
            )
        return out

    def to_text(self) -> str:
        """Plain-text tables for the terminal."""
        return "\n\n".join(t.to_text() for t in self.tables())

    def to_markdown(self) -> str:
        """GitHub-flavoured Markdown tables."""
        return "\n\n".join(t.to_markdown() for t in self.tables())

    def to_latex(self, *, float_env: bool = True) -> str:
        """LaTeX booktabs tables."""
        return "\n\n".join(t.to_latex(float_env=float_env) for t in self.tables())

    # -- cells -------------------------------------------------------------------------

    def _gain(self, magnitude: float) -> str:
        if self.unit == "V/V":
            return f"|H| = {magnitude:.5g} V/V"
        return f"|H| = {format_si(magnitude, 'V/A')}"

    def _bandwidth(self) -> str:
        band = self.passband
        if band is not None and band.kind != "low-pass":
            return band.describe(lambda f: format_si(f, "Hz"))
        if self.bandwidth is None:
            return "no −3 dB bandwidth (the transfer function is zero)"
        return f"−3 dB bandwidth {format_si(self.bandwidth, 'Hz')}"

    def _magnitude(self, x: complex) -> str:
        m = abs(x)
        return f"{m:.5g}" if self.unit == "V/V" else format_si(m, "V/A")

    def _row(self, p: ResponsePoint) -> tuple[str, ...]:
        m = abs(p.gain)
        db = f"{20 * math.log10(m):.2f}" if m > 0 else "−∞"
        return (format_si(p.frequency, "Hz"), self._magnitude(p.gain), db,
                _degrees(p.gain), _percent(abs(p.error)))  # fmt: skip

    def _error_row(self, p: ResponsePoint) -> tuple[str, ...]:
        ratio = abs(p.gain) / abs(p.ideal) - 1 if p.ideal != 0 else float("nan")
        phase = "n/a"
        if p.ideal != 0 and p.gain != 0:
            phase = f"{math.degrees(np.angle(p.gain / p.ideal)):.3g}°"
        return (format_si(p.frequency, "Hz"), self._magnitude(p.gain),
                self._magnitude(p.ideal), _percent(abs(p.error)), _percent(ratio, signed=True),
                phase)  # fmt: skip


@dataclass(frozen=True)
class NoiseReport:
    """What :func:`run_noise` found: the noise result, its budget over the band."""

    result: Any
    budget: Any
    f_start: float
    f_stop: float
    temperature: float
    signal: str | None

    def notes(self) -> tuple[str, ...]:
        """Lines that qualify the budget (why no input-referred figure is given)."""
        if self.budget.input_rms is None and self.signal is not None and math.isinf(self.f_stop):
            return (
                "No input-referred RMS: over a band to ∞ the input-referred density grows "
                "as the gain falls, so its integral does not converge.",
            )
        return ()

    def to_text(self) -> str:
        """The budget as plain text."""
        return "\n".join([self.budget.to_text(), *self.notes()])

    def to_markdown(self) -> str:
        """The budget as Markdown."""
        return "\n".join([self.budget.to_markdown(), *("- " + n for n in self.notes())])

    def to_latex(self, *, float_env: bool = True) -> str:
        """The budget as a LaTeX table."""

        extra = [r"\par\smallskip{\footnotesize " + latex_text(n) + "}" for n in self.notes()]
        return "\n".join([self.budget.to_latex(float_env=float_env), *extra])


def run_response(
    design: Design, values: Mapping[str, Any], settings: ResponseSettings,
    progress: Any = None,
) -> ResponseReport:
    """Evaluate the ``[response]`` of ``design`` with the numbers ``values``.

    ``values`` is the exact map of :func:`opsym.study.design.design_values`;
    the Laplace-domain result is derived once, and the ideal-op-amp gain the
    gain error needs is its limit, not a second derivation.

    Raises
    ------
    BudgetError
        A number is missing; the message names the symbols and the file.
    """
    signal = settings.signal or design.signal
    if signal is None:  # pragma: no cover - the reader resolves it
        raise BudgetError(f"{design.source}: [response]: give 'signal'")
    f_start = float(settings.f_start) if settings.f_start is not None else DEFAULT_START
    f_stop = float(settings.f_stop) if settings.f_stop is not None else DEFAULT_STOP
    points = settings.points_per_decade or DEFAULT_POINTS_PER_DECADE
    symbolic = design.analyze(domain="s", progress=progress)
    numeric = symbolic.subs(_element_values(design, values))
    try:
        grid = _points(numeric, signal, frequency_grid(f_start, f_stop, points))
        listed = _points(numeric, signal, np.array([float(f) for f in settings.at]))
        dc_gain = float(abs(numeric.response(np.array([0.0]), signal)[0]))
    except BudgetError as err:
        raise BudgetError(f"{design.source}: [response]: {err} ({_DESIGN_HINT})") from err
    try:
        band = numeric.passband(signal, HALF_POWER_DB)
    except InvalidValueError:  # a zero transfer function
        band = None
    try:
        bandwidth: float | None = numeric.bandwidth(signal, HALF_POWER_DB)
    except InvalidValueError:
        bandwidth = None
    reference, where = _reference(numeric, signal)
    source = design.circuit.element(signal)
    output = design.output if isinstance(design.output, str) else " - ".join(design.output)
    return ResponseReport(
        numeric, symbolic, signal, output, "V/A" if isinstance(source, CurrentSource) else "V/V",
        f_start, f_stop, bandwidth, dc_gain, grid, listed, band, reference, where,
    )  # fmt: skip


def run_noise(
    design: Design, values: Mapping[str, Any], settings: NoiseSettings, progress: Any = None
) -> NoiseReport:
    """Run the ``[noise]`` analysis of ``design`` over its band.

    Raises
    ------
    BudgetError
        A density or value is missing; the message names it and the file.
    DesignFileError
        The band has no finite noise power (1/f noise from 0 Hz, or a band to
        infinity whose density does not fall); the message names the field.
    """

    f_start = float(settings.f_start)
    f_stop = math.inf if settings.f_stop == sp.oo else float(settings.f_stop)
    temperature = settings.temperature if settings.temperature is not None else 25.0
    result = design.circuit.noise(
        design.output, values=_element_values(design, values), temperature=temperature,
        progress=progress,
    )
    try:
        budget = result.budget(f_start, f_stop, settings.signal)
    except BudgetError as err:
        raise BudgetError(f"{design.source}: [noise]: {err} ({_NOISE_HINT})") from err
    except InvalidValueError as err:
        key = "from" if f_start == 0 and "0 Hz" in str(err) else "to"
        raise DesignFileError(f"{design.source} [noise] {key}: {err}") from err
    return NoiseReport(result, budget, f_start, f_stop, temperature, settings.signal)


# -- helpers -------------------------------------------------------------------------------


def _element_values(design: Design, values: Mapping[str, Any]) -> dict[str, Any]:
    """The numbers to put in (the file's exact ones win over any float given); no signals."""
    signals = set(design.circuit.signal_sources)
    exact = dict(design.values)
    return {k: exact.get(k, v) for k, v in values.items() if k not in signals}


def _reference(result: Any, signal: str) -> tuple[ResponsePoint | None, str]:
    """The gain and ideal gain where the gain error is quoted (DC, or the passband)."""
    if all(a.gain is None for a in result.circuit.opamps):
        return None, ""  # ideal op-amps: no gain error
    try:
        f, where = result.gain_error_frequency(signal)
    except (NoSolutionError, InvalidValueError):
        return None, ""
    return _points(result, signal, np.array([f]))[0], where


def _points(result: Any, signal: str, f: np.ndarray) -> tuple[ResponsePoint, ...]:
    if f.size == 0:
        return ()
    h = result.response(f, signal)
    h0 = result.response(f, signal, ideal=True)
    return tuple(
        ResponsePoint(float(x), complex(a), complex(b)) for x, a, b in zip(f, h, h0, strict=True)
    )


def _degrees(x: complex) -> str:
    return f"{math.degrees(np.angle(x)):.1f}°" if x != 0 else "n/a"


def _percent(x: float, *, signed: bool = False) -> str:
    if not math.isfinite(x):
        return "n/a"
    sign = "+" if signed and x > 0 else ""
    return f"{sign}{100 * x:.3g} %"
