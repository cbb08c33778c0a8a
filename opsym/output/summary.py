"""The terminal summary of a design-file study (what ``opsym report`` prints).

The summary lists the elements with every value used, the nominal operating point,
each term with its coefficient (and its number where all values are known), the
null conditions with the standard values chosen, any sensitivities, and the
budget, temperature, tolerance, response and noise tables as plain text.

Examples
--------
>>> from opsym.io.designfile import parse_design
>>> from opsym.study.design import run_design
>>> design = parse_design('''
... format = 1
... title = "follower"
... output = "out"
... [voltage-sources]
... Vin = { plus = "p", minus = "0", value = "1 V" }
... [opamps.U1]
... plus = "p"
... minus = "out"
... out = "out"
... ''')
>>> print(summary_text(run_design(design)))  # doctest: +ELLIPSIS
follower  (<text>)
====================
Elements:
  voltage source Vin (p-0) = 1 V
  op-amp U1 (+=p, -=out, out=out); ideal (nullor); error sources: ...
<BLANKLINE>
Nominal operating point (signals at their values, error sources at zero, DC):
  node voltages: V(p) = 1 V, V(out) = 1 V
  U1: output 1 V, input common mode 1 V; no rails given, not checked
<BLANKLINE>
Terms of V(out), each source times its coefficient:
     Vin x 1
  U1.Vos x 1
   U1.Ib x 0
  U1.Ios x 0
<BLANKLINE>
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..analyses._nested import where_text
from ..analyses.branch import output_text
from ..numeric.units import format_plain
from .circuit_text import element_lines
from .report import study_grade

if TYPE_CHECKING:  # the study layer sits above output: for annotations only
    from ..study.design import Study

__all__ = ["summary_text"]


def summary_text(study: Study) -> str:
    """The summary of ``study`` as lines of plain text, ending with a newline."""
    lines = [
        *_header(study),
        *_elements(study),
        *_operating(study),
        *_terms(study),
        *_conditions(study),
        *_sensitivities(study),
    ]
    for table in _tables(study):
        lines += ["", table]
    d = study.design
    if d.requirement is not None and study.budget is not None:
        lines += ["", d.requirement.verdict(study.budget).line()]
    return "\n".join(lines) + "\n"


def _header(study: Study) -> list[str]:
    d = study.design
    rule = "=" * min(78, max(20, len(d.title) + len(d.source) + 4))
    record = ", ".join(x for x in (d.revision and f"revision {d.revision}", d.date) if x)
    head = [f"{d.title}  ({d.source})" + (f"  {record}" if record else ""), rule]
    return [*head, *([d.notes, ""] if d.notes else [])]


def _elements(study: Study) -> list[str]:
    d = study.design
    lines = element_lines(d.circuit, d.values, d.opamps, d.resistors, study_grade(study))
    return ["Elements:", *(f"  {line}" for line in lines), ""]


def _operating(study: Study) -> list[str]:
    out = ["Nominal operating point (signals at their values, error sources at zero, DC):"]
    if study.operating is None:
        return [*out, f"  not computed: {study.operating_problem}", ""]
    return [*out, *(f"  {line}" for line in study.operating.lines()), ""]


def _terms(study: Study) -> list[str]:
    """Each source times its coefficient, with the coefficient's number where it is known."""
    d, res = study.design, study.result
    out = [f"Terms of {output_text(d.output)}, each source times its coefficient:"]
    width = max((len(str(s)) for s in res.terms), default=4)
    shown = []
    for source in res.terms:
        coeff = res.coefficient(source)  # collected over one denominator, cached
        shown.append(coeff)
        number = study.numbers.get(source)
        tail = ""
        if number is not None and not coeff.is_number:
            tail = f"   [= {format_plain(number, '', 6)}]"
        out.append(f"  {source!s:>{width}} x {coeff}{tail}")
    return out + [f"  {line}" for line in where_text(shown)]


def _conditions(study: Study) -> list[str]:
    if not study.conditions:
        return []
    out = ["", "Null conditions:"]
    for request, eq in zip(study.design.nulls, study.conditions, strict=True):
        out.append(f"  {request}: {eq.lhs} = {eq.rhs}")
    return out + [f"    {choice.describe()}" for choice in study.choices]


def _sensitivities(study: Study) -> list[str]:
    if not study.sensitivities:
        return []
    request = study.design.sensitivity
    kind = "Normalized sensitivities" if request and request.normalized else "Sensitivities"
    out = ["", f"{kind} (of a coefficient to a component):"]
    return out + [f"  S({of}, {to}) = {s}" for of, to, s in study.sensitivities]


def _tables(study: Study) -> list[str]:
    """Budget, temperature sweep, tolerance studies, response and noise, as plain text."""
    found = [study.budget, study.sweep, *study.studies, study.response, study.noise]
    return [table.to_text() for table in found if table is not None]
