r"""Closed forms that stay on the page: line breaks between terms, ideal form plus correction.

A design note's display math is LaTeX source; a line of it longer than
:data:`WIDTH` characters is taken to run off the page (a proxy that errs on the
safe side: a fraction's source holds numerator and denominator, its print only the
wider of the two). :func:`broken_latex` writes a result one source per line and
breaks a long coefficient between the terms of its numerator and denominator,
``N / D`` with ``\bigl(`` and ``\bigr)``, which may stand on different lines.
:func:`first_order_latex` writes the first-order gain error of finite open-loop
gains as ``−Σ 1/(A_k·β_k)``, each ``1/β_k`` named below it.

Examples
--------
>>> import sympy as sp
>>> a, b, c = sp.symbols("a b c", positive=True)
>>> lines = wrapped(sp.expand((a + b + c) ** 3), {}, width=40)
>>> max(map(len, lines)) <= 40 and len(lines) > 1
True
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import sympy as sp

from ..analyses._nested import where_latex
from ..analyses.present import trade_form
from ..equations.nested import has_aux
from ..model.symbols import LAPLACE

__all__ = [
    "WIDTH", "broken_latex", "first_order_latex", "ideal_coefficients", "too_wide", "wrapped",
]  # fmt: skip

#: The longest line of display-math source a note prints as it is.
WIDTH = 150


def too_wide(tex: str, width: int = WIDTH) -> bool:
    """Whether any line of ``tex`` is longer than ``width`` characters."""
    return any(len(line) > width for line in tex.splitlines())


def _pieces(poly: sp.Expr, names: Mapping[sp.Symbol, str]) -> list[str]:
    """The terms of an expanded sum as LaTeX, each but the first with its sign."""
    out = []
    for i, term in enumerate(sp.Add.make_args(sp.expand(poly))):
        sign = "-" if term.could_extract_minus_sign() else "+"
        body = sp.latex(-term if sign == "-" else term, symbol_names=dict(names))
        out.append(("- " if sign == "-" else "") + body if i == 0 else f"{sign} {body}")
    return out


def wrapped(poly: sp.Expr, names: Mapping[sp.Symbol, str], width: int = WIDTH) -> list[str]:
    """The terms of ``poly``, as few to a line as keep each line within ``width``."""
    lines: list[str] = []
    for piece in _pieces(poly, names):
        if lines and len(lines[-1]) + 1 + len(piece) <= width:
            lines[-1] += " " + piece
        else:
            lines.append(piece)
    return lines


def _fraction_lines(coeff: sp.Expr, names: Mapping[sp.Symbol, str], room: int) -> list[str]:
    """``coeff`` as ``(N) / (D)``, each line's terms within ``room`` characters."""
    num, den = sp.fraction(sp.together(coeff))
    lines = _bracketed(num, names, room)
    if den == 1:
        return lines
    bottom = _bracketed(den, names, room, divisor=True)
    return [*lines, r"\big/ " + bottom[0], *bottom[1:]]


def _bracketed(
    poly: sp.Expr, names: Mapping[sp.Symbol, str], room: int, divisor: bool = False
) -> list[str]:
    """``poly`` factored on one line if it fits, else its expanded terms wrapped; a sum
    (and a product after ``/``) in brackets."""
    factored = sp.factor(poly)
    tex = sp.latex(factored, symbol_names=dict(names))
    if len(tex) <= room:
        grouped = isinstance(factored, sp.Add) or (divisor and isinstance(factored, sp.Mul))
        return [r"\bigl(" + tex + r"\bigr)" if grouped else tex]
    lines = wrapped(poly, names, room)
    lines[0] = r"\bigl(" + lines[0]
    lines[-1] += r"\bigr)"
    return lines


def _source_lines(
    coeff: sp.Expr, source: str, names: Mapping[sp.Symbol, str], width: int
) -> list[str]:
    """One source's term: ``± coefficient · source`` on one line, or broken."""
    sign = "+"
    if coeff.could_extract_minus_sign():
        sign, coeff = "-", -coeff
    if coeff == 1:
        return [f"{sign} {source}"]
    shaped = trade_form(coeff)
    body = sp.latex(shaped, symbol_names=dict(names))
    if isinstance(shaped, sp.Add):
        body = r"\left(" + body + r"\right)"
    line = f"{sign} {body}" + r"\, " + source
    if len(line) + 8 <= width:
        return [line]
    # room left by the longest lead: "V_out ={} & - <source> \cdot \bigl(" and "\bigr) \\"
    room = max(40, width - len(source) - 50)
    parts = _fraction_lines(coeff, names, room)
    return [f"{sign} {source} \\cdot " + parts[0], *(r"\qquad " + p for p in parts[1:])]


def broken_latex(
    result: Any,
    names: Mapping[sp.Symbol, str],
    width: int = WIDTH,
    coefficients: Mapping[sp.Symbol, sp.Expr] | None = None,
) -> str:
    r"""The output as an ``aligned`` block, one source per line, long ones broken.

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit()
    >>> c.voltage_source("Vin", "in", "0")
    >>> c.resistor("R1", "in", "n")
    >>> c.resistor("R2", "n", "out")
    >>> c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    >>> res = c.analyze("out")
    >>> print(broken_latex(res, res.symbol_latex(), width=40))
    \begin{aligned}
    V_{\mathrm{out}} ={} & - V_{\mathrm{in}} \cdot R_{2} \\
     & \qquad \big/ R_{1} \\
     & + V_{\mathrm{OS},\mathrm{U1}} \cdot \bigl(R_{1} + R_{2}\bigr) \\
     & \qquad \big/ R_{1}
    \end{aligned}
    """
    table = {**result.symbol_latex(), **names}
    lines: list[str] = []
    shown = []
    for info in result.sources:
        coeff = (result.coefficient(info.symbol) if coefficients is None
                 else coefficients.get(info.symbol, sp.S.Zero))  # fmt: skip
        if coeff != 0:
            shown.append(coeff)
            source = table.get(info.symbol, sp.latex(info.symbol))
            lines += _source_lines(coeff, source, table, width)
    lines = lines or ["0"]
    first = lines[0][2:] if lines[0].startswith("+ ") else lines[0]
    head = result.output_latex() + " ={} & " + first
    rest = [" & " + line for line in lines[1:]]
    if has_aux(shown):  # a nested result: its X₁ = … list follows
        rest.append(where_latex(shown, table))
    return "\\begin{aligned}\n" + " \\\\\n".join([head, *rest]) + "\n\\end{aligned}"


def _gains(result: Any) -> list[sp.Symbol] | None:
    """The open-loop gain symbols of the result's op-amps, by name; ``None`` when an
    op-amp's gain is a number (it has no limit to take) or there are none."""
    found: set[sp.Symbol] = set()
    for amp in result.circuit.opamps:
        if amp.gain is not None:
            own = {g for g in getattr(amp.gain, "free_symbols", ()) if g != LAPLACE}
            if not own:
                return None
            found |= own
    return sorted(found, key=str) or None


def _at_zero(coeff: sp.Expr, inverse: Mapping[sp.Symbol, sp.Symbol]) -> tuple[sp.Expr, sp.Expr]:
    """Numerator and denominator of ``coeff`` as polynomials in ``x_k = 1/A_k``."""
    swapped = coeff.xreplace({g: 1 / x for g, x in inverse.items()})
    num, den = sp.fraction(sp.cancel(sp.together(swapped)))
    return sp.expand(num), sp.expand(den)


def ideal_coefficients(result: Any) -> dict[sp.Symbol, sp.Expr] | None:
    """Every coefficient with the open-loop gains taken to ∞ (each ``1/A_k`` → 0).

    Worked out from the coefficients themselves, with no second derivation;
    ``None`` when there is no finite limit to take (a gain fixed to a number, a
    coefficient that grows with the gains).

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit()
    >>> c.voltage_source("Vs", "p", "0")
    >>> c.resistor("R1", "n", "0")
    >>> c.resistor("R2", "n", "out")
    >>> c.opamp("U1", plus="p", minus="n", out="out", gain="finite", bias=False)
    >>> ideal_coefficients(c.analyze("out"))
    {Vs: (R1 + R2)/R1, U1.Vos: (R1 + R2)/R1}
    """
    gains = _gains(result)
    if gains is None:
        return None
    inverse = {g: sp.Dummy(f"x_{g}") for g in gains}
    zero = dict.fromkeys(inverse.values(), 0)
    out = {}
    for info in result.sources:
        num, den = _at_zero(result.coefficient(info.symbol), inverse)
        d0 = den.xreplace(zero)
        if d0 == 0:
            return None
        out[info.symbol] = sp.factor(num.xreplace(zero) / d0)
    return out


def first_order_latex(
    result: Any, signal: Any, names: Mapping[sp.Symbol, str], width: int = WIDTH
) -> list[str]:
    r"""``ΔG/G ≈ −Σ 1/(A_k·β_k)`` for one signal, then each ``1/β_k``, as display blocks.

    The first-order error is linear in the ``1/A_k``, so each op-amp's share
    is the derivative with respect to ``1/A_k``; ``β_k`` is the feedback
    factor that op-amp sees (``β = R1/(R1 + R2)`` for one non-inverting stage).
    """
    table = {**result.symbol_latex(), **names}
    gains = _gains(result) or []
    inverse = {g: sp.Dummy(f"x_{g}") for g in gains}
    zero = dict.fromkeys(inverse.values(), 0)
    num, den = _at_zero(result.coefficient(result._signal(signal)), inverse)
    n0, d0 = num.xreplace(zero), den.xreplace(zero)
    head, blocks = [], []
    sig = table.get(result._signal(signal), "")
    several = len(result.signals) > 1  # each signal's β differ: marked with the signal
    for g in gains:
        x = inverse[g]  # d(G/G0)/dx at x = 0: N'/N − D'/D there
        slope = sp.diff(num, x).xreplace(zero) / n0 - sp.diff(den, x).xreplace(zero) / d0
        share = sp.factor(slope)
        if share == 0:
            continue
        amp = str(g).rsplit(".", 1)[0]
        beta = r"\beta_{\mathrm{" + amp + "}}" + (f"^{{({sig})}}" if several else "")
        gain = table.get(g, sp.latex(g))
        head.append(rf"- \frac{{1}}{{{gain}\, {beta}}}")
        rhs = _beta_lines(-share, table, width)
        lhs = rf"\frac{{1}}{{{beta}}} ={{}} & "
        blocks.append("\\begin{aligned}\n" + lhs + " \\\\\n & ".join(rhs) + "\n\\end{aligned}")
    first = head[0][2:] if head and head[0].startswith("+ ") else (head[0] if head else "0")
    lead = rf"\frac{{\Delta G}}{{G}}\Big|_{{{sig}}} \approx{{}} & " + first
    body = "\\begin{aligned}\n" + " \\\\\n & ".join([lead, *head[1:]]) + "\n\\end{aligned}"
    return [body, *blocks]


def _beta_lines(expr: sp.Expr, names: Mapping[sp.Symbol, str], width: int) -> list[str]:
    tex = sp.latex(trade_form(expr), symbol_names=dict(names))
    lead = 70  # "\frac{1}{\beta_{U1}^{(V_{in})}} ={} & \bigl(" and "\bigr) \\"
    return [tex] if len(tex) + lead <= width else _fraction_lines(expr, names, width - lead)
