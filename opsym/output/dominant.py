r"""The note's symbolic terms when coefficients are too long to read: their dominant terms.

A coefficient with a polynomial part of more than :data:`LARGE_TERMS`
monomials is printed as its dominant terms at the nominal values
(:mod:`opsym.analyses.dominant`), marked ``≈`` with the bound on what was
dropped; the exact coefficient's size is stated below, and the budget's numbers
still use the exact form. Shorter coefficients print exactly as before.

Examples
--------
>>> import opsym
>>> c = opsym.Circuit()
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="0", minus="n", out="out", bias=False)
>>> dominant_blocks(c.analyze("out"), {}, {"R1": 1000, "R2": 2000}) is None  # short: as before
True
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import sympy as sp

from ..analyses.dominant import _percent_text, part_sizes
from ..errors import OpsymError
from .display import WIDTH, _source_lines
from .document import Block, Bullets, Math, Paragraph, Text
from .laplace import number_latex

__all__ = ["LARGE_TERMS", "dominant_blocks"]

#: A polynomial part longer than this many monomials is shown by its dominant terms.
LARGE_TERMS = 40
#: A dominant form longer than this many monomials is printed as its number instead.
SHOWN_TERMS = 40
#: The bound asked for on each coefficient shown by its dominant terms.
NOTE_ERROR = 0.01

_LEAD = (
    "Some exact coefficients are too long to print (their sizes are listed below; the "
    "numeric budget uses the exact forms). They are shown by their dominant terms at the "
    "nominal values: the terms dropped change each such coefficient by at most the share "
    "stated beside it, at those values."
)


_sizes = part_sizes


def _many(n: int) -> str:
    return f"{n} monomial" + ("" if n == 1 else "s")


def _dominant_lines(
    d: Any, source: str, table: Mapping[sp.Symbol, str], width: int
) -> tuple[list[str], str]:
    """One source's line(s) from its dominant form; its number where that is still long."""
    pct = d.percent.replace("%", r"\%")
    if max(_sizes(d.expression)) <= SHOWN_TERMS:
        part = _source_lines(d.expression, source, table, width)
        mark = r"\text{(dropped terms $\le$ " + pct + ")}"
        if len(part[-1]) + len(mark) + 8 <= width:
            part[-1] += r" \quad " + mark
        else:
            part.append(r"\qquad " + mark)
        there = "" if d.actual is None else f" (there it is {_percent_text(d.actual)})"
        return part, (f"its dominant form keeps {d.kept} and drops {d.dropped}, a relative "
                      f"error of at most {d.percent} {d.scope}{there}")
    value = float(d.exact.xreplace({k: sp.Rational(v.numerator, v.denominator)
                                    for k, v in d.values.items()}))  # fmt: skip
    sign = "-" if value < 0 else "+"
    number = number_latex(abs(value), digits=9)
    part = [rf"{sign} {number} \, {source} \quad \text{{(its value at the nominal values)}}"]
    return part, (f"its dominant terms within {100 * NOTE_ERROR:g} % are still {d.kept}, so "
                  "the note prints its exact value at the nominal values, to nine digits")


def dominant_blocks(
    result: Any, names: Mapping[sp.Symbol, str], nominal: Mapping[Any, Any] | None,
    width: int = WIDTH,
) -> tuple[Block, ...] | None:
    """The output with long coefficients as dominant terms; ``None`` when there are none
    or a value they need is missing (the note then prints as before)."""
    if not nominal:
        return None
    large = {}
    for info in result.sources:
        coeff = result.compact_coefficient(info.symbol)
        if coeff != 0 and max(_sizes(coeff)) > LARGE_TERMS:
            large[info.symbol] = coeff
    if not large:
        return None
    by_name = {str(k): v for k, v in nominal.items()}
    shown: dict[sp.Symbol, Any] = {}
    for sym, coeff in large.items():
        need = {x.name: by_name[x.name] for x in coeff.free_symbols if x.name in by_name}
        try:
            shown[sym] = result.dominant(sym, error=NOTE_ERROR, values=need)
        except (OpsymError, ZeroDivisionError):  # a value missing, a part too large, a
            # value that zeroes a part: print as before
            return None
    table = {**result.symbol_latex(), **names}
    lines: list[str] = []
    sizes: list[Text] = []
    for info in result.sources:
        sym = info.symbol
        d = shown.get(sym)
        coeff = d.expression if d is not None else result.coefficient(sym)
        if coeff == 0:
            continue
        source = table.get(sym, sp.latex(sym))
        if d is None:
            part = _source_lines(coeff, source, table, width)
        else:
            part, said = _dominant_lines(d, source, table, width)
            n, m = _sizes(large[sym])
            sizes.append(Text(f"{sym}: the exact coefficient has about {_many(n)} over "
                              f"{_many(m)}; {said}"))  # fmt: skip
        lines += part
    lines = lines or ["0"]
    first = lines[0][2:] if lines[0].startswith("+ ") else lines[0]
    head = result.output_latex() + r" \approx{} & " + first
    body = "\\begin{aligned}\n" + " \\\\\n".join([head, *(" & " + x for x in lines[1:])])
    return (Paragraph(_LEAD), Math(body + "\n\\end{aligned}"), Bullets(tuple(sizes)))
