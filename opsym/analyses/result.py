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
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import sympy as sp

from .._services import call
from ..errors import InvalidValueError, NoSolutionError, SingularCircuitError, UnknownNameError
from ..model.circuit import Circuit
from ..model.elements import OpAmp
from ..model.symbols import LAPLACE, latex_name, opamp_symbol
from ..values import to_exact
from .present import at_infinity, tidy, transfer_form, zeros_in
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


class Result(FrequencyResponse):
    """Every source's coefficient at one output of one circuit.

    Build it with :meth:`opsym.Circuit.analyze`. It never changes: every
    method that alters something returns a new ``Result``.
    """

    __slots__ = (
        "_averaged",
        "_circuit",
        "_coefficients",
        "_domain",
        "_fixed",
        "_output",
        "_post",
        "_readable",
        "_sources",
        "_substituted",
        "_terms",
    )

    def __init__(
        self,
        circuit: Circuit,
        output: Any,
        coefficients: Mapping[sp.Symbol, sp.Expr],
        sources: tuple[SourceInfo, ...],
        fixed: Mapping[sp.Symbol, sp.Expr],
        post: Mapping[sp.Symbol, sp.Expr] | None = None,
        averaged: bool = False,
        substituted: bool = False,
        domain: str = "dc",
    ) -> None:
        self._circuit = circuit
        self._domain = domain
        self._output = output
        self._coefficients = dict(coefficients)
        self._sources = tuple(sources)
        self._fixed = dict(fixed)
        self._post = dict(post or {})
        self._averaged = averaged
        self._substituted = substituted
        self._terms: dict[sp.Symbol, sp.Expr] | None = None
        self._readable: dict[sp.Symbol, sp.Expr] = {}

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
            if self._substituted:
                self._terms = {s: self.coefficient(s) for s in self._coefficients}
            else:
                self._terms = dict(self._coefficients)
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
                self._readable[sym] = transfer_form(raw, LAPLACE)
            else:
                self._readable[sym] = tidy(raw, deep=self._substituted)
        return self._readable[sym]

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
                coefficients[ib] = tidy(cp + cm)
                coefficients[ios] = tidy((cp - cm) / 2)
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
        replacements = {self._any_symbol(k): self._value(k, v) for k, v in mapping.items()}
        coefficients = {s: c.xreplace(replacements) for s, c in self._coefficients.items()}
        return self._replace(
            coefficients=coefficients, post={**self._post, **replacements}, substituted=True
        )

    def ideal(self) -> Result:
        """The same result with every finite open-loop gain taken to infinity.

        Examples
        --------
        >>> res = _stage(gain="finite")
        >>> res.coefficient("Vs")
        U1.A*(R1 + R2)/(R1*U1.A + R1 + R2)
        >>> res.ideal().coefficient("Vs")
        (R1 + R2)/R1
        """
        finite = [a for a in self._circuit.opamps if a.gain is not None]
        if not finite:
            return self
        ideal_circuit = Circuit(self._circuit.title)
        for e in self._circuit.elements:
            ideal_circuit._add(dataclasses.replace(e, gain=None) if isinstance(e, OpAmp) else e)
        try:
            fresh = call(
                "derive", ideal_circuit, self._output, values=self._fixed, domain=self._domain
            )
        except SingularCircuitError:
            gains = list({g for a in finite if a.gain is not None for g in a.gain.free_symbols})
            coefficients = {s: at_infinity(c, gains) for s, c in self._coefficients.items()}
            return self._replace(coefficients=coefficients)
        if self._post:
            fresh = fresh.subs(self._post)
        fresh = fresh._replace(circuit=self._circuit, substituted=self._substituted)
        return fresh.with_average_bias() if self._averaged else fresh

    def at_dc(self) -> Result:
        """The DC result (``s = 0``) of a Laplace-domain one; a DC result is returned as is.

        Re-derived at DC, so a circuit that has no DC solution (an integrator)
        raises the DC error rather than giving infinities.

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
        fresh = call("derive", self._circuit, self._output, values=self._fixed)
        if self._post:
            fresh = fresh.subs({k: v for k, v in self._post.items()})
        fresh = fresh._replace(substituted=self._substituted)
        return fresh.with_average_bias() if self._averaged else fresh

    # -- analyses ---------------------------------------------------------------------

    def null(self, source: str | sp.Symbol, by: str | sp.Symbol) -> sp.Eq:
        """The value of component ``by`` that makes ``source``'s coefficient zero.

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
        """
        coeff = self.coefficient(source)
        x = self._free_symbol(by, "null")
        if x not in coeff.free_symbols:
            raise NoSolutionError(
                f"{x} does not appear in the coefficient of {self._source_symbol(source)} "
                f"({coeff}); choose a component that affects it"
            )
        numerator = sp.fraction(sp.together(coeff))[0]
        candidates = zeros_in(numerator, x)
        admissible = [s for s in candidates if not (x.is_positive and s.is_positive is False)]
        admissible = [s for s in admissible if s.is_real is not False]
        if not admissible:
            found = (
                f" (the only zeros are {x} = {', '.join(map(str, candidates))})"
                if candidates
                else ""
            )
            raise NoSolutionError(
                f"no positive value of {x} makes the coefficient of "
                f"{self._source_symbol(source)} zero{found}; that error cannot be nulled "
                f"with {x} — choose another component"
            )
        return sp.Eq(x, admissible[0])

    def gain_error(self, signal: str | sp.Symbol | None = None, order: int | None = None):
        """Fractional signal-gain error ``(G − G_ideal)/G_ideal`` from finite open-loop gain.

        Negative when the gain falls short. ``order=1`` gives the first-order
        term in ``1/A`` (``−1/(A·beta)`` for a single stage).

        Examples
        --------
        >>> res = _stage(gain="finite")
        >>> res.gain_error()
        -(R1 + R2)/(R1*U1.A + R1 + R2)
        >>> res.gain_error(order=1)
        -(R1 + R2)/(R1*U1.A)
        """
        sig = self._signal(signal)
        g = self.coefficient(sig)
        g0 = self.ideal().coefficient(sig)
        if g0 == 0:
            raise NoSolutionError(f"the ideal gain from {sig} is zero; no fractional error")
        error = sp.factor(sp.cancel(sp.together(g / g0 - 1)))
        if order is None:
            return error
        if order != 1:
            raise InvalidValueError("gain_error: order must be None (exact) or 1")
        gains = sorted(
            {
                g
                for a in self._circuit.opamps
                if a.gain is not None
                for g in a.gain.xreplace(self._fixed).free_symbols
                if g != LAPLACE
            },
            key=str,
        )
        if not gains:
            raise InvalidValueError(
                "gain_error(order=1) expands in 1/A and needs symbolic gains; "
                "declare the op-amps with gain='finite'"
            )
        t = sp.Dummy("t", positive=True)
        num, den = sp.fraction(sp.cancel(sp.together(error.xreplace({a: a / t for a in gains}))))
        num_p, den_p = sp.Poly(num, t), sp.Poly(den, t)
        return sp.factor(num_p.coeff_monomial(t) / den_p.coeff_monomial(1))

    def sensitivity(
        self,
        component: str | sp.Symbol,
        of: str | sp.Symbol = "gain",
        normalized: bool = True,
        signal: str | sp.Symbol | None = None,
    ) -> sp.Expr:
        """Sensitivity of a coefficient (``of`` a source, or ``"gain"``) to ``component``.

        Normalized: ``S = (x/y)·∂y/∂x``; otherwise ``∂y/∂x``.

        Examples
        --------
        >>> _stage().sensitivity("R2", of="gain")
        R2/(R1 + R2)
        """
        y = self.coefficient(self._signal(signal)) if of == "gain" else self.coefficient(of)
        x = self._free_symbol(component, "sensitivity")
        dy = sp.diff(y, x)
        if not normalized:
            return tidy(dy) if dy != 0 else sp.S.Zero
        if y == 0:
            raise NoSolutionError(f"the coefficient of {of} is zero; no normalized sensitivity")
        return sp.factor(sp.cancel(sp.together(x * dy / y)))

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
        total = sp.S.Zero
        for pin in (amp.plus, amp.minus):
            if pin == "0":
                continue
            at_pin = call("derive", self._circuit, pin, values=self._fixed)
            subs = {**self._fixed, **self._post}
            for info in at_pin.sources:
                if info.kind == "signal":
                    value = info.value.xreplace(subs) if subs else info.value
                    total += at_pin.compact_coefficient(info.symbol).xreplace(subs) * value
        return tidy(total / 2, deep=True)

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

    # -- output ------------------------------------------------------------------------

    def output_latex(self) -> str:
        """LaTeX name of the output quantity, e.g. ``V_{\\mathrm{out}}``."""
        if isinstance(self._output, tuple):
            a, b = self._output
            return rf"V_{{\mathrm{{{a}}}}} - V_{{\mathrm{{{b}}}}}"
        return rf"V_{{\mathrm{{{self._output}}}}}"

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
        state = {
            "circuit": self._circuit,
            "output": self._output,
            "coefficients": self._coefficients,
            "sources": self._sources,
            "fixed": self._fixed,
            "post": self._post,
            "averaged": self._averaged,
            "substituted": self._substituted,
            "domain": self._domain,
        }
        state.update(changes)
        return Result(**state)

    def _source_symbol(self, source: str | sp.Symbol) -> sp.Symbol:
        if isinstance(source, sp.Symbol):
            return source
        if isinstance(source, str):
            return self._circuit.symbol(source)
        raise UnknownNameError(f"{source!r} is not a source name or symbol")

    def _any_symbol(self, key: Any) -> sp.Symbol:
        if isinstance(key, sp.Symbol):
            return key
        if isinstance(key, str):
            return self._circuit.symbol(key)
        raise UnknownNameError(f"subs: key {key!r} is not a name or symbol")

    def _value(self, key: Any, value: Any) -> sp.Expr:
        return to_exact(value, f"subs[{key}]")

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
