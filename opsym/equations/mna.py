"""Modified nodal analysis: stamp a circuit into a sparse linear system.

Unknowns are the node voltages (ground excluded) and the branch currents of the
voltage-defined elements: voltage sources and op-amp outputs (Ho, Ruehli and
Brennan, IEEE Trans. Circuits Syst. CAS-22(6), 1975). Rows are:

* KCL at each node — conductance currents plus branch currents *leaving* the node
  equal the source currents *injected* into it;
* one row per voltage source — ``V(plus) - V(minus) = value``;
* one row per op-amp — ``V(minus) - V(plus) + Vout/A = Σ weight·source``: the
  series input sources (Vos, Vcm/CMRR, dVs/PSRR) on the right-hand side. For the
  ideal op-amp (a nullor) ``1/A = 0``; the output current is the norator. An
  output impedance ``Zo`` (``Ro``) in series with the gain stage makes the
  controlled source ``Vout + Zo·I`` (``I`` the current it drives into ``out``), so
  the row gains ``+Zo·I/A`` in the op-amp's own current column.

Every independent source appears only on the right-hand side, with one column
of stamps each, so one adjoint solve gives all their coefficients at once.

The DC domain sets ``s = 0``: capacitors are open and inductors are wires
(a branch row ``V(a) - V(b) = 0``). The s domain stamps ``s·C`` for each
capacitor and the branch row ``V(a) - V(b) - s·L·I = 0`` for each inductor.
With ``thermal`` each resistor also gets the source ``R.en``, its thermal noise
voltage in series, stamped as the equivalent current ``R.en/R`` from ``a`` to
``b`` in parallel (Norton).

Examples
--------
>>> import opsym
>>> from opsym.equations.mna import build_equations
>>> c = opsym.Circuit()
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="0", minus="n", out="out", bias=False)
>>> eqs = build_equations(c)
>>> eqs.unknowns
('V(in)', 'V(n)', 'V(out)', 'I(Vin)', 'I(U1)')
>>> eqs.rows[4]  # op-amp row: V(n) - V(+) + V(out)/A; here 1/A = 0 and + is grounded
{1: 1}
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

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
from ..model.nonideal import (
    CommonModeVoltage,
    OutputBalance,
    OutputImpedance,
    PinAdmittance,
    PinCurrent,
    SeriesVoltage,
)
from ..model.symbols import LAPLACE, source_symbol, thermal_symbol

__all__ = ["DOMAINS", "INJECTIONS", "STAMPS", "NodalEquations", "build_equations"]

#: The analysis domains: DC (``s = 0``) and Laplace.
DOMAINS = ("dc", "s")


@dataclass(frozen=True)
class NodalEquations:
    """A sparse MNA system ``M·x = Σ_s s·b_s``.

    Attributes
    ----------
    unknowns : tuple of str
        ``"V(node)"`` or ``"I(element)"`` for each column.
    rows : tuple of dict
        Row ``r`` maps column index to its (nonzero) entry.
    row_labels : tuple of str
        What each row states, for messages (``"KCL at node n"``).
    row_elements : tuple of tuple of str
        Names of the elements that stamp each row.
    sources : dict
        Source symbol → ``{row: weight}`` right-hand-side stamps.
    index : dict
        Unknown label → column index.
    """

    unknowns: tuple[str, ...]
    rows: tuple[dict[int, sp.Expr], ...]
    row_labels: tuple[str, ...]
    row_elements: tuple[tuple[str, ...], ...]
    sources: dict[sp.Symbol, dict[int, sp.Expr]]
    index: dict[str, int]

    def matrix(self) -> sp.Matrix:
        """The system matrix as a dense SymPy Matrix (for inspection and small cases)."""
        n = len(self.unknowns)
        return sp.Matrix(n, n, lambda i, j: self.rows[i].get(j, 0))

    def rhs(self) -> sp.Matrix:
        """The right-hand side with every source switched on, as a column Matrix."""
        b = [sp.S.Zero] * len(self.rows)
        for s, stamps in self.sources.items():
            for r, w in stamps.items():
                b[r] += w * s
        return sp.Matrix(b)


class _Builder:
    """The system under construction, and what every stamp needs to know."""

    def __init__(
        self, nodes: list[str], values: Mapping[sp.Symbol, sp.Expr], domain: str, thermal: bool
    ) -> None:
        self.values = values
        self.domain = domain
        self.thermal = thermal
        self.unknowns: list[str] = [f"V({n})" for n in nodes]
        self.index = {u: i for i, u in enumerate(self.unknowns)}
        self.rows: list[dict[int, sp.Expr]] = [{} for _ in nodes]
        self.labels = [f"KCL at node {n}" for n in nodes]
        self.owners: list[list[str]] = [[] for _ in nodes]
        self.sources: dict[sp.Symbol, dict[int, sp.Expr]] = {}

    def value(self, expr: sp.Expr) -> sp.Expr:
        """``expr`` with the fixed values put in (``s = 0`` at DC)."""
        return expr.xreplace(self.values) if self.values else expr

    def col(self, node: str) -> int | None:
        return None if node == GROUND else self.index[f"V({node})"]

    def row_of(self, node: str) -> int | None:
        return self.col(node)  # KCL row r belongs to node column r

    def add(self, row: int | None, col: int | None, value: sp.Expr, owner: str) -> None:
        if row is None or col is None:
            return
        entries = self.rows[row]
        entries[col] = entries.get(col, sp.S.Zero) + value
        if owner not in self.owners[row]:
            self.owners[row].append(owner)

    def source(self, row: int | None, symbol: sp.Symbol, weight: sp.Expr, owner: str) -> None:
        if row is None:
            return
        stamps = self.sources.setdefault(symbol, {})
        stamps[row] = stamps.get(row, sp.S.Zero) + weight
        if owner not in self.owners[row]:
            self.owners[row].append(owner)

    def admittance(self, a: str, b: str, y: sp.Expr, owner: str) -> None:
        """Stamp the admittance ``y`` between nodes ``a`` and ``b``."""
        ra, rb, ca, cb = self.row_of(a), self.row_of(b), self.col(a), self.col(b)
        self.add(ra, ca, y, owner)
        self.add(rb, cb, y, owner)
        self.add(ra, cb, -y, owner)
        self.add(rb, ca, -y, owner)

    def voltage_branch(self, element: str, label: str, a: str, b: str) -> tuple[int, int]:
        """A branch whose current leaves ``a`` for ``b`` and whose row reads ``V(a) − V(b)``."""
        row, col = self.branch(element, label)
        self.add(self.row_of(a), col, sp.S.One, element)
        self.add(self.row_of(b), col, sp.S.NegativeOne, element)
        self.add(row, self.col(a), sp.S.One, element)
        self.add(row, self.col(b), sp.S.NegativeOne, element)
        return row, col

    def branch(self, element: str, label: str) -> tuple[int, int]:
        """Add a branch-current unknown and its own row; return (row, col)."""
        col = len(self.unknowns)
        self.unknowns.append(f"I({element})")
        self.index[f"I({element})"] = col
        self.rows.append({})
        self.labels.append(label)
        self.owners.append([element])
        return len(self.rows) - 1, col


def build_equations(
    circuit: Circuit,
    values: Mapping[sp.Symbol, sp.Expr] | None = None,
    domain: str = "dc",
    thermal: bool = False,
) -> NodalEquations:
    """Stamp ``circuit`` into its MNA system, with ``values`` substituted first.

    ``values`` maps component or op-amp parameter symbols to numbers or
    expressions; sources stay symbolic whatever it says (their values enter
    the superposed total only). ``domain`` is ``"dc"`` or ``"s"``; ``thermal``
    adds each resistor's noise voltage ``R.en`` as a source.
    """
    if domain not in DOMAINS:
        raise InvalidValueError(f"domain {domain!r} is not known; use 'dc' or 's'")
    values = dict(values or {})
    if domain == "dc":
        values[LAPLACE] = sp.S.Zero
    nodes = [n for n in circuit.nodes if n != GROUND]
    b = _Builder(nodes, values, domain, thermal)
    for e in circuit.elements:
        stamp = STAMPS.get(type(e))
        if stamp is None:
            raise InvalidValueError(
                f"{e.describe()}: no stamp for a {type(e).__name__}; register one in "
                "opsym.equations.mna.STAMPS"
            )
        stamp(b, e)
    rows = tuple({c: v for c, v in r.items() if v != 0} for r in b.rows)
    return NodalEquations(
        unknowns=tuple(b.unknowns),
        rows=rows,
        row_labels=tuple(b.labels),
        row_elements=tuple(tuple(o) for o in b.owners),
        sources=b.sources,
        index=dict(b.index),
    )


# -- one stamp per element class, one per injection shape -----------------------------


def _resistor(b: _Builder, e: Resistor) -> None:
    g = 1 / b.value(e.value)
    b.admittance(e.a, e.b, g, e.name)
    if b.thermal:  # R.en in series, as the Norton current R.en/R from a to b
        b.source(b.row_of(e.a), thermal_symbol(e.name), -g, e.name)
        b.source(b.row_of(e.b), thermal_symbol(e.name), g, e.name)


def _capacitor(b: _Builder, e: Capacitor) -> None:
    if b.domain == "s":  # open circuit at DC
        b.admittance(e.a, e.b, LAPLACE * b.value(e.value), e.name)


def _inductor(b: _Builder, e: Inductor) -> None:
    row, col = b.voltage_branch(e.name, f"inductor {e.name}", e.a, e.b)
    if b.domain == "s":  # a wire at DC
        b.add(row, col, -LAPLACE * b.value(e.value), e.name)


def _current_source(b: _Builder, e: CurrentSource) -> None:
    s = source_symbol(e.name)
    b.source(b.row_of(e.a), s, sp.S.NegativeOne, e.name)
    b.source(b.row_of(e.b), s, sp.S.One, e.name)


def _voltage_source(b: _Builder, e: VoltageSource) -> None:
    row, _ = b.voltage_branch(e.name, f"voltage source {e.name}", e.a, e.b)
    b.source(row, source_symbol(e.name), sp.S.One, e.name)


def _opamp(b: _Builder, amp: OpAmp) -> None:
    row, col = b.branch(amp.name, f"op-amp {amp.name} input")
    b.add(b.row_of(amp.out), col, sp.S.NegativeOne, amp.name)  # output current enters `out`
    b.add(row, b.col(amp.minus), sp.S.One, amp.name)
    b.add(row, b.col(amp.plus), sp.S.NegativeOne, amp.name)
    inverse_gain = sp.S.Zero if amp.gain is None else 1 / b.value(amp.gain)
    b.add(row, b.col(amp.out), inverse_gain, amp.name)
    for kind in amp.nonideals:
        for inj in kind.injections(amp.name):
            INJECTIONS[type(inj)](b, amp, row, inj)


def _fda(b: _Builder, amp: FullyDifferentialAmp) -> None:
    # differential row: V(-) − V(+) + (V(out+) − V(out-))/A = Σ series sources;
    # common-mode row: (V(out+) + V(out-))/2 − V(vocm) − ebal·Vod = Σ common-mode sources
    row, col = b.branch(amp.name, f"FDA {amp.name} differential input")
    cm_row, cm_col = b.branch(f"{amp.name}-", f"FDA {amp.name} output common mode")
    b.add(b.row_of(amp.out), col, sp.S.NegativeOne, amp.name)
    b.add(b.row_of(amp.out_minus), cm_col, sp.S.NegativeOne, amp.name)
    b.add(row, b.col(amp.minus), sp.S.One, amp.name)
    b.add(row, b.col(amp.plus), sp.S.NegativeOne, amp.name)
    inverse_gain = sp.S.Zero if amp.gain is None else 1 / b.value(amp.gain)
    b.add(row, b.col(amp.out), inverse_gain, amp.name)
    b.add(row, b.col(amp.out_minus), -inverse_gain, amp.name)
    half = sp.Rational(1, 2)
    b.add(cm_row, b.col(amp.out), half, amp.name)
    b.add(cm_row, b.col(amp.out_minus), half, amp.name)
    b.add(cm_row, b.col(amp.vocm), sp.S.NegativeOne, amp.name)
    for kind in amp.nonideals:
        for inj in kind.injections(amp.name):
            INJECTIONS[type(inj)](b, amp, row, inj)


def _fda_cm_row(b: _Builder, amp: OpAmp, inj: object) -> int:
    if not isinstance(amp, FullyDifferentialAmp):
        raise InvalidValueError(
            f"{amp.describe()}: {type(inj).__name__} acts on an FDA's output common mode; "
            "declare the part with Circuit.fda"
        )
    return b.index[f"I({amp.name}-)"]  # its row was added with its column


def _common_mode_voltage(b: _Builder, amp: OpAmp, row: int, inj: CommonModeVoltage) -> None:
    b.source(_fda_cm_row(b, amp, inj), inj.source, b.value(inj.weight), amp.name)


def _output_balance(b: _Builder, amp: OpAmp, row: int, inj: OutputBalance) -> None:
    cm_row = _fda_cm_row(b, amp, inj)
    ratio = b.value(inj.ratio)
    b.add(cm_row, b.col(amp.out), -ratio, amp.name)
    b.add(cm_row, b.col(getattr(amp, "out_minus", amp.out)), ratio, amp.name)


def _series_voltage(b: _Builder, amp: OpAmp, row: int, inj: SeriesVoltage) -> None:
    b.source(row, inj.source, b.value(inj.weight), amp.name)


def _pin_current(b: _Builder, amp: OpAmp, row: int, inj: PinCurrent) -> None:
    pin = amp.plus if inj.pin == "plus" else amp.minus
    b.source(b.row_of(pin), inj.source, sp.S.NegativeOne, amp.name)


def _pin_admittance(b: _Builder, amp: OpAmp, row: int, inj: PinAdmittance) -> None:
    pins = {"plus": amp.plus, "minus": amp.minus, "out": amp.out, "ground": GROUND}
    b.admittance(pins[inj.a], pins[inj.b], b.value(inj.admittance), amp.name)


def _output_impedance(b: _Builder, amp: OpAmp, row: int, inj: OutputImpedance) -> None:
    # A·(V+ − V- + Σ) = Vout + Zo·I  ⇒  row += Zo·I/A; nothing for a nullor (1/A = 0)
    if amp.gain is not None:
        col = b.index[f"I({amp.name})"]
        b.add(row, col, b.value(inj.impedance) / b.value(amp.gain), amp.name)


#: The stamp of each element class: a new element adds its class and one function here.
STAMPS: dict[type, Callable[[_Builder, Any], None]] = {
    Resistor: _resistor,
    Capacitor: _capacitor,
    Inductor: _inductor,
    CurrentSource: _current_source,
    VoltageSource: _voltage_source,
    OpAmp: _opamp,
    FullyDifferentialAmp: _fda,
}
#: The stamp of each injection shape of a non-ideality (in series with +, into a pin,
#: between pins, in series with the output).
INJECTIONS: dict[type, Callable[[_Builder, OpAmp, int, Any], None]] = {
    SeriesVoltage: _series_voltage,
    PinCurrent: _pin_current,
    PinAdmittance: _pin_admittance,
    OutputImpedance: _output_impedance,
    CommonModeVoltage: _common_mode_voltage,
    OutputBalance: _output_balance,
}
