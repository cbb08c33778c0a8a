r"""Noise as tables and formulas: each source's RMS and share, its transfer and spectrum.

:func:`noise_table` (and :func:`noise_markdown`) tabulate a budget;
:func:`noise_latex` writes the sum the numbers come from, every source's
``H_k(s)`` and power density ``S_k(f)``.

Examples
--------
>>> from opsym.study.noise import NoiseBudget, NoiseRow
>>> b = NoiseBudget("out", 10.0, 1e4, 298.15,
...                 (NoiseRow("U1.en", "voltage noise en of U1", 3e-6, 0.9),
...                  NoiseRow("R2", "thermal noise √(4kTR) of R2", 1e-6, 0.1)), 3.16e-6, None)
>>> print(noise_table(b).to_markdown().splitlines()[4])
| U1.en | voltage noise en of U1 | 3 µV | 90.0 % |
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING

import sympy as sp

from ..analyses.branch import output_latex
from ..analyses.noise import PEAK_TO_PEAK_RULE
from ..errors import ArgumentTypeError
from ..model.limits import expect_mapping
from ..model.symbols import component_symbol, latex_name
from ..numeric.units import format_plain, format_si
from .laplace import number_latex, transfer_terms
from .tables import SHORT_CAUTION, Table

if TYPE_CHECKING:
    from ..analyses.noise import NoiseResult
    from ..study.noise import NoiseBudget

__all__ = ["noise_latex", "noise_markdown", "noise_table"]


def noise_table(budget: NoiseBudget) -> Table:
    """The rows of ``budget`` largest first, totals in the footer, rules as notes."""
    band = f"{format_si(budget.f_low, 'Hz')} to {format_si(budget.f_high, 'Hz')}"
    if budget.f_high == float("inf"):
        band = f"{format_si(budget.f_low, 'Hz')} to ∞"
    u = budget.output_unit
    rows = tuple(
        (r.name, r.what, format_si(r.rms, u), f"{100 * r.share:.1f} %") for r in budget.rows
    )
    footer = [
        ("total", "root-sum-square", format_si(budget.total, u) + " rms", "100 %"),
        ("", "peak-to-peak estimate", format_si(budget.peak_to_peak, u) + " p-p", ""),
    ]
    if budget.input_rms is not None:
        footer.append(
            (
                "",
                "referred to the input",
                format_si(budget.input_rms, budget.input_unit) + " rms",
                "",
            )
        )
    notes = (
        "Sources are uncorrelated: powers add, RMS = √(Σ rms_k²); share = rms_k²/total².",
        f"Resistors at {budget.temperature - 273.15:g} °C ({budget.temperature:g} K), "
        "4kTR with k = 13.80649 yJ/K (the SI value, exact).",
        PEAK_TO_PEAK_RULE + ".",
        *_accuracy_note(budget),
        SHORT_CAUTION,
    )
    return Table(
        ("source", "what", "output rms", "share of power"),
        rows,
        "llrr",
        f"Noise budget at {budget.output}, {band}",
        tuple(footer),
        notes,
    )


def _accuracy_note(budget: NoiseBudget) -> tuple[str, ...]:
    """How well the band integrals are known, when the budget says."""
    if budget.total_error is None:
        return ()
    relative = budget.total_error / budget.total if budget.total > 0 else 0.0
    share = "below 1 ppm" if relative < 1e-6 else format_plain(relative * 1e6, "ppm", 2)
    error = format_si(budget.total_error, budget.output_unit, 2)
    return (
        "Band integrals: adaptive Gauss–Kronrod in ln f, break points at every pole and "
        f"zero; estimated error of the total ±{error} rms ({share} of it).",
    )


def noise_markdown(budget: NoiseBudget) -> str:
    """The budget as a GitHub-flavoured Markdown table, totals in bold, rules below."""
    return noise_table(budget).to_markdown()


def _spectrum_latex(noise_result: NoiseResult, name: str) -> str:
    """``S_k(f)``: ``4kTR`` for a resistor, ``density²·(1 + fc/f)`` for an op-amp source."""
    src = noise_result.source(name)
    if src.owner == name:  # a resistor's thermal noise
        return r"4 k T\, " + latex_name(component_symbol(name))
    density = src.spectrum.density
    white = latex_name(density) if isinstance(density, sp.Symbol) else sp.latex(density)
    white = r"\left(" + white + r"\right)^{2}" if "^" in white else white + "^{2}"
    corner = noise_result.spectrum(name).corner
    if corner.free_symbols or corner == 0:  # no corner given: white noise, as in the numbers
        return white
    fc = src.spectrum.corner
    fc_text = latex_name(fc) if isinstance(fc, sp.Symbol) else sp.latex(fc)
    return white + r" \left(1 + \frac{" + fc_text + r"}{f}\right)"


def noise_latex(noise_result: NoiseResult, names: Mapping[sp.Symbol, str] | None = None) -> str:
    r"""The output noise as an ``aligned`` block: the power sum, each ``H_k(s)`` and ``S_k(f)``.

    ``e_out²(f) = Σ_k |H_k(j·2π·f)|²·S_k(f)``; a resistor's source is its
    series thermal noise voltage ``R.en`` with ``S = 4kTR``.

    Examples
    --------
    >>> import opsym
    >>> c = opsym.Circuit("inverting x10")
    >>> c.voltage_source("Vin", "in", "0")
    >>> c.resistor("R1", "in", "n", value="1k")
    >>> c.resistor("R2", "n", "out", value="10k")
    >>> c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    >>> print(noise_latex(c.noise("out", values={"U1.en": "8n", "U1.in": "1p"})))
    ... # doctest: +NORMALIZE_WHITESPACE
    \begin{aligned}
    e_{\mathrm{out}}^{2}(f) &= \sum_{k} \left|H_{k}(j 2\pi f)\right|^{2} S_{k}(f),
      \qquad T = 298.15\,\mathrm{K} \\
    \frac{V_{\mathrm{out}}}{e_{\mathrm{n},\mathrm{R1}}}(s) &= -10, & S(f) &= 4 k T\, R_{1} \\
    \frac{V_{\mathrm{out}}}{e_{\mathrm{n},\mathrm{R2}}}(s) &= 1, & S(f) &= 4 k T\, R_{2} \\
    \frac{V_{\mathrm{out}}}{e_{\mathrm{n},\mathrm{U1}}}(s) &= 11,
      & S(f) &= e_{\mathrm{n},\mathrm{U1}}^{2} \\
    \frac{V_{\mathrm{out}}}{i_{\mathrm{n+},\mathrm{U1}}}(s) &= 0,
      & S(f) &= i_{\mathrm{n},\mathrm{U1}}^{2} \\
    \frac{V_{\mathrm{out}}}{i_{\mathrm{n-},\mathrm{U1}}}(s) &= 10000,
      & S(f) &= i_{\mathrm{n},\mathrm{U1}}^{2}
    \end{aligned}
    """
    if not (hasattr(noise_result, "names") and hasattr(noise_result, "transfer")):
        raise ArgumentTypeError(
            f"noise_latex: expected a NoiseResult of Circuit.noise, not a "
            f"{type(noise_result).__name__}"
        )
    names = expect_mapping(names, "noise_latex names")
    out = output_latex(noise_result.output)
    total = "i" if noise_result.output_unit == "A" else "e"
    lines = [
        total + r"_{\mathrm{out}}^{2}(f) &= \sum_{k} \left|H_{k}(j 2\pi f)\right|^{2} S_{k}(f), "
        r"\qquad T = " + number_latex(noise_result.temperature) + r"\,\mathrm{K}"
    ]
    for name in noise_result.names:
        h = noise_result.transfer(name)
        table = {s: latex_name(s) for s in h.free_symbols if isinstance(s, sp.Symbol)}
        table.update(names or {})
        source = latex_name(noise_result.source(name).spectrum.source)
        if h == 0:
            body = "0"
        else:
            sign, body = transfer_terms(h, table, standalone=True)
            body = ("-" if sign == "-" else "") + body
        lhs = r"\frac{" + out + "}{" + source + "}(s)"
        lines.append(f"{lhs} &= {body}, & S(f) &= {_spectrum_latex(noise_result, name)}")
    return "\\begin{aligned}\n" + " \\\\\n".join(lines) + "\n\\end{aligned}"
