"""A rational H(s) in numbers: poles, zeros, step response and settling time, NumPy only.

The step response is a sum of partial fractions where the poles are simple
and apart (exact to rounding whatever their spread), and otherwise the matrix
exponential of the controllable companion form, augmented by the step input,

    M = [[A, B], [0, 0]],   exp(M·t) = [[exp(A·t), ∫₀ᵗ exp(A·τ)dτ·B], [0, 1]],

so integrators and repeated poles need no special case (Van Loan's block
form). Time is scaled by the poles' geometric-mean magnitude, so the
companion matrix stays well conditioned whatever the circuit's frequencies.

Examples
--------
A first-order low-pass, τ = 1 ms, settles to 0.1 % in τ·ln(1000):

>>> import math
>>> round(settling_time([1.0], [1e-3, 1.0], 0.001) / (1e-3 * math.log(1000)), 9)
1.0
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

import numpy as np

from ..errors import NoSolutionError

__all__ = ["expm", "poly_roots", "settling_time", "step_response"]


def poly_roots(coefficients: np.ndarray) -> np.ndarray:
    """Roots of a polynomial given highest power first (leading zeros dropped)."""
    c = np.trim_zeros(np.asarray(coefficients, dtype=float), "f")
    return np.roots(c) if c.size > 1 else np.array([], dtype=complex)


def expm(m: np.ndarray) -> np.ndarray:
    """``exp(m)`` by scaling and squaring of a degree-(8, 8) Padé approximant."""
    norm = float(np.linalg.norm(m, 1))
    squarings = max(0, math.ceil(math.log2(norm / 0.5))) if norm > 0.5 else 0
    a = m / 2.0**squarings
    n = a.shape[0]
    c = 1.0
    term = np.eye(n)
    num = np.eye(n)
    den = np.eye(n)
    q = 8
    for k in range(1, q + 1):
        c = c * (q - k + 1) / (k * (2 * q - k + 1))
        term = term @ a
        num = num + c * term
        den = den + (-1) ** k * c * term
    e = np.linalg.solve(den, num)
    for _ in range(squarings):
        e = e @ e
    return e


def _scaled(num: np.ndarray, den: np.ndarray) -> tuple[np.ndarray, np.ndarray, float]:
    """Coefficients in ``p = s/w`` (den monic) and the scale ``w``, rad/s."""
    num = np.trim_zeros(np.asarray(num, dtype=float), "f")
    den = np.trim_zeros(np.asarray(den, dtype=float), "f")
    if den.size == 0:
        raise NoSolutionError("the denominator of H(s) is zero; no response")
    if num.size > den.size:
        raise NoSolutionError(
            "H(s) has more zeros than poles (an improper transfer): its step response "
            "has impulses; add the poles the circuit's op-amps or parasitics give"
        )
    poles = poly_roots(den)
    mags = np.abs(poles[np.abs(poles) > 0])
    w = float(np.exp(np.mean(np.log(mags)))) if mags.size else 1.0
    n = den.size - 1
    powers = w ** np.arange(n, -1, -1)  # s^k = w^k p^k, highest first
    den_p = den * powers
    num_p = np.concatenate([np.zeros(den.size - num.size), num]) * powers
    return num_p / den_p[0], den_p / den_p[0], w


def _step_system(num: np.ndarray, den: np.ndarray) -> tuple[np.ndarray, np.ndarray, float, float]:
    """``(M, C, D, w)``: the augmented companion matrix in scaled time, output row, feedthrough."""
    b, a, w = _scaled(num, den)
    n = a.size - 1
    d = float(b[0])
    c = (b[1:] - d * a[1:])[::-1]  # strictly proper part, lowest power first
    m = np.zeros((n + 1, n + 1))
    if n:
        m[: n - 1, 1:n] = np.eye(n - 1)
        m[n - 1, :n] = -a[1:][::-1]
        m[n - 1, n] = 1.0  # the step drives the last state
    return m, c, d, w


def step_response(num: np.ndarray, den: np.ndarray, t: np.ndarray) -> np.ndarray:
    """The unit-step response of ``num(s)/den(s)`` (highest power first) at times ``t`` ≥ 0.

    Examples
    --------
    >>> y = step_response([1.0], [1.0, 1.0], np.array([0.0, 1.0]))
    >>> [round(float(v), 12) for v in y]  # 1 − e^(−t)
    [0.0, 0.632120558829]
    """
    times = np.asarray(t, dtype=float)
    if np.any(times < 0) or not np.all(np.isfinite(times)):
        raise NoSolutionError("step_response: times must be finite and ≥ 0 (seconds)")
    response, w = _step_function(num, den)
    with np.errstate(over="ignore", invalid="ignore"):  # an unstable H grows without bound
        return response(times.ravel() * w).reshape(times.shape)


def _step_function(num: Any, den: Any) -> tuple[Callable[[np.ndarray], np.ndarray], float]:
    """The step response as a function of scaled time ``w·t``, and ``w``.

    Partial fractions where the poles are simple, apart and not at zero
    (``y = H(0) + Σ R_i·e^(p_i·τ)/p_i``, exact to rounding whatever the spread
    of the poles); the matrix exponential otherwise.
    """
    b, a, w = _scaled(num, den)
    poles = poly_roots(a)
    if poles.size and _apart(poles):
        residues = np.polyval(b, poles) / np.polyval(np.polyder(a), poles)
        weights = residues / poles
        h0 = b[-1] / a[-1]

        def partial_fractions(tau: np.ndarray) -> np.ndarray:
            terms = np.exp(np.multiply.outer(tau, poles)) @ weights
            return np.real(h0 + terms)

        return partial_fractions, w
    m, c, d, _ = _step_system(num, den)
    n = c.size

    def exponential(tau: np.ndarray) -> np.ndarray:
        out = np.empty(tau.shape)
        for index, ti in np.ndenumerate(tau):
            out[index] = (float(c @ expm(m * ti)[:n, n]) if n else 0.0) + d
        return out

    return exponential, w


def _apart(poles: np.ndarray) -> bool:
    """Every pole non-zero and at least 1e-4 (relative) from every other."""
    mags = np.abs(poles)
    if np.min(mags) == 0:
        return False
    gaps = np.abs(np.subtract.outer(poles, poles)) + np.eye(poles.size) * np.max(mags)
    return bool(np.all(gaps >= 1e-4 * np.maximum.outer(mags, mags)))


def settling_time(num: np.ndarray, den: np.ndarray, accuracy: float = 0.001) -> float:
    """The last time the step response is outside ``±accuracy·|final value|``, seconds.

    Needs every pole in the left half-plane and a final value that is not zero.
    """
    if not 0 < accuracy < 1:
        raise NoSolutionError(f"settling_time: accuracy {accuracy!r} must be between 0 and 1")
    poles = poly_roots(den)
    if poles.size and np.max(poles.real) >= 0:
        raise NoSolutionError(
            "the step response has no final value: H(s) has a pole on or right of the "
            f"imaginary axis ({', '.join(f'{p:.4g}' for p in poles[poles.real >= 0])} rad/s)"
        )
    d0 = float(np.asarray(den, dtype=float)[-1])
    final = float(np.asarray(num, dtype=float)[-1]) / d0
    if final == 0:
        raise NoSolutionError(
            "the step response settles to zero (no DC gain); an error band relative to "
            "the final value is empty"
        )
    band = accuracy * abs(final)
    response, w = _step_function(num, den)
    slowest = float(np.min(-poles.real)) / w if poles.size else 1.0
    fastest = float(np.max(np.abs(poles))) / w if poles.size else 1.0
    horizon = (math.log(1 / accuracy) + 10.0) / slowest  # scaled time
    while True:
        steps = int(min(2e5, max(2000, 40 * horizon * fastest)))
        grid = np.linspace(0.0, horizon, steps + 1)
        outside = np.nonzero(np.abs(response(grid) - final) > band)[0]
        if outside.size == 0:
            return 0.0
        last = int(outside[-1])
        if last < steps - steps // 10:
            break
        horizon *= 2
    lo, hi = float(grid[last]), float(grid[last + 1])
    for _ in range(80):  # bisection on the last crossing
        mid = 0.5 * (lo + hi)
        outside_mid = abs(float(response(np.array([mid]))[0]) - final) > band
        lo, hi = (mid, hi) if outside_mid else (lo, mid)
    return 0.5 * (lo + hi) / w
