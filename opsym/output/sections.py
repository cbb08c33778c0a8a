r"""The frequency-response and noise sections of a design note, in LaTeX or Markdown.

A :class:`FrequencySection` holds a ``domain="s"`` result and writes its
transfer function, its −3 dB bandwidth, a table of the response and the gain
error at a few frequencies, and any figures. A :class:`NoiseSection` holds a
noise result and a band and writes the noise sum with every ``H_k(s)``, the
budget table and the peak-to-peak estimate. :func:`~opsym.output.notes.design_note`
places them after the numeric budget and before the caution.

Examples
--------
>>> import opsym
>>> c = opsym.Circuit("inverting x10")
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n", value="2k")
>>> c.resistor("R2", "n", "out", value="20k")
>>> c.opamp("U1", plus="0", minus="n", out="out", gain="pole", bias=False)
>>> res = c.analyze("out", domain="s", values={"U1.A0": "200k", "U1.GBW": "3M"})
>>> md = FrequencySection(res).markdown()
>>> [line for line in md.splitlines() if line.startswith("- Bandwidth")]
['- Bandwidth (−3 dB): 272.7 kHz.']
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import BudgetError, InvalidValueError, NoSolutionError
from ..numeric.units import format_si
from .document import (
    Fact,
    Math,
    Paragraph,
    Section,
    TableBlock,
    figure_list,
    latex_section,
    markdown_section,
)
from .figures import _has_gain_model, _ratio
from .latex import transfer_latex
from .noise import noise_latex, noise_table
from .tables import Table

__all__ = ["FrequencySection", "NoiseSection", "response_table"]


def _fraction_text(x: float) -> str:
    """A small fraction the way the trade quotes it: ppm below 0.1 %, else %."""
    if not math.isfinite(x):
        return "n/a"  # the ideal gain is zero there: no fractional error
    if abs(x) < 1e-3:
        return f"{x * 1e6:.3g} ppm"
    return f"{x * 100:.4g} %"


def _default_points(band: Any) -> tuple[float, ...]:
    """The table's frequencies: for a response with a DC reference, DC, the whole
    decades from three below the bandwidth, and the bandwidth; otherwise DC, whole
    decades from one below the first edge to one above the last, and the edges
    and the centre."""
    if band is None or not band.edges:
        return (0.0, 10.0, 100.0, 1e3, 1e4, 1e5)
    if band.reference == "DC":
        bandwidth = band.edges[0]
        top = math.floor(math.log10(bandwidth))
        decades = [10.0**k for k in range(top - 3, top + 1) if 10.0**k < bandwidth]
        return (0.0, *decades, bandwidth)
    low = math.floor(math.log10(band.edges[0])) - 1
    high = math.ceil(math.log10(band.edges[-1])) + 1
    if high - low > 8:  # a wide band: every second decade
        decades = [10.0**k for k in range(low, high + 1, 2)]
    else:
        decades = [10.0**k for k in range(low, high + 1)]
    marks = [*band.edges, *([band.centre] if band.centre is not None else [])]
    return (0.0, *sorted({*decades, *marks}))


def response_table(result: Any, points: Iterable[float], source: Any = None) -> Table:
    """``|H|``, phase and (with an op-amp gain model) ``|H/H_ideal − 1|`` at ``points`` Hz.

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit("follower")
    >>> c.voltage_source("Vin", "p", "0")
    >>> c.opamp("U1", plus="p", minus="out", out="out", gain="pole")
    >>> res = c.analyze("out", domain="s", values={"U1.A0": "100k", "U1.GBW": "1M"})
    >>> print(response_table(res, [0, 1e4]).to_text())
    Response of out to Vin
    frequency          |H|   phase  |H/H_ideal − 1|
    ---------  -----------  ------  ---------------
         0 Hz  0.99999 V/V   0.00°           10 ppm
       10 kHz  0.99994 V/V  -0.57°         0.9999 %
    """

    sym = result._signal(source) if source is None else result._source_symbol(source)
    f = np.asarray([float(p) for p in points], dtype=float)
    if f.size == 0 or np.any(f < 0) or not np.all(np.isfinite(f)):
        raise InvalidValueError(
            "frequency points: give one or more finite frequencies >= 0 Hz, e.g. [0, 1e3, 1e4]"
        )
    h = result.response(f, sym)
    unit = _ratio(result, sym)
    with_error = _has_gain_model(result) and sym in result.signals
    errors = np.abs(result.gain_error_response(f, sym)) if with_error else None
    rows = []
    for i, fi in enumerate(f):
        mag = abs(complex(h[i]))
        mag_text = format_si(mag, unit, 5) if unit in ("Ω", "S") else f"{mag:.6g} {unit}"
        row = [format_si(fi, "Hz", 4), mag_text, f"{math.degrees(np.angle(h[i])):.2f}°"]
        if errors is not None:
            row.append(_fraction_text(float(errors[i])))
        rows.append(tuple(row))
    headers = ["frequency", "|H|", "phase"] + (["|H/H_ideal − 1|"] if with_error else [])
    out = result.output if isinstance(result.output, str) else "-".join(result.output)
    return Table(tuple(headers), tuple(rows), "r" * len(headers), f"Response of {out} to {sym}")


@dataclass(frozen=True)
class FrequencySection:
    """Transfer function, band edges, gain error, response table and figures of a
    ``domain="s"`` result.

    Parameters
    ----------
    result : Result
        A Laplace-domain result with every value but ``s`` given.
    source : str, optional
        The source whose transfer function is shown (default: the only signal).
    points : iterable of float, optional
        Frequencies (Hz) of the table (default: DC, whole decades from three
        below the bandwidth, and the bandwidth; for a high-pass, band-pass or
        notch, whole decades around its edges, the edges and the centre).
    figures : iterable of (path, caption) or path
        Figures to include (e.g. from :func:`~opsym.output.figures.bode_chart`).
    reference : float, optional
        Where (Hz) to quote the gain error; default
        :meth:`~opsym.analyses.response.FrequencyResponse.gain_error_frequency`
        (0 Hz, or the passband when the ideal gain is zero at DC).

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit("AC-coupled follower")
    >>> c.voltage_source("Vin", "in", "0")
    >>> c.capacitor("C1", "in", "p", value="1u")
    >>> c.resistor("R1", "p", "0", value="100k")
    >>> c.opamp("U1", plus="p", minus="out", out="out", gain="pole", bias=False)
    >>> res = c.analyze("out", domain="s", values={"U1.A0": "1M", "U1.GBW": "1M"})
    >>> lines = [x for x in FrequencySection(res).markdown().splitlines() if x.startswith("- ")]
    >>> print(lines[0][:70])  # then f0, |H(f0)| and Q
    - Response (exact, from H(s)): band-pass: −3 dB at 1.592 Hz and 1 MHz
    >>> print(lines[1][:50])  # f·NG/GBW = 1.262 kHz/1 MHz
    - Gain error at f = 1.262 kHz (passband): 0.1262 %
    """

    result: Any
    source: Any = None
    points: Iterable[float] | None = None
    figures: Iterable[Any] = ()
    reference: float | None = None
    _bandwidth: float | None = field(default=None, init=False, repr=False)
    _passband: Any = field(default=None, init=False, repr=False)
    _gain_error: str | None = field(default=None, init=False, repr=False)

    def __post_init__(self) -> None:
        if getattr(self.result, "domain", None) != "s":
            raise InvalidValueError(
                "FrequencySection needs a Laplace-domain result; analyse with domain='s'"
            )
        object.__setattr__(self, "figures", figure_list(self.figures))
        try:
            band = self.result.passband(self._symbol())
        except InvalidValueError:
            band = None  # a zero transfer: the note says so
        try:
            bw: float | None = self.result.bandwidth(self._symbol())
        except InvalidValueError:
            bw = None  # |H(0)| zero or infinite, or never 3 dB below it
        object.__setattr__(self, "_passband", band)
        object.__setattr__(self, "_bandwidth", bw)
        f_error = self._gain_error_line()
        points = _default_points(band) if self.points is None else tuple(self.points)
        if self.points is None and f_error is not None and f_error > 0:
            points = tuple(sorted({*points, f_error}))
        object.__setattr__(self, "points", tuple(float(p) for p in points))

    def _symbol(self) -> Any:
        if self.source is None:
            return self.result._signal(None)
        return self.result._source_symbol(self.source)

    def _gain_error_line(self) -> float | None:
        """Set the gain-error sentence; return the frequency it is quoted at."""
        sym = self._symbol()
        if not (_has_gain_model(self.result) and sym in self.result.signals):
            return None
        if self.reference is not None:
            f, where = float(self.reference), "given"
            if not (f >= 0 and math.isfinite(f)):
                raise InvalidValueError(
                    f"FrequencySection reference={self.reference!r}: give a finite frequency "
                    ">= 0 Hz"
                )
        else:
            try:
                f, where = self.result.gain_error_frequency(sym)
            except NoSolutionError as err:
                object.__setattr__(self, "_gain_error", f"Gain error: not quoted ({err}).")
                return None
        error = abs(complex(self.result.gain_error_response(np.array([f]), sym)[0]))
        text = (f"Gain error at f = {format_si(f, 'Hz', 4)} ({where}): {_fraction_text(error)} "
                "(|H/H_ideal − 1|, H_ideal with ideal op-amps).")  # fmt: skip
        object.__setattr__(self, "_gain_error", text)
        return f

    @property
    def bandwidth(self) -> float | None:
        """The −3 dB bandwidth (re DC) in Hz, or ``None`` when ``|H(0)|`` is zero or
        ``|H|`` never falls 3 dB below it."""
        return self._bandwidth

    @property
    def passband(self) -> Any:
        """The :class:`~opsym.numeric.passband.Passband` (``None`` for a zero transfer)."""
        return self._passband

    def table(self) -> Table:
        """The response table (:func:`response_table`) at :attr:`points`."""
        return response_table(self.result, self.points or (), self.source)

    def _lines(self) -> list[str]:
        band = self._passband
        if band is None:
            first = "Bandwidth: not defined (the transfer function is zero)."
        elif band.kind == "low-pass":
            first = f"Bandwidth (−3 dB): {format_si(band.edges[0], 'Hz', 4)}."
        else:
            text = band.describe(lambda f: format_si(f, "Hz", 4))
            first = f"Response (exact, from H(s)): {text}."
        return [first] + ([self._gain_error] if self._gain_error else [])

    def section(self) -> Section:
        """The section's content: ``H(s)``, the band and gain error, the table, figures."""
        formula = Math(transfer_latex(self.result, self.source))
        facts = [Fact(line) for line in self._lines()]
        table = TableBlock(self.table(), True)
        return Section("Frequency response", (formula, *facts, table, *self.figures))

    def latex(self) -> str:
        """The section as LaTeX (needs ``amsmath``, ``booktabs``, ``graphicx``)."""
        return latex_section(self.section())

    def markdown(self) -> str:
        """The section as Markdown, formulas in ``$$`` blocks."""
        return markdown_section(self.section())


@dataclass(frozen=True)
class NoiseSection:
    """Noise transfer functions, the budget over ``f_low``–``f_high`` Hz and figures.

    Parameters
    ----------
    noise : NoiseResult
        From :meth:`opsym.Circuit.noise`, with every density given.
    f_low, f_high : float
        The band in hertz (``f_high`` may be ``inf``).
    figures : iterable of (path, caption) or path
        Figures to include (e.g. from :func:`~opsym.output.figures.noise_density_chart`).
    signal : str, optional
        The signal the noise is referred to, when the circuit has several.
    """

    noise: Any
    f_low: float
    f_high: float
    figures: Iterable[Any] = ()
    signal: Any = None
    budget: Any = field(default=None, init=False)

    def __post_init__(self) -> None:
        if not hasattr(self.noise, "budget"):
            raise BudgetError(
                "NoiseSection needs a noise result; build it with circuit.noise(output, values)"
            )
        object.__setattr__(self, "figures", figure_list(self.figures))
        budget = self.noise.budget(self.f_low, self.f_high, self.signal)
        object.__setattr__(self, "budget", budget)

    _INTRO = (
        "The noise sources are uncorrelated, so their powers add at the output. "
        "Each resistor carries its thermal noise voltage in series (4kTR); op-amp "
        "voltage noise is in series with the + pin and current noise flows into each pin."
    )

    def section(self) -> Section:
        """The section's content: the noise sum, the budget table, figures."""
        table = TableBlock(noise_table(self.budget), unbreakable=True)
        blocks = (Paragraph(self._INTRO), Math(noise_latex(self.noise)), table)
        return Section("Noise", (*blocks, *self.figures))

    def latex(self) -> str:
        """The section as LaTeX."""
        return latex_section(self.section())

    def markdown(self) -> str:
        """The section as Markdown."""
        return markdown_section(self.section())
