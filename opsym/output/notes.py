r"""A complete design-note section, in LaTeX or Markdown.

The note has: the circuit (element list), the conventions, the symbolic terms
(every source's coefficient), the conditions (nulls and the standard values
chosen for them), the numeric budget and any tolerance or temperature studies,
optionally a frequency-response and a noise section
(:mod:`opsym.output.sections`), figures, and the usual caution, always last.
``standalone=True`` wraps the LaTeX in a document that pdflatex compiles with
``amsmath``, ``booktabs`` and ``graphicx``.

Examples
--------
>>> import opsym
>>> c = opsym.Circuit("follower")
>>> c.voltage_source("Vin", "p", "0")
>>> c.opamp("U1", plus="p", minus="out", out="out")
>>> text = design_note(c.analyze("out"), fmt="markdown")
>>> text.splitlines()[0]
'## Design note: follower'
>>> "measurement" in text
True
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any

import sympy as sp

from ..analyses.present import trade_form
from ..errors import BudgetError
from ..model.symbols import latex_name
from ..numeric.units import format_si, parse_quantity
from .sections import FrequencySection, NoiseSection
from .tables import latex_text

__all__ = ["CAUTION", "CONVENTIONS", "design_note"]

#: The caution every note carries.
CAUTION = (
    "This note is a design aid, not a verification. Confirm every figure by measurement "
    "on the built circuit. Where the instrument serves medical or safety functions, follow "
    "the applicable standards and local codes, and have the design reviewed by a qualified, "
    "licensed engineer."
)

#: The sign conventions the terms follow.
CONVENTIONS = (
    "Vos is a source in series with the + pin.",
    "Ib+ and Ib- flow into the pins; Ib = (Ib+ + Ib-)/2 and Ios = Ib+ - Ib-.",
    "The CMRR error is Vcm/CMRR in series with the + pin (Vcm at the pins, CMRR as V/V).",
    "The PSRR error is dVs/PSRR, dVs the change of the total supply span.",
)

_UNITS = {
    "resistor": "Ω",
    "capacitor": "F",
    "inductor": "H",
    "voltage source": "V",
    "current source": "A",
}
#: Units of the op-amp parameters shown beside the op-amp in the element list.
_OPAMP_UNITS = {
    "A0": "", "GBW": "Hz", "A": "", "en": "V/√Hz", "in": "A/√Hz", "fce": "Hz", "fci": "Hz",
    "Vos": "V", "Ib+": "A", "Ib-": "A", "Ib": "A", "Ios": "A",
}  # fmt: skip


def _opamp_text(amp: Any, given: Mapping[str, Any]) -> str:
    """The gain model, the error-source kinds and the op-amp's given parameters."""
    from ..model.nonideal import SinglePole

    if amp.gain is None:
        gain = "ideal (nullor)"
    elif sp.simplify(amp.gain - SinglePole().gain(amp.name)) == 0:
        gain = "single-pole open-loop gain A0/(1 + s·A0/(2π·GBW))"
    else:
        gain = f"open-loop gain {amp.gain}"
    kinds = ", ".join(n.kind for n in amp.nonideals) or "none"
    shown = []
    for what, unit in _OPAMP_UNITS.items():
        key = f"{amp.name}.{what}"
        if key in given:
            number = parse_quantity(given[key], where=key)
            shown.append(f"{what} = " + (format_si(number, unit) if unit else f"{number:g}"))
    return f"; {gain}; error sources: {kinds}" + ("; " + ", ".join(shown) if shown else "")


def _element_lines(circuit: Any, values: Mapping[Any, Any]) -> list[str]:
    given = {(k.name if isinstance(k, sp.Symbol) else str(k)): v for k, v in values.items()}
    lines = []
    for e in circuit.elements:
        text = e.describe()
        value = getattr(e, "value", None)
        unit = _UNITS.get(e.kind, "")
        if e.name in given:
            text += " = " + format_si(parse_quantity(given[e.name], where=e.name), unit)
        elif value is not None:
            if isinstance(value, sp.Expr) and value.is_number:
                text += " = " + format_si(float(value), unit)
            elif not (isinstance(value, sp.Symbol) and value.name == e.name):
                text += f" = {value}"
        if e.kind == "op-amp":
            text += _opamp_text(e, given)
        lines.append(text)
    return lines


def _names(result: Any, extra: Iterable[sp.Expr] = ()) -> dict[sp.Symbol, str]:
    names = dict(result.symbol_latex()) if hasattr(result, "symbol_latex") else {}
    for e in extra:
        for s in e.free_symbols:
            names.setdefault(s, latex_name(s))
    return names


def _condition_latex(eq: Any, names: dict) -> str:
    if isinstance(eq, sp.Eq):  # show R3 = R1 ∥ R2 as the trade writes it
        eq = sp.Eq(eq.lhs, trade_form(eq.rhs), evaluate=False)
    return sp.latex(eq, symbol_names={**names, **{s: latex_name(s) for s in eq.free_symbols
                                                  if s not in names}})  # fmt: skip


def design_note(
    result: Any,
    budget: Any = None,
    *,
    values: Mapping[Any, Any] | None = None,
    title: str | None = None,
    conditions: Iterable[Any] = (),
    choices: Iterable[Any] = (),
    studies: Iterable[Any] = (),
    sweep: Any = None,
    figures: Iterable[Any] = (),
    frequency: FrequencySection | None = None,
    noise: NoiseSection | None = None,
    fmt: str = "latex",
    standalone: bool = False,
) -> str:
    """Write a design-note section for one result.

    Parameters
    ----------
    result : opsym Result
        The symbolic result (its circuit gives the element list).
    budget : Budget, optional
        The numeric budget to tabulate.
    values : mapping, optional
        The values used (names → numbers or text), shown in the element list.
    title : str, optional
        Section title (default: the circuit title).
    conditions : iterable of sympy.Eq
        Null conditions (``Result.null(...)``) to state.
    choices : iterable of NullChoice
        Standard values chosen for them (``choose_for_null``).
    studies : iterable of ToleranceStudy
        Tolerance studies to tabulate.
    sweep : TemperatureSweep, optional
        A temperature sweep to tabulate.
    figures : iterable of (path, caption) or path
        Figure files to include.
    frequency : FrequencySection, optional
        Transfer function, bandwidth, response table and figures of a
        ``domain="s"`` result.
    noise : NoiseSection, optional
        Noise transfer functions, budget, peak-to-peak estimate and figures.
    fmt : {"latex", "markdown"}
    standalone : bool
        LaTeX only: wrap in a complete document.

    Returns
    -------
    str
    """
    if fmt not in ("latex", "markdown"):
        raise BudgetError(f"design_note: fmt {fmt!r} is not known; use 'latex' or 'markdown'")
    if frequency is not None and not isinstance(frequency, FrequencySection):
        raise BudgetError(
            "design_note: frequency= takes a FrequencySection; "
            "wrap the result: FrequencySection(result, figures=[...])"
        )
    if noise is not None and not isinstance(noise, NoiseSection):
        raise BudgetError(
            "design_note: noise= takes a NoiseSection; "
            "wrap the noise result and band: NoiseSection(noise, f_low, f_high)"
        )
    extra = [s for s in (frequency, noise) if s is not None]
    circuit = getattr(result, "circuit", None)
    title = title or f"Design note: {getattr(circuit, 'title', '') or 'circuit'}"
    shown = result
    if any(s.name.endswith(".Ib+") for s in result.terms):
        shown = result.with_average_bias()
    conditions = list(conditions)
    names = _names(shown, conditions)
    terms_latex = shown.latex(names) if hasattr(shown, "latex") else sp.latex(shown.expression)
    figs = [(Path(f), "") if not isinstance(f, tuple) else (Path(f[0]), str(f[1]))
            for f in figures]  # fmt: skip
    elements = _element_lines(circuit, values or {}) if circuit is not None else []
    tables_md = [t.to_markdown() for t in [*studies] if t is not None]
    if fmt == "markdown":
        out = [f"## {title}", "", "### Circuit", ""]
        out += [f"- {line}" for line in elements] or ["- (no circuit attached)"]
        out += ["", "### Conventions", "", *[f"- {c}" for c in CONVENTIONS]]
        out += ["", "### Symbolic terms", "", "$$", terms_latex, "$$"]
        if conditions or list(choices):
            out += ["", "### Conditions", ""]
            out += [f"- ${_condition_latex(eq, names)}$" for eq in conditions]
            out += [f"- {ch.describe()}" for ch in choices]
        if budget is not None or tables_md or sweep is not None:
            out += ["", "### Numeric budget", ""]
            if budget is not None:
                out += [budget.to_markdown(), ""]
            for t in tables_md:
                out += [t, ""]
            if sweep is not None:
                out += [sweep.to_markdown(), ""]
        for path, caption in figs:  # the budget's figures, next to its tables
            out += ["", f"![{caption or path.stem}]({path.as_posix()})"]
        for section in extra:
            out += ["", section.markdown()]
        out += ["", "### Caution", "", CAUTION, ""]
        return "\n".join(out)

    body = [r"\section*{" + latex_text(title) + "}", r"\subsection*{Circuit}"]
    if elements:
        body += [r"\begin{itemize}"]
        body += [r"\item " + latex_text(line) for line in elements]
        body += [r"\end{itemize}"]
    body += [r"\subsection*{Conventions}", r"\begin{itemize}"]
    body += [r"\item " + latex_text(c) for c in CONVENTIONS]
    body += [r"\end{itemize}", r"\subsection*{Symbolic terms}", r"\["]
    body += [terms_latex, r"\]"]
    choices = list(choices)
    if conditions or choices:
        body += [r"\subsection*{Conditions}", r"\begin{itemize}"]
        body += [r"\item $" + _condition_latex(eq, names) + "$" for eq in conditions]
        body += [r"\item " + latex_text(ch.describe()) for ch in choices]
        body += [r"\end{itemize}"]
    studies = [s for s in studies if s is not None]
    if budget is not None or studies or sweep is not None:
        body += [r"\subsection*{Numeric budget}"]
        # Tables and figures stay in place (no floats), so the note reads in order and
        # the caution comes last.
        tables = [budget.table()] if budget is not None else []
        tables += [s.table() for s in studies]
        if sweep is not None:
            tables.append(sweep.table())
        for t in tables:
            body += [r"\begin{center}"]
            if t.caption:
                body += [r"\textbf{" + latex_text(t.caption) + r"}\par\smallskip"]
            body += [t.to_latex(float_env=False), r"\end{center}"]
    for path, caption in figs:  # the budget's figures, next to its tables
        body += [
            r"\begin{center}",
            r"\includegraphics[width=0.8\linewidth]{" + path.as_posix() + "}",
        ]
        if caption:
            body.append(r"\par\smallskip " + latex_text(caption))
        body.append(r"\end{center}")
    body += [section.latex() for section in extra]
    body += [r"\subsection*{Caution}", latex_text(CAUTION)]
    text = "\n".join(body) + "\n"
    if standalone:
        preamble = "\n".join([
            r"\documentclass{article}",
            r"\usepackage{textcomp}",
            r"\usepackage{amsmath}",
            r"\usepackage{booktabs}",
            r"\usepackage{graphicx}",
            r"\usepackage[margin=2cm]{geometry}",
            r"\begin{document}",
        ])  # fmt: skip
        text = preamble + "\n" + text + r"\end{document}" + "\n"
    return text
