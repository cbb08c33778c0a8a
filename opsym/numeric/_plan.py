"""Preparing a budget: from a symbolic result to numbers, once per design.

:func:`_prepare` turns a :class:`~opsym.analyses.result.Result`, the user's values
and the op-amp parameter sets into a :class:`_Plan` of numeric coefficients; the
budget module then evaluates the plan at any temperature cheaply
(:func:`opsym.numeric.budget._evaluate`). Split from ``budget.py`` to keep each
module to one job.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import sympy as sp

from ..errors import BudgetError, OpsymError
from .adc import ADC
from .params import REFERENCE_TEMPERATURE, OpAmpParams, ResistorParams
from .tolerance import MAX_CORNERS, _corner_signs, _vectorised, first_order_bound
from .units import format_si, parse_quantity

#: Words and units of each error source in the tables.
WORDS = {
    "Vos": ("offset voltage Vos", "V"),
    "Ib": ("bias current Ib", "A"),
    "Ios": ("offset current Ios", "A"),
    "Ib+": ("bias current Ib+", "A"),
    "Ib-": ("bias current Ib-", "A"),
    "Vcm": ("common mode Vcm/CMRR", "V"),
    "dVs": ("supply change dVs/PSRR", "V"),
}
#: Sources whose sign the parameter set gives (the rest are ±).
SIGNED = {"Ib", "Ib+", "Ib-"}
WORST_CASE_RULE = "worst case = Σ|e| (every term at its limit, signs adding)"
RSS_RULE = (
    "RSS = √Σe², uncorrelated terms as in JCGM 100:2008 (GUM) §5.1.2 eq. (10); "
    "RSS of datasheet limits is common practice, not a GUM result"
)
SHORT_CAUTION = (
    "A design aid: verify by measurement; for medical or safety instrumentation follow "
    "local codes and have the design reviewed by a licensed engineer."
)


# Preparing (symbolic → numbers, once) and evaluating (at a temperature, cheaply)


@dataclass(frozen=True)
class _Line:
    symbol: sp.Symbol
    owner: str
    what: str
    coefficient: float
    fixed_value: float | None  # from values= (overrides the parameter set)


@dataclass(frozen=True)
class _Plan:
    title: str
    lines: tuple[_Line, ...]
    opamps: Mapping[str, OpAmpParams]
    grade: str
    signal: str | None
    signal_value: float | None
    gain: float | None  # signal gain with finite A, at nominal values
    open_loop_error: float | None  # G(A) - G(inf)
    tolerance: Any  # (call, nominal, base_t, tcr, parts) or None
    input_gain: float | None
    full_scale: float | None
    adc: ADC | None
    notes: tuple[str, ...]
    signal_unit: str = "V"  # "A" when the signal is a current source


def _by_name(symbols: Any) -> dict[str, sp.Symbol]:
    return {s.name: s for s in symbols if isinstance(s, sp.Symbol)}


def _prepare(
    result: Any,
    values: Mapping[Any, Any] | None,
    opamps: Mapping[str, OpAmpParams] | None,
    *,
    resistors: Any,
    grade: str,
    signal: Any,
    input_gain: Any,
    full_scale: Any,
    adc: ADC | None,
    title: str | None,
) -> _Plan:
    if grade not in ("max", "typical"):
        raise BudgetError(f"grade {grade!r} is not known; use 'max' (limits) or 'typical'")
    opamps = dict(opamps or {})
    for key, p in opamps.items():
        if not isinstance(p, OpAmpParams):
            raise BudgetError(
                f"opamps[{key!r}] is a {type(p).__name__}; give an OpAmpParams, e.g. "
                "opamp_parameters('generic precision bipolar')"
            )
    if adc is not None and not isinstance(adc, ADC):
        raise BudgetError("adc must be an ADC, e.g. ADC.unipolar(16, 10.0)")
    if getattr(result, "domain", "dc") == "s":
        result = result.at_dc()  # a budget of DC errors: the s = 0 limit
    terms = dict(result.terms)
    if any(s.name.endswith(".Ib+") for s in terms):
        result = result.with_average_bias()
        terms = dict(result.terms)
    signals = tuple(result.signals)
    free: set[sp.Symbol] = set(terms)
    for c in terms.values():
        free |= c.free_symbols
    names = _by_name(free)

    # Numbers given by the user, by name.
    given: dict[str, float] = {}
    circuit = getattr(result, "circuit", None)
    for key, raw in (values or {}).items():
        name = key.name if isinstance(key, sp.Symbol) else str(key)
        if name not in names:
            known = circuit is not None and _circuit_knows(circuit, name)
            if not known:
                raise BudgetError(
                    f"values: {name!r} is not a symbol of this result; its symbols are "
                    f"{', '.join(sorted(names))}"
                )
        given[name] = parse_quantity(raw, where=f"values[{name!r}]")

    # Op-amp parameters that scale coefficients: A (or A0, the DC gain of a pole), CMRR, PSRR.
    subs: dict[sp.Symbol, Any] = {}
    infinite_gain: list[sp.Symbol] = []
    for name, sym in names.items():
        owner, dot, what = name.partition(".")
        if name in given:
            subs[sym] = sp.Float(given[name], 17)
        elif dot and owner in opamps and what in ("A", "A0", "CMRR", "PSRR"):
            p = opamps[owner]
            v = {"A": p.gain, "A0": p.gain, "CMRR": p.cmrr, "PSRR": p.psrr}[what](grade)
            if math.isinf(v):
                if what in ("A", "A0"):
                    infinite_gain.append(sym)
                else:
                    subs[sym] = sp.oo
            else:
                subs[sym] = sp.Float(v, 17)
    if infinite_gain:
        finite = [
            s
            for s in names.values()
            if s.name.endswith((".A", ".A0")) and s not in infinite_gain
        ]
        if finite:
            raise BudgetError(
                f"{', '.join(s.name for s in infinite_gain)}: the parameter set gives no "
                "finite open-loop gain while other op-amps have one; give every op-amp a "
                "finite a_min, or analyse with gain='ideal'"
            )
        result = result.ideal()
        terms = dict(result.terms)

    def number(expr: sp.Expr, what: str) -> float:
        v = expr.subs(subs) if subs else expr
        # 1/oo is 0; a lone "oo" coefficient would be a modelling error
        leftover = v.free_symbols
        if leftover:
            missing = ", ".join(sorted(s.name for s in leftover))
            raise BudgetError(
                f"{what} needs values for {missing}: give them in values= (components, "
                "signals, U1.Vcm, U1.dVs) or give the op-amp a parameter set in opamps="
            )
        x = complex(v)
        if x.imag != 0 or not math.isfinite(x.real):
            raise BudgetError(f"{what} evaluates to {v}; check the values")
        return x.real

    # Fill numeric values of components into subs (after the op-amp ones).
    for name, x in given.items():
        if name in names:
            subs[names[name]] = sp.Float(x, 17)

    lines = []
    derived: list[str] = []
    for sym in result.error_sources:
        owner, _, what = sym.name.partition(".")
        coeff = number(terms[sym], f"the coefficient of {sym.name}")
        fixed = given.get(sym.name)
        if fixed is None and coeff != 0 and what == "Vcm":
            fixed = _common_mode(result, owner, number)
            if fixed is not None:
                derived.append(
                    f"{sym.name} = {format_si(fixed, 'V')}: the common-mode voltage at "
                    f"{owner}'s inputs, from the signal values"
                )
        if fixed is None and coeff != 0:
            if what in ("Vcm", "dVs"):
                hint = (
                    "the common-mode voltage at its inputs" if what == "Vcm"
                    else "the change of its total supply span"
                )  # fmt: skip
                raise BudgetError(
                    f"give values[{sym.name!r}], {hint} in volts, to budget {sym.name}"
                    + (" (or the signal values, from which opsym derives it)"
                       if what == "Vcm" else "")
                )  # fmt: skip
            if owner not in opamps or what not in WORDS:
                raise BudgetError(
                    f"{sym.name} needs a value: give opamps={{{owner!r}: "
                    "opamp_parameters('generic precision bipolar')}} or "
                    f"values[{sym.name!r}]"
                )
        lines.append(_Line(sym, owner, what, coeff, fixed))

    # The signal: reference gain and gain rows.
    sig = None
    if signal is not None:
        sig = signal.name if isinstance(signal, sp.Symbol) else str(signal)
        if sig not in {s.name for s in signals}:
            raise BudgetError(
                f"signal {sig!r} is not a signal of this result; its signals are "
                f"{', '.join(s.name for s in signals) or 'none'}"
            )
    elif len(signals) == 1:
        sig = signals[0].name
    gain = open_loop = None
    tolerance = None
    sig_value = given.get(sig) if sig else None
    notes: list[str] = []
    if sig:
        sig_sym = next(s for s in signals if s.name == sig)
        g_expr = terms[sig_sym]
        gain = number(g_expr, f"the gain from {sig}")
        has_a = any(s.name.endswith(".A") for s in g_expr.free_symbols)
        if sig_value is not None and has_a:
            g_ideal = number(result.ideal().terms[sig_sym], f"the ideal gain from {sig}")
            open_loop = gain - g_ideal
        if sig_value is not None and resistors is not None:
            tolerance = _tolerance_plan(g_expr, subs, given, names, resistors, notes)
    ref: float | None
    if input_gain is not None:
        ref = parse_quantity(input_gain, where="input_gain")
    else:
        ref = gain if gain else None
    fs = None if full_scale is None else parse_quantity(full_scale, "V", where="full_scale")
    if fs is not None and not fs > 0:
        raise BudgetError(f"full_scale={fs} must be a positive span in volts")
    grade_note = (
        "values: datasheet limits (max Vos, |Ib|, Ios; min A, CMRR, PSRR)"
        if grade == "max" else "values: typical"
    )  # fmt: skip
    notes = [grade_note, WORST_CASE_RULE, RSS_RULE, *derived, *notes]
    if adc is not None:
        notes.append(f"ADC: {adc.describe()}")
    signal_unit = _signal_unit(circuit, sig)
    if ref:
        notes.append(
            f"input-referred: output / |G|, G = {ref:.6g} V/{signal_unit} from "
            f"{sig or 'input_gain'}"
        )
    notes.append(SHORT_CAUTION)
    return _Plan(
        title or f"Error budget: {getattr(circuit, 'title', '') or 'circuit'}",
        tuple(lines), opamps, grade, sig, sig_value, gain, open_loop, tolerance,
        ref, fs, adc, tuple(notes), signal_unit,
    )  # fmt: skip


def _signal_unit(circuit: Any, signal: str | None) -> str:
    """``"A"`` when ``signal`` is a current source of ``circuit``, else ``"V"``."""
    from ..model.elements import CurrentSource

    if circuit is None or signal is None:
        return "V"
    try:
        element = circuit.element(signal)
    except Exception:  # not an element name (an input_gain given by hand)
        return "V"
    return "A" if isinstance(element, CurrentSource) else "V"


def _circuit_knows(circuit: Any, name: str) -> bool:
    try:
        circuit.symbol(name)
    except Exception:  # any lookup failure means "not a name of this circuit"
        return False
    return True


def _common_mode(result: Any, owner: str, number: Any) -> float | None:
    """``U1.Vcm`` from the signals' values, or ``None`` if they are not all given."""
    try:
        return number(result.common_mode(owner), f"the common-mode voltage of {owner}")
    except OpsymError:
        return None


def _tolerance_plan(g_expr, subs, given, names, resistors, notes):
    """Set up the resistor-tolerance gain row: parts, nominal values, t and TCR."""
    comps = [s for s in g_expr.free_symbols if s.is_positive and "." not in s.name]
    if isinstance(resistors, ResistorParams):
        grades = {s.name: resistors for s in comps}
    elif isinstance(resistors, Mapping):
        grades = {}
        for k, v in resistors.items():
            if not isinstance(v, ResistorParams):
                raise BudgetError(f"resistors[{k!r}] must be a ResistorParams")
            grades[str(k)] = v
    else:
        raise BudgetError("resistors must be a ResistorParams or a mapping name → ResistorParams")
    parts = sorted((s for s in comps if s.name in grades), key=lambda s: s.name)
    if not parts:
        return None
    missing = [s.name for s in parts if s.name not in given]
    if missing:
        raise BudgetError(
            f"resistor tolerance needs values for {', '.join(missing)}; give them in values="
        )
    fixed = {s: float(v) for s, v in subs.items() if s not in parts and v.is_finite}
    base_t = np.array([grades[s.name].tolerance for s in parts])
    tcr = np.array([grades[s.name].tcr for s in parts])
    nominal = np.array([given[s.name] for s in parts])
    if len(parts) <= MAX_CORNERS:
        call = _vectorised(g_expr, parts, fixed)
        notes.append(
            f"resistor tolerance: exact corners of the gain over {len(parts)} parts "
            "(tolerance + TCR·|T − 25 °C|, each part either way)"
        )
        return ("corners", call, nominal, base_t, tcr, parts)
    notes.append(
        f"resistor tolerance: first-order bound over {len(parts)} parts (over {MAX_CORNERS} "
        "for corners)"
    )
    sym_vals = {s.name: v for s, v in fixed.items()}
    sym_vals.update((p.name, v) for p, v in zip(parts, nominal, strict=True))
    return ("bound", g_expr, sym_vals, base_t, tcr, parts)


def _tolerance_deviation(plan: _Plan, temperature: float) -> float:
    kind, f, nominal, base_t, tcr, parts = plan.tolerance
    t = base_t + tcr * abs(temperature - REFERENCE_TEMPERATURE)
    if kind == "corners":
        signs = _corner_signs(len(parts))
        g = f((nominal * (1.0 + signs * t)).T)
        g0 = float(f(nominal[:, None])[0])
        return float(np.max(np.abs(g - g0)))
    tol = {p.name: ti for p, ti in zip(parts, t, strict=True)}
    _, dy, _ = first_order_bound(f, nominal, tol)
    return dy
