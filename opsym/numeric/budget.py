"""The numeric error budget of one output: every contribution, its share, and the totals.

:func:`error_budget` takes a symbolic result (``Circuit.analyze``), values for
the components and signals, and an op-amp parameter set per op-amp; it returns
an immutable :class:`Budget` whose rows are sorted largest first.

Rules (stated again in every report's notes):

* **Sign.** Vos, Ios, Vcm/CMRR and dVs/PSRR have unknown sign: their rows are
  shown as ``±``. The bias current Ib has the sign of its parameter set
  (positive into the pins), so its row shows a signed value; likewise the
  gain error from finite open-loop gain, whose sign the circuit fixes.
* **Worst case** = Σ|eᵢ|: every term at its limit with the sign that adds.
  Signed rows count by magnitude too (the limit of a signed-known term is still
  a limit, and the sum must bound every case).
* **RSS** = √(Σeᵢ²): the combination of uncorrelated terms of JCGM 100:2008
  (GUM) §5.1.2 eq. (10) with unit sensitivity coefficients. Applied to
  datasheet *limits* rather than standard uncertainties it is common practice
  of the trade, not a GUM result.
* **Input-referred** = output error / |signal gain| (the gain with finite A).
* **ppm of full scale** = e / FS × 10⁶; **LSB** = e / (FSR/2^N).
* **Gain rows** need the signal's value (its full-scale input): finite
  open-loop gain gives (G(A) − G(∞))·Vsig; resistor tolerance gives the worst
  corner deviation of G times |Vsig| (first-order bound beyond 12 parts).

Examples
--------
>>> import opsym
>>> from opsym.numeric.params import opamp_parameters
>>> c = opsym.Circuit("gain of 101")
>>> c.voltage_source("Vin", "p", "0")
>>> c.resistor("R1", "n", "0", value=1000)
>>> c.resistor("R2", "n", "out", value=100000)
>>> c.opamp("U1", plus="p", minus="n", out="out")
>>> b = error_budget(c.analyze("out"), {}, {"U1": opamp_parameters("precision bipolar")})
>>> [r.source for r in b.rows]
['U1.Vos', 'U1.Ib', 'U1.Ios']
>>> round(b.worst_case * 1e3, 4)
2.825
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

__all__ = ["RSS_RULE", "WORST_CASE_RULE", "Budget", "BudgetRow", "error_budget"]

WORST_CASE_RULE = "worst case = Σ|e| (every term at its limit, signs adding)"
RSS_RULE = (
    "RSS = √Σe², uncorrelated terms as in JCGM 100:2008 (GUM) §5.1.2 eq. (10); "
    "RSS of datasheet limits is common practice, not a GUM result"
)
SHORT_CAUTION = "A design aid: verify by measurement before relying on it."

_WORDS = {
    "Vos": ("offset voltage Vos", "V"),
    "Ib": ("bias current Ib", "A"),
    "Ios": ("offset current Ios", "A"),
    "Ib+": ("bias current Ib+", "A"),
    "Ib-": ("bias current Ib-", "A"),
    "Vcm": ("common mode Vcm/CMRR", "V"),
    "dVs": ("supply change dVs/PSRR", "V"),
}
_SIGNED = {"Ib", "Ib+", "Ib-"}


@dataclass(frozen=True)
class BudgetRow:
    """One contribution to the output error.

    Attributes
    ----------
    source : str
        The source's name (``"U1.Vos"``), or ``"gain: open-loop"`` /
        ``"gain: tolerance"`` for the gain rows.
    label : str
        Words for reports.
    value : float
        The source's value used (V or A; the signal value for gain rows).
    unit : str
        Unit of ``value``.
    coefficient : float
        Output volts per unit of ``value`` (for gain rows: the gain deviation).
    output : float
        Contribution at the output, V: signed if ``signed``, else the magnitude.
    signed : bool
        Whether the sign is known.
    input : float or None
        Referred to the input, V (``None`` without a reference gain).
    ppm : float or None
        Of full scale.
    lsb : float or None
        In ADC LSBs.
    share : float
        ``|output|`` over the worst-case sum.
    """

    source: str
    label: str
    value: float
    unit: str
    coefficient: float
    output: float
    signed: bool
    input: float | None
    ppm: float | None
    lsb: float | None
    share: float

    @property
    def magnitude(self) -> float:
        """``|output|``."""
        return abs(self.output)


def _pm(x: float, signed: bool, unit: str = "V") -> str:
    return format_si(x, unit) if signed else "±" + format_si(abs(x), unit)


def _num(x: float | None, signed: bool, digits: int = 3) -> str:
    if x is None:
        return "—"
    v = x if signed else abs(x)
    text = f"{v:.0f}" if abs(v) >= 10**digits else f"{v:.{digits}g}"
    return text if signed else "±" + text


@dataclass(frozen=True)
class Budget:
    """An immutable error budget: rows largest first, worst-case and RSS totals.

    Use :meth:`to_markdown`, :meth:`to_latex` (booktabs) or :meth:`to_text`.
    """

    title: str
    rows: tuple[BudgetRow, ...]
    worst_case: float
    rss: float
    input_gain: float | None
    signal: str | None
    full_scale: float | None
    adc: ADC | None
    grade: str
    temperature: float
    notes: tuple[str, ...]

    @property
    def worst_case_input(self) -> float | None:
        """Worst case referred to the input, V."""
        return None if not self.input_gain else self.worst_case / abs(self.input_gain)

    @property
    def rss_input(self) -> float | None:
        """RSS referred to the input, V."""
        return None if not self.input_gain else self.rss / abs(self.input_gain)

    def row(self, source: str) -> BudgetRow:
        """The row of one source, by name (``"U1.Vos"``)."""
        for r in self.rows:
            if r.source == source:
                return r
        raise BudgetError(
            f"budget has no row {source!r}; its rows are {', '.join(r.source for r in self.rows)}"
        )

    def _scaled(self, x: float) -> tuple[float | None, float | None]:
        fs = self.full_scale if self.full_scale else (self.adc.fsr if self.adc else None)
        ppm = x / fs * 1e6 if fs else None
        lsb = self.adc.lsbs(x) if self.adc else None
        return ppm, lsb

    def table(self):
        """The budget as an :class:`opsym.output.tables.Table`."""
        from ..output.tables import Table

        headers = ["source", "value", "coefficient", "at output", "at input"]
        fs = self.full_scale or (self.adc.fsr if self.adc else None)
        if fs:
            headers.append("ppm FS")
        if self.adc:
            headers.append("LSB")
        headers.append("share")
        body = []
        for r in self.rows:
            if r.source.startswith("gain:"):
                coef = f"ΔG = {r.coefficient:+.3g}"
            elif r.unit == "A":
                coef = format_si(r.coefficient, "Ω")  # V/A: the trade writes it in ohms
            else:
                coef = f"{r.coefficient:.4g} V/V"
            cells = [
                r.label,
                format_si(r.value, r.unit),
                coef,
                _pm(r.output, r.signed),
                "—" if r.input is None else _pm(r.input, r.signed),
            ]
            if fs:
                cells.append(_num(r.ppm, r.signed))
            if self.adc:
                cells.append(_num(r.lsb, r.signed))
            cells.append(f"{100 * r.share:.1f} %")
            body.append(tuple(cells))
        footer = []
        for name, total, rti in (
            ("worst case Σ|e|", self.worst_case, self.worst_case_input),
            ("RSS √Σe²", self.rss, self.rss_input),
        ):
            ppm, lsb = self._scaled(total)
            cells = [name, "", "", "±" + format_si(total, "V"),
                     "—" if rti is None else "±" + format_si(rti, "V")]  # fmt: skip
            if fs:
                cells.append(_num(ppm, False))
            if self.adc:
                cells.append(_num(lsb, False))
            cells.append("")
            footer.append(tuple(cells))
        align = "lrrrr" + ("r" if fs else "") + ("r" if self.adc else "") + "r"
        return Table(tuple(headers), tuple(body), align, self.title, tuple(footer), self.notes)

    def to_markdown(self) -> str:
        """Markdown table with the rules used as notes."""
        return self.table().to_markdown()

    def to_latex(self, *, float_env: bool = True) -> str:
        """LaTeX booktabs table (needs ``\\usepackage{booktabs}``)."""
        return self.table().to_latex(float_env=float_env)

    def to_text(self) -> str:
        """Plain text for a terminal."""
        return self.table().to_text()

    def __str__(self) -> str:
        return self.to_text()


# ----------------------------------------------------------------------------------------
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

    # Op-amp parameters that scale coefficients: A, CMRR, PSRR.
    subs: dict[sp.Symbol, Any] = {}
    infinite_gain: list[sp.Symbol] = []
    for name, sym in names.items():
        owner, dot, what = name.partition(".")
        if name in given:
            subs[sym] = sp.Float(given[name], 17)
        elif dot and owner in opamps and what in ("A", "CMRR", "PSRR"):
            p = opamps[owner]
            v = {"A": p.gain, "CMRR": p.cmrr, "PSRR": p.psrr}[what](grade)
            if math.isinf(v):
                if what == "A":
                    infinite_gain.append(sym)
                else:
                    subs[sym] = sp.oo
            else:
                subs[sym] = sp.Float(v, 17)
    if infinite_gain:
        finite = [s for s in names.values() if s.name.endswith(".A") and s not in infinite_gain]
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
            if owner not in opamps or what not in _WORDS:
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
    if ref:
        notes.append(f"input-referred: output / |G|, G = {ref:.6g} V/V from {sig or 'input_gain'}")
    notes.append(SHORT_CAUTION)
    return _Plan(
        title or f"Error budget: {getattr(circuit, 'title', '') or 'circuit'}",
        tuple(lines), opamps, grade, sig, sig_value, gain, open_loop, tolerance,
        ref, fs, adc, tuple(notes),
    )  # fmt: skip


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


def _evaluate(plan: _Plan, temperature: float) -> Budget:
    raw = []  # (source, label, value, unit, coefficient, output, signed)
    for ln in plan.lines:
        words, unit = _WORDS.get(ln.what, (ln.what, "V"))
        p = plan.opamps.get(ln.owner)
        if ln.fixed_value is not None:
            value = ln.fixed_value
        elif ln.coefficient == 0 and p is None:
            value = 0.0
        elif p is None:  # pragma: no cover - _prepare insists on a set or a value
            raise BudgetError(f"{ln.symbol} needs a value or a parameter set")
        elif ln.what == "Vos":
            value = p.vos(plan.grade, temperature)
        elif ln.what in ("Ib", "Ib+", "Ib-"):
            value = p.ib(plan.grade, temperature)
        elif ln.what == "Ios":
            value = p.ios(plan.grade, temperature)
        else:  # Vcm, dVs without a value but with a zero coefficient
            value = 0.0
        signed = ln.what in _SIGNED
        out = ln.coefficient * value
        raw.append((ln.symbol.name, f"{ln.owner} {words}", value, unit, ln.coefficient,
                    out if signed else abs(out), signed))  # fmt: skip
    if plan.signal_value is not None and plan.open_loop_error is not None:
        raw.append(
            (
                "gain: open-loop",
                "finite open-loop gain",
                plan.signal_value,
                "V",
                plan.open_loop_error,
                plan.open_loop_error * plan.signal_value,
                True,
            )
        )
    if plan.tolerance is not None and plan.signal_value is not None:
        dev = _tolerance_deviation(plan, temperature)
        raw.append(("gain: tolerance", "resistor tolerance (gain)", plan.signal_value, "V",
                    dev, abs(dev * plan.signal_value), False))  # fmt: skip
    raw.sort(key=lambda r: -abs(r[5]))
    worst = float(sum(abs(r[5]) for r in raw))
    rss = float(math.sqrt(sum(r[5] ** 2 for r in raw)))
    fs = plan.full_scale or (plan.adc.fsr if plan.adc else None)
    rows = []
    for source, label, value, unit, coeff, out, signed in raw:
        rows.append(
            BudgetRow(
                source, label, value, unit, coeff, out, signed,
                out / abs(plan.input_gain) if plan.input_gain else None,
                out / fs * 1e6 if fs else None,
                plan.adc.lsbs(out) if plan.adc else None,
                abs(out) / worst if worst else 0.0,
            )
        )  # fmt: skip
    notes = plan.notes
    if temperature != REFERENCE_TEMPERATURE:
        notes = (f"at {temperature:g} °C: Vos + drift·|T − 25 °C|; Ib and Ios by each set's "
                 "bias law", *notes)  # fmt: skip
    return Budget(
        plan.title, tuple(rows), worst, rss, plan.input_gain, plan.signal, plan.full_scale,
        plan.adc, plan.grade, float(temperature), notes,
    )  # fmt: skip


def error_budget(
    result: Any,
    values: Mapping[Any, Any] | None = None,
    opamps: Mapping[str, OpAmpParams] | None = None,
    *,
    resistors: ResistorParams | Mapping[str, ResistorParams] | None = None,
    grade: str = "max",
    signal: Any = None,
    input_gain: Any = None,
    full_scale: Any = None,
    adc: ADC | None = None,
    temperature: float = REFERENCE_TEMPERATURE,
    title: str | None = None,
) -> Budget:
    """The error budget of ``result`` with numbers put in.

    Parameters
    ----------
    result : opsym Result
        From ``Circuit.analyze``; ``Ib+``/``Ib-`` are rewritten as ``Ib``,
        ``Ios`` (``with_average_bias``).
    values : mapping
        Names (or symbols) → numbers or text (``"10k"``): components left
        symbolic, the signal's full-scale value (for gain rows), ``U1.Vcm``
        (common-mode voltage at the inputs) and ``U1.dVs`` (supply-span change)
        when the op-amp has CMRR/PSRR. A value given here overrides the
        parameter set (e.g. ``{"U1.Vos": "1m"}``).
    opamps : mapping
        Op-amp name → :class:`~opsym.numeric.params.OpAmpParams`.
    resistors : ResistorParams or mapping, optional
        Tolerance/TCR for every component in the signal gain, or per name;
        adds a gain row (needs the signal value).
    grade : {"max", "typical"}
        Datasheet limits (the worst case) or typical values.
    signal : str, optional
        The signal whose gain refers errors to the input (default: the only one).
    input_gain : float, optional
        Use this gain to refer to the input instead (e.g. a differential gain).
    full_scale : float or str, optional
        Output full-scale span for ppm (default: the ADC's FSR).
    adc : ADC, optional
        For LSB columns.
    temperature : float
        °C; Vos drifts by ``drift·|T − 25|``, Ib and Ios follow the bias law,
        resistors spread by ``TCR·|T − 25|``.
    title : str, optional
        Table caption.

    Returns
    -------
    Budget
    """
    plan = _prepare(
        result, values, opamps, resistors=resistors, grade=grade, signal=signal,
        input_gain=input_gain, full_scale=full_scale, adc=adc, title=title,
    )  # fmt: skip
    return _evaluate(plan, float(temperature))
