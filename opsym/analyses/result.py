"""The immutable result of one derivation, and the analyses built on it.

Examples
--------
The non-inverting stage with a source resistance (Sedra & Smith, 6th ed.,
problem 2.104):

>>> import opsym
>>> c = opsym.Circuit("non-inverting")
>>> c.voltage_source("Vs", "s", "0")
>>> c.resistor("Rs", "s", "p")
>>> c.resistor("R1", "n", "0")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="p", minus="n", out="out")
>>> res = c.analyze("out")
>>> res.coefficient("U1.Vos")
(R1 + R2)/R1
>>> res.coefficient("U1.Ib+")
-Rs*(R1 + R2)/R1
>>> res.null("U1.Ib", by="Rs")
Eq(Rs, R1*R2/(R1 + R2))
>>> res.with_average_bias().subs({"Rs": c.symbol("R1") * c.symbol("R2") /
...     (c.symbol("R1") + c.symbol("R2"))}).coefficient("U1.Ios")
-R2
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import sympy as sp

from .._services import call
from ..equations.nested import EXPAND_LIMIT, definitions_of, has_aux
from ..errors import (
    ExpressionTooLargeError,
    InvalidValueError,
    NoSolutionError,
    OpsymError,
    SingularCircuitError,
    UnknownNameError,
)
from ..model.circuit import Circuit
from ..model.elements import OpAmp
from ..model.limits import admissible, exact_value, expect_mapping, shown
from ..model.symbols import LAPLACE, latex_name, opamp_symbol
from ._ideal import ideal_circuit, ideal_gains, ideal_limit
from ._nested import needs_expanded
from ._null import null_equation
from ._products import error_product, first_order_of_product, product_sensitivity, section_errors
from .branch import output_latex
from .dominant import Dominant, dominant_form
from .present import at_infinity, tidy, transfer_form
from .response import FrequencyResponse

if TYPE_CHECKING:
    from collections.abc import Iterator

__all__ = ["Result", "SourceInfo"]


@dataclass(frozen=True)
class SourceInfo:
    """One independent source: its symbol, kind, owning element and value.

    ``kind`` is ``"signal"`` or the non-ideality key (``"offset"``, ``"bias"``,
    ``"cmrr"``, ``"psrr"``); ``value`` is what multiplies the coefficient in
    the total (a signal's declared value, or the error source's own symbol).
    """

    symbol: sp.Symbol
    kind: str
    owner: str
    value: sp.Expr


@dataclass(frozen=True, eq=False, kw_only=True)
class Result(FrequencyResponse):
    """Every source's coefficient at one output of one circuit.

    Build it with :meth:`opsym.Circuit.analyze`. It never changes: a frozen
    dataclass whose every method that alters something returns a new
    ``Result``. Its fields are private; the properties below read them. Two
    results are equal only when they are the same object.
    """

    _circuit: Circuit
    _output: Any
    _coefficients: Mapping[sp.Symbol, sp.Expr]
    _sources: tuple[SourceInfo, ...]
    _fixed: Mapping[sp.Symbol, sp.Expr]
    _post: Mapping[sp.Symbol, sp.Expr] = field(default_factory=dict)
    _averaged: bool = False
    _substituted: bool = False
    _domain: str = "dc"
    # The result before any subs (its coefficients, these values): the ideal and
    # DC forms are taken from it, once.
    _root: Result | None = None
    # Caches, filled on request; they never change what the result means.
    _terms: dict[sp.Symbol, sp.Expr] | None = field(default=None, init=False, repr=False)
    _readable: dict[sp.Symbol, sp.Expr] = field(default_factory=dict, init=False, repr=False)
    _memo: dict[Any, Any] = field(default_factory=dict, init=False, repr=False)

    def __post_init__(self) -> None:
        # Own copies: what the caller passed may change later, the result may not.
        object.__setattr__(self, "_coefficients", dict(self._coefficients))
        object.__setattr__(self, "_sources", tuple(self._sources))
        object.__setattr__(self, "_fixed", dict(self._fixed))
        object.__setattr__(self, "_post", dict(self._post or {}))

    # -- what was derived ---------------------------------------------------------

    @property
    def circuit(self) -> Circuit:
        """The circuit this result was derived from."""
        return self._circuit

    @property
    def output(self) -> str | tuple[str, str]:
        """The output node, or the (plus, minus) pair."""
        return self._output

    @property
    def domain(self) -> str:
        """``"dc"`` or ``"s"``: whether the coefficients are functions of ``s``."""
        return self._domain

    @property
    def sources(self) -> tuple[SourceInfo, ...]:
        """Every independent source, signals first."""
        return self._sources

    @property
    def signals(self) -> tuple[sp.Symbol, ...]:
        """Symbols of the signal sources."""
        return tuple(s.symbol for s in self._sources if s.kind == "signal")

    @property
    def error_sources(self) -> tuple[sp.Symbol, ...]:
        """Symbols of the op-amp error sources (Vos, Ib±, Vcm, dVs…)."""
        return tuple(s.symbol for s in self._sources if s.kind != "signal")

    @property
    def fixed(self) -> dict[sp.Symbol, sp.Expr]:
        """Values fixed before solving (``analyze(values=...)``)."""
        return dict(self._fixed)  # a copy: the result itself never changes

    @property
    def terms(self) -> dict[sp.Symbol, sp.Expr]:
        """``{source symbol: coefficient}`` for every independent source.

        Each coefficient is as solved: a product of factored block results, or
        a short sum of such products where several paths reach the output. It
        is exact and costs nothing more to get; :meth:`coefficient` and
        :meth:`simplify` give the form collected over one denominator.
        """
        if self._terms is None:
            terms = (
                {s: self.coefficient(s) for s in self._coefficients} if self._substituted
                else dict(self._coefficients)
            )  # fmt: skip
            object.__setattr__(self, "_terms", terms)
        assert self._terms is not None
        return dict(self._terms)  # a copy: the result itself never changes

    def simplify(self) -> Result:
        """The same result with every coefficient collected and factored (cached)."""
        coefficients = {s: self.coefficient(s) for s in self._coefficients}
        return self._replace(coefficients=coefficients, substituted=False)

    @property
    def expression(self) -> sp.Expr:
        """The total output with every source superposed."""
        subs = {**self._fixed, **self._post}
        terms = self.terms
        parts = []
        for info in self._sources:
            value = info.value.xreplace(subs) if subs else info.value
            parts.append(terms[info.symbol] * value)
        return sp.Add(*parts)

    def __iter__(self) -> Iterator[sp.Symbol]:
        return iter(self.terms)

    def coefficient(self, source: str | sp.Symbol) -> sp.Expr:
        """The coefficient of one source, by name (``"U1.Ib-"``) or symbol."""
        sym = self._source_symbol(source)
        if sym not in self._coefficients:
            if not self._averaged and sym.name.rsplit(".", 1)[-1] in ("Ib", "Ios"):
                return self.with_average_bias().coefficient(sym)
            if self._averaged and sym.name.rsplit(".", 1)[-1] in ("Ib+", "Ib-"):
                raise UnknownNameError(
                    f"{sym} is not a source of this averaged result; its terms are keyed "
                    "by Ib and Ios: call coefficient() on the result before with_average_bias()"
                )
            raise UnknownNameError(
                f"{sym} is not a source of this result; its sources are "
                f"{', '.join(str(s) for s in self._coefficients)}"
            )
        if sym not in self._readable:
            raw = self._coefficients[sym]
            if self._domain == "s" and LAPLACE in raw.free_symbols:
                self._readable[sym] = transfer_form(self._expanded_or_raw(raw), LAPLACE)
            elif has_aux(raw):  # nested: small in X₁…, so collect it over one denominator
                self._readable[sym] = tidy(sp.cancel(raw), deep=self._substituted)
            else:
                self._readable[sym] = tidy(raw, deep=self._substituted)
        return self._readable[sym]

    @property
    def definitions(self) -> tuple[tuple[sp.Symbol, sp.Expr], ...]:
        """The auxiliaries ``(Xₖ, definition)`` the coefficients use, earliest first.

        Empty unless a block was too large to expand and was solved as a
        sequence of expressions (see docs/method.md): then coefficients are
        short expressions in ``X₁, X₂, …``, each defined in circuit symbols and
        earlier auxiliaries. Numbers (:meth:`subs` with values, budgets,
        tolerance and temperature studies) evaluate the definitions forward.
        """
        return definitions_of(list(self._coefficients.values()))

    def expanded(self, limit: int = EXPAND_LIMIT) -> Result:
        """The same result with every auxiliary ``Xₖ`` replaced by its definition.

        Raises :class:`~opsym.ExpressionTooLargeError` with the estimated size
        when the expanded form would pass ``limit`` terms.

        Examples
        --------
        >>> _stage().expanded().coefficient("U1.Vos")
        (R1 + R2)/R1
        """
        if not self.definitions:
            return self
        coefficients = {
            s: needs_expanded(c, f"expanded() of {s}", limit)
            for s, c in self._coefficients.items()
        }
        return self._replace(coefficients=coefficients, root=None)

    def _expanded_or_raw(self, raw: sp.Expr) -> sp.Expr:
        """``raw`` expanded when it is nested and small enough, else as it is."""
        if not has_aux(raw):
            return raw
        try:
            return needs_expanded(raw, "the pole-zero form")
        except OpsymError:
            return raw

    # -- new results ----------------------------------------------------------------

    def with_average_bias(self) -> Result:
        """Rewrite ``Ib±`` as ``Ib ± Ios/2`` (``Ios = Ib+ − Ib-``): terms keyed by Ib, Ios.

        Examples
        --------
        >>> avg = _stage().with_average_bias()
        >>> avg.coefficient("U1.Ib"), avg.coefficient("U1.Ios")
        ((R1*R2 - R1*Rs - R2*Rs)/R1, -(R1*R2 + R1*Rs + R2*Rs)/(2*R1))
        """
        if self._averaged:
            return self
        coefficients: dict[sp.Symbol, sp.Expr] = {}
        sources: list[SourceInfo] = []
        for info in self._sources:
            name = info.symbol.name
            if info.kind == "bias" and name.endswith(".Ib+"):
                owner = info.owner
                cp = self._coefficients[info.symbol]
                cm = self._coefficients[opamp_symbol(owner, "Ib-")]
                ib, ios = opamp_symbol(owner, "Ib"), opamp_symbol(owner, "Ios")
                # as solved: coefficient() tidies them when asked, not every one up front
                coefficients[ib] = cp + cm
                coefficients[ios] = (cp - cm) / 2
                sources += [SourceInfo(ib, "bias", owner, ib), SourceInfo(ios, "bias", owner, ios)]
            elif info.kind == "bias" and name.endswith(".Ib-"):
                continue
            else:
                coefficients[info.symbol] = self._coefficients[info.symbol]
                sources.append(info)
        return self._replace(coefficients=coefficients, sources=tuple(sources), averaged=True)

    def subs(self, mapping: Mapping[Any, Any]) -> Result:
        """Substitute values or expressions for symbols (names or symbols as keys).

        Examples
        --------
        >>> _stage().subs({"R1": "1k", "R2": "9k"}).coefficient("U1.Ib+")
        -10*Rs
        """
        items = expect_mapping(mapping, "subs", "{'R1': '10k'}").items()
        replacements = {self._any_symbol(k): self._value(k, v) for k, v in items}
        coefficients = {s: c.xreplace(replacements) for s, c in self._coefficients.items()}
        return self._replace(
            coefficients=coefficients, post={**self._post, **replacements}, substituted=True,
            root=self._root or self,
        )  # fmt: skip

    def ideal(self) -> Result:
        """The same result with every finite open-loop gain taken to infinity.

        Worked out once per result: where the other symbols have numbers (after
        :meth:`subs`), as the limit of these coefficients, else from the circuit
        with ideal op-amps, derived once for the result ``subs`` started from.

        Examples
        --------
        >>> res = _stage(gain="finite")
        >>> res.coefficient("Vs")
        U1.A*(R1 + R2)/(R1*U1.A + R1 + R2)
        >>> res.ideal().coefficient("Vs")
        (R1 + R2)/R1
        """
        if not any(a.gain is not None for a in self._circuit.opamps):
            return self
        if "ideal" not in self._memo:  # derived once per result
            self._memo["ideal"] = self._ideal_by_limit() or self._ideal_derived()
        return self._memo["ideal"]

    def _ideal_by_limit(self) -> Result | None:
        """The ideal form as the limit of these coefficients, where their numbers are in."""
        gains = ideal_gains(self._circuit, self._fixed)
        if gains is None:
            return None
        base = self._root or self
        if has_aux(list(base._coefficients.values())):
            return None  # a limit in A cannot look inside X₁…: derive the ideal circuit
        keep = {k: v for k, v in self._post.items() if k not in gains}
        limit = ideal_limit({s: c.xreplace(keep) for s, c in base._coefficients.items()}, gains)
        if limit is None:
            return None
        fresh = base._replace(
            coefficients=limit, post=self._post, substituted=self._substituted, root=None
        )
        fresh = fresh.with_average_bias() if self._averaged else fresh
        fresh._memo["ideal"] = fresh
        return fresh

    def _ideal_derived(self) -> Result:
        """The ideal form from the circuit with ideal op-amps, derived once per root."""
        if self._root is not None:
            fresh = self._root.ideal().subs(self._post)
        else:
            try:
                fresh = call("derive", ideal_circuit(self._circuit), self._output,
                             values=self._fixed, domain=self._domain)  # fmt: skip
            except SingularCircuitError:
                finite = [a.gain for a in self._circuit.opamps if a.gain is not None]
                gains = list({g for gain in finite for g in gain.free_symbols})
                coefficients = {
                    s: at_infinity(needs_expanded(c, "the ideal limit"), gains)
                    for s, c in self._coefficients.items()
                }
                return self._replace(coefficients=coefficients, root=None)
        fresh = fresh._replace(circuit=self._circuit, substituted=self._substituted)
        return fresh.with_average_bias() if self._averaged else fresh

    def at_dc(self) -> Result:
        """The DC result (``s = 0``) of a Laplace-domain one; a DC result is returned as is.

        Re-derived at DC (once, for the result :meth:`subs` started from), so a
        circuit that has no DC solution (an integrator) raises the DC error rather
        than giving infinities.

        Examples
        --------
        >>> import opsym
        >>> c = opsym.Circuit("RC filter")
        >>> c.voltage_source("Vin", "in", "0")
        >>> c.resistor("R1", "in", "p")
        >>> c.capacitor("C1", "p", "0")
        >>> c.opamp("U1", plus="p", minus="out", out="out")
        >>> c.analyze("out", domain="s").at_dc().coefficient("Vin")
        1
        """
        if self._domain == "dc":
            return self
        if "dc" not in self._memo:  # derived once per root
            if self._root is not None:
                fresh = self._root.at_dc().subs(self._post)
            else:
                fresh = call("derive", self._circuit, self._output, values=self._fixed)
            fresh = fresh._replace(substituted=self._substituted)
            self._memo["dc"] = fresh.with_average_bias() if self._averaged else fresh
        return self._memo["dc"]

    # -- analyses ---------------------------------------------------------------------

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

    def _at_node(self, node: str) -> Result:
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
        ``"10k"``); a missing one raises :class:`~opsym.MissingValueError`.

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
        coeff = self.compact_coefficient(sym)
        return dominant_form(coeff, point, error, what=f"the coefficient of {sym}")

    # -- output ------------------------------------------------------------------------

    def output_latex(self) -> str:
        """LaTeX name of the output, e.g. ``V_{\\mathrm{out}}`` or ``I_{\\mathrm{RL}}``."""
        return output_latex(self._output)

    def latex(self, names: Mapping[sp.Symbol, str] | None = None) -> str:
        """The output as a LaTeX ``aligned`` block, one source per line."""
        return call("result_latex", self, names)  # opsym.output.latex writes it

    def _repr_latex_(self) -> str:
        return "$\\displaystyle " + self.latex() + "$"

    def __repr__(self) -> str:
        out = self._output if isinstance(self._output, str) else "-".join(self._output)
        return f"<Result: {out} of {self._circuit.title!r}, {len(self._coefficients)} sources>"

    def symbol_latex(self) -> dict[sp.Symbol, str]:
        """LaTeX names for every symbol that appears in this result."""
        free = set()
        for c in self.terms.values():
            free |= c.free_symbols
        free |= {s.symbol for s in self._sources}
        return {s: latex_name(s) for s in free if isinstance(s, sp.Symbol)}

    # -- helpers ---------------------------------------------------------------------

    def _replace(self, **changes: Any) -> Result:
        """A new result with some fields changed (``circuit=``, ``coefficients=``, ...)."""
        return dataclasses.replace(self, **{"_" + k: v for k, v in changes.items()})

    def _source_symbol(self, source: str | sp.Symbol) -> sp.Symbol:
        if isinstance(source, sp.Symbol):
            return source
        if isinstance(source, str):
            return self._circuit.symbol(source)
        raise UnknownNameError(f"{shown(source)} is not a source name or symbol")

    def _any_symbol(self, key: Any) -> sp.Symbol:
        if isinstance(key, sp.Symbol):
            try:  # a look-alike symbol (other assumptions) means the circuit's own
                return self._circuit.symbol(key.name)
            except UnknownNameError:
                return key
        if isinstance(key, str):
            return self._circuit.symbol(key)
        raise UnknownNameError(f"key {shown(key)} is not a name such as 'R1' or a symbol")

    def _value(self, key: Any, value: Any) -> sp.Expr:
        sym = self._any_symbol(key)
        where = f"subs[{shown(key)}]"
        exact = exact_value(value, where)
        return admissible(self._circuit, sym, exact, "subs")

    def _free_symbol(self, name: str | sp.Symbol, what: str) -> sp.Symbol:
        x = self._any_symbol(name)
        if x in self._fixed or x in self._post:
            raise InvalidValueError(
                f"{what}: {x} was given a value (values= or subs); leave it symbolic to use "
                "it here"
            )
        return x

    def _signal(self, signal: str | sp.Symbol | None) -> sp.Symbol:
        if signal is not None:
            return self._source_symbol(signal)
        signals = self.signals
        if len(signals) != 1:
            names = ", ".join(map(str, signals)) or "none"
            raise UnknownNameError(
                f"this circuit has {len(signals)} signal sources ({names}); "
                "name the one you mean with signal="
            )
        return signals[0]


def _stage(gain: str = "ideal") -> Result:
    """The module example's non-inverting stage (Vs through Rs; R1, R2), for the examples."""
    c = Circuit("non-inverting")
    c.voltage_source("Vs", "s", "0")
    c.resistor("Rs", "s", "p")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", gain=gain)
    return c.analyze("out")
