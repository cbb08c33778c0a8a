"""Exact sparse elimination inside one diagonal block.

The block's entries are converted into one SymPy domain (rational functions of
the block's own symbols, usually ``ZZ(R1, R2, …)``) so every operation cancels
exactly and cheaply. Pivots follow the Markowitz rule — the entry with the
smallest product ``(row count − 1)·(column count − 1)``, ties broken by the
smallest entry — which keeps fill-in, and so expression growth, low.

Examples
--------
>>> import sympy as sp
>>> from opsym.equations.sparse import solve_block
>>> R1, R2 = sp.symbols("R1 R2", positive=True)
>>> A = {0: {0: 1/R1 + 1/R2, 1: -1/R2}, 1: {0: -1/R2, 1: 1/R2}}
>>> x = solve_block(A, {0: {"b": sp.S.One}, 1: {}}, [0, 1])
>>> x[1]["b"]
R1
"""

from __future__ import annotations

from collections.abc import Hashable
from typing import Any

import sympy as sp
from sympy.polys.constructor import construct_domain

__all__ = ["SingularBlock", "readable", "solve_block"]


class SingularBlock(Exception):
    """The block's equations are linearly dependent."""


def solve_block(
    matrix: dict[int, dict[int, sp.Expr]],
    rhs: dict[int, dict[Hashable, sp.Expr]],
    cols: list[int],
) -> dict[int, dict[Hashable, sp.Expr]]:
    """Solve ``matrix · X = rhs`` exactly for several right-hand-side columns.

    Parameters
    ----------
    matrix : dict
        Row → {column → entry}; rows and columns are the block's own indices.
    rhs : dict
        Row → {rhs key → value}; values must be free of symbols from outside
        the block's domain only in the sense that they are exact expressions.
    cols : list of int
        The block's columns.

    Returns
    -------
    dict
        Column → {rhs key → solution}, each entry in :func:`readable` form.
    """
    entries: list[sp.Expr] = []
    for mrow in matrix.values():
        entries.extend(mrow.values())
    for rrow in rhs.values():
        entries.extend(rrow.values())
    domain, elems = construct_domain(entries, field=True) if entries else (sp.QQ, [])
    it = iter(elems)
    a = {r: {c: next(it) for c in row} for r, row in matrix.items()}
    b = {r: {k: next(it) for k in row} for r, row in rhs.items()}
    solution = _eliminate(a, b, cols, domain)
    cache: dict = {}  # entries of one block share its determinant: factor it once
    return {
        c: {k: readable(v, domain, cache) for k, v in sol.items()} for c, sol in solution.items()
    }


def _eliminate(a, b, cols, domain):
    zero = domain.zero
    a = {r: {c: v for c, v in row.items() if v != zero} for r, row in a.items()}
    col_rows: dict[int, set[int]] = {c: set() for c in cols}
    for r, row in a.items():
        for c in row:
            col_rows[c].add(r)
    remaining = set(a)
    order: list[tuple[int, int]] = []
    while remaining:
        pivot = _markowitz(a, remaining, col_rows)
        if pivot is None:
            raise SingularBlock
        pr, pc = pivot
        order.append(pivot)
        remaining.discard(pr)
        prow, prhs = a[pr], b[pr]
        pval = prow[pc]
        for r in list(col_rows[pc]):
            if r == pr or r not in remaining:
                continue
            row = a[r]
            f = row[pc] / pval
            for c, v in prow.items():
                if c == pc:
                    continue
                new = row.get(c, zero) - f * v
                if new == zero:
                    if c in row:
                        del row[c]
                        col_rows[c].discard(r)
                else:
                    if c not in row:
                        col_rows[c].add(r)
                    row[c] = new
            del row[pc]
            col_rows[pc].discard(r)
            rrhs = b[r]
            for k, v in prhs.items():
                new = rrhs.get(k, zero) - f * v
                if new == zero:
                    rrhs.pop(k, None)
                else:
                    rrhs[k] = new
        for c in prow:
            col_rows[c].discard(pr)
    x: dict[int, dict] = {}
    for pr, pc in reversed(order):
        acc = dict(b[pr])
        for c, v in a[pr].items():
            if c == pc:
                continue
            for k, xv in x[c].items():
                new = acc.get(k, zero) - v * xv
                if new == zero:
                    acc.pop(k, None)
                else:
                    acc[k] = new
        pval = a[pr][pc]
        x[pc] = {k: v / pval for k, v in acc.items()}
    return x


def _markowitz(a, remaining, col_rows):
    best = None
    best_key = None
    for r in remaining:
        row = a[r]
        nr = len(row) - 1
        for c, v in row.items():
            nc = sum(1 for rr in col_rows[c] if rr in remaining) - 1
            key = (nr * nc, _size(v), r, c)
            if best_key is None or key < best_key:
                best, best_key = (r, c), key
    return best


def _size(v) -> int:
    numer: Any = getattr(v, "numer", None)
    if not hasattr(numer, "factor_list"):  # not a rational function (EX, QQ, ...)
        return 0
    return len(numer) + len(v.denom)


def readable(value, domain, cache: dict | None = None) -> sp.Expr:
    """Convert a domain element to SymPy with numerator and denominator factored.

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2 = sp.symbols("R1 R2", positive=True)
    >>> K = sp.ZZ.frac_field(R1, R2)
    >>> readable(K.from_sympy(1/(1/R1 + 1/R2)), K)
    R1*R2/(R1 + R2)
    """
    numer = getattr(value, "numer", None)
    if not hasattr(numer, "factor_list"):  # EX and plain numbers
        return sp.factor(domain.to_sympy(value))
    cache = {} if cache is None else cache
    return _factored(value.numer, cache) / _factored(value.denom, cache)


def _factored(poly, cache: dict) -> sp.Expr:
    if poly in cache:
        return cache[poly]
    if len(poly) == 1:  # a monomial needs no factoring
        cache[poly] = poly.as_expr()
        return cache[poly]
    coeff, factors = poly.factor_list()
    out = [poly.ring.domain.to_sympy(coeff)]
    out.extend(f.as_expr() ** k for f, k in factors)
    cache[poly] = sp.Mul(*out)
    return cache[poly]
