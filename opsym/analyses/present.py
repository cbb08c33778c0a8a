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

import functools

import sympy as sp

__all__ = [
    "EXPAND_LIMIT",
    "TIDY_LIMIT",
    "Parallel",
    "at_infinity",
    "expanded_terms",
    "product_factors",
    "tidy",
    "trade_form",
    "transfer_form",
]

#: Largest operation count of a sum that :func:`tidy` still factors.
TIDY_LIMIT = 1500
#: Largest term count of the *expanded* numerator plus denominator (as estimated by
#: :func:`expanded_terms`, before anything is expanded) that is still collected and
#: factored as a whole; larger expressions keep their factored or nested form.
EXPAND_LIMIT = 2000


def expanded_terms(expr: sp.Expr) -> int:
    """Estimate the terms of ``expr`` over one denominator, expanded, without expanding it.

    The numerator's and the denominator's term counts are added. A product
    multiplies its factors' counts, a sum brings its terms over the distinct
    denominators they have (as :func:`sympy.together` would) and adds; no
    cancellation is assumed, so the estimate is an upper bound for
    polynomials in the symbols. A cascade of ``n`` sections of ``k`` terms
    each counts ``k**n``: the size a whole-product expansion would reach.

    Examples
    --------
    >>> import sympy as sp
    >>> a, b, c, d = sp.symbols("a b c d")
    >>> expanded_terms((a + b) * (c + d) / (a + c))
    6
    >>> expanded_terms(1 / (a + b) + 1 / (c + d))
    8
    """
    num, den = _terms(expr)
    return num + _den_count(den)


def _den_count(den: dict) -> int:
    count = 1
    for base, exp in den.items():
        count *= _terms(base)[0] ** exp
    return count


def _terms(expr: sp.Expr) -> tuple[int, dict]:
    """``(numerator term count, {denominator base: power})`` of ``expr`` over one denominator."""
    if isinstance(expr, sp.Add):
        parts = [_terms(a) for a in expr.args]
        den: dict = {}
        for _, d in parts:
            for base, exp in d.items():
                den[base] = max(den.get(base, 0), exp)
        num = 0
        for n, d in parts:
            missing = {b: e - d.get(b, 0) for b, e in den.items() if e > d.get(b, 0)}
            num += n * _den_count(missing)
        return num, den
    if isinstance(expr, sp.Mul):
        num, den = 1, {}
        for a in expr.args:
            n, d = _terms(a)
            num *= n
            for base, exp in d.items():
                den[base] = den.get(base, 0) + exp
        return num, den
    if isinstance(expr, sp.Pow) and expr.exp.is_Integer:
        n, d = _terms(expr.base)
        k = int(expr.exp)
        if k >= 0:
            return n**k, {b: e * k for b, e in d.items()}
        # (n/d)**-k = d**k/n**k: the base's own numerator count comes back through _den_count
        return _den_count({b: e * -k for b, e in d.items()}), {expr.base: -k}
    return 1, {}


def product_factors(expr: sp.Expr) -> tuple[sp.Expr, list[tuple[sp.Expr, int]]]:
    """``(number, [(base, power), …])`` with ``expr = number·Π base**power``, nesting flattened.

    Nested products (a cascade's block results) and integer powers of
    products are taken apart; equal bases are merged. Nothing is expanded.

    Examples
    --------
    >>> import sympy as sp
    >>> a, b, c = sp.symbols("a b c")
    >>> e = sp.Mul(-2, sp.Mul(a + b, 1 / c, evaluate=False), 1 / (a + b), evaluate=False)
    >>> product_factors(e)
    (-2, [(c, -1)])
    """
    number = sp.S.One
    powers: dict[sp.Expr, int] = {}

    def walk(e: sp.Expr, k: int) -> None:
        nonlocal number
        if e.is_Number:
            number *= e**k
        elif isinstance(e, sp.Mul):
            for a in e.args:
                walk(a, k)
        elif isinstance(e, sp.Pow) and e.exp.is_Integer and isinstance(e.base, sp.Mul):
            walk(e.base, k * int(e.exp))
        else:
            base, exp = e.as_base_exp()
            if exp.is_Integer:
                powers[base] = powers.get(base, 0) + k * int(exp)
            else:
                powers[e] = powers.get(e, 0) + k

    walk(expr, 1)
    return number, [(b, k) for b, k in powers.items() if k != 0]


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
    if not isinstance(expr, (sp.Mul, sp.Add)) or not _affordable(expr, limit):
        return expr
    return sp.factor(expr) if isinstance(expr, sp.Mul) else sp.factor(sp.together(expr))


def _affordable(expr: sp.Expr, limit: int) -> bool:
    """True when ``expr`` is small enough to bring over one denominator and factor."""
    return sp.count_ops(expr) <= limit and expanded_terms(expr) <= EXPAND_LIMIT


def _factor_part(part: sp.Expr, limit: int) -> sp.Expr:
    """One factor of a product: a polynomial (or its power) factored, a sum of fractions tidied."""
    if _has_fraction(part):
        return tidy(part, limit)
    base, exp = part.as_base_exp()
    if isinstance(base, sp.Add) and exp.is_Integer and _affordable(base, limit):
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
    read off. A product of several factors in ``s`` (a cascade's sections) is
    put in this form factor by factor and never expanded as a whole: ``N`` and
    ``D`` are then products of the sections' polynomials, each 1 at ``s = 0``,
    and ``K`` gathers the sections' gains. A factor (or a whole expression)
    larger than ``limit`` operations or :data:`EXPAND_LIMIT` expanded terms
    (see :func:`expanded_terms`) is left as solved.

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2, C2, s = sp.symbols("R1 R2 C2 s", positive=True)
    >>> transfer_form(-1 / (R1 / R2 + s * C2 * R1), s)
    -R2/(R1*(C2*R2*s + 1))

    Two RC sections in a row stay two factors, each normalised:

    >>> R3, C3 = sp.symbols("R3 C3", positive=True)
    >>> transfer_form(1 / ((R1*C2*s + 1) * (R3 + R3*C3*R2*s)), s)
    1/(R3*(C2*R1*s + 1)*(C3*R2*s + 1))
    """
    if s not in expr.free_symbols:
        return tidy(expr, limit, deep=True)
    pieces = transfer_pieces(expr, s, limit)
    if pieces is None:
        return expr
    scale, low, n_poly, d_poly = pieces
    return scale * s**low * n_poly / d_poly


def transfer_pieces(
    expr: sp.Expr, s: sp.Symbol, limit: int = TIDY_LIMIT
) -> tuple[sp.Expr, int, sp.Expr, sp.Expr] | None:
    """``(K, m, N, D)`` with ``expr = K·s**m·N/D`` and ``N(0) = D(0) = 1``; ``None`` if too large.

    A product of several factors in ``s`` is split factor by factor (``N`` and
    ``D`` are then products of polynomials, each 1 at ``s = 0``); ``None`` when
    a factor, or the whole expression otherwise, is over the limits.

    Examples
    --------
    >>> import sympy as sp
    >>> R, C, s = sp.symbols("R C s", positive=True)
    >>> transfer_pieces(2 / ((R*C*s + 1) * (R + C*s)), s)
    (2/R, 0, 1, (C*s/R + 1)*(C*R*s + 1))
    """
    number, powers = product_factors(expr)
    if sum(1 for b, _ in powers if s in b.free_symbols) < 2:
        return _pieces(expr, s, limit)
    gain, order = sp.Mul(number, *[b**k for b, k in powers if s not in b.free_symbols]), 0
    num, den = [], []
    for base, k in powers:
        if s not in base.free_symbols:
            continue
        pieces = _pieces(base, s, limit)
        if pieces is None:
            return None
        scale, low, n_poly, d_poly = pieces
        gain, order = gain * scale**k, order + low * k
        num += [n_poly**k if k > 0 else d_poly**-k]
        den += [d_poly**k if k > 0 else n_poly**-k]
    return tidy(gain, limit), order, sp.Mul(*num), sp.Mul(*den)


@functools.lru_cache(maxsize=4096)
def _pieces(
    expr: sp.Expr, s: sp.Symbol, limit: int
) -> tuple[sp.Expr, int, sp.Expr, sp.Expr] | None:
    """``(K, m, N, D)`` with ``expr = K·s**m·N/D``, ``N(0) = D(0) = 1``; ``None`` if too large.

    Cached: the sections after a source are shared by many coefficients.
    """
    if sp.count_ops(expr) > limit or expanded_terms(expr) > EXPAND_LIMIT:
        return None
    num, den = sp.fraction(sp.cancel(sp.together(expr)))
    num_p, den_p = sp.Poly(num, s), sp.Poly(den, s)
    n_low = _lowest(num_p)
    d_low = _lowest(den_p)
    scale = sp.factor(num_p.coeff_monomial(s**n_low) / den_p.coeff_monomial(s**d_low))
    return scale, n_low - d_low, _normalised(num_p, s, n_low), _normalised(den_p, s, d_low)


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
