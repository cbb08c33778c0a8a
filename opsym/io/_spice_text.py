"""SPICE netlist text: logical lines and SPICE's own numbers, read exactly.

SPICE's value rules differ from opsym's own value syntax and live here only:
scale factors are case-insensitive, so ``M`` and ``m`` are both milli and mega
is ``meg``; ``mil`` is 25.4e-6 (a thousandth of an inch); letters after a
number or its scale factor are ignored (``10kohm`` is 10k, ``1uF`` is 1u, and
``1F`` is one femto, as SPICE reads it). ``4k7`` is refused: SPICE reads 4k,
though 4.7k may be meant. The reader converts every number to an exact rational.

Examples
--------
>>> spice_number("4.7u", "C1"), spice_number("1MEG", "R1"), spice_number("10m", "R2")
(47/10000000, 1000000, 1/100)
>>> spice_number("10kohm", "R3"), spice_number("2mil", "W")
(10000, 127/2500000)
>>> [line.words for line in logical_lines("title\\nR1 a b 1k ; a note\\n+ ; more\\n")]
[['R1', 'a', 'b', '1k']]
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from dataclasses import dataclass, field
from fractions import Fraction

import sympy as sp

from ..errors import DesignFileError
from ..values import to_exact

__all__ = ["SpiceLine", "logical_lines", "spice_number"]

#: SPICE scale factors by their (lower-case) first letter; ``meg`` and ``mil`` first.
_SCALE = {
    "f": Fraction(1, 10**15),
    "p": Fraction(1, 10**12),
    "n": Fraction(1, 10**9),
    "u": Fraction(1, 10**6),
    "µ": Fraction(1, 10**6),  # MICRO SIGN, as some editors write it
    "μ": Fraction(1, 10**6),  # GREEK SMALL LETTER MU
    "m": Fraction(1, 10**3),
    "k": Fraction(10**3),
    "g": Fraction(10**9),
    "t": Fraction(10**12),
}
_MEG = Fraction(10**6)
_MIL = Fraction(254, 10**7)
_NUMBER = re.compile(r"^([+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]{1,3})?)([A-Za-zµμ]*)$")


@dataclass
class SpiceLine:
    """One logical line: its words, the first physical line's number and its text."""

    number: int
    text: str
    words: list[str] = field(default_factory=list)

    def where(self, filename: str) -> str:
        """``file: line 7 ('R1 a b 1k')`` for messages."""
        shown = self.text if len(self.text) <= 60 else self.text[:57] + "..."
        return f"{filename}: line {self.number} ({shown!r})"


def spice_number(word: str, where: str) -> sp.Expr:
    """Read one SPICE number exactly.

    Raises
    ------
    DesignFileError
        The word is not a number in SPICE's syntax, or is written like ``4k7``
        (SPICE reads 4k, ignoring the rest, though 4.7k may be meant).
    """
    m = _NUMBER.match(word)
    split = re.match(r"^[0-9]+([A-Za-z]+)[0-9]+$", word)
    if m is None and split is not None:
        raise DesignFileError(
            f"{where}: {word!r} is ambiguous: SPICE ignores what follows the scale factor and "
            f"reads {word[: split.end(1)]}, but it may mean a decimal point there; write e.g. "
            f"{word[: split.start(1)]}.{word[split.end(1) :]}{split.group(1)}"
        )
    if m is None:
        raise DesignFileError(
            f"{where}: {word!r} is not a SPICE number; write e.g. 10k, 4.7u, 1meg or 2.2e-9"
        )
    mantissa, letters = Fraction(m.group(1)), m.group(2).lower()
    scale = Fraction(1)
    if letters.startswith("meg"):
        scale = _MEG
    elif letters.startswith("mil"):
        scale = _MIL
    elif letters and letters[0] in _SCALE:
        scale = _SCALE[letters[0]]
    value = mantissa * scale
    if value and not Fraction(1, 10**150) <= abs(value) <= 10**150:
        raise DesignFileError(
            f"{where}: {word!r} is outside 1e-150 … 1e150 in magnitude; check the exponent"
        )
    return to_exact(value, where)


def logical_lines(text: str) -> Iterator[SpiceLine]:
    """The lines after the title: comments dropped, ``+`` continuations joined.

    ``*`` starts a comment line, ``;`` an inline comment. Each line keeps the
    number of its first physical line. Reading stops at ``.end``.
    """
    current: SpiceLine | None = None
    for number, raw in enumerate(text.splitlines()[1:], start=2):
        body = raw.split(";", 1)[0].strip()
        if not body or body.startswith("*"):
            continue
        if body.startswith("+"):
            if current is None:
                raise DesignFileError(
                    f"line {number}: a '+' continuation with no line before it; "
                    "join it to the line it continues"
                )
            current.words += _words(body[1:])
            current.text += " " + body
            continue
        if current is not None:
            yield current
        current = SpiceLine(number, body, _words(body))
        if current.words[0].lower() == ".end":
            return
    if current is not None:
        yield current


def _words(body: str) -> list[str]:
    """Split at blanks and commas; ``=`` stands as a word of its own."""
    tight = re.sub(r"\{\s*([^{}]*?)\s*\}", r"{\1}", body)  # { R1 } is {R1}
    spaced = tight.replace("=", " = ").replace(",", " ")
    return spaced.split()
