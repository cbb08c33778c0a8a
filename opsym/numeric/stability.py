"""Numbers from a loop gain ``T(s)``: crossover, margins, peaking, closed-loop poles.

``T > 0`` at low frequency for negative feedback (:mod:`opsym.analyses.loop`).
Its phase is followed continuously from the lowest frequency up, so a loop
that starts at 0° and falls has a phase margin ``180° + ∠T(fc)`` at the
crossover ``fc`` (``|T| = 1``), and a gain margin ``−20·log10|T(f180)|`` dB
where ``∠T = −180°``. The closed loop ``T/(1 + T)`` gives the peaking; its
poles (the zeros of ``1 + T``) give stability outright and the natural
frequency and ``Q`` of the dominant (lowest) pair.

Examples
--------
A single-pole op-amp as a follower (``T = A``): phase margin near 90°.

>>> import sympy as sp
>>> from opsym.model.symbols import LAPLACE as s
>>> m = stability_margins(10**5 / (1 + s / (2 * sp.pi * 10)), "T")
>>> round(m.crossover_hz / 1e6, 4), round(m.phase_margin_deg, 3), m.stable
(1.0, 90.001, True)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import sympy as sp

from ..model.symbols import LAPLACE
from ..values import to_exact
from .frequency import evaluator, natural_frequencies

__all__ = ["Margins", "stability_margins"]

#: Grid density for the first search (points per decade).
_PER_DECADE = 200
#: Highest closed-loop degree whose poles are computed.
_MAX_DEGREE = 24


@dataclass(frozen=True)
class Margins:
    """What a loop gain says about stability (frequencies in hertz, angles in degrees).

    Attributes
    ----------
    dc_gain : float
        ``T(0)`` (``inf`` with an integrator in the loop).
    crossover_hz : float or None
        Where ``|T| = 1`` (the one with the least margin); ``None`` when ``|T|`` never
        reaches 1.
    phase_margin_deg : float or None
        ``180° + ∠T(fc)``.
    phase_crossover_hz : float or None
        Where ``∠T = −180°`` (the one with the least gain margin).
    gain_margin_db : float or None
        ``−20·log10|T(f180)|``; ``None`` when the phase never reaches −180°.
    peaking_db : float
        Peak of ``|T/(1 + T)|`` over its low-frequency value, in dB (0 when none).
    peak_hz : float or None
    poles_hz : tuple of complex
        The closed-loop poles ``p/(2π)`` (zeros of ``1 + T``), empty above degree 24.
    q : float or None
        ``Q`` of the dominant pair: ``|p|/(2·|Re p|)`` for a complex pair, else
        ``√(p1·p2)/(p1 + p2)`` for the two lowest real poles.
    f0_hz : float or None
        Its natural frequency ``|p|/2π``.
    stable : bool or None
        Every closed-loop pole in the left half plane (``None`` when not computed).
    """

    dc_gain: float
    crossover_hz: float | None
    phase_margin_deg: float | None
    phase_crossover_hz: float | None
    gain_margin_db: float | None
    peaking_db: float
    peak_hz: float | None
    poles_hz: tuple[complex, ...]
    q: float | None
    f0_hz: float | None
    stable: bool | None

    def below(self, threshold_deg: float) -> bool:
        """True when the phase margin is under ``threshold_deg`` or a pole is unstable."""
        if self.stable is False:
            return True
        return self.phase_margin_deg is not None and self.phase_margin_deg < threshold_deg


def stability_margins(loop: sp.Expr, what: str = "loop gain") -> Margins:
    """The :class:`Margins` of the loop gain ``loop`` (numbers and ``s`` only)."""
    loop = to_exact(loop, what)
    at = evaluator(loop, what)
    f = _grid(loop, at)
    t = at(f)
    mag = np.abs(t)
    phase_of = _phase_function(loop, at, f, t)
    phase = phase_of(f)

    def phase_at(x: float) -> float:  # continuous phase at f = 10**x
        return float(phase_of(np.array([10.0**x]))[0])

    def log_mag(x: float) -> float:
        return math.log(abs(complex(at(np.array([10.0**x]))[0])))

    xs = np.log10(f)
    cross = [_refine(log_mag, xs, i) for i in _sign_changes(np.log(mag))]
    pms = [(180.0 + phase_at(x), 10.0**x) for x in cross]
    flips = [_refine(lambda x: phase_at(x) + 180.0, xs, i) for i in _sign_changes(phase + 180)]
    gms = [(-20 * math.log10(math.exp(log_mag(x))), 10.0**x) for x in flips]
    pm = min(pms) if pms else (None, None)
    gm = min(gms) if gms else (None, None)
    peaking, peak_hz = _peaking(at, f)
    poles = _closed_loop_poles(loop)
    q, f0 = _dominant(poles)
    return Margins(
        dc_gain=_dc(loop),
        crossover_hz=pm[1],
        phase_margin_deg=pm[0],
        phase_crossover_hz=gm[1],
        gain_margin_db=gm[0],
        peaking_db=peaking,
        peak_hz=peak_hz,
        poles_hz=tuple(p / (2 * math.pi) for p in poles),
        q=q,
        f0_hz=f0,
        stable=all(p.real < 0 for p in poles) if poles else None,
    )


def _grid(loop: sp.Expr, at) -> np.ndarray:
    breaks = [b for b in natural_frequencies(loop) if 0 < b < 1e30]
    lo = min(breaks) / 1e4 if breaks else 1e-3
    hi = max(breaks) * 1e4 if breaks else 1e9
    while abs(at(np.array([hi]))[0]) > 1e-3 and hi < 1e24:
        hi *= 10
    n = math.ceil(math.log10(hi / lo) * _PER_DECADE) + 1
    return np.logspace(math.log10(lo), math.log10(hi), n)


def _phase_function(loop: sp.Expr, at, f: np.ndarray, t: np.ndarray):
    """``f ↦ ∠T`` in degrees, followed continuously up from ``f[0]`` (in (−180°, 180°] there).

    The phase of a ratio of polynomials is the sum of the phases of its roots'
    factors ``j·ω − r``, each continuous in ω (a right-half-plane root's turns through
    −180°); it puts each exact value on its right branch however sharp a resonance
    is. Without the roots, steps over 45° on the grid ``f`` are bisected and the grid's
    phase interpolated.
    """
    wrapped = np.degrees(np.angle(t))
    near = _root_phase(loop)
    if near is None:
        xs = np.log10(f)
        steps = [_phase_step(at, xs[i], xs[i + 1], wrapped[i], wrapped[i + 1], 60)
                 for i in range(len(f) - 1)]  # fmt: skip
        grid = np.concatenate(([wrapped[0]], wrapped[0] + np.cumsum(steps)))

        def near(fs: np.ndarray) -> np.ndarray:
            return np.interp(np.log10(fs), xs, grid)

    shift = 360.0 * np.round((near(f[:1])[0] - wrapped[0]) / 360.0)

    def phase(fs: np.ndarray) -> np.ndarray:
        exact = np.degrees(np.angle(at(fs)))
        return exact + 360.0 * np.round((near(fs) - shift - exact) / 360.0)

    return phase


def _root_phase(loop: sp.Expr):
    """``f ↦ ∠T(j·2π·f)`` in degrees from the roots, continuous; ``None`` if unavailable."""
    num, den = sp.fraction(sp.cancel(sp.together(loop)))
    try:
        polys = [sp.Poly(num, LAPLACE), sp.Poly(den, LAPLACE)]
    except sp.PolynomialError:
        return None
    if any(p.degree() > _MAX_DEGREE or p.free_symbols - {LAPLACE} for p in polys):
        return None
    try:
        zeros, poles = ([complex(r) for r in p.nroots(n=30, maxsteps=500)] if p.degree() > 0
                        else [] for p in polys)  # fmt: skip
        sign = float(polys[0].LC()) / float(polys[1].LC())
    except (sp.polys.polyerrors.NoConvergence, TypeError, ValueError, ZeroDivisionError):
        return None

    def factor(w: np.ndarray, r: complex) -> np.ndarray:
        theta = np.degrees(np.arctan2(w - r.imag, -r.real))
        return np.where(theta > 0, theta - 360.0, theta) if r.real > 0 else theta

    def phase(f: np.ndarray) -> np.ndarray:
        w = 2 * math.pi * np.asarray(f, dtype=float)
        total = np.full(w.shape, 180.0 if sign < 0 else 0.0)
        for r in zeros:
            total += factor(w, r)
        for r in poles:
            total -= factor(w, r)
        return total

    return phase


def _phase_step(at, x0: float, x1: float, p0: float, p1: float, depth: int) -> float:
    step = (p1 - p0 + 180.0) % 360.0 - 180.0
    if abs(step) <= 45.0 or depth == 0 or not (math.isfinite(p0) and math.isfinite(p1)):
        return step
    xm = 0.5 * (x0 + x1)
    pm = math.degrees(float(np.angle(at(np.array([10.0**xm]))[0])))
    return _phase_step(at, x0, xm, p0, pm, depth - 1) + _phase_step(at, xm, x1, pm, p1, depth - 1)


def _sign_changes(y: np.ndarray) -> list[int]:
    ok = np.isfinite(y)
    return [i for i in range(len(y) - 1) if ok[i] and ok[i + 1] and (y[i] > 0) != (y[i + 1] > 0)]


def _refine(fn, xs: np.ndarray, i: int) -> float:
    """The root of ``fn`` between ``xs[i]`` and ``xs[i + 1]``, by bisection (log10 of f)."""
    a, b = float(xs[i]), float(xs[i + 1])
    fa = fn(a)
    for _ in range(80):
        m = 0.5 * (a + b)
        fm = fn(m)
        if fm == 0 or b - a < 1e-15:
            return m
        if (fm > 0) == (fa > 0):
            a, fa = m, fm
        else:
            b = m
    return 0.5 * (a + b)


def _golden_max(fn, a: float, b: float) -> float:
    """The maximum of a unimodal ``fn`` on ``[a, b]`` by golden-section search."""
    r = (math.sqrt(5) - 1) / 2
    c, d = b - r * (b - a), a + r * (b - a)
    fc, fd = fn(c), fn(d)
    for _ in range(100):
        if b - a < 1e-13:
            break
        if fc > fd:
            b, d, fd = d, c, fc
            c = b - r * (b - a)
            fc = fn(c)
        else:
            a, c, fc = c, d, fd
            d = a + r * (b - a)
            fd = fn(d)
    return 0.5 * (a + b)


def _peaking(at, f: np.ndarray) -> tuple[float, float | None]:
    closed = np.abs(at(f) / (1 + at(f)))
    low = closed[0]
    i = int(np.nanargmax(closed))
    if not np.isfinite(low) or low == 0 or i == 0 or closed[i] <= low * (1 + 1e-12):
        return 0.0, None
    xs = np.log10(f)
    a, b = xs[max(i - 1, 0)], xs[min(i + 1, len(xs) - 1)]

    def closed_at(x: float) -> float:
        v = complex(at(np.array([10.0**x]))[0])
        return abs(v / (1 + v))

    x = _golden_max(closed_at, float(a), float(b))
    return 20 * math.log10(closed_at(x) / low), float(10.0**x)


def _closed_loop_poles(loop: sp.Expr) -> list[complex]:
    num, _ = sp.fraction(sp.cancel(sp.together(1 + loop)))
    try:
        poly = sp.Poly(sp.expand(num), LAPLACE)
    except sp.PolynomialError:
        return []
    if not 0 < poly.degree() <= _MAX_DEGREE:
        return []
    return [complex(r) for r in poly.nroots(n=30, maxsteps=500)]


def _dominant(poles: list[complex]) -> tuple[float | None, float | None]:
    pairs = [p for p in poles if p.imag > 1e-9 * abs(p)]
    if pairs:
        p = min(pairs, key=abs)
        return abs(p) / (2 * abs(p.real)) if p.real else math.inf, abs(p) / (2 * math.pi)
    real = sorted(abs(p.real) for p in poles if p.real != 0)
    if len(real) < 2:
        return None, None
    w0 = math.sqrt(real[0] * real[1])
    return w0 / (real[0] + real[1]), w0 / (2 * math.pi)


def _dc(loop: sp.Expr) -> float:
    value = sp.cancel(sp.together(loop)).xreplace({LAPLACE: sp.S.Zero})
    return float(value) if value.is_finite else math.inf
