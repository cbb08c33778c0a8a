"""From a circuit to a :class:`~opsym.analyses.result.Result`: check, stamp, solve.

Examples
--------
>>> import opsym
>>> from opsym.analyses.derive import derive
>>> c = opsym.Circuit()
>>> c.voltage_source("Vin", "p", "0")
>>> c.resistor("R1", "n", "0")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="p", minus="n", out="out", gain="finite", bias=False)
>>> derive(c, "out").coefficient("Vin")
U1.A*(R1 + R2)/(R1*U1.A + R1 + R2)
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import sympy as sp

from ..equations.adjoint import Progress, product, solve_adjoint
from ..equations.mna import build_equations
from ..errors import InvalidValueError, UnknownNameError
from ..model.circuit import GROUND, Circuit, to_exact
from ..model.elements import CurrentSource, OpAmp, VoltageSource
from ..model.symbols import source_symbol
from ..model.topology import check_topology
from .result import Result, SourceInfo

__all__ = ["derive", "resolve_values"]


def resolve_values(circuit: Circuit, values: Mapping[Any, Any] | None) -> dict[sp.Symbol, sp.Expr]:
    """Map user keys (names or symbols) to circuit symbols and values to exact numbers."""
    out: dict[sp.Symbol, sp.Expr] = {}
    known = _known_symbols(circuit)
    for key, value in (values or {}).items():
        if isinstance(key, sp.Symbol):
            sym = known.get(key.name)
            if sym is None:
                raise UnknownNameError(
                    f"values: {key} is not a symbol of circuit {circuit.title!r}; "
                    "use c.symbol(name) or a name such as 'R1' or 'U1.A'"
                )
        elif isinstance(key, str):
            sym = circuit.symbol(key)
        else:
            raise UnknownNameError(f"values: key {key!r} is not a name or symbol")
        v = to_exact(value, f"values[{sym.name}]")
        if v.is_number and sym.is_positive and not v.is_positive:
            raise InvalidValueError(f"values[{sym.name}] = {v}: must be positive")
        out[sym] = v
    return out


def _known_symbols(circuit: Circuit) -> dict[str, sp.Symbol]:
    known: dict[str, sp.Symbol] = {}
    for e in circuit.elements:
        if isinstance(e, OpAmp):
            for what in ("Vos", "Ib+", "Ib-", "Ib", "Ios", "A", "CMRR", "Vcm", "PSRR", "dVs"):
                sym = circuit.symbol(f"{e.name}.{what}")
                known[sym.name] = sym
        else:
            sym = circuit.symbol(e.name)
            known[sym.name] = sym
        for free in getattr(e, "value", sp.S.Zero).free_symbols:
            known.setdefault(free.name, free)
    return known


def _output_weights(circuit: Circuit, output, index: dict[str, int]) -> tuple[dict, Any]:
    if isinstance(output, str):
        pair = (circuit.node(output), GROUND)
    elif isinstance(output, (tuple, list)) and len(output) == 2:
        pair = (circuit.node(output[0]), circuit.node(output[1]))
    else:
        raise UnknownNameError(
            f"output {output!r}: give a node name or a (plus, minus) pair of node names"
        )
    if pair[0] == pair[1]:
        raise InvalidValueError(f"output {output!r}: both sides are node {pair[0]!r}")
    weights: dict[int, sp.Expr] = {}
    if pair[0] != GROUND:
        weights[index[f"V({pair[0]})"]] = sp.S.One
    if pair[1] != GROUND:
        weights[index[f"V({pair[1]})"]] = sp.S.NegativeOne
    return weights, pair[0] if pair[1] == GROUND else pair


def sources_of(circuit: Circuit) -> list[SourceInfo]:
    """Every independent source, signals first, then each op-amp's error sources."""
    infos: list[SourceInfo] = []
    for e in circuit.elements:
        if isinstance(e, (VoltageSource, CurrentSource)):
            infos.append(SourceInfo(source_symbol(e.name), "signal", e.name, e.value))
    for amp in circuit.opamps:
        for kind in amp.nonideals:
            for sym in kind.sources(amp.name):
                infos.append(SourceInfo(sym, kind.kind, amp.name, sym))
    return infos


def derive(
    circuit: Circuit,
    output,
    values: Mapping[Any, Any] | None = None,
    progress: Progress | None = None,
) -> Result:
    """Check ``circuit``, build its equations and solve for every source's coefficient."""
    check_topology(circuit)
    fixed = resolve_values(circuit, values)
    eqs = build_equations(circuit, fixed)
    weights, label = _output_weights(circuit, output, eqs.index)
    z = solve_adjoint(eqs, weights, progress=progress)
    coefficients: dict[sp.Symbol, sp.Expr] = {}
    for info in sources_of(circuit):
        stamps = eqs.sources.get(info.symbol, {})
        coefficients[info.symbol] = sp.Add(*[product(z[r], w) for r, w in stamps.items()])
    return Result(
        circuit=circuit,
        output=label,
        coefficients=coefficients,
        sources=tuple(sources_of(circuit)),
        fixed=fixed,
    )
