"""Band edges and figures of merit of a transfer function, from its exact rational form.

``|H(j·ω)|²`` of a rational ``H(s) = N(s)/D(s)`` is a rational function of
``x = ω²``: ``g(x) = N(s)·N(−s) / (D(s)·D(−s))`` with ``s² = −x``. A band edge,
where ``|H|²`` equals ``level·|H_ref|²``, is a positive real root of the
polynomial ``N(s)N(−s) − level·|H_ref|²·D(s)D(−s)``. The roots are isolated
exactly (SymPy's real-root isolation on rational coefficients) and refined by
bisection to a relative 1e-15, so no edge is missed however narrow the band
(any Q) and wherever it lies (any frequency): nothing is sampled on a grid.

Coefficients that are not rational (``π`` from a single-pole op-amp's
``2π·GBW``, or floats) enter as 60-digit rationals. Before isolation ``ω²`` is
scaled by a power of two near the roots, and coefficients longer than 160 bits
(a long cascade's have hundreds of digits) are rounded to 160 bits, which moves
a simple root by about 1e-48 of its size times its condition number.

:func:`passband` classifies the response from where ``|H|`` is above the level
(pass) or below it (stop), from DC to infinity:

==========  =====================  =============================================
kind        pass/stop pattern      reference ``|H_ref|``
==========  =====================  =============================================
low-pass    pass, stop             ``|H(0)|`` (when ``|H(0)| ≥ |H(∞)|``)
high-pass   stop, pass             ``|H(∞)|`` (when ``|H(∞)| > |H(0)|``)
band-pass   stop, pass, stop       the peak of ``|H|``
band-stop   pass, stop, pass       the larger of ``|H(0)|``, ``|H(∞)|`` (a notch)
flat        pass                   never ``drop_db`` below the larger of
                                   ``|H(0)|`` and ``|H(∞)|``
multi-band  any other              as above; every crossing is listed
unbounded   —                      none: ``|H|`` grows without bound at DC or at
                                   high frequency (an integrator, an ideal
                                   differentiator); no edge is defined
==========  =====================  =============================================

Examples
--------
>>> import sympy as sp
>>> from opsym.model.symbols import LAPLACE as s
>>> w0, q = 2 * sp.pi * 1000, 10
>>> band = passband((w0 / q) * s / (s**2 + (w0 / q) * s + w0**2))  # second-order band-pass
>>> band.kind, round(band.centre, 6), round(band.q, 9)
('band-pass', 1000.0, 10.0)
>>> [round(f, 4) for f in band.edges]  # f0·(√(1 + 1/(4Q²)) ∓ 1/(2Q))
[951.2492, 1051.2492]
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from fractions import Fraction

import mpmath
import sympy as sp

from ..errors import BudgetError, InvalidValueError
from ..model.symbols import LAPLACE
from ..values import to_exact

__all__ = ["Passband", "passband"]

#: The variable ω² of ``|H(jω)|²``.
_X = sp.Dummy("x", nonnegative=True)
#: Digits kept of a coefficient that is not rational (π, a float).
_DIGITS = 60
#: Significant bits kept of a root polynomial's coefficients when they are longer.
_BITS = 160
#: Relative width to which each edge is refined.
_REL = Fraction(1, 10**15)
#: The half-power level, exactly: HALF_POWER_DB = 10·log10(2).
_HALF_POWER_DB = 10 * math.log10(2)


@dataclass(frozen=True)
class Passband:
    """Where ``|H|`` is within ``drop_db`` of its reference, and the figures of merit.

    Attributes
    ----------
    kind : str
        ``"low-pass"``, ``"high-pass"``, ``"band-pass"``, ``"band-stop"``,
        ``"flat"``, ``"multi-band"`` or ``"unbounded"`` (see the module).
    drop_db : float
        The level of the edges below the reference, dB.
    reference : str
        What the edges are measured from: ``"DC"``, ``"high frequency"``,
        ``"peak"`` or ``""`` (unbounded).
    reference_gain : float
        ``|H|`` there (``inf`` when unbounded).
    edges : tuple of float
        Every frequency (Hz) where ``|H|`` crosses the level, ascending.
    centre, centre_gain, q : float or None
        Band-pass: the frequency of the peak, ``|H|`` there and ``f0/(f2 − f1)``;
        band-stop: the frequency of the minimum (the notch), ``|H|`` there and
        ``f0/(f2 − f1)``. ``None`` for the other kinds.
    dc_gain, hf_gain : float
        ``|H(0)|`` and ``|H(∞)|`` (``inf`` when unbounded).
    """

    kind: str
    drop_db: float
    reference: str
    reference_gain: float
    edges: tuple[float, ...]
    centre: float | None
    centre_gain: float | None
    q: float | None
    dc_gain: float
    hf_gain: float

    @property
    def bandwidth(self) -> float | None:
        """The width of the band in Hz: the edge of a low-pass, ``f2 − f1`` of a
        band-pass or band-stop; ``None`` for the other kinds."""
        if self.kind == "low-pass":
            return self.edges[0]
        if self.kind in ("band-pass", "band-stop"):
            return self.edges[1] - self.edges[0]
        return None

    def describe(self, format_hz=None) -> str:
        """One sentence that says what was found (every claim is exact, not sampled).

        ``format_hz`` formats a frequency (default ``"{:.6g} Hz"``).

        Examples
        --------
        >>> from opsym.model.symbols import LAPLACE as s
        >>> passband(1 / (1 + s / 1000)).describe()
        'low-pass: −3 dB at 159.155 Hz (re |H(0)| = 1)'
        >>> passband(s / (s + 1000)).describe()
        'high-pass: −3 dB at 159.155 Hz (re |H(∞)| = 1)'
        >>> passband((1 - s) / (1 + s)).describe()  # an all-pass
        'flat: |H| is never 3.01 dB below |H(0)| = 1 at any frequency'
        >>> passband((s + 10) / (s + 1)).describe()  # a shelf: 20 dB down at high frequency
        'low-pass: −3 dB at 0.160771 Hz (re |H(0)| = 10)'
        >>> passband((s + 10) / (s + 1), reference="DC").kind
        'low-pass'
        >>> passband((11 * s + 1) / (s + 1)).describe()  # rising from 1 to 11: ω² = 59.5/60.5
        'high-pass: −3 dB at 0.157834 Hz (re |H(∞)| = 11)'
        """
        hz = format_hz or (lambda f: f"{f:.6g} Hz")
        db = f"{self.drop_db:.3g}" if abs(self.drop_db - _HALF_POWER_DB) > 1e-12 else "3"
        ref = {"DC": "|H(0)|", "high frequency": "|H(∞)|", "peak": "peak |H|"}.get(
            self.reference, ""
        )
        ref_text = f"{ref} = {self.reference_gain:.6g}"
        if self.kind == "unbounded":
            where = "at DC" if math.isinf(self.dc_gain) else "at high frequency"
            return f"unbounded: |H| grows without bound {where}; no band edge is defined"
        if self.kind == "flat":
            return (
                f"flat: |H| is never {'3.01' if db == '3' else db} dB below {ref_text} "
                "at any frequency"
            )
        if self.kind in ("low-pass", "high-pass"):
            return f"{self.kind}: −{db} dB at {hz(self.edges[0])} (re {ref_text})"
        if self.kind in ("band-pass", "band-stop"):
            what = "peak" if self.kind == "band-pass" else "notch"
            return (
                f"{self.kind}: −{db} dB at {hz(self.edges[0])} and {hz(self.edges[1])} "
                f"(re {ref_text}); {what} at f0 = {hz(self.centre)}, "
                f"|H(f0)| = {self.centre_gain:.6g}, Q = {self.q:.6g}"
            )
        edges = ", ".join(hz(f) for f in self.edges)
        return f"multi-band: |H| crosses −{db} dB (re {ref_text}) at {edges}"


def passband(
    expr: sp.Expr, drop_db: float = _HALF_POWER_DB, reference: str = "passband"
) -> Passband:
    """Classify ``H(s)`` (numbers and ``s`` only) and find its band edges exactly.

    Parameters
    ----------
    expr : sympy.Expr
        A rational function of ``s`` with numeric coefficients.
    drop_db : float
        How far below the reference an edge is (default 10·log10(2) ≈ 3.01 dB,
        half power).
    reference : {"passband", "DC"}
        ``"passband"``: the larger of ``|H(0)|`` and ``|H(∞)|``, or the peak
        when both are zero (a shelving high-pass, DC gain 1 and high-frequency
        gain 11, is a high-pass). ``"DC"``: always ``|H(0)|`` when it is finite
        and nonzero (the bandwidth's definition).

    Raises
    ------
    InvalidValueError
        ``drop_db`` is not positive, or ``expr`` is not a rational function of
        ``s``, or is zero.
    BudgetError
        ``expr`` has symbols other than ``s``; the message names them.

    Examples
    --------
    >>> from opsym.model.symbols import LAPLACE as s
    >>> band = passband(1 / (1 + s / (2 * sp.pi * 1e-4)))  # a pole at 100 µHz
    >>> band.kind, round(band.edges[0] * 1e4, 12)
    ('low-pass', 1.0)
    """
    return _passband(expr, float(drop_db), reference)


@functools.lru_cache(maxsize=128)
def _passband(expr: sp.Expr, drop_db: float, reference: str) -> Passband:
    """:func:`passband`, remembered: a note asks for the same response several times."""
    if not (drop_db > 0 and math.isfinite(drop_db)):
        raise InvalidValueError(f"drop_db = {drop_db:g}: give a positive number of dB")
    num, den = _rational(expr)
    g_num, g_den = _squared_magnitude(num), _squared_magnitude(den)
    level = (
        sp.Rational(1, 2) if abs(drop_db - _HALF_POWER_DB) < 1e-12
        else _exact(10 ** (-drop_db / 10))
    )  # fmt: skip
    dc, hf = _end_values(g_num, g_den)
    mag = {"dc": _root(dc), "hf": _root(hf)}
    if dc == sp.oo or hf == sp.oo:
        return Passband("unbounded", drop_db, "", math.inf, (), None, None, None,
                        mag["dc"], mag["hf"])  # fmt: skip
    if reference not in ("passband", "DC"):
        raise InvalidValueError(f"reference={reference!r}: use 'passband' or 'DC'")
    if dc > 0 and (dc >= hf or reference == "DC"):
        reference, ref2 = "DC", dc
    elif hf > 0:
        reference, ref2 = "high frequency", hf
    else:
        reference, ref2 = "peak", _extreme(g_num, g_den, largest=True)[1]
    crossings = _crossings(g_num - level * ref2 * g_den)
    pattern = _pattern(dc > level * ref2, len(crossings))
    kind = {"PS": "low-pass", "SP": "high-pass", "SPS": "band-pass", "PSP": "band-stop",
            "P": "flat"}.get(pattern, "multi-band")  # fmt: skip
    centre = centre_gain = q = None
    edges = tuple(_frequency(x) for x in crossings)
    if kind in ("band-pass", "band-stop"):
        x0, g0 = _extreme(g_num, g_den, largest=kind == "band-pass", within=crossings)
        centre, centre_gain = _frequency(x0), _root(g0)
        q = centre / (edges[1] - edges[0])
    return Passband(kind, drop_db, reference, _root(ref2), edges, centre, centre_gain, q,
                    mag["dc"], mag["hf"])  # fmt: skip


# -- the rational function ----------------------------------------------------------------


def _exact(value: object) -> sp.Rational:
    """A number as a rational: exact if it is one, else to ``_DIGITS`` digits."""
    number = value if isinstance(value, sp.Basic) else to_exact(value, "a level")
    if number.is_Rational:
        return number
    return sp.Rational(sp.Float(sp.N(number, _DIGITS), _DIGITS))


def _rational(expr: sp.Expr) -> tuple[sp.Poly, sp.Poly]:
    """``N(s), D(s)`` with rational coefficients and no common factor."""
    expr = to_exact(expr, "the transfer function")
    left = sorted(str(x) for x in expr.free_symbols if x != LAPLACE)
    if left:
        raise BudgetError(
            f"the transfer function still depends on {', '.join(left)}; give their values "
            "(values= when analysing, or Result.subs) before finding its band edges"
        )
    num, den = sp.fraction(sp.together(expr))
    try:
        polys = [sp.Poly(p, LAPLACE) for p in (num, den)]
    except sp.PolynomialError as err:
        raise InvalidValueError(
            f"the transfer function is not a rational function of s ({err}); band edges "
            "need one"
        ) from None
    n, d = (sp.Poly([_exact(c) for c in p.all_coeffs()], LAPLACE, domain="QQ") for p in polys)
    if n.is_zero:
        raise InvalidValueError("the transfer function is zero; it has no passband")
    if d.is_zero:
        raise InvalidValueError("the transfer function has a zero denominator")
    common = n.gcd(d)
    return n.exquo(common), d.exquo(common)


def _squared_magnitude(p: sp.Poly) -> sp.Poly:
    """``p(s)·p(−s)`` with ``s² = −x``: ``|p(jω)|²`` as a polynomial in ``x = ω²``."""
    even = p * sp.Poly(p.as_expr().subs(LAPLACE, -LAPLACE), LAPLACE, domain="QQ")
    coeffs = even.all_coeffs()[::-1]  # c0, c1, c2, …: the odd ones are zero
    return sp.Poly(
        sum(c * (-1) ** (k // 2) * _X ** (k // 2) for k, c in enumerate(coeffs) if k % 2 == 0),
        _X, domain="QQ",
    )  # fmt: skip


def _end_values(g_num: sp.Poly, g_den: sp.Poly) -> tuple[sp.Expr, sp.Expr]:
    """``|H(0)|²`` and ``|H(∞)|²`` (``oo`` when unbounded), exactly."""
    n0, d0 = g_num(0), g_den(0)  # Poly evaluated at a number
    dc = sp.oo if d0 == 0 else n0 / d0
    if g_num.degree() > g_den.degree():
        hf = sp.oo
    elif g_num.degree() < g_den.degree():
        hf = sp.Integer(0)
    else:
        hf = g_num.LC() / g_den.LC()
    return dc, hf


def _root(g: sp.Expr) -> float:
    """``√g`` as a float (``inf`` for ``oo``)."""
    return math.inf if g == sp.oo else math.sqrt(float(g))


def _frequency(x: sp.Rational) -> float:
    """``f = √x/(2π)`` in hertz."""
    with mpmath.workdps(30):
        return float(mpmath.sqrt(mpmath.mpf(x.p) / x.q) / (2 * mpmath.pi))


# -- roots --------------------------------------------------------------------------------


def _positive_roots(p: sp.Poly) -> list[tuple[sp.Rational, int]]:
    """Every root ``x > 0`` of ``p`` (refined to a relative 1e-15) with its multiplicity."""
    p = _strip_zero_roots(p)
    if p.is_zero or p.degree() < 1:
        return []
    scale, q = _scaled(p)
    out = []
    square_free = q.sqf_part()
    for (lo, hi), mult in q.intervals(inf=0, fast=True):
        if hi <= 0:  # the root at x = 0: not a frequency
            continue
        lo, hi = sp.Rational(lo), sp.Rational(hi)
        while lo <= 0 or hi - lo > _REL * lo:
            lo, hi = square_free.refine_root(lo, hi, steps=8, fast=True)
            lo, hi = sp.Rational(lo), sp.Rational(hi)
            if hi <= 0:
                break
        if hi > 0:
            out.append(((lo + hi) / 2 * scale, mult))
    return sorted(out)


def _strip_zero_roots(p: sp.Poly) -> sp.Poly:
    """``p`` divided by the largest power of ``x`` that divides it."""
    coeffs = p.all_coeffs()
    while len(coeffs) > 1 and coeffs[-1] == 0:
        coeffs.pop()
    return sp.Poly(coeffs, _X, domain="QQ")


def _scaled(p: sp.Poly) -> tuple[sp.Integer | sp.Rational, sp.Poly]:
    """``(k, q)`` with ``q(X) = p(k·X)`` up to a constant, its roots near 1, and its
    coefficients rounded to ``_BITS`` significant bits when they are longer.

    A power of two ``k`` near the geometric mean of the roots' sizes keeps the
    coefficients of one size; rounding each to 160 bits (48 digits) moves a
    simple root by about 1e-48 of its size times its condition number, and keeps
    the exact isolation fast when a cascade's coefficients have hundreds of digits.
    """
    n = p.degree()
    c0, cn = abs(p.all_coeffs()[-1]), abs(p.LC())
    log2 = (math.log2(c0.p) - math.log2(c0.q) - math.log2(cn.p) + math.log2(cn.q)) / n
    k = sp.Integer(2) ** round(log2)
    coeffs = [c * k**i for i, c in enumerate(reversed(p.all_coeffs()))]
    top = max(abs(c) for c in coeffs)
    coeffs = [c / top for c in coeffs]
    if max(max(c.p.bit_length(), c.q.bit_length()) for c in coeffs) > 2 * _BITS:
        coeffs = [_rounded(c) for c in coeffs]
    return k, sp.Poly(list(reversed(coeffs)), _X, domain="QQ")


def _rounded(c: sp.Rational) -> sp.Rational:
    """``c`` (``|c| <= 1``) to ``_BITS`` significant bits."""
    if c == 0:
        return c
    scale = sp.Integer(2) ** (_BITS - (c.p.bit_length() - c.q.bit_length()))
    return sp.Rational(round(c * scale), scale)


def _crossings(p: sp.Poly) -> list[sp.Rational]:
    """The positive roots where ``p`` changes sign (odd multiplicity): the band edges."""
    return [x for x, mult in _positive_roots(p) if mult % 2 == 1]


def _pattern(starts_in_pass: bool, crossings: int) -> str:
    """``"PS…"``: pass (P) or stop (S) on each interval between crossings, from DC up."""
    first, second = ("P", "S") if starts_in_pass else ("S", "P")
    return "".join(first if k % 2 == 0 else second for k in range(crossings + 1))


def _extreme(
    g_num: sp.Poly, g_den: sp.Poly, *, largest: bool, within: list[sp.Rational] | None = None
) -> tuple[sp.Rational, sp.Expr]:
    """Where ``g = g_num/g_den`` is largest (or smallest) for ``x > 0``, and its value.

    ``within`` limits the search to between the first two of those points.
    The candidates are the roots of ``g_num'·g_den − g_num·g_den'``.
    """
    slope = g_num.diff(_X) * g_den - g_num * g_den.diff(_X)
    candidates = [x for x, _ in _positive_roots(slope)]
    if within is not None:
        candidates = [x for x in candidates if within[0] < x < within[1]]
    if not candidates:
        raise InvalidValueError("|H| has no interior extreme; no centre frequency to report")
    values = [(g_num(x) / g_den(x), x) for x in candidates]
    value, x = max(values) if largest else min(values)
    return x, value
