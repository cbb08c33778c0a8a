"""Name checks of a new element: reserved names, look-alike symbols, LaTeX collisions.

One name must always stand for one symbol, and two names must never print alike:

* ``s`` is the Laplace variable; no element may be called ``s``.
* A SymPy symbol used in a value or ``gain=`` expression whose name is an
  element's (``R2``, ``U1.A``, ``s``) must be that element's symbol (take it
  from :meth:`~opsym.Circuit.symbol`); a look-alike with other assumptions
  would be a second, different unknown.
* Two symbols of the same name with different assumptions are refused.
* Two element names that print as the same LaTeX (``R_1`` and ``R1`` both
  print as :math:`R_{1}`) are refused.

Examples
--------
>>> import opsym, sympy as sp
>>> c = opsym.Circuit("t")
>>> c.resistor("R1", "a", "0")
>>> c.resistor("R_1", "a", "b")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.DuplicateNameError: element name 'R_1' prints as R_{1} in LaTeX, like resistor R1 ...
>>> c.resistor("R2", "b", "0", value=2 * sp.Symbol("R1"))  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.DuplicateNameError: resistor R2: the symbol R1 in its value is not the circuit's ...
"""

from __future__ import annotations

from typing import Any

import sympy as sp

from ..errors import DuplicateNameError
from .elements import CurrentSource, Element, OpAmp, VoltageSource
from .symbols import (
    LAPLACE,
    OPAMP_PARAMETERS,
    _element_latex,
    component_symbol,
    opamp_symbol,
    source_symbol,
)

__all__ = ["RESERVED", "check_names"]

#: Names no element may take, and why.
RESERVED = {"s": "the Laplace variable"}


def check_names(
    elements: dict[str, Element], tex: dict[str, str], seen: dict[str, sp.Symbol],
    element: Element,
) -> None:
    """Raise :class:`~opsym.DuplicateNameError` if ``element`` breaks a naming rule.

    ``elements`` are the circuit's elements by name, ``tex`` their LaTeX by
    LaTeX text and ``seen`` the symbols their values use, by name; the last two
    are updated when the element passes.
    """
    name = element.name
    if name in RESERVED:
        raise DuplicateNameError(
            f"element name {name!r} is reserved for {RESERVED[name]}; choose another name"
        )
    latex = _element_latex(name)
    if latex in tex:
        raise DuplicateNameError(
            f"element name {name!r} prints as {latex} in LaTeX, like "
            f"{elements[tex[latex]].describe()}; choose a name that differs in more than '_'"
        )
    scope = {**elements, name: element}
    used = _expr_symbols(element)
    for sym in used:
        want = _circuit_symbol(scope, sym.name)
        known = seen.get(sym.name, sym) if want is None else want
        if known != sym:
            raise DuplicateNameError(
                f"{element.kind} {name}: the symbol {sym.name} in its value is not the circuit's "
                f"{sym.name} (its assumptions differ); use c.symbol({sym.name!r}) or "
                f"sympy.Symbol({sym.name!r}, positive=True) for a component value"
            )
    for sym_name, sym in _own_symbols(element).items():
        if sym_name in seen and seen[sym_name] != sym:
            raise DuplicateNameError(
                f"element name {name!r}: a value in the circuit already uses a different "
                f"symbol called {sym_name} (other assumptions); rename the element or the symbol"
            )
    tex[latex] = name
    for sym in used:
        seen.setdefault(sym.name, sym)


def _circuit_symbol(elements: dict[str, Element], name: str) -> sp.Symbol | None:
    """The symbol the circuit itself means by ``name``, if it has one."""
    if name == "s":
        return LAPLACE
    e = elements.get(name.partition(".")[0])
    if e is None:
        return None
    return _own_symbols(e).get(name)


def _own_symbols(e: Element) -> dict[str, sp.Symbol]:
    if isinstance(e, OpAmp):
        return {f"{e.name}.{w}": opamp_symbol(e.name, w) for w in OPAMP_PARAMETERS}
    if isinstance(e, (VoltageSource, CurrentSource)):
        return {e.name: source_symbol(e.name)}
    return {e.name: component_symbol(e.name)}


def _expr_symbols(e: Element) -> set[sp.Symbol]:
    exprs: list[Any] = [getattr(e, "value", None), getattr(e, "gain", None)]
    found: set[sp.Symbol] = set()
    for expr in exprs:
        if isinstance(expr, sp.Basic):
            found |= {x for x in expr.free_symbols if isinstance(x, sp.Symbol)}
    return found
