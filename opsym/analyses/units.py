"""The units of an output, of a source and of the coefficient between them: one place.

An output is a node voltage (V) or a branch current ``I(name)`` (A). A source is a
signal source (its element's unit) or an op-amp error source (its kind's
:class:`~opsym.model.symbols.SymbolSpec` unit). A coefficient is output per
source: V/V, V/A (written Ω, as the trade does), A/V (S) or A/A. Budgets,
response tables, Bode charts and requirements all read their units here.

Examples
--------
>>> import opsym
>>> c = opsym.Circuit()
>>> c.current_source("Iin", "0", "n")
>>> c.resistor("Rf", "n", "out")
>>> c.opamp("U1", plus="0", minus="n", out="out")
>>> res = c.analyze("out")
>>> [source_unit(c, s) for s in ("Iin", "U1.Vos", "U1.Ib-")]
['A', 'V', 'A']
>>> output_unit("out"), output_unit("I(Rf)")
('V', 'A')
>>> ratio_unit("V", source_unit(c, "Iin"))
'Ω'
"""

from __future__ import annotations

from typing import Any

import sympy as sp

from ..errors import UnknownNameError
from ..model.elements import CurrentSource, VoltageSource
from ..model.symbols import SYMBOLS
from .branch import current_name

__all__ = ["output_unit", "ratio_unit", "source_unit"]

_RATIO = {("V", "V"): "V/V", ("V", "A"): "Ω", ("A", "V"): "S", ("A", "A"): "A/A"}


def output_unit(output: object) -> str:
    """``"A"`` for a branch-current output ``"I(name)"``, else ``"V"``."""
    return "A" if current_name(output) is not None else "V"


def source_unit(circuit: Any, source: str | sp.Symbol) -> str:
    """The unit of a source of ``circuit``: ``"V"`` or ``"A"`` (or a kind's own unit).

    A signal source has its element's unit; an op-amp error source ``U1.Ib+``
    its kind's declared unit. A name that is neither is taken to be a voltage.
    """
    name = source.name if isinstance(source, sp.Symbol) else str(source)
    _, dot, what = name.partition(".")
    if dot and what in SYMBOLS:
        return SYMBOLS[what].unit
    try:
        element = circuit.element(name)
    except UnknownNameError:
        return "V"
    if isinstance(element, (CurrentSource, VoltageSource)):
        return element.unit
    return "V"


def ratio_unit(out_unit: str, in_unit: str) -> str:
    """The unit of a coefficient, output per source: ``V/V``, ``Ω``, ``S``, ``A/A``."""
    return _RATIO.get((out_unit, in_unit), f"{out_unit}/{in_unit}")
