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

from .._services import provides
from ..analyses._nested import where_latex
from ..analyses.present import trade_form
from ..errors import ArgumentTypeError
from ..model.limits import expect_mapping
from ..model.symbols import LAPLACE
from .laplace import number_latex, transfer_parts, transfer_terms

if TYPE_CHECKING:
    from ..analyses.result import Result

__all__ = ["expr_latex", "result_latex", "transfer_latex"]


def expr_latex(expr: sp.Expr, names: Mapping[sp.Symbol, str]) -> str:
    """LaTeX of ``expr`` with opsym's symbol names."""
    return sp.latex(expr, symbol_names=dict(names))


def _term(result: Result, symbol: sp.Symbol, table: Mapping[sp.Symbol, str]) -> str | None:
    """``"± body"`` of one source's coefficient, ``None`` when it is zero."""
    coeff = result.coefficient(symbol)
    if coeff == 0:
        return None
    source = table.get(symbol, sp.latex(symbol))
    if result.domain == "s" and LAPLACE in coeff.free_symbols:
        sign, body = transfer_terms(coeff, table)
        return f"{sign} {body}" + r"\, " + source
    sign = "+"
    if coeff.could_extract_minus_sign():
        sign, coeff = "-", -coeff
    shaped = trade_form(coeff)
    body = expr_latex(shaped, table)
    if isinstance(shaped, sp.Add):
        body = r"\left(" + body + r"\right)"
    return f"{sign} " + (source if coeff == 1 else body + r"\, " + source)


@provides("result_latex")
def result_latex(result: Result, names: Mapping[sp.Symbol, str] | None = None) -> str:
    r"""The output of ``result`` as an ``aligned`` block, one source per line, zero terms left out.

    In a ``domain="s"`` result each line is the source's transfer function
    ``H(s)`` written as gain times zeros over poles (see :mod:`opsym.output.laplace`),
    then the source.

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit("RC low-pass, buffered")
    >>> c.voltage_source("Vin", "in", "0")
    >>> c.resistor("R1", "in", "p", value="10k")
    >>> c.capacitor("C1", "p", "0", value="10n")
    >>> c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    >>> print(c.analyze("out", domain="s").latex())  # doctest: +NORMALIZE_WHITESPACE
    \begin{aligned}
    V_{\mathrm{out}} ={} & \frac{1}{1 + \frac{s}{2\pi \cdot 1.5915\,\mathrm{kHz}}}\,
      V_{\mathrm{in}} \\
     & + V_{\mathrm{OS},\mathrm{U1}}
    \end{aligned}
    """
    table = {**result.symbol_latex(), **(names or {})}
    lines = [t for info in result.sources if (t := _term(result, info.symbol, table)) is not None]
    if not lines:
        lines = ["0"]
    first = lines[0][2:] if lines[0].startswith("+ ") else lines[0]
    head = result.output_latex() + " ={} & " + first
    rest = [" & " + line for line in lines[1:]]
    if result.definitions:  # a nested result: its X₁ = … list follows
        rest.append(where_latex([result.coefficient(s.symbol) for s in result.sources], table))
    return "\\begin{aligned}\n" + " \\\\\n".join([head, *rest]) + "\n\\end{aligned}"


def transfer_latex(
    result: Result,
    source: str | sp.Symbol | None = None,
    names: Mapping[sp.Symbol, str] | None = None,
) -> str:
    r"""``H(s) = V_out/V_in = …`` for one source's coefficient, with its DC gain ``H(0)``.

    ``source`` defaults to the only signal source. Numbers print to six
    significant digits and poles in hertz, so a single-pole op-amp stage
    reads as gain over one pole.

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit("inverting x10, single-pole op-amp")
    >>> c.voltage_source("Vin", "in", "0")
    >>> c.resistor("R1", "in", "n", value="2k")
    >>> c.resistor("R2", "n", "out", value="20k")
    >>> c.opamp("U1", plus="0", minus="n", out="out", gain="pole", bias=False)
    >>> res = c.analyze("out", domain="s", values={"U1.A0": "200k", "U1.GBW": "3M"})
    >>> print(transfer_latex(res))  # doctest: +NORMALIZE_WHITESPACE
    H(s) = \frac{V_{\mathrm{out}}}{V_{\mathrm{in}}} = -9.99945 \cdot
      \frac{1}{1 + \frac{s}{2\pi \cdot 272.74\,\mathrm{kHz}}}, \qquad H(0) = -9.99945
    """
    if not hasattr(result, "symbol_latex"):
        raise ArgumentTypeError(
            "transfer_latex: expected a Result of Circuit.analyze(domain='s'), "
            f"not a {type(result).__name__}"
        )
    table = {**result.symbol_latex(), **expect_mapping(names, "transfer_latex names")}
    sym = result._signal(source) if source is None else result._source_symbol(source)
    coeff = result.coefficient(sym)
    ratio = r"\frac{" + result.output_latex() + "}{" + table.get(sym, sp.latex(sym)) + "}"
    if coeff == 0:
        return rf"H(s) = {ratio} = 0"
    sign, body = transfer_terms(coeff, table, standalone=True)
    head = rf"H(s) = {ratio} = " + ("-" if sign == "-" else "") + body
    parts = transfer_parts(coeff)
    if parts is None:
        return head
    dc = parts.dc_gain
    if dc is sp.zoo:
        return head + r", \qquad \left|H(0)\right| \to \infty"
    if not dc.free_symbols:
        dc_text = number_latex(dc)
    else:
        dc_text = expr_latex(trade_form(dc), table)
    return head + rf", \qquad H(0) = {dc_text}"

