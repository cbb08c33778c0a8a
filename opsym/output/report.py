"""What ``opsym report`` draws and writes for a design-file study: figure plans and notes.

:func:`figure_plans` says which figures a study can draw (a Bode plot and the
gain error of a ``[response]``, the noise density of a ``[noise]`` table, the
budget's contributions, the temperature sweep, each Monte Carlo histogram),
where each goes and in which section of the note. :func:`study_note` writes
the design note of a study with those figures in place, their paths relative
to the note. Drawing and writing files is the caller's (the command line's).

Examples
--------
>>> from types import SimpleNamespace as S
>>> noise_plot_band(S(noise=S(f_start=0.0, f_stop=float("inf")), response=None))
(1.0, 10000000.0)
"""

from __future__ import annotations

import math
import os
from collections.abc import Callable
from functools import partial
from pathlib import Path
from typing import TYPE_CHECKING, Any, NamedTuple

from ..analyses.branch import output_text
from ..errors import BudgetError
from .figures import (
    bode_chart,
    contribution_chart,
    gain_error_chart,
    monte_carlo_histogram,
    noise_density_chart,
    temperature_chart,
)
from .notes import design_note
from .sections import FrequencySection, NoiseSection
from .stability import StabilitySection

if TYPE_CHECKING:  # the study layer sits above output: for annotations only
    from ..study.design import Study

__all__ = [
    "BUDGET", "FREQUENCY", "NOISE", "FigurePlan", "figure_plans", "noise_plot_band",
    "study_grade", "study_note",
]  # fmt: skip

#: Where a figure goes in the notes: the numeric budget's figures, or a section's.
BUDGET, FREQUENCY, NOISE = "budget", "frequency", "noise"


class FigurePlan(NamedTuple):
    """One figure to draw: its file, its caption, the note section it belongs to, how."""

    path: Path
    caption: str
    section: str
    draw: Callable[[Path], Any]


def figure_plans(study: Study, directory: Path, fmt: str = "png") -> list[FigurePlan]:
    """The figures this study can draw into ``directory`` (none: an empty list).

    ``fmt`` is the file format: ``png`` (default), or ``pdf`` / ``svg`` for
    vector figures (a LaTeX note includes a PDF figure as sharply as its text).
    """
    if fmt not in ("png", "pdf", "svg"):
        raise BudgetError(f"figure format {fmt!r}: use png, pdf or svg")
    plans = [*_response_plans(study, directory, fmt), *_noise_plans(study, directory, fmt)]
    if study.budget is not None:
        draw = partial(contribution_chart, study.budget)
        plans.append(FigurePlan(directory / f"contributions.{fmt}", "Error contributions", BUDGET,
                                draw))  # fmt: skip
    if study.sweep is not None:
        draw = partial(temperature_chart, study.sweep)
        plans.append(FigurePlan(directory / f"temperature.{fmt}", "Error over temperature", BUDGET,
                                draw))  # fmt: skip
    for i, s in enumerate(study.studies, start=1):
        if s.mc is not None:
            draw = partial(monte_carlo_histogram, s)
            plans.append(FigurePlan(directory / f"monte-carlo-{i}.{fmt}",
                                    f"Monte Carlo: {s.quantity}", BUDGET, draw))  # fmt: skip
    return plans


def _response_plans(study: Study, directory: Path, fmt: str) -> list[FigurePlan]:
    """The Bode plot and the gain error of a ``[response]`` analysis."""
    r = study.response
    if r is None:
        return []
    what = f"{output_text(r.output)} from {r.signal}"
    band = {"f_start": r.f_start, "f_stop": r.f_stop}

    def bode(p: Path) -> Any:
        return bode_chart(r.result, p, source=r.signal, ideal=True, **band)

    def gain_error(p: Path) -> Any:
        return gain_error_chart(r.result, p, signal=r.signal, **band)

    return [
        FigurePlan(directory / f"bode.{fmt}", f"Bode plot: {what}", FREQUENCY, bode),
        FigurePlan(directory / f"gain-error.{fmt}", f"Gain error: {what}", FREQUENCY, gain_error),
    ]


def _noise_plans(study: Study, directory: Path, fmt: str) -> list[FigurePlan]:
    """The output noise density of a ``[noise]`` analysis."""
    n = study.noise
    if n is None:
        return []
    low, high = noise_plot_band(study)

    def density(p: Path) -> Any:
        return noise_density_chart(n.result, p, f_start=low, f_stop=high)

    caption = f"Output noise density at {n.budget.output}"
    return [FigurePlan(directory / f"noise-density.{fmt}", caption, NOISE, density)]


def noise_plot_band(study: Any) -> tuple[float, float]:
    """A finite plotting range for the noise band (which may start at 0 or run to ∞)."""
    n = study.noise
    high = n.f_stop
    if math.isinf(high):
        high = study.response.f_stop if study.response is not None else 1e7
    low = n.f_start if n.f_start > 0 else min(1.0, high * 1e-6)
    if high <= low:
        high = low * 1e6
    return low, high


def study_note(
    study: Study, fmt: str, plans: list[FigurePlan], path: Path, standalone: bool
) -> str:
    """A design note with its frequency-response and noise sections, figures in place.

    Figure paths are written relative to ``path``, where the note will be.
    """
    here = path.parent.resolve()

    def figures(section: str) -> list[tuple[Path, str]]:
        return [(Path(os.path.relpath(p.path.resolve(), here)), p.caption)
                for p in plans if p.section == section]  # fmt: skip

    r, n = study.response, study.noise
    frequency = noise = None
    if r is not None:
        frequency = FrequencySection(r.result, source=r.signal, points=_response_points(r),
                                     figures=figures(FREQUENCY))  # fmt: skip
    if n is not None:
        noise = NoiseSection(n.result, n.f_start, n.f_stop, figures=figures(NOISE),
                             signal=n.signal)  # fmt: skip
    d = study.design
    return design_note(
        study.result, study.budget, title=None, conditions=study.conditions,
        choices=study.choices, studies=study.studies, sweep=study.sweep,
        figures=figures(BUDGET), frequency=frequency, noise=noise, fmt=fmt,
        standalone=standalone, values=d.values, notes=d.notes, parameters=d.opamps,
        resistors=d.resistors, grade=study_grade(study), operating=study.operating,
        stability=StabilitySection(study.stability) if study.stability else None,
        requirement=d.requirement if study.budget is not None else None,
        revision=d.revision, date=d.date, source=d.source, nominal=study.values,
    )  # fmt: skip


def study_grade(study: Study) -> str:
    """The grade the budget took from the parameter sets (its default: the limits)."""
    return study.design.budget.grade if study.design.budget is not None else "max"


def _response_points(r: Any) -> list[float]:
    """The note's response table: DC, the ``[response]`` grid and the ``at`` frequencies."""
    out: list[float] = []
    for f in sorted({0.0, *(p.frequency for p in r.grid), *(p.frequency for p in r.points)}):
        if not out or f > out[-1] * (1 + 1e-9):  # a grid point and an `at` point coincide
            out.append(f)
    return out
