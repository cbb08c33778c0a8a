"""Run every analysis a design file asks for, and keep the results together.

:func:`run_design` derives the output, then the null conditions (with a
standard value for each), the nominal operating point (each op-amp checked
against its rails), the sensitivities, the error budget (over the
temperatures asked for), the tolerance studies, and the frequency response
and noise budget when the file asks for them (see
:mod:`opsym.study.frequency`). It computes; presenting is the command
line's and the design notes' job.

Examples
--------
>>> from opsym.io.designfile import parse_design
>>> d = parse_design('''
... output = "out"
... [resistors]
... R1 = { between = ["in", "n"], value = "10k" }
... R2 = { between = ["n", "out"], value = "100k" }
... R3 = { between = ["p", "0"], value = "9.1k" }
... [voltage-sources]
... Vin = { plus = "in", minus = "0", value = "0.1" }
... [opamps.U1]
... plus = "p"
... minus = "n"
... out = "out"
... parameters = "generic precision bipolar"
... [analysis]
... nulls = ["U1.Ib by R3"]
... ''')
>>> s = run_design(d)
>>> s.conditions[0]
Eq(R3, R1*R2/(R1 + R2))
>>> s.choices[0].chosen
9090.0
>>> s.budget is not None
True
>>> s.operating.nodes["out"], s.operating.warnings
(-1.0, ())
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import sympy as sp

from ..analyses.operating import OperatingPoint, Rails, operating_point
from ..errors import BudgetError, OpsymError
from ..io.design import Design
from ..model.symbols import SYMBOLS
from ..numeric.adc import ADC
from ..numeric.eseries import NullChoice, choose_for_null
from .budget import Budget, error_budget
from .frequency import NoiseReport, ResponseReport, run_noise, run_response
from .stability import DEFAULT_PHASE_MARGIN, LoopReport, run_stability
from .temperature import TemperatureSweep, budget_over_temperature
from .tolerance import ToleranceStudy, tolerance_analysis

__all__ = ["Study", "rails_of", "run_design"]

Progress = Callable[[int, int, str], Any]


@dataclass(frozen=True)
class Study:
    """Everything :func:`run_design` found for one design.

    Attributes
    ----------
    design : Design
    result : opsym Result
        The closed-form output (bias as ``Ib``/``Ios`` unless the file says not).
    numbers : dict of sympy.Symbol to float
        Each term's coefficient with the nominal numbers put in, where they
        are all known.
    conditions : tuple of sympy.Eq
        One per null request, in order.
    choices : tuple of NullChoice
        The standard value meeting each condition, where the numbers allow.
    sensitivities : tuple of (of, to, sympy.Expr)
    budget : Budget or None
        At 25 °C if asked, else at the worst temperature.
    sweep : TemperatureSweep or None
        When several temperatures were asked for.
    studies : tuple of ToleranceStudy
    response : ResponseReport or None
        The ``[response]`` analysis (Laplace domain), if asked for.
    noise : NoiseReport or None
        The ``[noise]`` analysis, if asked for.
    operating : OperatingPoint or None
        The nominal DC operating point, each op-amp checked against its rails.
    operating_problem : str
        Why there is no operating point (a component without a number ...).
    stability : tuple of LoopReport
        With a ``[response]``: each op-amp loop's margins against the
        ``phase-margin`` threshold (:mod:`opsym.study.stability`).
    """

    design: Design
    result: Any
    numbers: dict[sp.Symbol, float]
    conditions: tuple[sp.Eq, ...] = ()
    choices: tuple[NullChoice, ...] = ()
    sensitivities: tuple[tuple[str, str, sp.Expr], ...] = ()
    budget: Budget | None = None
    sweep: TemperatureSweep | None = None
    studies: tuple[ToleranceStudy, ...] = ()
    response: ResponseReport | None = None
    noise: NoiseReport | None = None
    operating: OperatingPoint | None = None
    operating_problem: str = ""
    stability: tuple[LoopReport, ...] = ()


def run_design(design: Design, progress: Progress | None = None) -> Study:
    """Derive ``design`` and run the analyses it asks for.

    Raises
    ------
    OpsymError
        From the derivation or the numeric analyses (a missing value, a
        parameter set the budget needs, ...); messages say what to add.
    """
    result = design.analyze(progress=progress)
    values = numeric_values(design)
    numbers = _term_numbers(result, values)
    operating, problem, rails = None, "", rails_of(design)
    try:
        operating = operating_point(design.circuit, values, rails)
    except OpsymError as err:
        problem = str(err)
    conditions = tuple(result.null(n.term, by=n.by) for n in design.nulls)
    choices = []
    for request, eq in zip(design.nulls, conditions, strict=True):
        needed = {s.name for s in eq.rhs.free_symbols}
        if needed <= set(values):
            choices.append(
                choose_for_null(
                    eq,
                    values,
                    design.series,
                    result=result,
                    source=request.term,
                    magnitude=_magnitude(design, request.term),
                )
            )
    sens: list[tuple[str, str, sp.Expr]] = []
    if design.sensitivity is not None:
        req = design.sensitivity
        for of in req.of:
            for to in req.to:
                s = result.sensitivity(to, of=of, normalized=req.normalized, signal=design.signal)
                sens.append((of, to, s))
    budget = sweep = None
    if design.budget is not None or (
        design.circuit.opamps and all(a.name in design.opamps for a in design.circuit.opamps)
    ):
        try:
            budget, sweep = _budget(design, result, values)
        except BudgetError as err:
            raise BudgetError(
                f"{design.source}: error budget: {err} (in a design file: a 'value' for each "
                "element, 'parameters' for each op-amp, 'Vcm'/'dVs' for cmrr/psrr)"
            ) from err
    studies = []
    if design.tolerance is not None:
        t = design.tolerance
        tolerances = dict(design.resistors) or {}
        for of in t.of:
            studies.append(
                tolerance_analysis(
                    result,
                    values,
                    tolerances,
                    of=of,
                    signal=design.signal,
                    samples=t.samples or None,
                    seed=t.seed,
                    distribution=t.distribution,
                )
            )
    response = run_response(design, values, design.response) if design.response else None
    noise = run_noise(design, values, design.noise) if design.noise else None
    stability: tuple[LoopReport, ...] = ()
    if design.response is not None:
        threshold = design.response.phase_margin or DEFAULT_PHASE_MARGIN
        stability = run_stability(design, values, threshold)
    return Study(
        design, result, numbers, conditions, tuple(choices), tuple(sens), budget, sweep,
        tuple(studies), response, noise, operating, problem, stability,
    )  # fmt: skip


def numeric_values(design: Design) -> dict[str, float]:
    """Nominal numbers plus what each op-amp's parameter set gives that the file does not.

    Gain (``A``, and ``A0`` of the single-pole model), CMRR and PSRR at the
    budget's grade; ``GBW`` and the noise densities and corners (``en``,
    ``in``, ``fce``, ``fci``) are typical values. Numbers in the file win.
    """
    values = design.numeric_values()
    grade = design.budget.grade if design.budget is not None else "typical"
    for amp in design.circuit.opamps:
        params = design.opamps.get(amp.name)
        if params is None:
            continue
        for name, number in params.values_for(amp.name, grade).items():
            values.setdefault(name, number)
    return values


def rails_of(design: Design) -> dict[str, Rails]:
    """Each op-amp's rails: its own in the file, else the file's, else its parameter set's.

    The headroom (output swing, input common-mode range) comes from the
    parameter set; without one it is zero (the rails themselves are the limits).
    """
    out: dict[str, Rails] = {}
    for amp in design.circuit.opamps:
        params = design.opamps.get(amp.name)
        swing = cm = 0.0
        if params is not None:
            swing, cm = params.swing_headroom or 0.0, params.cm_headroom or 0.0
        pair: tuple[Any, Any] | None = None
        if amp.name in design.rails:
            pair, source = design.rails[amp.name], f"[opamps.{amp.name}] rails"
        elif design.supply is not None:
            pair, source = design.supply, "the design's rails"
        elif params is not None and params.rail_neg is not None:
            pair, source = (params.rail_neg, params.rail_pos), f"set {params.name!r}"
        if pair is not None:
            try:
                out[amp.name] = Rails(float(pair[0]), float(pair[1]), swing, cm, source)
            except OpsymError as err:  # headroom from the set wider than the file's rails
                raise BudgetError(f"{design.source}: op-amp {amp.name}: {err}") from err
    return out


def _magnitude(design: Design, term: str) -> float | None:
    """The size of an op-amp error source from its parameter set, for null residuals."""
    owner, _, what = term.partition(".")
    params = design.opamps.get(owner)
    if params is None:
        return None
    grade = design.budget.grade if design.budget is not None else "max"
    spec = SYMBOLS.get(what)
    if spec is None or spec.role != "source" or spec.datasheet is None:
        return None
    return params.value(spec.datasheet, grade)


def _term_numbers(result: Any, values: dict[str, float]) -> dict[sp.Symbol, float]:
    subs = {}
    for coeff in result.terms.values():
        for s in coeff.free_symbols:
            if s.name in values:
                subs[s] = sp.Float(values[s.name])  # a lone symbol becomes a SymPy number
    out = {}
    for source, coeff in result.terms.items():
        v = coeff.xreplace(subs)
        if not v.free_symbols:
            out[source] = float(v)
    return out


def _budget(
    design: Design, result: Any, values: dict[str, float]
) -> tuple[Budget, TemperatureSweep | None]:
    s = design.budget
    options: dict[str, Any] = {"signal": design.signal}
    if design.resistors:
        options["resistors"] = dict(design.resistors)
    temperatures: tuple[float, ...] = (25.0,)
    if s is not None:
        options["grade"] = s.grade
        if s.full_scale is not None:
            options["full_scale"] = float(s.full_scale)
        if s.adc_bits is not None and s.adc_reference is not None:
            make = ADC.bipolar if s.adc_range == "bipolar" else ADC.unipolar
            options["adc"] = make(s.adc_bits, float(s.adc_reference))
        temperatures = s.temperatures
    if len(temperatures) > 1:
        sweep = budget_over_temperature(
            result, values, dict(design.opamps), temperatures=temperatures, **options
        )
        at = [b for t, b in zip(sweep.temperatures, sweep.budgets, strict=True) if t == 25.0]
        return (at[0] if at else sweep.worst_budget), sweep
    budget = error_budget(
        result, values, dict(design.opamps), temperature=temperatures[0], **options
    )
    return budget, None
