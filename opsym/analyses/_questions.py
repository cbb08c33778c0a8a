"""What a result says about errors: nulls, gain error, sensitivities, input referral.

The questions an engineer asks of a :class:`~opsym.analyses.result.Result`,
kept apart from the record itself: :class:`ErrorQuestions` is a base class
of ``Result`` (as :class:`~opsym.analyses.response.FrequencyResponse` is for
the frequency questions) and works on its fields.

Examples
--------
>>> res = _stage()
>>> res.null("U1.Ib", by="Rs")
Eq(Rs, R1*R2/(R1 + R2))
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import sympy as sp

from .._services import call
from ..errors import (
    ExpressionTooLargeError,
    InvalidValueError,
    NoSolutionError,
    UnknownNameError,
)
from ..model.circuit import Circuit
from ..model.elements import OpAmp
from ..model.limits import exact_value, expect_mapping
from ..model.symbols import LAPLACE
from ._nested import needs_expanded
from ._null import null_equation
from ._products import error_product, first_order_of_product, product_sensitivity, section_errors
from .dominant import Dominant, dominant_form
from .present import tidy

__all__ = ["ErrorQuestions"]


class ErrorQuestions:
    """Nulls, gain error, sensitivity, common mode, input referral, dominant terms.

    A base class of :class:`~opsym.analyses.result.Result`: it works on the
    result's fields and methods, declared below for type checkers only.
    """

    __slots__ = ()

    if TYPE_CHECKING:  # provided by Result
        _circuit: Circuit
        _coefficients: Mapping[sp.Symbol, sp.Expr]
        _sources: tuple[Any, ...]
        _fixed: Mapping[sp.Symbol, sp.Expr]
        _post: Mapping[sp.Symbol, sp.Expr]
        _memo: dict[Any, Any]
        _root: Any

        @property
        def terms(self) -> dict[sp.Symbol, sp.Expr]: ...
        def coefficient(self, source: str | sp.Symbol) -> sp.Expr: ...
        def ideal(self) -> Any: ...
        def _signal(self, signal: Any) -> sp.Symbol: ...
        def _source_symbol(self, source: Any) -> sp.Symbol: ...
        def _free_symbol(self, name: Any, what: str) -> sp.Symbol: ...
        def _any_symbol(self, key: Any) -> sp.Symbol: ...
        def _value(self, key: Any, value: Any) -> sp.Expr: ...

    def null(
        self,
        source: str | sp.Symbol | list[str | sp.Symbol] | tuple[str | sp.Symbol, ...],
        by: str | sp.Symbol,
        values: Mapping[Any, Any] | None = None,
    ) -> sp.Eq:
        """The value of component ``by`` that makes ``source``'s coefficient zero.

        ``source`` may also be a list of sources: then the sum of their terms,
        each coefficient times the source's value, is made zero (a trim network
        that zeroes the total output offset). ``values`` gives those values
        (numbers, text such as ``"1m"`` or symbols, keyed by source name); a
        source not given keeps its own symbol, a signal its declared value.

        Raises :class:`~opsym.NoSolutionError` when no admissible (positive, for
        a component) value exists.

        Examples
        --------
        >>> _stage().null("U1.Ib", by="Rs")
        Eq(Rs, R1*R2/(R1 + R2))
        >>> _stage().null("U1.Vos", by="R2")  # doctest: +ELLIPSIS
        Traceback (most recent call last):
        ...
        opsym.errors.NoSolutionError: no positive value of R2 makes the coefficient of U1.Vos ...
        >>> _stage().null(["U1.Vos", "U1.Ib+"], by="Rs", values={"U1.Vos": "1m", "U1.Ib+": "1u"})
        Eq(Rs, 1000)
        """
        if isinstance(source, (list, tuple)):
            return self._null_of_sum(list(source), by, values)
        coeff = self.coefficient(source)
        what = f"the coefficient of {self._source_symbol(source)}"
        return self._null_of(coeff, by, what, f"({coeff})", "that error cannot be nulled")

    def _null_of_sum(self, sources: list[Any], by: Any, values: Any) -> sp.Eq:
        """:meth:`null` of the sum of several sources' terms at the given values."""
        if not sources:
            raise InvalidValueError("null: give at least one source name, e.g. ['U1.Vos']")
        given = expect_mapping(values or {}, "null values", "{'U1.Vos': '1m'}")
        chosen = {self._source_symbol(k): v for k, v in given.items()}
        declared = {i.symbol: i.value for i in self._sources if i.kind == "signal"}
        subs = {**self._fixed, **self._post}
        total = sp.S.Zero
        for name in sources:
            sym = self._source_symbol(name)
            if sym in chosen:
                value = chosen.pop(sym)
                v = value if isinstance(value, sp.Symbol) else exact_value(value, f"null {sym}")
            else:
                v = declared.get(sym, sym).xreplace(subs)
            total += self.coefficient(sym) * v
        if chosen:
            raise UnknownNameError(
                f"null values: {', '.join(map(str, chosen))} not among the sources summed "
                f"({', '.join(map(str, sources))}); add them to the list or drop the values"
            )
        what = f"the sum of the terms of {', '.join(map(str, sources))}"
        return self._null_of(total, by, what, f"({tidy(total)})", "that sum cannot be nulled")

    def _null_of(self, expr: sp.Expr, by: Any, what: str, shown_: str, cannot: str) -> sp.Eq:
        expr = needs_expanded(expr, f"null of {what}")
        return null_equation(expr, self._free_symbol(by, "null"), what, shown_, cannot)

    def gain_error(self, signal: str | sp.Symbol | None = None, order: int | None = None):
        """Fractional signal-gain error ``(G − G_ideal)/G_ideal`` from finite open-loop gain.

        Negative when the gain falls short. ``order=1`` gives the first-order
        term in ``1/A`` (``−1/(A·beta)`` for a single stage). A cascade's gain
        is worked section by section: the exact error is ``Π(1 + εᵢ) − 1`` over
        its sections (left as that product), the first order ``Σ`` of theirs. A
        nested result too large to expand gives the exact ``G/G_ideal − 1`` in its
        auxiliaries ``X₁ = …`` (numbers go in by :meth:`subs`); its first order
        needs the expanded form.

        Examples
        --------
        >>> res = _stage(gain="finite")
        >>> res.gain_error()
        -(R1 + R2)/(R1*U1.A + R1 + R2)
        >>> res.gain_error(order=1)
        -(R1 + R2)/(R1*U1.A)
        """
        sig = self._signal(signal)
        g, g0 = self.coefficient(sig), self.ideal().coefficient(sig)
        if g0 == 0:
            raise NoSolutionError(f"the ideal gain from {sig} is zero; no fractional error")
        try:
            g, g0 = needs_expanded(g, "gain_error"), needs_expanded(g0, "gain_error")
        except ExpressionTooLargeError:
            if order is not None:
                raise
            return g / g0 - 1  # nested: exact, in the result's definitions X₁ = …
        errors = section_errors(g, g0, {LAPLACE})  # per section: never the whole product
        if order is None:
            return error_product(errors)
        if order != 1:
            raise InvalidValueError("gain_error: order must be None (exact) or 1")
        gains = self._gain_symbols()
        if not gains:
            raise InvalidValueError(
                "gain_error(order=1) expands in 1/A and needs symbolic gains; "
                "declare the op-amps with gain='finite'"
            )
        return first_order_of_product(errors, gains)

    def _gain_symbols(self) -> list[sp.Symbol]:
        """The open-loop gain symbols left symbolic, sorted by name."""
        return sorted(
            {
                g
                for a in self._circuit.opamps
                if a.gain is not None
                for g in a.gain.xreplace(self._fixed).free_symbols
                if g != LAPLACE
            },
            key=str,
        )

    def sensitivity(
        self,
        component: str | sp.Symbol,
        of: str | sp.Symbol = "gain",
        normalized: bool = True,
        signal: str | sp.Symbol | None = None,
    ) -> sp.Expr:
        """Sensitivity of a coefficient (``of`` a source, or ``"gain"``) to ``component``.

        Normalized: ``S = (x/y)·∂y/∂x``, the sum of the sensitivities of the
        coefficient's factors that contain ``x`` (a cascade: only the section
        holding the component); otherwise ``∂y/∂x``.

        Examples
        --------
        >>> _stage().sensitivity("R2", of="gain")
        R2/(R1 + R2)
        """
        y = self.coefficient(self._signal(signal)) if of == "gain" else self.coefficient(of)
        x = self._free_symbol(component, "sensitivity")
        if not normalized:
            dy = sp.diff(y, x)
            return tidy(dy) if dy != 0 else sp.S.Zero
        if y == 0:
            raise NoSolutionError(f"the coefficient of {of} is zero; no normalized sensitivity")
        return product_sensitivity(y, x)  # the sum over the factors that contain x

    def common_mode(self, opamp: str) -> sp.Expr:
        """The common-mode voltage at op-amp ``opamp``'s inputs, from the signals alone.

        ``(V(+) + V(-))/2`` with the signal sources at their declared values and
        every error source zero: the ``U1.Vcm`` that drives its CMRR term. Values
        fixed or substituted in this result apply.

        Examples
        --------
        >>> import opsym
        >>> c = opsym.Circuit("difference stage")
        >>> c.voltage_source("V1", "a", "0")
        >>> c.voltage_source("V2", "b", "0")
        >>> c.resistor("R1", "a", "n")
        >>> c.resistor("R2", "n", "out")
        >>> c.resistor("R3", "b", "p")
        >>> c.resistor("R4", "p", "0")
        >>> c.opamp("U1", plus="p", minus="n", out="out", cmrr=True)
        >>> c.analyze("out").common_mode("U1")
        R4*V2/(R3 + R4)
        """
        amp = self._circuit.element(opamp)
        if not isinstance(amp, OpAmp):
            raise UnknownNameError(f"{opamp} is a {amp.kind}, not an op-amp")
        if ("common mode", opamp) in self._memo:
            return self._memo["common mode", opamp]
        total = sp.S.Zero
        for pin in (amp.plus, amp.minus):
            if pin == "0":
                continue
            at_pin = self._at_node(pin)
            subs = {**self._fixed, **self._post}
            for info in at_pin.sources:
                if info.kind == "signal":
                    value = info.value.xreplace(subs) if subs else info.value
                    total += at_pin.compact_coefficient(info.symbol).xreplace(subs) * value
        self._memo["common mode", opamp] = tidy(total / 2, deep=True)
        return self._memo["common mode", opamp]

    def _at_node(self, node: str) -> Any:
        """The DC result at another node of the same circuit, derived once per root."""
        base = self._root or self
        if ("node", node) not in base._memo:
            base._memo["node", node] = call("derive", self._circuit, node, values=self._fixed)
        return base._memo["node", node]

    def compact_coefficient(self, source: str | sp.Symbol) -> sp.Expr:
        """One coefficient exactly as solved (see :attr:`terms`)."""
        sym = self._source_symbol(source)
        if sym not in self._coefficients:
            return self.coefficient(sym)  # raises the helpful error
        return self._coefficients[sym]

    def input_referred(self, signal: str | sp.Symbol | None = None) -> dict[sp.Symbol, sp.Expr]:
        """Every other source's coefficient divided by the signal's: errors at the input.

        Examples
        --------
        >>> _stage().input_referred("Vs")
        {U1.Vos: 1, U1.Ib+: -Rs, U1.Ib-: R1*R2/(R1 + R2)}
        """
        sig = self._signal(signal)
        g = self.coefficient(sig)
        if g == 0:
            raise NoSolutionError(f"{sig} does not reach the output; cannot refer to it")
        return {s: tidy(c / g) for s, c in self.terms.items() if s != sig}

    def dominant(
        self, source: str | sp.Symbol, error: float = 0.01, values: Mapping[Any, Any] | None = None
    ) -> Dominant:
        """The dominant terms of one coefficient at nominal values, with the error bound.

        See :mod:`opsym.analyses.dominant`. ``values`` gives every symbol left in
        the coefficient (names or symbols as keys; numbers or text such as
        ``"10k"``); a missing one raises :class:`~opsym.MissingValueError`. A
        nested result is expanded first, or refused with
        :class:`~opsym.ExpressionTooLargeError` when that is too large (its
        numbers come from :meth:`subs` and budgets instead).

        Examples
        --------
        >>> nominal = {"R1": "1k", "R2": "1k", "U1.A": "100k"}
        >>> d = _stage(gain="finite").dominant("Vs", values=nominal)
        >>> d.expression, f"{d.bound:.3g}"
        ((R1 + R2)/R1, '2e-05')
        """
        sym = self._source_symbol(source)
        given = expect_mapping(values or {}, "dominant values", "{'R1': '10k'}")
        point = {self._any_symbol(k): self._value(k, v) for k, v in given.items()}
        what = f"the coefficient of {sym}"
        coeff = needs_expanded(self.compact_coefficient(sym), f"dominant terms of {what}")
        return dominant_form(coeff, point, error, what=what)


def _stage(gain: str = "ideal") -> Any:
    """The module example's non-inverting stage (Vs through Rs; R1, R2), for the examples."""
    c = Circuit("non-inverting")
    c.voltage_source("Vs", "s", "0")
    c.resistor("Rs", "s", "p")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", gain=gain)
    return c.analyze("out")
