"""Results as a sequence of expressions: auxiliary symbols with small definitions.

Where a block's expanded result would be exponentially large (an R-2R ladder,
a resistor mesh), the block is eliminated by Gaussian elimination in which
every new entry larger than a few operations is named by an auxiliary symbol
``Xₖ`` whose definition is small and uses only circuit symbols and earlier
auxiliaries (the sequence-of-expressions form of symbolic analysis; see
docs/method.md). The result is then a short expression in ``Xₖ`` plus the
ordered definitions.

An :class:`Aux` symbol behaves truthfully in SymPy: its ``free_symbols`` are
those of its definition (so "which components does this depend on" looks
through it), ``xreplace``/``subs`` substitute into the definitions (numbers in
every circuit symbol give a number), and ``diff`` applies the chain rule
through derivative auxiliaries ``∂Xₖ/∂x``. What treats a symbol as independent
of the others (polynomials in a component, ``solve``, limits) must expand
first: :func:`expanded` does so when the expanded form is small, and raises
:class:`~opsym.errors.ExpressionTooLargeError` with a size estimate otherwise.

Examples
--------
>>> import sympy as sp
>>> R1, R2 = sp.symbols("R1 R2", positive=True)
>>> X = Aux.define(R1 * R2 + R1 + R2, 1)
>>> X, X.definition
(X₁, R1*R2 + R1 + R2)
>>> sorted(X.free_symbols, key=str)
[R1, R2]
>>> (2 * X).xreplace({R1: 1, R2: 2})
10
>>> sp.diff(X**2, R1).xreplace({R1: 1, R2: 2})
30
>>> expanded(X / R1)
(R1*R2 + R1 + R2)/R1
"""

from __future__ import annotations

import hashlib
import itertools
from collections.abc import Callable, Iterable, Mapping
from typing import Any

import sympy as sp

from ..errors import ExpressionTooLargeError
from .structure import column_index

__all__ = [
    "EXPAND_LIMIT",
    "Aux",
    "definitions_of",
    "expanded",
    "has_aux",
    "probe",
]

#: Expanded forms above this many terms are refused by :func:`expanded` (the
#: solver's own nesting limit, ``opsym.equations.sparse.NEST_TERMS``).
EXPAND_LIMIT = 1000
_P = 2**61 - 1  # a Mersenne prime: probes are exact modulo it
_serial = itertools.count(1)
_SUB = str.maketrans("0123456789", "₀₁₂₃₄₅₆₇₈₉")


class Aux(sp.Symbol):
    """An auxiliary symbol ``Xₖ`` standing for its (small) definition.

    Two auxiliaries are equal only when they are the same object (a serial
    number is part of their identity), so ``X₁`` of one result never meets
    ``X₁`` of another. ``index`` is the number shown; ``definition`` is an
    expression in circuit symbols and earlier auxiliaries.
    """

    __slots__ = ("_closure", "_free", "_memo", "bound", "definition", "index", "probe", "serial")

    is_Aux = True

    def __new__(cls, name: str, definition: sp.Expr, index: int, bound: int = 0) -> Aux:
        obj = sp.Symbol.__xnew__(cls, name)  # type: ignore[attr-defined]
        obj.serial = next(_serial)
        obj.index = index
        obj.definition = definition
        obj.bound = bound  # the expanded form is known to pass this many terms
        deps = [a for a in definition.atoms(Aux)]
        obj._free = frozenset(definition.free_symbols)
        closure: set[Aux] = {obj}
        for d in deps:
            closure |= d._closure
        obj._closure = frozenset(closure)
        obj._memo = {}
        obj.probe = probe(definition)
        return obj

    @classmethod
    def define(
        cls, definition: sp.Expr, index: int, name: str | None = None, bound: int = 0
    ) -> Aux:
        """A new auxiliary ``X_index`` (or ``name``) for ``definition``.

        ``bound``: the block's expanded form is known to have more terms than
        this (the solver saw it before it switched to the nested form).
        """
        return cls(name or "X" + str(index).translate(_SUB), definition, index, bound)

    def __getnewargs_ex__(self):
        return ((self.name, self.definition, self.index, self.bound), {})

    def _hashable_content(self):
        return (*sp.Symbol._hashable_content(self), self.serial)

    def sort_key(self, order=None):
        return self.class_key(), (2, (self.index, self.serial)), sp.S.One.sort_key(), sp.S.One

    @property
    def free_symbols(self) -> set[sp.Basic]:  # type: ignore[override]
        return set(self._free)

    def _latex(self, printer: Any) -> str:
        if self.name.startswith("∂"):
            head, _, var = self.name[1:].partition("/∂")
            return rf"\partial {_latex_of(head)}/\partial {printer._print(_named(var, self))}"
        return _latex_of(self.name)

    # -- substitution and differentiation look through the definition ------------------

    def xreplace(self, rule: Mapping, hack2: bool = False) -> Any:  # type: ignore[override]
        return self._xreplace(rule)[0]  # an Atom's own xreplace would not look inside

    def _xreplace(self, rule: Mapping) -> tuple[Any, bool]:
        if self in rule:
            return rule[self], True
        if not isinstance(rule, dict):  # a rule by test (SymPy's Transform): what it takes
            rule = {s: rule[s] for s in self._free if s in rule}
        if not rule or self._free.isdisjoint(rule):
            return self, False
        key = ("x", tuple(rule.items()))
        if key not in self._memo:
            # earliest first, so no definition recurses deeply
            for aux in sorted(self._closure, key=lambda a: a.serial):
                if key in aux._memo:
                    continue
                if aux._free.isdisjoint(rule):
                    aux._memo[key] = aux
                    continue
                new = aux.definition.xreplace(rule)
                aux._memo[key] = _renamed(aux, new)
        value = self._memo[key]
        return value, value is not self

    def _eval_subs(self, old: Any, new: Any) -> Any:
        if not (old.free_symbols & self._free):
            return None
        if not isinstance(old, sp.Symbol):
            raise ExpressionTooLargeError(
                f"cannot substitute for {old} inside the auxiliary {self}: substitute "
                "single symbols (subs({R1: value})), or expand the result first"
            )
        return self._xreplace({old: new})[0]

    def _eval_derivative_n_times(self, s: Any, n: Any) -> Any:
        return sp.Basic._eval_derivative_n_times(self, s, n)

    def _eval_derivative(self, s: Any) -> Any:
        if s == self:
            return sp.S.One
        if s not in self._free:
            return sp.S.Zero
        key = ("d", s)
        if key not in self._memo:
            for aux in sorted(self._closure, key=lambda a: a.serial):
                if key in aux._memo:
                    continue
                if s not in aux._free:
                    aux._memo[key] = sp.S.Zero
                    continue
                d = sp.diff(aux.definition, s)
                aux._memo[key] = _named_if_large(d, aux.index, f"∂{aux.name}/∂{s}", aux.bound)
        return self._memo[key]


def _named(var: str, aux: Aux) -> sp.Basic:
    for s in aux._free:
        if getattr(s, "name", None) == var:
            return s
    return sp.Symbol(var)


def _latex_of(name: str) -> str:
    base = name.rstrip("₀₁₂₃₄₅₆₇₈₉")
    digits = name[len(base) :].translate(str.maketrans("₀₁₂₃₄₅₆₇₈₉", "0123456789"))
    return f"{base}_{{{digits}}}" if digits else base


def _renamed(aux: Aux, new: sp.Expr) -> Any:
    """The substituted definition: a number or small expression as is, else a new ``Xₖ``."""
    if not new.free_symbols or _ops(new) <= SMALL:
        return new
    # The solver's size bound was of the unsubstituted block; with values in, the
    # expanded form can be small, so it is unknown again (expanded() checks as it goes).
    return Aux(aux.name, new, aux.index, 0)


def _named_if_large(expr: sp.Expr, index: int, name: str, bound: int = 0) -> Any:
    if _ops(expr) <= SMALL or not expr.free_symbols:
        return expr
    return Aux(name, expr, index, bound)


#: Entries with more operations than this are named by an auxiliary symbol.
SMALL = 12


def _ops(e: sp.Expr) -> int:
    return 0 if e.is_Atom else sp.count_ops(e)


def has_aux(exprs: sp.Expr | Iterable[sp.Expr]) -> bool:
    """True when an expression (or any of several) uses an auxiliary symbol."""
    items = [exprs] if isinstance(exprs, sp.Basic) else list(exprs)
    return any(e.atoms(Aux) for e in items if isinstance(e, sp.Basic))


def definitions_of(exprs: sp.Expr | Iterable[sp.Expr]) -> tuple[tuple[Aux, sp.Expr], ...]:
    """The definitions ``(Xₖ, expression)`` the expressions use, earliest first.

    Examples
    --------
    >>> R1 = sp.Symbol("R1", positive=True)
    >>> X1 = Aux.define(R1 + 1, 1)
    >>> X2 = Aux.define(X1 * R1 + 2, 2)
    >>> definitions_of(X2 / R1)
    ((X₁, R1 + 1), (X₂, X₁*R1 + 2))
    """
    items = [exprs] if isinstance(exprs, sp.Basic) else list(exprs)
    found: set[Aux] = set()
    for e in items:
        for a in e.atoms(Aux):
            found |= a._closure
    return tuple((a, a.definition) for a in sorted(found, key=lambda a: a.serial))


def expanded(expr: sp.Expr, limit: int = EXPAND_LIMIT) -> sp.Expr:
    """``expr`` with every auxiliary replaced by its definition, cancelled.

    The definitions are expanded in order over the rational functions of the
    circuit symbols, each cancelled; as soon as one passes ``limit`` terms
    (numerator and denominator together) the expansion stops and
    :class:`~opsym.errors.ExpressionTooLargeError` says how large it got, so a
    refusal costs no more than expanding to the limit.
    """
    defs = definitions_of(expr)
    if not defs:
        return expr
    known = max(aux.bound for aux, _ in defs)
    if known > limit:
        raise ExpressionTooLargeError(
            f"the expanded form has more than {known} terms (limit {limit}): the solver "
            f"met that many before it kept the result as {len(defs)} definitions X₁ = …. "
            "Give values for a numeric answer (subs with numbers, budgets), or raise the "
            "limit (expanded(limit=...)), which may take minutes"
        )
    symbols = sorted(expr.free_symbols, key=str)
    try:
        field = sp.ZZ.frac_field(*symbols) if symbols else sp.QQ
        values: dict[sp.Basic, Any] = {}
        for k, (aux, definition) in enumerate(defs, start=1):
            values[aux] = _in_field(definition, field, values)
            _check_size(values[aux], limit, aux, len(defs) - k)
        value = _in_field(expr, field, values)
        _check_size(value, limit, None, 0)
        return sp.factor_terms(field.to_sympy(value))
    except (TypeError, sp.CoercionFailed):  # not a rational function over the integers
        out: dict[sp.Basic, sp.Expr] = {}
        for aux, definition in defs:
            out[aux] = sp.cancel(definition.xreplace(out))
        return sp.factor_terms(sp.cancel(expr.xreplace(out)))


def _check_size(value: Any, limit: int, aux: Aux | None, later: int) -> None:
    numer = getattr(value, "numer", None)
    if numer is None:
        return
    size = len(numer) + len(value.denom)
    if size <= limit:
        return
    where = f"at {aux}, with {later} definitions still to go" if aux is not None else ""
    raise ExpressionTooLargeError(
        f"the expanded form has at least {size} terms {where} (limit {limit}); the result "
        "is kept as a sequence of definitions X₁ = …. Give values for a numeric answer "
        "(subs with numbers, budgets), or raise the limit (expanded(limit=...))"
    )


def _in_field(e: sp.Basic, field: Any, values: Mapping[sp.Basic, Any]) -> Any:
    """A small expression (auxiliaries already in ``values``) as an element of ``field``."""
    if e in values:
        return values[e]
    if isinstance(e, sp.Add):
        out = field.zero
        for a in e.args:
            out += _in_field(a, field, values)
        return out
    if isinstance(e, sp.Mul):
        out = field.one
        for a in e.args:
            out *= _in_field(a, field, values)
        return out
    if isinstance(e, sp.Pow) and e.exp.is_Integer:
        return _in_field(e.base, field, values) ** int(e.exp)
    if isinstance(e, Aux):
        raise TypeError(f"{e} used before its definition")
    if e.is_Rational or isinstance(e, sp.Symbol):
        return field.from_sympy(e)
    raise TypeError(f"not a rational function: {e}")


# -- probes: exact values modulo a prime at a fixed random-looking point -------------------


def _point(sym: sp.Symbol) -> int:
    digest = hashlib.sha256(sym.name.encode()).digest()
    return int.from_bytes(digest[:8], "big") % _P or 1


def probe(expr: sp.Expr) -> int:
    """``expr`` modulo a large prime at a fixed point (zero: the entry is zero, w.h.p.).

    A nonzero rational function of degree ``d`` vanishes at a random point
    modulo ``p`` with probability at most ``d/p`` (Schwartz–Zippel lemma), here
    below 1e-15 for any circuit. Raises :class:`ZeroDivisionError` when a
    denominator vanishes there, :class:`TypeError` for what is not a rational
    function with rational coefficients.
    """
    if isinstance(expr, Aux):
        return expr.probe
    if expr.is_Integer:
        return int(expr) % _P
    if expr.is_Rational:
        return int(expr.p) * _inverse(int(expr.q)) % _P
    if isinstance(expr, sp.Symbol):
        return _point(expr)
    if isinstance(expr, sp.Add):
        return sum(probe(a) for a in expr.args) % _P
    if isinstance(expr, sp.Mul):
        out = 1
        for a in expr.args:
            out = out * probe(a) % _P
        return out
    if isinstance(expr, sp.Pow) and expr.exp.is_Integer:
        base = probe(expr.base)
        n = int(expr.exp)
        return pow(base, n, _P) if n >= 0 else pow(_inverse(base), -n, _P)
    raise TypeError(f"not a rational function: {expr}")


def _inverse(x: int) -> int:
    if x % _P == 0:
        raise ZeroDivisionError("probe: a denominator vanishes at the probe point")
    return pow(x, _P - 2, _P)


Progress = Callable[[int, int, str], None]


# -- elimination -------------------------------------------------------------------------


class NestedSingular(Exception):
    """No nonzero pivot is left: the block's equations are dependent."""


class _Namer:
    """Names every large new entry ``X₁, X₂, …`` in the order it is made."""

    def __init__(self, bound: int) -> None:
        self.count = 0
        self.bound = bound

    def __call__(self, expr: sp.Expr) -> sp.Expr:
        expr = sp.together(expr)
        if _ops(expr) <= SMALL or not expr.free_symbols:
            return expr
        self.count += 1
        return Aux.define(expr, self.count, bound=self.bound)


def solve_nested(
    rows: dict[int, dict[int, sp.Expr]],
    rhs: dict[int, dict[Any, sp.Expr]],
    cols: list[int],
    progress: Progress | None = None,
    bound: int = 0,
) -> dict[int, dict[Any, sp.Expr]]:
    """Solve ``rows · X = rhs`` by Gaussian elimination into a sequence of expressions.

    Entries are SymPy rational functions. Pivots follow the Markowitz rule
    among entries whose probe (:func:`probe`) is nonzero; an update whose probe
    is zero is dropped as an exact zero. Every new entry above :data:`SMALL`
    operations becomes an :class:`Aux` (``bound``: the size in terms the
    expanded form is known to pass). ``progress(done, total, what)`` is called
    after each pivot.

    Examples
    --------
    >>> R1, R2 = sp.symbols("R1 R2", positive=True)
    >>> A = {0: {0: 1/R1 + 1/R2, 1: -1/R2}, 1: {0: -1/R2, 1: 1/R2}}
    >>> x = solve_nested(A, {0: {"b": sp.S.One}, 1: {}}, [0, 1])
    >>> sp.simplify(x[1]["b"] - R1)
    0
    """
    name = _Namer(bound)
    a = {r: {c: v for c, v in row.items() if probe(v)} for r, row in rows.items()}
    b = {r: {k: v for k, v in row.items() if probe(v)} for r, row in rhs.items()}
    col_rows = column_index(a, cols)
    remaining = set(a)
    order: list[tuple[int, int]] = []
    while remaining:
        pr, pc = _pivot(a, remaining, col_rows)
        order.append((pr, pc))
        remaining.discard(pr)
        for c in a[pr]:
            col_rows[c].discard(pr)
        pval = a[pr][pc]
        for r in [r for r in col_rows[pc] if r in remaining]:
            f = name(a[r].pop(pc) / pval)
            col_rows[pc].discard(r)
            _update(a[r], a[pr], f, pc, name, (col_rows, r))
            _update(b[r], b[pr], f, None, name, None)
        if progress is not None:
            progress(len(order), len(a), f"eliminating a block of {len(a)} equations")
    x: dict[int, dict[Any, sp.Expr]] = {}
    for pr, pc in reversed(order):
        acc = dict(b[pr])
        for c, v in a[pr].items():
            if c == pc:
                continue
            for k, xv in x[c].items():
                acc[k] = acc.get(k, sp.S.Zero) - v * xv
        pval = a[pr][pc]
        x[pc] = {}
        for k, v in acc.items():
            value = name(v / pval)
            if probe(value):
                x[pc][k] = value
    return x


def _update(row, prow, f, pc, name, track) -> None:
    """``row ← row − f·prow`` (skipping column ``pc``); new entries named when large."""
    for c, v in prow.items():
        if c == pc:
            continue
        new = row[c] - f * v if c in row else -f * v
        value = name(new)
        if probe(value) == 0:
            if c in row:
                del row[c]
                if track is not None:
                    track[0][c].discard(track[1])
            continue
        if track is not None and c not in row:
            track[0][c].add(track[1])
        row[c] = value


def _pivot(a, remaining, col_rows) -> tuple[int, int]:
    best, best_key = None, None
    for r in remaining:
        row = a[r]
        nr = len(row) - 1
        for c, v in row.items():
            nc = sum(1 for rr in col_rows[c] if rr in remaining) - 1
            key = (nr * nc, _ops(v), r, c)
            if best_key is None or key < best_key:
                best, best_key = (r, c), key
    if best is None:
        raise NestedSingular
    return best
