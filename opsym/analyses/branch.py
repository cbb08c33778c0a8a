"""A branch current as the output of an analysis: ``c.analyze("I(RL)")``.

The current through an element, positive from its first node to its second
(``a`` to ``b``; a voltage source's ``plus`` to ``minus`` through the source):

* a resistor: ``(V(a) − V(b))/R``; a capacitor: ``s·C·(V(a) − V(b))`` (zero at DC);
* an inductor or a voltage source: its branch current, an unknown of the equations;
* an op-amp ``I(U1)``: the current its output drives into its ``out`` node.

A current source's current is its own value, so it is refused as an output.
The output is a weighted sum of unknowns, so one adjoint solve gives every
source's coefficient as for a node voltage (:mod:`opsym.analyses.derive`).

Examples
--------
>>> import opsym
>>> c = opsym.Circuit()
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="0", minus="n", out="out", bias=False)
>>> c.analyze("I(R2)").coefficient("Vin")
1/R1
>>> c.analyze("I(U1)").coefficient("Vin")
-1/R1
"""

from __future__ import annotations

import re
from collections.abc import Mapping

import sympy as sp

from ..errors import InvalidValueError
from ..model.circuit import GROUND, Circuit
from ..model.elements import (
    Capacitor,
    CurrentSource,
    FullyDifferentialAmp,
    Inductor,
    OpAmp,
    Resistor,
    VoltageSource,
)
from ..model.symbols import LAPLACE

__all__ = ["current_name", "current_weights", "output_latex", "output_text"]

_CURRENT = re.compile(r"\s*I\(\s*([^()\s]+)\s*\)\s*")


def current_name(output: object) -> str | None:
    """The element name in an output written ``"I(name)"``, else ``None``.

    Examples
    --------
    >>> current_name("I(RL)"), current_name("out")
    ('RL', None)
    """
    if not isinstance(output, str):
        return None
    m = _CURRENT.fullmatch(output)
    return m.group(1) if m else None


def _output_parts(output: object) -> tuple[str, tuple[str, ...]]:
    """``("I", (element,))``, ``("V", (a, b))`` or ``("V", (node,))``."""
    element = current_name(output)
    if element is not None:
        return "I", (element,)
    if isinstance(output, (tuple, list)):
        return "V", tuple(str(n) for n in output)
    return "V", (str(output),)


def output_text(output: object) -> str:
    """An output in words for titles: ``V(out)``, ``V(op) - V(on)``, ``I(RL)``.

    Examples
    --------
    >>> output_text("out"), output_text(("op", "on")), output_text("I(RL)")
    ('V(out)', 'V(op) - V(on)', 'I(RL)')
    """
    kind, names = _output_parts(output)
    return " - ".join(f"{kind}({n})" for n in names)


def output_latex(output: object) -> str:
    r"""LaTeX name of an output: ``V_{\mathrm{out}}``, ``V_{a} - V_{b}``, or ``I_{\mathrm{RL}}``.

    Examples
    --------
    >>> output_latex("out"), output_latex(("op", "on")), output_latex("I(RL)")
    ('V_{\\mathrm{out}}', 'V_{\\mathrm{op}} - V_{\\mathrm{on}}', 'I_{\\mathrm{RL}}')
    """
    kind, names = _output_parts(output)
    return " - ".join(rf"{kind}_{{\mathrm{{{n}}}}}" for n in names)


def current_weights(
    circuit: Circuit,
    name: str,
    index: Mapping[str, int],
    values: Mapping[sp.Symbol, sp.Expr],
    domain: str,
) -> dict[int, sp.Expr]:
    """The current through element ``name`` as weights on the unknowns (index → weight)."""
    e = circuit.element(name)
    if isinstance(e, FullyDifferentialAmp):
        raise InvalidValueError(
            f"output I({name}): {name} is an FDA with two outputs, so it has no single output "
            "current; ask for the current of the resistor or load at out+ or out-, e.g. I(Rload)"
        )
    if isinstance(e, (VoltageSource, Inductor, OpAmp)):
        return {index[f"I({e.name})"]: sp.S.One}
    if isinstance(e, CurrentSource):
        raise InvalidValueError(
            f"output I({name}): {name} is a current source, so its current is its own value; "
            "ask for the current of an element in series with it, or a node voltage"
        )
    if isinstance(e, Resistor):
        y = 1 / e.value.xreplace(values)
    elif isinstance(e, Capacitor):
        if domain == "dc":
            return {}
        y = LAPLACE * e.value.xreplace(values)
    else:
        raise InvalidValueError(
            f"output I({name}): no branch current is defined for a {type(e).__name__}; "
            "ask for a resistor, capacitor, inductor, voltage source or op-amp"
        )
    weights: dict[int, sp.Expr] = {}
    if e.a != GROUND:
        weights[index[f"V({e.a})"]] = y
    if e.b != GROUND:
        weights[index[f"V({e.b})"]] = weights.get(index[f"V({e.b})"], sp.S.Zero) - y
    return {k: v for k, v in weights.items() if v != 0}
