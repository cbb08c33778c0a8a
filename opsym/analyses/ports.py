"""Port impedances in closed form: into a node, or as seen by a signal source.

Every independent source is set to zero (voltage sources short, current
sources open, op-amp error sources off); the op-amps keep their loops, with
their gain model.

* :func:`output_impedance`: a test current ``It`` injected into ``node`` (out
  of ground, or out of ``reference``); ``Z = (V(node) − V(reference))/It``.
* :func:`input_impedance`: the impedance a signal source looks into, itself
  left out: for a voltage source ``Z = V/I`` with ``I`` the current it
  delivers from its ``plus`` terminal into the circuit; for a current source
  from ``a`` into ``b``, ``Z = (V(b) − V(a))/I``.

Both come from one adjoint solve: ``Mᵀz = c`` with ``c`` the port voltage (or
the source's current), and the response to the test source is ``z`` dotted
with its stamps (:mod:`opsym.equations.adjoint`).

Examples
--------
>>> import opsym
>>> c = opsym.Circuit()
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="0", minus="n", out="out", gain="finite", bias=False)
>>> opsym.input_impedance(c, "Vin").impedance
(R1*U1.A + R1 + R2)/(U1.A + 1)
>>> opsym.output_impedance(c, "n").impedance
R1*R2/(R1*U1.A + R1 + R2)
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import sympy as sp

from ..equations.adjoint import solve_adjoint
from ..equations.mna import DOMAINS, build_equations
from ..errors import InvalidValueError, NoSolutionError, UnknownNameError
from ..model.circuit import GROUND, Circuit
from ..model.elements import CurrentSource, VoltageSource
from ..model.symbols import source_symbol
from ..model.topology import check_topology
from ._nested import vanishes
from .derive import resolve_values
from .present import tidy

__all__ = ["PortImpedance", "input_impedance", "output_impedance"]


@dataclass(frozen=True)
class PortImpedance:
    """An impedance in closed form (ohms; a function of ``s`` in the s domain).

    Attributes
    ----------
    circuit : Circuit
    port : str
        What was measured (``"node out"``, ``"source Vin"``).
    impedance : sympy.Expr
        ``Z`` (``zoo`` when no current flows: an open port).
    fixed : dict
    domain : str
    """

    circuit: Circuit
    port: str
    impedance: sp.Expr
    fixed: dict[sp.Symbol, sp.Expr]
    domain: str

    @property
    def admittance(self) -> sp.Expr:
        """``1/Z``."""
        return sp.factor(sp.cancel(1 / self.impedance))

    def subs(self, values: Mapping[Any, Any]) -> PortImpedance:
        """The same impedance with further values put in (names or symbols as keys)."""
        fixed = resolve_values(self.circuit, values)
        return dataclasses.replace(
            self, impedance=tidy(self.impedance.xreplace(fixed)), fixed={**self.fixed, **fixed}
        )

    def sensitivity(self, component: str | sp.Symbol, normalized: bool = True) -> sp.Expr:
        """``S = (x/Z)·∂Z/∂x`` (or ``∂Z/∂x``) for a component or parameter ``x``.

        Examples
        --------
        >>> import opsym
        >>> c = opsym.Circuit()
        >>> c.voltage_source("Vin", "in", "0")
        >>> c.resistor("R1", "in", "out")
        >>> c.resistor("R2", "out", "0")
        >>> opsym.output_impedance(c, "out").sensitivity("R1")
        R2/(R1 + R2)
        """
        x = self.circuit.symbol(component) if isinstance(component, str) else component
        if x not in self.impedance.free_symbols:
            if isinstance(component, str) or x in self.fixed:
                return sp.S.Zero
            raise UnknownNameError(f"sensitivity: {component} is not a symbol of {self.port}")
        dz = sp.diff(self.impedance, x)
        if not normalized:
            return tidy(dz)
        return sp.factor(sp.cancel(sp.together(x * dz / self.impedance)))


def output_impedance(
    circuit: Circuit,
    node: str,
    values: Mapping[Any, Any] | None = None,
    domain: str = "dc",
    reference: str = GROUND,
) -> PortImpedance:
    """The impedance looking into ``node`` (against ``reference``), all sources zero."""
    eqs, fixed = _equations(circuit, values, domain)
    a, b = circuit.node(node), circuit.node(reference)
    if a == b:
        raise InvalidValueError(f"output impedance: node {node!r} is its own reference")
    weights = {eqs.index[f"V({n})"]: w for n, w in ((a, 1), (b, -1)) if n != GROUND}
    z = solve_adjoint(eqs, weights)
    # the test current leaves b and enters a: stamps +1 in a's KCL row, −1 in b's
    zin = sum((w * z[col] for col, w in weights.items()), sp.S.Zero)
    port = f"node {a}" if b == GROUND else f"nodes {a}, {b}"
    return PortImpedance(circuit, port, tidy(zin), fixed, domain)


def input_impedance(
    circuit: Circuit,
    source: str,
    values: Mapping[Any, Any] | None = None,
    domain: str = "dc",
) -> PortImpedance:
    """The impedance signal source ``source`` looks into (itself left out)."""
    e = circuit.element(source)
    if not isinstance(e, (VoltageSource, CurrentSource)):
        raise UnknownNameError(
            f"input impedance: {source!r} is a {e.kind}; name a voltage or current source"
        )
    eqs, fixed = _equations(circuit, values, domain)
    stamps = eqs.sources[source_symbol(e.name)]
    if isinstance(e, VoltageSource):  # ∂I/∂V with I through the source, plus → minus
        z = solve_adjoint(eqs, {eqs.index[f"I({e.name})"]: sp.S.One})
        through = sum((w * z[r] for r, w in stamps.items()), sp.S.Zero)
        if vanishes(through):
            raise NoSolutionError(
                f"input impedance: source {e.name} delivers no current (an open port)"
            )
        zin = -1 / through  # it delivers −I into the circuit
    else:
        weights = {eqs.index[f"V({n})"]: w for n, w in ((e.b, 1), (e.a, -1)) if n != GROUND}
        z = solve_adjoint(eqs, weights)
        zin = sum((w * z[r] for r, w in stamps.items()), sp.S.Zero)
    zin = tidy(sp.cancel(sp.together(zin)))
    return PortImpedance(circuit, f"source {e.name}", zin, fixed, domain)


def _equations(circuit: Circuit, values: Mapping[Any, Any] | None, domain: str):
    if domain not in DOMAINS:
        raise InvalidValueError(f"domain {domain!r} is not known; use 'dc' or 's'")
    check_topology(circuit, domain)
    fixed = resolve_values(circuit, values)
    return build_equations(circuit, fixed, domain=domain), fixed
