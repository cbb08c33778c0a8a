"""Results in nested form: their definitions, and the expanded form where it is needed.

A block too large to expand is solved as a sequence of expressions
(:mod:`opsym.equations.nested`): its coefficients use auxiliary symbols
``X₁, X₂, …``. Numbers, ``free_symbols``, substitution and derivatives look
through the definitions by themselves; what needs a polynomial in a component
(a null, the first-order gain error, a limit in ``A``, the pole-zero form in
``s``) asks :func:`needs_expanded`, which expands when the estimated size is
small and otherwise raises :class:`~opsym.errors.ExpressionTooLargeError`
saying what to do.

Examples
--------
>>> import sympy as sp
>>> from opsym.equations.nested import Aux
>>> R1 = sp.Symbol("R1", positive=True)
>>> X1 = Aux.define(R1**2 + 3 * R1 + 1, 1)
>>> needs_expanded(X1 / R1, "the demo")
(R1**2 + 3*R1 + 1)/R1
>>> print(where_latex([X1 / R1], {}))
\\text{where } X_{1} ={} & R_{1}^{2} + 3 R_{1} + 1
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

import sympy as sp

from ..equations.nested import EXPAND_LIMIT, definitions_of, expanded, has_aux, probe
from ..errors import ExpressionTooLargeError

__all__ = ["needs_expanded", "vanishes", "where_latex", "where_text"]


def needs_expanded(expr: sp.Expr, what: str, limit: int = EXPAND_LIMIT) -> sp.Expr:
    """``expr`` without auxiliaries, for ``what``; a named error when too large to expand."""
    if not has_aux(expr):
        return expr
    try:
        return expanded(expr, limit)
    except ExpressionTooLargeError as err:
        raise ExpressionTooLargeError(
            f"{what} needs the result in expanded form, which is too large here: {err}"
        ) from None


def vanishes(expr: sp.Expr) -> bool:
    """Whether ``expr`` is zero: by simplification, or for a nested expression by the
    solver's modular probe (the same test its pivots use; false zero below 1e-15)."""
    if not has_aux(expr):
        return bool(sp.simplify(expr) == 0)
    try:
        return probe(expr) == 0
    except (TypeError, ZeroDivisionError):  # not rational there: expand, or keep it
        return bool(sp.simplify(needs_expanded(expr, "a zero test")) == 0)


def where_latex(exprs: Iterable[sp.Expr], names: Mapping[sp.Symbol, str]) -> str:
    """``\\text{where } X_{1} ={} & … \\\\ X_{2} ={} & …`` lines for an ``aligned`` block."""
    lines = []
    for k, (aux, definition) in enumerate(definitions_of(list(exprs))):
        head = r"\text{where } " if k == 0 else ""
        body = sp.latex(definition, symbol_names=dict(names))
        lines.append(f"{head}{sp.latex(aux)} ={{}} & {body}")
    return " \\\\\n".join(lines)


def where_text(exprs: Iterable[sp.Expr]) -> list[str]:
    """``["where X₁ = …", "      X₂ = …"]`` for plain-text reports (empty when none)."""
    lines = []
    for k, (aux, definition) in enumerate(definitions_of(list(exprs))):
        lines.append(f"{'where' if k == 0 else '     '} {aux} = {definition}")
    return lines
