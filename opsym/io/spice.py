"""SPICE netlists in and out: an exchange format users bring, not opsym's own.

:func:`read_netlist` reads a flat netlist as schematic editors export it
(registered for ``.cir``, ``.net``, ``.sp`` and ``.spice``, so
:func:`opsym.load_design` and the command line read it by suffix).
:func:`write_netlist` writes any circuit, with chosen numbers, for a simulator:
the op-amp's error sources as ordinary sources and its gain model as
controlled sources, so opsym's numbers can be checked independently. The
rules are in ``docs/netlists.md``.

Examples
--------
>>> d = read_netlist('''inverting stage
... V1 in 0 DC 0 AC 1
... R1 in n 10k
... R2 n out 100k
... XU1 0 n out OPAMP_MODEL
... .tran 1m
... .end''', output="out")
>>> d.analyze().subs(d.values).coefficient("V1")
-10
>>> d.signal, d.values["R2"]
('V1', 100000)
>>> print(write_netlist(d, commands=()), end="")  # a Design brings values and signal
* inverting stage
* written by opsym: op-amps as controlled sources, their error sources as V and I sources
V1 in 0 DC 0.0 AC 1
R1 in n 10000.0
R2 n out 100000.0
E_U1 out 0 U1_p1 n 10000000.0 ; U1: ideal (high-gain stand-in)
V_U1_Vos U1_p1 0 DC 0.0 ; U1.Vos (not given: 0)
I_U1_Ibm n 0 DC 0.0 ; U1.Ib- (not given: 0) into the pin
.end
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from typing import Any

import sympy as sp

from ..errors import ArgumentTypeError, InvalidValueError
from ..model.circuit import Circuit
from ..model.elements import (
    Capacitor,
    CurrentSource,
    FullyDifferentialAmp,
    Inductor,
    OpAmp,
    Resistor,
    TwoTerminal,
    VoltageSource,
)
from ..model.limits import expect_mapping, expect_text, shown
from ..model.nonideal import (
    CommonModeVoltage,
    OutputBalance,
    PinAdmittance,
    PinCurrent,
    SeriesVoltage,
    SinglePole,
)
from ..model.symbols import LAPLACE, SYMBOLS
from ..numeric.params import OpAmpParams
from ..values import to_exact
from ._spice_read import NetlistReader
from .design import Design
from .formats import reader

__all__ = ["IDEAL_GAIN", "read_netlist", "write_netlist"]

#: Gain of the voltage-controlled source that stands in for an ideal op-amp.
IDEAL_GAIN = 1e7
_LETTER = {Resistor: "R", Capacitor: "C", Inductor: "L", VoltageSource: "V", CurrentSource: "I"}
_SAFE = re.compile(r"^[A-Za-z0-9_]+$")


@reader(".cir", ".net", ".sp", ".spice", options=("output", "opamps"))
def read_netlist(
    text: str,
    *,
    output: str | Sequence[str] | None = None,
    opamps: Mapping[str, Sequence[str]] | Sequence[str] | None = None,
    filename: str = "<text>",
) -> Any:
    """Read a flat SPICE netlist into a :class:`~opsym.io.design.Design`.

    Parameters
    ----------
    text : str
        The netlist; its first line is the title, as in SPICE.
    output : str or (str, str)
        The output node (or ``"a,b"`` / a pair for ``V(a) − V(b)``); a netlist
        does not say it, so it is required.
    opamps : mapping or sequence, optional
        Pin order of op-amp subcircuits: ``{"MODEL": ("+", "-", "out", "v+",
        "v-")}`` by model name (any case), or one list for every model. Pins
        named other than ``+``, ``-`` and ``out`` are ignored. Default: the
        first three pins are ``+``, ``-``, ``out`` and the rest are ignored,
        with a note.
    filename : str
        Used in messages.

    Returns
    -------
    Design
        Every element symbolic, its number in ``values``; the ``AC`` source is
        the signal. What was skipped is listed in ``notes``.

    Raises
    ------
    DesignFileError
        A line opsym cannot read: the message names its number and text and
        says what to do.
    """
    expect_text(text, "read_netlist: the netlist", "'title\\nR1 in out 10k\\n.end'")
    expect_text(filename, "read_netlist: filename", "'amp.cir'")
    if isinstance(output, str) and "," in output:
        output = [part.strip() for part in output.split(",")]
    if output is not None and not (
        isinstance(output, str)
        or (isinstance(output, Sequence) and all(isinstance(n, str) for n in output))
    ):
        raise ArgumentTypeError(
            f"read_netlist: output {shown(output)} is not a node name; give e.g. 'out' "
            "or ('outp', 'outn')"
        )
    if opamps is not None and not isinstance(opamps, (Mapping, Sequence)):
        raise ArgumentTypeError(
            f"read_netlist: opamps {shown(opamps)} is not a pin map; give e.g. "
            "{'MYAMP': ('+', '-', 'out')} or ('+', '-', 'out')"
        )
    return NetlistReader(text, filename, opamps).read(output)


def write_netlist(
    circuit: Circuit | Design,
    values: Mapping[Any, Any] | None = None,
    *,
    params: Mapping[str, OpAmpParams] | None = None,
    grade: str = "typical",
    signal: str | None = None,
    commands: Sequence[str] = (".op",),
    ideal_gain: float = IDEAL_GAIN,
) -> str:
    """Write ``circuit`` with its numbers as a SPICE netlist.

    Parameters
    ----------
    circuit : Circuit or Design
        A design brings its values, parameter sets and signal.
    values : mapping
        Numbers by name (``"R1"``, ``"U1.Vos"``, ``"U1.A0"``); they win over
        parameter sets.
    params : mapping of str to OpAmpParams, optional
        Parameter set of each op-amp, read at ``grade``: ``Vos`` is the set's
        value, ``Ib± = Ib ± Ios/2``.
    signal : str, optional
        The source written with ``AC 1`` (every other source ``AC 0``).
    commands : sequence of str
        Lines written before ``.end`` (analysis cards or a control block).
    ideal_gain : float
        Gain of the controlled source that stands in for an ideal op-amp.

    Returns
    -------
    str
        The netlist. Element values and sources without a number are refused;
        op-amp error sources without one are written as 0 with a comment.
    """
    if not isinstance(circuit, (Design, Circuit)):
        raise ArgumentTypeError(
            f"write_netlist: expected a Circuit or a Design, not {shown(circuit)}"
        )
    if values is not None:
        expect_mapping(values, "write_netlist: values")
    if params is not None:
        expect_mapping(params, "write_netlist: params", "{'U1': opamp_parameters('generic CMOS')}")
    if isinstance(circuit, Design):
        design = circuit
        circuit = design.circuit
        values = {**design.values, **(values or {})}
        params = {**design.opamps, **(params or {})}
        signal = signal or design.signal
    return _Writer(circuit, values or {}, params or {}, grade, ideal_gain).text(signal, commands)


class _Writer:
    def __init__(
        self, circuit: Circuit, values: Mapping[Any, Any], params: Mapping[str, OpAmpParams],
        grade: str, ideal_gain: float,
    ) -> None:  # fmt: skip
        self.circuit, self.params, self.grade, self.ideal = circuit, params, grade, ideal_gain
        self.values = {str(k): v for k, v in values.items()}
        self.taken: dict[str, set[str]] = {"node": set(), "card": set()}
        self.nodes: dict[str, str] = {"0": "0"}
        self.lines: list[str] = []

    def text(self, signal: str | None, commands: Sequence[str]) -> str:
        c = self.circuit
        for n in c.nodes if hasattr(c, "nodes") else ():
            self.node(n)
        head = [f"* {c.title or 'opsym circuit'}",
                "* written by opsym: op-amps as controlled sources, their error sources as "
                "V and I sources"]  # fmt: skip
        for e in c.elements:
            if isinstance(e, OpAmp):
                self.opamp(e)
            elif isinstance(e, TwoTerminal):
                self.two_terminal(e, signal)
        return "\n".join([*head, *self.lines, *commands, ".end", ""])

    def node(self, n: str) -> str:
        if n not in self.nodes:
            base = n if _SAFE.match(n) else re.sub(r"[^A-Za-z0-9_]", "_", n)
            self.nodes[n] = self.fresh(base, "node")
        return self.nodes[n]

    def fresh(self, base: str, space: str = "card") -> str:
        """A name not yet used among nodes or cards (SPICE ignores case)."""
        name, taken = base, self.taken[space]
        while name.lower() in taken or name.lower() == "gnd":
            name += "_"
        taken.add(name.lower())
        return name

    def number(self, expr: Any, what: str) -> float:
        v = to_exact(expr, what)
        for _ in range(8):
            known = {s: self.values[s.name] for s in v.free_symbols if s.name in self.values}
            if not known:
                break
            v = v.subs(known)
        if not v.is_number:
            missing = ", ".join(sorted(s.name for s in v.free_symbols))
            raise InvalidValueError(
                f"{what}: no number for {missing}; give it in values= (e.g. {{'{missing}': ...}})"
            )
        return float(v)

    def two_terminal(self, e: TwoTerminal, signal: str | None) -> None:
        letter = _LETTER[type(e)]
        name = self.fresh(e.name if e.name[0].upper() == letter else f"{letter}_{e.name}")
        value = self.number(e.value, f"{e.describe()}")
        card = f"{name} {self.node(e.a)} {self.node(e.b)}"
        if letter in "VI":
            self.lines.append(f"{card} DC {value!r} AC {1 if e.name == signal else 0}")
        else:
            self.lines.append(f"{card} {value!r}")

    def source_value(self, amp: OpAmp, symbol: sp.Symbol) -> tuple[float, str]:
        """The number of an op-amp error source and how it was found."""
        name = symbol.name
        if name in self.values:
            return self.number(self.values[name], name), ""
        p = self.params.get(amp.name)
        what = name.split(".", 1)[1]
        if p is not None and what in ("Vos", "Ib+", "Ib-"):
            if what == "Vos":
                v = p.value("vos", self.grade)
            else:
                ib, ios = p.value("ib", self.grade), p.value("ios", self.grade) or 0.0
                v = None if ib is None else ib + (ios / 2 if what == "Ib+" else -ios / 2)
            if v is not None:
                return float(v), f" (from {p.name}, {self.grade})"
        spec = SYMBOLS.get(what)
        if p is not None and spec is not None and spec.datasheet and what == "Voscm":
            v = p.value(spec.datasheet, self.grade)
            if v is not None:
                return float(v), f" (from {p.name}, {self.grade})"
        return 0.0, " (not given: 0)"

    def parameter(self, amp: OpAmp, expr: sp.Expr) -> float:
        p = self.params.get(amp.name)
        if p is not None:
            for k, v in p.values_for(amp.name, self.grade).items():
                self.values.setdefault(k, v)
        return self.number(expr, f"op-amp {amp.name}")

    def opamp(self, amp: OpAmp) -> None:
        plus, minus, out = (self.node(n) for n in amp.nodes[:3])
        tag = re.sub(r"[^A-Za-z0-9_]", "_", amp.name)
        fda = isinstance(amp, FullyDifferentialAmp)
        # an FDA's controlled source drives the internal node d with Vod
        gain_out = self.fresh(f"{tag}_d", "node") if fda else out
        inner, rest, cm = plus, list[str](), list[tuple[str, float, str]]()
        for n in amp.nonideals:
            if getattr(n, "noise", False):
                continue
            for inj in n.injections(amp.name):
                if isinstance(inj, SeriesVoltage):
                    v, how = self.source_value(amp, inj.source)
                    v *= self.parameter(amp, inj.weight)
                    nxt = self.fresh(f"{tag}_p{len(rest) + 1}", "node")
                    card = self.fresh(f"V_{tag}_{_safe(inj.source.name.split('.')[1])}")
                    rest.append(f"{card} {nxt} {inner} DC {v!r} ; {inj.source.name}{how}")
                    inner = nxt
                elif isinstance(inj, PinCurrent):
                    v, how = self.source_value(amp, inj.source)
                    pin = plus if inj.pin == "plus" else minus
                    if pin == "0":
                        continue  # a current into a grounded pin changes nothing
                    card = self.fresh(f"I_{tag}_{_safe(inj.source.name.split('.')[1])}")
                    rest.append(f"{card} {pin} 0 DC {v!r} ; {inj.source.name}{how} into the pin")
                elif isinstance(inj, PinAdmittance):
                    ends = {"plus": plus, "minus": minus, "out": out, "ground": "0"}
                    g = self.parameter(amp, inj.admittance)
                    card = self.fresh(f"R_{tag}_{inj.a}_{inj.b}")
                    rest.append(f"{card} {ends[inj.a]} {ends[inj.b]} {1 / g!r} ; {n.kind}")
                elif isinstance(inj, CommonModeVoltage):
                    v, how = self.source_value(amp, inj.source)
                    cm.append((inj.source.name, v * self.parameter(amp, inj.weight), how))
                elif isinstance(inj, OutputBalance):
                    cm.append(("balance", self.parameter(amp, inj.ratio), ""))
        self.lines += [*self.gain(amp, inner, minus, gain_out, tag), *rest]
        if isinstance(amp, FullyDifferentialAmp):
            self.lines += self.fda_outputs(amp, gain_out, tag, cm)

    def fda_outputs(
        self, amp: FullyDifferentialAmp, d: str, tag: str, cm: list[tuple[str, float, str]]
    ) -> list[str]:
        """V(out+) − V(out-) = V(d); their mean = V(vocm) + Σ offsets + ebal·V(d), in series."""
        op, on, vocm = (self.node(n) for n in (amp.out, amp.out_minus, amp.vocm))
        node = self.fresh(f"{tag}_cm0", "node")
        lines = [f"{self.fresh(f'E_{tag}_vocm')} {node} 0 {vocm} 0 1.0 ; {amp.name}: Vocm input"]
        for k, (what, v, how) in enumerate(cm, start=1):
            nxt = self.fresh(f"{tag}_cm{k}", "node")
            if what == "balance":
                card = self.fresh(f"E_{tag}_bal")
                lines.append(f"{card} {nxt} {node} {d} 0 {v!r} ; {amp.name}.ebal: ebal·Vod")
            else:
                card = self.fresh(f"V_{tag}_{_safe(what.split('.')[1])}")
                lines.append(f"{card} {nxt} {node} DC {v!r} ; {what}{how}")
            node = nxt
        lines += [
            f"{self.fresh(f'E_{tag}_op')} {op} {node} {d} 0 0.5 ; {amp.name}: out+ = cm + Vod/2",
            f"{self.fresh(f'E_{tag}_on')} {on} {node} {d} 0 -0.5 ; {amp.name}: out- = cm - Vod/2",
        ]
        return lines

    def gain(self, amp: OpAmp, ctrl: str, minus: str, out: str, tag: str) -> list[str]:
        e = self.fresh(f"E_{tag}")
        if amp.gain is None:
            return [f"{e} {out} 0 {ctrl} {minus} {self.ideal!r} ; {amp.name}: ideal "
                    "(high-gain stand-in)"]  # fmt: skip
        if LAPLACE not in amp.gain.free_symbols:
            a = self.parameter(amp, amp.gain)
            return [f"{e} {out} 0 {ctrl} {minus} {a!r} ; {amp.name}: gain {a:g}"]
        if sp.simplify(amp.gain - SinglePole().gain(amp.name)) != 0:
            raise InvalidValueError(
                f"op-amp {amp.name}: its gain {amp.gain} is not ideal, a number or the single "
                "pole; write_netlist cannot draw it with R, C and controlled sources"
            )
        a0_sym, gbw_sym = SinglePole().parameters(amp.name)
        a0, gbw = self.parameter(amp, a0_sym), self.parameter(amp, gbw_sym)
        x, y = self.fresh(f"{tag}_a", "node"), self.fresh(f"{tag}_pole", "node")
        r, c = self.fresh(f"R_{tag}_pole"), self.fresh(f"C_{tag}_pole")
        cap = a0 / (2 * math.pi * gbw * 1000.0)
        return [
            f"{e} {x} 0 {ctrl} {minus} {a0!r} ; {amp.name}: A0 = {a0:g}",
            f"{r} {x} {y} 1000.0 ; with {c}: the open-loop pole at GBW/A0 = {gbw / a0:g} Hz",
            f"{c} {y} 0 {cap!r}",
            f"{self.fresh(f'E_{tag}_buf')} {out} 0 {y} 0 1.0 ; buffer",
        ]


def _safe(text: str) -> str:
    return text.replace("+", "p").replace("-", "m")
