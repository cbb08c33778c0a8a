r"""A complete design-note section, in LaTeX or Markdown.

The note has: the design's notes, the circuit (element list: every value the
note was computed with, each op-amp's parameter set and the values taken from
it), the nominal operating point (node voltages, each op-amp against its
rails, with a warning for any voltage outside them), the conventions, the symbolic terms
(every source's coefficient), the conditions (nulls and the standard values
chosen for them), the numeric budget and any tolerance or temperature studies,
optionally a frequency-response and a noise section
(:mod:`opsym.output.sections`), figures, and the usual caution, always last.
``standalone=True`` wraps the LaTeX in a document that pdflatex compiles with
``inputenc`` (UTF-8), ``fontenc`` (T1), ``lmodern``, ``textcomp``, ``amsmath``,
``booktabs`` and ``graphicx``; the trade's symbols (Ω µ ‖ ± °) are written as
LaTeX commands and other text passes through as UTF-8.

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
from ..model.nonideal import KINDS
from ..model.symbols import latex_name
from .circuit_text import element_lines
from .sections import FrequencySection, NoiseSection
from .tables import latex_text

__all__ = ["CAUTION", "conventions", "design_note"]

#: The caution every note carries.
CAUTION = (
    "This note is a design aid, not a verification. Confirm every figure by measurement "
    "on the built circuit. Where the instrument serves medical or safety functions, follow "
    "the applicable standards and local codes, and have the design reviewed by a qualified, "
    "licensed engineer."
)

def conventions(circuit: Any = None) -> tuple[str, ...]:
    """The sign conventions of the error sources a circuit's op-amps carry.

    Each kind states its own (``NonIdeal.convention``); without a circuit,
    those of every registered kind that enters the DC terms.

    Examples
    --------
    >>> conventions()[0]
    'Vos is a source in series with the + pin.'
    """
    if circuit is None:
        kinds = [k for k in KINDS.values() if not k.noise]
    else:
        carried = {type(n) for amp in circuit.opamps for n in amp.nonideals}
        kinds = [k for k in KINDS.values() if k in carried]
    return tuple(k.convention for k in kinds if k.convention)


#: What the operating point section says it is.
_OPERATING = (
    "Signals at their given values, every op-amp error source at zero, components at "
    "their nominal values; DC, solved exactly. Each op-amp's output and input common-mode "
    "voltage is checked against its rails less the headroom of its parameter set."
)

#: Characters outside ASCII that pdflatex reads with inputenc (UTF-8) and T1 fonts.
_LATIN = frozenset(chr(c) for c in range(0xA0, 0x180)) | frozenset("‘’‚“”„•€")


def _unusual_characters(text: str) -> list[str]:
    """Declarations that keep pdflatex going on characters it has no glyph for.

    Each such character is shown as its code point, ``[U+XXXX]``.
    """
    odd = sorted({ch for ch in text if ord(ch) > 127 and ch not in _LATIN})
    return [rf"\DeclareUnicodeCharacter{{{ord(ch):04X}}}{{\texttt{{[U+{ord(ch):04X}]}}}}"
            for ch in odd]  # fmt: skip


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
    notes: str = "",
    parameters: Mapping[str, Any] | None = None,
    resistors: Mapping[str, Any] | None = None,
    grade: str = "max",
    operating: Any = None,
    stability: Any = None,
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
    notes : str
        Free text (a design file's ``notes``), printed under the title.
    parameters : mapping of str to OpAmpParams, optional
        Each op-amp's parameter set: its name and the values taken from it
        (at ``grade``) join the element list.
    resistors : mapping of str to ResistorParams, optional
        Each resistor's tolerance and TCR, for the element list.
    grade : {"max", "typical"}
        The grade the budget took from the parameter sets.
    operating : OperatingPoint, optional
        The nominal operating point (:func:`opsym.analyses.operating.operating_point`).
    stability : StabilitySection, optional
        Each op-amp loop's margins and warnings (:mod:`opsym.output.stability`).

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
    extra = [s for s in (frequency, stability, noise) if s is not None]
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
    elements = (element_lines(circuit, values, parameters, resistors, grade)
                if circuit is not None else [])  # fmt: skip
    op_lines = operating.lines() if operating is not None else []
    tables_md = [t.to_markdown() for t in [*studies] if t is not None]
    if fmt == "markdown":
        out = [f"## {title}", ""]
        if notes:
            out += [notes, ""]
        out += ["### Circuit", ""]
        out += [f"- {line}" for line in elements] or ["- (no circuit attached)"]
        if op_lines:
            out += ["", "### Nominal operating point", "", _OPERATING, ""]
            out += [f"- {'**' + line + '**' if line.startswith('WARNING') else line}"
                    for line in op_lines]  # fmt: skip
        out += ["", "### Conventions", "", *[f"- {c}" for c in conventions(circuit)]]
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

    body = [r"\section*{" + latex_text(title) + "}"]
    if notes:
        body += [latex_text(notes), ""]
    body += [r"\subsection*{Circuit}"]
    if elements:
        body += [r"\begin{itemize}"]
        body += [r"\item " + latex_text(line) for line in elements]
        body += [r"\end{itemize}"]
    if op_lines:
        body += [r"\subsection*{Nominal operating point}", latex_text(_OPERATING)]
        body += [r"\begin{itemize}"]
        body += [r"\item " + (r"\textbf{" + latex_text(line) + "}" if line.startswith("WARNING")
                              else latex_text(line)) for line in op_lines]  # fmt: skip
        body += [r"\end{itemize}"]
    body += [r"\subsection*{Conventions}", r"\begin{itemize}"]
    body += [r"\item " + latex_text(c) for c in conventions(circuit)]
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
            r"\usepackage[utf8]{inputenc}",
            r"\usepackage[T1]{fontenc}",
            r"\usepackage{lmodern}",
            r"\usepackage{textcomp}",
            r"\usepackage{amsmath}",
            r"\usepackage{booktabs}",
            r"\usepackage{graphicx}",
            r"\usepackage[margin=2cm]{geometry}",
            *_unusual_characters(text),
            r"\begin{document}",
        ])  # fmt: skip
        text = preamble + "\n" + text + r"\end{document}" + "\n"
    return text
