"""Numbers from transfer functions: evaluation on a frequency grid, bandwidth, integrals.

Transfer functions stay closed-form rational functions of the Laplace variable
``s``; here they are compiled once with :func:`sympy.lambdify` and evaluated
at ``s = j·2π·f`` on a whole NumPy array of frequencies at a time.

Integrals over frequency (noise power, noise bandwidth) are adaptive: Gauss–Kronrod
rules in ``ln f`` (``∫ S(f) df = ∫ S(f)·f d(ln f)``), with break points at the
natural frequencies of the poles and zeros (:func:`natural_frequencies`), refined
where the two rules disagree until the estimated error is below 1e-10 of the
total. A resonance of any Q is resolved; :func:`integrate_with_error` also
returns the error estimate.

Examples
--------
>>> import sympy as sp
>>> from opsym.model.symbols import LAPLACE as s
>>> h = evaluator(1 / (1 + s / (2 * sp.pi * 1000)), "H")
>>> round(float(abs(h(1000.0))), 6)  # |H| at the pole: 1/√2
0.707107
>>> round(integrate(lambda f: abs(h(f)) ** 2, 0, float("inf")) / 1000, 5)  # (π/2)·fc
1.5708
"""

from __future__ import annotations

import functools
import itertools
import math
import warnings
from collections.abc import Callable, Iterable

import numpy as np
import sympy as sp

from ..equations.nested import definitions_of, has_aux
from ..errors import BudgetError, InvalidValueError
from ..model.symbols import LAPLACE
from ..values import to_exact
from ._quadrature import adaptive
from .passband import passband

__all__ = [
    "HALF_POWER_DB",
    "IntegrationWarning",
    "bandwidth",
    "evaluation_form",
    "evaluator",
    "frequency_grid",
    "integrate",
    "integrate_with_error",
    "natural_frequencies",
    "noise_bandwidth",
]

#: The half-power drop, 10·log10(2) ≈ 3.0103 dB: the "−3 dB" bandwidth.
HALF_POWER_DB = 10 * math.log10(2)
class IntegrationWarning(RuntimeWarning):
    """A band integral whose error estimate stayed above the accuracy aimed at."""


#: Relative error aimed at by the band integrals.
REL_TOL = 1e-10
#: Four-decade steps taken beyond the last break point when the upper limit is ∞.
_MAX_TAIL_STEPS = 16


def evaluator(expr: sp.Expr, what: str) -> Callable[[object], np.ndarray]:
    """Compile ``expr`` (numbers and ``s`` only) into ``f ↦ expr(j·2π·f)``.

    ``what`` names the quantity in the error raised when symbols are left:
    the message lists them and says to give their values.
    """
    expr = to_exact(expr, what)  # never sympify: text goes to the parser
    left = sorted(str(x) for x in expr.free_symbols if x != LAPLACE)
    if left:
        raise BudgetError(
            f"{what} still depends on {', '.join(left)}; give their values "
            "(values= when analysing, or Result.subs) before evaluating it at frequencies"
        )
    log_h = _log_evaluator(expr)

    def at(f: object) -> np.ndarray:
        freq = np.asarray(f, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            value = np.exp(log_h(2j * np.pi * freq))
        return np.broadcast_to(np.asarray(value, dtype=complex), freq.shape).copy()

    return at


def _log_evaluator(expr: sp.Expr) -> Callable[[np.ndarray], np.ndarray]:
    """``s ↦ log(expr(s))`` (complex), products and integer powers taken as sums of logs.

    A cascade's coefficient is a product of many stage factors whose exact
    constants may have hundreds of digits; in logs each factor stays in range,
    so the product neither overflows nor loses its phase.
    """
    if expr.is_Mul:
        parts = [_log_evaluator(a) for a in expr.args]

        def log_product(s: np.ndarray) -> np.ndarray:
            total = np.zeros(np.shape(s), dtype=complex)
            for p in parts:
                total = total + p(s)
            return total

        return log_product
    if expr.is_Pow and expr.exp.is_Integer:
        base, n = _log_evaluator(expr.base), complex(expr.exp)
        return lambda s: n * base(s)
    if expr.is_Number:
        constant = complex(sp.log(expr).evalf(17)) if expr != 0 else complex(-np.inf)
        return lambda s: np.full(np.shape(s), constant, dtype=complex)
    fn = _nested_function(expr) if has_aux(expr) else _function(expr, [LAPLACE])

    def log_of(s: np.ndarray) -> np.ndarray:
        return np.log(np.broadcast_to(np.asarray(fn(s), dtype=complex), np.shape(s)))

    return log_of


def _function(expr: sp.Expr, args: list) -> Callable[..., np.ndarray]:
    floats = {
        a: sp.Float(a, 17) for a in expr.atoms(sp.Rational) if not a.is_Integer or abs(a) > 2**52
    }
    return sp.lambdify(args, expr.xreplace(floats) if floats else expr, modules="numpy")


def _nested_function(expr: sp.Expr) -> Callable[[np.ndarray], np.ndarray]:
    """A nested form (auxiliaries ``X₁ = …``) evaluated forward, each definition compiled once."""
    defs = definitions_of(expr)
    slots = {aux: sp.Dummy(f"x{k}") for k, (aux, _) in enumerate(defs)}
    args = [LAPLACE, *slots.values()]
    steps = [_function(d.xreplace(slots), args) for _, d in defs]
    last = _function(expr.xreplace(slots), args)

    def evaluate(s: np.ndarray) -> np.ndarray:
        values: list = [0.0] * len(defs)
        for k, step in enumerate(steps):
            values[k] = step(s, *values)
        return last(s, *values)

    return evaluate


#: Highest power of ``s`` a collected form may have and still be evaluated as a polynomial.
_MAX_COLLECTED_DEGREE = 24


def evaluation_form(compact: sp.Expr, collect: Callable[[], sp.Expr]) -> sp.Expr:
    """The form of a transfer function to evaluate in floating point.

    A product (a cascade's chain of stage factors) is evaluated as it is, in
    logarithms. A sum over several paths can cancel in floating point, so its
    collected form ``collect()`` is used instead, unless that is a polynomial of
    such high degree in ``s`` that its coefficients would overflow.
    """
    if not compact.is_Add:
        return compact
    collected = collect()
    num, den = sp.fraction(collected)
    try:
        degree = max(sp.degree(num, LAPLACE), sp.degree(den, LAPLACE))
    except sp.PolynomialError:  # not a rational function of s in this form
        return compact
    return collected if degree <= _MAX_COLLECTED_DEGREE else compact


def frequency_grid(start: float, stop: float, points_per_decade: int = 50) -> np.ndarray:
    """A logarithmic grid from ``start`` to ``stop`` hertz, both included.

    Examples
    --------
    >>> frequency_grid(10, 1000, 1)
    array([  10.,  100., 1000.])
    """
    start, stop = float(start), float(stop)
    if not (0 < start < stop) or not math.isfinite(stop):
        raise InvalidValueError(
            f"frequency grid {start:g} Hz to {stop:g} Hz: give 0 < start < stop, both finite"
        )
    n = max(2, math.ceil(round(math.log10(stop / start) * points_per_decade, 9)) + 1)
    return np.logspace(math.log10(start), math.log10(stop), n)


def integrate(
    density: Callable[[np.ndarray], np.ndarray],
    f_low: float,
    f_high: float,
    breakpoints: Iterable[float] = (),
    rel_tol: float = REL_TOL,
) -> float:
    """``∫ density(f) df`` from ``f_low`` to ``f_high`` (``f_high`` may be ``inf``).

    See :func:`integrate_with_error`, which also returns the error estimate.
    """
    return integrate_with_error(density, f_low, f_high, breakpoints, rel_tol)[0]


def integrate_with_error(
    density: Callable[[np.ndarray], np.ndarray],
    f_low: float,
    f_high: float,
    breakpoints: Iterable[float] = (),
    rel_tol: float = REL_TOL,
) -> tuple[float, float]:
    """``∫ density(f) df`` and its estimated absolute error.

    Adaptive Gauss–Kronrod quadrature in ``ln f``, refined until the error
    estimate is below ``rel_tol`` of the value. ``breakpoints`` (Hz) are where
    the density may change quickly: give the natural frequencies of its poles
    and zeros (:func:`natural_frequencies`) so that a narrow resonance is
    found whatever its Q. A lower limit of 0 is allowed when the density is
    finite there; a density with a 1/f part diverges at 0 Hz and needs
    ``f_low > 0``. An infinite upper limit adds four decades at a time until
    the last adds less than ``rel_tol``/100 of the total; the last addition
    counts in the error estimate. Warns (:class:`IntegrationWarning`) when the estimate
    does not reach ``rel_tol``.

    Examples
    --------
    A resonance of Q = 1000 at 1 kHz: ``∫|H|² df = (π/2)·Q·f0`` for
    ``H = 1/(1 + s/(Q·ω0) + s²/ω0²)`` (the noise bandwidth of a second-order
    low-pass):

    >>> import math
    >>> q, f0 = 1000.0, 1e3
    >>> def power(f):
    ...     x = f / f0
    ...     return 1 / ((1 - x**2) ** 2 + (x / q) ** 2)
    >>> value, error = integrate_with_error(power, 0, math.inf, [f0])
    >>> round(value / (math.pi / 2 * q * f0), 9), error < 1e-9 * value
    (1.0, True)
    """
    f_low, f_high = float(f_low), float(f_high)
    if f_low < 0 or not f_high > f_low:
        raise InvalidValueError(f"band {f_low:g} Hz to {f_high:g} Hz: give 0 <= f_low < f_high")
    breaks = sorted({float(b) for b in breakpoints if 0 < b < math.inf})
    total, error, ok = 0.0, 0.0, True
    start = f_low
    if f_low == 0:
        with np.errstate(divide="ignore", invalid="ignore"):
            at_zero = np.real(np.asarray(density(np.array([0.0])), dtype=complex))[0]
        if not np.isfinite(at_zero):
            raise InvalidValueError("the density diverges at 0 Hz (1/f noise); give f_low > 0")
        start = min(1e-6, breaks[0] / 100 if breaks else 1e-6, f_high / 100)
        total, error, ok = _adaptive(lambda f: _real(density, f), [0.0, start], rel_tol)
    stop = f_high if math.isfinite(f_high) else max(10 * start, 1.0, 100 * max(breaks, default=0))
    value, err, fine = _adaptive(_in_log(density), _log_edges(start, stop, breaks), rel_tol)
    total, error, ok = total + value, error + err, ok and fine
    if math.isinf(f_high):
        total, error, ok = _tail(density, stop, total, error, ok, rel_tol)
    if not ok:
        warnings.warn(
            f"integral over {f_low:g} Hz to {f_high:g} Hz: estimated relative error "
            f"{error / abs(total) if total else error:.1e}, above the {rel_tol:.0e} aimed at",
            IntegrationWarning,
            stacklevel=2,
        )
    return total, error


def _tail(density, stop, total, error, ok, rel_tol):
    """Add ``∫ density`` above ``stop``, four decades at a time, until the pieces vanish."""
    for _ in range(_MAX_TAIL_STEPS):
        edges = np.linspace(math.log(stop), math.log(stop) + 4 * math.log(10), 9)
        piece, err, fine = _adaptive(_in_log(density), edges, rel_tol, rel_tol * abs(total))
        total, error, ok = total + piece, error + err, ok and fine
        stop *= 1e4
        if abs(piece) <= 0.01 * rel_tol * abs(total):
            return total, error + abs(piece), ok
    raise InvalidValueError(
        "the density does not fall off fast enough to integrate to infinity; "
        "give a finite upper frequency"
    )


def _real(density, f: np.ndarray) -> np.ndarray:
    return np.real(np.asarray(density(f), dtype=complex))


def _in_log(density) -> Callable[[np.ndarray], np.ndarray]:
    """``u ↦ density(e^u)·e^u``: the integrand in ``u = ln f``."""

    def g(u: np.ndarray) -> np.ndarray:
        f = np.exp(u)
        return _real(density, f) * f

    return g


def _log_edges(start: float, stop: float, breaks: list[float]) -> np.ndarray:
    """``ln f`` from ``start`` to ``stop``, cut at the break points and every half decade."""
    inner = [math.log(b) for b in breaks if start < b < stop]
    knots = [math.log(start), *inner, math.log(stop)]
    edges = [knots[0]]
    for lo, hi in itertools.pairwise(knots):
        n = max(1, math.ceil((hi - lo) / (0.5 * math.log(10))))
        edges.extend(np.linspace(lo, hi, n + 1)[1:])
    return np.array(edges)


def _adaptive(g, edges, rel_tol: float, abs_tol: float = 0.0) -> tuple[float, float, bool]:
    return adaptive(g, np.asarray(edges, dtype=float), rel_tol, abs_tol)


def natural_frequencies(expr: sp.Expr) -> tuple[float, ...]:
    """Natural frequencies ``|p|/2π`` (Hz) of the poles and zeros of ``expr(s)``, ascending.

    A product is taken factor by factor (a cascade's stage factors), each a
    ratio of polynomials in ``s``. A factor that is not one, or whose degree
    is above 24, or whose coefficients do not fit in floating point, adds
    nothing: the break points are a help to the integration, not a need.

    Examples
    --------
    >>> import sympy as sp
    >>> from opsym.model.symbols import LAPLACE as s
    >>> w0 = 2 * sp.pi * 1000
    >>> [round(f, 6) for f in natural_frequencies(s / (1 + s / (100 * w0) + (s / w0) ** 2))]
    [1000.0]
    """
    found: set[float] = set()
    for factor in sp.Mul.make_args(expr):
        if factor.is_Pow and factor.exp.is_Integer:
            factor = factor.base
        if not factor.is_number:
            found.update(_factor_frequencies(factor))
    merged: list[float] = []
    for f in sorted(found):
        if not merged or f > merged[-1] * (1 + 1e-9):
            merged.append(f)
    return tuple(merged)


@functools.lru_cache(maxsize=4096)
def _factor_frequencies(factor: sp.Expr) -> tuple[float, ...]:
    num, den = sp.fraction(factor)
    if den == 1 and factor.is_Add and sp.count_ops(factor) <= 400:
        num, den = sp.fraction(sp.together(factor))
    return _root_frequencies(num) + _root_frequencies(den)


def _root_frequencies(poly_expr: sp.Expr) -> tuple[float, ...]:
    try:
        poly = sp.Poly(poly_expr, LAPLACE)
    except sp.PolynomialError:
        return ()
    if not 0 < poly.degree() <= _MAX_COLLECTED_DEGREE or poly.free_symbols - {LAPLACE}:
        return ()
    coeffs = poly.all_coeffs()
    try:
        scale = max(abs(c) for c in coeffs)
        floats = np.array([float(c / scale) for c in coeffs])
        with np.errstate(all="ignore"):
            roots = np.roots(floats)
    except (TypeError, ValueError, OverflowError, ZeroDivisionError, np.linalg.LinAlgError):
        return ()
    mags = np.abs(roots[np.isfinite(roots)]) / (2 * math.pi)
    return tuple(float(m) for m in mags if m > 0)


def noise_bandwidth(
    transfer: Callable[[np.ndarray], np.ndarray],
    reference: float = 0.0,
    breakpoints: Iterable[float] = (),
) -> float:
    """Equivalent noise bandwidth ``∫|H|² df / |H(f_ref)|²`` in hertz.

    A single pole at ``fc`` gives ``(π/2)·fc``. ``breakpoints`` as for
    :func:`integrate_with_error`.
    """
    h0 = abs(transfer(np.array([reference]))[0])
    if h0 == 0:
        raise InvalidValueError(f"|H| is zero at {reference:g} Hz; choose another reference")
    power = integrate(lambda f: np.abs(transfer(f)) ** 2, 0.0, math.inf, breakpoints)
    return power / h0**2


def bandwidth(transfer: sp.Expr, drop_db: float = HALF_POWER_DB) -> float:
    """First frequency where ``|H|`` falls ``drop_db`` below ``|H(0)|`` (default: −3 dB).

    ``transfer`` is ``H(s)`` itself, a rational function of ``s`` with numbers
    only (a sampled function could miss a narrow notch between its points).
    The edge is a root of the exact ``|H(jω)|²`` polynomial, isolated and
    refined by :func:`opsym.numeric.passband.passband`, so any Q and any
    frequency (below 1 mHz, above 1 THz) works; use that function for the
    edges of a high-pass, band-pass or notch and their figures of merit.

    Raises
    ------
    InvalidValueError
        ``|H(0)|`` is zero or infinite (a high-pass, band-pass, integrator), or
        ``|H|`` is never ``drop_db`` below it at any frequency; the message
        says which.

    Examples
    --------
    >>> from opsym.model.symbols import LAPLACE as s
    >>> round(bandwidth(1 / (1 + s / (2 * sp.pi * 1e-4))) * 1e4, 12)  # a pole at 100 µHz
    1.0
    """
    if callable(transfer) and not isinstance(transfer, sp.Basic):
        raise InvalidValueError(
            "bandwidth needs H(s) as an expression in s, not a function of f: a sampled "
            "function can miss a narrow notch; pass the expression given to evaluator()"
        )
    band = passband(transfer, drop_db, reference="DC")
    if band.reference != "DC":
        dc = "infinite" if math.isinf(band.dc_gain) else "zero"
        raise InvalidValueError(
            f"|H(0)| is {dc} ({band.kind} response), so no bandwidth is measured from DC; "
            "its band edges come from opsym.numeric.passband.passband (Result.passband)"
        )
    if not band.edges:
        raise InvalidValueError(
            f"|H| is never {drop_db:.3g} dB below its DC value {band.dc_gain:.6g} at any "
            "frequency (checked exactly); no bandwidth to report"
        )
    return band.edges[0]
