"""Readable closed forms: tidy a coefficient without blowing it up.

Coefficients come out of the solver as products of per-block rational
functions, each a cancelled numerator over a denominator (the solver does not
factor: that is presentation, done here when a coefficient is shown). In a
product each polynomial part is factored on its own; a sum (several paths to
the output) is brought over one denominator and factored when that is
affordable, and otherwise left as the exact sum it is.

Examples
--------
>>> import sympy as sp
>>> R1, R2 = sp.symbols("R1 R2", positive=True)
>>> tidy(R2/R1 + 1)
(R1 + R2)/R1
"""

from __future__ import annotations

import sympy as sp

__all__ = [
    "TIDY_LIMIT",
    "Parallel",
    "at_infinity",
    "tidy",
    "trade_form",
    "transfer_form",
]

#: Largest operation count of a sum that :func:`tidy` still factors.
TIDY_LIMIT = 1500


def tidy(expr: sp.Expr, limit: int = TIDY_LIMIT, deep: bool = False) -> sp.Expr:
    """Return ``expr`` collected over one denominator and factored, if affordable.

    A product is taken to be a product of block results: each polynomial part
    is factored on its own (a long nested cascade product keeps its nesting),
    unless ``deep`` (after a substitution, say) asks to factor it as a whole.
    """
    if expr.is_number:
        return expr
    if isinstance(expr, sp.Mul) and not deep:
        if any(a.is_Mul for a in expr.args):  # nested: a long cascade product
            return _factor_leaves(expr, limit, {})
        return sp.Mul(*[_factor_part(a, limit) for a in expr.args])
    if isinstance(expr, sp.Mul) and sp.count_ops(expr) <= limit:
        return sp.factor(expr)
    if isinstance(expr, sp.Add) and sp.count_ops(expr) <= limit:
        return sp.factor(sp.together(expr))
    return expr


def _factor_part(part: sp.Expr, limit: int) -> sp.Expr:
    """One factor of a product: a polynomial (or its power) factored, a sum of fractions tidied."""
    if _has_fraction(part):
        return tidy(part, limit)
    base, exp = part.as_base_exp()
    if isinstance(base, sp.Add) and exp.is_Integer and sp.count_ops(base) <= limit:
        return sp.factor(base) ** exp
    return part


def _factor_leaves(expr: sp.Expr, limit: int, cache: dict) -> sp.Expr:
    """Factor the polynomial leaves of a nested product, keeping the nesting."""
    if expr in cache:
        return cache[expr]
    if isinstance(expr, sp.Mul):
        out = sp.Mul(*[_factor_leaves(a, limit, cache) for a in expr.args], evaluate=False)
    else:
        out = _factor_part(expr, limit)
    cache[expr] = out
    return out


def transfer_form(expr: sp.Expr, s: sp.Symbol, limit: int = TIDY_LIMIT) -> sp.Expr:
    """A transfer function as ``K·N(s)/D(s)`` with ``N(0) = D(0) = 1`` where possible.

    The numerator and denominator are collected in powers of ``s``, each
    coefficient factored, so the DC gain ``K`` and the time constants can be
    read off. Expressions larger than ``limit`` operations are left as solved.

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2, C2, s = sp.symbols("R1 R2 C2 s", positive=True)
    >>> transfer_form(-1 / (R1 / R2 + s * C2 * R1), s)
    -R2/(R1*(C2*R2*s + 1))
    """
    if s not in expr.free_symbols:
        return tidy(expr, limit, deep=True)
    if sp.count_ops(expr) > limit:
        return expr
    num, den = sp.fraction(sp.cancel(sp.together(expr)))
    num_p, den_p = sp.Poly(num, s), sp.Poly(den, s)
    n_low = _lowest(num_p)
    d_low = _lowest(den_p)
    scale = sp.factor(num_p.coeff_monomial(s**n_low) / den_p.coeff_monomial(s**d_low))
    n_poly = _normalised(num_p, s, n_low)
    d_poly = _normalised(den_p, s, d_low)
    return scale * s ** (n_low - d_low) * n_poly / d_poly


def _lowest(poly: sp.Poly) -> int:
    return min(m[0] for m in poly.monoms())


def _normalised(poly: sp.Poly, s: sp.Symbol, low: int) -> sp.Expr:
    """``poly/(its s**low coefficient · s**low)``, coefficients factored: constant term 1."""
    lead = poly.coeff_monomial(s**low)
    return sp.Add(*[sp.factor(c / lead) * s ** (k - low) for (k,), c in poly.terms() if c != 0])


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


class Parallel(sp.Function):
    r"""``a‖b = a·b/(a + b)``, for display only: LaTeX ``a \parallel b``.

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2 = sp.symbols("R1 R2", positive=True)
    >>> sp.latex(Parallel(R1, R2))
    'R_{1} \\parallel R_{2}'
    """

    def _latex(self, printer) -> str:
        return r" \parallel ".join(printer._print(a) for a in self.args)

    def _sympystr(self, printer) -> str:
        return " || ".join(printer._print(a) for a in self.args)


def trade_form(expr: sp.Expr) -> sp.Expr:
    """Rewrite a factored coefficient in the shapes the trade writes, for display.

    ``(R1 + R2)/R1`` becomes the noise gain ``1 + R2/R1`` and ``R1*R2/(R1 + R2)``
    the parallel combination ``R1‖R2`` (a :class:`Parallel`). The value is
    unchanged; the result is meant for printing, not for further algebra.

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2, R3 = sp.symbols("R1 R2 R3", positive=True)
    >>> trade_form(-R3*(R1 + R2)/R1)
    -R3*(1 + R2/R1)
    >>> trade_form(R1*R2/(R1 + R2))
    R1 || R2
    """
    if not isinstance(expr, sp.Mul) or any(a.is_Mul for a in expr.args):
        return expr
    num, den = [], []
    for factor in expr.args:
        base, exp = factor.as_base_exp()
        if exp.is_Integer and exp < 0:
            den += [base] * int(-exp)
        else:
            num.append(factor)
    out = []
    for d in list(den):  # parallel: a*b/(a + b) with both a and b in the numerator
        if isinstance(d, sp.Add) and len(d.args) == 2 and all(a.is_Symbol for a in d.args):
            a, b = d.args
            if a in num and b in num:
                num.remove(a)
                num.remove(b)
                den.remove(d)
                out.append(Parallel(*sorted((a, b), key=str)))
    for n in list(num):  # noise gain: (d + t)/d with a symbol d in the denominator
        if isinstance(n, sp.Add) and len(n.args) == 2:
            for d in den:
                if d.is_Symbol and d in n.args:
                    (t,) = [a for a in n.args if a != d]
                    num.remove(n)
                    den.remove(d)
                    out.append(sp.Add(sp.S.One, t / d))
                    break
    return sp.Mul(*num, *out) / sp.Mul(*den)
