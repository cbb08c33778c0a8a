"""Stability in words and tables: each op-amp loop's margins, and a warning when low.

:func:`stability_warnings` gives one line per flagged loop (phase margin under
the threshold, or a closed-loop pole in the right half plane);
:func:`stability_table` the margins of every loop; :class:`StabilitySection` a
design-note section with both (:func:`opsym.output.notes.design_note`).

Examples
--------
>>> from opsym.numeric.stability import Margins
>>> from opsym.study.stability import LoopReport
>>> m = Margins(1e5, 1e6, 38.0, None, None, 3.2, 1.1e6, (), 1.5, 1.2e6, True)
>>> print(stability_warnings([LoopReport("U1", m, 45.0)])[0])  # doctest: +NORMALIZE_WHITESPACE
op-amp U1: phase margin 38.0° at the 1 MHz crossover is under 45° (45° is common practice,
not a standard); the closed loop peaks 3.2 dB (Q = 1.5 at 1.2 MHz)
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

from ..numeric.units import format_plain, format_si
from .document import (
    Bullets,
    Paragraph,
    Section,
    TableBlock,
    Text,
    latex_section,
    markdown_section,
)
from .tables import Table

__all__ = ["StabilitySection", "stability_table", "stability_warnings"]

_INTRO = (
    "Loop gain T of each op-amp's loop: the return ratio at its controlled source, "
    "loading kept, every independent source zero; T > 0 at low frequency for negative "
    "feedback. Phase margin 180° + arg T at the crossover |T| = 1; gain margin −20·log10|T| "
    "where arg T = −180°; peaking of T/(1 + T); Q and f0 of the dominant closed-loop pole pair."
)


def _hz(f: float | None) -> str:
    return "—" if f is None else format_si(f, "Hz", 3)


def stability_warnings(reports: Iterable[Any]) -> list[str]:
    """One line per flagged loop (:class:`~opsym.study.stability.LoopReport`)."""
    out: list[str] = []
    for r in reports:
        if not r.flagged:
            continue
        m = r.margins
        if m.stable is False:
            worst = max(m.poles_hz, key=lambda p: p.real)
            out.append(
                f"op-amp {r.opamp}: the closed loop is unstable: a pole at "
                f"{format_si(worst.real, 'Hz', 3)} (real part) lies in the right half plane"
            )
            continue
        text = (
            f"op-amp {r.opamp}: phase margin {m.phase_margin_deg:.1f}° at the "
            f"{_hz(m.crossover_hz)} crossover is under {r.threshold_deg:g}°"
        )
        if r.threshold_deg == 45.0:
            text += " (45° is common practice, not a standard)"
        if m.peaking_db > 0:
            text += f"; the closed loop peaks {m.peaking_db:.1f} dB"
            if m.q is not None:
                text += f" (Q = {m.q:.2g} at {_hz(m.f0_hz)})"
        out.append(text)
    return out


def stability_table(reports: Iterable[Any]) -> Table:
    """The margins of every loop."""
    rows = []
    for r in reports:
        m = r.margins
        rows.append((
            r.opamp,
            "∞" if m.dc_gain == float("inf") else format_plain(m.dc_gain, digits=4),
            _hz(m.crossover_hz),
            "—" if m.phase_margin_deg is None else f"{m.phase_margin_deg:.1f}°",
            "—" if m.gain_margin_db is None else f"{m.gain_margin_db:.1f} dB",
            f"{m.peaking_db:.2f} dB",
            "—" if m.q is None else format_plain(m.q, digits=3),
            _hz(m.f0_hz),
            {True: "yes", False: "NO", None: "—"}[m.stable],
        ))  # fmt: skip
    return Table(
        ("op-amp", "T(0)", "crossover", "phase margin", "gain margin", "peaking", "Q",
         "f0", "stable"),
        tuple(rows),
        caption="Loop gain and stability",
    )  # fmt: skip


@dataclass(frozen=True)
class StabilitySection:
    """The design-note section: the margins table and any warning."""

    reports: tuple[Any, ...]

    def section(self) -> Section:
        """The section's content: what T is, the margins table, any warning."""
        warnings = tuple(Text(f"WARNING: {w}", strong=True)
                         for w in stability_warnings(self.reports))  # fmt: skip
        table = TableBlock(stability_table(self.reports), unbreakable=True)
        return Section("Stability", (Paragraph(_INTRO), table,
                                     *((Bullets(warnings),) if warnings else ())))  # fmt: skip

    def latex(self) -> str:
        """The section as LaTeX."""
        return latex_section(self.section())

    def markdown(self) -> str:
        """The section as Markdown."""
        return markdown_section(self.section())
