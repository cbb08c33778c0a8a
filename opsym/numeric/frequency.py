"""Numbers from transfer functions: evaluation on a frequency grid, bandwidth, integrals.

Transfer functions stay closed-form rational functions of the Laplace variable
``s``; here they are compiled once with :func:`sympy.lambdify` and evaluated
at ``s = j·2π·f`` on a whole NumPy array of frequencies at a time.

Integrals over frequency (noise power, noise bandwidth) use the trapezoid rule
in ``ln f`` on a logarithmic grid: ``∫ S(f) df = ∫ S(f)·f d(ln f)``. A density
with a 1/f part or a single pole is smooth in ``ln f``, so the default 200
points per decade give about six significant digits.

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

import math
from collections.abc import Callable

import numpy as np
import sympy as sp

from ..errors import BudgetError, InvalidValueError
from ..model.circuit import to_exact
from ..model.symbols import LAPLACE

__all__ = [
    "HALF_POWER_DB",
    "bandwidth",
    "evaluation_form",
    "evaluator",
    "frequency_grid",
    "integrate",
    "noise_bandwidth",
]

#: The half-power drop, 10·log10(2) ≈ 3.0103 dB: the "−3 dB" bandwidth.
HALF_POWER_DB = 10 * math.log10(2)
#: Points per decade of the integration grid.
POINTS_PER_DECADE = 200
#: Decades searched beyond the last given frequency when the upper limit is ∞.
_MAX_EXTRA_DECADES = 16


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
    floats = {
        a: sp.Float(a, 17) for a in expr.atoms(sp.Rational) if not a.is_Integer or abs(a) > 2**52
    }
    fn = sp.lambdify(LAPLACE, expr.xreplace(floats) if floats else expr, modules="numpy")

    def log_of(s: np.ndarray) -> np.ndarray:
        return np.log(np.broadcast_to(np.asarray(fn(s), dtype=complex), np.shape(s)))

    return log_of


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
    points_per_decade: int = POINTS_PER_DECADE,
) -> float:
    """``∫ density(f) df`` from ``f_low`` to ``f_high`` (``f_high`` may be ``inf``).

    A lower limit of 0 is allowed when the density is finite there: the grid
    starts at 1 µHz and the piece below it counts as flat. A density with a
    1/f part diverges at 0 Hz and needs ``f_low > 0``. An infinite upper
    limit adds decades until the last adds less than 1e-10 of the total.
    """
    f_low, f_high = float(f_low), float(f_high)
    if f_low < 0 or not f_high > f_low:
        raise InvalidValueError(f"band {f_low:g} Hz to {f_high:g} Hz: give 0 <= f_low < f_high")
    if f_low == 0:
        start = 1e-6 if math.isinf(f_high) else min(1e-6, f_high * 1e-9)
        if not np.isfinite(density(np.array([start]))[0]):
            raise InvalidValueError("the density diverges at 0 Hz (1/f noise); give f_low > 0")
    else:
        start = f_low
    stop = f_high if math.isfinite(f_high) else max(start * 10, 1.0)
    total = _log_trapezoid(density, start, stop, points_per_decade)
    if f_low == 0:  # the piece [0, start]: the density is flat there to first order
        total += float(np.real(density(np.array([start]))[0])) * start
    if math.isinf(f_high):
        for _ in range(_MAX_EXTRA_DECADES * 4):
            piece = _log_trapezoid(density, stop, stop * 10, points_per_decade)
            total += piece
            stop *= 10
            if abs(piece) <= 1e-10 * abs(total):
                break
        else:
            raise InvalidValueError(
                "the density does not fall off fast enough to integrate to infinity; "
                "give a finite upper frequency"
            )
    return total


def _log_trapezoid(density, start: float, stop: float, points_per_decade: int) -> float:
    f = frequency_grid(start, stop, points_per_decade)
    y = np.real(np.asarray(density(f), dtype=complex)) * f
    x = np.log(f)
    return float(np.sum((y[1:] + y[:-1]) * np.diff(x)) / 2)


def noise_bandwidth(transfer: Callable[[np.ndarray], np.ndarray], reference: float = 0.0) -> float:
    """Equivalent noise bandwidth ``∫|H|² df / |H(f_ref)|²`` in hertz.

    A single pole at ``fc`` gives ``(π/2)·fc``.
    """
    h0 = abs(transfer(np.array([reference]))[0])
    if h0 == 0:
        raise InvalidValueError(f"|H| is zero at {reference:g} Hz; choose another reference")
    return integrate(lambda f: np.abs(transfer(f)) ** 2, 0.0, math.inf) / h0**2


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
    from .passband import passband

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
