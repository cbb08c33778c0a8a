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
* **Other sources' tolerance rows**: every other signal source with a non-zero
  value (a common-mode input, a reference, a second input) gets the worst
  change of its coefficient with resistor tolerance times |value|; one the
  network nominally rejects is the "common-mode error from resistor mismatch",
  and the budget states the network CMRR (:attr:`Budget.cmrr_db`).

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

from ..analyses.units import ratio_unit
from ..errors import BudgetError
from ..model.limits import check_float, expect_mapping
from ..model.symbols import SYMBOLS
from ..numeric._inputs import check_values
from ..numeric.adc import ADC
from ..numeric.params import REFERENCE_TEMPERATURE, OpAmpParams, ResistorParams
from ..numeric.units import format_plain, format_si
from ..output.tables import Table, math_label
from ._plan import (
    RSS_RULE,
    WORST_CASE_RULE,
    Progress,
    _Plan,
    _prepare,
)
from ._views import TableViews

__all__ = ["RSS_RULE", "WORST_CASE_RULE", "Budget", "BudgetRow", "error_budget"]


@dataclass(frozen=True)
class BudgetRow:
    """One contribution to the output error.

    Attributes
    ----------
    source : str
        The source's name (``"U1.Vos"``), ``"gain: open-loop"`` /
        ``"gain: tolerance"`` for the gain rows, or ``"tolerance: Vcm"`` for
        another source's coefficient moving with resistor tolerance.
    label : str
        Words for reports.
    value : float
        The source's value used (V or A; the signal value for gain rows).
    unit : str
        Unit of ``value``.
    coefficient : float
        Output (V, or A for a branch-current output) per unit of ``value`` (for
        gain rows: the gain deviation).
    output : float
        Contribution at the output, in the budget's ``output_unit``: signed if
        ``signed``, else the magnitude.
    signed : bool
        Whether the sign is known.
    input : float or None
        Referred to the input, in the signal's unit (``None`` without a reference gain).
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
class Budget(TableViews):
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
    input_unit: str = "V"  # of the input-referred column: "A" for a current input
    #: min |Ad|/|Acm| of the resistor network over the tolerance corners, dB (None
    #: without a differential signal and a common mode, or without ``resistors=``).
    cmrr_db: float | None = None  # the network's CMRR from resistor mismatch, worst case
    output_unit: str = "V"  # of the output column and totals: "A" for a branch current

    @property
    def worst_case_input(self) -> float | None:
        """Worst case referred to the input, in ``input_unit``."""
        return None if not self.input_gain else self.worst_case / abs(self.input_gain)

    @property
    def rss_input(self) -> float | None:
        """RSS referred to the input, in ``input_unit``."""
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

    def _math_names(self) -> dict[str, str]:
        return {r.label: math_label(r.source, r.label) for r in self.rows}

    def table(self):
        """The budget as an :class:`opsym.output.tables.Table`."""

        headers = ["source", "value", "coefficient", "at output", "at input"]
        out = self.output_unit
        fs = self.full_scale or (self.adc.fsr if self.adc else None)
        if fs:
            headers.append("ppm FS")
        if self.adc:
            headers.append("LSB")
        headers.append("share")
        body = []
        for r in self.rows:
            if r.source.startswith("gain:"):
                sign = "+" if r.coefficient >= 0 else ""
                unit = ratio_unit(out, r.unit)
                delta = (format_si(r.coefficient, unit, 3) if unit in ("Ω", "S")
                         else format_plain(r.coefficient, "", 3))  # fmt: skip
                coef = "ΔG = " + sign + delta
            elif r.source.startswith("tolerance:"):
                coef = "Δ = ±" + format_plain(abs(r.coefficient), f"{out}/{r.unit}", 3)
            elif (unit := ratio_unit(out, r.unit)) in ("Ω", "S"):
                coef = format_si(r.coefficient, unit)  # V/A, A/V: the trade writes Ω, S
            else:
                coef = format_plain(r.coefficient, unit)
            cells = [
                r.label,
                format_si(r.value, r.unit),
                coef,
                _pm(r.output, r.signed, out),
                "—" if r.input is None else _pm(r.input, r.signed, self.input_unit),
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
            cells = [name, "", "", "±" + format_si(total, out),
                     "—" if rti is None else "±" + format_si(rti, self.input_unit)]  # fmt: skip
            if fs:
                cells.append(_num(ppm, False))
            if self.adc:
                cells.append(_num(lsb, False))
            cells.append("")
            footer.append(tuple(cells))
        align = "lrrrr" + ("r" if fs else "") + ("r" if self.adc else "") + "r"
        return Table(tuple(headers), tuple(body), align, self.title, tuple(footer), self.notes)

    def __str__(self) -> str:
        return self.to_text()


# ----------------------------------------------------------------------------------------
def _from_set(p: OpAmpParams, stem: str, grade: str, temperature: float, name: str) -> float:
    """The set's number for ``stem``; a set that lacks it is an error, never a zero."""
    value = p.value(stem, grade, temperature)
    if value is None:
        field = f"{stem}_{'max' if grade == 'max' else 'typ'}"
        raise BudgetError(
            f"{name}: parameter set {p.name!r} gives no {field}; add it to the set "
            f"(e.g. .replace({field}=...)) or give values[{name!r}]"
        )
    return value


def _evaluate(plan: _Plan, temperature: float) -> Budget:
    raw = []  # (source, label, value, unit, coefficient, output, signed)
    for ln in plan.lines:
        spec = SYMBOLS.get(ln.what)
        words, unit = (spec.words, spec.unit) if spec is not None else (ln.what, "V")
        p = plan.opamps.get(ln.owner)
        if ln.fixed_value is not None:
            value = ln.fixed_value
        elif ln.coefficient == 0 and p is None:
            value = 0.0
        elif p is None:  # pragma: no cover - _prepare insists on a set or a value
            raise BudgetError(f"{ln.symbol} needs a value or a parameter set")
        elif spec is not None and spec.datasheet is not None:
            value = _from_set(p, spec.datasheet, plan.grade, temperature, ln.symbol.name)
        else:  # Vcm, dVs without a value but with a zero coefficient
            value = 0.0
        signed = spec is not None and spec.signed
        out = ln.coefficient * value
        raw.append((ln.symbol.name, f"{ln.owner} {words}", value, unit, ln.coefficient,
                    out if signed else abs(out), signed))  # fmt: skip
    if plan.signal_value is not None and plan.open_loop_error is not None:
        raw.append(
            (
                "gain: open-loop",
                "finite open-loop gain",
                plan.signal_value,
                plan.signal_unit,
                plan.open_loop_error,
                plan.open_loop_error * plan.signal_value,
                True,
            )
        )
    for row in plan.spreads:
        dev = row.spread.deviation(temperature)
        raw.append((row.source, row.label, row.value, row.unit, dev, abs(dev * row.value),
                    False))  # fmt: skip
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
    cmrr = None
    if plan.rejection is not None:
        cmrr = plan.rejection.cmrr_db(temperature)
        notes = (*notes[:-1], _cmrr_note(plan, temperature, cmrr), notes[-1])
    if temperature != REFERENCE_TEMPERATURE:
        notes = (f"at {temperature:g} °C: Vos + drift·|T − 25 °C|; Ib and Ios by each set's "
                 "bias law", *notes)  # fmt: skip
    return Budget(
        plan.title, tuple(rows), worst, rss, plan.input_gain, plan.signal, plan.full_scale,
        plan.adc, plan.grade, float(temperature), notes, plan.signal_unit, cmrr,
        plan.output_unit,
    )  # fmt: skip


def _cmrr_note(plan: _Plan, temperature: float, cmrr: float) -> str:
    rej = plan.rejection
    assert rej is not None
    return (
        f"network CMRR from resistor mismatch: {cmrr:.1f} dB worst case (|Acm| ≤ "
        f"{format_plain(rej.worst_acm(temperature), 'V/V', 3)}, "
        f"Ad = {format_plain(abs(rej.ad.nominal_value), 'V/V')}, "
        f"{rej.acm.method}); a difference amplifier of gain K has ≈ (1 + K)/(4t) "
        "(Sedra & Smith, Microelectronic Circuits, 6th ed., §2.4)"
    )


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
    progress: Progress | None = None,
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
    progress : callable, optional
        ``progress(done, total, what)`` while the coefficients are evaluated
        (the convention of ``Circuit.analyze``).

    Returns
    -------
    Budget
    """
    values = check_values(values, "error_budget values", getattr(result, "circuit", None))
    opamps = expect_mapping(opamps, "error_budget opamps",
                            "{'U1': opamp_parameters('generic CMOS')}")  # fmt: skip
    temperature = check_float(temperature, "error_budget temperature")
    plan = _prepare(
        result, values, opamps, resistors=resistors, grade=grade, signal=signal,
        input_gain=input_gain, full_scale=full_scale, adc=adc, title=title, progress=progress,
    )  # fmt: skip
    return _evaluate(plan, float(temperature))
