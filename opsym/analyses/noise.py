"""Noise analysis: each noise source's transfer to the output, added in power.

Every resistor carries its thermal noise voltage ``R.en`` in series, of
density ``√(4kTR)`` (Johnson–Nyquist; ``k = 1.380649e-23 J/K`` exactly, SI
2019). Every op-amp declared with ``noise=True`` carries its voltage noise
``U1.en`` in series with the ``+`` pin and its current noises ``U1.in+`` and
``U1.in-`` into the pins, each white with an optional 1/f corner. The sources
are uncorrelated, so the output density is

    e_out(f)² = Σ_k |H_k(j·2π·f)|² · S_k(f),   S_k(f) = density_k²·(1 + fc_k/f).

One adjoint solve in the s domain gives every ``H_k`` (the same solve as the
error terms), exactly. The numbers follow from those closed forms on NumPy
frequency grids.

Examples
--------
An inverting stage, gain −10, with an invented op-amp noise of 8 nV/√Hz:

>>> import opsym
>>> c = opsym.Circuit("inverting stage")
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n", value="1k")
>>> c.resistor("R2", "n", "out", value="10k")
>>> c.opamp("U1", plus="0", minus="n", out="out", bias=False)
>>> n = c.noise("out", values={"U1.en": "8n", "U1.in": "0"})
>>> n.transfer("U1.en")
11
>>> round(float(n.density(1e3)) * 1e9, 2)  # √(88² + 40.58² + 12.83²) nV/√Hz
97.75
>>> print(n.budget(10, 10e3).to_text())  # doctest: +ELLIPSIS
Noise budget at out, 10 Hz to 10 kHz...
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import sympy as sp

from .._services import call, provides
from ..equations.adjoint import solve_adjoint
from ..equations.mna import build_equations
from ..errors import BudgetError, InvalidValueError, UnknownNameError
from ..model.circuit import Circuit
from ..model.elements import Resistor
from ..model.limits import check_band, check_frequencies, expect_text, shown
from ..model.nonideal import NoiseSpectrum
from ..model.symbols import LAPLACE, SYMBOLS, thermal_symbol
from ..model.topology import check_topology
from ..numeric.frequency import (
    IntegrationWarning,
    evaluation_form,
    evaluator,
    integrate_with_error,
    natural_frequencies,
)
from ..values import to_exact
from .branch import current_name
from .derive import coefficients_of, output_weights, resolve_values, sources_of
from .present import transfer_form
from .result import SourceInfo
from .units import output_unit, source_unit

__all__ = [
    "BOLTZMANN",
    "PEAK_TO_PEAK_FACTOR",
    "NoiseResult",
    "noise",
]

#: The Boltzmann constant, J/K, exact since the 2019 SI.
BOLTZMANN = sp.Rational("1.380649e-23")
#: Peak-to-peak over RMS for Gaussian noise: ±3.3σ, exceeded about 0.1 % of the
#: time. Common practice, not a standard.
PEAK_TO_PEAK_FACTOR = 6.6
PEAK_TO_PEAK_RULE = (
    "peak-to-peak ≈ 6.6 × RMS (Gaussian noise, exceeded about 0.1 % of the time; common practice)"
)
_ZERO_CELSIUS = sp.Rational("273.15")


def kelvin(temperature: Any) -> sp.Expr:
    """``temperature`` in °C (number or text) as exact kelvin; 25 → 298.15."""
    t = to_exact(temperature, "temperature (°C)")
    if not t.is_number or t.is_extended_real is not True:  # sp.I too: no order to compare
        raise InvalidValueError(f"temperature {shown(temperature)}: give a number of °C, e.g. 25")
    kelvins = t + _ZERO_CELSIUS
    if kelvins > 10**4:
        raise InvalidValueError(
            f"temperature {shown(temperature)} °C is above 10000 °C; give °C, e.g. 25"
        )
    if not kelvins.is_positive:
        raise InvalidValueError(
            f"temperature {shown(temperature)} °C is at or below absolute zero; give °C, e.g. 25"
        )
    return kelvins


@dataclass(frozen=True)
class NoiseSource:
    """One noise source: its name, what it is, its spectrum and its transfer ``H(s)``."""

    name: str
    owner: str
    what: str
    unit: str
    spectrum: NoiseSpectrum
    transfer: sp.Expr


def _own_thermal_noise(
    circuit: Circuit, output: Any, found: dict[sp.Symbol, sp.Expr], fixed: Mapping
) -> None:
    """Add a resistor's own noise to the current through it, when that is the output.

    The thermal noise ``R.en`` is stamped as its Norton current ``R.en/R`` from
    ``a`` to ``b`` beside the conductance, so the current through the resistor
    (the physical element, source included) is ``(V(a) − V(b))/R + R.en/R``;
    the branch weights see only the first part. KVL round a divider checks it:
    the loop current is ``Σ en/(R1 + R2)``, the same from either resistor.
    """
    name = current_name(output)
    if name is None:
        return
    element = circuit.element(name)
    if isinstance(element, Resistor):
        sym = thermal_symbol(element.name)
        r_value = element.value.xreplace(fixed) if fixed else element.value
        found[sym] = sp.cancel(found[sym] + 1 / r_value)


@provides("noise")
def noise(
    circuit: Circuit,
    output: Any,
    values: Mapping[Any, Any] | None = None,
    temperature: Any = 25,
    progress: Any = None,
) -> NoiseResult:
    """Build the :class:`NoiseResult` of ``circuit`` at ``output`` (see the module)."""
    check_topology(circuit, "s")
    t_kelvin = kelvin(temperature)
    fixed = resolve_values(circuit, values)
    eqs = build_equations(circuit, fixed, domain="s", thermal=True)
    weights, label = output_weights(circuit, output, eqs.index, fixed, "s")
    z = solve_adjoint(eqs, weights, progress=progress)
    signals = [i for i in sources_of(circuit) if i.kind == "signal"]
    noisy = sources_of(circuit, noise=True)
    resistors = [e for e in circuit.elements if isinstance(e, Resistor)]
    thermal = [SourceInfo(thermal_symbol(e.name), "thermal", e.name, e.value) for e in resistors]
    found = coefficients_of(eqs, z, [*signals, *noisy, *thermal])
    _own_thermal_noise(circuit, output, found, fixed)
    sources: list[NoiseSource] = []
    for e in resistors:
        sym = thermal_symbol(e.name)
        h = found[sym]
        r_value = e.value.xreplace(fixed) if fixed else e.value
        density = sp.sqrt(4 * BOLTZMANN * t_kelvin * r_value)
        sources.append(
            NoiseSource(
                e.name, e.name, "thermal noise √(4kTR)", "V",
                NoiseSpectrum(sym, density, sp.S.Zero), h,
            )
        )  # fmt: skip
    for amp in circuit.opamps:
        for kind in amp.nonideals:
            for spectrum in kind.spectra(amp.name):
                sym = spectrum.source
                spec = SYMBOLS[sym.name.partition(".")[2]]  # its words and unit, declared once
                sources.append(
                    NoiseSource(
                        sym.name, amp.name, spec.words, spec.unit.partition("/")[0],
                        spectrum, found[sym],
                    )
                )  # fmt: skip
    return NoiseResult(
        circuit=circuit,
        output=label,
        sources=tuple(sources),
        signals={i.symbol: found[i.symbol] for i in signals},
        values=fixed,
        temperature=t_kelvin,
    )


class NoiseResult:
    """Every noise source's transfer to one output, and the numbers that follow.

    Build it with :meth:`opsym.Circuit.noise`. Frequencies are in hertz and
    may be NumPy arrays; densities are in V/√Hz at the output (A/√Hz for a
    branch-current output ``I(name)``: :attr:`output_unit`), and in A/√Hz or
    V/√Hz at the input, as the signal source is. Corners not given are zero (white
    noise only); densities not given must be supplied with :meth:`subs`.
    """

    def __init__(
        self,
        circuit: Circuit,
        output: Any,
        sources: tuple[NoiseSource, ...],
        signals: Mapping[sp.Symbol, sp.Expr],
        values: Mapping[sp.Symbol, sp.Expr],
        temperature: sp.Expr,
    ) -> None:
        self._circuit = circuit
        self._output = output
        self._sources = sources
        self._by_name = {s.name: s for s in sources}
        self._signals = dict(signals)
        self._values = dict(values)
        self._temperature = temperature
        self._compiled: dict[str, Any] = {}
        self._forms: dict[str, sp.Expr] = {}
        self._readable: dict[str, sp.Expr] = {}

    # -- what was derived ------------------------------------------------------------

    @property
    def circuit(self) -> Circuit:
        """The circuit this result was derived from."""
        return self._circuit

    @property
    def output(self) -> Any:
        """The output node, or the (plus, minus) pair."""
        return self._output

    @property
    def temperature(self) -> float:
        """The resistors' temperature, in kelvin."""
        return float(self._temperature)

    @property
    def signals(self) -> tuple[sp.Symbol, ...]:
        """The circuit's signal sources, to which noise can be referred."""
        return tuple(self._signals)

    @property
    def names(self) -> tuple[str, ...]:
        """The noise sources: resistor names, then ``U1.en``, ``U1.in+``, ``U1.in-``…"""
        return tuple(s.name for s in self._sources)

    def source(self, name: str) -> NoiseSource:
        """The :class:`NoiseSource` called ``name`` (``"R1"``, ``"U1.en"``…)."""
        expect_text(name, "noise source name", "'R1' or 'U1.en'")
        try:
            return self._by_name[name]
        except KeyError:
            raise UnknownNameError(
                f"no noise source named {name!r}; this result has {', '.join(self.names)}"
            ) from None

    def transfer(self, name: str) -> sp.Expr:
        """``H(s)`` from noise source ``name`` to the output (V/V, or V/A for currents).

        A resistor's transfer is from its series thermal noise voltage.
        """
        if name not in self._readable:
            expr = self._substituted(self.source(name).transfer)
            self._readable[name] = transfer_form(expr, LAPLACE)
        return self._readable[name]

    def signal_transfer(self, signal: str | None = None) -> sp.Expr:
        """``H(s)`` from a signal source to the output."""
        sym = self._signal(signal)
        return transfer_form(self._substituted(self._signals[sym]), LAPLACE)

    def spectrum(self, name: str) -> NoiseSpectrum:
        """Density and 1/f corner of ``name``, with the values given so far."""
        sp_ = self.source(name).spectrum
        return NoiseSpectrum(
            sp_.source, self._substituted(sp_.density), self._substituted(sp_.corner)
        )

    # -- new results ----------------------------------------------------------------

    def subs(self, mapping: Mapping[Any, Any]) -> NoiseResult:
        """The same result with more values (names or symbols as keys).

        Examples
        --------
        >>> import opsym
        >>> c = opsym.Circuit()
        >>> c.resistor("R1", "a", "0")
        >>> c.current_source("I1", "0", "a", value=0)
        >>> n = c.noise("a").subs({"R1": "1k"})
        >>> round(float(n.density(10.0)) * 1e9, 4)  # case 13: 4.0578 nV/√Hz
        4.0578
        """
        extra = resolve_values(self._circuit, mapping)
        return NoiseResult(
            self._circuit, self._output, self._sources, self._signals,
            {**self._values, **extra}, self._temperature,
        )  # fmt: skip

    # -- numbers -----------------------------------------------------------------------

    def contribution(self, name: str, f: Any) -> np.ndarray:
        """Output noise density (``output_unit``/√Hz) due to source ``name`` alone, at ``f``."""
        check_frequencies(f, f"contribution of {name}: f")
        h, density, corner = self._numeric(name)
        freq = np.asarray(f, dtype=float)
        shape = np.sqrt(1 + corner / freq) if corner else np.ones_like(freq)
        return np.abs(h(freq)) * density * shape

    def contributions(self, f: Any) -> dict[str, np.ndarray]:
        """``{name: output density}`` for every source, at ``f``."""
        return {name: self.contribution(name, f) for name in self.names}

    def density(self, f: Any) -> np.ndarray:
        """Total output noise density (``output_unit``/√Hz): the root-sum-square of the parts."""
        check_frequencies(f, "density f")
        parts = self.contributions(f)
        return np.sqrt(sum(p**2 for p in parts.values()))

    def gain(self, f: Any, signal: str | None = None) -> np.ndarray:
        """``|H|`` of the signal path at ``f``."""
        check_frequencies(f, "gain f")
        sym = self._signal(signal)
        h = self._evaluator(f"signal {sym}", self._signals[sym])
        return np.abs(h(np.asarray(f, dtype=float)))

    def input_density(self, f: Any, signal: str | None = None) -> np.ndarray:
        """Input-referred noise density: the output density over the signal gain."""
        g = self.gain(f, signal)
        if np.any(g == 0):
            raise BudgetError("the signal gain is zero at some frequency; cannot refer to input")
        return self.density(f) / g

    def rms(self, f_low: float, f_high: float, name: str | None = None) -> float:
        """RMS output noise over ``f_low``–``f_high`` Hz (``f_high`` may be ``inf``).

        ``name`` gives one source's part; otherwise the total. The integral is
        adaptive, with break points at every pole and zero of the transfers, so
        a resonance of any Q is resolved; :meth:`rms_with_error` also gives the
        error estimate.
        """
        return self.rms_with_error(f_low, f_high, name)[0]

    def rms_with_error(
        self, f_low: float, f_high: float, name: str | None = None
    ) -> tuple[float, float]:
        """``(rms, error)``: :meth:`rms` and its estimated absolute error, V.

        Examples
        --------
        kT/C: the thermal noise of R across C in a series RLC is √(kT/C)
        whatever R, L and the Q (Johnson–Nyquist); here Q = 1000:

        >>> import math, opsym
        >>> c = opsym.Circuit("series RLC")
        >>> c.resistor("R1", "0", "a", value=1)
        >>> c.inductor("L1", "a", "b", value="1m")
        >>> c.capacitor("C1", "b", "0", value="1n")
        >>> value, error = c.noise("b").rms_with_error(0, math.inf)
        >>> kt_c = math.sqrt(1.380649e-23 * 298.15 / 1e-9)
        >>> round(value / kt_c, 9), error < 1e-9 * value
        (1.0, True)
        """
        f_low, f_high = check_band(f_low, f_high, "rms")
        self._check_band(f_low, name)
        names = self.names if name is None else (name,)
        if name is not None:
            power = lambda f: self.contribution(name, f) ** 2  # noqa: E731 - one-line density
        else:
            power = lambda f: self.density(f) ** 2  # noqa: E731 - one-line density
        value, error = integrate_with_error(power, f_low, f_high, self._breakpoints(names))
        return rms_and_error(value, error)

    def input_rms(self, f_low: float, f_high: float, signal: str | None = None) -> float:
        """RMS of the input-referred density over the band."""
        return self.input_rms_with_error(f_low, f_high, signal)[0]

    def input_rms_with_error(
        self, f_low: float, f_high: float, signal: str | None = None
    ) -> tuple[float, float]:
        """``(rms, error)``: :meth:`input_rms` and its estimated absolute error.

        Raises :class:`opsym.BudgetError` when the signal gain falls to zero
        in the band (a notch): the input-referred noise is unbounded there.
        """
        f_low, f_high = check_band(f_low, f_high, "input_rms")
        self._check_band(f_low, None)
        sym = self._signal(signal)
        breaks = {*self._breakpoints(self.names)}
        breaks.update(natural_frequencies(self._signal_form(sym)))
        with warnings.catch_warnings():
            warnings.simplefilter("error", IntegrationWarning)
            try:
                value, error = integrate_with_error(
                    lambda f: self.input_density(f, signal) ** 2, f_low, f_high, breaks
                )
            except IntegrationWarning:
                raise BudgetError(
                    f"the input-referred noise of {sym} does not integrate over "
                    f"{f_low:g} Hz to {f_high:g} Hz: the signal gain falls to (nearly) zero "
                    "in the band; refer the noise to the input over a band without the notch"
                ) from None
        return rms_and_error(value, error)

    def budget(self, f_low: float, f_high: float, signal: str | None = None) -> Any:
        """Each source's RMS over the band and its share: a :class:`~opsym.NoiseBudget`.

        The study itself lives in :mod:`opsym.study.noise`.
        """
        return call("noise_budget", self, f_low, f_high, signal)

    @property
    def output_unit(self) -> str:
        """``"A"`` for a branch-current output ``I(name)`` (densities in A/√Hz), else ``"V"``."""
        return output_unit(self._output)

    def input_unit(self, signal: str | None = None) -> str:
        """``"A"`` when the signal is a current source (input noise in A), else ``"V"``."""
        return source_unit(self._circuit, self._signal(signal))

    def __repr__(self) -> str:
        out = self._output if isinstance(self._output, str) else "-".join(self._output)
        return f"<NoiseResult: {out} of {self._circuit.title!r}, {len(self._sources)} sources>"

    # -- helpers ---------------------------------------------------------------------

    def _check_band(self, f_low: float, name: str | None) -> None:
        if f_low > 0:
            return
        for n in [name] if name is not None else self.names:
            if self._numeric(n)[2] > 0:
                raise InvalidValueError(
                    f"band from {f_low:g} Hz: the 1/f noise of {n} diverges at 0 Hz; "
                    "give f_low > 0 (0.1 Hz is the usual start of a 0.1–10 Hz band)"
                )

    def _substituted(self, expr: sp.Expr) -> sp.Expr:
        return expr.xreplace(self._values) if self._values else expr

    def _numeric(self, name: str) -> tuple[Any, float, float]:
        if name not in self._compiled:
            src = self.source(name)
            compact = self._substituted(src.transfer)
            form = evaluation_form(compact, lambda: self.transfer(name))
            self._forms[name] = form
            h = evaluator(form, f"the transfer from {name}")
            density = self._number(self._substituted(src.spectrum.density), f"{name} density")
            corner_expr = self._substituted(src.spectrum.corner)
            corner = 0.0 if corner_expr.free_symbols else self._number(corner_expr, "")
            self._compiled[name] = (h, density, corner)
        return self._compiled[name]

    def _breakpoints(self, names: tuple[str, ...]) -> list[float]:
        """Natural frequencies of the poles and zeros of the transfers of ``names``."""
        found: set[float] = set()
        for n in names:
            self._numeric(n)
            found.update(natural_frequencies(self._forms[n]))
        return sorted(found)

    def _signal_form(self, sym: sp.Symbol) -> sp.Expr:
        compact = self._substituted(self._signals[sym])
        return evaluation_form(compact, lambda: transfer_form(compact, LAPLACE))

    def _evaluator(self, what: str, expr: sp.Expr):
        return evaluator(self._substituted(expr), what)

    def _number(self, expr: sp.Expr, what: str) -> float:
        if expr.free_symbols:
            names = ", ".join(sorted(str(x) for x in expr.free_symbols))
            raise BudgetError(
                f"the {what} needs values for {names}; give them in values= "
                "(e.g. {'U1.en': '10n', 'U1.in': '1p'}) or with NoiseResult.subs"
            )
        return float(expr)

    def _signal(self, signal: str | None) -> sp.Symbol:
        if signal is not None:
            sym = self._circuit.symbol(signal)
            if sym not in self._signals:
                raise UnknownNameError(f"{signal!r} is not a signal source of this circuit")
            return sym
        if len(self._signals) != 1:
            names = ", ".join(map(str, self._signals)) or "none"
            raise UnknownNameError(
                f"this circuit has {len(self._signals)} signal sources ({names}); "
                "name the one you mean with signal="
            )
        return next(iter(self._signals))


def rms_and_error(power: float, power_error: float) -> tuple[float, float]:
    """``(√P, error of √P)`` from a power and its absolute error."""
    rms = math.sqrt(max(power, 0.0))
    if rms == 0:
        return rms, math.sqrt(power_error)
    return rms, min(power_error / (2 * rms), math.sqrt(power_error))
