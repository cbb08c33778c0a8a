"""Figures for design notes: budgets, temperature, Monte Carlo, frequency response, noise.

matplotlib is imported inside each function and drawn on its own Agg canvas
(no pyplot, no global backend change), so importing opsym never needs it and
figures work on machines without a display.

Every function returns the matplotlib ``Figure`` (a notebook shows it), writes
it to ``path`` when one is given (the format follows the suffix: ``.png``, or
``.pdf`` / ``.svg`` for vector figures) and draws into a given ``ax=`` (an
``Axes``; for :func:`bode_chart` a pair, magnitude and phase) instead of a new
figure, so a figure can be one panel of the caller's own layout. Frequency
axes are labelled in Hz; legends go where they cover the fewest points
(``loc="best"``).

Examples
--------
>>> import tempfile, pathlib
>>> from opsym.study.tolerance import tolerance_analysis
>>> import sympy as sp
>>> R1, R2 = sp.symbols("R1 R2", positive=True)
>>> study = tolerance_analysis(1 + R2 / R1, {"R1": 1e3, "R2": 9e3}, {"R1": 0.01, "R2": 0.01},
...                            samples=500, seed=3)
>>> with tempfile.TemporaryDirectory() as d:
...     fig = monte_carlo_histogram(study, pathlib.Path(d) / "mc.png")
...     (pathlib.Path(d) / "mc.png").stat().st_size > 0
True
>>> type(fig).__name__
'Figure'

"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import numpy as np

from ..analyses.branch import output_text
from ..analyses.units import output_unit, ratio_unit, source_unit
from ..errors import (
    BudgetError,
    InvalidValueError,
    MissingDependencyError,
    NoSolutionError,
)
from ..model.symbols import LAPLACE
from ..numeric.frequency import evaluator, frequency_grid, natural_frequencies
from ..numeric.units import format_si
from .laplace import transfer_parts

__all__ = [
    "bode_chart",
    "contribution_chart",
    "gain_error_chart",
    "loop_gain_chart",
    "monte_carlo_histogram",
    "noise_density_chart",
    "temperature_chart",
]


def _figure(width: float = 6.4, height: float = 3.6):
    try:
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure
    except ImportError:
        raise MissingDependencyError(
            "figures need matplotlib, which is not installed; run 'pip install matplotlib'"
        ) from None
    fig = Figure(figsize=(width, height), layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _check_path(path: Any) -> Path | None:
    """``path`` as a Path, refused before any drawing when its suffix is not a known format."""
    if path is None:
        return None
    p = Path(path)
    if p.suffix.lower() not in (".png", ".pdf", ".svg"):
        raise BudgetError(f"figure path {str(p)!r}: use a .png, .pdf or .svg file name")
    return p


def _axes(ax: Any, width: float = 6.4, height: float = 3.6) -> Any:
    """The given Axes, else one Axes on a new figure of that size."""
    return ax if ax is not None else _figure(width, height).add_subplot()


def _save(fig: Any, path: Any) -> Any:
    """Write ``fig`` to ``path`` when one is given; return the figure."""
    p = _check_path(path)
    if p is not None:
        p.parent.mkdir(parents=True, exist_ok=True)
        fig.savefig(p, dpi=150)
    return fig


def _unit_axis(ax: Any, axis: str = "x", unit: str = "V") -> None:
    from matplotlib.ticker import FuncFormatter


    fmt = FuncFormatter(lambda v, _pos: format_si(v, unit, 3))
    (ax.xaxis if axis == "x" else ax.yaxis).set_major_formatter(fmt)


def contribution_chart(
    budget: Any, path: Any = None, *, top: int | None = None, ax: Any = None
) -> Any:
    """Horizontal bars of each row's ``|output|``, largest at the top, with the totals.

    Parameters
    ----------
    budget : Budget
    path : str or Path, optional
        File to write (``.png``, ``.pdf`` or ``.svg``); none: only draw.
    top : int, optional
        Show only the largest ``top`` rows.
    ax : matplotlib Axes, optional
        Draw into this Axes instead of a new figure.

    Returns
    -------
    matplotlib.figure.Figure
        The figure drawn on (the one ``ax`` belongs to, when given).
    """
    _check_path(path)
    rows = [r for r in budget.rows if r.magnitude > 0][: top or None]
    if not rows:
        raise BudgetError("contribution_chart: every contribution is zero; nothing to draw")
    ax = _axes(ax, 6.4, 0.9 + 0.38 * len(rows))
    fig = ax.figure
    labels = [r.label for r in rows][::-1]
    mags = [r.magnitude for r in rows][::-1]
    ax.barh(labels, mags, color="#4c72b0")
    for y, (m, r) in enumerate(zip(mags, rows[::-1], strict=True)):
        ax.text(m, y, f" {100 * r.share:.1f} %", va="center", fontsize=8)
    ax.axvline(budget.rss, color="#dd8452", linestyle="--", label="RSS")
    ax.axvline(budget.worst_case, color="#c44e52", linestyle=":", label="worst case")
    _unit_axis(ax, "x", budget.output_unit)
    ax.set_xlabel("|error at output|")
    ax.set_title(budget.title, fontsize=10)
    ax.legend(fontsize=8, loc="best")
    return _save(fig, path)


def temperature_chart(sweep: Any, path: Any = None, *, top: int = 3, ax: Any = None) -> Any:
    """Worst case, RSS and the largest contributors against temperature.

    ``path`` and ``ax`` as in :func:`contribution_chart`; returns the Figure.
    """
    _check_path(path)
    ax = _axes(ax)
    fig = ax.figure
    t = list(sweep.temperatures)
    ax.plot(t, sweep.worst_case, color="#c44e52", label="worst case", linewidth=2)
    ax.plot(t, sweep.rss, color="#dd8452", label="RSS", linestyle="--")
    labels = {r.source: r.label for r in sweep.worst_budget.rows}
    for name in sweep.sources()[:top]:
        ax.plot(t, sweep.contribution(name), label=labels[name], linewidth=1)
    ax.axvline(sweep.worst_temperature, color="grey", linewidth=0.8, linestyle=":")
    left_half = sweep.worst_temperature <= (t[0] + t[-1]) / 2
    ax.annotate(
        f" worst {sweep.worst_temperature:g} °C ",
        (sweep.worst_temperature, float(max(sweep.worst_case))),
        fontsize=8, ha="left" if left_half else "right", va="top",
    )  # fmt: skip
    _unit_axis(ax, "y", sweep.worst_budget.output_unit)
    ax.set_xlabel("temperature (°C)")
    ax.set_ylabel("|error at output|")
    ax.legend(fontsize=8, loc="best")
    ax.grid(alpha=0.3)
    return _save(fig, path)


def monte_carlo_histogram(study: Any, path: Any = None, *, bins: int = 60, ax: Any = None) -> Any:
    """Histogram of a tolerance study's Monte Carlo samples, with corners and bound marked.

    ``path`` and ``ax`` as in :func:`contribution_chart`; returns the Figure.
    """
    _check_path(path)
    if study.mc is None:
        raise BudgetError("monte_carlo_histogram: the study has no Monte Carlo run (samples=None)")
    ax = _axes(ax)
    fig = ax.figure
    ax.hist(study.mc.samples, bins=bins, color="#4c72b0", alpha=0.8, label="Monte Carlo")
    if study.corner_low is not None:
        for i, x in enumerate((study.corner_low, study.corner_high)):
            ax.axvline(x, color="#c44e52", label="corners" if i == 0 else None)
    for i, x in enumerate((study.nominal - study.bound, study.nominal + study.bound)):
        ax.axvline(x, color="#dd8452", linestyle="--", label="first-order" if i == 0 else None)
    ax.axvline(study.nominal, color="black", linewidth=0.8, label="nominal")
    ax.set_xlabel(study.quantity + (f" ({study.unit})" if study.unit else ""))
    ax.set_ylabel("count")
    ax.set_title(f"{study.mc.count} samples, {study.mc.distribution}", fontsize=10)
    ax.legend(fontsize=8, loc="best")
    return _save(fig, path)


# -- frequency response and noise ----------------------------------------------------------

#: Points per decade of the frequency figures.
_PER_DECADE = 100
#: The range used when neither the bandwidth nor the poles suggest one, Hz.
_FALLBACK_RANGE = (1.0, 1e7)


def _pole_frequencies(result: Any, sym: Any) -> list[float]:
    """Frequencies (Hz) of the poles and zeros of one coefficient, when all are numbers."""
    import sympy as sp


    parts = transfer_parts(result.coefficient(sym))
    if parts is None:
        return []
    out = []
    for poly in (parts.numerator, parts.denominator):
        if poly.free_symbols - {LAPLACE}:
            return []
        p = sp.Poly(poly, LAPLACE)
        if p.degree() > 0:
            out += [abs(complex(r)) / (2 * math.pi) for r in p.nroots(n=15, maxsteps=200)]
    return [f for f in out if f > 0]


def _frequency_range(
    result: Any, sym: Any, f_start: float | None, f_stop: float | None
) -> tuple[float, float]:
    """The given range, else three decades below the bandwidth to two above (whole decades).

    Without a bandwidth (no −3 dB point) the poles and zeros decide; without
    those, 1 Hz to 10 MHz.
    """
    if f_start is None or f_stop is None:
        try:
            centre_low = centre_high = result.bandwidth(sym)
        except (InvalidValueError, BudgetError, NoSolutionError):
            poles = _pole_frequencies(result, sym)
            centre_low, centre_high = (min(poles), max(poles)) if poles else (None, None)
        if centre_low is None:
            low, high = _FALLBACK_RANGE
        else:
            low = 10.0 ** math.floor(math.log10(centre_low) - 3)
            high = 10.0 ** math.ceil(math.log10(centre_high) + 2)
        f_start = low if f_start is None else f_start
        f_stop = high if f_stop is None else f_stop
    f_start, f_stop = float(f_start), float(f_stop)
    if not (0 < f_start < f_stop) or not math.isfinite(f_stop):
        raise InvalidValueError(
            f"frequency range f_start={f_start:g} Hz, f_stop={f_stop:g} Hz: "
            "give 0 < f_start < f_stop, both finite"
        )
    return f_start, f_stop


def _need_s(result: Any, what: str) -> None:
    if getattr(result, "domain", None) != "s":
        raise InvalidValueError(
            f"{what} needs a Laplace-domain result; analyse with domain='s' "
            "(c.analyze(output, values=..., domain='s'))"
        )


def _source(result: Any, source: Any) -> Any:
    return result._signal(source) if source is None else result._source_symbol(source)


def _ratio(result: Any, sym: Any) -> str:
    """The unit of ``H`` from ``sym`` to the result's output: V/V, Ω, S or A/A."""
    return ratio_unit(output_unit(result.output), source_unit(result.circuit, sym))


#: The axis label of |H| in dB, by the unit of H.
_DB_LABEL = {"V/V": "dB, re 1 V/V", "Ω": "dBΩ, re 1 V/A", "S": "dBS, re 1 A/V",
             "A/A": "dB, re 1 A/A"}  # fmt: skip


def _has_gain_model(result: Any) -> bool:
    return any(a.gain is not None for a in result.circuit.opamps)


def _hertz_axis(ax: Any) -> None:
    from matplotlib.ticker import FuncFormatter


    ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _pos: format_si(v, "Hz", 3)))
    ax.set_xlabel("frequency (Hz)")


def bode_chart(
    result: Any,
    path: Any = None,
    *,
    source: Any = None,
    f_start: float | None = None,
    f_stop: float | None = None,
    ideal: bool = True,
    ax: Any = None,
) -> Any:
    """Magnitude (dB) and phase (degrees) of one coefficient of a ``domain="s"`` result.

    Parameters
    ----------
    result : Result
        A Laplace-domain result with every value but ``s`` given.
    path : str or Path, optional
        File to write (``.png``, ``.pdf`` or ``.svg``); none: only draw.
    source : str, optional
        The source whose transfer function is drawn (default: the only signal).
    f_start, f_stop : float, optional
        Frequency range in Hz (default: three decades below the −3 dB
        bandwidth to two above, in whole decades; without a bandwidth, from
        the poles, else 1 Hz to 10 MHz).
    ideal : bool
        Overlay the ideal (nullor) response, dashed, when an op-amp has a
        gain model.
    ax : pair of matplotlib Axes, optional
        Draw magnitude and phase into these two Axes instead of a new figure.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import tempfile, pathlib, opsym
    >>> c = opsym.Circuit("RC low-pass, buffered")
    >>> c.voltage_source("Vin", "in", "0")
    >>> c.resistor("R1", "in", "p", value="10k")
    >>> c.capacitor("C1", "p", "0", value="10n")
    >>> c.opamp("U1", plus="p", minus="out", out="out")
    >>> res = c.analyze("out", domain="s")
    >>> with tempfile.TemporaryDirectory() as d:
    ...     fig = bode_chart(res, pathlib.Path(d) / "bode.png")
    ...     (pathlib.Path(d) / "bode.png").stat().st_size > 0
    True
    >>> [a.get_xlabel() for a in fig.axes]
    ['', 'frequency (Hz)']
    """
    _check_path(path)
    return _save(_bode(result, source, f_start, f_stop, ideal, ax), path)


def _bode(
    result: Any, source: Any, f_start: Any, f_stop: Any, ideal: bool, ax: Any = None
) -> Any:
    """The figure of :func:`bode_chart`, not yet saved (its axes and lines can be read)."""

    _need_s(result, "bode_chart")
    sym = _source(result, source)
    lo, hi = _frequency_range(result, sym, f_start, f_stop)
    f = frequency_grid(lo, hi, _PER_DECADE)
    h = result.response(f, sym)
    if ax is None:
        ax_mag, ax_ph = _figure(6.4, 5.2).subplots(2, 1, sharex=True)
    else:
        try:
            ax_mag, ax_ph = ax
        except (TypeError, ValueError):
            raise BudgetError("bode_chart: ax= takes two Axes, for magnitude and phase") from None
    fig = ax_mag.figure
    unit = _DB_LABEL[_ratio(result, sym)]
    with np.errstate(divide="ignore"):
        ax_mag.semilogx(f, 20 * np.log10(np.abs(h)), color="#4c72b0", label="circuit")
    ax_ph.semilogx(f, np.degrees(np.unwrap(np.angle(h))), color="#4c72b0", label="circuit")
    if ideal and _has_gain_model(result):
        h0 = result.response(f, sym, ideal=True)
        style = {"color": "#dd8452", "linestyle": "--", "label": "ideal op-amp (nullor)"}
        with np.errstate(divide="ignore"):
            ax_mag.semilogx(f, 20 * np.log10(np.abs(h0)), **style)
        ax_ph.semilogx(f, np.degrees(np.unwrap(np.angle(h0))), **style)
    try:
        bw = result.bandwidth(sym)
    except (InvalidValueError, BudgetError, NoSolutionError):
        bw = None
    if bw is not None and lo <= bw <= hi:
        label = f"−3 dB at {format_si(bw, 'Hz', 4)}"
        for ax in (ax_mag, ax_ph):
            ax.axvline(bw, color="grey", linewidth=0.8, linestyle=":", label=label)
    ax_mag.set_ylabel(f"magnitude ({unit})")
    ax_ph.set_ylabel("phase (°)")
    _hertz_axis(ax_ph)
    ax_mag.set_title(f"{result.circuit.title}: {output_text(result.output)} / {sym}", fontsize=10)
    for ax in (ax_mag, ax_ph):
        ax.grid(which="both", alpha=0.3)
    ax_mag.legend(fontsize=8, loc="best")
    return fig


def gain_error_chart(
    result: Any,
    path: Any = None,
    *,
    signal: Any = None,
    f_start: float | None = None,
    f_stop: float | None = None,
    ax: Any = None,
) -> Any:
    """``|H/H_ideal − 1|`` against frequency, log-log, in % (or ppm when below 0.1 %).

    ``H_ideal`` is the nullor limit, so the curve is the error the op-amp's
    gain model causes; the dotted line is its DC value. The range defaults
    as in :func:`bode_chart`; ``path`` and ``ax`` (one Axes) as in
    :func:`contribution_chart`; returns the Figure.

    Examples
    --------
    >>> import tempfile, pathlib, opsym
    >>> c = opsym.Circuit("follower")
    >>> c.voltage_source("Vin", "p", "0")
    >>> c.opamp("U1", plus="p", minus="out", out="out", gain="pole")
    >>> res = c.analyze("out", domain="s", values={"U1.A0": "100k", "U1.GBW": "1M"})
    >>> with tempfile.TemporaryDirectory() as d:
    ...     fig = gain_error_chart(res, pathlib.Path(d) / "err.svg")
    ...     (pathlib.Path(d) / "err.svg").read_text()[:5]
    '<?xml'
    """
    _check_path(path)
    return _save(_gain_error(result, signal, f_start, f_stop, ax), path)


def _gain_error(result: Any, signal: Any, f_start: Any, f_stop: Any, ax: Any = None) -> Any:
    """The figure of :func:`gain_error_chart`, not yet saved."""

    _need_s(result, "gain_error_chart")
    if not _has_gain_model(result):
        raise BudgetError(
            "gain_error_chart: every op-amp is ideal, so the gain error is zero; "
            "declare an op-amp with gain='pole' or gain='finite'"
        )
    sym = result._signal(signal)
    lo, hi = _frequency_range(result, sym, f_start, f_stop)
    f = frequency_grid(lo, hi, _PER_DECADE)
    err = np.abs(result.gain_error_response(f, sym))
    dc = float(np.abs(result.gain_error_response(np.array([0.0]), sym))[0])
    if not np.any(err > 0):
        raise BudgetError("gain_error_chart: the gain error is zero over the whole range")
    scale, unit = (1e6, "ppm") if float(np.max(err)) < 1e-3 else (100.0, "%")
    ax = _axes(ax)
    fig = ax.figure
    ax.loglog(f, np.where(err > 0, err * scale, np.nan), color="#c44e52",
              label="|H/H_ideal − 1|")  # fmt: skip
    if dc > 0:
        ax.axhline(dc * scale, color="grey", linewidth=0.8, linestyle=":",
                   label=f"at DC: {dc * scale:.4g} {unit}")  # fmt: skip
    ax.set_ylabel(f"|gain error| ({unit})")
    _hertz_axis(ax)
    ax.set_title(f"{result.circuit.title}: gain error from {sym}", fontsize=10)
    ax.grid(which="both", alpha=0.3)
    ax.legend(fontsize=8, loc="best")
    return fig


def _noise_label(noise_result: Any, name: str) -> str:
    what = noise_result.source(name).what
    kind = what.split(" noise")[0]  # "thermal", "voltage", "current"
    return f"{name} ({kind} noise)"


def noise_density_chart(
    noise_result: Any,
    path: Any = None,
    *,
    f_start: float = 1.0,
    f_stop: float = 1e6,
    top: int | None = None,
    ax: Any = None,
) -> Any:
    """Total output noise density (V/√Hz, A/√Hz for a current) and each source's part, log-log.

    Sources are ranked by their noise power over the range; ``top`` keeps
    the largest ``top`` and adds the rest in power as "others". Sources that
    do not reach the output are left out. ``path`` and ``ax`` as in
    :func:`contribution_chart`; returns the Figure.

    Examples
    --------
    >>> import tempfile, pathlib, opsym
    >>> c = opsym.Circuit("inverting x10")
    >>> c.voltage_source("Vin", "in", "0")
    >>> c.resistor("R1", "in", "n", value="1k")
    >>> c.resistor("R2", "n", "out", value="10k")
    >>> c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    >>> n = c.noise("out", values={"U1.en": "8n", "U1.in": "1p"})
    >>> with tempfile.TemporaryDirectory() as d:
    ...     fig = noise_density_chart(n, pathlib.Path(d) / "noise.png", top=2)
    ...     (pathlib.Path(d) / "noise.png").read_bytes()[1:4]
    b'PNG'
    """
    _check_path(path)
    return _save(_noise_density(noise_result, f_start, f_stop, top, ax), path)


def _noise_density(
    noise_result: Any, f_start: float, f_stop: float, top: int | None, ax: Any = None
) -> Any:
    """The figure of :func:`noise_density_chart`, not yet saved."""

    if top is not None and (isinstance(top, bool) or not isinstance(top, int) or top < 1):
        raise BudgetError(f"noise_density_chart: top={top!r}; give a whole number >= 1 or None")
    f = frequency_grid(f_start, f_stop, _PER_DECADE // 2)
    parts = {n: np.asarray(d, dtype=float) for n, d in noise_result.contributions(f).items()}
    power = {n: float(np.sum((d[1:] ** 2 + d[:-1] ** 2) * np.diff(f))) for n, d in parts.items()}
    ranked = sorted((n for n in parts if power[n] > 0), key=lambda n: -power[n])
    if not ranked:
        raise BudgetError("noise_density_chart: no noise source reaches the output")
    shown, rest = (ranked, []) if top is None else (ranked[:top], ranked[top:])
    ax = _axes(ax)
    fig = ax.figure
    total = np.sqrt(sum(d**2 for d in parts.values()))
    ax.loglog(f, total, color="black", linewidth=2, label="total (root-sum-square)")
    for name in shown:
        ax.loglog(f, parts[name], linewidth=1, label=_noise_label(noise_result, name))
    if rest:
        others = np.sqrt(sum(parts[n] ** 2 for n in rest))
        count = f"{len(rest)} source" + ("s" if len(rest) > 1 else "")
        ax.loglog(f, others, linewidth=1, linestyle="--", color="grey",
                  label=f"others ({count}, in power)")  # fmt: skip
    from matplotlib.ticker import FuncFormatter

    density = noise_result.output_unit + "/√Hz"
    ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _pos: format_si(v, density, 3)))
    ax.set_ylabel("output noise density")
    _hertz_axis(ax)
    celsius = noise_result.temperature - 273.15
    ax.set_title(f"{noise_result.circuit.title}: noise at {output_text(noise_result.output)}, "
                 f"{celsius:g} °C", fontsize=10)  # fmt: skip
    ax.grid(which="both", alpha=0.3)
    ax.legend(fontsize=8, loc="best")
    return fig


def loop_gain_chart(
    loop: Any,
    *,
    values: Any = None,
    f_start: float | None = None,
    f_stop: float | None = None,
    ax: Any = None,
    path: Any = None,
) -> Any:
    """Bode plot of a loop gain ``T`` with its crossover and phase margin marked.

    Parameters
    ----------
    loop : LoopGain
        From :func:`opsym.loop_gain` (Laplace domain), every value but ``s`` given
        here or there.
    values : mapping, optional
        Further values.
    f_start, f_stop : float, optional
        Range in Hz (default: from the poles and zeros of ``T`` to past its crossover,
        whole decades).
    ax : (Axes, Axes), optional
        Magnitude and phase axes to draw on; a new figure otherwise.
    path : str or Path, optional
        Also save the figure there (``.png``, ``.pdf``, ``.svg``).

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit("follower")
    >>> c.voltage_source("Vin", "p", "0")
    >>> c.opamp("U1", plus="p", minus="out", out="out", gain="pole")
    >>> lg = opsym.loop_gain(c, "U1", {"U1.A0": "100k", "U1.GBW": "1meg"})
    >>> fig = loop_gain_chart(lg)
    >>> [a.get_ylabel() for a in fig.axes]
    ['|T| (dB)', 'phase of T (°)']
    """
    lg = loop.subs(values) if values else loop
    margins = lg.margins()
    t = evaluator(lg.gain, f"loop gain of op-amp {lg.opamp}")
    lo, hi = _loop_range(lg.gain, margins, f_start, f_stop)
    f = frequency_grid(lo, hi, _PER_DECADE)
    h = t(f)
    if ax is None:
        fig = _figure(6.4, 5.2)
        ax_mag, ax_ph = fig.subplots(2, 1, sharex=True)
    else:
        ax_mag, ax_ph = ax
        fig = ax_mag.figure
    with np.errstate(divide="ignore"):
        ax_mag.semilogx(f, 20 * np.log10(np.abs(h)), color="#4c72b0", label="T")
    ax_ph.semilogx(f, np.degrees(np.unwrap(np.angle(h))), color="#4c72b0", label="∠T")
    ax_mag.axhline(0, color="grey", linewidth=0.8)
    ax_ph.axhline(-180, color="grey", linewidth=0.8)
    if margins.crossover_hz is not None and margins.phase_margin_deg is not None:
        label = (
            f"crossover {format_si(margins.crossover_hz, 'Hz', 4)}, "
            f"phase margin {margins.phase_margin_deg:.1f}°"
        )
        for a in (ax_mag, ax_ph):
            a.axvline(margins.crossover_hz, color="#c44e52", linewidth=0.8, ls=":", label=label)
    ax_mag.set_ylabel("|T| (dB)")
    ax_ph.set_ylabel("phase of T (°)")
    _hertz_axis(ax_ph)
    ax_mag.set_title(f"{lg.circuit.title}: loop gain of {lg.opamp}", fontsize=10)
    for a in (ax_mag, ax_ph):
        a.grid(which="both", alpha=0.3)
    ax_mag.legend(fontsize=8)
    if path is not None:
        _save(fig, path)
    return fig


def _loop_range(gain: Any, margins: Any, f_start: Any, f_stop: Any) -> tuple[float, float]:
    marks = [x for x in natural_frequencies(gain) if x > 0]
    marks += [x for x in (margins.crossover_hz, margins.phase_crossover_hz) if x]
    lo = 10 ** math.floor(math.log10(min(marks) / 10)) if marks else 1.0
    hi = 10 ** math.ceil(math.log10(max(marks) * 10)) if marks else 1e7
    return float(f_start or lo), float(f_stop or hi)
