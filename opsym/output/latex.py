r"""LaTeX for design notes: the superposed output, one source per line.

Symbols print as the trade writes them (``V_{\mathrm{OS},\mathrm{U1}}``).

Examples
--------
>>> import opsym
>>> c = opsym.Circuit()
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="0", minus="n", out="out", bias=False)
>>> print(c.analyze("out").latex())
\begin{aligned}
V_{\mathrm{out}} ={} & - \frac{R_{2}}{R_{1}}\, V_{\mathrm{in}} \\
 & + \left(1 + \frac{R_{2}}{R_{1}}\right)\, V_{\mathrm{OS},\mathrm{U1}}
\end{aligned}
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING

import sympy as sp

from ..analyses.present import trade_form

if TYPE_CHECKING:
    from ..analyses.result import Result

__all__ = ["expr_latex", "result_latex"]


def expr_latex(expr: sp.Expr, names: Mapping[sp.Symbol, str]) -> str:
    """LaTeX of ``expr`` with opsym's symbol names."""
    return sp.latex(expr, symbol_names=dict(names))


def result_latex(result: Result, names: Mapping[sp.Symbol, str] | None = None) -> str:
    """The output of ``result`` as an ``aligned`` block, zero terms left out."""
    table = {**result.symbol_latex(), **(names or {})}
    lines = []
    for info in result.sources:
        coeff = result.coefficient(info.symbol)
        if coeff == 0:
            continue
        sign = "+"
        if coeff.could_extract_minus_sign():
            sign, coeff = "-", -coeff
        shaped = trade_form(coeff)
        body = expr_latex(shaped, table)
        if isinstance(shaped, sp.Add):
            body = r"\left(" + body + r"\right)"
        source = table.get(info.symbol, sp.latex(info.symbol))
        term = source if coeff == 1 else body + r"\, " + source
        lines.append(f"{sign} {term}")
    if not lines:
        lines = ["0"]
    first = lines[0][2:] if lines[0].startswith("+ ") else lines[0]
    head = result.output_latex() + " ={} & " + first
    rest = [" & " + line for line in lines[1:]]
    return "\\begin{aligned}\n" + " \\\\\n".join([head, *rest]) + "\n\\end{aligned}"
