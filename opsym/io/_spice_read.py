"""Reading a flat SPICE netlist into a :class:`~opsym.io.design.Design` (see :mod:`.spice`).

Every line either becomes part of the circuit, is skipped with a note (an
analysis card, a model, a subcircuit body), or is refused with a
:class:`~opsym.DesignFileError` that names the line and says what to do.
"""

from __future__ import annotations

import os
import re
from collections.abc import Mapping, Sequence

import sympy as sp

from ..errors import DesignFileError, OpsymError
from ..model.circuit import Circuit
from ..model.topology import check_topology
from ._spice_text import SpiceLine, logical_lines, spice_number
from .design import Design

__all__ = ["NetlistReader", "pin_roles"]

_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")
_NODE = re.compile(r"^[A-Za-z0-9_][A-Za-z0-9_+\-]*$")
_ROLES = {"+": "+", "plus": "+", "-": "-", "−": "-", "minus": "-", "out": "out", "output": "out"}
#: Dot cards skipped with a note: analyses and output requests (opsym runs its own).
_ANALYSES = frozenset(
    ".op .ac .dc .tran .noise .tf .sens .pz .four .disto .print .plot .probe .save .meas "
    ".measure .options .option .opt .temp .backanno .ic .nodeset .width .step".split()
)
_TRANSIENT = frozenset("sin sine pulse pwl exp sffm am trrandom".split())
_REFUSED = {
    "d": "a diode", "q": "a bipolar transistor", "m": "a MOSFET", "j": "a JFET",
    "z": "a MESFET", "k": "coupled inductors", "b": "a behavioural source",
    "s": "a switch", "w": "a switch", "t": "a transmission line", "o": "a lossy line",
    "u": "a distributed line", "f": "a current-controlled current source",
    "h": "a current-controlled voltage source",
    "g": "a voltage-controlled current source",
}  # fmt: skip
_WHAT_OPSYM_READS = (
    "opsym reads R, C, L, V and I elements, op-amps as X subcircuit instances, and E "
    "sources referred to ground (mapped to op-amps of that gain)"
)
_DEFAULT_PINS = ("+", "-", "out")


#: Pin names of a fully differential amplifier's second output and common-mode input.
_FDA_PINS = frozenset({"out+", "out-", "outp", "outn", "out_p", "out_n", "vocm", "ocm"})


def pin_roles(pins: Sequence[str], model: str) -> tuple[str, ...]:
    """Normalise a pin-order list: ``+``, ``-`` and ``out`` once each; other names are ignored.

    Examples
    --------
    >>> pin_roles(["-", "+", "V+", "V-", "OUT"], "OPA")
    ('-', '+', '', '', 'out')
    """
    if isinstance(pins, str) or not all(isinstance(p, str) for p in pins):
        raise DesignFileError(
            f"op-amp model {model}: the pin map is a list of pin names such as "
            "('+', '-', 'out', 'v+', 'v-'), one per pin in the order the X line lists them"
        )
    fda = [p for p in pins if p.strip().lower() in _FDA_PINS]
    if fda:
        raise DesignFileError(
            f"op-amp model {model}: pin {fda[0]!r} belongs to a fully differential amplifier, "
            "which netlists are not read into; declare it in a design file ([fdas.NAME], "
            "docs/design-files.md)"
        )
    roles = tuple(_ROLES.get(p.strip().lower(), "") for p in pins)
    if sorted(r for r in roles if r) != ["+", "-", "out"]:
        raise DesignFileError(
            f"op-amp model {model}: pin map {tuple(pins)!r} must name '+', '-' and 'out' "
            "once each (other pins, such as supplies, are ignored)"
        )
    return roles


class NetlistReader:
    """One reading of one netlist text."""

    def __init__(
        self, text: str, filename: str, opamps: Mapping[str, Sequence[str]] | Sequence[str] | None
    ) -> None:
        self.text, self.file = text, filename
        self.pins: dict[str, tuple[str, ...]] = {}
        self.every: tuple[str, ...] | None = None
        if isinstance(opamps, Mapping):
            self.pins = {k.lower(): pin_roles(v, k) for k, v in opamps.items()}
        elif opamps is not None:
            self.every = pin_roles(opamps, "(every)")
        self.params: dict[str, sp.Expr] = {}
        self.nodes: dict[str, str] = {}  # lower-case SPICE node -> opsym node
        self.names: dict[str, str] = {}  # lower-case SPICE name -> opsym name
        self.values: dict[str, sp.Expr] = {}
        self.notes: list[str] = []
        self.ac: list[str] = []
        self.sources: list[str] = []
        self.circuit = Circuit()

    # -- the whole netlist ---------------------------------------------------------------

    def read(self, output: str | Sequence[str] | None) -> Design:
        first = self.text.splitlines()[0] if self.text.strip() else ""
        card = r"^\s*[RCLVI][a-z_]*[0-9]\w*\s+\S+\s+\S+\s+(dc\s+)?([0-9.]+[a-z]*|\{\w+\})\s*$"
        if re.match(card, first, re.IGNORECASE):
            raise DesignFileError(
                f"{self.file}: line 1 ({first.strip()!r}) looks like an element, but the first "
                "line of a netlist is its title (SPICE would drop this element); add a title line"
            )
        first = first[len(".title") :] if first.lower().startswith(".title") else first
        title = first.lstrip("*").strip() or os.path.splitext(os.path.basename(self.file))[0]
        lines = list(logical_lines(self.text))
        lines = self.skip_blocks(lines)
        for line in lines:
            if line.words[0].lower() == ".param":
                self.param(line)
            elif line.words[0].lower() == ".title":
                title = line.text[len(".title") :].strip() or title
        self.circuit.title = title
        for line in lines:
            if not line.words[0].startswith("."):
                self.element(line)
            elif line.words[0].lower() not in (".param", ".title"):
                self.dot(line)
        if not self.circuit.elements:
            raise DesignFileError(f"{self.file}: the netlist has no elements; {_WHAT_OPSYM_READS}")
        out = self.output(output)
        try:
            check_topology(self.circuit)
        except OpsymError as err:
            raise DesignFileError(f"{self.file}: {err}") from err
        signal = self.ac[0] if len(self.ac) == 1 else None
        if signal is None and not self.ac and len(self.sources) == 1:
            signal = self.sources[0]
        return Design(
            self.circuit, out, self.values, signal, notes="\n".join(self.notes), source=self.file
        )

    def skip_blocks(self, lines: list[SpiceLine]) -> list[SpiceLine]:
        """Drop ``.subckt … .ends`` and ``.control … .endc`` blocks, each with a note."""
        kept: list[SpiceLine] = []
        block: SpiceLine | None = None
        for line in lines:
            card = line.words[0].lower()
            if block is not None:
                closing = ".ends" if block.words[0].lower() == ".subckt" else ".endc"
                if card == closing:
                    block = None
                continue
            if card in (".subckt", ".control"):
                block = line
                what = (
                    f"the subcircuit {line.words[1] if len(line.words) > 1 else ''} is not read "
                    "(op-amp instances follow the pin map)"
                    if card == ".subckt"
                    else "the .control block is not read"
                )
                self.note(line, what)
                continue
            if card in (".ends", ".endc"):
                raise self.error(line, f"{card} without its opening card; remove it")
            kept.append(line)
        if block is not None:
            raise self.error(block, "the block is not closed; add its .ends or .endc line")
        return kept

    def note(self, line: SpiceLine, text: str) -> None:
        self.notes.append(f"Netlist line {line.number} ({line.words[0]}): {text}.")

    def error(self, line: SpiceLine, text: str) -> DesignFileError:
        return DesignFileError(f"{line.where(self.file)}: {text}")

    # -- values, names and nodes ---------------------------------------------------------

    def value(self, line: SpiceLine, word: str, what: str) -> sp.Expr:
        if word.startswith("{") and word.endswith("}"):
            inner = word[1:-1].strip()
            if inner.lower() in self.params:
                return self.params[inner.lower()]
            if _NAME.match(inner):
                raise self.error(
                    line, f"{what}: no .param defines {inner!r}; add .param {inner}=…"
                )
            raise self.error(
                line, f"{what}: opsym reads only {{name}} references, not expressions such as "
                f"{word}; compute the number or define it with .param"
            )  # fmt: skip
        try:
            return spice_number(word, what)
        except OpsymError as err:
            raise self.error(line, str(err)) from None

    @staticmethod
    def numeric(word: str) -> bool:
        return word.startswith("{") or word[:1] in "0123456789.+-"

    def param(self, line: SpiceLine) -> None:
        words = line.words[1:]
        if not words or len(words) % 3 or any(words[i] != "=" for i in range(1, len(words), 3)):
            raise self.error(line, "write .param name=value (one or more pairs)")
        for i in range(0, len(words), 3):
            name = words[i]
            if not _NAME.match(name):
                raise self.error(line, f"{name!r} is not a parameter name; use letters and digits")
            self.params[name.lower()] = self.value(line, words[i + 2], f".param {name}")

    def name(self, line: SpiceLine, raw: str | None = None) -> str:
        name = raw or line.words[0]
        if not _NAME.match(name):
            raise self.error(
                line, f"opsym names elements with letters, digits and '_'; rename {name!r}"
            )
        if name.lower() in self.names:
            raise self.error(
                line, f"{name} is defined twice (SPICE names ignore case); rename one"
            )
        self.names[name.lower()] = name
        return name

    def node(self, word: str) -> str:
        key = word.lower()
        if key in ("0", "gnd"):
            return "0"
        if key not in self.nodes:
            node = word if _NODE.match(word) else re.sub(r"[^A-Za-z0-9_+\-]", "_", word)
            if not _NODE.match(node):
                node = "n" + node
            while node in self.nodes.values() or node.lower() == "gnd":
                node += "_"
            if node != word:
                self.notes.append(f"Netlist node {word!r} is called {node!r} here.")
            self.nodes[key] = node
        return self.nodes[key]

    def output(self, output: str | Sequence[str] | None) -> str | tuple[str, str]:
        if output is None:
            raise DesignFileError(
                f"{self.file}: a netlist does not say which node is the output; give it with "
                "output='out' (Python) or --output out (command line)"
            )
        wanted = [output] if isinstance(output, str) else list(output)
        if len(wanted) not in (1, 2) or not all(isinstance(w, str) for w in wanted):
            raise DesignFileError(f"{self.file}: output is a node name or a pair of node names")
        found = []
        for w in wanted:
            if w.lower() not in self.nodes:
                known = ", ".join(sorted(self.nodes.values())) or "none"
                raise DesignFileError(
                    f"{self.file}: output node {w!r} is not in the netlist; its nodes are {known}"
                )
            found.append(self.nodes[w.lower()])
        return found[0] if len(found) == 1 else (found[0], found[1])

    # -- cards ---------------------------------------------------------------------------

    def dot(self, line: SpiceLine) -> None:
        card = line.words[0].lower()
        if card in _ANALYSES:
            self.note(line, "ignored; opsym runs its own analyses")
        elif card == ".model":
            self.note(line, "the model is not read")
        elif card in (".include", ".inc", ".lib"):
            self.note(
                line, "the file is not read: op-amp subcircuits follow the pin map; paste any "
                "other element into this netlist"
            )  # fmt: skip
        elif card in (".end", ".global"):
            pass
        else:
            raise self.error(
                line, f"{line.words[0]} is not a card opsym reads; remove the line "
                "(opsym reads elements, .param, .title, .end; analyses are ignored)"
            )  # fmt: skip

    def element(self, line: SpiceLine) -> None:
        letter = line.words[0][0].lower()
        read = {"r": self.passive, "c": self.passive, "l": self.passive, "v": self.source,
                "i": self.source, "e": self.vcvs, "x": self.instance}.get(letter)  # fmt: skip
        if read is None:
            what = _REFUSED.get(letter, "an element opsym does not know")
            raise self.error(line, f"{line.words[0]} is {what}; {_WHAT_OPSYM_READS}")
        try:
            read(line)
        except DesignFileError:
            raise
        except OpsymError as err:
            raise self.error(line, str(err)) from err

    def count(self, line: SpiceLine, least: int) -> list[str]:
        if len(line.words) < least:
            raise self.error(line, f"{line.words[0]} needs at least {least - 1} fields after it")
        return line.words

    def passive(self, line: SpiceLine) -> None:
        w = self.count(line, 4)
        name, a, b = self.name(line), self.node(w[1]), self.node(w[2])
        value = self.value(line, w[3], name)
        extra = w[4:]
        if extra:
            key = extra[0].lower()
            ok = (key == "ic" and name[0] in "cClL") or (key in ("tc", "tc1", "tc2"))
            if not ok or len(extra) % 3 or extra[1] != "=":
                raise self.error(
                    line, f"{' '.join(extra)}: opsym reads only the value of {name}; draw a "
                    "series or parallel part as its own element and remove the rest"
                )  # fmt: skip
            self.note(line, f"{' '.join(extra)} ignored (initial condition or temperature law)")
        if value.is_zero and name[0] in "rR":
            raise self.error(line, f"{name} = 0 Ω; join its two nodes instead (a wire)")
        if not value.is_positive:
            raise self.error(line, f"{name} = {value} is not positive; give a value > 0")
        add = {"r": self.circuit.resistor, "c": self.circuit.capacitor,
               "l": self.circuit.inductor}[name[0].lower()]  # fmt: skip
        add(name, a, b)
        self.values[name] = value

    def source(self, line: SpiceLine) -> None:
        w = self.count(line, 3)
        name, a, b = self.name(line), self.node(w[1]), self.node(w[2])
        rest, dc, ac, i = w[3:], None, None, 0
        while i < len(rest):
            word = rest[i].lower()
            if word == "dc" and i + 1 < len(rest):
                dc, i = self.value(line, rest[i + 1], name), i + 2
            elif word == "ac":
                ac, i = sp.S.One, i + 1
                if i < len(rest) and self.numeric(rest[i]):
                    ac, i = self.value(line, rest[i], name), i + 1
                if i < len(rest) and self.numeric(rest[i]):
                    i += 1  # the AC phase
            elif re.sub(r"[^a-z].*", "", word) in _TRANSIENT:
                end = next((k for k in range(i, len(rest)) if ")" in rest[k]), len(rest))
                self.note(line, f"the transient function {' '.join(rest[i : end + 1])} is ignored")
                i = end + 1
            elif i == 0:
                dc, i = self.value(line, rest[0], name), 1
            else:
                raise self.error(
                    line, f"{rest[i]!r}: a source reads [DC] value, AC magnitude [phase] and "
                    "transient functions; remove the rest"
                )  # fmt: skip
        add = self.circuit.voltage_source if name[0] in "vV" else self.circuit.current_source
        add(name, a, b)
        self.values[name] = dc if dc is not None else sp.S.Zero
        self.sources.append(name)
        if ac is not None and not ac.is_zero:
            self.ac.append(name)

    def vcvs(self, line: SpiceLine) -> None:
        w = self.count(line, 4)
        keywords = {"value", "poly", "table", "laplace", "freq", "="}
        if len(w) != 6 or {x.lower().split("(")[0] for x in w} & keywords or w[1] in ("0", "gnd"):
            raise self.error(
                line, "opsym maps only a linear E source 'E1 out 0 in+ in- gain' (an op-amp of "
                "that gain); write POLY, VALUE and tables as their own stages"
            )  # fmt: skip
        if w[2].lower() not in ("0", "gnd"):
            raise self.error(
                line, f"{w[0]}'s output is referred to {w[2]}, not ground; opsym maps an E source "
                "to an op-amp only when it is 'E1 out 0 in+ in- gain'"
            )  # fmt: skip
        name = self.name(line)
        gain = self.value(line, w[5], name)
        plus, minus = self.node(w[3]), self.node(w[4])
        if gain.is_zero:
            raise self.error(line, f"{name} has zero gain; remove it")
        if gain.is_negative:
            plus, minus, gain = minus, plus, -gain
        self.circuit.opamp(
            name, plus=plus, minus=minus, out=self.node(w[1]), gain=gain,
            offset=False, bias=False, noise=False,
        )  # fmt: skip

    def instance(self, line: SpiceLine) -> None:
        w = self.count(line, 3)
        if "=" in w:
            first = w.index("=") - 1
            self.note(line, f"the parameters {' '.join(w[first:])} are ignored")
            w = w[:first]
        if w[-1].lower() == "params:":
            w = w[:-1]
        model, pins = w[-1], w[1:-1]
        roles = self.pins.get(model.lower(), self.every)
        if roles is None:
            roles = _DEFAULT_PINS + ("",) * max(0, len(pins) - 3)
            if len(pins) > 3:
                self.pins[model.lower()] = roles
                self.note(
                    line, f"the pins of {model} are read as +, -, out; the further pins "
                    f"{' '.join(pins[3:])} (supplies) are ignored; give a pin map if the order "
                    "differs"
                )  # fmt: skip
        if len(pins) != len(roles):
            raise self.error(
                line, f"{w[0]} has {len(pins)} pins but the pin map of {model} names "
                f"{len(roles)}; give the pin map of {model} in the order this line lists them"
            )  # fmt: skip
        raw = w[0][1:] if _NAME.match(w[0][1:]) and w[0][1:].lower() not in self.names else w[0]
        name = self.name(line, raw)
        nodes = {role: self.node(p) for role, p in zip(roles, pins, strict=True) if role}
        self.circuit.opamp(name, plus=nodes["+"], minus=nodes["-"], out=nodes["out"])
