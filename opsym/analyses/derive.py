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

from .._services import provides
from ..equations.adjoint import Progress, product, solve_adjoint
from ..equations.mna import DOMAINS, build_equations
from ..errors import InvalidValueError, UnknownNameError
from ..model.circuit import GROUND, Circuit
from ..model.elements import CurrentSource, OpAmp, VoltageSource
from ..model.limits import admissible, exact_value, expect_mapping, shown
from ..model.symbols import LAPLACE, OPAMP_PARAMETERS, source_symbol
from ..model.topology import check_topology
from .branch import current_name, current_weights
from .result import Result, SourceInfo

__all__ = [
    "admissible",
    "coefficients_of",
    "derive",
    "output_weights",
    "resolve_values",
    "sources_of",
]


def resolve_values(circuit: Circuit, values: Mapping[Any, Any] | None) -> dict[sp.Symbol, sp.Expr]:
    """Map user keys (names or symbols) to circuit symbols and values to exact numbers."""
    out: dict[sp.Symbol, sp.Expr] = {}
    known = _known_symbols(circuit)
    for key, value in expect_mapping(values, "values").items():
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
        if sym == LAPLACE:
            raise InvalidValueError(
                "values: 's' is the Laplace variable, not a value to fix; evaluate a result "
                "at frequencies with Result.response(f) instead"
            )
        where = f"values[{sym.name}]"
        exact = exact_value(value, where)
        out[sym] = admissible(circuit, sym, exact, "values")
    return out


def _known_symbols(circuit: Circuit) -> dict[str, sp.Symbol]:
    known: dict[str, sp.Symbol] = {}
    for e in circuit.elements:
        if isinstance(e, OpAmp):
            for what in OPAMP_PARAMETERS:
                sym = circuit.symbol(f"{e.name}.{what}")
                known[sym.name] = sym
        else:
            sym = circuit.symbol(e.name)
            known[sym.name] = sym
    for name, free in circuit.free_symbols_by_name().items():
        known.setdefault(name, free)  # user symbols in values, gain= and parameters
    return known


def output_weights(
    circuit: Circuit,
    output,
    index: dict[str, int],
    values: Mapping[sp.Symbol, sp.Expr] | None = None,
    domain: str = "dc",
) -> tuple[dict, Any]:
    """The output as weights on the unknowns, and its label.

    A node, a ``(plus, minus)`` pair, or a branch current ``"I(name)"``
    (:mod:`opsym.analyses.branch`).
    """
    element = current_name(output)
    if element is not None:
        branch = current_weights(circuit, element, index, values or {}, domain)
        return branch, f"I({circuit.element(element).name})"
    if isinstance(output, str):
        pair = (circuit.node(output), GROUND)
    elif isinstance(output, (tuple, list)) and len(output) == 2:
        pair = (circuit.node(output[0]), circuit.node(output[1]))
    else:
        raise UnknownNameError(
            f"output {shown(output)}: give a node name, a (plus, minus) pair of node names "
            "or a branch current such as 'I(R1)'"
        )
    if pair[0] == pair[1]:
        raise InvalidValueError(f"output {output!r}: both sides are node {pair[0]!r}")
    weights: dict[int, sp.Expr] = {}
    if pair[0] != GROUND:
        weights[index[f"V({pair[0]})"]] = sp.S.One
    if pair[1] != GROUND:
        weights[index[f"V({pair[1]})"]] = sp.S.NegativeOne
    return weights, pair[0] if pair[1] == GROUND else pair


def sources_of(circuit: Circuit, noise: bool = False) -> list[SourceInfo]:
    """Every independent source, signals first, then each op-amp's error sources.

    Noise kinds are left out unless ``noise`` asks for them (and then only they
    follow the signals).
    """
    infos: list[SourceInfo] = []
    for e in circuit.elements:
        if isinstance(e, (VoltageSource, CurrentSource)):
            infos.append(SourceInfo(source_symbol(e.name), "signal", e.name, e.value))
    for amp in circuit.opamps:
        for kind in amp.nonideals:
            if kind.noise != noise:
                continue
            for sym in kind.sources(amp.name):
                infos.append(SourceInfo(sym, kind.kind, amp.name, sym))
    return infos


@provides("derive")
def derive(
    circuit: Circuit,
    output,
    values: Mapping[Any, Any] | None = None,
    progress: Progress | None = None,
    domain: str = "dc",
) -> Result:
    """Check ``circuit``, build its equations and solve for every source's coefficient."""
    if not isinstance(domain, str) or domain not in DOMAINS:
        raise InvalidValueError(f"domain {shown(domain)} is not known; use 'dc' or 's'")
    check_topology(circuit, domain)
    fixed = resolve_values(circuit, values)
    eqs = build_equations(circuit, fixed, domain=domain)
    weights, label = output_weights(circuit, output, eqs.index, fixed, domain)
    z = solve_adjoint(eqs, weights, progress=progress)
    sources = sources_of(circuit)
    return Result(
        _circuit=circuit,
        _output=label,
        _coefficients=coefficients_of(eqs, z, sources),
        _sources=tuple(sources),
        _fixed=fixed,
        _domain=domain,
    )


def coefficients_of(eqs, z: list[sp.Expr], sources: list[SourceInfo]) -> dict[sp.Symbol, sp.Expr]:
    """Each source's coefficient: the dot product of ``z`` with its stamps."""
    coefficients: dict[sp.Symbol, sp.Expr] = {}
    for info in sources:
        stamps = eqs.sources.get(info.symbol, {})
        coefficients[info.symbol] = sp.Add(*[product(z[r], w) for r, w in stamps.items()])
    return coefficients
