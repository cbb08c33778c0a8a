"""Write exact values and expressions as text that :func:`~opsym.values.parse_value` reads.

The inverse of the value parser, used when a design file is written: numbers
get SI prefixes (``4.7n``), other rationals are fractions (``1/3``), powers of
ten with a rational exponent are written in dB, and expressions use only
``+ - * /`` and names.

Examples
--------
>>> import sympy as sp
>>> format_number(sp.Rational(47, 10**10))
'4.7n'
"""

from __future__ import annotations

from fractions import Fraction

import sympy as sp

from ..errors import InvalidValueError

__all__ = ["format_number", "format_value", "plain_decimal"]

_WRITE_PREFIX = {-24: "y", -21: "z", -18: "a", -15: "f", -12: "p", -9: "n", -6: "u",
                 -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}  # fmt: skip


def format_number(value: sp.Rational | int | Fraction) -> str:
    """Write an exact rational as text that :func:`parse_value` reads back exactly.

    Finite decimals get an SI prefix (``4.7n``); other rationals are written
    as a fraction (``1/3``).

    Examples
    --------
    >>> import sympy as sp
    >>> format_number(sp.Rational(47, 10**10)), format_number(sp.Integer(2200))
    ('4.7n', '2.2k')
    >>> format_number(sp.Rational(-1, 3)), format_number(0), format_number(sp.Rational(1, 8))
    ('-1/3', '0', '125m')
    """
    if isinstance(value, sp.Rational):
        f = Fraction(int(value.p), int(value.q))
    else:
        f = Fraction(value)
    if f == 0:
        return "0"
    sign, f = ("-" if f < 0 else ""), abs(f)
    q = f.denominator
    twos = fives = 0
    while q % 2 == 0:
        q //= 2
        twos += 1
    while q % 5 == 0:
        q //= 5
        fives += 1
    if q != 1:
        return f"{sign}{f.numerator}/{f.denominator}"
    # f = m * 10**-d exactly, with d digits after the point
    d = max(twos, fives)
    m = f.numerator * 10**d // f.denominator
    while d > 0 and m % 10 == 0:
        m //= 10
        d -= 1
    while d <= 0 and m % 10 == 0 and m:
        m //= 10
        d -= 1
    digits = str(m)
    magnitude = len(digits) - 1 - d  # power of ten of the leading digit
    e3 = 3 * (magnitude // 3)
    shift = -d - e3  # mantissa = m * 10**shift
    if shift >= 0:
        mantissa = digits + "0" * shift
    else:
        cut = len(digits) + shift
        mantissa = digits[:cut] + "." + digits[cut:]
    if e3 in _WRITE_PREFIX:
        return f"{sign}{mantissa}{_WRITE_PREFIX[e3]}"
    return f"{sign}{mantissa}e{e3}"


def format_value(expr: sp.Expr | int | Fraction) -> str:
    """Write a value or expression as text that :func:`parse_value` reads back equal.

    Numbers get SI prefixes, products and quotients are written with ``*`` and
    one ``/``, and a pure power of ten with a rational exponent (a value given
    in dB) is written in dB.

    Raises
    ------
    InvalidValueError
        For expressions the value syntax cannot write (powers of symbols other
        than whole ones, roots, functions).

    Examples
    --------
    >>> import sympy as sp
    >>> R1, R2 = sp.symbols("R1 R2", positive=True)
    >>> format_value(R1 * R2 / (R1 + R2))
    'R1*R2/(R1 + R2)'
    >>> format_value(-2 * R1 / 3 + sp.Rational(47, 10))
    '4.7 - 2*R1/3'
    >>> format_value(10000 * sp.sqrt(10))
    '90 dB'
    """
    if isinstance(expr, (int, Fraction)) and not isinstance(expr, bool):
        expr = sp.Rational(expr.numerator, expr.denominator)
    if not isinstance(expr, sp.Expr):
        raise InvalidValueError(f"cannot write {expr!r} as a value; give a SymPy expression")
    if expr.is_number and not expr.is_Rational:
        return _decibels(expr)
    return _write(expr, 0)


def _write(e: sp.Expr, parent: int) -> str:
    """``parent``: 0 inside a sum or at the top, 1 as a factor of a product."""
    if isinstance(e, sp.Float):
        e = sp.Rational(repr(float(e)))
    if e.is_Rational:
        text = format_number(e)
        return f"({text})" if parent and (e.is_negative or "/" in text) else text
    if isinstance(e, sp.Symbol):
        return e.name
    if isinstance(e, sp.Add):
        terms = list(e.as_ordered_terms())
        parts = [_write(terms[0], 0)]
        for t in terms[1:]:
            if t.could_extract_minus_sign():
                parts.append(" - " + _write(-t, 0))
            else:
                parts.append(" + " + _write(t, 0))
        text = "".join(parts)
        return f"({text})" if parent else text
    if isinstance(e, (sp.Mul, sp.Pow)):
        coeff, rest = e.as_coeff_Mul()
        sign = ""
        if coeff.is_negative:
            sign, coeff = "-", -coeff
        num: list[str] = []
        den: list[str] = []
        if coeff != 1:
            c = sp.Rational(coeff)
            if c.p != 1 or c.q == 1:
                num.append(format_number(sp.Integer(c.p)) if c.q != 1 else format_number(c))
            if c.q != 1:
                den.append(format_number(sp.Integer(c.q)))
        for f in sp.Mul.make_args(rest):
            base, exp = f.as_base_exp()
            if exp.is_Integer and not (isinstance(base, sp.Symbol) and exp == 1):
                n = int(exp)
                target = num if n > 0 else den
                target.extend([_write(base, 1)] * abs(n))
            elif exp == 1:
                num.append(_write(base, 1))
            else:
                raise InvalidValueError(
                    f"cannot write {e} in opsym's value syntax (it has no powers or roots)"
                )
        text = "*".join(num) or "1"
        if den:
            text += "/" + (den[0] if len(den) == 1 else "(" + "*".join(den) + ")")
        text = sign + text
        return f"({text})" if parent and (sign or den) else text
    raise InvalidValueError(
        f"cannot write {e} in opsym's value syntax (numbers, names, + - * / only)"
    )


def _decibels(e: sp.Expr) -> str:
    """Write a positive power of ten with a rational exponent as ``N dB``."""
    if e.is_positive:
        for n in range(1, 41):
            r = sp.Pow(e, n)
            if r.is_Rational:
                f = Fraction(int(r.p), int(r.q))
                k = 0
                while f.denominator == 1 and f.numerator % 10 == 0:
                    f, k = f / 10, k + 1
                while f.numerator == 1 and f.denominator % 10 == 0:
                    f, k = f * 10, k - 1
                db = Fraction(20 * k, n)
                q = db.denominator
                while q % 2 == 0:
                    q //= 2
                while q % 5 == 0:
                    q //= 5
                if f == 1 and q == 1:
                    return f"{plain_decimal(db)} dB"
                break
    raise InvalidValueError(
        f"cannot write the number {e} in opsym's value syntax; give it as a rational"
    )


def plain_decimal(f: Fraction) -> str:
    """A finite decimal without SI prefix (dB values are not scaled)."""
    sign, f = ("-" if f < 0 else ""), abs(f)
    whole, rest = divmod(f.numerator, f.denominator)
    digits = ""
    while rest and len(digits) < 30:
        rest *= 10
        d, rest = divmod(rest, f.denominator)
        digits += str(d)
    return sign + str(whole) + ("." + digits if digits else "")
