"""Figures for design notes: contributions, error over temperature, Monte Carlo histogram.

matplotlib is imported inside each function and drawn on its own Agg canvas
(no pyplot, no global backend change), so importing opsym never needs it and
figures work on machines without a display. The file format follows the
suffix of ``path`` (``.png``, ``.pdf``, ``.svg``).

Examples
--------
>>> import tempfile, pathlib
>>> from opsym.numeric.tolerance import tolerance_analysis
>>> import sympy as sp
>>> R1, R2 = sp.symbols("R1 R2", positive=True)
>>> study = tolerance_analysis(1 + R2 / R1, {"R1": 1e3, "R2": 9e3}, {"R1": 0.01, "R2": 0.01},
...                            samples=500, seed=3)
>>> with tempfile.TemporaryDirectory() as d:
...     p = monte_carlo_histogram(study, pathlib.Path(d) / "mc.png")
...     p.stat().st_size > 0
True
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from ..errors import BudgetError, MissingDependencyError

__all__ = ["contribution_chart", "monte_carlo_histogram", "temperature_chart"]


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


def _save(fig: Any, path: Any) -> Path:
    p = Path(path)
    if p.suffix.lower() not in (".png", ".pdf", ".svg"):
        raise BudgetError(f"figure path {str(p)!r}: use a .png, .pdf or .svg file name")
    p.parent.mkdir(parents=True, exist_ok=True)
    fig.savefig(p, dpi=150)
    return p


def _volts_axis(ax: Any, axis: str = "x") -> None:
    from matplotlib.ticker import FuncFormatter

    from ..numeric.units import format_si

    fmt = FuncFormatter(lambda v, _pos: format_si(v, "V", 3))
    (ax.xaxis if axis == "x" else ax.yaxis).set_major_formatter(fmt)


def contribution_chart(budget: Any, path: Any, *, top: int | None = None) -> Path:
    """Horizontal bars of each row's ``|output|``, largest at the top, with the totals.

    Parameters
    ----------
    budget : Budget
    path : str or Path
        File to write.
    top : int, optional
        Show only the largest ``top`` rows.
    """
    rows = [r for r in budget.rows if r.magnitude > 0][: top or None]
    if not rows:
        raise BudgetError("contribution_chart: every contribution is zero; nothing to draw")
    fig = _figure(6.4, 0.9 + 0.38 * len(rows))
    ax = fig.add_subplot()
    labels = [r.label for r in rows][::-1]
    mags = [r.magnitude for r in rows][::-1]
    ax.barh(labels, mags, color="#4c72b0")
    for y, (m, r) in enumerate(zip(mags, rows[::-1], strict=True)):
        ax.text(m, y, f" {100 * r.share:.1f} %", va="center", fontsize=8)
    ax.axvline(budget.rss, color="#dd8452", linestyle="--", label="RSS")
    ax.axvline(budget.worst_case, color="#c44e52", linestyle=":", label="worst case")
    _volts_axis(ax, "x")
    ax.set_xlabel("|error at output|")
    ax.set_title(budget.title, fontsize=10)
    ax.legend(fontsize=8, loc="lower right")
    return _save(fig, path)


def temperature_chart(sweep: Any, path: Any, *, top: int = 3) -> Path:
    """Worst case, RSS and the largest contributors against temperature."""
    fig = _figure()
    ax = fig.add_subplot()
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
    _volts_axis(ax, "y")
    ax.set_xlabel("temperature (°C)")
    ax.set_ylabel("|error at output|")
    ax.legend(fontsize=8)
    ax.grid(alpha=0.3)
    return _save(fig, path)


def monte_carlo_histogram(study: Any, path: Any, *, bins: int = 60) -> Path:
    """Histogram of a tolerance study's Monte Carlo samples, with corners and bound marked."""
    if study.mc is None:
        raise BudgetError("monte_carlo_histogram: the study has no Monte Carlo run (samples=None)")
    fig = _figure()
    ax = fig.add_subplot()
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
    ax.legend(fontsize=8)
    return _save(fig, path)
