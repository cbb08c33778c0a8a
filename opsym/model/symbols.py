"""How opsym names its SymPy symbols, in one place.

A component without a numeric value is the positive symbol of its own name
(``R1``). Op-amp parameters and error sources are named ``<op-amp>.<what>``:
``U1.Vos``, ``U1.Ib+``, ``U1.Ib-``, ``U1.Ib``, ``U1.Ios``, ``U1.A``,
``U1.CMRR``, ``U1.Vcm``, ``U1.PSRR``, ``U1.dVs``; the single-pole gain model adds
``U1.A0`` and ``U1.GBW``, the noise model ``U1.en``, ``U1.in+``, ``U1.in-`` (the
densities) and their 1/f corners ``U1.fce``, ``U1.fci``. The Laplace variable is
:data:`LAPLACE`, ``s``. The same name always gives the same symbol (same
assumptions), so results from different analyses combine.

Examples
--------
>>> from opsym.model.symbols import component_symbol, opamp_symbol
>>> component_symbol("R1").is_positive
True
>>> opamp_symbol("U1", "Vos")
U1.Vos
"""

from __future__ import annotations

import sympy as sp

__all__ = [
    "LAPLACE",
    "OPAMP_PARAMETERS",
    "component_symbol",
    "latex_name",
    "opamp_symbol",
    "thermal_symbol",
]

#: The Laplace variable of the ``domain="s"`` analyses (complex: ``s = j·2π·f``).
LAPLACE = sp.Symbol("s")

#: Op-amp symbol suffixes and the assumptions of each. Error sources are real
#: with unknown sign; gain is positive; CMRR and PSRR are signed ratios (V/V).
OPAMP_PARAMETERS: dict[str, dict[str, bool]] = {
    "Vos": {"real": True},
    "Ib+": {"real": True},
    "Ib-": {"real": True},
    "Ib": {"real": True},
    "Ios": {"real": True},
    "A": {"positive": True},
    "CMRR": {"real": True, "nonzero": True},
    "Vcm": {"real": True},
    "PSRR": {"real": True, "nonzero": True},
    "dVs": {"real": True},
    "A0": {"positive": True},
    "GBW": {"positive": True},
    "en": {"nonnegative": True},
    "in+": {"nonnegative": True},
    "in-": {"nonnegative": True},
    "in": {"nonnegative": True},
    "fce": {"nonnegative": True},
    "fci": {"nonnegative": True},
}

_LATEX = {
    "Vos": r"V_{\mathrm{OS}}",
    "Ib+": r"I_{\mathrm{B+}}",
    "Ib-": r"I_{\mathrm{B-}}",
    "Ib": r"I_{\mathrm{B}}",
    "Ios": r"I_{\mathrm{OS}}",
    "A": r"A",
    "CMRR": r"\mathrm{CMRR}",
    "Vcm": r"V_{\mathrm{CM}}",
    "PSRR": r"\mathrm{PSRR}",
    "dVs": r"\Delta V_{\mathrm{S}}",
    "A0": r"A_{0}",
    "GBW": r"\mathrm{GBW}",
    "en": r"e_{\mathrm{n}}",
    "in+": r"i_{\mathrm{n+}}",
    "in-": r"i_{\mathrm{n-}}",
    "in": r"i_{\mathrm{n}}",
    "fce": r"f_{\mathrm{ce}}",
    "fci": r"f_{\mathrm{ci}}",
}


def component_symbol(name: str) -> sp.Symbol:
    """Return the positive symbol that stands for component ``name``'s value."""
    return sp.Symbol(name, positive=True)


def source_symbol(name: str) -> sp.Symbol:
    """Return the real symbol of an independent signal source ``name``."""
    return sp.Symbol(name, real=True)


def opamp_symbol(opamp: str, what: str) -> sp.Symbol:
    """Return the symbol ``<opamp>.<what>``, e.g. ``U1.Vos``."""
    return sp.Symbol(f"{opamp}.{what}", **OPAMP_PARAMETERS[what])


def thermal_symbol(resistor: str) -> sp.Symbol:
    """Return ``<resistor>.en``, the thermal noise voltage in series with a resistor."""
    return sp.Symbol(f"{resistor}.en", real=True)


def latex_name(symbol: sp.Symbol) -> str:
    r"""Return the LaTeX the trade writes for an opsym symbol.

    Examples
    --------
    >>> latex_name(opamp_symbol("U1", "Ib+"))
    'I_{\\mathrm{B+},\\mathrm{U1}}'
    >>> latex_name(component_symbol("R2"))
    'R_{2}'
    """
    owner, dot, what = symbol.name.partition(".")
    if dot and what in _LATEX:
        base = _LATEX[what]
        tag = r"\mathrm{" + owner.replace("_", r"\_") + "}"
        if base.endswith("}") and "_{" in base:
            return base[:-1] + "," + tag + "}"
        return base + "_{" + tag + "}"
    return _element_latex(symbol.name)


def _element_latex(name: str) -> str:
    """``R1`` → ``R_{1}``, ``Rf`` → ``R_{f}``, ``Vin`` → ``V_{\\mathrm{in}}``."""
    head, rest = name[:1], name[1:].replace("_", "")
    if not rest or not head.isalpha():
        return sp.latex(sp.Symbol(name))
    if len(rest) > 1 and rest.isalpha():
        rest = r"\mathrm{" + rest + "}"
    return head + "_{" + rest + "}"
