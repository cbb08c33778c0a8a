"""The nominal DC operating point: every node voltage, and each op-amp against its rails.

Signals sit at their given values, every op-amp error source (offset, bias,
CMRR and PSRR inputs) at zero, and each component at its nominal value; the
linear circuit is then solved exactly (rational arithmetic) at DC. An op-amp
whose open-loop gain has no number is taken as ideal. Each op-amp's output
voltage and input common-mode voltage ``(V(+) + V(−))/2`` are checked against
its :class:`Rails`: the output must stay ``swing`` volts inside each rail, the
input ``common_mode`` volts inside.

Examples
--------
>>> import opsym
>>> c = opsym.Circuit("inverting, gain -10")
>>> c.voltage_source("Vin", "in", "0", value="-0.5")
>>> c.resistor("R1", "in", "n", value="10k")
>>> c.resistor("R2", "n", "out", value="100k")
>>> c.opamp("U1", plus="0", minus="n", out="out")
>>> op = operating_point(c, rails={"U1": Rails(-15, 15, swing=1.5)})
>>> op.nodes["out"], op.warnings
(5.0, ())
>>> op = operating_point(c, {"Vin": 2}, rails={"U1": Rails(-15, 15, swing=1.5)})
>>> print(op.warnings[0])
U1 output -20 V is outside its output range -13.5 V to 13.5 V (rails -15 V and 15 V, \
1.5 V headroom)
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import sympy as sp

from ..equations.mna import build_equations
from ..errors import InvalidValueError, SingularCircuitError
from ..model.circuit import GROUND, Circuit
from ..model.elements import FullyDifferentialAmp, OpAmp
from ..model.symbols import LAPLACE
from ..numeric.units import format_si
from .derive import resolve_values, sources_of

__all__ = ["OpAmpPoint", "OperatingPoint", "Rails", "operating_point"]


@dataclass(frozen=True)
class Rails:
    """Supply rails of one op-amp (V) and its headroom to each rail (V).

    ``swing``: how close the output comes to a rail; ``common_mode``: how
    close the inputs may come. ``source`` says where the numbers came from.
    """

    negative: float
    positive: float
    swing: float = 0.0
    common_mode: float = 0.0
    source: str = ""

    def __post_init__(self) -> None:
        if not self.negative < self.positive:
            raise InvalidValueError(
                f"rails {self.negative} V and {self.positive} V: the negative rail must be "
                "below the positive one"
            )
        for what, room in (("output swing", self.swing), ("common-mode", self.common_mode)):
            if not 0 <= 2 * room < self.positive - self.negative:
                raise InvalidValueError(
                    f"{what} headroom {room} V from each rail leaves no range between "
                    f"{self.negative} V and {self.positive} V; give it >= 0 and under half "
                    "the span"
                )

    @property
    def output_range(self) -> tuple[float, float]:
        """The lowest and highest output voltage, V."""
        return self.negative + self.swing, self.positive - self.swing

    @property
    def input_range(self) -> tuple[float, float]:
        """The lowest and highest input common-mode voltage, V."""
        return self.negative + self.common_mode, self.positive - self.common_mode


@dataclass(frozen=True)
class OpAmpPoint:
    """One op-amp at the operating point: output and input common-mode voltage, V."""

    name: str
    output: float
    common_mode: float
    rails: Rails | None = None

    @property
    def warnings(self) -> tuple[str, ...]:
        """One line for each voltage outside its range (empty without rails)."""
        r = self.rails
        if r is None:
            return ()
        out = []
        for what, v, (low, high), room in (
            ("output", self.output, r.output_range, r.swing),
            ("input common mode", self.common_mode, r.input_range, r.common_mode),
        ):
            if not low <= v <= high:
                out.append(
                    f"{self.name} {what} {_volts(v)} is outside its {what} range "
                    f"{_volts(low)} to {_volts(high)} (rails {_volts(r.negative)} and "
                    f"{_volts(r.positive)}, {_volts(room)} headroom)"
                )
        return tuple(out)


@dataclass(frozen=True)
class OperatingPoint:
    """Node voltages (V, ground left out) and the op-amps' voltages at nominal values.

    ``ideal`` names the op-amps taken as ideal because their gain had no number.
    """

    nodes: Mapping[str, float]
    opamps: tuple[OpAmpPoint, ...] = ()
    ideal: tuple[str, ...] = ()

    @property
    def warnings(self) -> tuple[str, ...]:
        """Every op-amp voltage outside its rails' range."""
        return tuple(w for a in self.opamps for w in a.warnings)

    def lines(self) -> list[str]:
        """Plain-text lines: node voltages, then each op-amp, then any warnings."""
        shown = ", ".join(f"V({n}) = {_volts(v)}" for n, v in self.nodes.items())
        out = [f"node voltages: {shown}"]
        for a in self.opamps:
            text = f"{a.name}: output {_volts(a.output)}, "
            text += f"input common mode {_volts(a.common_mode)}"
            if a.rails is not None:
                r = a.rails
                text += (
                    f"; rails {_volts(r.negative)} and {_volts(r.positive)}"
                    f" ({r.source or 'given'}), output range {_volts(r.output_range[0])} to "
                    f"{_volts(r.output_range[1])}, input range {_volts(r.input_range[0])} to "
                    f"{_volts(r.input_range[1])}"
                )
            else:
                text += "; no rails given, not checked"
            out.append(text)
        if self.ideal:
            out.append(f"taken as ideal (no gain value): {', '.join(self.ideal)}")
        out += [f"WARNING: {w}" for w in self.warnings]
        return out


def operating_point(
    circuit: Circuit,
    values: Mapping[Any, Any] | None = None,
    rails: Mapping[str, Rails] | None = None,
) -> OperatingPoint:
    """Solve the nominal DC operating point of ``circuit``.

    Parameters
    ----------
    circuit : Circuit
    values : mapping, optional
        Numbers by name (``"R1"``, ``"Vin"``, ``"U1.A"``), as for ``values=``
        elsewhere; element values already in the circuit count too. Names the
        circuit does not use are ignored (a parameter set gives more than a
        stage uses).
    rails : mapping of str to Rails, optional
        The rails of each op-amp to check.

    Raises
    ------
    InvalidValueError
        A component or signal has no number (the message names it).
    SingularCircuitError
        The nominal circuit has no unique solution.
    """
    known = circuit.free_symbols_by_name()
    usable = {k: v for k, v in (values or {}).items() if _uses(circuit, k, known)}
    fixed = resolve_values(circuit, usable)
    fixed[LAPLACE] = sp.S.Zero
    ideal = []
    solved = Circuit(circuit.title)
    for e in circuit.elements:
        if isinstance(e, OpAmp) and e.gain is not None:
            if e.gain.xreplace(fixed).free_symbols:
                ideal.append(e.name)
                e = dataclasses.replace(e, gain=None)
        solved._add(e)
    eqs = build_equations(solved, fixed, domain="dc")
    matrix = eqs.matrix()
    missing = sorted({s.name for s in matrix.free_symbols})
    if missing:
        raise InvalidValueError(
            f"operating point: {', '.join(missing)} "
            f"{'needs' if len(missing) == 1 else 'need'} a number; give each a value"
        )
    rhs = sp.zeros(len(eqs.unknowns), 1)
    for info in sources_of(solved):
        if info.kind != "signal":
            continue  # error sources sit at zero
        value = fixed.get(info.symbol)
        if value is None and isinstance(info.value, sp.Expr):
            value = info.value.xreplace(fixed)
        if value is None or not value.is_number:
            raise InvalidValueError(f"operating point: signal {info.owner} needs a value")
        for row, weight in eqs.sources.get(info.symbol, {}).items():
            rhs[row] += weight * value
    try:
        x = matrix.LUsolve(rhs)
    except (ValueError, ZeroDivisionError):
        raise SingularCircuitError(
            "operating point: the nominal circuit has no unique solution (an op-amp without "
            "feedback, or a node held by nothing)"
        ) from None
    nodes = {n: float(x[eqs.index[f"V({n})"]]) for n in circuit.nodes if n != GROUND}

    def v(node: str) -> float:
        return 0.0 if node == GROUND else nodes[node]

    amps = tuple(
        OpAmpPoint(label, v(out), (v(a.plus) + v(a.minus)) / 2, (rails or {}).get(a.name))
        for a in circuit.opamps
        for label, out in _outputs(a)
    )
    return OperatingPoint(nodes, amps, tuple(ideal))


def _outputs(amp: OpAmp) -> tuple[tuple[str, str], ...]:
    """Each output of an amplifier with its label: an FDA's two, checked against its rails."""
    if isinstance(amp, FullyDifferentialAmp):
        return ((f"{amp.name} out+", amp.out), (f"{amp.name} out-", amp.out_minus))
    return ((amp.name, amp.out),)


def _uses(circuit: Circuit, key: Any, known: Mapping[str, sp.Symbol]) -> bool:
    name = key.name if isinstance(key, sp.Symbol) else str(key)
    owner = name.partition(".")[0]
    return name in known or owner in {e.name for e in circuit.elements}


def _volts(v: float) -> str:
    """A voltage for reports: four significant digits with an SI prefix."""
    return format_si(v, "V")
