"""Resistor tolerance in a budget: how far each source's coefficient can move, and CMRR.

A budget reads one signal; every other source with a value (a common-mode
input, a reference, a second input) puts ``coefficient·value`` at the output.
The signal's own coefficient moving with tolerance is the gain-error row; every
other source's coefficient moving is a row of its own. A source that the
network nominally rejects (a common-mode input of a balanced difference
amplifier, coefficient 0) has no nominal contribution at all, yet resistor
mismatch lets ``Acm·Vcm`` through: that row is often the largest in the budget.

Each :class:`Spread` is evaluated at the tolerance corners (exact for the
linear-fractional coefficients of resistor networks, up to ``MAX_CORNERS``
parts) or, beyond, by the first-order bound ``Σ|∂y/∂Rᵢ·Rᵢ|·tᵢ``; the part
spread widens with TCR away from 25 °C. :class:`Rejection` gives the network's
CMRR, ``min |Ad|/|Acm|`` over the same corners.

Examples
--------
>>> import sympy as sp
>>> R1, R2, R3, R4 = sp.symbols("R1 R2 R3 R4", positive=True)
>>> acm = (R1 * R4 - R2 * R3) / (R1 * (R3 + R4))   # Sedra & Smith §2.4 [pub]
>>> ad = R4 / (R3 + R4) * (1 + R2 / R1)
>>> values = {R1: 2e3, R2: 200e3, R3: 2e3, R4: 200e3}
>>> parts = (R1, R2, R3, R4)
>>> one = np.full(4, 0.01)
>>> spread = Spread.of(acm, parts, values, one, 0 * one)
>>> round(spread.deviation(25.0), 6)
0.0404
>>> round(Rejection.of(ad, acm, parts, values, one, 0 * one).cmrr_db(25.0), 2)
68.04
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import sympy as sp

from ..errors import BudgetError
from ._numbers import Exact, compile_columns, exact_number, relative_sensitivities
from .params import REFERENCE_TEMPERATURE

MAX_CORNERS = 12  # as opsym.study.tolerance.MAX_CORNERS (not imported: no cycle)
#: A non-signal source whose coefficient is at most this fraction of the signal
#: gain is one the network is built to reject: a common-mode input.
REJECTED = 1e-3


def corner_signs(n: int) -> np.ndarray:
    """Every combination of ±1 over ``n`` parts, shape ``(2^n, n)``."""
    idx = np.arange(2**n, dtype=np.int64)[:, None]
    bits = (idx >> np.arange(n, dtype=np.int64)) & 1
    return (2 * bits - 1).astype(float)


@dataclass(frozen=True)
class Spread:
    """How far one coefficient moves when the parts move within their tolerances."""

    call: Any  # compiled coefficient over the parts' columns
    nominal: np.ndarray
    base_t: np.ndarray
    tcr: np.ndarray
    sensitivities: np.ndarray | None  # ∂y/∂x·x, for the first-order bound
    nominal_value: float

    @classmethod
    def of(cls, expr: sp.Expr, parts: Sequence[sp.Symbol], values: Mapping[sp.Symbol, Any],
           base_t: np.ndarray, tcr: np.ndarray) -> Spread:  # fmt: skip
        """Compile ``expr`` once over ``parts``; every other symbol takes its value."""
        exact = Exact({s: v if isinstance(v, sp.Basic) else exact_number(float(v))
                       for s, v in values.items()})  # fmt: skip
        nominal = np.array([float(exact.values[p]) for p in parts])
        fixed = {s: float(v) for s, v in exact.values.items() if s not in parts}
        call = compile_columns(expr, parts, fixed)
        y0 = exact.number(expr, "a toleranced coefficient")
        if not math.isfinite(float(call(nominal[:, None])[0])):
            raise BudgetError(
                "a toleranced coefficient leaves the floating-point range at its nominal "
                "values; give the parts values in ohms of ordinary size"
            )
        sens = None
        if len(parts) > MAX_CORNERS:
            sens = relative_sensitivities(call, nominal) if call.analytic else None
            if sens is None or not np.all(np.isfinite(sens)):
                sens = np.array([exact.number(sp.diff(expr, p) * p, "∂y/∂x") for p in parts])
        return cls(call, nominal, np.asarray(base_t), np.asarray(tcr), sens, y0)

    @property
    def method(self) -> str:
        """``"corners"`` or ``"first-order bound"``."""
        return "corners" if self.sensitivities is None else "first-order bound"

    def spread(self, temperature: float) -> np.ndarray:
        """Each part's tolerance at ``temperature``: ``t + TCR·|T − 25 °C|``."""
        return self.base_t + self.tcr * abs(temperature - REFERENCE_TEMPERATURE)

    def columns(self, temperature: float) -> np.ndarray:
        """The parts' values at every corner, shape ``(n, 2^n)``."""
        signs = corner_signs(len(self.nominal))
        return (self.nominal * (1.0 + signs * self.spread(temperature))).T

    def deviation(self, temperature: float) -> float:
        """The worst ``|y − y_nominal|`` over the tolerance box at ``temperature``."""
        t = self.spread(temperature)
        if self.sensitivities is not None:
            return float(np.sum(np.abs(self.sensitivities) * t))
        g = self.call(self.columns(temperature))
        return float(np.max(np.abs(g - self.nominal_value)))


@dataclass(frozen=True)
class Rejection:
    """The network's common-mode rejection: differential gain over common-mode gain."""

    ad: Spread
    acm: Spread

    @classmethod
    def of(cls, ad: sp.Expr, acm: sp.Expr, parts: Sequence[sp.Symbol],
           values: Mapping[sp.Symbol, Any], base_t: np.ndarray,
           tcr: np.ndarray) -> Rejection:  # fmt: skip
        """Both gains compiled over the same parts."""
        return cls(Spread.of(ad, parts, values, base_t, tcr),
                   Spread.of(acm, parts, values, base_t, tcr))  # fmt: skip

    def cmrr_db(self, temperature: float) -> float:
        """``min 20·log10(|Ad|/|Acm|)`` over the corners (first-order bound beyond)."""
        if self.acm.sensitivities is not None:
            worst = abs(self.acm.nominal_value) + self.acm.deviation(temperature)
            ratio = abs(self.ad.nominal_value) / worst if worst else math.inf
            return 20 * math.log10(ratio) if ratio > 0 else -math.inf
        cols = self.acm.columns(temperature)
        ad, acm = np.abs(self.ad.call(cols)), np.abs(self.acm.call(cols))
        with np.errstate(divide="ignore"):
            ratio = float(np.min(ad / acm))
        return 20 * math.log10(ratio) if ratio > 0 else -math.inf

    def worst_acm(self, temperature: float) -> float:
        """The largest ``|Acm|`` over the tolerance box."""
        if self.acm.sensitivities is not None:
            return abs(self.acm.nominal_value) + self.acm.deviation(temperature)
        return float(np.max(np.abs(self.acm.call(self.acm.columns(temperature)))))
