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

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

import sympy as sp

from ..analyses.operating import OperatingPoint, Rails, operating_point
from ..errors import BudgetError, OpsymError
from ..io.design import Design
from ..model.symbols import SYMBOLS
from ..numeric._numbers import Exact
from ..numeric.adc import ADC
from ..numeric.eseries import NullChoice, choose_for_null
from ..values import to_exact
from .budget import Budget, error_budget
from .frequency import NoiseReport, ResponseReport, run_noise, run_response
from .stability import DEFAULT_PHASE_MARGIN, LoopReport, run_stability
from .temperature import TemperatureSweep, budget_over_temperature
from .tolerance import ToleranceStudy, tolerance_analysis

__all__ = ["Study", "design_values", "numeric_values", "rails_of", "run_design"]

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
    values : mapping of str to sympy.Expr
        The one exact values map every analysis took (:func:`design_values`).
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
    values: Mapping[str, sp.Expr] = field(default_factory=dict)
    stability: tuple[LoopReport, ...] = ()


def run_design(design: Design, progress: Progress | None = None) -> Study:
    """Derive ``design`` and run the analyses it asks for.

    Raises
    ------
    OpsymError
        From the derivation or the numeric analyses (a missing value, a
        parameter set the budget needs, ...); messages say what to add.
    """
    result = design.analyze(progress=progress)  # the one DC derivation: every study reuses it
    _phase(progress, "operating point and nulls")
    values = design_values(design)  # exact; floats only inside the numeric kernels
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
    _phase(progress, "sensitivities and error budget")
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
    _phase(progress, "tolerance study")
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
    response = noise = None
    if design.response:
        _phase(progress, "frequency response (s domain)")
        response = run_response(design, values, design.response, progress)
    if design.noise:
        _phase(progress, "noise")
        noise = run_noise(design, values, design.noise, progress)
    stability: tuple[LoopReport, ...] = ()
    if design.response is not None:
        _phase(progress, "loop gains and margins")
        threshold = design.response.phase_margin or DEFAULT_PHASE_MARGIN
        stability = run_stability(design, values, threshold)
    return Study(
        design, result, numbers, conditions, tuple(choices), tuple(sens), budget, sweep,
        tuple(studies), response, noise, operating, problem, MappingProxyType(values),
        stability,
    )  # fmt: skip


def _phase(progress: Any, name: str) -> None:
    """Tell a progress reporter that has phases (the command line's) which one starts."""
    start = getattr(progress, "phase", None)
    if start is not None:
        start(name)


def design_values(design: Design) -> dict[str, sp.Expr]:
    """The design's exact numbers plus what each op-amp's parameter set gives that it does not.

    The file's numbers stay the exact SymPy numbers it was read to. Gain
    (``A``, and ``A0`` of the single-pole model), CMRR and PSRR come from the
    set at the budget's grade; ``GBW`` and the noise densities and corners
    (``en``, ``in``, ``fce``, ``fci``) are typical values; each set's number
    is taken as the exact rational of its shortest decimal. Numbers in the
    file win.

    Examples
    --------
    >>> from opsym.io.designfile import parse_design
    >>> d = parse_design('''
    ... output = "out"
    ... [resistors]
    ... R1 = { between = ["in", "out"], value = "4k7" }
    ... [voltage-sources]
    ... Vin = { plus = "in", minus = "0", value = "0.1" }
    ... [opamps.U1]
    ... plus = "0"
    ... minus = "in"
    ... out = "out"
    ... parameters = "generic JFET"
    ... ''')
    >>> v = design_values(d)
    >>> v["R1"], v["Vin"], v["U1.en"]  # en from the set: 12 nV/√Hz
    (4700, 1/10, 3/250000000)
    """
    values = dict(design.values)
    grade = design.budget.grade if design.budget is not None else "max"
    for amp in design.circuit.opamps:
        params = design.opamps.get(amp.name)
        if params is None:
            continue
        for name, number in params.values_for(amp.name, grade).items():
            if name not in values:
                values[name] = to_exact(number, f"parameter set {params.name!r}: {name}")
    return values


def numeric_values(design: Design) -> dict[str, float]:
    """:func:`design_values` as floats, for a caller that wants plain numbers.

    The analyses of :func:`run_design` take the exact map; this is a view of it.
    """
    return {name: float(v) for name, v in design_values(design).items()}


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


def _term_numbers(result: Any, values: Mapping[str, sp.Expr]) -> dict[sp.Symbol, float]:
    """Each coefficient whose symbols all have numbers, evaluated exactly, then a float."""
    terms = result.terms
    free = {s for coeff in terms.values() for s in coeff.free_symbols}
    exact = Exact({s: values[s.name] for s in free if s.name in values})
    out = {}
    for source, coeff in terms.items():
        if all(s.name in values for s in coeff.free_symbols):
            try:
                out[source] = exact.number(coeff, f"the coefficient of {source}")
            except BudgetError:  # not a finite real number: shown without one
                continue
    return out


def _budget(
    design: Design, result: Any, values: Mapping[str, sp.Expr]
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
