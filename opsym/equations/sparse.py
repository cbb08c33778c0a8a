"""Exact sparse elimination inside one diagonal block.

The block's entries are converted into one SymPy domain (rational functions of
the block's own symbols, usually ``ZZ(R1, R2, …)``). Each row is then cleared
of its denominators, and the block is solved fraction-free over the integer
polynomials (Bareiss's one-step elimination: every division is exact, and no
greatest common divisor is taken until the end, one per solution entry). The
polynomial arithmetic runs in :mod:`opsym.equations._poly` (python-flint when
installed). Pivots follow the Markowitz rule — the entry with the smallest
product ``(row count − 1)·(column count − 1)``, ties broken by the smallest
entry — which keeps fill-in, and so expression growth, low. Results come out
as numerator over denominator, cancelled but not factored: factoring is
presentation, done when a coefficient is shown. Domains that are not rational
functions over the integers (numbers only, or ``EX``) are eliminated over the
field directly.

A block whose fraction-free entries grow past :data:`NEST_TERMS` terms (an
R-2R ladder or a resistor mesh, whose expanded determinant grows
exponentially) is solved again as a sequence of expressions
(:mod:`opsym.equations.nested`): its results then use auxiliary symbols
``X₁, X₂, …`` with small definitions.

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

from ._poly import PolyEngine, engine
from .nested import NestedSingular, Progress, solve_nested
from .structure import column_index

__all__ = ["NEST_TERMS", "SingularBlock", "readable", "solve_block"]

#: A fraction-free entry with more terms than this sends its block to the nested path.
NEST_TERMS = 1000
#: Blocks with at least this many equations report progress at every pivot.
_REPORT_FROM = 8


class SingularBlock(Exception):
    """The block's equations are linearly dependent."""


class _TooLarge(Exception):
    """A fraction-free entry passed the nesting limit."""


def solve_block(
    matrix: dict[int, dict[int, sp.Expr]],
    rhs: dict[int, dict[Hashable, sp.Expr]],
    cols: list[int],
    method: str | None = None,
    progress: Progress | None = None,
    nest_terms: int | None = None,
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
    method : {None, "flint", "sympy", "field", "nested"}
        ``None`` eliminates fraction-free with the default polynomial engine;
        ``"flint"`` or ``"sympy"`` chooses the engine; ``"field"`` eliminates
        over the rational functions and factors every result (the reference
        the tests compare with); ``"nested"`` forces the sequence of
        expressions.
    progress : callable, optional
        ``progress(done, total, what)`` after each pivot of a large block.
    nest_terms : int, optional
        The nesting limit in terms (default :data:`NEST_TERMS`; 0 nests every
        block over rational functions).

    Returns
    -------
    dict
        Column → {rhs key → solution}, each entry numerator over denominator.
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
    if method != "field" and domain.is_FractionField and domain.domain == sp.ZZ:
        limit = NEST_TERMS if nest_terms is None else nest_terms
        report = progress if len(cols) >= _REPORT_FROM else None
        bound = 0
        if method != "nested" and limit > 0:
            eng = engine(domain.field.ring, method)
            try:
                return _fraction_free(a, b, cols, eng, (limit, report))
            except _TooLarge as err:
                bound = err.args[0]
        return _nested(a, b, cols, domain, (report, bound))
    solution = _eliminate(a, b, cols, domain)
    cache: dict = {}  # entries of one block share its determinant: factor it once
    return {
        c: {k: readable(v, domain, cache) for k, v in sol.items()} for c, sol in solution.items()
    }


def _nested(a, b, cols, domain, watch):
    rows = {r: {c: domain.to_sympy(v) for c, v in row.items()} for r, row in a.items()}
    rhs = {r: {k: domain.to_sympy(v) for k, v in row.items()} for r, row in b.items()}
    try:
        return solve_nested(rows, rhs, cols, *watch)
    except NestedSingular:
        raise SingularBlock from None


def _eliminate(a, b, cols, domain):
    zero = domain.zero
    a = {r: {c: v for c, v in row.items() if v != zero} for r, row in a.items()}
    col_rows = column_index(a, cols)
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


def _fraction_free(a, b, cols, eng: PolyEngine, watch=(0, None)):
    """Bareiss elimination of ``[a | b]`` over ``ZZ[block symbols]``, rows cleared first.

    ``watch = (limit, progress)``: raises :class:`_TooLarge` when an entry has
    more than ``limit`` terms (0: no limit); reports each pivot to ``progress``.
    """
    limit, progress = watch
    ring = eng.ring
    rows, rhs = {}, {}
    for r, row in a.items():
        scale = ring.one
        for v in (*row.values(), *b[r].values()):
            scale = scale.lcm(v.denom)
        rows[r] = {c: eng.native(v.numer * scale.exquo(v.denom)) for c, v in row.items() if v}
        rhs[r] = {k: eng.native(v.numer * scale.exquo(v.denom)) for k, v in b[r].items() if v}
    col_rows = column_index(rows, cols)
    remaining = set(rows)
    order: list[tuple[int, int]] = []
    prev = None  # the previous pivot: every entry divides exactly by it
    while remaining:
        pivot = _markowitz(rows, remaining, col_rows, eng.size)
        if pivot is None:
            raise SingularBlock
        pr, pc = pivot
        order.append(pivot)
        remaining.discard(pr)
        for c in rows[pr]:
            col_rows[c].discard(pr)
        for r in remaining:
            f = rows[r].pop(pc, None)
            if f is not None:
                col_rows[pc].discard(r)
            p = rows[pr][pc]
            _bareiss_row(eng, rows[r], rows[pr], (p, f, prev, limit), pc, (col_rows, r))
            _bareiss_row(eng, rhs[r], rhs[pr], (p, f, prev, limit), None, None)
        prev = rows[pr][pc]
        if progress is not None:
            progress(len(order), len(rows), f"eliminating a block of {len(rows)} equations")
    return _back_substitute(eng, rows, rhs, order, prev)


def _bareiss_row(eng, row, prow, step, pc, track):
    """``row ← (p·row − f·prow)/prev`` in place, ``step = (p, f, prev, limit)``.

    ``f`` is the row's entry in the pivot column ``pc`` (None when it has none,
    and then the row is only scaled); ``prev`` is the previous pivot (None at
    the first step). ``track = (col_rows, r)`` keeps the column index current.
    An entry above ``limit`` terms (when nonzero) raises :class:`_TooLarge`.
    """
    p, f, prev, limit = step
    col_rows, r = track if track is not None else (None, None)
    keys = set(row) if f is None else set(row) | set(prow)
    if pc is not None:
        keys.discard(pc)
    for c in keys:
        new = p * row[c] if c in row else None
        if f is not None and c in prow:
            term = f * prow[c]
            new = -term if new is None else new - term
        if new is not None and new != 0 and prev is not None:
            new = eng.exquo(new, prev)
            if limit and eng.size(new) > limit:
                raise _TooLarge(eng.size(new))
        if new is None or new == 0:
            if c in row:
                del row[c]
                if col_rows is not None:
                    col_rows[c].discard(r)
        else:
            if col_rows is not None and c not in row:
                col_rows[c].add(r)
            row[c] = new


def _back_substitute(eng, rows, rhs, order, det):
    """Cramer numerators ``X = det·x`` from the last pivot back; each ``x = X/det`` cancelled."""
    numer: dict[int, dict] = {}
    for pr, pc in reversed(order):
        acc = {k: det * v for k, v in rhs[pr].items()}
        for c, v in rows[pr].items():
            if c == pc:
                continue
            for k, xv in numer[c].items():
                acc[k] = acc[k] - v * xv if k in acc else -(v * xv)
        pval = rows[pr][pc]
        numer[pc] = {k: eng.exquo(v, pval) for k, v in acc.items() if v != 0}
    return {
        c: {k: _ratio(eng, v, det) for k, v in sol.items() if v != 0} for c, sol in numer.items()
    }


def _ratio(eng: PolyEngine, num, den) -> sp.Expr:
    """``num/den`` with their common factor removed, as a SymPy expression."""
    g = eng.gcd(num, den)
    num, den = eng.back(eng.exquo(num, g)), eng.back(eng.exquo(den, g))
    if den.LC < 0:  # the sign goes to the numerator, as a factored form shows it
        num, den = -num, -den
    return _content_form(num) / _content_form(den)


def _content_form(p) -> sp.Expr:
    """A polynomial with its integer and monomial content pulled out: cheap, not factored."""
    if len(p) <= 1:
        return p.as_expr()
    content, q = p.primitive()
    if q.LC < 0:
        content, q = -content, -q
    monom = tuple(min(e) for e in zip(*q.keys(), strict=True))
    if any(monom):
        q = q.ring.from_dict(
            {tuple(a - b for a, b in zip(m, monom, strict=True)): v for m, v in q.items()}
        )
    lead = p.ring.from_dict({monom: p.ring.domain.one}).as_expr()
    return sp.Integer(int(content)) * lead * q.as_expr()


def _markowitz(a, remaining, col_rows, size=None):
    best = None
    best_key = None
    for r in remaining:
        row = a[r]
        nr = len(row) - 1
        for c, v in row.items():
            nc = sum(1 for rr in col_rows[c] if rr in remaining) - 1
            key = (nr * nc, _size(v) if size is None else size(v), r, c)
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
