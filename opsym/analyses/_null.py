"""The value of one component that makes an expression vanish: the null of :meth:`Result.null`.

An output term is a ratio of polynomials in a component's value ``x``; its
numerator is most often linear in ``x`` or in the conductance ``1/x``, and
then the root is read from two coefficients. Otherwise ``sympy.solve`` gives
the candidates and each is checked by substituting it back.

Examples
--------
>>> import sympy as sp
>>> r7, r3, v = sp.symbols("R7 R3 V", positive=True)
>>> null_roots(r3 / (r3 + r7) - sp.Rational(1, 5000), r7)
[4999*R3]
"""

from __future__ import annotations

import sympy as sp

from ..errors import NoSolutionError
from .present import product_factors

__all__ = ["admissible_roots", "null_equation", "null_roots"]


def null_equation(expr: sp.Expr, x: sp.Symbol, what: str, shown: str, cannot: str) -> sp.Eq:
    """``Eq(x, root)`` for the first admissible root of ``expr``; else :class:`NoSolutionError`.

    ``what`` names the expression in messages (``"the coefficient of U1.Vos"``),
    ``shown`` gives it in brackets and ``cannot`` ends the message.
    """
    if x not in expr.free_symbols:
        raise NoSolutionError(
            f"{x} does not appear in {what} {shown}; choose a component that affects it"
        )
    candidates = null_roots(expr, x)
    found = admissible_roots(candidates, x)
    if not found:
        zeros = f" (the only zeros are {x} = {', '.join(map(str, candidates))})"
        raise NoSolutionError(
            f"no positive value of {x} makes {what} zero{zeros if candidates else ''}; "
            f"{cannot} with {x} — choose another component"
        )
    return sp.Eq(x, found[0])


def null_roots(expr: sp.Expr, x: sp.Symbol) -> list[sp.Expr]:
    """Every root of ``expr`` in ``x`` (the numerator's), linear forms first.

    A product is zero where one of its factors in ``x`` is (a cascade's
    coefficient: section by section, never expanded as a whole); a sum has
    the factors common to all its terms taken out first.
    """
    common, rest = _common_factors(expr)
    factors = [(b, k) for b, k in common if k > 0 and x in b.free_symbols]
    if factors or rest is not expr:
        roots: list[sp.Expr] = []
        parts = [b for b, _ in factors] + ([rest] if x in rest.free_symbols else [])
        for part in parts:
            roots += [r for r in _roots(part, x) if r not in roots]
        return roots
    return _roots(expr, x)


def _common_factors(expr: sp.Expr) -> tuple[list[tuple[sp.Expr, int]], sp.Expr]:
    """``([(base, k), …], rest)`` with ``expr = Π base**k · rest``: the factors every term shares.

    For a product, every factor but numbers (``rest`` is the number); for a
    sum, the bases found in every term with powers of one sign, taken out at
    the smaller power.
    """
    if not isinstance(expr, sp.Add):
        number, powers = product_factors(expr)
        return powers, number
    terms = [product_factors(a) for a in expr.args]
    common = dict(terms[0][1])
    for _, powers in terms[1:]:
        here = dict(powers)
        common = {
            b: (min(k, here[b]) if k > 0 else max(k, here[b]))
            for b, k in common.items()
            if b in here and (k > 0) == (here[b] > 0)
        }
    if not common:
        return [], expr
    rest = sp.Add(*[
        sp.Mul(n, *[b ** (k - common.get(b, 0)) for b, k in powers]) for n, powers in terms
    ])  # fmt: skip
    return list(common.items()), rest


def _roots(expr: sp.Expr, x: sp.Symbol) -> list[sp.Expr]:
    """Every root of ``expr`` in ``x``, from its numerator over one denominator."""
    numerator = sp.fraction(sp.together(expr))[0]
    numerator = sp.expand(numerator)
    linear = _linear_root(numerator, x)
    if linear is not None:
        return [linear]
    g = sp.Dummy("g", positive=True)  # the conductance 1/x
    in_g = sp.fraction(sp.together(numerator.xreplace({x: 1 / g})))[0]
    linear = _linear_root(sp.expand(in_g), g)
    if linear is not None and linear != 0:
        return [sp.factor(1 / linear)]
    found = []
    for root in sp.solve(numerator, x):
        if sp.simplify(sp.together(expr.xreplace({x: root}))) == 0:  # checked back
            found.append(sp.factor(root))
    return found


def admissible_roots(roots: list[sp.Expr], x: sp.Symbol) -> list[sp.Expr]:
    """The roots a component can take: not known to be negative, zero or complex."""
    kept = [r for r in roots if not (x.is_positive and (r.is_positive is False))]
    return [r for r in kept if r.is_real is not False]


def _linear_root(poly_expr: sp.Expr, x: sp.Symbol) -> sp.Expr | None:
    """``−c0/c1`` when ``poly_expr`` is ``c1·x + c0`` with ``c1`` not zero, else ``None``."""
    try:
        poly = sp.Poly(poly_expr, x)
    except sp.PolynomialError:
        return None
    if poly.degree() != 1:
        return None
    c1, c0 = poly.all_coeffs()
    if c1 == 0:
        return None
    return sp.factor(-c0 / c1)
