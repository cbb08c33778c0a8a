"""Read values and small expressions written as text, by a whitelist parser.

Text never reaches :func:`sympy.sympify`, ``eval`` or ``exec``: a hand-written
tokenizer and recursive-descent parser build exact SymPy objects directly, and
every other input is a :class:`~opsym.ValueSyntaxError` that names the field,
the text and the column, and says what was expected.

What a value may contain
------------------------
* Numbers: ``10``, ``-3.3``, ``.5``, ``1e-9`` (exponent ``|e| <= 99``).
* SI prefixes, case-sensitive, after the number or inside it in the trade's
  notation (``4k7`` is 4.7k): ``y z a f p n u µ μ m k M G T`` (``m`` is milli,
  ``M`` mega; ``K`` is read as kilo too, as the trade often writes it). ``R``
  marks the decimal point of a plain value (``2R2`` is 2.2, ``100R`` is 100).
  SPICE's ``meg`` is read as mega in any case (``1meg``, ``1Meg``, ``1MEG``,
  ``10 megohm``), as in the scale factors of the SPICE3 user manual. SPICE's
  ``mil`` (a thousandth of an inch, easily mistaken for milli) is refused.
  Unlike SPICE, prefixes are case-sensitive: ``1M`` is mega, ``1m`` milli.
* A unit after the number or its prefix, with or without a space:
  ``Ω``/``ohm``/``ohms``, ``V``, ``A``, ``F``, ``H``, ``Hz``; and the ratios ``%``,
  ``ppm`` and ``dB`` (voltage ratio, ``20·log10``; a value in dB must stand
  alone, as in ``-3 dB`` or ``100 dB``). Drifts add ``/°C`` (or ``/K``, the
  same step) to ``V``, ``A``, ``%`` or ``ppm``: ``5 µV/°C``, ``25 ppm/K``.
  Noise densities add ``/√Hz`` (or ``/rtHz``) to ``V`` or ``A``:
  ``9 nV/√Hz``, ``2 fA/rtHz``.
  ``%`` and ``ppm`` scale the number (``1%`` is 1/100); the other units are
  labels, checked against the field's unit when the caller gives one.
* Range: a number's exponent is at most 99 and every number, written or
  computed, lies between 1e-150 and 1e150 in magnitude (or is zero), a value in
  dB between -3000 and 3000 (the same range as a ratio); anything else is a
  :class:`~opsym.ValueRangeError`, so a float made from a value is always
  finite and never rounds to zero.
* Any word that is not a prefix or unit above is an error, never dropped.
* Names given by the caller (``R1``, ``U1.Vos``, ``U1.Ib+``), the operators
  ``+ - * /`` with ``− × · ÷`` as Unicode spellings, ``‖`` or ``||`` for
  parallel (``a‖b = a·b/(a+b)``), unary signs and parentheses.

Precedence, loosest first: ``+ -``; then ``‖``; then ``* /``; then unary
signs. So ``R1 + R2‖R3`` is ``R1 + (R2‖R3)`` and ``2*R1‖R2`` is
``(2·R1)‖R2``. There is no power operator and no implicit multiplication:
write ``2*R1``, not ``2R1`` (which is 2.1 in the R notation).

Examples
--------
>>> import sympy as sp
>>> from opsym.values import parse_value
>>> parse_value("4.7n", where="C1")
47/10000000000
>>> parse_value("4k7", where="R1"), parse_value("1.5 MΩ", where="R2")
(4700, 1500000)
>>> R1, R2 = sp.symbols("R1 R2", positive=True)
>>> parse_value("R1 ‖ R2", where="R3", names={"R1": R1, "R2": R2})
R1*R2/(R1 + R2)
>>> parse_value("__import__('os')", where="R9")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.ValueSyntaxError: R9: cannot read ...: unexpected character "'" at column 12; ...
>>> parse_value("R1.__class__", where="R9", names={"R1": R1})  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.ValueSyntaxError: R9: ...: unknown name 'R1.__class__' at column 1; ...
"""

from __future__ import annotations

import difflib
import math
from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction
from numbers import Real
from typing import Any

import sympy as sp

from .errors import InvalidValueError, ValueRangeError, ValueSyntaxError

__all__ = [
    "MAX_DEPTH",
    "MAX_EXPONENT",
    "MAX_LENGTH",
    "PREFIXES",
    "UNITS",
    "parse_value",
    "to_exact",
]

#: Longest text accepted, in characters.
MAX_LENGTH = 500
#: Deepest nesting of parentheses accepted.
MAX_DEPTH = 40
_MAX_EXPONENT = 99
#: Magnitudes outside 10**-_MAX_MAGNITUDE .. 10**_MAX_MAGNITUDE are refused (floats stay finite).
_MAX_MAGNITUDE = 150
#: The same limit, public: every layer that checks a number uses it.
MAX_EXPONENT = _MAX_MAGNITUDE
#: A value in dB beyond ±_MAX_DB is refused: its ratio keeps to the same range.
_MAX_DB = 20 * _MAX_MAGNITUDE
_HUGE = Fraction(10) ** _MAX_MAGNITUDE
_TINY = 1 / _HUGE

#: SI prefixes and their powers of ten (both micro signs are accepted).
PREFIXES: dict[str, int] = {
    "y": -24,
    "z": -21,
    "a": -18,
    "f": -15,
    "p": -12,
    "n": -9,
    "u": -6,
    "µ": -6,  # MICRO SIGN U+00B5
    "μ": -6,  # GREEK SMALL LETTER MU U+03BC
    "m": -3,
    "k": 3,
    "K": 3,  # the trade's common spelling of kilo (10K); opsym has no kelvin unit
    "M": 6,
    "G": 9,
    "T": 12,
}

#: Unit spellings and the canonical unit each stands for.
UNITS: dict[str, str] = {
    "Ω": "Ω",  # OHM SIGN U+2126 is normalised to this letter below
    "ohm": "Ω",
    "ohms": "Ω",
    "Ohm": "Ω",
    "V": "V",
    "A": "A",
    "F": "F",
    "Hz": "Hz",
    "H": "H",
    "%": "ratio",
    "ppm": "ratio",
    "dB": "ratio",
}
UNITS.update({f"{u}/°C": f"{c}/°C" for u, c in list(UNITS.items()) if u in ("V", "A", "%", "ppm")})
UNITS.update({f"{u}{per}": f"{u}/√Hz" for u in ("V", "A") for per in ("/√Hz", "/rtHz")})
_PER_DEGREE_BASES = frozenset({"V", "A", "%", "ppm"})
_PER_ROOT_HZ = ("/√Hz", "/rtHz")  # noise densities: V/√Hz and A/√Hz
_SCALE = {"%": Fraction(1, 100), "ppm": Fraction(1, 10**6)}
_UNPREFIXED = {"%", "ppm", "dB"}

#: SPICE words opsym refuses, with what to write instead.
_SPICE_WORDS = {
    "mil": "m for milli, e.g. 1m ('mil' is SPICE's thousandth of an inch, not read here)",
    "mils": "m for milli, e.g. 1m ('mils' are thousandths of an inch, not read here)",
    "mega": "M or meg for mega, e.g. 1.5M or 1.5meg",
}

_DIGITS = frozenset("0123456789")
_LETTERS = frozenset("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ")
_NAME_START = _LETTERS | {"_"}
_NAME_CHARS = _NAME_START | _DIGITS
_WORD_CHARS = _LETTERS | {"µ", "μ", "Ω", "%"}
_SPACE = frozenset(" \t\u00a0")
_OPERATORS = {
    "+": "+",
    "-": "-",
    "−": "-",  # MINUS SIGN
    "*": "*",
    "×": "*",
    "·": "*",
    "⋅": "*",
    "/": "/",
    "÷": "/",
    "‖": "||",
    "(": "(",
    ")": ")",
}
_RANGE = f"a magnitude between 1e-{_MAX_MAGNITUDE} and 1e{_MAX_MAGNITUDE}, or 0"
_EXPECT_NUMBER = "a number such as 10k, 4.7n or 1e-9"
_EXPECT_OPERAND = "a number (10k, 4.7n), a name or '('"
_EXPECT_OPERATOR = "an operator (+ - * / ‖) or the end"
_SUFFIXES = (
    "an SI prefix (y z a f p n u µ m k M G T) and/or a unit (Ω, V, A, F, H, Hz, %, ppm, dB)"
)


@dataclass(frozen=True)
class _Token:
    kind: str  # "num", "name", "op", "end"
    text: str
    pos: int  # 0-based column of the first character
    value: Fraction | None = None
    unit: str | None = None  # the spelling written, e.g. "kΩ" gives "Ω"


def _in_range(number: sp.Rational) -> bool:
    return _TINY <= abs(Fraction(int(number.p), int(number.q))) <= _HUGE


class _Reader:
    """Tokenizer and parser for one text; raises ValueSyntaxError only."""

    def __init__(
        self, text: str, where: str, names: Mapping[str, sp.Expr] | None, unit: str | None
    ) -> None:
        self.text = text.replace("\u2126", "Ω")  # OHM SIGN -> GREEK CAPITAL OMEGA
        self.where = where
        self.names = names
        self.unit = unit
        self.tokens: list[_Token] = []
        self.i = 0
        self.depth = 0

    # -- errors ----------------------------------------------------------------------

    def fail(
        self,
        problem: str,
        pos: int | None,
        expected: str | None,
        kind: type[ValueSyntaxError] = ValueSyntaxError,
    ) -> ValueSyntaxError:
        at = "" if pos is None else f" at column {pos + 1}"
        text = self.text if len(self.text) <= 60 else self.text[:57] + "..."
        msg = f"{self.where}: cannot read {text!r}: {problem}{at}"
        if expected:
            msg += f"; expected {expected}"
        err = kind(msg)
        err.where, err.text, err.position = self.where, self.text, pos  # type: ignore[attr-defined]
        return err

    # -- tokenizer -------------------------------------------------------------------

    def tokenize(self) -> None:
        s, n, i = self.text, len(self.text), 0
        while i < n:
            ch = s[i]
            if ch in _SPACE:
                i += 1
            elif ch in _DIGITS or (ch == "." and i + 1 < n and s[i + 1] in _DIGITS):
                i = self.number(i)
            elif ch in _NAME_START:
                i = self.name(i)
            elif ch == "|" and s.startswith("||", i):
                self.tokens.append(_Token("op", "||", i))
                i += 2
            elif ch in _OPERATORS:
                self.tokens.append(_Token("op", _OPERATORS[ch], i))
                i += 1
            else:
                shown = repr(ch) if ch.isprintable() else f"U+{ord(ch):04X}"
                raise self.fail(f"unexpected character {shown}", i, _EXPECT_OPERAND)
        self.tokens.append(_Token("end", "", n))

    def digits(self, i: int) -> int:
        while i < len(self.text) and self.text[i] in _DIGITS:
            i += 1
        return i

    def number(self, start: int) -> int:
        s, n = self.text, len(self.text)
        i = self.digits(start)
        whole, frac, prefix = s[start:i], "", None
        if i < n and s[i] == ".":
            j = self.digits(i + 1)
            frac, i = s[i + 1 : j], j
        elif i + 1 < n and (s[i] in PREFIXES or s[i] == "R") and s[i + 1] in _DIGITS:
            # the trade's notation: 4k7 = 4.7k, 2R2 = 2.2
            prefix = s[i]
            j = self.digits(i + 1)
            if prefix == "R" and self.names is not None and s[i:j] in self.names:
                raise self.fail(
                    f"{s[start:j]!r} could be the number {whole}.{s[i + 1 : j]} "
                    f"or {whole} times {s[i:j]}",
                    start,
                    f"{whole}*{s[i:j]} for the product or {whole}.{s[i + 1 : j]} for the number",
                )
            frac, i = s[i + 1 : j], j
            if j < n and s[j] == ".":
                raise self.fail("a number in the 4k7 notation has no decimal point", j, None)
        if i < n and s[i] == ".":
            raise self.fail("a second decimal point", i, None)
        value = Fraction(int(whole or "0") * 10 ** len(frac) + int(frac or "0"), 10 ** len(frac))
        exponent = 0
        if i < n and s[i] in "eE" and prefix is None:
            j = i + 1
            if j < n and s[j] in "+-":
                j += 1
            if j < n and s[j] in _DIGITS:
                k = self.digits(j)
                if k - j > 3 or abs(int(s[i + 1 : k])) > _MAX_EXPONENT:
                    problem = f"exponent {s[i + 1 : k]} is too large"
                    raise self.fail(problem, i, "|exponent| <= 99", ValueRangeError)
                exponent, i = int(s[i + 1 : k]), k
            else:
                raise self.fail("an exponent needs digits", i, "e.g. 1e-9 or 2.5E3")
        unit = None
        # the suffix word: prefix and/or unit, attached or after spaces
        j = i
        while j < n and s[j] in _SPACE:
            j += 1
        k = j
        while k < n and s[k] in _WORD_CHARS:
            k += 1
        word = s[j:k]
        name_follows = k < n and (s[k] in _NAME_CHARS or s[k] == ".")
        if word and not name_follows:
            word_prefix, unit = self.suffix(word, j, has_prefix=prefix is not None)
            if word_prefix is not None:
                if exponent:
                    raise self.fail(
                        "give either an exponent or an SI prefix, not both",
                        j,
                        "e.g. 4.7n or 4.7e-9",
                    )
                prefix = word_prefix
            i = k
            if unit in _PER_DEGREE_BASES:
                for per in ("/°C", "/K"):
                    end = i + len(per)
                    if s.startswith(per, i) and not (end < n and s[end] in _NAME_CHARS):
                        unit, i = unit + "/°C", end
                        break
            if unit in ("V", "A"):
                for per in _PER_ROOT_HZ:
                    end = i + len(per)
                    if s.startswith(per, i) and not (end < n and s[end] in _NAME_CHARS):
                        unit, i = unit + per, end
                        break
        elif word and j == i:
            raise self.fail(f"unknown prefix or unit {s[j : k + 1]!r}", j, _SUFFIXES)
        if prefix is not None and prefix != "R":
            exponent += PREFIXES[prefix]
        value *= Fraction(10) ** exponent
        if unit is not None and unit.split("/")[0] in _SCALE:
            value *= _SCALE[unit.split("/")[0]]
        if value and not _TINY <= value <= _HUGE:
            raise self.fail("the number is out of range", start, _RANGE, ValueRangeError)
        if unit == "dB" and value > _MAX_DB:
            expected = f"a value between -{_MAX_DB} and {_MAX_DB} dB"
            raise self.fail("the value in dB is out of range", start, expected, ValueRangeError)
        self.tokens.append(_Token("num", s[start:i].strip(), start, value, unit))
        return i

    def suffix(self, word: str, pos: int, has_prefix: bool) -> tuple[str | None, str | None]:
        """Split a word after a number into (prefix, unit); either may be None."""
        if word in UNITS:
            if has_prefix and word in _UNPREFIXED:
                raise self.fail(f"{word!r} takes no prefix", pos, None)
            return None, word
        if word == "R" and not has_prefix:
            return "R", None
        if not has_prefix:
            if word in PREFIXES:
                return word, None
            if word[0] in PREFIXES and word[1:] in UNITS and word[1:] not in _UNPREFIXED:
                return word[0], word[1:]
            if word[:3].lower() == "meg":  # SPICE's mega: 1meg, 1Meg, 10 megohm
                rest = word[3:]
                if not rest or (rest in UNITS and rest not in _UNPREFIXED):
                    return "M", rest or None
        hint = _SUFFIXES
        if word.lower() in _SPICE_WORDS:
            hint = _SPICE_WORDS[word.lower()]
        elif word[:3].lower() == "meg":
            hint = "meg (or M) with a unit such as Ω or ohm, e.g. 10 megohm or 10 MΩ"
        elif has_prefix:
            hint = "a unit (Ω, V, A, F, Hz) — the number already has its prefix"
        raise self.fail(f"unknown prefix or unit {word!r}", pos, hint)

    def name(self, start: int) -> int:
        s, n = self.text, len(self.text)
        i = start
        while i < n and s[i] in _NAME_CHARS:
            i += 1
        if i < n and s[i] == ".":
            j = i + 1
            while j < n and s[j] in _NAME_CHARS:
                j += 1
            if j == i + 1:
                raise self.fail("a '.' must be followed by a parameter name", i, "e.g. U1.Vos")
            i = j
            # U1.Ib+ and U1.Ib-: an attached sign belongs to the name if that name exists
            if i < n and s[i] in "+-−" and self.names is not None:
                signed = s[start:i] + ("-" if s[i] == "−" else s[i])
                if signed in self.names:
                    self.tokens.append(_Token("name", signed, start))
                    return i + 1
        self.tokens.append(_Token("name", s[start:i], start))
        return i

    # -- parser ----------------------------------------------------------------------

    def peek(self) -> _Token:
        return self.tokens[self.i]

    def take(self) -> _Token:
        tok = self.tokens[self.i]
        self.i += 1
        return tok

    def parse(self) -> sp.Expr:
        self.tokenize()
        if len(self.tokens) == 1:
            raise self.fail("the text is empty", None, _EXPECT_NUMBER)
        db = [t for t in self.tokens if t.unit == "dB"]
        if db:
            return self.decibels(db[0])
        result = self.sum()
        tok = self.peek()
        if tok.kind != "end":
            if tok.kind in ("num", "name") or tok.text == "(":
                raise self.fail(
                    f"{tok.text!r} follows an operand without an operator "
                    "(there is no implicit multiplication: write 2*R1)",
                    tok.pos,
                    _EXPECT_OPERATOR,
                )
            raise self.fail(f"unexpected {tok.text!r}", tok.pos, _EXPECT_OPERATOR)
        if result.has(sp.nan, sp.zoo, sp.oo, -sp.oo):
            raise self.fail("the value is not finite", None, "a finite value", ValueRangeError)
        if result.is_Rational and result and not _in_range(result):
            raise self.fail("the value is out of range", None, _RANGE, ValueRangeError)
        return result

    def decibels(self, tok: _Token) -> sp.Expr:
        kinds = [t.kind for t in self.tokens]
        signs = 0
        while self.tokens[signs].kind == "op" and self.tokens[signs].text in "+-":
            signs += 1
        if kinds[signs:] != ["num", "end"] or signs > 1:
            raise self.fail("a value in dB must stand alone", tok.pos, "e.g. '100 dB' or '-3 dB'")
        self.check_unit(tok)
        assert tok.value is not None
        value = -tok.value if signs and self.tokens[0].text == "-" else tok.value
        return sp.Pow(10, sp.Rational(value.numerator, value.denominator * 20))

    def sum(self) -> sp.Expr:
        left = self.parallel()
        while self.peek().text in ("+", "-") and self.peek().kind == "op":
            op = self.take().text
            right = self.parallel()
            left = sp.Add(left, right if op == "+" else sp.Mul(-1, right))
        return left

    def parallel(self) -> sp.Expr:
        left = self.product()
        while self.peek().kind == "op" and self.peek().text == "||":
            tok = self.take()
            right = self.product()
            total = sp.Add(left, right)
            if total.is_zero:
                raise self.fail("the parallel combination divides by zero", tok.pos, None)
            left = sp.Mul(left, right, sp.Pow(total, -1))
        return left

    def product(self) -> sp.Expr:
        left = self.unary()
        while self.peek().kind == "op" and self.peek().text in ("*", "/"):
            tok = self.take()
            right = self.unary()
            if tok.text == "*":
                left = sp.Mul(left, right)
            else:
                if right.is_zero:
                    raise self.fail("division by zero", tok.pos, "a non-zero divisor")
                left = sp.Mul(left, sp.Pow(right, -1))
        return left

    def unary(self) -> sp.Expr:
        negative = False
        while self.peek().kind == "op" and self.peek().text in ("+", "-"):
            if self.take().text == "-":
                negative = not negative
        value = self.primary()
        return sp.Mul(-1, value) if negative else value

    def primary(self) -> sp.Expr:
        tok = self.take()
        if tok.kind == "num":
            self.check_unit(tok)
            assert tok.value is not None
            return sp.Rational(tok.value.numerator, tok.value.denominator)
        if tok.kind == "name":
            return self.lookup(tok)
        if tok.kind == "op" and tok.text == "(":
            self.depth += 1
            if self.depth > MAX_DEPTH:
                raise self.fail("parentheses are nested too deeply", tok.pos, None)
            inner = self.sum()
            close = self.take()
            if not (close.kind == "op" and close.text == ")"):
                raise self.fail(f"the '(' at column {tok.pos + 1} is not closed", close.pos, "')'")
            self.depth -= 1
            return inner
        if tok.kind == "end":
            raise self.fail("the text ends too early", None, _EXPECT_OPERAND)
        raise self.fail(f"unexpected {tok.text!r}", tok.pos, _EXPECT_OPERAND)

    def check_unit(self, tok: _Token) -> None:
        if tok.unit is None or self.unit is None:
            return
        got = UNITS[tok.unit]
        if got != self.unit:
            err = self.fail(
                f"the unit {tok.unit!r} does not fit this field",
                tok.pos,
                f"a value in {self.unit}"
                if "ratio" not in self.unit
                else "a ratio (%, ppm or dB)" + self.unit[5:],
            )
            err.unit = tok.unit  # type: ignore[attr-defined]
            raise err

    def lookup(self, tok: _Token) -> sp.Expr:
        if self.names is None:
            raise self.fail(
                f"names are not allowed here (found {tok.text!r} at column {tok.pos + 1})",
                None,
                _EXPECT_NUMBER,
            )
        if tok.text in self.names:
            value = self.names[tok.text]
            if not isinstance(value, sp.Expr):  # a caller's mistake, reported as such
                raise self.fail(f"the name {tok.text!r} has no usable value", tok.pos, None)
            return value
        close = difflib.get_close_matches(tok.text, list(self.names), n=3)
        known = sorted(self.names)
        if close:
            hint = "a name such as " + " or ".join(close)
        elif known:
            hint = "a name such as " + ", ".join(known[:10])
            hint += " …" if len(known) > 10 else ""
        else:
            hint = "a number; this field knows no names"
        raise self.fail(f"unknown name {tok.text!r}", tok.pos, hint)


def parse_value(
    text: str,
    *,
    where: str,
    names: Mapping[str, sp.Expr] | None = None,
    unit: str | None = None,
) -> sp.Expr:
    """Read a value or expression from text, exactly, without executing anything.

    Parameters
    ----------
    text : str
        The value, e.g. ``"10k"``, ``"4.7 nF"``, ``"2k2"``, ``"1/3"``,
        ``"R1*R2/(R1+R2)"`` or ``"R1 ‖ R2"``.
    where : str
        Names the field in messages, e.g. ``"amp.toml [resistors.R1] value"``.
    names : mapping of str to sympy.Expr, optional
        The names the text may use and what each stands for; without it only
        numbers are accepted.
    unit : str, optional
        The field's unit, one of ``"Ω"``, ``"V"``, ``"A"``, ``"F"``, ``"H"``,
        ``"Hz"``, ``"ratio"``, ``"V/°C"``, ``"A/°C"``, ``"ratio/°C"``,
        ``"V/√Hz"``, ``"A/√Hz"``: a unit written in the text must match it
        (``"ratio"`` accepts ``%``, ``ppm`` and ``dB``). Without it any unit is
        accepted.

    Returns
    -------
    sympy.Expr
        Exact: numbers are :class:`sympy.Rational` (``"4.7n"`` is 47/10**10).

    Raises
    ------
    ValueSyntaxError
        For every text that is not a value; the message names ``where``, the
        text, the column and what was expected. Nothing else is ever raised.

    Examples
    --------
    >>> parse_value("100 nA", where="Iin")
    1/10000000
    >>> parse_value("-3.3", where="Vref"), parse_value("1/3", where="k")
    (-33/10, 1/3)
    >>> parse_value("1%", where="tolerance"), parse_value("100 dB", where="CMRR")
    (1/100, 100000)
    >>> parse_value("9 nV/√Hz", where="U1 en", unit="V/√Hz")
    9/1000000000
    >>> parse_value("10 nF", where="R1", unit="Ω")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    opsym.errors.ValueSyntaxError: R1: ...: the unit 'F' does not fit this field ...
    """
    where = str(where)
    if not isinstance(text, str):
        raise ValueSyntaxError(
            f"{where}: expected the value as text such as '10k', not a {type(text).__name__}"
        )
    if len(text) > MAX_LENGTH:
        raise ValueSyntaxError(
            f"{where}: the value is {len(text)} characters long; at most {MAX_LENGTH} are read"
        )
    return _Reader(text, where, names, unit).parse()


def to_exact(value: Any, where: str, *, unit: str | None = None) -> sp.Expr:
    """Turn a user number or expression into an exact SymPy value.

    Floats become the exact rational of their shortest decimal form
    (``0.1`` → ``1/10``), so the algebra stays exact; text goes through the
    whitelist value parser :func:`parse_value` (``"10k"``),
    the one reader of values in opsym, which checks a unit written in the
    text against ``unit`` when given. ``where`` names the field for messages.

    Examples
    --------
    >>> to_exact(4.7e-9, "C1")
    47/10000000000
    >>> to_exact("10k", "R1")
    10000
    """
    if isinstance(value, bool) or value is None:
        raise InvalidValueError(f"{where}: {value!r} is not a value; give a number or expression")
    if isinstance(value, str):
        return parse_value(value, where=where, unit=unit)  # the whitelist parser
    if isinstance(value, sp.Basic):
        if not isinstance(value, sp.Expr):
            raise InvalidValueError(f"{where}: {value!r} is not an expression")
        if value.has(sp.nan, sp.zoo, sp.oo, -sp.oo):
            raise InvalidValueError(f"{where}: value {value} is not finite; give a finite value")
        if isinstance(value, sp.Float):
            return _exact_float(float(value), where)
        return value
    if isinstance(value, (int, Fraction)):
        q = Fraction(value)
        if q and not _TINY <= abs(q) <= _HUGE:  # before SymPy reads a huge integer as text
            raise InvalidValueError(f"{where}: the number is out of range; give {_RANGE}")
        return sp.Rational(q.numerator, q.denominator)
    if isinstance(value, Real):  # float, numpy scalars
        return _exact_float(float(value), where)
    raise InvalidValueError(
        f"{where}: cannot use a {type(value).__name__} as a value; "
        "give a number, a SymPy expression or text such as '10k'"
    )


def _exact_float(x: float, where: str) -> sp.Rational:
    """The exact rational of a float's shortest decimal form, finite and in range."""
    if not math.isfinite(x):
        raise InvalidValueError(f"{where}: value {x} is not finite; give a finite number")
    exact = sp.Rational(repr(x))
    if exact and not _in_range(exact):
        raise InvalidValueError(f"{where}: {x!r} is out of range; give {_RANGE}")
    return exact
