"""Readable closed forms: tidy a coefficient without blowing it up.

Coefficients come out of the solver as products of per-block factored
rational functions. A single product is already in its readable form; a sum
(several paths to the output) is brought over one denominator and factored
when that is affordable, and otherwise left as the exact sum it is.

Examples
--------
>>> import sympy as sp
>>> R1, R2 = sp.symbols("R1 R2", positive=True)
>>> tidy(R2/R1 + 1)
(R1 + R2)/R1
"""

from __future__ import annotations

import sympy as sp

__all__ = ["TIDY_LIMIT", "at_infinity", "tidy"]

#: Largest operation count of a sum that :func:`tidy` still factors.
TIDY_LIMIT = 1500


def tidy(expr: sp.Expr, limit: int = TIDY_LIMIT, deep: bool = False) -> sp.Expr:
    """Return ``expr`` collected over one denominator and factored, if affordable.

    A product is taken to be a product of already factored block results and
    left alone, unless ``deep`` (after a substitution, say) asks for it too.
    """
    if expr.is_number:
        return expr
    if isinstance(expr, sp.Mul) and not deep:
        if any(a.is_Mul for a in expr.args):  # nested: a long cascade product
            return expr
        return sp.Mul(*[tidy(a, limit) if _has_fraction(a) else a for a in expr.args])
    if isinstance(expr, sp.Mul) and sp.count_ops(expr) <= limit:
        return sp.factor(expr)
    if isinstance(expr, sp.Add) and sp.count_ops(expr) <= limit:
        return sp.factor(sp.together(expr))
    return expr


def _has_fraction(expr: sp.Expr) -> bool:
    """True for a sum with a term that has a denominator (``1 + R2/R1``, not ``R1 + R2``)."""
    if not isinstance(expr, sp.Add):
        return False
    return any(
        isinstance(p, sp.Pow) and p.exp.is_negative for t in expr.args for p in sp.Mul.make_args(t)
    )


def at_infinity(expr: sp.Expr, symbols: list[sp.Symbol]) -> sp.Expr:
    """Limit of the rational expression ``expr`` as every symbol in ``symbols`` → ∞ together.

    The symbols are replaced by ``1/t`` and the rational function in ``t`` is
    evaluated at ``t = 0`` (L'Hôpital-free: the denominator is checked first).
    """
    t = sp.Dummy("t", positive=True)
    e = sp.cancel(sp.together(expr.xreplace({s: s / t for s in symbols})))
    num, den = sp.fraction(e)
    num_p, den_p = sp.Poly(num, t), sp.Poly(den, t)
    # Lowest power of t present in the denominator decides the limit.
    low_den = min(m[0] for m in den_p.monoms())
    low_num = min((m[0] for m in num_p.monoms()), default=low_den)
    if num_p.is_zero:
        return sp.S.Zero
    if low_num > low_den:
        return sp.S.Zero
    if low_num < low_den:
        return sp.oo * sp.sign(num_p.coeff_monomial(t**low_num))
    return tidy(num_p.coeff_monomial(t**low_num) / den_p.coeff_monomial(t**low_den))
