"""A rational H(s) in numbers: poles, zeros, step response and settling time, NumPy only.

The step response comes from the matrix exponential of the controllable
companion form, augmented by the step input,

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
    m, c, d, w = _step_system(num, den)
    times = np.asarray(t, dtype=float)
    if np.any(times < 0) or not np.all(np.isfinite(times)):
        raise NoSolutionError("step_response: times must be finite and ≥ 0 (seconds)")
    n = c.size
    out = np.empty(times.shape)
    with np.errstate(over="ignore", invalid="ignore"):  # an unstable H grows without bound
        for index, ti in np.ndenumerate(times):
            x = expm(m * (ti * w))[:n, n] if n else np.zeros(0)
            out[index] = float(c @ x) + d
    return out


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
    m, c, d, w = _step_system(num, den)
    slowest = float(np.min(-poles.real)) / w if poles.size else 1.0
    fastest = float(np.max(np.abs(poles))) / w if poles.size else 1.0
    horizon = (math.log(1 / accuracy) + 10.0) / slowest  # scaled time
    while True:
        steps = int(min(2e5, max(2000, 40 * horizon * fastest)))
        dt = horizon / steps
        error = _response_on_grid(m, c, d, dt, steps) - final
        outside = np.nonzero(np.abs(error) > band)[0]
        if outside.size == 0:
            return 0.0
        last = int(outside[-1])
        if last < steps - steps // 10:
            break
        horizon *= 2
    lo, hi = last * dt, (last + 1) * dt

    def off(tau: float) -> float:
        return abs(float(c @ expm(m * tau)[: c.size, c.size]) + d - final) - band

    for _ in range(80):  # bisection on the last crossing
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if off(mid) > 0 else (lo, mid)
    return 0.5 * (lo + hi) / w


def _response_on_grid(m: np.ndarray, c: np.ndarray, d: float, dt: float, steps: int) -> np.ndarray:
    """The response at ``k·dt``, k = 0…steps, by repeated multiplication with ``exp(M·dt)``."""
    n = c.size
    phi = expm(m * dt)
    z = np.zeros(n + 1)
    z[n] = 1.0
    out = np.empty(steps + 1)
    for k in range(steps + 1):
        out[k] = float(c @ z[:n]) + d
        z = phi @ z
    return out
