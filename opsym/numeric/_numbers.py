"""Putting numbers into closed forms fast: exact once, compiled for many points.

Two tools, both linear in the size of the expression:

* :class:`Exact` inserts exact numbers by replacement, as ``xreplace`` does
  (never ``subs``, whose matching dominated budget time on long cascades), and
  evaluates once, each shared subexpression once. The numbers are exact rationals, so a balanced
  network's cancellation (a common-mode gain of exactly 0) stays exact, and the
  huge intermediate constants of a long cascade neither overflow nor round.
* :func:`compile_columns` turns an expression into a NumPy function of columns
  of part values, flattened once into a list of NumPy steps (no generated code,
  no recursion, so a cascade nested hundreds of levels deep compiles) and
  called for every corner, Monte Carlo sample or temperature.
  :func:`relative_sensitivities` takes ``∂y/∂xᵢ·xᵢ`` of such a function by
  the complex step (exact to rounding for the rational functions that circuit
  coefficients are), with no symbolic derivative.

Examples
--------
>>> import sympy as sp
>>> R1, R2 = sp.symbols("R1 R2", positive=True)
>>> ex = Exact({R1: exact_number(1e3), R2: exact_number(9e3)})
>>> ex.value(1 + R2 / R1, "gain")
10
>>> f = compile_columns(1 + R2 / R1, [R1, R2])
>>> [round(float(v), 6) for v in relative_sensitivities(f, [1e3, 9e3])]
[-9.0, 9.0]
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Mapping, Sequence
from typing import Any

import numpy as np
import sympy as sp

from ..equations.nested import Aux
from ..errors import BudgetError

#: The stand-in for an infinite open-loop gain in numeric evaluation: G(A) at
#: A = 10^30 differs from G(∞) by about NG/10^30, far below float resolution.
LARGE_GAIN = sp.Integer(10) ** 30
_STEP = 1e-30  # complex step: no subtraction, so no cancellation, at any step size
_NOT_ANALYTIC = (sp.Abs, sp.sign, sp.Piecewise, sp.Max, sp.Min, sp.re, sp.im, sp.floor)


def exact_number(x: float) -> sp.Expr:
    """The exact rational of ``x``'s shortest decimal form; ``±∞`` as ``sp.oo``.

    Examples
    --------
    >>> exact_number(0.1), exact_number(float("inf"))
    (1/10, oo)
    """
    if math.isinf(x):
        return sp.oo if x > 0 else -sp.oo
    return sp.Rational(repr(float(x)))


class Exact:
    """Exact evaluation of expressions at fixed symbol values.

    A replacement like ``xreplace``, but without recursion and with one memo of
    every subexpression evaluated so far: the coefficients of one result share
    their downstream factors (a cascade's stage k and k + 1 share the product of
    every later stage), so a budget evaluates each shared factor once.
    """

    def __init__(self, values: Mapping[sp.Symbol, sp.Expr]) -> None:
        self.values = dict(values)
        self._memo: dict[sp.Basic, sp.Basic] = dict(self.values)

    def value(self, expr: sp.Expr, what: str) -> sp.Expr:
        """``expr`` with the values in: an exact number, or :class:`BudgetError`.

        ``1/oo`` is 0 (an infinite CMRR removes its term); a symbol left over
        is named in the message.
        """
        v = self._replaced(expr)
        leftover = v.free_symbols
        if leftover:
            missing = ", ".join(sorted(s.name for s in leftover))
            raise BudgetError(
                f"{what} needs values for {missing}: give them in values= (components, "
                "signals, U1.Vcm, U1.dVs) or give the op-amp a parameter set in opamps="
            )
        return v

    def number(self, expr: sp.Expr, what: str) -> float:
        """``expr`` with the values in, as a finite real float."""
        return to_float(self.value(expr, what), what)

    def _replaced(self, expr: sp.Basic) -> Any:
        memo = self._memo
        stack: list[tuple[sp.Basic, bool]] = [(expr, False)]
        while stack:
            node, ready = stack.pop()
            if node in memo:
                continue
            if isinstance(node, Aux):  # evaluated through its definition, forward
                if ready:
                    memo[node] = memo[node.definition]
                else:
                    stack.append((node, True))
                    stack.append((node.definition, False))
            elif not node.args:
                memo[node] = node
            elif not ready:
                stack.append((node, True))
                stack.extend((a, False) for a in node.args if a not in memo)
            else:
                args = [memo[a] for a in node.args]
                same = all(n is a for n, a in zip(args, node.args, strict=True))
                memo[node] = node if same else node.func(*args)
        return memo[expr]


def free_symbols_of(exprs: Iterable[sp.Basic]) -> set[sp.Symbol]:
    """The symbols of several expressions, each shared subexpression visited once."""
    seen: set[sp.Basic] = set()
    found: set[sp.Symbol] = set()
    stack = list(exprs)
    while stack:
        node = stack.pop()
        if node in seen:
            continue
        seen.add(node)
        if isinstance(node, Aux):  # look through to the circuit symbols
            stack.append(node.definition)
        elif isinstance(node, sp.Symbol):
            found.add(node)
        stack.extend(node.args)
    return found


def to_float(v: sp.Expr, what: str) -> float:
    """A finite real float of an exact SymPy number, else :class:`BudgetError`."""
    try:
        x = complex(v)
    except (TypeError, ValueError):
        x = complex(float("nan"))
    if x.imag != 0 or not math.isfinite(x.real):
        raise BudgetError(f"{what} evaluates to {v}; check the values")
    return x.real


def compile_columns(
    expr: sp.Expr, parts: Sequence[sp.Symbol], fixed: Mapping[sp.Symbol, float] | None = None
) -> Any:  # a function of columns, with an ``analytic`` flag
    """``columns ↦ expr`` over NumPy arrays: row ``i`` of ``columns`` is ``parts[i]``.

    The expression tree is flattened once, without recursion, into a list of
    NumPy operations (shared subexpressions once): a long cascade's coefficient
    nests hundreds of levels deep, deeper than SymPy's recursive ``diff`` or
    Python's parser for generated code go. ``fixed`` values enter as scalars.
    Works on complex columns too (for :func:`relative_sensitivities`).
    """
    fixed = dict(fixed or {})
    leftover = expr.free_symbols - set(parts) - set(fixed)
    if leftover:
        names = ", ".join(sorted(s.name for s in leftover))
        raise BudgetError(f"give values for {names}")
    program = _Program(expr, {s: i for i, s in enumerate(parts)}, fixed)

    def call(columns: np.ndarray) -> np.ndarray:
        columns = np.asarray(columns)
        with np.errstate(all="ignore"):
            out = np.asarray(program.run(columns))
        if not np.iscomplexobj(columns):
            out = (out.real if np.iscomplexobj(out) else out).astype(float)
        return np.broadcast_to(out, columns.shape[1:]).copy()

    call.analytic = not expr.has(*_NOT_ANALYTIC)  # type: ignore[attr-defined]
    return call


class _Program:
    """A flat list of NumPy steps that evaluates one expression (post-order, no recursion)."""

    def __init__(
        self, expr: sp.Expr, inputs: Mapping[sp.Symbol, int], fixed: Mapping[sp.Symbol, float]
    ) -> None:
        self.steps: list[tuple[Any, ...]] = []
        slot: dict[sp.Basic, int] = {}
        stack: list[tuple[sp.Basic, bool]] = [(expr, False)]
        while stack:
            node, ready = stack.pop()
            if node in slot:
                continue
            if isinstance(node, Aux):  # a definition, computed once before its uses
                if ready:
                    slot[node] = slot[node.definition]
                else:
                    stack.append((node, True))
                    stack.append((node.definition, False))
                continue
            if not ready and node.args and not node.is_Number:
                stack.append((node, True))
                stack.extend((a, False) for a in node.args if a not in slot)
                continue
            slot[node] = len(self.steps)
            self.steps.append(self._step(node, slot, inputs, fixed))

    @staticmethod
    def _step(node, slot, inputs, fixed) -> tuple[Any, ...]:
        if isinstance(node, sp.Symbol):
            if node in inputs:
                return ("input", inputs[node])
            return ("const", float(fixed[node]))
        if node.is_Number or node.is_NumberSymbol:
            return ("const", _constant(node))
        args = tuple(slot[a] for a in node.args)
        if isinstance(node, sp.Add):
            return ("add", args)
        if isinstance(node, sp.Mul):
            return ("mul", args)
        if isinstance(node, sp.Pow):
            return ("pow", args)
        dummies = sp.symbols(f"x0:{len(args)}")
        fn = sp.lambdify(dummies, node.func(*dummies), modules="numpy")
        return ("call", args, fn)

    def run(self, columns: np.ndarray) -> Any:
        values: list[Any] = []
        for step in self.steps:
            kind = step[0]
            if kind == "input":
                values.append(columns[step[1]])
            elif kind == "const":
                values.append(step[1])
            elif kind == "add":
                values.append(sum(values[i] for i in step[1]))
            elif kind == "mul":
                product = values[step[1][0]]
                for i in step[1][1:]:
                    product = product * values[i]
                values.append(product)
            elif kind == "pow":
                base, exponent = (values[i] for i in step[1])
                values.append(_power(base, exponent))
            else:
                values.append(step[2](*(values[i] for i in step[1])))
        return values[-1]


def _constant(node: sp.Expr) -> float | complex:
    x = complex(node)
    return x.real if x.imag == 0 else x


def _power(base: Any, exponent: Any) -> Any:
    """``base**exponent``; an integer exponent by repeated products (exact for complex)."""
    if isinstance(exponent, float) and exponent.is_integer() and abs(exponent) <= 64:
        n = int(exponent)
        out = np.ones_like(base) if isinstance(base, np.ndarray) else 1.0
        for _ in range(abs(n)):
            out = out * base
        return 1.0 / out if n < 0 else out
    if not np.iscomplexobj(base) and np.any(np.asarray(base) < 0):
        base = np.asarray(base, dtype=complex)  # a root of a negative number
    return np.power(base, exponent)


def relative_sensitivities(
    f: Callable[[np.ndarray], np.ndarray], nominal: Sequence[float] | np.ndarray
) -> np.ndarray:
    """``∂y/∂xᵢ·xᵢ`` at ``nominal`` for every part, by the complex step.

    ``f(x + i·h·xᵢ·eᵢ)`` has imaginary part ``h·xᵢ·∂y/∂xᵢ`` to rounding for an
    analytic ``f`` (Squire & Trapp, SIAM Review 40 (1998) 110–112 [mem]); one
    vectorised call evaluates every part's step.
    """
    x = np.asarray(nominal, dtype=float)
    n = x.size
    columns = np.repeat(x[:, None], n, axis=1).astype(complex)
    columns[np.arange(n), np.arange(n)] += 1j * _STEP * x
    return np.asarray(f(columns)).imag / _STEP
