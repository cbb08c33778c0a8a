"""Topology checks run before any algebra: each names what is wrong and how to fix it.

* floating islands — nodes with no DC path to ground;
* loops of voltage-defined branches — voltage sources and op-amp outputs
  (each output is a voltage referred to ground) that close a loop;
* op-amps without a DC feedback path from the output to the inverting input.

At DC an inductor is a wire (a voltage-defined branch of zero volts) and a
capacitor is open. In the s domain both are impedances: they carry a path, so
an integrator or an AC-coupled input passes, and the messages say "path"
rather than "DC path".

Examples
--------
>>> import opsym
>>> c = opsym.Circuit("open input")
>>> c.resistor("R1", "n", "0")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="p", minus="n", out="out")
>>> try:
...     c.analyze("out")
... except opsym.FloatingNodeError as err:
...     print(err)  # doctest: +NORMALIZE_WHITESPACE
node 'p' has no DC path to ground (it touches only: op-amp U1 + input);
connect it through a resistor or a source
"""

from __future__ import annotations

from collections import defaultdict

from ..errors import FloatingNodeError, NoFeedbackError, SingularCircuitError
from .circuit import GROUND, Circuit
from .elements import (
    Capacitor,
    FullyDifferentialAmp,
    Inductor,
    OpAmp,
    Resistor,
    TwoTerminal,
    VoltageSource,
)

__all__ = ["check_topology"]


class _Forest:
    """Union-find that remembers which element joined each pair (for loop reports)."""

    def __init__(self) -> None:
        self.parent: dict[str, str] = {}

    def find(self, x: str) -> str:
        self.parent.setdefault(x, x)
        while self.parent[x] != x:
            self.parent[x] = self.parent[self.parent[x]]
            x = self.parent[x]
        return x

    def union(self, a: str, b: str) -> bool:
        ra, rb = self.find(a), self.find(b)
        if ra == rb:
            return False
        self.parent[ra] = rb
        return True


def check_topology(circuit: Circuit, domain: str = "dc") -> None:
    """Raise a specific :class:`~opsym.OpsymError` if ``circuit`` cannot be solved.

    ``domain`` is ``"dc"`` (the default) or ``"s"``.
    """
    _check_source_loops(circuit, domain)
    _check_floating(circuit, domain)
    _check_feedback(circuit, domain)


def _conducting(domain: str) -> tuple[type, ...]:
    """Element types that give a path between their nodes in ``domain``."""
    if domain == "dc":
        return (Resistor, VoltageSource, Inductor)
    return (Resistor, VoltageSource, Inductor, Capacitor)


def _voltage_branches(circuit: Circuit, domain: str) -> list[tuple[str, str, str]]:
    out = []
    for e in circuit.elements:
        if isinstance(e, VoltageSource):
            out.append((e.a, e.b, f"voltage source {e.name}"))
        elif isinstance(e, Inductor) and domain == "dc":
            out.append((e.a, e.b, f"inductor {e.name} (a wire at DC)"))
        elif isinstance(e, FullyDifferentialAmp):
            out.append((e.out, GROUND, f"+ output of FDA {e.name}"))
            out.append((e.out_minus, GROUND, f"- output of FDA {e.name}"))
        elif isinstance(e, OpAmp):
            out.append((e.out, GROUND, f"output of op-amp {e.name}"))
    return out


def _check_source_loops(circuit: Circuit, domain: str) -> None:
    forest = _Forest()
    adjacency: dict[str, list[tuple[str, str]]] = defaultdict(list)
    for a, b, what in _voltage_branches(circuit, domain):
        if not forest.union(a, b):
            loop = [what, *_path(adjacency, a, b)]
            raise SingularCircuitError(
                "these voltage-defined branches form a loop, so their currents are "
                f"undetermined: {', '.join(loop)}; remove one of them or put a resistor "
                "in series"
            )
        adjacency[a].append((b, what))
        adjacency[b].append((a, what))


def _path(adjacency: dict[str, list[tuple[str, str]]], start: str, goal: str) -> list[str]:
    """Element labels along the tree path from ``start`` to ``goal``."""
    stack: list[tuple[str, list[str]]] = [(start, [])]
    seen = {start}
    while stack:
        node, labels = stack.pop()
        if node == goal:
            return labels
        for nxt, what in adjacency[node]:
            if nxt not in seen:
                seen.add(nxt)
                stack.append((nxt, [*labels, what]))
    return []


def _check_floating(circuit: Circuit, domain: str) -> None:
    conducting = _conducting(domain)
    dc = "DC " if domain == "dc" else ""
    forest = _Forest()
    forest.find(GROUND)
    touches: dict[str, list[str]] = defaultdict(list)
    for e in circuit.elements:
        for n in e.nodes:
            forest.find(n)
        if isinstance(e, OpAmp):
            touches[e.plus].append(f"op-amp {e.name} + input")
            touches[e.minus].append(f"op-amp {e.name} - input")
            forest.union(e.out, GROUND)
            if isinstance(e, FullyDifferentialAmp):
                touches[e.vocm].append(f"FDA {e.name} vocm input")
                forest.union(e.out_minus, GROUND)
        elif isinstance(e, TwoTerminal) and isinstance(e, conducting):
            forest.union(e.a, e.b)
        else:
            for n in e.nodes:
                touches[n].append(e.describe())
    ground = forest.find(GROUND)
    islands: dict[str, list[str]] = defaultdict(list)
    for n in circuit.nodes:
        if forest.find(n) != ground:
            islands[forest.find(n)].append(n)
    if not islands:
        return
    nodes = sorted(islands.values(), key=len)[0]
    if len(nodes) == 1:
        where = touches.get(nodes[0], [])
        detail = f" (it touches only: {', '.join(where)})" if where else ""
        raise FloatingNodeError(
            f"node {nodes[0]!r} has no {dc}path to ground{detail}; "
            "connect it through a resistor or a source"
        )
    raise FloatingNodeError(
        f"nodes {', '.join(repr(n) for n in nodes)} form an island with no {dc}path to ground "
        f"({'capacitors, ' if dc else ''}current sources and op-amp inputs carry no {dc}path); "
        "connect the island to the rest of the circuit through a resistor or a source"
    )


def _check_feedback(circuit: Circuit, domain: str) -> None:
    conducting = _conducting(domain)
    dc = "DC " if domain == "dc" else ""
    for amp in circuit.opamps:
        loops = [(amp.out, amp.minus, "output", "- input")]
        if isinstance(amp, FullyDifferentialAmp):
            loops = [(amp.out, amp.minus, "+ output", "- input"),
                     (amp.out_minus, amp.plus, "- output", "+ input")]  # fmt: skip
        what = "FDA" if isinstance(amp, FullyDifferentialAmp) else "op-amp"
        forest = _feedback_forest(circuit, amp, conducting)
        for out, pin, out_name, pin_name in loops:
            if pin == out:
                continue
            if pin == GROUND or forest.find(pin) != forest.find(out):
                raise NoFeedbackError(
                    f"{what} {amp.name} has no {dc}feedback path from its {out_name} {out!r} "
                    f"to its {pin_name} {pin!r}; add a resistor (or a wire) from the output "
                    f"back to the {pin_name}, or check which pin is which"
                )


def _feedback_forest(circuit: Circuit, amp: OpAmp, conducting: tuple[type, ...]) -> _Forest:
    """Nodes joined by conducting elements (not through ground) and the other amplifiers."""
    forest = _Forest()
    for e in circuit.elements:
        if isinstance(e, TwoTerminal) and isinstance(e, conducting):
            if GROUND not in (e.a, e.b):
                forest.union(e.a, e.b)
        elif isinstance(e, OpAmp) and e is not amp:
            outs = [e.out] + ([e.out_minus] if isinstance(e, FullyDifferentialAmp) else [])
            for pin in (e.plus, e.minus):
                for out in outs:
                    if GROUND not in (pin, out):
                        forest.union(pin, out)
    return forest
