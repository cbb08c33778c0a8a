"""An independent numeric DC solver for the reference tests.

It shares no code with ``opsym.equations``: it is written from KCL alone, over a
plain description of a circuit, so that opsym's symbolic results can be checked
against something that was derived another way.

Description
-----------
A circuit is a list of tuples:

* ``("R", name, a, b, value)``: resistor, ohms.
* ``("C", name, a, b, value)``: capacitor; open at DC (ignored here).
* ``("V", name, plus, minus, value)``: ``V(plus) - V(minus) = value``.
* ``("I", name, a, b, value)``: ``value`` amperes flow through it from ``a`` into ``b``.
* ``("OA", name, plus, minus, out, gain, vos, ibp, ibm)``: op-amp, output referred to
  ground; ``gain=None`` is the ideal op-amp. ``vos`` is in series with the ``+``
  pin, ``ibp``/``ibm`` are currents *into* the pins. An optional tenth field maps
  ``"Ro"``, ``"Rid"``, ``"Ricm"`` to ohms: the op-amp's output resistance, then
  drawn as a resistor from an internal node (where the gain equation holds) to
  ``out``; its differential input resistance, a resistor between the pins; its
  common-mode input resistance, a resistor from each pin to ground. They are
  resistors like any other here, never opsym's stamps.

Ground is ``"0"`` (``"gnd"`` is accepted as an alias).

Formulation
-----------
Unknowns are the node voltages only. KCL is written at every node with the
currents of voltage-defined branches (voltage sources, op-amp outputs) left
unknown; those unknown currents are then eliminated by row operations (each
source merges the KCL rows of its two nodes, each op-amp output drops the KCL row
of its output node). The freed rows are filled with the branch constraints:
``v(p) - v(m) = V`` for a source, and for an op-amp the gain equation divided by
the gain, ``v(out)/A - (v(+) - v(-)) = vos``, whose ``A -> oo`` limit is the
ideal op-amp. No branch current is ever an unknown.

The square system is solved either in float64 (``numpy.linalg.solve`` after row and
column equilibration, with a condition-number check) or exactly in rationals
(``fractions.Fraction`` Gaussian elimination), which also decides singularity
without round-off.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from fractions import Fraction
from typing import Any

import numpy as np

__all__ = [
    "ReferenceSingularError",
    "canonical_node",
    "coefficients",
    "coefficients_with_scale",
    "floating_nodes",
    "nodes_of",
    "numeric_values",
    "output_value",
    "solve",
    "solve_fractions",
    "source_names",
    "to_circuit",
    "with_sources",
    "zero_of_coefficient",
]

GROUND = "0"

#: float64 results are trusted up to this condition number; beyond it ``solve``
#: switches to exact rational arithmetic.
COND_LIMIT = 1e6


class ReferenceSingularError(ArithmeticError):
    """The reference solver finds no unique solution; the message says why."""


# -- reading the description -------------------------------------------------------


def canonical_node(n: str) -> str:
    n = str(n)
    return GROUND if n.lower() == "gnd" or n == GROUND else n


def nodes_of(desc: Iterable[Sequence[Any]]) -> list[str]:
    """Non-ground nodes in order of first use."""
    seen: dict[str, None] = {}
    for item in desc:
        kind = item[0]
        pins = item[2:5] if kind == "OA" else item[2:4]
        for p in pins:
            p = canonical_node(p)
            if p != GROUND:
                seen.setdefault(p, None)
    return list(seen)


def source_names(desc: Iterable[Sequence[Any]]) -> list[str]:
    """Names of every independent source, as opsym names them (``U1.Vos`` etc.)."""
    names: list[str] = []
    for item in desc:
        if item[0] in ("V", "I"):
            names.append(item[1])
        elif item[0] == "OA":
            names += [f"{item[1]}.Vos", f"{item[1]}.Ib+", f"{item[1]}.Ib-"]
    return names


def with_sources(desc: Iterable[Sequence[Any]], values: Mapping[str, float]) -> list[tuple]:
    """Copy of ``desc`` with every source set from ``values`` (missing ones set to 0)."""
    out: list[tuple] = []
    for item in desc:
        kind, name = item[0], item[1]
        if kind in ("V", "I"):
            out.append((*item[:4], values.get(name, 0.0)))
        elif kind == "OA":
            out.append(
                (
                    *item[:6],
                    values.get(f"{name}.Vos", 0.0),
                    values.get(f"{name}.Ib+", 0.0),
                    values.get(f"{name}.Ib-", 0.0),
                    *item[9:],
                )
            )
        else:
            out.append(tuple(item))
    return out


def floating_nodes(desc: Iterable[Sequence[Any]]) -> set[str]:
    """Nodes without a DC path to ground (resistors, voltage sources, op-amp outputs)."""
    desc = _expand(list(desc))
    adj: dict[str, set[str]] = {n: set() for n in [GROUND, *nodes_of(desc)]}

    def link(a: str, b: str) -> None:
        adj[a].add(b)
        adj[b].add(a)

    for item in desc:
        if item[0] in ("R", "V"):
            link(canonical_node(item[2]), canonical_node(item[3]))
        elif item[0] == "OA":
            link(canonical_node(item[4]), GROUND)
    reached = {GROUND}
    todo = [GROUND]
    while todo:
        for m in adj[todo.pop()]:
            if m not in reached:
                reached.add(m)
                todo.append(m)
    return set(adj) - reached


# -- building and solving the system ---------------------------------------------------


def _exact_number(x: Any) -> Fraction:
    """A float read through its shortest decimal form (``0.1 -> 1/10``), as opsym reads it."""
    if isinstance(x, float):
        if not math.isfinite(x):
            raise ValueError(f"{x} is not a finite value")
        return Fraction(repr(x))
    return Fraction(x)


def _expand(desc: Sequence[Sequence[Any]]) -> list[tuple]:
    """The description with each op-amp's Ro, Rid and Ricm drawn as resistors."""
    out: list[tuple] = []
    for item in desc:
        if item[0] != "OA" or len(item) < 10 or not item[9]:
            out.append(tuple(item[:9]) if item[0] == "OA" else tuple(item))
            continue
        name, plus, minus, pin = item[1], item[2], item[3], item[4]
        extras = dict(item[9])
        if "Rid" in extras:
            out.append(("R", f"{name}#Rid", plus, minus, extras["Rid"]))
        if "Ricm" in extras:
            out.append(("R", f"{name}#Ricm+", plus, GROUND, extras["Ricm"]))
            out.append(("R", f"{name}#Ricm-", minus, GROUND, extras["Ricm"]))
        if "Ro" in extras:
            inner = f"{name}#o"
            out.append(("R", f"{name}#Ro", inner, pin, extras["Ro"]))
            pin = inner
        out.append((item[0], name, plus, minus, pin, *item[5:9]))
    return out


def _system(desc: Sequence[Sequence[Any]], exact: bool):
    """Return (matrix rows, rhs, node list) of the eliminated nodal system."""
    num = _exact_number if exact else float
    desc = _expand(desc)
    nodes = nodes_of(desc)
    index = {n: i for i, n in enumerate(nodes)}
    n = len(nodes)
    zero = num(0)
    kcl = [[zero] * n for _ in range(n)]  # currents leaving the node through resistors
    rhs = [zero] * n  # currents injected into the node by sources
    branches: list[tuple[str, dict[int, int]]] = []  # unknown currents: name, incidence
    constraints: list[tuple[dict[int, Any], Any]] = []

    def at(node: str) -> int | None:
        node = canonical_node(node)
        return None if node == GROUND else index[node]

    for item in desc:
        kind, name = item[0], item[1]
        if kind == "R":
            a, b, g = at(item[2]), at(item[3]), 1 / num(item[4])
            for i, j in ((a, b), (b, a)):
                if i is not None:
                    kcl[i][i] += g
                    if j is not None:
                        kcl[i][j] -= g
        elif kind == "C":
            continue
        elif kind == "I":
            a, b, val = at(item[2]), at(item[3]), num(item[4])
            if a is not None:
                rhs[a] -= val
            if b is not None:
                rhs[b] += val
        elif kind == "V":
            p, m, val = at(item[2]), at(item[3]), num(item[4])
            inc = {}
            row: dict[int, Any] = {}
            if p is not None:
                inc[p] = 1
                row[p] = num(1)
            if m is not None:
                inc[m] = inc.get(m, 0) - 1
                row[m] = row.get(m, zero) - 1
            branches.append((f"voltage source {name}", inc))
            constraints.append((row, val))
        elif kind == "OA":
            plus, minus, out = at(item[2]), at(item[3]), at(item[4])
            gain, vos, ibp, ibm = item[5], num(item[6]), num(item[7]), num(item[8])
            if out is None:
                raise ReferenceSingularError(f"op-amp {name}: output on ground")
            if plus is not None:
                rhs[plus] -= ibp
            if minus is not None:
                rhs[minus] -= ibm
            row = {}
            if gain is not None:
                row[out] = 1 / num(gain)
            for node, sign in ((plus, -1), (minus, 1)):
                if node is not None:
                    row[node] = row.get(node, zero) + sign
            branches.append((f"op-amp {name} output", {out: 1}))
            constraints.append((row, vos))
        else:
            raise ValueError(f"unknown element kind {kind!r} in {item!r}")

    # eliminate the unknown branch currents by row operations
    k = len(branches)
    bmat = [[num(inc.get(i, 0)) for (_, inc) in branches] for i in range(n)]
    alive = list(range(n))
    freed: list[int] = []
    for j, (label, _) in enumerate(branches):
        pivot = next((r for r in alive if bmat[r][j] != 0), None)
        if pivot is None:
            raise ReferenceSingularError(
                f"{label} closes a loop of voltage-defined branches "
                f"({', '.join(lbl for lbl, _ in branches[: j + 1])})"
            )
        alive.remove(pivot)
        for r in alive:
            if bmat[r][j] != 0:
                f = bmat[r][j] / bmat[pivot][j]
                kcl[r] = [x - f * y for x, y in zip(kcl[r], kcl[pivot], strict=True)]
                rhs[r] -= f * rhs[pivot]
                bmat[r] = [x - f * y for x, y in zip(bmat[r], bmat[pivot], strict=True)]
        freed.append(pivot)
    assert len(freed) == k
    rows = [kcl[r] for r in alive]
    vec = [rhs[r] for r in alive]
    for row, val in constraints:
        rows.append([row.get(i, zero) for i in range(n)])
        vec.append(val)
    return rows, vec, nodes


def _solve_exact(rows: list[list[Fraction]], vec: list[Fraction]) -> list[Fraction]:
    n = len(rows)
    a = [[*r, v] for r, v in zip(rows, vec, strict=True)]
    for col in range(n):
        pivot = next((r for r in range(col, n) if a[r][col] != 0), None)
        if pivot is None:
            raise ReferenceSingularError("the nodal matrix is singular (exact elimination)")
        a[col], a[pivot] = a[pivot], a[col]
        p = a[col][col]
        for r in range(col + 1, n):
            if a[r][col] != 0:
                f = a[r][col] / p
                a[r] = [x - f * y for x, y in zip(a[r], a[col], strict=True)]
    x = [Fraction(0)] * n
    for r in range(n - 1, -1, -1):
        s = a[r][n] - sum(a[r][c] * x[c] for c in range(r + 1, n))
        x[r] = s / a[r][r]
    return x


def _solve_float(rows: list[list[float]], vec: list[float]) -> tuple[np.ndarray, float]:
    m = np.array(rows, dtype=np.float64)
    b = np.array(vec, dtype=np.float64)
    if m.size == 0:
        return np.zeros(0), 1.0
    # equilibrate: scale rows, then columns, to unit largest entry
    r = np.max(np.abs(m), axis=1)
    if np.any(r == 0):
        raise ReferenceSingularError("the nodal matrix has an empty row")
    m = m / r[:, None]
    b = b / r
    c = np.max(np.abs(m), axis=0)
    if np.any(c == 0):
        raise ReferenceSingularError("the nodal matrix has an empty column")
    m = m / c[None, :]
    cond = float(np.linalg.cond(m))
    if not math.isfinite(cond) or cond > 1e14:
        raise ReferenceSingularError(f"the nodal matrix is singular (condition {cond:.3g})")
    y = np.linalg.solve(m, b)
    return y / c, cond


def solve(desc: Sequence[Sequence[Any]], exact: bool | None = None) -> dict[str, float]:
    """Return every node voltage (ground included) of a DC operating point.

    ``exact=None`` solves in float64 and falls back to exact rationals when the
    equilibrated matrix is worse conditioned than :data:`COND_LIMIT`;
    ``exact=True`` always works in rationals (and decides singularity exactly);
    ``exact=False`` never does.
    """
    desc = list(desc)
    floating = floating_nodes(desc)
    if floating:
        raise ReferenceSingularError(f"floating nodes: {', '.join(sorted(floating))}")
    if exact:
        rows, vec, nodes = _system(desc, exact=True)
        sol = [float(x) for x in _solve_exact(rows, vec)]
    else:
        rows, vec, nodes = _system(desc, exact=False)
        x, cond = _solve_float(rows, vec)
        if cond > COND_LIMIT and exact is None:
            rows, vec, nodes = _system(desc, exact=True)
            sol = [float(v) for v in _solve_exact(rows, vec)]
        else:
            sol = [float(v) for v in x]
    out = {GROUND: 0.0}
    out.update(zip(nodes, sol, strict=True))
    return out


def solve_fractions(desc: Sequence[Sequence[Any]]) -> dict[str, Fraction]:
    """Every node voltage as an exact :class:`~fractions.Fraction` (values may be Fractions)."""
    desc = list(desc)
    floating = floating_nodes(desc)
    if floating:
        raise ReferenceSingularError(f"floating nodes: {', '.join(sorted(floating))}")
    rows, vec, nodes = _system(desc, exact=True)
    out = {GROUND: Fraction(0)}
    out.update(zip(nodes, _solve_exact(rows, vec), strict=True))
    return out


def zero_of_coefficient(
    desc: Sequence[Sequence[Any]],
    output: str | tuple[str, str],
    source: str | Mapping[str, float],
    part: str,
) -> Fraction | None:
    """The value of resistor ``part`` at which ``source``'s coefficient vanishes, or None.

    One resistor enters the nodal matrix as a rank-one term, so a coefficient is a
    bilinear (Möbius) function of its value, ``(a + b·R)/(c + d·R)``. Three exact
    samples fix it (a fourth checks the form); the zero is ``-a/b``, kept only if it
    is not also a pole. None means no finite zero (or a coefficient that does not
    depend on ``part``). ``source`` may be a mapping of source weights, e.g.
    ``{"U1.Ib+": 1, "U1.Ib-": 1}`` for the coefficient of the average bias ``U1.Ib``.
    """
    weights = {source: 1.0} if isinstance(source, str) else dict(source)

    def coef(r: Fraction) -> Fraction:
        moved = [(*it[:4], r) if it[1] == part else it for it in desc]
        return _difference(solve_fractions(with_sources(moved, weights)), output)

    rs = [Fraction(1), Fraction(1000), Fraction(10**6), Fraction(7, 3)]
    ys = [coef(r) for r in rs]
    if len(set(ys)) == 1:  # R does not move it (identically zero, or a constant)
        return None
    # a + b·R - d·y·R = c·y; try c = 1, then d = 1 (a coefficient ∝ 1/R has c = 0)
    for unknowns in ("c", "d"):
        rows = []
        rhs = []
        for r, y in zip(rs[:3], ys[:3], strict=True):
            if unknowns == "c":  # c = 1; unknowns a, b, d
                rows.append([Fraction(1), r, -y * r])
                rhs.append(y)
            else:  # d = 1; unknowns a, b, c
                rows.append([Fraction(1), r, -y])
                rhs.append(y * r)
        try:
            a, b, third = _solve_exact(rows, rhs)
        except ReferenceSingularError:
            continue
        c, d = (Fraction(1), third) if unknowns == "c" else (third, Fraction(1))
        r4, y4 = rs[3], ys[3]
        if (a + b * r4) != y4 * (c + d * r4):
            raise AssertionError(f"coefficient of {source} is not bilinear in {part}")
        if b == 0:
            return None
        r0 = -a / b
        if c + d * r0 == 0:
            return None
        return r0
    raise AssertionError(f"could not fit the coefficient of {source} in {part}")


def _difference(volts: Mapping[str, Any], output: str | tuple[str, str]) -> Any:
    """The output in the voltages' own type (a Fraction stays exact)."""
    if isinstance(output, tuple):
        return volts[canonical_node(output[0])] - volts[canonical_node(output[1])]
    return volts[canonical_node(output)]


def _read(volts: Mapping[str, Any], output: str | tuple[str, str]) -> float:
    """The output as a float; a difference of exact voltages is taken exactly first
    (two nearly equal floats would lose digits: a follower's input minus its output)."""
    return float(_difference(volts, output))


def _solved(desc: Sequence[Sequence[Any]], exact: bool | None) -> Mapping[str, Any]:
    """Node voltages: exact Fractions with ``exact=True``, else :func:`solve`'s floats."""
    return solve_fractions(desc) if exact else solve(desc, exact=exact)


def coefficients(
    desc: Sequence[Sequence[Any]],
    output: str | tuple[str, str],
    exact: bool | None = None,
) -> dict[str, float]:
    """Superposition: the output for each independent source alone at unit value."""
    return {
        s: _read(_solved(with_sources(desc, {s: 1.0}), exact), output)
        for s in source_names(desc)
    }


def coefficients_with_scale(
    desc: Sequence[Sequence[Any]],
    output: str | tuple[str, str],
    exact: bool | None = None,
) -> dict[str, tuple[float, float]]:
    """Like :func:`coefficients`, with the largest node voltage of each unit-source run.

    The scale is the natural absolute floor for a coefficient that is (nearly) zero
    by cancellation: round-off is relative to the voltages the run produces.
    """
    out = {}
    for s in source_names(desc):
        volts = _solved(with_sources(desc, {s: 1.0}), exact)
        out[s] = (_read(volts, output), float(max(abs(v) for v in volts.values())))
    return out


def output_value(
    desc: Sequence[Sequence[Any]], output: str | tuple[str, str], exact: bool | None = None
) -> float:
    """The output with every source at its described value."""
    return _read(_solved(desc, exact), output)


# -- the same circuit in opsym --------------------------------------------------------


def to_circuit(
    desc: Sequence[Sequence[Any]],
    symbolic: Iterable[str] = (),
    title: str = "",
    opamp_options: Mapping[str, Any] | None = None,
):
    """Build the equivalent ``opsym.Circuit``.

    Passive parts and op-amp gains named in ``symbolic`` stay symbols (an op-amp's
    gain is symbolic when its own name is listed, giving ``U1.A``); every other one
    gets its numeric value. Sources are always symbolic, so that each one is a term.
    ``opamp_options`` go to every ``Circuit.opamp`` call (e.g. ``cmrr=True``). An
    op-amp's ``Ro``/``Rid``/``Ricm`` become the kinds ``ro``/``rid``/``ricm`` (symbols
    ``U1.Ro`` …, valued by :func:`numeric_values`).
    """
    import opsym

    symbolic = set(symbolic)
    c = opsym.Circuit(title)
    for item in desc:
        kind, name = item[0], item[1]
        if kind == "R":
            c.resistor(name, item[2], item[3], value=None if name in symbolic else item[4])
        elif kind == "C":
            c.capacitor(name, item[2], item[3], value=None if name in symbolic else item[4])
        elif kind == "V":
            c.voltage_source(name, item[2], item[3])
        elif kind == "I":
            c.current_source(name, item[2], item[3])
        elif kind == "OA":
            gain = item[5]
            if gain is None:
                g: Any = "ideal"
            elif name in symbolic:
                g = "finite"
            else:
                g = gain
            kinds = {"Ro": "ro", "Rid": "rid", "Ricm": "ricm"}
            extra = [kinds[k] for k in (item[9] if len(item) > 9 and item[9] else {})]
            c.opamp(name, plus=item[2], minus=item[3], out=item[4], gain=g, extra=extra,
                    **(opamp_options or {}))  # fmt: skip
        else:
            raise ValueError(f"unknown element kind {kind!r}")
    return c


def numeric_values(circuit, desc: Sequence[Sequence[Any]], symbolic: Iterable[str]) -> dict:
    """Symbol -> value for the parts that ``to_circuit`` left symbolic."""
    out = {}
    for item in desc:
        if item[0] == "OA" and len(item) > 9 and item[9]:  # always symbols in opsym
            out.update((circuit.symbol(f"{item[1]}.{k}"), v) for k, v in item[9].items())
        if item[1] not in set(symbolic):
            continue
        if item[0] in ("R", "C"):
            out[circuit.symbol(item[1])] = item[4]
        elif item[0] == "OA" and item[5] is not None:
            out[circuit.symbol(f"{item[1]}.A")] = item[5]
    return out
