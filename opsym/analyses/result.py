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
    InvalidValueError,
    OpsymError,
    SingularCircuitError,
    UnknownNameError,
)
from ..model.circuit import Circuit
from ..model.limits import admissible, exact_value, expect_mapping, shown
from ..model.symbols import LAPLACE, latex_name, opamp_symbol
from ._ideal import ideal_circuit, ideal_gains, ideal_limit
from ._nested import needs_expanded
from ._questions import ErrorQuestions, _stage  # noqa: F401 - _stage serves the examples
from .branch import output_latex
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
class Result(ErrorQuestions, FrequencyResponse):
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
