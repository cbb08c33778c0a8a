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

from dataclasses import dataclass

import sympy as sp

from ..errors import DuplicateNameError

__all__ = [
    "LAPLACE",
    "OPAMP_PARAMETERS",
    "SYMBOLS",
    "SymbolSpec",
    "component_symbol",
    "latex_name",
    "opamp_symbol",
    "register_symbols",
    "thermal_symbol",
]

#: The Laplace variable of the ``domain="s"`` analyses (complex: ``s = j·2π·f``).
LAPLACE = sp.Symbol("s")


@dataclass(frozen=True)
class SymbolSpec:
    """What one op-amp symbol ``<op-amp>.<suffix>`` is, declared once.

    Every layer reads these facts from here: the symbol's assumptions, its
    LaTeX, its unit and words in tables and notes, whether a parameter set gives
    its sign, which parameter-set fields hold its number and whether an op-amp
    table of a design file may give that number.

    Attributes
    ----------
    suffix : str
        The part after the dot: ``"Vos"`` in ``U1.Vos``.
    unit : str
        Its unit as opsym writes it (``"V"``, ``"A"``, ``"Hz"``, ``"V/√Hz"``;
        ``""`` for a ratio).
    latex : str
        The trade's LaTeX, without the op-amp tag (``V_{\\mathrm{OS}}``).
    words : str
        What a table calls it (``"offset voltage Vos"``).
    assumptions : tuple of (str, bool)
        SymPy assumptions of the symbol; error sources are real with unknown sign.
    signed : bool
        ``True`` when the parameter set gives the sign (bias currents); otherwise
        the budget takes the value as a ± limit.
    datasheet : str or None
        The stem of the parameter-set fields that hold its number:
        ``"vos"`` reads ``vos_typ``/``vos_max``. ``None``: no set gives it.
    file_value : bool
        ``True`` when an op-amp table of a design file may give its number
        (``Vcm = "2.5 V"``).
    role : {"source", "parameter"}
        A source is a term of the superposition (``Vos``, ``Ib``); a parameter
        scales terms (``CMRR``, ``A``, a noise corner).

    Examples
    --------
    >>> SYMBOLS["Vos"].unit, SYMBOLS["Vos"].datasheet
    ('V', 'vos')
    """

    suffix: str
    unit: str
    latex: str
    words: str
    assumptions: tuple[tuple[str, bool], ...] = (("real", True),)
    signed: bool = False
    datasheet: str | None = None
    file_value: bool = False
    role: str = "source"

    def __post_init__(self) -> None:
        if self.role not in ("source", "parameter"):
            raise ValueError(f"SymbolSpec {self.suffix!r}: role must be 'source' or 'parameter'")

    def symbol(self, opamp: str) -> sp.Symbol:
        """The symbol ``<opamp>.<suffix>`` with this spec's assumptions."""
        return sp.Symbol(f"{opamp}.{self.suffix}", **dict(self.assumptions))


#: Every op-amp symbol opsym knows, by suffix, filled by :func:`register_symbols`
#: (the kinds of :mod:`opsym.model.nonideal` register theirs when defined).
SYMBOLS: dict[str, SymbolSpec] = {}
#: Op-amp symbol suffixes and the assumptions of each, kept in step with SYMBOLS.
OPAMP_PARAMETERS: dict[str, dict[str, bool]] = {}


def register_symbols(*specs: SymbolSpec) -> None:
    """Make ``specs`` known to every layer; a suffix may be declared only once.

    Raises
    ------
    DuplicateNameError
        If another spec already uses one of the suffixes with other facts.
    """
    for spec in specs:
        known = SYMBOLS.get(spec.suffix)
        if known is not None and known != spec:
            raise DuplicateNameError(
                f"op-amp symbol suffix {spec.suffix!r} is declared twice with different "
                "facts; choose another suffix for the new kind"
            )
        SYMBOLS[spec.suffix] = spec
        OPAMP_PARAMETERS[spec.suffix] = dict(spec.assumptions)


def component_symbol(name: str) -> sp.Symbol:
    """Return the positive symbol that stands for component ``name``'s value."""
    return sp.Symbol(name, positive=True)


def source_symbol(name: str) -> sp.Symbol:
    """Return the real symbol of an independent signal source ``name``."""
    return sp.Symbol(name, real=True)


def opamp_symbol(opamp: str, what: str) -> sp.Symbol:
    """Return the symbol ``<opamp>.<what>``, e.g. ``U1.Vos``."""
    spec = SYMBOLS.get(what)
    if spec is not None:
        return spec.symbol(opamp)
    return sp.Symbol(f"{opamp}.{what}", **OPAMP_PARAMETERS[what])  # assumptions only


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
    if dot and what in SYMBOLS:
        base = SYMBOLS[what].latex
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
