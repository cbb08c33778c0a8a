r"""Dominant terms of a long coefficient at nominal values, with a bound on what was dropped.

Simplification after generation: the exact coefficient is derived first, then
each polynomial part of it — every factor of the numerator and of the
denominator, and in the ``s`` domain every power of ``s`` of each — keeps its
largest monomials at the nominal values until the monomials dropped sum, in
absolute value, to at most a share ``η`` of the kept part's value.

The bound
---------
Write one polynomial part as ``P = K + d`` (kept plus dropped) with
``|d| ≤ ε·|K|`` at the nominal point, so ``P/K = 1 + t`` with ``|t| ≤ ε``.
For ``H = N/D`` with ``|Nd| ≤ εn·|Nk|`` and ``|Dd| ≤ εd·|Dk|``,
``H̃ = Nk/Dk`` and

    H/H̃ = (1 + tn)/(1 + td),   so  |H/H̃ − 1| = |tn − td|/|1 + td| ≤ (εn + εd)/(1 − εd),
    H̃/H = (1 + td)/(1 + tn),   so  |H̃/H − 1| ≤ (εn + εd)/(1 − εn).

The first is the error relative to the approximation, the second relative to
the exact value; opsym states ``(εn + εd)/(1 − max(εn, εd))``, which bounds
both. With several factors ``P_i`` to the powers ``e_i`` the same argument
gives ``H̃/H = Π (1 + t_i)^(−e_i)``, whose extremes over ``|t_i| ≤ ε_i`` are
at the corners; opsym evaluates both corners for both ratios exactly, in
rational arithmetic, and rounds the result up. ``error`` is the bound asked
for on the whole coefficient: each of the ``M`` parts (counted with their
powers) gets ``η = (q − 1)/(q + 1)``, ``q = (1 + error)^(1/M)``, so that even
with every part at ``η`` the bound stays within ``error``.

In the ``s`` domain each power of ``s`` is truncated on its own: the bound
then holds for every coefficient of ``s`` (each sum of time constants) and
for ``H`` at DC; it is not a bound on ``|H(jω)|``, where the powers of ``s``
may cancel.

This is the practice known in symbolic circuit analysis as simplification
after generation (G. Gielen, P. Wambacq and W. Sansen, "Symbolic analysis
methods and applications for analog circuits: a tutorial overview",
Proc. IEEE, 1994 — cited from memory).

Examples
--------
The non-inverting stage's gain ``A·(R1 + R2)/(R1·A + R1 + R2)`` at
``A = 10⁵``, ``R1 = R2``: the denominator keeps ``R1·A``; what is dropped is
the first-order gain error ``1/(A·β)``:

>>> import sympy as sp
>>> A, R1, R2 = sp.symbols("A R1 R2", positive=True)
>>> d = dominant_form(A * (R1 + R2) / (R1 * A + R1 + R2), {A: 10**5, R1: 1000, R2: 1000})
>>> d.expression, d.kept, d.dropped
((R1 + R2)/R1, 3, 2)
>>> print(f"{d.bound:.6g}")
2.00004e-05
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from fractions import Fraction

import sympy as sp

from ..errors import (
    ArgumentTypeError,
    ExpressionTooLargeError,
    InvalidValueError,
    MissingValueError,
)
from ..model.limits import expect_mapping, shown
from ..model.symbols import LAPLACE
from .present import TIDY_LIMIT

__all__ = ["EXPAND_LIMIT", "Dominant", "dominant_form", "expanded_size", "part_sizes"]

#: Most monomials opsym expands one polynomial part to (an estimate, before expanding).
EXPAND_LIMIT = 200_000


@dataclass(frozen=True)
class Dominant:
    """A coefficient's dominant terms and the bound on the relative error they make.

    Attributes
    ----------
    expression : sympy.Expr
        The approximate coefficient, ``H̃``.
    exact : sympy.Expr
        The exact coefficient it was taken from, ``H``.
    bound : float
        At the nominal values, ``|H̃/H − 1|`` and ``|H/H̃ − 1|`` are at most this
        (rounded up from the exact rational bound).
    kept, dropped : int
        Monomials kept and dropped, over every polynomial part.
    scope : str
        Where the bound holds, in words.
    actual : float or None
        ``|H̃/H − 1|`` at the nominal values (at DC in the ``s`` domain), evaluated
        exactly and rounded up; ``None`` where ``H`` is zero there.
    values : mapping of sympy.Symbol to Fraction
        The nominal point, exactly.
    """

    expression: sp.Expr
    exact: sp.Expr
    bound: float
    kept: int
    dropped: int
    scope: str = "at the nominal values"
    actual: float | None = 0.0
    values: Mapping[sp.Symbol, Fraction] = field(default_factory=dict, repr=False)

    @property
    def percent(self) -> str:
        """The bound in percent, rounded up, for a note: ``"0.002 %"``."""
        return _percent_text(self.bound)

    def latex(self, names: Mapping[sp.Symbol, str] | None = None) -> str:
        r"""``H̃`` in LaTeX, then ``(dropped terms ≤ x %)`` unless nothing was dropped.

        Examples
        --------
        >>> import sympy as sp
        >>> a, b = sp.symbols("a b", positive=True)
        >>> print(dominant_form(1 / (a + b), {a: 1000, b: 1}).latex())
        \frac{1}{a} \quad \text{(dropped terms $\le$ 0.1002 \% at the nominal values)}
        """
        tex = sp.latex(self.expression, symbol_names=dict(names or {}))
        if not self.dropped:
            return tex
        pct = self.percent.replace(" %", r" \%")
        return tex + rf" \quad \text{{(dropped terms $\le$ {pct} {self.scope})}}"


def _percent_text(bound: float) -> str:
    """``100·bound`` to four significant digits, rounded up."""
    pct = 100 * bound
    if pct == 0:
        return "0 %"
    step = 10 ** (math.floor(math.log10(pct)) - 3)
    return f"{math.ceil(pct / step) * step:.4g} %"


def expanded_size(expr: sp.Expr) -> int:
    """An upper estimate of the monomials of ``expr`` expanded (a polynomial expression).

    Examples
    --------
    >>> import sympy as sp
    >>> a, b, c = sp.symbols("a b c")
    >>> expanded_size((a + b) * (a + c) + c)
    5
    """
    if isinstance(expr, sp.Add):
        return sum(expanded_size(a) for a in expr.args)
    if isinstance(expr, sp.Mul):
        return math.prod(expanded_size(a) for a in expr.args)
    if isinstance(expr, sp.Pow) and expr.exp.is_Integer and expr.exp > 0:
        return expanded_size(expr.base) ** int(expr.exp)
    return 1


def dominant_form(
    coeff: sp.Expr,
    values: Mapping[sp.Symbol, sp.Expr],
    error: float = 0.01,
    s: sp.Symbol = LAPLACE,
    limit: int = EXPAND_LIMIT,
    what: str = "the coefficient",
) -> Dominant:
    """The dominant terms of ``coeff`` at ``values`` within a relative ``error``.

    Parameters
    ----------
    coeff : sympy.Expr
        A rational function of the symbols (and ``s``).
    values : mapping of sympy.Symbol to exact number
        A value for every free symbol but ``s``.
    error : float
        The bound asked for, ``0 ≤ error < 1``; ``0`` returns ``coeff`` as it is.
    limit : int
        Most monomials a polynomial part may expand to (estimated first).

    Raises
    ------
    MissingValueError
        A symbol of ``coeff`` has no value; the message names them all.
    ExpressionTooLargeError
        A part would expand beyond ``limit`` monomials.
    """
    share = _share(error)
    if isinstance(coeff, (int, Fraction)) and not isinstance(coeff, bool):
        coeff = sp.Rational(coeff)
    if not isinstance(coeff, sp.Expr):
        raise ArgumentTypeError(
            f"dominant terms: expected a SymPy expression (a Result's coefficient), not a "
            f"{type(coeff).__name__}"
        )
    values = expect_mapping(values, "dominant values", "{R1: 10000}")
    point = _point(coeff, values, s, what)
    if share == 0 or coeff.is_number:
        return Dominant(coeff, coeff, 0.0, _count(coeff, s), 0, values=point)
    const, parts = _parts(coeff, s, limit, what)
    multiplicity = sum(abs(e) for _, e in parts) or 1
    q = (1 + float(share)) ** (1 / multiplicity)  # share < 1: a float is safe
    eta = Fraction((q - 1) / (q + 1)) * Fraction(999_999, 1_000_000)  # float slack, downwards
    kept_parts, eps, kept, dropped = [], [], 0, 0
    ratio: Fraction | None = Fraction(1)  # H̃/H at the point (at DC)
    for poly, e in parts:
        approx, share, k, d, (full, part) = _truncate(poly, point, s, eta)
        kept_parts.append(approx**e)
        eps.append((share, e))
        kept, dropped = kept + k, dropped + d
        ratio = None if ratio is None or full == 0 or part == 0 else ratio * (part / full) ** e
    scope = "at the nominal values" if s not in coeff.free_symbols else (
        "at DC and per power of s, at the nominal values")  # fmt: skip
    expr = _shortest(const * sp.Mul(*kept_parts), kept)
    actual = None if ratio is None else _round_up(abs(ratio - 1))
    return Dominant(expr, coeff, _round_up(_bound(eps)), kept, dropped, scope, actual, point)


#: Most kept monomials for which the approximation is cancelled and factored.
CANCEL_LIMIT = 6000


def _shortest(expr: sp.Expr, kept: int) -> sp.Expr:
    """``expr`` cancelled (and factored where affordable) if that is shorter: same value."""
    if kept > CANCEL_LIMIT:
        return expr
    best, size = expr, sp.count_ops(expr)
    cancelled = sp.cancel(expr)
    n = sp.count_ops(cancelled)
    if n < size:
        best, size = cancelled, n
    if size <= TIDY_LIMIT:
        factored = sp.factor(best)
        if sp.count_ops(factored) <= size:
            best = factored
    return best


def _share(error: object) -> Fraction:
    """``error`` as an exact fraction in ``[0, 1)``; else raise."""
    if isinstance(error, bool) or not isinstance(error, (int, float, Fraction, sp.Rational)):
        raise ArgumentTypeError(f"dominant: error must be a number, not a {type(error).__name__}")
    try:
        share = Fraction(int(error.p), int(error.q)) if isinstance(error, sp.Rational) \
            else Fraction(error)  # fmt: skip
    except (ValueError, OverflowError):  # nan, inf
        share = Fraction(-1)
    if not 0 <= share < 1:
        raise InvalidValueError(
            f"dominant: error {shown(error)} must be from 0 up to below 1 (0.01 is 1 %)"
        )
    return share


def _point(
    coeff: sp.Expr, values: Mapping[sp.Symbol, sp.Expr], s: sp.Symbol, what: str
) -> dict[sp.Symbol, Fraction]:
    """Exact rational values of every free symbol of ``coeff`` but ``s``."""
    need = sorted((x for x in coeff.free_symbols if x != s), key=str)
    missing = [x for x in need if x not in values]
    if missing:
        raise MissingValueError(
            f"dominant terms of {what}: give values for {', '.join(map(str, missing))} "
            "(values={'R1': '10k', ...})"
        )
    return {x: _exact(values[x], f"{what}: value of {x}") for x in need}


def _exact(value: object, where: str) -> Fraction:
    """An exact rational: rationals and floats as they are, other numbers to 30 digits."""
    if isinstance(value, (int, Fraction)) and not isinstance(value, bool):
        return Fraction(value)
    if isinstance(value, float) and math.isfinite(value):
        return Fraction(value)
    v = value if isinstance(value, sp.Basic) else None
    if v is None or not v.is_number or not v.is_real:
        raise InvalidValueError(f"dominant terms of {where}: {value!r} is not a real number")
    if not isinstance(v, sp.Rational):
        v = sp.Rational(str(sp.N(v, 30)))
    return Fraction(int(v.p), int(v.q))


def _parts(
    coeff: sp.Expr, s: sp.Symbol, limit: int, what: str
) -> tuple[sp.Expr, list[tuple[sp.Expr, int]]]:
    """``coeff = const · Π part**e``: the polynomial parts (sums) and the rest."""
    const, found = _factors(coeff)
    parts = []
    for base, e in found.items():
        if e == 0:
            continue
        if any(not _is_monomial(a) for a in base.args):
            size = expanded_size(base)
            if size > limit:
                raise ExpressionTooLargeError(
                    f"dominant terms of {what}: a part would expand to about {size} monomials, "
                    f"more than the limit of {limit}; fix more values before solving "
                    "(analyze(values=...)) to shrink it"
                )
            base = sp.expand(base)
        parts.append((base, e))
    return const, parts


def _factors(coeff: sp.Expr) -> tuple[sp.Expr, dict[sp.Expr, int]]:
    """``coeff = const · Π base**e`` over its sums ``base``, nested products flattened."""
    expr = sp.together(coeff) if isinstance(coeff, sp.Add) else coeff
    const, found = sp.S.One, dict[sp.Expr, int]()
    stack = [(expr, 1)]
    while stack:
        item, power = stack.pop()
        if isinstance(item, sp.Mul):
            stack += [(a, power) for a in item.args]
            continue
        base, exp = item.as_base_exp()
        if isinstance(base, sp.Mul) and exp.is_Integer:
            stack += [(a, power * int(exp)) for a in base.args]
        elif isinstance(base, sp.Add) and exp.is_Integer and _has_fraction(base):
            stack.append((sp.together(base), power * int(exp)))  # a sum of fractions
        elif isinstance(base, sp.Add) and exp.is_Integer:
            found[base] = found.get(base, 0) + power * int(exp)
        else:
            const *= item**power
    return const, found


def _has_fraction(poly: sp.Add) -> bool:
    """Whether a term of the sum divides by a sum: ``together`` makes it one fraction."""
    return any(
        f.as_base_exp()[1].is_negative and isinstance(f.as_base_exp()[0], sp.Add)
        for term in poly.args
        for f in sp.Mul.make_args(term)
    )


def part_sizes(coeff: sp.Expr) -> tuple[int, int]:
    """Estimated monomials of the numerator and the denominator of ``coeff``, unexpanded.

    Examples
    --------
    >>> import sympy as sp
    >>> a, b, c = sp.symbols("a b c", positive=True)
    >>> part_sizes(-a * (a + b) / ((a + c) * (b + c + 1)))
    (2, 6)
    """
    _, found = _factors(coeff)
    num = math.prod(expanded_size(b) ** e for b, e in found.items() if e > 0)
    den = math.prod(expanded_size(b) ** -e for b, e in found.items() if e < 0)
    return num, den


def _is_monomial(term: sp.Expr) -> bool:
    return not any(isinstance(f.as_base_exp()[0], sp.Add) for f in sp.Mul.make_args(term))


def _truncate(
    poly: sp.Expr, point: Mapping[sp.Symbol, Fraction], s: sp.Symbol, eta: Fraction
) -> tuple[sp.Expr, Fraction, int, int, tuple[Fraction, Fraction]]:
    """Keep the largest monomials of ``poly`` (per power of ``s``): the kept sum, the
    worst share dropped, the counts kept and dropped, and the value at DC (all, kept)."""
    groups: dict[int, list[tuple[Fraction, sp.Expr]]] = {}
    for term in sp.Add.make_args(poly):
        k, rest = _split_s(term, s)
        groups.setdefault(k, []).append((_value(rest, point), term))
    kept: list[sp.Expr] = []
    worst, dropped = Fraction(0), 0
    at_dc = (Fraction(0), Fraction(0))  # the s**0 part, all of it and as kept
    for power, group in groups.items():
        group.sort(key=lambda vt: -abs(vt[0]))
        tail = sum((abs(v) for v, _ in group), Fraction(0))
        total, n = Fraction(0), 0
        for v, _ in group:
            total, tail, n = total + v, tail - abs(v), n + 1
            if tail <= eta * abs(total):
                break
        kept += [t for _, t in group[:n]]
        dropped += len(group) - n
        if tail:
            worst = max(worst, tail / abs(total))
        if power == 0:
            at_dc = (sum((v for v, _ in group), Fraction(0)), total)
    return sp.Add(*kept), worst, len(kept), dropped, at_dc


def _split_s(term: sp.Expr, s: sp.Symbol) -> tuple[int, sp.Expr]:
    """``term = rest·s**k``."""
    k = 0
    rest = []
    for f in sp.Mul.make_args(term):
        base, exp = f.as_base_exp()
        if base == s:
            k += int(exp)
        else:
            rest.append(f)
    return k, sp.Mul(*rest)


def _value(term: sp.Expr, point: Mapping[sp.Symbol, Fraction]) -> Fraction:
    """A monomial's exact value at ``point``."""
    out = Fraction(1)
    for f in sp.Mul.make_args(term):
        base, exp = f.as_base_exp()
        if base.is_Symbol and not exp.is_Integer:
            raise InvalidValueError(
                f"dominant terms: the monomial {term} has a power that is not a whole number; "
                "they are taken of rational functions of the symbols only"
            )
        if base.is_Symbol:
            out *= point[base] ** int(exp)
        else:
            out *= _exact(f, "a number")
    return out


def _bound(eps: list[tuple[Fraction, int]]) -> Fraction:
    """The worst ``|H̃/H − 1|`` and ``|H/H̃ − 1|`` over ``|t_i| ≤ ε_i`` (corners, exactly)."""
    if all(e == 0 for e, _ in eps):
        return Fraction(0)
    worst = Fraction(0)
    for sign in (1, -1):  # H/H̃ = Π (1 + t_i)^e_i; its extremes at the corners
        for ratio_sign in (1, -1):  # the ratio and its inverse
            r = Fraction(1)
            for e, power in eps:
                t = e * sign * (1 if power > 0 else -1)  # push every factor the same way
                r *= (1 + t) ** (power * ratio_sign)
            worst = max(worst, abs(r - 1))
    return worst


def _round_up(x: Fraction) -> float:
    f = float(x)
    return f if Fraction(f) >= x else math.nextafter(f, math.inf)


def _count(expr: sp.Expr, s: sp.Symbol) -> int:
    """Monomials in the polynomial parts of ``expr`` as it stands."""
    if expr.is_number:
        return 1
    _, parts = _parts(expr, s, 10**12, "")
    return sum(len(sp.Add.make_args(p)) for p, _ in parts) or 1
