"""Frequency response of a Laplace-domain result: numbers from its transfer functions.

:class:`FrequencyResponse` is the part of :class:`~opsym.analyses.result.Result`
that evaluates coefficients at ``s = j·2π·f`` (vectorised with NumPy): the
response itself, the −3 dB bandwidth and the gain error versus frequency. The
closed forms come from the same derivation as the DC terms; ``domain="dc"``
is their ``s = 0`` limit.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import sympy as sp

from ..errors import InvalidValueError, NoSolutionError
from ..model.limits import check_float, check_frequencies
from ..numeric.frequency import HALF_POWER_DB, bandwidth, evaluation_form, evaluator
from ..numeric.passband import Passband, passband

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

        Found exactly from the rational function (:func:`opsym.numeric.frequency.bandwidth`);
        raises :class:`~opsym.InvalidValueError` when the DC gain is zero or
        infinite, or ``|H|`` never falls that far (use :meth:`passband`).

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

        return bandwidth(self._exact_form(self._pick(source)), drop_db)

    def passband(
        self, source: str | sp.Symbol | None = None, drop_db: float = HALF_POWER_DB
    ) -> Passband:
        """The response's kind, band edges and figures of merit.

        Exact, from the rational function: :func:`opsym.numeric.passband.passband`.

        Examples
        --------
        >>> import opsym
        >>> c = opsym.Circuit("AC-coupled follower")
        >>> c.voltage_source("Vin", "in", "0")
        >>> c.capacitor("C1", "in", "p", value="1u")
        >>> c.resistor("R1", "p", "0", value="100k")
        >>> c.opamp("U1", plus="p", minus="out", out="out")
        >>> band = c.analyze("out", domain="s").passband()
        >>> band.kind, round(band.edges[0], 4)  # 1/(2π·R1·C1)
        ('high-pass', 1.5915)
        """
        self._need_s("passband")
        return passband(self._exact_form(self._pick(source)), drop_db)

    def gain_error_frequency(self, signal: str | sp.Symbol | None = None) -> tuple[float, str]:
        """Where the gain error is quoted: ``(f, "DC")`` or ``(f, "passband")``.

        0 Hz when the ideal gain (nullor op-amps) is finite and nonzero there;
        otherwise in the passband: the ideal response's peak for a band-pass,
        the geometric middle ``√(f1·f2)`` of this response's −3 dB band when it
        is a band-pass (an AC-coupled stage with a real op-amp), or a thousand
        times the edge of a high-pass (its response there is within 1 ppm of
        its high-frequency value for a first-order edge).

        Raises
        ------
        NoSolutionError
            No passband is found (give the frequency yourself).

        Examples
        --------
        >>> import opsym
        >>> c = opsym.Circuit("AC-coupled follower")
        >>> c.voltage_source("Vin", "in", "0")
        >>> c.capacitor("C1", "in", "p", value="1u")
        >>> c.resistor("R1", "p", "0", value="100k")
        >>> c.opamp("U1", plus="p", minus="out", out="out", gain="pole")
        >>> res = c.analyze("out", domain="s", values={"U1.A0": "1M", "U1.GBW": "1M"})
        >>> f, where = res.gain_error_frequency()
        >>> round(f, 1), where  # √(1.5915 Hz · 1 MHz)
        (1261.6, 'passband')
        """
        self._need_s("gain_error_frequency")
        sym = self._signal(signal)
        ideal = self.ideal().passband(sym)
        if ideal.reference == "DC":
            return 0.0, "DC"
        if ideal.kind == "band-pass" and ideal.centre is not None:
            return ideal.centre, "passband"
        real = self.passband(sym)
        if real.kind == "band-pass":
            return math.sqrt(real.edges[0] * real.edges[1]), "passband"
        if ideal.kind == "high-pass":
            return 1000 * ideal.edges[0], "passband"
        raise NoSolutionError(
            f"the ideal gain from {sym} is a {ideal.kind} response with no passband "
            "to quote a gain error in; give the frequency (FrequencySection(reference=...))"
        )

    def gain_error_response(self, f: Any, signal: str | sp.Symbol | None = None) -> np.ndarray:
        """Complex fractional gain error ``H/H_ideal − 1`` at ``f`` (Hz).

        ``|…|`` is the magnitude error the trade quotes; for a single-pole
        op-amp well above its pole it is close to ``f·NG/GBW``. Where the ideal
        gain is zero (0 Hz for a high-pass or band-pass) the error is not
        defined and is ``nan``; :meth:`gain_error_frequency` says where to
        quote it.

        Raises
        ------
        NoSolutionError
            The ideal gain from ``signal`` is zero at every frequency.
        """
        check_frequencies(f, "gain_error_response f")
        self._need_s("gain_error_response")
        sym = self._signal(signal)
        if self.ideal().coefficient(sym) == 0:
            raise NoSolutionError(f"the ideal gain from {sym} is zero; no fractional error")
        h = self.response(f, sym)
        h0 = self.response(f, sym, ideal=True)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(h0 == 0, complex("nan"), h / np.where(h0 == 0, 1, h0) - 1)

    def _need_s(self, what: str) -> None:
        if self._domain != "s":
            raise InvalidValueError(
                f"{what} needs a Laplace-domain result; analyse with domain='s'"
            )

    def _pick(self, source: Any) -> sp.Symbol:
        return self._signal(source) if source is None else self._source_symbol(source)

    def _exact_form(self, sym: sp.Symbol) -> sp.Expr:
        """The coefficient as one rational function: a product as it is, else collected."""
        compact = self.compact_coefficient(sym)
        return compact if not compact.is_Add else self.coefficient(sym)

    def _numeric_form(self, sym: sp.Symbol) -> sp.Expr:

        return evaluation_form(self.compact_coefficient(sym), lambda: self.coefficient(sym))
