"""The ideal op-amp limit of a result's coefficients, without a second derivation.

With every op-amp's open-loop gain ``A`` (or the single pole's ``A0`` and
``GBW``) taken to infinity the circuit's equations tend to those of the ideal
op-amp (the nullor): the gain row ``V(+) − V(−) − V(out)/A = 0`` becomes
``V(+) = V(−)``. Where the ideal circuit has a unique solution, the solution
is continuous in ``1/A`` there, so the limit of each coefficient *is* the
ideal circuit's coefficient (Cramer's rule: a ratio of determinants that are
polynomials in ``1/A``). :func:`ideal_limit` takes that limit on coefficients
whose other symbols already have numbers, where it is cheap; it gives
``None`` (derive the ideal circuit instead) for symbolic coefficients, gains
fixed to numbers before solving, gain models it cannot tell become ideal, and
infinite limits (the ideal circuit has no unique solution).

Examples
--------
>>> import opsym
>>> c = opsym.Circuit("follower")
>>> c.voltage_source("Vin", "p", "0")
>>> c.opamp("U1", plus="p", minus="out", out="out", gain="pole", offset=False, bias=False)
>>> res = c.analyze("out", domain="s")
>>> gains = ideal_gains(c, {})
>>> gains
[U1.A0, U1.GBW]
>>> ideal_limit(res.terms, gains)
{Vin: 1}
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from typing import Any

import sympy as sp

from ..model.circuit import Circuit
from ..model.elements import OpAmp
from ..model.symbols import LAPLACE
from .present import at_infinity

__all__ = ["ideal_circuit", "ideal_gains", "ideal_limit"]


def ideal_circuit(circuit: Circuit) -> Circuit:
    """The same circuit with every op-amp ideal (no gain model)."""
    out = Circuit(circuit.title)
    for e in circuit.elements:
        out._add(dataclasses.replace(e, gain=None) if isinstance(e, OpAmp) else e)
    return out


def ideal_gains(circuit: Any, fixed: Mapping[sp.Symbol, sp.Expr]) -> list[sp.Symbol] | None:
    """The gain symbols whose joint limit to ∞ makes every op-amp ideal, or ``None``.

    ``None`` when an op-amp's gain has no symbol of its own left (fixed to a
    number before solving), or a symbol that is not the op-amp's own, or when
    ``1/A`` does not vanish as its symbols grow (a gain model other than a
    plain ``A`` or the single pole).
    """
    gains: set[sp.Symbol] = set()
    for amp in circuit.opamps:
        if not isinstance(amp, OpAmp) or amp.gain is None:
            continue
        gain = amp.gain.xreplace(fixed) if fixed else amp.gain
        own = {x for x in gain.free_symbols if x != LAPLACE}
        if not own or any(not x.name.startswith(f"{amp.name}.") for x in own):
            return None
        if at_infinity(1 / gain, sorted(own, key=str)) != 0:
            return None
        gains |= own
    return sorted(gains, key=str)


def ideal_limit(
    coefficients: Mapping[sp.Symbol, sp.Expr], gains: list[sp.Symbol]
) -> dict[sp.Symbol, sp.Expr] | None:
    """Each coefficient as the ``gains`` → ∞, or ``None`` where that is not cheap or finite.

    Only coefficients whose symbols are all ``s`` or ``gains`` are taken (the
    numbers are in); any other symbol, an infinite limit or one that still
    depends on the gains gives ``None``.
    """
    allowed = {*gains, LAPLACE}
    if any(not c.free_symbols <= allowed for c in coefficients.values()):
        return None
    out: dict[sp.Symbol, sp.Expr] = {}
    for sym, c in coefficients.items():
        if c.free_symbols & set(gains):
            # the leading coefficients in 1/t still carry the gains as a common factor
            c = sp.cancel(at_infinity(c, gains))
        if c.has(sp.oo, -sp.oo, sp.zoo, sp.nan) or c.free_symbols & set(gains):
            return None
        out[sym] = c
    return out
