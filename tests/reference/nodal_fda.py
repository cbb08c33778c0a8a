"""An independent DC solver for circuits with fully differential amplifiers.

It shares no code with ``opsym.equations``: the unknowns are the node voltages
*and* the two output currents of each FDA, every KCL row is kept, and each FDA
adds its two defining equations written as the model states them
(``docs/conventions.md``, from the textbook FDA model, e.g. the published
application report "Fully-Differential Amplifiers", J. Karki, SLOA054 — from
memory):

* differential: ``A·(V(+) − V(−) + Vos) − (V(op) − V(on)) = 0``, or for the
  ideal FDA (``gain=None``) ``V(+) − V(−) + Vos = 0``;
* output common mode: ``(V(op) + V(on))/2 − V(vocm) − Voscm − ebal·(V(op) − V(on)) = 0``.

Description: a list of tuples

* ``("R", name, a, b, ohms)``, ``("V", name, plus, minus, volts)``,
  ``("I", name, a, b, amperes)`` (flowing through it from ``a`` into ``b``);
* ``("FDA", name, plus, minus, op, on, vocm, gain, ebal, sources)`` where
  ``sources`` maps ``"Vos"``, ``"Ib+"``, ``"Ib-"``, ``"Voscm"`` to values (missing: 0);
  the bias currents flow *into* the pins.

Everything is exact (``fractions.Fraction``); Gaussian elimination with a
nonzero pivot decides singularity exactly.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from fractions import Fraction
from typing import Any

__all__ = ["SingularError", "coefficients", "solve", "source_names"]

GROUND = "0"
FDA_SOURCES = ("Vos", "Ib+", "Ib-", "Voscm")


class SingularError(ArithmeticError):
    """No unique solution."""


def _f(x: Any) -> Fraction:
    return Fraction(repr(x)) if isinstance(x, float) else Fraction(x)


def source_names(desc: Sequence[Sequence[Any]]) -> list[str]:
    """Every independent source, named as opsym names them (``U1.Vos``, ...)."""
    out: list[str] = []
    for item in desc:
        if item[0] in ("V", "I"):
            out.append(item[1])
        elif item[0] == "FDA":
            out += [f"{item[1]}.{s}" for s in FDA_SOURCES]
    return out


def solve(desc: Sequence[Sequence[Any]], values: Mapping[str, Any]) -> dict[str, Fraction]:
    """Node voltages with the sources at ``values`` (a source not listed is 0)."""
    nodes: list[str] = []
    for item in desc:
        pins = item[2:7] if item[0] == "FDA" else item[2:4]
        for p in pins:
            if p != GROUND and p not in nodes:
                nodes.append(p)
    cols = {n: i for i, n in enumerate(nodes)}
    for item in desc:  # the unknown branch currents after the node voltages
        if item[0] == "FDA":
            cols[f"I+({item[1]})"] = len(cols)
            cols[f"I-({item[1]})"] = len(cols)
        elif item[0] == "V":
            cols[f"Iv({item[1]})"] = len(cols)
    size = len(cols)
    kcl = {n: [Fraction(0)] * (size + 1) for n in nodes}  # Σ currents leaving = 0
    extra: list[list[Fraction]] = []

    def leave(node: str, col: str, w: Fraction) -> None:
        if node != GROUND:
            kcl[node][cols[col]] += w

    def inject(node: str, amps: Fraction) -> None:  # current into node: rhs
        if node != GROUND:
            kcl[node][size] += amps

    def vrow(terms: Mapping[str, Fraction], rhs: Fraction) -> None:
        row = [Fraction(0)] * (size + 1)
        for n, w in terms.items():
            if n != GROUND:
                row[cols[n]] += w
        row[size] = rhs
        extra.append(row)

    for item in desc:
        kind, name = item[0], item[1]
        if kind == "R":
            a, b, g = item[2], item[3], 1 / _f(item[4])
            for x, y in ((a, b), (b, a)):
                if x != GROUND:
                    leave(x, x, g)
                    if y != GROUND:
                        leave(x, y, -g)
        elif kind == "I":
            amps = _f(values.get(name, 0))
            inject(item[2], -amps)
            inject(item[3], amps)
        elif kind == "V":
            plus, minus = item[2], item[3]
            leave(plus, f"Iv({name})", Fraction(1))  # through the source from plus to minus
            leave(minus, f"Iv({name})", Fraction(-1))
            vrow({plus: Fraction(1), minus: Fraction(-1)}, _f(values.get(name, 0)))
        elif kind == "FDA":
            _, _, p, m, op, on, cm, gain, ebal, _src = item
            get = {s: _f(values.get(f"{name}.{s}", 0)) for s in FDA_SOURCES}
            inject(p, -get["Ib+"])
            inject(m, -get["Ib-"])
            leave(op, f"I+({name})", Fraction(-1))  # the FDA drives current into op
            leave(on, f"I-({name})", Fraction(-1))
            if gain is None:
                vrow({p: Fraction(1), m: Fraction(-1)}, -get["Vos"])
            else:
                a = _f(gain)
                diff: dict[str, Fraction] = {}
                for n, w in ((p, a), (m, -a), (op, Fraction(-1)), (on, Fraction(1))):
                    diff[n] = diff.get(n, Fraction(0)) + w
                vrow(diff, -a * get["Vos"])
            e = _f(ebal)
            common: dict[str, Fraction] = {}
            half = Fraction(1, 2)
            for n, w in ((op, half - e), (on, half + e), (cm, Fraction(-1))):
                common[n] = common.get(n, Fraction(0)) + w
            vrow(common, get["Voscm"])
    rows = [kcl[n] for n in nodes] + extra
    return _finish(rows, nodes, size)


def _finish(rows: list[list[Fraction]], nodes: list[str], size: int) -> dict[str, Fraction]:
    if len(rows) != size:
        raise SingularError(f"{len(rows)} equations for {size} unknowns")
    x = _gauss(rows, size)
    out = {GROUND: Fraction(0)}
    out.update(zip(nodes, x[: len(nodes)], strict=True))
    return out


def _gauss(rows: list[list[Fraction]], n: int) -> list[Fraction]:
    a = [list(r) for r in rows]
    for col in range(n):
        pivot = next((r for r in range(col, n) if a[r][col] != 0), None)
        if pivot is None:
            raise SingularError("singular system")
        a[col], a[pivot] = a[pivot], a[col]
        for r in range(n):
            if r != col and a[r][col] != 0:
                f = a[r][col] / a[col][col]
                a[r] = [x - f * y for x, y in zip(a[r], a[col], strict=True)]
    return [a[i][n] / a[i][i] for i in range(n)]


def coefficients(
    desc: Sequence[Sequence[Any]], output: str | tuple[str, str]
) -> dict[str, Fraction]:
    """Superposition: the output for each independent source alone at unit value."""
    out = {}
    for s in source_names(desc):
        v = solve(desc, {s: 1})
        out[s] = v[output[0]] - v[output[1]] if isinstance(output, tuple) else v[output]
    return out
