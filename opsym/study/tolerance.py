"""Component tolerances: exact corners, a first-order bound and Monte Carlo, side by side.

Each toleranced part is ``x = x_nom·(1 + d)`` with ``|d| ≤ t`` (the part's
tolerance). Three estimates of the spread of any result quantity ``y`` (a
signal gain, an error coefficient, a common-mode gain…):

* **Corners** — ``y`` at all ``2^n`` combinations of ``d = ±t``, vectorised.
  For ``y`` monotone in each part over the tolerance box (true of gains made of
  resistor ratios, which are linear-fractional in each resistor) the extremes
  lie on corners, so this is the exact worst case. For other ``y`` it is a lower
  bound on the true extremes. Used up to ``max_corners`` parts (default 12).
* **First-order bound** — ``y_nom ± Σ |∂y/∂x_i · x_i| · t_i``: the linearised
  worst case, cheap for any number of parts, slightly off when tolerances are
  large (it is symmetric, the true spread is not).
* **Monte Carlo** — ``d`` drawn per part (uniform on ``±t``, or normal with
  ``σ = t/3`` clipped to ``±t``, a common practice [trade]); seedable; reports
  mean, standard deviation and percentiles.

Examples
--------
>>> import sympy as sp
>>> R1, R2 = sp.symbols("R1 R2", positive=True)
>>> study = tolerance_analysis(1 + R2 / R1, {"R1": 1e3, "R2": 9e3}, {"R1": 0.01, "R2": 0.01},
...                            samples=2000, seed=1)
>>> round(study.corner_high / study.nominal - 1, 5), round(study.corner_low / study.nominal - 1, 5)
(0.01818, -0.01782)
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import sympy as sp

from ..errors import BudgetError, OpsymError
from ..numeric._inputs import check_values
from ..numeric._numbers import Exact, compile_columns, exact_number, relative_sensitivities
from ..numeric.params import ResistorParams
from ..numeric.units import format_si, parse_fraction, parse_quantity
from ..output.tables import Table
from ._views import TableViews

__all__ = [
    "MAX_CORNERS",
    "MonteCarlo",
    "ToleranceStudy",
    "corner_values",
    "first_order_bound",
    "monte_carlo",
    "tolerance_analysis",
]

#: Default largest number of toleranced parts for which corners are enumerated.
MAX_CORNERS = 12
_HARD_LIMIT = 20  # 2^20 corners: about a million evaluations
_PERCENTILES = (0.135, 2.5, 50.0, 97.5, 99.865)


def _resolve(
    exprs: Sequence[sp.Expr], values: Mapping[Any, Any], tolerances: Any, where: str,
    circuit: Any = None,
) -> tuple[list[sp.Symbol], np.ndarray, np.ndarray, dict[sp.Symbol, float]]:
    """Sort the symbols into toleranced parts (with nominal and t) and fixed values.

    A toleranced name the quantity does not contain is checked against ``circuit``:
    a part given a number there (its tolerance cannot move anything) or no part at
    all is an error, never a silent zero spread.
    """
    free: set[sp.Symbol] = set()
    for e in exprs:
        free |= {s for s in e.free_symbols if isinstance(s, sp.Symbol)}
    by_name = {s.name: s for s in free}
    numbers: dict[sp.Symbol, float] = {}
    for key, raw in check_values(values, f"{where} values").items():
        name = key.name if isinstance(key, sp.Symbol) else str(key)
        if name in by_name:
            x = parse_quantity(raw, where=f"{where}: value of {name}")
            if by_name[name].is_positive and not x > 0:
                raise BudgetError(
                    f"{where}: value of {name} is {x:g}; a component value must be positive"
                )
            numbers[by_name[name]] = x
    if isinstance(tolerances, ResistorParams):
        # Every component symbol (positive, not an op-amp parameter) gets the same grade.
        tol = {s: tolerances.tolerance for s in free if s.is_positive and "." not in s.name}
    elif isinstance(tolerances, Mapping):
        tol = {}
        for key, raw in tolerances.items():
            name = key.name if isinstance(key, sp.Symbol) else str(key)
            if name not in by_name:
                _absent_part(name, circuit, where)
                continue  # a symbolic part that does not affect this quantity
            t = (
                raw.tolerance
                if isinstance(raw, ResistorParams)
                else parse_fraction(raw, where=f"{where}: tolerance of {name}")
            )
            if not (0 <= t < 1):
                raise BudgetError(
                    f"{where}: tolerance of {name} is {t}; give a fraction from 0 to <1 "
                    "(0.01 for 1 %)"
                )
            tol[by_name[name]] = t
    else:
        raise BudgetError(
            f"{where}: tolerances must be a mapping {{'R1': 0.01, ...}} or a ResistorParams, "
            f"not {type(tolerances).__name__}"
        )
    missing = sorted(s.name for s in free if s not in numbers)
    if missing:
        raise BudgetError(f"{where}: give values for {', '.join(missing)}")
    parts = sorted((s for s in tol if tol[s] > 0), key=lambda s: s.name)
    if not parts and isinstance(tolerances, ResistorParams):
        _nothing_toleranced(circuit, where)
    nominal = np.array([numbers[s] for s in parts], dtype=float)
    spread = np.array([tol[s] for s in parts], dtype=float)
    fixed = {s: v for s, v in numbers.items() if s not in parts}
    return parts, nominal, spread, fixed


def _vectorised(expr: sp.Expr, parts: list[sp.Symbol], fixed: Mapping[sp.Symbol, float]):
    """``expr`` compiled once over the parts' columns (the fixed values as scalars)."""
    return compile_columns(expr, parts, fixed)


def _corner_signs(n: int) -> np.ndarray:
    idx = np.arange(2**n, dtype=np.int64)[:, None]
    bits = (idx >> np.arange(n, dtype=np.int64)) & 1
    return (2 * bits - 1).astype(float)  # shape (2^n, n), entries ±1


def corner_values(
    exprs: sp.Expr | Sequence[sp.Expr],
    values: Mapping[Any, Any],
    tolerances: Any,
    *,
    max_corners: int = MAX_CORNERS,
) -> tuple[tuple[str, ...], np.ndarray, np.ndarray]:
    """Evaluate one or more expressions at every tolerance corner.

    Returns
    -------
    parts : tuple of str
        The toleranced parts, in column order.
    signs : ndarray, shape (2^n, n)
        ±1 for each part at each corner.
    table : ndarray, shape (k, 2^n)
        Row ``i`` holds expression ``i`` at each corner (same corner order).

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2 = sp.symbols("R1 R2", positive=True)
    >>> parts, signs, table = corner_values([R2 / R1], {"R1": 1, "R2": 1}, {"R1": 0.5, "R2": 0})
    >>> parts, table.round(4).tolist()
    (('R1',), [[2.0, 0.6667]])
    """
    many = [exprs] if isinstance(exprs, sp.Expr) else list(exprs)
    parts, nominal, t, fixed = _resolve(many, values, tolerances, "corner_values")
    n = len(parts)
    limit = min(max_corners, _HARD_LIMIT)
    if n > limit:
        raise BudgetError(
            f"corner_values: {n} toleranced parts need 2^{n} corners, over the limit of "
            f"{limit}; use first_order_bound or monte_carlo, or raise max_corners (≤ "
            f"{_HARD_LIMIT})"
        )
    signs = _corner_signs(n)
    columns = (nominal * (1.0 + signs * t)).T  # (n, 2^n)
    table = np.vstack([_vectorised(e, parts, fixed)(columns) for e in many])
    return tuple(s.name for s in parts), signs, table


def first_order_bound(
    expr: sp.Expr, values: Mapping[Any, Any], tolerances: Any
) -> tuple[float, float, dict[str, float]]:
    """Nominal value, linearised worst deviation ``Σ|∂y/∂x·x|·t``, and each part's share.

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2 = sp.symbols("R1 R2", positive=True)
    >>> y0, dy, each = first_order_bound(1 + R2 / R1, {"R1": 1e3, "R2": 9e3}, {"R1": "1%",
    ...                                  "R2": "1%"})
    >>> round(y0, 6), round(dy, 6)
    (10.0, 0.18)
    """
    parts, nominal, t, fixed = _resolve([expr], values, tolerances, "first_order_bound")
    return _bound(expr, parts, nominal, t, fixed)


def _bound(expr, parts, nominal, t, fixed, call=None) -> tuple[float, float, dict[str, float]]:
    """:func:`first_order_bound` on resolved parts: complex step on the compiled ``expr``."""
    at = {s: exact_number(v) for s, v in fixed.items()}
    at.update((s, exact_number(v)) for s, v in zip(parts, nominal, strict=True))
    y0 = Exact(at).number(expr, "first_order_bound: the quantity")
    if not parts:
        return y0, 0.0, {}
    call = call or _vectorised(expr, parts, fixed)
    sens = relative_sensitivities(call, nominal) if call.analytic else None
    if sens is None or not np.all(np.isfinite(sens)):
        # not analytic (Abs, Max...) or out of float range: exact derivatives, once each
        ex = Exact(at)
        sens = np.array([ex.number(sp.diff(expr, s) * s, f"∂y/∂{s.name}") for s in parts])
    each = {s.name: float(abs(d) * ti) for s, d, ti in zip(parts, sens, t, strict=True)}
    return y0, float(sum(each.values())), each


@dataclass(frozen=True)
class MonteCarlo:
    """Summary of a Monte Carlo run; ``samples`` is a read-only array."""

    distribution: str
    seed: int | None
    samples: np.ndarray = field(repr=False)
    mean: float = 0.0
    std: float = 0.0
    low: float = 0.0
    high: float = 0.0
    percentiles: Mapping[float, float] = field(default_factory=dict)

    @property
    def count(self) -> int:
        """Number of samples drawn."""
        return int(self.samples.size)


def monte_carlo(
    expr: sp.Expr,
    values: Mapping[Any, Any],
    tolerances: Any,
    *,
    samples: int = 10000,
    seed: int | None = None,
    distribution: str = "uniform",
) -> MonteCarlo:
    """Draw every toleranced part at random and evaluate ``expr`` (vectorised).

    ``distribution``: ``"uniform"`` on ``±t``, or ``"normal"`` with ``σ = t/3``
    clipped to ``±t``. Give ``seed`` for a repeatable run.

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2 = sp.symbols("R1 R2", positive=True)
    >>> mc = monte_carlo(R2 / R1, {"R1": 1e3, "R2": 1e3}, {"R1": 0.01, "R2": 0.01},
    ...                  samples=1000, seed=7)
    >>> mc.count, 0.98 < mc.low < mc.high < 1.03
    (1000, True)
    """
    _check_draw(samples, distribution)
    parts, nominal, t, fixed = _resolve([expr], values, tolerances, "monte_carlo")
    return _draw(_vectorised(expr, parts, fixed), nominal, t, samples, seed, distribution)


def _check_draw(samples: Any, distribution: str) -> None:
    if distribution not in ("uniform", "normal"):
        raise BudgetError(
            f"monte_carlo: distribution {distribution!r} is not known; use 'uniform' or 'normal'"
        )
    if isinstance(samples, bool) or not isinstance(samples, int) or not 1 <= samples <= 10**7:
        raise BudgetError(f"monte_carlo: samples={samples!r} must be a whole number 1 … 10^7")


def _draw(call, nominal, t, samples: int, seed: int | None, distribution: str) -> MonteCarlo:
    """Monte Carlo on a compiled quantity: ``samples`` draws of every part at once."""
    rng = np.random.default_rng(seed)
    n = len(nominal)
    if distribution == "uniform":
        d = rng.uniform(-1.0, 1.0, size=(samples, n)) * t
    else:
        d = np.clip(rng.normal(0.0, 1.0, size=(samples, n)) * (t / 3.0), -t, t)
    y = call((nominal * (1.0 + d)).T)
    y.flags.writeable = False
    pct = dict(zip(_PERCENTILES, (float(v) for v in np.percentile(y, _PERCENTILES)), strict=True))
    return MonteCarlo(
        distribution, seed, y, float(np.mean(y)), float(np.std(y, ddof=1)) if samples > 1
        else 0.0, float(np.min(y)), float(np.max(y)), pct,
    )  # fmt: skip


@dataclass(frozen=True)
class ToleranceStudy(TableViews):
    """The three estimates of one quantity's spread, side by side.

    ``corner_low``/``corner_high`` are ``None`` when there were more parts than
    ``max_corners``; :attr:`low`/:attr:`high` then fall back to the
    first-order bound.
    """

    quantity: str
    nominal: float
    parts: tuple[str, ...]
    tolerances: tuple[float, ...]
    corner_low: float | None
    corner_high: float | None
    bound: float
    bound_shares: Mapping[str, float]
    mc: MonteCarlo | None
    unit: str = ""

    @property
    def low(self) -> float:
        """Worst low value: the corner minimum if enumerated, else the first-order bound."""
        return self.corner_low if self.corner_low is not None else self.nominal - self.bound

    @property
    def high(self) -> float:
        """Worst high value, as :attr:`low`."""
        return self.corner_high if self.corner_high is not None else self.nominal + self.bound

    @property
    def method(self) -> str:
        """Which estimate :attr:`low`/:attr:`high` come from."""
        return "corners" if self.corner_low is not None else "first-order bound"

    def table(self):
        """The side-by-side comparison as an :class:`opsym.output.tables.Table`."""

        def rel(v: float) -> str:
            if self.nominal == 0:
                return "—"
            return f"{(v / self.nominal - 1) * 100:+.4g} %"

        def val(v: float) -> str:
            return format_si(v, self.unit, 6) if self.unit else f"{v:.6g}"

        rows = [("nominal", val(self.nominal), "", "")]
        if self.corner_low is not None:
            rows.append(
                (f"corners (2^{len(self.parts)})", val(self.corner_low), val(self.corner_high),
                 f"{rel(self.corner_low)} / {rel(self.corner_high)}")
            )  # fmt: skip
        lo, hi = self.nominal - self.bound, self.nominal + self.bound
        rows.append(("first-order bound", val(lo), val(hi), f"{rel(lo)} / {rel(hi)}"))
        if self.mc is not None:
            p = self.mc.percentiles
            rows.append(
                (f"Monte Carlo min/max ({self.mc.count}, {self.mc.distribution})",
                 val(self.mc.low), val(self.mc.high), f"{rel(self.mc.low)} / {rel(self.mc.high)}")
            )  # fmt: skip
            rows.append(
                ("Monte Carlo 0.135 / 99.865 %", val(p[0.135]), val(p[99.865]),
                 f"{rel(p[0.135])} / {rel(p[99.865])}")
            )  # fmt: skip
        return Table(
            headers=("estimate", "low", "high", "relative"),
            rows=tuple(rows),
            align="lrrr",
            caption=f"Tolerance study of {self.quantity}",
            notes=(
                "Corners: all 2^n combinations of ±t, exact for a quantity monotone in each "
                "part. First-order bound: nominal ± Σ|∂y/∂x·x|·t.",
            ),
        )


def tolerance_analysis(
    quantity: Any,
    values: Mapping[Any, Any],
    tolerances: Any,
    *,
    of: Any = "gain",
    signal: Any = None,
    samples: int | None = 10000,
    seed: int | None = None,
    distribution: str = "uniform",
    max_corners: int = MAX_CORNERS,
    unit: str = "",
) -> ToleranceStudy:
    """Corners, first-order bound and Monte Carlo for one quantity.

    Parameters
    ----------
    quantity : sympy.Expr or opsym Result
        The quantity; for a Result, ``of`` picks it: ``"gain"`` (the signal's
        coefficient; ``signal=`` names the signal when there are several) or a
        source name such as ``"U1.Vos"`` (that source's coefficient).
    values : mapping
        Nominal values of every symbol (names → numbers or text like ``"10k"``).
    tolerances : mapping or ResistorParams
        ``{"R1": 0.01, "R2": "0.1%"}``, or one grade for every component.
    samples : int or None
        Monte Carlo samples; ``None`` skips Monte Carlo.
    seed : int, optional
        Random seed for a repeatable Monte Carlo run.
    distribution : {"uniform", "normal"}
        Monte Carlo distribution of each part's deviation.
    max_corners : int
        Largest part count for corner enumeration (≤ 20).
    unit : str
        Unit of the quantity, for tables.
    """
    expr, label = _quantity(quantity, of, signal)
    if samples:
        _check_draw(samples, distribution)
    circuit = getattr(quantity, "circuit", None)
    parts, nominal, t, fixed = _resolve([expr], values, tolerances, "tolerance_analysis", circuit)
    call = _vectorised(expr, parts, fixed)  # compiled once for bound, corners and draws
    y0, bound, shares = _bound(expr, parts, nominal, t, fixed, call)
    lo = hi = None
    if len(parts) <= min(max_corners, _HARD_LIMIT):
        table = call((nominal * (1.0 + _corner_signs(len(parts)) * t)).T)
        lo, hi = float(np.min(table)), float(np.max(table))
        if not (math.isfinite(lo) and math.isfinite(hi)):
            raise BudgetError(
                f"tolerance_analysis: {label} is not finite at some corner; check the values"
            )
    mc = _draw(call, nominal, t, samples, seed, distribution) if samples else None
    return ToleranceStudy(
        label, y0, tuple(s.name for s in parts), tuple(float(x) for x in t), lo, hi, bound,
        shares, mc, unit,
    )  # fmt: skip


def _absent_part(name: str, circuit: Any, where: str) -> None:
    """Refuse a toleranced name that cannot move the quantity for a reason the user can fix."""
    if circuit is None:
        return  # a bare expression: a name it lacks simply does not affect it
    try:
        element = circuit.element(name)
    except OpsymError:
        raise BudgetError(
            f"{where}: tolerance given for {name!r}, which is not a part of the circuit; "
            f"check the name (its parts: {', '.join(e.name for e in circuit.elements)})"
        ) from None
    value = getattr(element, "value", None)
    if isinstance(value, sp.Expr) and value.is_number:
        raise BudgetError(
            f"{where}: {name} has a number in the circuit ({value}), so its tolerance "
            f"cannot move the result; add {name} without a value and give its number in values="
        )


def _nothing_toleranced(circuit: Any, where: str) -> None:
    """With one grade for every part and none toleranced: say why when the circuit knows."""
    fixed = numbered_parts(circuit)
    if fixed:
        raise BudgetError(f"{where}: {numbered_parts_text(fixed)}")


def numbered_parts(circuit: Any) -> list[str]:
    """Resistors, capacitors and inductors given a number in the circuit, by name.

    Their values are constants of the solution, so no tolerance can move them.
    """
    return [e.name for e in getattr(circuit, "elements", ())
            if e.unit in ("Ω", "F", "H") and e.value.is_number]  # fmt: skip


def numbered_parts_text(names: Sequence[str]) -> str:
    """Why ``names`` have no tolerance, and what to do, in one sentence."""
    one = len(names) == 1
    return (
        f"{', '.join(names)} {'has a number' if one else 'have numbers'} in the circuit, so "
        f"{'its' if one else 'their'} tolerance cannot move the result; add "
        f"{'it' if one else 'them'} without a value (c.resistor('{names[0]}', a, b)) and "
        f"give {'its number' if one else 'their numbers'} in values="
    )


def _quantity(quantity: Any, of: Any, signal: Any) -> tuple[sp.Expr, str]:
    """The expression a study is of, and words for it (a result's coefficient as solved)."""
    if isinstance(quantity, sp.Expr):
        return quantity, str(quantity) if len(str(quantity)) < 40 else "expression"
    if not hasattr(quantity, "coefficient"):
        raise BudgetError(
            f"tolerance_analysis: {type(quantity).__name__} is not a SymPy expression or Result"
        )
    if of == "gain":
        source = signal if signal is not None else _only_signal(quantity)
        label = f"the gain from {source}"
    else:
        source, label = of, f"the coefficient of {of}"
    name = source.name if isinstance(source, sp.Symbol) else str(source)
    raw = {s.name: c for s, c in quantity.terms.items()}
    # As solved, not factored: factoring a long cascade's coefficient costs far more
    # than evaluating it. Names the result keys otherwise (Ib, Ios) go through coefficient.
    return (raw[name] if name in raw else quantity.coefficient(source)), label


def _only_signal(result: Any) -> Any:
    signals = tuple(result.signals)
    if len(signals) != 1:
        raise BudgetError(
            f"tolerance_analysis: the result has {len(signals)} signals "
            f"({', '.join(map(str, signals)) or 'none'}); name one with signal="
        )
    return signals[0]
