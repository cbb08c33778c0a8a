"""Frequency response of a Laplace-domain result: numbers from its transfer functions.

:class:`FrequencyResponse` is the part of :class:`~opsym.analyses.result.Result`
that evaluates coefficients at ``s = j·2π·f`` (vectorised with NumPy): the
response itself, the −3 dB bandwidth and the gain error versus frequency. The
closed forms come from the same derivation as the DC terms; ``domain="dc"``
is their ``s = 0`` limit.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import sympy as sp

from ..errors import InvalidValueError, NoSolutionError
from ..model.limits import check_float, check_frequencies
from ..numeric.frequency import HALF_POWER_DB, bandwidth, evaluation_form, evaluator

__all__ = ["FrequencyResponse"]


class FrequencyResponse:
    """Mixin of :class:`~opsym.analyses.result.Result` for ``domain="s"`` results.

    It relies on the result's ``_domain``, ``_signal``, ``_source_symbol``,
    ``compact_coefficient``, ``coefficient`` and ``ideal``; the form it evaluates
    is chosen by :func:`opsym.numeric.frequency.evaluation_form`.
    """

    __slots__ = ()

    # Provided by Result (declared for type checkers).
    _domain: str

    def _signal(self, signal: Any) -> sp.Symbol:
        raise NotImplementedError

    def _source_symbol(self, source: Any) -> sp.Symbol:
        raise NotImplementedError

    def compact_coefficient(self, source: Any) -> sp.Expr:
        raise NotImplementedError

    def coefficient(self, source: Any) -> sp.Expr:
        raise NotImplementedError

    def ideal(self) -> Any:
        raise NotImplementedError

    def response(
        self, f: Any, source: str | sp.Symbol | None = None, ideal: bool = False
    ) -> np.ndarray:
        """A coefficient evaluated at ``s = j·2π·f``: complex, vectorised over ``f`` (Hz).

        ``source`` defaults to the only signal; ``ideal`` evaluates the nullor
        limit instead. Every symbol but ``s`` needs a value (``values=`` or
        :meth:`subs`).

        Examples
        --------
        >>> import opsym
        >>> c = opsym.Circuit("follower")
        >>> c.voltage_source("Vin", "p", "0")
        >>> c.opamp("U1", plus="p", minus="out", out="out", gain="pole")
        >>> res = c.analyze("out", domain="s", values={"U1.A0": 1e5, "U1.GBW": 1e6})
        >>> h = res.response([0.0, 1e6])
        >>> [round(float(abs(x)), 5) for x in h]  # A0/(1 + A0) at DC; about 1/√2 at GBW
        [0.99999, 0.7071]
        """
        self._need_s("response")
        check_frequencies(f, "response f")
        sym = self._signal(source) if source is None else self._source_symbol(source)
        result = self.ideal() if ideal else self

        return evaluator(result._numeric_form(sym), f"the coefficient of {sym}")(f)

    def bandwidth(
        self, source: str | sp.Symbol | None = None, drop_db: float = HALF_POWER_DB
    ) -> float:
        """Frequency (Hz) where ``|H|`` first falls ``drop_db`` below its DC value.

        Examples
        --------
        >>> import opsym
        >>> c = opsym.Circuit("non-inverting, noise gain 10")
        >>> c.voltage_source("Vin", "p", "0")
        >>> c.resistor("R1", "n", "0", value="1k")
        >>> c.resistor("R2", "n", "out", value="9k")
        >>> c.opamp("U1", plus="p", minus="n", out="out", gain="pole")
        >>> res = c.analyze("out", domain="s", values={"U1.A0": 1e6, "U1.GBW": 1e6})
        >>> round(res.bandwidth() / 1e3, 2)  # GBW/NG·(1 + A0·β)/(A0·β) = 100.00 kHz
        100.0
        """
        drop_db = check_float(drop_db, "bandwidth drop_db")
        if not drop_db > 0:
            raise InvalidValueError(f"bandwidth: drop_db = {drop_db:g}; give a drop > 0, e.g. 3")
        self._need_s("bandwidth")
        sym = self._signal(source) if source is None else self._source_symbol(source)

        return bandwidth(evaluator(self._numeric_form(sym), f"the coefficient of {sym}"),
                         drop_db)  # fmt: skip

    def gain_error_response(self, f: Any, signal: str | sp.Symbol | None = None) -> np.ndarray:
        """Complex fractional gain error ``H/H_ideal − 1`` at ``f`` (Hz).

        ``|…|`` is the magnitude error the trade quotes; for a single-pole
        op-amp well above its pole it is close to ``f·NG/GBW``.
        """
        check_frequencies(f, "gain_error_response f")
        self._need_s("gain_error_response")
        sym = self._signal(signal)
        h = self.response(f, sym)
        h0 = self.response(f, sym, ideal=True)
        if np.any(h0 == 0):
            raise NoSolutionError(f"the ideal gain from {sym} is zero at some frequency")
        return h / h0 - 1

    def _need_s(self, what: str) -> None:
        if self._domain != "s":
            raise InvalidValueError(
                f"{what} needs a Laplace-domain result; analyse with domain='s'"
            )

    def _numeric_form(self, sym: sp.Symbol) -> sp.Expr:

        return evaluation_form(self.compact_coefficient(sym), lambda: self.coefficient(sym))
