"""Preparing a budget: from a symbolic result to numbers, once per design.

:func:`_prepare` turns a :class:`~opsym.analyses.result.Result`, the user's values
and the op-amp parameter sets into a :class:`_Plan` of numeric coefficients; the
budget module then evaluates the plan at any temperature cheaply
(:func:`opsym.study.budget._evaluate`). Split from ``budget.py`` to keep each
module to one job.

Numbers go in exactly, by replacement (:mod:`opsym.numeric._numbers`), into the
coefficients as solved: nothing is factored, simplified or re-derived first
(an infinite open-loop gain is evaluated at 10^30, not by re-solving the
circuit), so preparing a budget costs about as much as the solve.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import sympy as sp

from ..analyses.units import output_unit, ratio_unit, source_unit
from ..errors import BudgetError, OpsymError
from ..model.elements import Resistor
from ..model.symbols import SYMBOLS, opamp_symbol
from ..numeric._mismatch import MAX_CORNERS, REJECTED, Rejection, Spread
from ..numeric._numbers import LARGE_GAIN, Exact, exact_number, free_symbols_of, to_float
from ..numeric.adc import ADC
from ..numeric.params import OpAmpParams, ResistorParams
from ..numeric.units import format_plain, format_si, parse_quantity
from ..output.tables import SHORT_CAUTION
from .tolerance import numbered_parts, numbered_parts_text

#: Words and units of each error source in the tables.
WORST_CASE_RULE = "worst case = Σ|e| (every term at its limit, signs adding)"
RSS_RULE = (
    "RSS = √Σe², uncorrelated terms as in JCGM 100:2008 (GUM) §5.1.2 eq. (10); "
    "RSS of datasheet limits is common practice, not a GUM result"
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
class _SpreadRow:
    """A resistor-tolerance row: a source's coefficient moving, times its value."""

    source: str  # "gain: tolerance" for the signal, "tolerance: <name>" for the others
    label: str
    value: float
    unit: str
    spread: Spread


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
    spreads: tuple[_SpreadRow, ...]
    input_gain: float | None
    full_scale: float | None
    adc: ADC | None
    notes: tuple[str, ...]
    signal_unit: str = "V"  # "A" when the signal is a current source
    rejection: Rejection | None = None  # the network's CMRR, where it has one
    output_unit: str = "V"  # "A" for a branch-current output I(name)


Progress = Callable[[int, int, str], Any]


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
    progress: Progress | None = None,
) -> _Plan:
    opamps = _checked_options(grade, opamps, adc)
    out_unit = output_unit(getattr(result, "output", None))
    if adc is not None and out_unit != "V":
        raise BudgetError(
            f"output {result.output}: an ADC converts a voltage, and this output is a "
            "current; drop adc= (give full_scale= in A for ppm of span) or budget the "
            "voltage across the resistor the current flows into"
        )
    if getattr(result, "domain", "dc") == "s":
        result = result.at_dc()  # a budget of DC errors: the s = 0 limit
    terms = dict(result.terms)  # as solved: never factored before numbers go in
    names = _names(terms)
    circuit = getattr(result, "circuit", None)
    given, exact_given = _given(values, names, circuit)
    _declared_signals(result, given, exact_given)
    exact, ideal = _exact_values(names, exact_given, opamps, grade)
    lines, derived = _lines(result, terms, exact, given, opamps, progress)
    sig = _chosen_signal(signal, result.signals)
    sig_value = given.get(sig) if sig else None
    gain, open_loop = _signal_gain(terms, sig, sig_value, exact, ideal)
    signal_unit = _signal_unit(circuit, sig)
    spread_notes: list[str] = _either_sign(names, exact_given, opamps, grade)
    signal_names = [s.name for s in result.signals]
    spreads, rejection = _tolerance_rows(
        terms, signal_names, sig, gain, given, exact, _grades(resistors), circuit, spread_notes
    )
    ref: float | None = gain if gain else None
    if input_gain is not None:
        ref = parse_quantity(input_gain, where="input_gain")
    fs = None if full_scale is None else parse_quantity(full_scale, out_unit, where="full_scale")
    if fs is not None and not fs > 0:
        raise BudgetError(f"full_scale={fs} must be a positive span in {out_unit}")
    unit = ratio_unit(out_unit, signal_unit)
    notes = _plan_notes(grade if opamps else None, derived, spread_notes, adc, ref, unit, sig)
    return _Plan(
        title or f"Error budget: {getattr(circuit, 'title', '') or 'circuit'}",
        tuple(lines), opamps, grade, sig, sig_value, gain, open_loop, spreads,
        ref, fs, adc, notes, signal_unit, rejection, out_unit,
    )  # fmt: skip


def _checked_options(grade: str, opamps: Any, adc: Any) -> dict[str, OpAmpParams]:
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
    return opamps


def _names(terms: Mapping[sp.Symbol, sp.Expr]) -> dict[str, sp.Symbol]:
    """Every symbol of the terms by name, and the averaged bias names ``Ib``, ``Ios``."""
    free: set[sp.Symbol] = set(terms) | free_symbols_of(terms.values())
    for s in list(terms):
        if s.name.endswith(".Ib+"):
            owner = s.name[: -len(".Ib+")]
            free |= {opamp_symbol(owner, "Ib"), opamp_symbol(owner, "Ios")}
    return _by_name(free)


def _given(
    values: Any, names: Mapping[str, sp.Symbol], circuit: Any
) -> tuple[dict[str, float], dict[str, sp.Expr]]:
    """The user's numbers by name, as floats and exactly; each name checked.

    An exact rational given (a design file's number) is kept as it is; any
    other number is the exact rational of its float's shortest decimal.
    """
    given: dict[str, float] = {}
    exact: dict[str, sp.Expr] = {}
    for key, raw in (values or {}).items():
        name = key.name if isinstance(key, sp.Symbol) else str(key)
        if name not in names and not (circuit is not None and _circuit_knows(circuit, name)):
            raise BudgetError(
                f"values: {name!r} is not a symbol of this result; its symbols are "
                f"{', '.join(sorted(names))}"
            )
        given[name] = parse_quantity(raw, where=f"values[{name!r}]")
        exact[name] = raw if isinstance(raw, sp.Rational) else exact_number(given[name])
    return given, exact


def _declared_signals(result: Any, given: dict[str, float], exact: dict[str, sp.Expr]) -> None:
    """Add each signal's number declared in the circuit (``voltage_source(..., "1 V")``).

    ``values=`` wins where both give one.
    """
    for info in getattr(result, "sources", ()):
        name = info.symbol.name
        if info.kind == "signal" and name not in given and info.value.is_number:
            exact[name] = sp.nsimplify(info.value) if info.value.is_Float else info.value
            given[name] = float(info.value)


def _exact_values(
    names: Mapping[str, sp.Symbol], given: Mapping[str, sp.Expr], opamps: Any, grade: str
) -> tuple[Exact, Exact]:
    """Exact numbers for every symbol: at the finite gains, and with every gain at ∞."""
    subs: dict[sp.Symbol, sp.Expr] = {}
    infinite_gain: list[sp.Symbol] = []
    for name, sym in names.items():
        owner, dot, what = name.partition(".")
        if name in given:
            subs[sym] = given[name]
        elif dot and owner in opamps and _scales(what):
            stem = SYMBOLS[what].datasheet
            v = opamps[owner].value(stem, grade)
            if v is None:  # the result needs it and the set lacks it: never a silent gap
                field = f"{stem}_{'max' if grade == 'max' else 'typ'}"
                raise BudgetError(
                    f"{name}: parameter set {opamps[owner].name!r} gives no {field}; add it "
                    f"to the set (e.g. .replace({field}=...)) or give values[{name!r}]"
                )
            if math.isinf(v) and _is_gain(what):
                infinite_gain.append(sym)
            subs[sym] = exact_number(v)  # an infinite CMRR, PSRR: 1/oo is 0
    gains = [s for n, s in names.items() if _is_gain(n.partition(".")[2])]
    if infinite_gain:
        finite = [s for s in gains if s not in infinite_gain]
        if finite:
            raise BudgetError(
                f"{', '.join(s.name for s in infinite_gain)}: the parameter set gives no "
                "finite open-loop gain while other op-amps have one; give every op-amp a "
                "finite a_min, or analyse with gain='ideal'"
            )
    ideal = {**subs, **{s: LARGE_GAIN for s in gains}}
    subs.update((s, LARGE_GAIN) for s in infinite_gain)
    return Exact(subs), Exact(ideal)


def _either_sign(names: Mapping[str, sp.Symbol], given: Mapping[str, sp.Expr], opamps: Any,
                 grade: str) -> list[str]:  # fmt: skip
    """Notes for parameters of either sign taken from a set (an FDA's ``ebal``).

    A set holds a datasheet's limit, a magnitude; the coefficients use it with the
    sign the set gives, so the note says how to see the other sign.
    """
    notes = []
    for name, sym in names.items():
        owner, _, what = name.partition(".")
        if name in given or owner not in opamps or not _scales(what) or sym.is_positive:
            continue
        v = opamps[owner].value(SYMBOLS[what].datasheet, grade)
        notes.append(
            f"{name} = {v:g} from set {opamps[owner].name!r} is used with that sign; it may "
            f"have either: give values[{name!r}] = {-v:g} for the other"
        )
    return notes


def _scales(what: str) -> bool:
    """An op-amp parameter (not a source) whose number a parameter set gives."""
    spec = SYMBOLS.get(what)
    return spec is not None and spec.role == "parameter" and spec.datasheet is not None


def _is_gain(what: str) -> bool:
    """The open-loop gain of either gain model: ``A``, or the single pole's ``A0``."""
    spec = SYMBOLS.get(what)
    return spec is not None and spec.datasheet == "a"


def _lines(result, terms, exact: Exact, given, opamps, progress) -> tuple[list[_Line], list[str]]:
    """One line per error source; ``Ib±`` are budgeted as ``Ib``, ``Ios``."""
    lines: list[_Line] = []
    derived: list[str] = []
    sources = result.error_sources
    for i, sym in enumerate(sources):
        if progress is not None:
            progress(i, len(sources), f"budget: {sym.name}")
        owner, _, what = sym.name.partition(".")
        if what == "Ib-" and opamp_symbol(owner, "Ib+") in terms:
            continue  # taken with Ib+
        for name, value in _coefficients(sym, terms, exact):
            coeff = to_float(value, f"the coefficient of {name}")
            w = name.partition(".")[2]
            fixed = _fixed_value(result, name, w, coeff, given, opamps, exact, derived)
            lines.append(_Line(opamp_symbol(owner, w) if w else sym, owner, w, coeff, fixed))
    if progress is not None:
        progress(len(sources), len(sources), "budget: coefficients")
    return lines, derived


def _coefficients(sym: sp.Symbol, terms, exact: Exact) -> list[tuple[str, sp.Expr]]:
    """``[(name, exact coefficient)]``: ``Ib+`` gives ``Ib = c₊ + c₋``, ``Ios = (c₊ − c₋)/2``."""
    owner, _, what = sym.name.partition(".")
    if what != "Ib+":
        return [(sym.name, exact.value(terms[sym], f"the coefficient of {sym.name}"))]
    cp = exact.value(terms[sym], f"the coefficient of {sym.name}")
    minus = opamp_symbol(owner, "Ib-")
    cm = exact.value(terms[minus], f"the coefficient of {minus.name}")
    return [(f"{owner}.Ib", cp + cm), (f"{owner}.Ios", (cp - cm) / 2)]


def _fixed_value(result, name, what, coeff, given, opamps, exact, derived) -> float | None:
    """The value a line uses when not from the parameter set; errors if one is missing."""
    owner = name.partition(".")[0]
    fixed = given.get(name)
    if fixed is None and coeff != 0 and what == "Vcm":
        fixed = _common_mode(result, owner, exact.number)
        if fixed is not None:
            derived.append(
                f"{name} = {format_si(fixed, 'V')}: the common-mode voltage at "
                f"{owner}'s inputs, from the signal values"
            )
    if fixed is None and coeff != 0:
        if what in ("Vcm", "dVs"):
            hint = (
                "the common-mode voltage at its inputs" if what == "Vcm"
                else "the change of its total supply span"
            )  # fmt: skip
            raise BudgetError(
                f"give values[{name!r}], {hint} in volts, to budget {name}"
                + (" (or the signal values, from which opsym derives it)"
                   if what == "Vcm" else "")
            )  # fmt: skip
        if owner not in opamps or SYMBOLS.get(what) is None or not SYMBOLS[what].datasheet:
            raise BudgetError(
                f"{name} needs a value: give opamps={{{owner!r}: "
                "opamp_parameters('generic precision bipolar')} or "
                f"values[{name!r}]"
            )
    return fixed


def _chosen_signal(signal: Any, signals: Any) -> str | None:
    signals = tuple(signals)
    if signal is None:
        return signals[0].name if len(signals) == 1 else None
    sig = signal.name if isinstance(signal, sp.Symbol) else str(signal)
    if sig not in {s.name for s in signals}:
        raise BudgetError(
            f"signal {sig!r} is not a signal of this result; its signals are "
            f"{', '.join(s.name for s in signals) or 'none'}"
        )
    return sig


def _signal_gain(terms, sig, sig_value, exact: Exact, ideal: Exact):
    """The signal gain (finite A) and, with a signal value, ``G(A) − G(∞)``."""
    if not sig:
        return None, None
    g_expr = next(c for s, c in terms.items() if s.name == sig)
    g = exact.value(g_expr, f"the gain from {sig}")
    has_a = any(_is_gain(s.name.partition(".")[2]) for s in g_expr.free_symbols)
    open_loop = None
    if sig_value is not None and has_a:
        g_ideal = ideal.value(g_expr, f"the ideal gain from {sig}")
        open_loop = to_float(g - g_ideal, f"the open-loop gain error from {sig}")
    return to_float(g, f"the gain from {sig}"), open_loop


def _grades(resistors: Any) -> Any:
    """``None``, one ResistorParams for every part, or a checked mapping name → grade."""
    if resistors is None or isinstance(resistors, ResistorParams):
        return resistors
    if not isinstance(resistors, Mapping):
        raise BudgetError(
            "resistors must be a ResistorParams or a mapping name → ResistorParams, "
            "e.g. resistors=ResistorParams.from_text('0.1%', '25 ppm')"
        )
    grades = {}
    for k, v in resistors.items():
        if not isinstance(v, ResistorParams):
            raise BudgetError(f"resistors[{k!r}] must be a ResistorParams")
        grades[str(k)] = v
    return grades


def _grade_of(grades: Any, name: str) -> ResistorParams | None:
    return grades if isinstance(grades, ResistorParams) else grades.get(name)


def _parts(exprs: Any, grades: Any, given: Mapping[str, float]) -> list[sp.Symbol]:
    """The toleranced components of ``exprs``, each with a value (else an error)."""
    free: set[sp.Symbol] = set()
    for e in exprs:
        free |= e.free_symbols
    parts = sorted(
        (s for s in free if s.is_positive and "." not in s.name and _grade_of(grades, s.name)),
        key=lambda s: s.name,
    )
    missing = [s.name for s in parts if s.name not in given]
    if missing:
        raise BudgetError(
            f"resistor tolerance needs values for {', '.join(missing)}; give them in values="
        )
    return parts


def _spread(exprs, grades, given) -> tuple[list[sp.Symbol], Any]:
    """The toleranced parts of ``exprs`` and their tolerances and TCRs."""
    parts = _parts(exprs, grades, given)
    chosen = [_grade_of(grades, s.name) for s in parts]
    base_t = np.array([g.tolerance for g in chosen if g is not None])
    tcr = np.array([g.tcr for g in chosen if g is not None])
    return parts, (base_t, tcr)


def _tolerance_rows(terms, signals, sig, gain, given, exact: Exact, grades, circuit, notes):
    """The signal's gain-tolerance row, every other valued source's row, and the CMRR.

    Every signal source other than the one read (a common-mode input, a
    reference, a second input) with a non-zero value gets the row of its
    coefficient moving with the resistors; one the network nominally rejects is
    the common mode, and with it the network has a CMRR.
    """
    if grades is None:
        return (), None
    coefficients = {s.name: c for s, c in terms.items() if s.name in signals}
    rows: list[_SpreadRow] = []
    rejection = None
    for name in sorted(coefficients, key=lambda n: (n != sig, signals.index(n))):
        coeff, value = coefficients[name], given.get(name)
        common = name != sig and _rejected(coeff, gain, exact)
        if name != sig and gain and rejection is None:
            rejection = _rejection(coefficients[sig], coeff, common, grades, given, exact)
        if value is None or (name != sig and value == 0):
            continue
        parts, (base_t, tcr) = _spread([coeff], grades, given)
        if not parts:
            continue
        spread = Spread.of(coeff, parts, exact.values, base_t, tcr)
        rows.append(_spread_row(name, sig, common, value, _signal_unit(circuit, name), spread))
        notes.append(_spread_note(rows[-1], len(parts)))
    _fixed_resistors(circuit, rows, notes)
    return tuple(rows), rejection


def _fixed_resistors(circuit: Any, rows: list[_SpreadRow], notes: list[str]) -> None:
    """Say which parts' tolerance the budget cannot hold: those given as numbers.

    With ``resistors=`` asked for and nothing left to budget that is an error;
    otherwise a note names them.
    """
    fixed = [name for name in numbered_parts(circuit)
             if isinstance(circuit.element(name), Resistor)]  # fmt: skip
    if not fixed:
        return
    if not rows:
        raise BudgetError(f"resistors=: {numbered_parts_text(fixed)}; the budget would "
                          "have no tolerance rows")  # fmt: skip
    notes.append(f"resistor tolerance: not budgeted: {numbered_parts_text(fixed)}")


def _rejected(coeff: sp.Expr, gain: float | None, exact: Exact) -> bool:
    """Whether the network nominally rejects this source (a common-mode input)."""
    if not gain:
        return False
    try:
        return abs(exact.number(coeff, "a source's coefficient")) <= REJECTED * abs(gain)
    except BudgetError:  # a coefficient without values: not budgeted, not judged
        return False


def _rejection(g_sig, coeff, common, grades, given, exact: Exact) -> Rejection | None:
    """The network CMRR: a rejected input against the signal, or a ± input pair.

    With a common-mode source, Ad is the signal's gain and Acm the source's
    coefficient; with two inputs of opposite gains g₁, g₂ (a difference
    amplifier read from V1 and V2), Ad = (g₂ − g₁)/2 and Acm = g₁ + g₂.
    """
    try:
        if common:
            ad, acm = g_sig, coeff
        elif abs(exact.number(g_sig + coeff, "Acm")) <= REJECTED * abs(exact.number(g_sig, "Ad")):
            ad, acm = (g_sig - coeff) / 2, g_sig + coeff
        else:
            return None
        if not acm.free_symbols:
            return None  # a source that never reaches the output: no CMRR to state
        parts, (base_t, tcr) = _spread([ad, acm], grades, given)
    except BudgetError:  # values missing: no CMRR to state
        return None
    return Rejection.of(ad, acm, parts, exact.values, base_t, tcr) if parts else None


def _spread_row(name, sig, common, value, unit, spread) -> _SpreadRow:
    if name == sig:
        return _SpreadRow("gain: tolerance", "resistor tolerance (gain)", value, unit, spread)
    label = "common-mode error from resistor mismatch" if common else (
        f"{name} × resistor tolerance")  # fmt: skip
    return _SpreadRow(f"tolerance: {name}", label, value, unit, spread)


def _spread_note(row: _SpreadRow, n: int) -> str:
    what = "the gain" if row.source == "gain: tolerance" else (
        f"the coefficient of {row.source.partition(': ')[2]}")  # fmt: skip
    if row.spread.method == "corners":
        return (f"resistor tolerance: exact corners of {what} over {n} parts "
                "(tolerance + TCR·|T − 25 °C|, each part either way)")  # fmt: skip
    return (f"resistor tolerance: first-order bound of {what} over {n} parts (over "
            f"{MAX_CORNERS} for corners)")  # fmt: skip


def _plan_notes(grade, derived, notes, adc, ref, gain_unit, sig) -> tuple[str, ...]:
    grade_note = (
        "values: datasheet limits (max Vos, |Ib|, Ios; min A, CMRR, PSRR)"
        if grade == "max" else "values: typical" if grade else "values: as given in values="
    )  # fmt: skip
    out = [grade_note, WORST_CASE_RULE, RSS_RULE, *derived, *notes]
    if adc is not None:
        out.append(f"ADC: {adc.describe()}")
    if ref:
        out.append(
            f"input-referred: output / |G|, G = {_gain_text(ref, gain_unit)} from "
            f"{sig or 'input_gain'}"
        )
    out.append(SHORT_CAUTION)
    return tuple(out)


def _gain_text(gain: float, unit: str) -> str:
    """``-10 V/V``, ``100 kΩ`` (V/A), ``100 µS`` (A/V): as the trade writes a gain."""
    if unit in ("Ω", "S"):
        return format_si(gain, unit, 6)
    return f"{format_plain(gain, '', 6)} {unit}"


def _signal_unit(circuit: Any, signal: str | None) -> str:
    """The unit of ``signal``, a source of ``circuit`` (``"V"`` without either)."""
    return "V" if circuit is None or signal is None else source_unit(circuit, signal)


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
