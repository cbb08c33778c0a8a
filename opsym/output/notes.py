r"""A complete design-note section, in LaTeX or Markdown.

The note has: the design's notes, the circuit (element list: every value the
note was computed with, each op-amp's parameter set and the values taken from
it), the nominal operating point (node voltages, each op-amp against its
rails, with a warning for any voltage outside them), the conventions, the symbolic terms
(every source's coefficient), the conditions (nulls and the standard values
chosen for them), the numeric budget and any tolerance or temperature studies,
optionally a frequency-response and a noise section
(:mod:`opsym.output.sections`), figures, and the usual caution, always last.
The content is gathered once into a :class:`~opsym.output.document.Document`
and written by its Markdown or LaTeX renderer, so both formats say the same.
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

import datetime
import os
from collections.abc import Iterable, Mapping
from typing import Any

import sympy as sp

from .._version import __version__
from ..analyses.present import trade_form
from ..errors import ArgumentTypeError, BudgetError
from ..model.limits import shown as _shown
from ..model.nonideal import KINDS
from ..model.symbols import latex_name
from .circuit_text import element_lines
from .display import broken_latex, first_order_latex, ideal_coefficients, too_wide
from .document import (
    Block,
    Bullets,
    Document,
    Figure,
    Math,
    Paragraph,
    Section,
    TableBlock,
    Text,
    figure_list,
    latex,
    markdown,
)
from .dominant import dominant_blocks
from .sections import FrequencySection, NoiseSection

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
    requirement: Any = None,
    revision: str = "",
    date: str = "",
    source: str = "",
    nominal: Mapping[Any, Any] | None = None,
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
    requirement : Requirement, optional
        The budget's total is compared with it: a PASS/FAIL line with the
        margin follows the budget table (needs ``budget``).
    revision, date : str
        The design's revision and date, stated in the note's record (``date``
        defaults to today).
    source : str
        The design file the note was written from.
    nominal : mapping, optional
        Every symbol's nominal value (names → numbers): a coefficient too long to
        print is then shown by its dominant terms at these values, with the bound
        on what they leave out (:mod:`opsym.output.dominant`).

    Returns
    -------
    str
    """
    _check_arguments(result, fmt, frequency, noise)
    circuit = getattr(result, "circuit", None)
    elements = (element_lines(circuit, values, parameters, resistors, grade)
                if circuit is not None else [])  # fmt: skip
    record = _record(revision, date, source, parameters, grade)
    sections = [
        Section("Record", (Bullets(tuple(map(Text, record))),)),
        Section("Circuit", (Bullets(tuple(map(Text, elements or ["(no circuit attached)"]))),)),
        *_operating_section(operating),
        *_conventions_section(circuit),
        *_terms_sections(result, list(conditions), list(choices), nominal),
        *_budget_sections(budget, [*studies], sweep, figure_list(figures)),
        *_requirement_section(budget, requirement),
        *(s.section() for s in (frequency, stability, noise) if s is not None),
        Section("Caution", (Paragraph(CAUTION),)),
    ]
    title = title or f"Design note: {getattr(circuit, 'title', '') or 'circuit'}"
    doc = Document(title, (notes,) if notes else (), tuple(sections))
    if fmt == "markdown":
        return markdown(doc)
    return _standalone(latex(doc)) if standalone else latex(doc)


def _record(
    revision: str, date: str, source: str, parameters: Mapping[str, Any] | None, grade: str
) -> list[str]:
    """What the note was written from: file, revision, date, tool, parameter sets."""
    lines = [f"Design file: {os.path.basename(source)}"] if source and source != "<text>" else []
    lines += [f"Revision: {revision}"] if revision else []
    lines.append(f"Date: {date or datetime.date.today().isoformat()}")
    lines.append(f"Written by opsym {__version__}")
    sets = sorted((parameters or {}).items())
    if sets:
        which = "datasheet limits" if grade == "max" else "typical values"
        named = "; ".join(f"{amp}: {getattr(p, 'name', '') or 'own values'}" for amp, p in sets)
        lines.append(f"Parameter sets ({which}): {named}")
    return lines


def _requirement_section(budget: Any, requirement: Any) -> list[Section]:
    """The PASS/FAIL line of the budget against the requirement, in bold."""
    if requirement is None:
        return []
    if budget is None:
        raise BudgetError(
            "design_note: a requirement needs the budget to compare; pass budget=error_budget(...)"
        )
    if not hasattr(requirement, "verdict"):
        raise ArgumentTypeError(
            "design_note: requirement= takes a Requirement, e.g. "
            f"Requirement(max_output_error='5 mV'), not a {type(requirement).__name__}"
        )
    line = requirement.verdict(budget).line()
    return [Section("Requirement", (Bullets((Text(line, strong=True),)),))]


def _check_arguments(result: Any, fmt: Any, frequency: Any, noise: Any) -> None:
    if not (hasattr(result, "terms") and hasattr(result, "circuit")):
        raise ArgumentTypeError(
            f"design_note: expected a Result of Circuit.analyze, not a {type(result).__name__}"
        )
    if not isinstance(fmt, str) or fmt not in ("latex", "markdown"):
        raise BudgetError(
            f"design_note: fmt {_shown(fmt)} is not known; use 'latex' or 'markdown'"
        )
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


def _operating_section(operating: Any) -> list[Section]:
    """The nominal operating point, warnings in bold; none when it was not computed."""
    lines = operating.lines() if operating is not None else []
    if not lines:
        return []
    items = tuple(Text(line, strong=line.startswith("WARNING")) for line in lines)
    return [Section("Nominal operating point", (Paragraph(_OPERATING), Bullets(items)))]


def _conventions_section(circuit: Any) -> list[Section]:
    """The conventions of the circuit's error sources; none for ideal op-amps."""
    stated = conventions(circuit)
    return [Section("Conventions", (Bullets(tuple(map(Text, stated))),))] if stated else []


def _terms_sections(
    result: Any, conditions: list[Any], choices: list[Any], nominal: Any = None
) -> list[Section]:
    """The symbolic terms (bias as Ib and Ios where both pins carry it), then the conditions."""
    shown = result
    if any(s.name.endswith(".Ib+") for s in result.terms):
        shown = result.with_average_bias()
    names = _names(shown, conditions)
    terms = shown.latex(names) if hasattr(shown, "latex") else sp.latex(shown.expression)
    out = [Section("Symbolic terms", _terms_blocks(shown, terms, names, nominal))]
    if conditions or choices:
        items = [Text(_condition_latex(eq, names), math=True) for eq in conditions]
        items += [Text(ch.describe()) for ch in choices]
        out.append(Section("Conditions", (Bullets(tuple(items)),)))
    return out


#: What a note says when it shows the ideal form and the first-order correction.
_IDEAL = (
    "The exact form, with each op-amp's open-loop gain A inside, is too long to print; "
    "with ideal op-amps (A → ∞) the output is:"
)
_CORRECTION = (
    "Finite open-loop gain changes the signal gain G by, to first order in 1/A "
    "(β: the feedback factor each op-amp sees; the budget's numbers use the exact form):"
)


#: What a note says before a nested result (a sequence of definitions).
_NESTED = (
    "The expanded form is too large to print (it grows exponentially with the network); "
    "the output is given exactly as a sequence of definitions X₁, X₂, …, each in the "
    "ones before it, as the solver eliminated the network:"
)


def _terms_blocks(result: Any, terms: str, names: dict, nominal: Any = None) -> tuple[Block, ...]:
    """The output in closed form, kept within the page.

    Printed as it is when every line fits; with coefficients of hundreds of
    terms and the nominal values known, by their dominant terms; with finite
    open-loop gains, as the ideal form plus the first-order gain error of each
    signal; otherwise with long coefficients broken between their terms.
    """
    if not too_wide(terms) or getattr(result, "domain", "dc") != "dc":
        return (Math(terms),)
    dominant = dominant_blocks(result, names, nominal)
    if dominant is not None:
        return dominant
    if getattr(result, "definitions", ()):  # nested: its X₁ = … list, no 1/A expansion
        return (Paragraph(_NESTED), Math(broken_latex(result, names)))
    ideal = ideal_coefficients(result)  # from the coefficients: no second derivation
    if ideal is None:
        return (Math(broken_latex(result, names)),)
    shown = broken_latex(result, names, coefficients=ideal)
    blocks: list[Block] = [Paragraph(_IDEAL), Math(shown)]
    corrections: list[Block] = []
    for signal in result.signals:
        if ideal.get(signal, 0) != 0:
            corrections += [Math(tex) for tex in first_order_latex(result, signal, names)]
    if corrections:
        blocks += [Paragraph(_CORRECTION), *corrections]
    return tuple(blocks)


def _budget_sections(
    budget: Any, studies: list[Any], sweep: Any, figures: tuple[Figure, ...]
) -> list[Section]:
    """The numeric budget, tolerance and temperature tables, and the budget's figures."""
    tables = [t for t in (budget, *studies, sweep) if t is not None]  # a study may be None
    blocks: tuple[Block, ...] = (*(TableBlock(t.table()) for t in tables), *figures)
    if not blocks:
        return []
    return [Section("Numeric budget" if tables else None, blocks)]


def _standalone(body: str) -> str:
    """The note as a complete document that pdflatex compiles on its own."""
    preamble = [
        r"\documentclass{article}",
        r"\usepackage[utf8]{inputenc}",
        r"\usepackage[T1]{fontenc}",
        r"\usepackage{lmodern}",
        r"\usepackage{textcomp}",
        r"\usepackage{amsmath}",
        r"\usepackage{booktabs}",
        r"\usepackage{graphicx}",
        r"\usepackage[margin=2cm]{geometry}",
        *_unusual_characters(body),
        r"\begin{document}",
    ]
    return "\n".join(preamble) + "\n" + body + r"\end{document}" + "\n"
