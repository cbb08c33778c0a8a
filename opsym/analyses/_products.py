"""Methods on products of sections, worked factor by factor: never expand the whole product.

A cascade's coefficient is a product of its sections' results. Two exact
identities keep the work per section:

* the normalized sensitivity of a product is the sum of its factors'
  (``S(f·g) = S(f) + S(g)``, since ``S = x·∂ln y/∂x``), and only the factors
  that contain the component contribute;
* the fractional gain error of ``G = Π Gᵢ`` against ``G₀ = Π G₀ᵢ`` is
  ``Π(1 + εᵢ) − 1`` with ``εᵢ = Gᵢ/G₀ᵢ − 1``; to first order in ``1/A`` it is
  ``Σ εᵢ`` (the products of two or more ``εᵢ`` are of second order).

The factors of ``G/G₀`` are matched into sections by the symbols they share
(every factor that shares a symbol with another, other than ``s``, is in its
section), so nothing depends on how the solver ordered or nested them.

Examples
--------
>>> import sympy as sp
>>> R1, R2, R3, R4, A, B = sp.symbols("R1 R2 R3 R4 A B", positive=True)
>>> g1 = R2 * A / (R1 * A + R1 + R2)
>>> g2 = R4 * B / (R3 * B + R3 + R4)
>>> product_gain_error(g1 * g2, (R2 / R1) * (R4 / R3), set())
(-(R1 + R2)/(A*R1 + R1 + R2) + 1)*(-(R3 + R4)/(B*R3 + R3 + R4) + 1) - 1
>>> product_sensitivity(g1 * g2, R4)
R3*(B + 1)/(B*R3 + R3 + R4)
"""

from __future__ import annotations

from collections.abc import Iterable

import sympy as sp

from .present import EXPAND_LIMIT, expanded_terms, product_factors

__all__ = [
    "error_product",
    "first_order",
    "first_order_of_product",
    "product_gain_error",
    "product_sensitivity",
    "section_errors",
    "sections",
]


def product_sensitivity(y: sp.Expr, x: sp.Symbol) -> sp.Expr:
    """``(x/y)·∂y/∂x`` as the sum of the normalized sensitivities of ``y``'s factors.

    Only the factors that contain ``x`` are differentiated; the sum is
    collected and factored when that is affordable (:data:`EXPAND_LIMIT`),
    otherwise returned as the exact sum of the factors' sensitivities.
    """
    _, powers = product_factors(y)
    parts = [k * x * sp.diff(b, x) / b for b, k in powers if x in b.free_symbols]
    total = sp.Add(*parts)
    if expanded_terms(total) > EXPAND_LIMIT:
        return sp.Add(*[sp.factor(sp.cancel(sp.together(p))) for p in parts])
    return sp.factor(sp.cancel(sp.together(total)))


def sections(powers: Iterable[tuple[sp.Expr, int]], shared: set[sp.Symbol]) -> list[sp.Expr]:
    """The factors ``base**k`` multiplied into groups that share no symbol (``shared`` aside)."""
    groups: list[tuple[set[sp.Symbol], list[sp.Expr]]] = []
    for base, k in powers:
        symbols = base.free_symbols - shared
        joined = [g for g in groups if g[0] & symbols]
        for g in joined:
            groups.remove(g)
            symbols |= g[0]
        factors = [f for g in joined for f in g[1]] + [base**k]
        groups.append((symbols, factors))
    return [sp.Mul(*g[1]) for g in groups]


def product_gain_error(g: sp.Expr, g0: sp.Expr, shared: set[sp.Symbol]) -> sp.Expr:
    """``g/g0 − 1`` exactly, as ``Π(1 + εᵢ) − 1`` over the sections of ``g/g0``.

    With one section (or none) this is ``g/g0 − 1`` over one denominator,
    factored (left as ``g/g0 − 1`` when the expansion would be over
    :data:`EXPAND_LIMIT` terms); sections whose ratio is 1 drop out.
    """
    return error_product(section_errors(g, g0, shared))


def error_product(errors: list[sp.Expr]) -> sp.Expr:
    """``Π(1 + εᵢ) − 1``, left as that product; one ``ε`` as it is, none as 0."""
    if len(errors) <= 1:
        return errors[0] if errors else sp.S.Zero
    return sp.Mul(*[1 + e for e in errors]) - 1


def section_errors(g: sp.Expr, g0: sp.Expr, shared: set[sp.Symbol]) -> list[sp.Expr]:
    """The non-zero ``εᵢ = Gᵢ/G₀ᵢ − 1`` of each section of ``g/g0`` (see :func:`sections`)."""
    n1, p1 = product_factors(g)
    n0, p0 = product_factors(g0)
    powers: dict[sp.Expr, int] = dict(p1)
    for base, k in p0:
        powers[base] = powers.get(base, 0) - k
    groups = sections([(b, k) for b, k in powers.items() if k != 0], shared) or [sp.S.One]
    groups[0] = groups[0] * (n1 / n0)
    errors = [_over_one_denominator(part - 1) for part in groups]
    return [e for e in errors if e != 0]


def _over_one_denominator(expr: sp.Expr) -> sp.Expr:
    """``expr`` cancelled and factored, or as it is when its expansion is over the limit."""
    if expanded_terms(expr) > EXPAND_LIMIT:
        return expr  # too large to expand: the exact, unexpanded form
    return sp.factor(sp.cancel(sp.together(expr)))


def first_order(error: sp.Expr, gains: list[sp.Symbol], strict: bool = False) -> sp.Expr | None:
    """The term of ``error`` linear in ``1/A`` (every gain in ``gains`` large together).

    With ``strict``, ``None`` when ``error`` does not vanish as the gains grow
    (it has a term of order zero, so a sum of such terms is not the first order
    of the product).
    """
    t = sp.Dummy("t", positive=True)
    num, den = sp.fraction(sp.cancel(sp.together(error.xreplace({a: a / t for a in gains}))))
    num_p, den_p = sp.Poly(num, t), sp.Poly(den, t)
    if strict and num_p.coeff_monomial(1) != 0:
        return None
    return sp.factor(num_p.coeff_monomial(t) / den_p.coeff_monomial(1))


def first_order_of_product(errors: list[sp.Expr], gains: list[sp.Symbol]) -> sp.Expr:
    """The first order in ``1/A`` of ``Π(1 + εᵢ) − 1``: ``Σ`` of the sections' first orders.

    That holds when every ``εᵢ`` vanishes as the gains grow; otherwise (or for
    one section) the product is brought over one denominator first.
    """
    if len(errors) > 1:
        terms = [first_order(e, gains, strict=True) for e in errors]
        if all(term is not None for term in terms):
            return sp.Add(*terms)  # Π(1 + εᵢ) − 1 = Σ εᵢ + (second order)
    whole = sp.factor(sp.cancel(sp.together(error_product(errors))))
    result = first_order(whole, gains)
    assert result is not None  # not strict: never None
    return result
