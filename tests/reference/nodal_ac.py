"""An independent complex nodal solver: every source's transfer at one complex frequency.

It reads an ``opsym.Circuit``'s element records (names, nodes, values, op-amp
pins and declared non-ideal kinds) and writes its own equations from KCL, at a
given complex ``s`` with numeric component values. It never calls
``opsym.equations`` or evaluates an expression opsym derived: the op-amp's
open-loop gain is rebuilt here from its parameters.

Element models at ``s``
-----------------------
* resistor: conductance ``1/R``; with ``thermal=True`` it becomes ``R`` from ``a`` to
  an internal node ``x`` plus a voltage source ``V(b) - V(x) = R.en`` (its thermal
  noise voltage in series, so that ``V(a) - V(b) = R·I(a→b) - R.en``);
* capacitor: admittance ``s·C`` (open at ``s = 0``);
* inductor: admittance ``1/(s·L)``; at ``s = 0`` a zero-volt branch (a wire);
* voltage source: ``V(plus) - V(minus) = value``; current source: ``value`` amperes
  from ``a`` through it into ``b``;
* op-amp: ``V(out)/A(s) - (V(+) - V(-)) = Σ series sources``, output referred to
  ground. ``A`` is read from the declaration: ideal (``1/A = 0``), a number,
  the symbol ``U.A`` (value from ``values``) or the single-pole model of the
  parameters ``U.A0`` and ``U.GBW``, ``1/A(s) = 1/A0 + s/(2π·GBW)`` (the
  documented model ``A(s) = A0/(1 + s·A0/(2π·GBW))``).
  The multi-pole model of ``U.A0``, ``U.GBW``, ``U.f2``, ``U.f3``… is rebuilt as
  ``1/A(s) = (1/A0 + s/(2π·GBW))·Π(1 + s/(2π·fk))``.
* op-amp sources, by declared kind (the conventions of ``docs/conventions.md``):
  in series with the ``+`` pin ``Vos`` (offset), ``Vcm/CMRR`` (cmrr), ``dVs/PSRR``
  (psrr) and ``en`` (vnoise); into the pins ``Ib+``/``Ib-`` (bias) and
  ``in+``/``in-`` (inoise). ``cmrr-pole``/``psrr-pole`` multiply the weight of
  ``Vcm``/``dVs`` by ``1 + s/(2π·fcmrr)``/``1 + s/(2π·fpsrr)``.
* op-amp impedances, as elements of their own (not as opsym stamps them): the
  controlled source drives an internal node, and ``Ro`` (resistor) and ``Lo``
  (inductor) lead from it to the output pin in series (``ro``, ``lo``); ``Rid``
  and ``Cid`` are a resistor and a capacitor between the pins (``rid``, ``cid``);
  ``Ricm`` and ``Ccm`` one from each pin to ground (``ricm``, ``ccm``).

Formulation
-----------
As in :mod:`nodal`: node voltages are the only unknowns. KCL rows are written
with the currents of voltage-defined branches unknown; each such current is
eliminated by integer row operations on the branch incidence (exact in any
arithmetic), and the freed rows take the branch constraints. One right-hand
column per independent source gives all transfers from one matrix.

The square system is solved in complex float64 (``numpy.linalg.solve`` after row
and column equilibration); when the equilibrated condition number exceeds
:data:`COND_LIMIT` it is solved again in 40-digit complex ``mpmath`` arithmetic.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from fractions import Fraction
from typing import Any

import mpmath
import numpy as np
from nodal import ReferenceSingularError

__all__ = [
    "COND_LIMIT",
    "ReferenceSingularError",
    "laplace",
    "noise_density",
    "thermal_density",
    "transfers",
    "transfers_with_scale",
]

GROUND = "0"
#: float64 solutions are trusted up to this (equilibrated) condition number.
COND_LIMIT = 1e5
#: beyond this the matrix counts as singular
SINGULAR = 1e13
_DIGITS = 40

# where each declared op-amp kind acts: series sources (suffix, weight parameter or None)
# and pin currents (suffix, pin)
_SERIES = {
    "offset": [("Vos", None)],
    "cmrr": [("Vcm", "CMRR")],
    "psrr": [("dVs", "PSRR")],
    "vnoise": [("en", None)],
}
_PINS = {
    "bias": [("Ib+", "plus"), ("Ib-", "minus")],
    "inoise": [("in+", "plus"), ("in-", "minus")],
}
# impedances between pins: (parameter, R or C, [(pin, pin)…]); the rejection corners
_SHUNTS = {
    "rid": ("Rid", "R", [("plus", "minus")]),
    "cid": ("Cid", "C", [("plus", "minus")]),
    "ricm": ("Ricm", "R", [("plus", "ground"), ("minus", "ground")]),
    "ccm": ("Ccm", "C", [("plus", "ground"), ("minus", "ground")]),
}
_CORNERS = {"cmrr-pole": ("Vcm", "fcmrr"), "psrr-pole": ("dVs", "fpsrr")}


def laplace(f: float) -> complex:
    """``s = j·2π·f``."""
    return 2j * math.pi * float(f)


# -- reading the circuit -------------------------------------------------------------


def _fraction(x: Any) -> Fraction:
    """A number read exactly: floats through their shortest decimal form (as opsym reads them)."""
    if isinstance(x, float):
        return Fraction(repr(x))
    if isinstance(x, (int, Fraction)):
        return Fraction(x)
    # a SymPy number
    if getattr(x, "is_Rational", False):
        return Fraction(int(x.p), int(x.q))
    if getattr(x, "is_number", False):
        return Fraction(repr(float(x)))
    raise ValueError(f"{x!r} is not a number")


def _lookup(values: Mapping[str, Any], name: str) -> Fraction:
    try:
        return _fraction(values[name])
    except KeyError:
        raise ValueError(f"the reference needs a value for {name}") from None


def _value(element, values: Mapping[str, Any]) -> Fraction:
    """A two-terminal element's number: its own value, or ``values[name]`` when symbolic."""
    v = element.value
    if not v.free_symbols:
        return _fraction(v)
    if {x.name for x in v.free_symbols} != {element.name}:
        raise ValueError(f"{element.name}: the reference reads plain values or its own symbol")
    return _lookup(values, element.name)


def _gain_model(amp, values: Mapping[str, Any]):
    """``("ideal",)``, ``("finite", A)`` or ``("pole", A0, GBW)`` from the declaration."""
    g = amp.gain
    if g is None:
        return ("ideal",)
    names = {x.name for x in g.free_symbols}
    u = amp.name
    if not names:
        return ("finite", _fraction(g))
    if names == {f"{u}.A"}:
        return ("finite", _lookup(values, f"{u}.A"))
    if names == {f"{u}.A0", f"{u}.GBW", "s"}:
        return ("pole", _lookup(values, f"{u}.A0"), _lookup(values, f"{u}.GBW"))
    further = sorted(n for n in names if n.startswith(f"{u}.f"))
    if names == {f"{u}.A0", f"{u}.GBW", "s", *further} and further == [
        f"{u}.f{k}" for k in range(2, len(further) + 2)
    ]:
        return ("pole", _lookup(values, f"{u}.A0"), _lookup(values, f"{u}.GBW"),
                *(_lookup(values, n) for n in further))  # fmt: skip
    raise ValueError(f"op-amp {u}: no reference model for the gain {g}")


def _records(circuit, values: Mapping[str, Any], thermal: bool) -> list[tuple]:
    """Plain records of the circuit (numbers as Fractions), independent of opsym's stamps.

    ``("Y", a, b, kind, number)`` two-terminal impedance of ``kind`` R/C/L;
    ``("J", a, b, source, weight)`` a current ``weight·source`` from ``a`` into ``b``;
    ``("E", p, m, source, weight)`` a branch ``V(p) - V(m) = weight·source``;
    ``("OA", name, plus, minus, out, model, [(source, weight, corner or None)…])``.
    """
    from opsym.model.elements import (
        Capacitor,
        CurrentSource,
        Inductor,
        OpAmp,
        Resistor,
        VoltageSource,
    )

    out: list[tuple] = []
    for e in circuit.elements:
        if isinstance(e, Resistor):
            r = _value(e, values)
            if thermal:
                x = f"{e.name}#x"
                out += [("Y", e.a, x, "R", r), ("E", e.b, x, e.name, Fraction(1))]
            else:
                out.append(("Y", e.a, e.b, "R", r))
        elif isinstance(e, Capacitor):
            out.append(("Y", e.a, e.b, "C", _value(e, values)))
        elif isinstance(e, Inductor):
            out.append(("Y", e.a, e.b, "L", _value(e, values)))
        elif isinstance(e, VoltageSource):
            out.append(("E", e.a, e.b, e.name, Fraction(1)))
        elif isinstance(e, CurrentSource):
            out.append(("J", e.a, e.b, e.name, Fraction(1)))
        elif isinstance(e, OpAmp):
            out += _opamp_records(e, values)
        else:
            raise ValueError(f"no reference model for {type(e).__name__} {e.name}")
    return out


def _opamp_records(e, values: Mapping[str, Any]) -> list[tuple]:
    """The op-amp, its sources and its impedances as plain records."""
    out: list[tuple] = []
    series = []
    kinds = [k.kind for k in e.nonideals]
    pins = {"plus": e.plus, "minus": e.minus, "ground": GROUND}
    for kind in kinds:
        if kind in _SERIES:
            for suffix, param in _SERIES[kind]:
                w = Fraction(1)
                if param is not None:
                    w = 1 / _lookup(values, f"{e.name}.{param}")
                corner = None
                for k, (src, fc) in _CORNERS.items():
                    if src == suffix and k in kinds:
                        corner = _lookup(values, f"{e.name}.{fc}")
                series.append((f"{e.name}.{suffix}", w, corner))
        elif kind in _PINS:
            for suffix, pin in _PINS[kind]:
                out.append(("J", pins[pin], GROUND, f"{e.name}.{suffix}", Fraction(1)))
        elif kind in _SHUNTS:
            param, what, pairs = _SHUNTS[kind]
            for a, b in pairs:
                out.append(("Y", pins[a], pins[b], what, _lookup(values, f"{e.name}.{param}")))
        elif kind not in ("ro", "lo", *_CORNERS):
            raise ValueError(f"op-amp {e.name}: no reference model for kind {kind!r}")
    node = e.out  # the controlled source's own node, then Ro and Lo in series to the pin
    for kind, param, what in (("ro", "Ro", "R"), ("lo", "Lo", "L")):
        if kind in kinds:
            inner = f"{e.name}#{param}"
            out.append(("Y", inner, node, what, _lookup(values, f"{e.name}.{param}")))
            node = inner
    out.append(("OA", e.name, e.plus, e.minus, node, _gain_model(e, values), series))
    return out


# -- the system ------------------------------------------------------------------------


class _Numbers:
    """Arithmetic of one run: complex float64 or 40-digit mpmath complex."""

    def __init__(self, precise: bool, f: Any) -> None:
        self.precise = precise
        if precise:
            self.ctx = mpmath.mp.clone()
            self.ctx.dps = _DIGITS
            self.s = self.ctx.mpc(0, 2 * self.ctx.pi * self.ctx.mpf(repr(float(f))))
        else:
            self.s = 2j * math.pi * f
        self.zero = self.num(0)
        self.one = self.num(1)

    def num(self, x: Fraction | int) -> Any:
        x = Fraction(x)
        if self.precise:
            return self.ctx.mpf(x.numerator) / x.denominator + self.ctx.mpc(0)
        return complex(x.numerator / x.denominator)


def _build(records: list[tuple], nums: _Numbers, sources: list[str]):
    """(rows, rhs columns, node list) of the eliminated nodal system at ``nums.s``."""
    nodes: list[str] = []
    for rec in records:
        pins = rec[2:5] if rec[0] == "OA" else rec[1:3]
        for p in pins:
            if p != GROUND and p not in nodes:
                nodes.append(p)
    index = {n: i for i, n in enumerate(nodes)}
    col = {name: j for j, name in enumerate(sources)}
    n, m = len(nodes), len(sources)
    z = nums.zero
    kcl = [[z] * n for _ in range(n)]  # currents leaving each node through admittances
    rhs = [[z] * m for _ in range(n)]  # source currents injected into each node
    branches: list[tuple[str, dict[int, int]]] = []
    constraints: list[tuple[dict[int, Any], dict[int, Any]]] = []
    s = nums.s

    def at(node):
        return None if node == GROUND else index[node]

    def admittance(a, b, y):
        for i, j in ((a, b), (b, a)):
            if i is not None:
                kcl[i][i] += y
                if j is not None:
                    kcl[i][j] -= y

    def branch(label, p, mnode, row, srcs):
        inc = {}
        if p is not None:
            inc[p] = 1
        if mnode is not None:
            inc[mnode] = inc.get(mnode, 0) - 1
        branches.append((label, inc))
        constraints.append((row, srcs))

    for rec in records:
        kind = rec[0]
        if kind == "Y":
            _, a, b, what, v = rec
            a, b = at(a), at(b)
            v = nums.num(v)
            if what == "R":
                admittance(a, b, 1 / v)
            elif what == "C":
                admittance(a, b, s * v)
            elif s == 0:  # an inductor at DC: a wire, V(a) - V(b) = 0
                row = {}
                if a is not None:
                    row[a] = nums.one
                if b is not None:
                    row[b] = row.get(b, z) - 1
                branch("inductor", a, b, row, {})
            else:
                admittance(a, b, 1 / (s * v))
        elif kind == "J":
            _, a, b, name, w = rec
            a, b = at(a), at(b)
            w = nums.num(w)
            if a is not None:
                rhs[a][col[name]] -= w
            if b is not None:
                rhs[b][col[name]] += w
        elif kind == "E":
            _, p, mnode, name, w = rec
            p, mnode = at(p), at(mnode)
            row = {}
            if p is not None:
                row[p] = nums.one
            if mnode is not None:
                row[mnode] = row.get(mnode, z) - 1
            branch(f"source {name}", p, mnode, row, {col[name]: nums.num(w)})
        else:  # op-amp
            _, name, plus, minus, out, model, series = rec
            plus, minus, out = at(plus), at(minus), at(out)
            if model[0] == "ideal":
                inv = z
            elif model[0] == "finite":
                inv = 1 / nums.num(model[1])
            else:
                a0, gbw = nums.num(model[1]), nums.num(model[2])
                pi = nums.ctx.pi if nums.precise else math.pi
                inv = 1 / a0 + s / (2 * pi * gbw)
                for fk in model[3:]:  # further poles
                    inv = inv * (1 + s / (2 * pi * nums.num(fk)))
            row = {out: inv}
            for node, sign in ((plus, -1), (minus, 1)):
                if node is not None:
                    row[node] = row.get(node, z) + sign
            srcs: dict[int, Any] = {}
            pi = nums.ctx.pi if nums.precise else math.pi
            for src, w, corner in series:
                rise = 1 if corner is None else 1 + s / (2 * pi * nums.num(corner))
                srcs[col[src]] = srcs.get(col[src], z) + nums.num(w) * rise
            branch(f"op-amp {name} output", out, None, row, srcs)

    # eliminate the unknown branch currents (integer incidence: exact row operations)
    bmat = [[inc.get(i, 0) for (_, inc) in branches] for i in range(n)]
    alive = list(range(n))
    for j, (label, _) in enumerate(branches):
        pivot = next((r for r in alive if bmat[r][j] != 0), None)
        if pivot is None:
            raise ReferenceSingularError(f"{label} closes a loop of voltage-defined branches")
        alive.remove(pivot)
        for r in alive:
            if bmat[r][j] != 0:
                f = Fraction(bmat[r][j], bmat[pivot][j])
                fn = nums.num(f)
                kcl[r] = [x - fn * y for x, y in zip(kcl[r], kcl[pivot], strict=True)]
                rhs[r] = [x - fn * y for x, y in zip(rhs[r], rhs[pivot], strict=True)]
                bmat[r] = [x - f * y for x, y in zip(bmat[r], bmat[pivot], strict=True)]
    rows = [kcl[r] for r in alive]
    vec = [rhs[r] for r in alive]
    for row, srcs in constraints:
        rows.append([row.get(i, z) for i in range(n)])
        vec.append([srcs.get(k, z) for k in range(m)])
    return rows, vec, nodes


def _solve_float(rows, vec) -> tuple[np.ndarray, float]:
    a = np.array(rows, dtype=complex)
    b = np.array(vec, dtype=complex).reshape(len(rows), -1)
    if a.size == 0:
        return np.zeros((0, b.shape[1]), dtype=complex), 1.0
    r = np.max(np.abs(a), axis=1)
    if np.any(r == 0):
        raise ReferenceSingularError("the nodal matrix has an empty row")
    a, b = a / r[:, None], b / r[:, None]
    c = np.max(np.abs(a), axis=0)
    if np.any(c == 0):
        raise ReferenceSingularError("the nodal matrix has an empty column")
    a = a / c[None, :]
    cond = float(np.linalg.cond(a))
    if not math.isfinite(cond) or cond > SINGULAR:
        raise ReferenceSingularError(f"the nodal matrix is singular (condition {cond:.3g})")
    return np.linalg.solve(a, b) / c[:, None], cond


def _solve_precise(rows, vec, ctx) -> list[list[Any]]:
    """Gaussian elimination with partial pivoting on every right-hand column at once."""
    n = len(rows)
    a = [[*r, *v] for r, v in zip(rows, vec, strict=True)]
    scale = max((abs(x) for r in rows for x in r), default=1)
    for k in range(n):
        p = max(range(k, n), key=lambda i: abs(a[i][k]))
        if abs(a[p][k]) <= scale * ctx.mpf(10) ** (-_DIGITS + 5):
            raise ReferenceSingularError("the nodal matrix is singular (40-digit elimination)")
        a[k], a[p] = a[p], a[k]
        for i in range(k + 1, n):
            if a[i][k] != 0:
                f = a[i][k] / a[k][k]
                a[i] = [x - f * y for x, y in zip(a[i], a[k], strict=True)]
    m = len(a[0]) - n
    x = [[ctx.mpc(0)] * m for _ in range(n)]
    for i in range(n - 1, -1, -1):
        for j in range(m):
            acc = a[i][n + j] - sum(a[i][c] * x[c][j] for c in range(i + 1, n))
            x[i][j] = acc / a[i][i]
    return x


def _sources(records: list[tuple]) -> list[str]:
    names: list[str] = []
    for rec in records:
        if rec[0] in ("J", "E") and rec[3] is not None:
            names.append(rec[3])
        elif rec[0] == "OA":
            names += [src for src, _, _ in rec[6]]
    return list(dict.fromkeys(names))


def _read(volts: Mapping[str, Any], output) -> Any:
    if isinstance(output, tuple):
        return volts.get(output[0], 0) - volts.get(output[1], 0)
    return volts.get(output, 0)


def transfers_with_scale(
    circuit,
    output: str | tuple[str, str],
    f: float,
    values: Mapping[str, Any] | None = None,
    thermal: bool = False,
    precise: bool | None = None,
) -> dict[str, tuple[complex, float]]:
    """``{source: (H, scale)}`` at ``s = j·2π·f`` (``f = 0``: DC).

    ``H`` is the output for that source alone at unit value (V/V or V/A), ``scale``
    the largest node-voltage magnitude of that run: the natural absolute floor for
    a transfer that is nearly zero by cancellation. Sources are the circuit's
    signals, each op-amp's declared sources and, with ``thermal``, each
    resistor's thermal noise voltage under the resistor's name. ``precise=None``
    falls back to 40-digit arithmetic beyond :data:`COND_LIMIT`; ``True`` always
    uses it.
    """
    records = _records(circuit, dict(values or {}), thermal)
    names = _sources(records)
    if not precise:
        nums = _Numbers(False, f)
        rows, vec, nodes = _build(records, nums, names)
        x, cond = _solve_float(rows, vec)
        if cond <= COND_LIMIT or precise is False:
            out = {}
            for j, name in enumerate(names):
                volts = {node: x[i, j] for i, node in enumerate(nodes)}
                scale = float(np.max(np.abs(x[:, j]))) if len(nodes) else 0.0
                out[name] = (complex(_read(volts, output)), scale)
            return out
    nums = _Numbers(True, f)
    rows, vec, nodes = _build(records, nums, names)
    x = _solve_precise(rows, vec, nums.ctx)
    out = {}
    for j, name in enumerate(names):
        volts = {node: x[i][j] for i, node in enumerate(nodes)}
        scale = float(max((abs(x[i][j]) for i in range(len(nodes))), default=0))
        out[name] = (complex(_read(volts, output)), scale)
    return out


def transfers(
    circuit,
    output: str | tuple[str, str],
    f: float,
    values: Mapping[str, Any] | None = None,
    thermal: bool = False,
) -> dict[str, complex]:
    """``{source: H(j·2π·f)}``: see :func:`transfers_with_scale`."""
    got = transfers_with_scale(circuit, output, f, values, thermal)
    return {k: h for k, (h, _) in got.items()}


def noise_density(
    circuit,
    output: str | tuple[str, str],
    f: float,
    densities: Mapping[str, float],
    values: Mapping[str, Any] | None = None,
) -> float:
    """Total output noise density (V/√Hz) from ``{source: white density}``, added in power."""
    h = transfers(circuit, output, f, values, thermal=True)
    return math.sqrt(sum(abs(h[k]) ** 2 * d**2 for k, d in densities.items()))


def thermal_density(ohms: float, kelvin: float, boltzmann: float = 1.380649e-23) -> float:
    """Johnson–Nyquist ``√(4kTR)``, V/√Hz."""
    return math.sqrt(4 * boltzmann * kelvin * ohms)
