"""A transfer function of an s-domain result in numbers: poles, zeros, coefficients, step.

:func:`transfer_function` takes one source's coefficient of an s-domain
:class:`~opsym.Result` whose other symbols all have values, and gives a
:class:`TransferFunction`: the numerator and denominator coefficients
(highest power of ``s`` first, the denominator made monic), the poles and
zeros in rad/s, the step response and the settling time (NumPy only, from
:mod:`opsym.numeric.lti`), and :meth:`TransferFunction.to_lti` for SciPy
(an optional dependency, imported only there).

Examples
--------
An RC low-pass buffered by a follower, τ = R·C = 1 ms:

>>> import math, opsym
>>> c = opsym.Circuit("RC low-pass")
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "p", value="10k")
>>> c.capacitor("C1", "p", "0", value="100n")
>>> c.opamp("U1", plus="p", minus="out", out="out")
>>> h = opsym.transfer_function(c.analyze("out", domain="s"))
>>> h.numerator, h.denominator
(array([1000.]), array([   1., 1000.]))
>>> h.poles
array([-1000.+0.j])
>>> round(h.settling_time(0.001) / (1e-3 * math.log(1000)), 9)  # τ·ln(1000)
1.0
"""

from __future__ import annotations

from typing import Any

import numpy as np
import sympy as sp

from ..errors import ArgumentTypeError, InvalidValueError, MissingDependencyError, NoSolutionError
from ..model.limits import check_float, shown
from ..model.symbols import LAPLACE
from ..numeric.lti import poly_roots, settling_time, step_response
from .result import Result

__all__ = ["TransferFunction", "transfer_function"]


class TransferFunction:
    """``H(s) = numerator(s)/denominator(s)`` in numbers (see :func:`transfer_function`).

    ``exact`` keeps the exact rational form it came from.
    """

    __slots__ = ("_den", "_exact", "_num", "_source")

    def __init__(self, exact: sp.Expr, numerator: Any, denominator: Any, source: str) -> None:
        self._exact = exact
        self._num = np.asarray(numerator, dtype=float)
        self._den = np.asarray(denominator, dtype=float)
        self._source = source

    @property
    def exact(self) -> sp.Expr:
        """The exact ``H(s)`` (a ratio of polynomials in ``s`` with exact coefficients)."""
        return self._exact

    @property
    def source(self) -> str:
        """The source this is the transfer from."""
        return self._source

    @property
    def numerator(self) -> np.ndarray:
        """Numerator coefficients, highest power of ``s`` first (denominator monic)."""
        return self._num.copy()

    @property
    def denominator(self) -> np.ndarray:
        """Denominator coefficients, highest power of ``s`` first, the first one 1."""
        return self._den.copy()

    @property
    def poles(self) -> np.ndarray:
        """The poles, rad/s (roots of the denominator), as complex numbers."""
        return poly_roots(self._den).astype(complex)

    @property
    def zeros(self) -> np.ndarray:
        """The finite zeros, rad/s (roots of the numerator), as complex numbers."""
        return poly_roots(self._num).astype(complex)

    @property
    def dc_gain(self) -> float:
        """``H(0)``; infinite (with the sign of the low-frequency gain) for an integrator."""
        if self._den[-1] == 0:
            return float("inf") if self._num[-1] >= 0 else float("-inf")
        return float(self._num[-1] / self._den[-1])

    def __call__(self, s: Any) -> np.ndarray:
        """``H`` at complex frequency ``s`` (rad/s; ``1j·2π·f`` for a frequency ``f``)."""
        z = np.asarray(s, dtype=complex)
        return np.polyval(self._num, z) / np.polyval(self._den, z)

    def step_response(self, t: Any) -> np.ndarray:
        """The response to a unit step at ``t = 0``, at times ``t`` (s), NumPy only.

        Examples
        --------
        >>> h = TransferFunction(sp.S.One, [1.0], [1.0, 1.0], "Vin")
        >>> round(float(h.step_response(1.0)), 12)  # 1 − 1/e
        0.632120558829
        """
        return step_response(self._num, self._den, _times(t))

    def settling_time(self, accuracy: float = 0.001) -> float:
        """Time (s) after which the step response stays within ``±accuracy`` of its final value.

        The band is relative to the final value (0.001: 0.1 %). Raises
        :class:`~opsym.NoSolutionError` for an unstable response, an
        integrator or a response that settles to zero.
        """
        acc = check_float(accuracy, "settling_time accuracy")
        if not 0 < acc < 1:
            raise InvalidValueError(
                f"settling_time accuracy {shown(accuracy)} must be between 0 and 1 "
                "(0.001 for 0.1 %)"
            )
        return settling_time(self._num, self._den, acc)

    def to_lti(self) -> Any:
        """The same ``H(s)`` as a :class:`scipy.signal.lti` (``.step()``, ``.freqresp()``…).

        SciPy is an optional dependency; :class:`~opsym.MissingDependencyError`
        says how to install it when it is absent.
        """
        try:
            from scipy import signal  # optional dependency, imported where it is needed
        except ImportError:
            raise MissingDependencyError(
                "TransferFunction.to_lti needs SciPy; install it with: pip install scipy"
            ) from None
        return signal.lti(self._num, self._den)

    def __repr__(self) -> str:
        return f"<TransferFunction from {self._source}: {len(self._den) - 1} poles>"


def transfer_function(result: Result, source: str | sp.Symbol | None = None) -> TransferFunction:
    """The transfer from ``source`` (default: the one signal) of an s-domain result, in numbers.

    Every symbol other than ``s`` must have a value (``analyze(values=...)``
    or :meth:`Result.subs`); the message names those that do not.
    """
    if not isinstance(result, Result):
        raise InvalidValueError(
            f"transfer_function: {shown(result)} is not a Result; give "
            "circuit.analyze(output, domain='s')"
        )
    if result.domain != "s":
        raise InvalidValueError(
            "transfer_function needs an s-domain result: analyze(output, domain='s')"
        )
    sym = result._signal(source)
    h = sp.cancel(sp.together(result.coefficient(sym)))
    free = sorted(str(x) for x in h.free_symbols - {LAPLACE})
    if free:
        raise InvalidValueError(
            f"the transfer from {sym} still has the symbols {', '.join(free)}; give them "
            "values with analyze(values=...) or Result.subs({...})"
        )
    if h == 0:
        raise NoSolutionError(f"{sym} does not reach the output; its transfer is zero")
    num, den = sp.fraction(h)
    num_p, den_p = sp.Poly(num, LAPLACE), sp.Poly(den, LAPLACE)
    lead = den_p.LC()
    numerator = [float(c / lead) for c in num_p.all_coeffs()]
    denominator = [float(c / lead) for c in den_p.all_coeffs()]
    return TransferFunction(h, numerator, denominator, str(sym))


def _times(t: Any) -> np.ndarray:
    """``t`` (seconds, a number or an array) as floats, each finite and at least 0."""
    if isinstance(t, (str, bytes, bool)) or t is None:
        raise ArgumentTypeError(
            f"step_response: expected times in seconds as numbers (a number or an array), "
            f"not {shown(t)}"
        )
    try:
        times = np.asarray(t, dtype=float)
    except (TypeError, ValueError, OverflowError):
        raise ArgumentTypeError(
            f"step_response: expected times in seconds as numbers, not {shown(t)}"
        ) from None
    if not np.all(np.isfinite(times)) or np.any(times < 0) or np.any(times > 1e150):
        raise InvalidValueError("step_response: times must be finite numbers of at least 0 s")
    return times
