r"""LaTeX of transfer functions ``H(s)``: the gain, then the zeros and poles.

A coefficient of a ``domain="s"`` result is split as ``H(s) = K·s^m·N(s)/D(s)``
with ``N(0) = D(0) = 1``, so ``K`` is the DC gain (for ``m = 0``). When every
coefficient is a number the polynomials are factored into real poles and
zeros, written ``1 + s/(2π·f)`` with ``f`` in hertz, and pole pairs, written
``1 + s/(Q·2π·f0) + (s/(2π·f0))²``; numbers print with a fixed count of
significant digits, so no exact fraction or float residue reaches the page.
Symbolic coefficients print as ``1 + a₁·s + a₂·s² …``, each ``aₖ`` factored.

Examples
--------
>>> import sympy as sp
>>> from opsym.model.symbols import LAPLACE as s
>>> sign, body = transfer_terms(-2000000 / (200011 * (11 * s / (6000330 * sp.pi) + 1)), {})
>>> sign, body
('-', '9.99945 \\cdot \\frac{1}{1 + \\frac{s}{2\\pi \\cdot 272.74\\,\\mathrm{kHz}}}')
>>> R, C = sp.symbols("R C", positive=True)
>>> transfer_terms(R / (1 + s * R * C), {})
('+', 'R \\cdot \\frac{1}{1 + C R s}')
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import sympy as sp

from ..analyses.present import product_factors, tidy, trade_form, transfer_pieces
from ..model.symbols import LAPLACE
from ..numeric.units import format_si
from ..values import to_exact

__all__ = ["TransferParts", "hertz_latex", "number_latex", "transfer_parts", "transfer_terms"]

#: Significant digits of the numbers in a numeric transfer function.
DIGITS = 6
#: Significant digits of pole and zero frequencies.
FREQUENCY_DIGITS = 5


@dataclass(frozen=True)
class TransferParts:
    """``H(s) = gain · s**order · numerator/denominator``, both polynomials 1 at ``s = 0``."""

    gain: sp.Expr
    order: int
    numerator: sp.Expr
    denominator: sp.Expr

    @property
    def numeric(self) -> bool:
        """True when nothing but ``s`` is left symbolic."""
        parts = (self.gain, self.numerator, self.denominator)
        return all(p.free_symbols <= {LAPLACE} for p in parts)

    @property
    def dc_gain(self) -> sp.Expr:
        """``H(0)``: the gain for ``order == 0``, zero above, ``zoo`` (infinite) below."""
        if self.order == 0:
            return self.gain
        return sp.S.Zero if self.order > 0 else sp.zoo


def transfer_parts(expr: sp.Expr, s: sp.Symbol = LAPLACE) -> TransferParts | None:
    """Split ``expr`` into :class:`TransferParts`; ``None`` when it is too large to expand.

    Examples
    --------
    >>> import sympy as sp
    >>> from opsym.model.symbols import LAPLACE as s
    >>> transfer_parts(10 * s / (1 + s / 100))
    TransferParts(gain=10, order=1, numerator=1, denominator=s/100 + 1)
    """
    expr = to_exact(expr, "transfer function")  # never sympify: text goes to the parser
    if s not in expr.free_symbols:
        return TransferParts(expr, 0, sp.S.One, sp.S.One)
    try:
        pieces = transfer_pieces(expr, s)
    except sp.PolynomialError:
        return None
    return None if pieces is None else TransferParts(*pieces)


def number_latex(x: sp.Expr | float, digits: int = DIGITS) -> str:
    r"""A number for a formula: integers as they are, others to ``digits`` significant digits.

    Examples
    --------
    >>> number_latex(-2000000 / 200011), number_latex(12), number_latex(1.5e-9)
    ('-9.99945', '12', '1.5 \\cdot 10^{-9}')
    """
    if isinstance(x, sp.Integer) and abs(int(x)) < 10**digits:
        return str(int(x))
    value = float(x)
    if value.is_integer() and abs(value) < 10**digits:
        return str(int(value))
    text = f"{value:.{digits}g}"
    if "e" in text:
        mantissa, exponent = text.split("e")
        return rf"{mantissa} \cdot 10^{{{int(exponent)}}}"
    return text


def hertz_latex(f: float, digits: int = FREQUENCY_DIGITS) -> str:
    r"""A frequency with its SI prefix, for math mode: ``272.74\,\mathrm{kHz}``.

    Examples
    --------
    >>> hertz_latex(72343.16)
    '72.343\\,\\mathrm{kHz}'
    >>> hertz_latex(2.5e-6)
    '2.5\\,\\mu\\mathrm{Hz}'
    """
    number, _, unit = format_si(f, "Hz", digits).partition(" ")
    if unit.startswith("µ"):
        return number + r"\,\mu\mathrm{" + unit[1:] + "}"
    return number + r"\,\mathrm{" + unit + "}"


def _shaped(expr: sp.Expr) -> sp.Expr:
    """:func:`trade_form` of ``expr`` where that reads shorter (``1 + R2/R1``, ``R1‖R2``)."""
    shaped = trade_form(expr)
    return shaped if len(str(shaped)) <= len(str(expr)) else expr


def _is_one(expr: sp.Expr) -> bool:
    """True for the number 1 (a float within rounding of it too)."""
    return not expr.free_symbols and abs(complex(expr) - 1.0) < 1e-12


def _power(base: str, n: int) -> str:
    return base if n == 1 else base + "^{" + str(n) + "}"


def _roots(poly: sp.Poly) -> list[complex] | None:
    """The roots of a numeric polynomial with ``poly(0) != 0``, repeated ones repeated.

    The exact square-free decomposition comes first, so a double pole stays
    two equal real poles; each square-free part is then solved numerically
    (:func:`_simple_roots`). ``None`` if the roots cannot be had.
    """
    try:
        parts = sp.sqf_list(poly)[1] if poly.domain.is_Exact else [(poly, 1)]
    except (sp.polys.polyerrors.BasePolynomialError, NotImplementedError, ArithmeticError):
        parts = [(poly, 1)]
    roots: list[complex] = []
    for part, times in parts:
        found = _simple_roots(part)
        if found is None:
            return None
        roots += found * times
    return roots


def _simple_roots(poly: sp.Poly) -> list[complex] | None:
    """Numeric roots of ``poly``, polished; ``None`` when a root is zero or not finite.

    ``s`` is scaled by ``|c0/cn|^(1/n)`` first, so the coefficients of a
    polynomial whose roots are far apart (1 Hz and 1 GHz poles) stay in range;
    the companion-matrix roots are then polished by Newton steps.
    """
    coeffs = [complex(sp.N(c, 20)) for c in reversed(poly.all_coeffs())]  # c0, c1, … cn
    n = len(coeffs) - 1
    if n < 1 or coeffs[0] == 0 or coeffs[-1] == 0:
        return None
    scale = (abs(coeffs[0]) / abs(coeffs[-1])) ** (1.0 / n)
    scaled = np.array([c * scale**k for k, c in enumerate(coeffs)])[::-1]  # highest first
    if not np.all(np.isfinite(scaled)):
        return None
    x = np.roots(scaled)
    slope = np.polyder(scaled)
    for _ in range(3):
        step = np.polyval(scaled, x) / np.where(np.polyval(slope, x) == 0, 1, np.polyval(slope, x))
        x = x - step
    roots = [complex(r) * scale for r in x]
    if any(r == 0 or not np.isfinite(r) for r in roots):
        return None
    return roots


def _numeric_factors(poly: sp.Expr, s: sp.Symbol) -> list[str] | None:
    """Factors ``1 ± s/(2π·f)`` and pole-pair quadratics of numeric ``poly`` (``poly(0) = 1``)."""
    roots = _roots(sp.Poly(poly, s))
    if roots is None:
        return None
    factors: list[str] = []
    pairs = [r for r in roots if abs(r.imag) > 1e-9 * abs(r)]
    reals = sorted((r.real for r in roots if abs(r.imag) <= 1e-9 * abs(r)), key=abs)
    for root in reals:
        sign = "+" if root < 0 else "-"
        f = abs(root) / (2 * math.pi)
        factors.append(rf"1 {sign} \frac{{s}}{{2\pi \cdot {hertz_latex(f)}}}")
    for r in sorted((r for r in pairs if r.imag > 0), key=abs):
        w0 = abs(r)
        omega = rf"2\pi \cdot {hertz_latex(w0 / (2 * math.pi))}"
        square = rf"\left(\frac{{s}}{{{omega}}}\right)^{{2}}"
        if abs(r.real) <= 1e-12 * w0:
            factors.append(f"1 + {square}")
            continue
        q = w0 / (-2 * r.real)
        sign = "+" if q > 0 else "-"
        factors.append(
            rf"1 {sign} \frac{{s}}{{{number_latex(abs(q), 4)} \cdot {omega}}} + {square}"
        )
    return factors


def _polynomial_latex(poly: sp.Expr, s: sp.Symbol, names: Mapping[sp.Symbol, str]) -> str:
    """``1 + a_1 s + a_2 s^2 …`` in rising powers, each coefficient factored."""
    by_power = sp.collect(sp.expand(poly, deep=False, mul=False), s, evaluate=False)
    powers = sorted(
        (sp.degree(m, s), sp.factor(c)) for m, c in by_power.items()
    )  # fmt: skip
    pieces = []
    for k, c in powers:
        if k == 0:
            pieces.append(sp.latex(c))
            continue
        power = _power("s", k)
        sign = "+"
        if c.could_extract_minus_sign():
            sign, c = "-", -c
        shaped = _shaped(c)
        body = sp.latex(shaped, symbol_names=dict(names))
        if isinstance(shaped, sp.Add):
            body = r"\left(" + body + r"\right)"
        term = power if _is_one(c) else body + " " + power
        pieces.append(f"{sign} {term}")
    text = " ".join(pieces)
    return text[2:] if text.startswith("+ ") else text


def _product_latex(
    poly: sp.Expr, order: int, s: sp.Symbol, names: Mapping[sp.Symbol, str]
) -> str:
    """``s^order`` times ``poly`` (``poly(0) = 1``) as LaTeX, sums in parentheses if multiplied."""
    factors: list[str] = []
    one = _is_one(poly)
    if not one and poly.free_symbols <= {s}:  # numbers: poles and zeros in rising frequency
        factors = _numeric_factors(poly, s) or [_polynomial_latex(poly, s, names)]
    elif not one:  # symbolic: section by section, never expanded as a whole
        for base, times in _polynomial_factors(poly):
            factors += [_polynomial_latex(base, s, names)] * times
    counts: dict[str, int] = {}
    for f in factors:
        counts[f] = counts.get(f, 0) + 1
    items = [_power("s", order)] if order > 0 else []
    wrap = len(counts) + len(items) > 1 or any(n > 1 for n in counts.values())
    for f, n in counts.items():
        items.append(_power(r"\left(" + f + r"\right)" if wrap else f, n))
    return " ".join(items) or "1"


def _polynomial_factors(poly: sp.Expr) -> list[tuple[sp.Expr, int]]:
    """The polynomials a product of sections' polynomials (each 1 at ``s = 0``) is made of."""
    number, powers = product_factors(poly)
    if number != 1 or any(k < 0 for _, k in powers):
        return [(poly, 1)]  # not a product of such polynomials: one polynomial
    return powers


def transfer_terms(
    expr: sp.Expr,
    names: Mapping[sp.Symbol, str],
    s: sp.Symbol = LAPLACE,
    digits: int = DIGITS,
    standalone: bool = False,
) -> tuple[str, str]:
    """``(sign, body)``: the sign of ``expr``'s gain (``"+"`` or ``"-"``) and the rest as LaTeX.

    ``body`` is ``K \\cdot s^m \\cdot N(s)/D(s)``, with ``K`` left out when it is 1.
    A ``K`` that is a sum is put in parentheses unless it stands alone
    (``standalone``: nothing follows the body).
    """
    parts = transfer_parts(expr, s)
    if parts is None:  # too large to expand: print it as solved
        neg = expr.could_extract_minus_sign()
        return ("-" if neg else "+"), sp.latex(-expr if neg else expr, symbol_names=dict(names))
    gain = parts.gain
    sign = "+"
    if gain.could_extract_minus_sign():
        sign, gain = "-", -gain
    if not gain.free_symbols:
        k = number_latex(gain, digits)
    else:
        shaped = _shaped(tidy(gain, deep=True))
        k = sp.latex(shaped, symbol_names=dict(names))
        if isinstance(shaped, sp.Add) and not (standalone and parts.order == 0
                                               and _is_one(parts.numerator)
                                               and _is_one(parts.denominator)):  # fmt: skip
            k = r"\left(" + k + r"\right)"
    num = _product_latex(parts.numerator, max(parts.order, 0), s, names)
    den = _product_latex(parts.denominator, max(-parts.order, 0), s, names)
    if den == "1":
        rest = "" if num == "1" else num
    else:
        rest = r"\frac{" + num + "}{" + den + "}"
    if not rest:
        return sign, k
    if k == "1":
        return sign, rest
    return sign, k + r" \cdot " + rest
