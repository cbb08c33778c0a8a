"""Comparing symbolic results with numbers, for the reference tests."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import sympy as sp

__all__ = ["close", "evaluate", "exact"]


def exact(value: Any) -> sp.Expr:
    """A number as an exact SymPy value; floats through their shortest decimal form."""
    if isinstance(value, float):
        return sp.Rational(repr(value))
    return sp.sympify(value)


def evaluate(expr: Any, values: Mapping[sp.Symbol, Any] | None = None) -> float:
    """``expr`` with ``values`` substituted exactly, as a float; fails if a symbol is left."""
    e = sp.sympify(expr)
    if values:
        e = e.subs({k: exact(v) for k, v in values.items()})
    if e.free_symbols:
        raise AssertionError(
            f"symbols left after substitution: {sorted(map(str, e.free_symbols))}"
        )
    return float(sp.N(e, 30))


def close(got: float, want: float, rel: float = 1e-9, abs_floor: float = 0.0) -> bool:
    """``|got - want| <= max(rel·|want|, abs_floor)``; false for NaN."""
    if not (math.isfinite(got) and math.isfinite(want)):
        return False
    return abs(got - want) <= max(rel * abs(want), abs_floor)
