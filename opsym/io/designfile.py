"""Design files: a circuit, its numbers and the analyses wanted, in TOML.

The format is described in ``docs/design-files.md``. :func:`load_design` reads
a file into a :class:`Design` (an :class:`opsym.Circuit` plus its settings);
:func:`parse_design` does the same for text. Every value goes through the
whitelist parser :func:`~opsym.values.parse_value`; nothing in a file is
ever evaluated. Unknown keys are errors, and every error names the file, the
table, the key and (when it can be found) the line.

Examples
--------
>>> from opsym.io.designfile import parse_design
>>> d = parse_design('''
... title = "inverting stage"
... output = "out"
... [resistors]
... R1 = { between = ["in", "n"], value = "10k" }
... R2 = { between = ["n", "out"], value = "100k" }
... [voltage-sources]
... Vin = { plus = "in", minus = "0" }
... [opamps.U1]
... plus = "0"
... minus = "n"
... out = "out"
... ''')
>>> d.analyze().coefficient("Vin")
-R2/R1
>>> d.values["R2"]
100000
>>> parse_design('output = "out"\\n[resistors]\\nR1 = { between = ["a", "0"], colour = "red" }',
...              filename="bad.toml")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.DesignFileError: bad.toml [resistors.R1] (line 3): unknown key 'colour'; ...
"""

from __future__ import annotations

import os
import sys
from collections.abc import Mapping
from typing import Any

import sympy as sp

from ..errors import ArgumentTypeError, DesignFileError, InvalidValueError, OpsymError
from ..model.circuit import Circuit
from ..model.elements import (
    TWO_TERMINALS,
    Capacitor,
    Inductor,
    Resistor,
    TwoTerminal,
)
from ..model.limits import expect_text
from ..model.nonideal import KINDS, SinglePole, gain_model
from ..model.symbols import (
    OPAMP_PARAMETERS,
    SYMBOLS,
    component_symbol,
    opamp_symbol,
    source_symbol,
)
from ..model.topology import check_topology
from ..numeric.eseries import SERIES
from ..numeric.params import (
    OpAmpParams,
    ResistorParams,
    field_units,
    opamp_parameters,
    resistor_parameters,
)
from ._settings import SettingsReader
from ._tables import Locator, Table
from .design import (
    DEFAULT_INCLUDE,
    ELEMENT_TABLES,
    FDA_DEFAULT_INCLUDE,
    FORMAT,
    Design,
    NullRequest,
    opamp_values,
)
from .formats import load, reader

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - Python 3.10 reads TOML with the tomli backport
    import tomli as tomllib

__all__ = ["load_design", "parse_design"]  # the Design record lives in .design

_TOP_KEYS = (
    "format", "title", "notes", "revision", "date", "output", "input", "rails", *ELEMENT_TABLES,
)  # fmt: skip
_SETTING_TABLES = ("analysis", "budget", "tolerance", "response", "noise", "requirement")


def load_design(path: str | os.PathLike[str], **options: Any) -> Design:
    """Read a design file (or a netlist, by its suffix: see ``docs/netlists.md``).

    ``options`` go to the reader of the suffix: a netlist takes ``output`` and
    ``opamps`` (:func:`opsym.io.spice.read_netlist`).

    Raises
    ------
    DesignFileError
        The file cannot be read, is not TOML, or does not describe a design;
        the message names the file, table, key and line. Errors of the circuit
        model (a floating node, say) come as a DesignFileError too, with the
        model's exception as ``__cause__``.
    """
    if not isinstance(path, (str, os.PathLike)):
        raise ArgumentTypeError(
            f"load_design: expected a file path such as 'amp.toml', not a {type(path).__name__}"
        )
    return load(path, **options)  # by suffix: this module reads .toml


@reader(".toml")
def parse_design(text: str, *, filename: str = "<text>") -> Design:
    """Read a design from TOML text; ``filename`` is used in messages."""
    expect_text(text, "parse_design text", "the TOML text of a design file")
    filename = str(filename)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise DesignFileError(f"{filename}: not valid TOML: {err}") from None
    return _Reader(data, Locator(filename, text)).read()


class _Reader(SettingsReader):
    def __init__(self, data: dict[str, Any], locator: Locator) -> None:
        self.top = Table(data, (), locator)
        self.file = locator.filename
        self.names: dict[str, sp.Expr] = {}
        self.values: dict[str, sp.Expr] = {}
        self.opamps: dict[str, OpAmpParams] = {}
        self.resistors: dict[str, ResistorParams] = {}
        self.circuit = Circuit()
        self.kinds: dict[str, tuple[str, ...]] = {}
        self.rails: dict[str, tuple[sp.Expr, sp.Expr]] = {}

    def read(self) -> Design:
        top = self.top
        fmt = top.take_int("format", FORMAT, low=1, high=10**6)
        if fmt != FORMAT:
            raise top.error("format", f"format {fmt} is not known; this opsym reads format 1")
        title = top.take_str("title", default=None)
        notes = top.take_str("notes", default="") or ""
        revision = top.take_str("revision", default="") or ""
        date = top.take_str("date", default="") or ""
        supply = self.take_rails(top)
        if title is None:
            stem = os.path.splitext(os.path.basename(self.file))[0]
            title = stem if self.file != "<text>" else "design"
        circuit = Circuit(title)
        tables = {t: top.sub(t) for t in ELEMENT_TABLES}
        if not any(tables.values()):
            raise top.error(
                None, "the design has no elements; add [resistors], [opamps] and so on"
            )
        self.collect_names(tables)
        equations: dict[str, tuple[Table, str]] = {}
        for kind in ELEMENT_TABLES:
            table = tables[kind]
            if table is None:
                continue
            for name, body in table.items():
                if not isinstance(body, dict):
                    raise table.error(
                        name, f"an element is a table; write {name} = {{ ... }} or [{kind}.{name}]"
                    )
                self.element(
                    circuit, kind, name, Table(body, (kind, name), top.locator), equations
                )
        self.circuit = circuit
        self.kinds = {a.name: tuple(n.kind for n in a.nonideals) for a in circuit.opamps}
        self.check_equations(equations)
        output = self.output(circuit)
        signal = self.signal(circuit)
        settings = {t: top.sub(t) for t in _SETTING_TABLES}
        top.finish()
        analysis = settings["analysis"]
        nulls: tuple[NullRequest, ...] = ()
        sensitivity = None
        average = True
        series = "E96"
        if analysis is not None:
            nulls = tuple(self.null(analysis, text) for text in analysis.take_strings("nulls"))
            sensitivity = self.sensitivity(analysis, circuit)
            average = analysis.take_bool("average-bias", True)
            series = analysis.take_str("series", "E96", choices=tuple(SERIES)) or "E96"
            analysis.finish()
        budget = self.budget(settings["budget"]) if settings["budget"] else None
        default, tolerance = self.tolerance(settings["tolerance"], circuit)
        response = noise = None
        if settings["response"] is not None:
            response = self.response(settings["response"], signal)
        if settings["noise"] is not None:
            noise = self.noise(settings["noise"], circuit, signal)
        requirement = None
        if settings["requirement"] is not None:
            requirement = self.requirement(settings["requirement"])
        try:
            check_topology(circuit)
        except OpsymError as err:
            raise DesignFileError(f"{self.file}: {err}") from err
        return Design(
            circuit, output, self.values, signal, self.opamps, self.resistors, nulls,
            sensitivity, budget, tolerance, average, notes, self.file, default, series,
            response=response, noise=noise, rails=self.rails, supply=supply,
            revision=revision, date=date, requirement=requirement,
        )  # fmt: skip

    # -- elements ----------------------------------------------------------------------

    def collect_names(self, tables: Mapping[str, Table | None]) -> None:
        for kind, table in tables.items():
            if table is None:
                continue
            for name in table.data:
                if kind in ("opamps", "fdas"):
                    for what in OPAMP_PARAMETERS:
                        self.names[f"{name}.{what}"] = opamp_symbol(name, what)
                elif kind.endswith("sources"):
                    self.names[name] = source_symbol(name)
                else:
                    self.names[name] = component_symbol(name)

    def element(
        self, circuit: Circuit, kind: str, name: str, t: Table,
        equations: dict[str, tuple[Table, str]],
    ) -> None:  # fmt: skip
        try:
            if kind in ("opamps", "fdas"):
                self.opamp(circuit, name, t, fda=kind == "fdas")
            else:
                self.two_terminal(circuit, kind, name, t, equations)
        except DesignFileError:
            raise
        except OpsymError as err:
            raise t.wrap(None, err) from err
        t.finish()

    def two_terminal(
        self, circuit: Circuit, kind: str, name: str, t: Table,
        equations: dict[str, tuple[Table, str]],
    ) -> None:  # fmt: skip
        unit = next(cls.unit for cls in TWO_TERMINALS if cls.table == kind)
        if kind == "voltage-sources":
            a, b = t.take_node("plus"), t.take_node("minus")
        elif kind == "current-sources":
            a, b = t.take_node("from"), t.take_node("into")
        else:
            a, b = t.take_nodes("between", 2)
        value = t.take_value("value", unit=unit)
        equals = None
        if t.has("equals"):
            if value is not None:
                raise t.error("equals", "give either 'value' (a number) or 'equals', not both")
            equals = t.take_value("equals", unit=unit, names=self.names)
            equations[name] = (t, "equals")
        symbolic = t.take_bool("symbolic", True)
        if not symbolic and value is None:
            raise t.error("symbolic", "'symbolic = false' needs a 'value' to put in its place")
        if kind == "resistors":
            self.resistor_grade(name, t)
        element_value = equals if equals is not None else (None if symbolic else value)
        if value is not None and symbolic:
            if kind in ("resistors", "capacitors", "inductors") and not value.is_positive:
                problem = InvalidValueError(
                    f"{kind[:-1]} {name}: value {value} is not positive; give a value > 0"
                )
                raise t.wrap("value", problem) from problem
            self.values[name] = value
        add = {
            "resistors": circuit.resistor, "capacitors": circuit.capacitor,
            "inductors": circuit.inductor, "voltage-sources": circuit.voltage_source,
            "current-sources": circuit.current_source,
        }[kind]  # fmt: skip
        add(name, a, b, value=element_value)

    def resistor_grade(self, name: str, t: Table) -> None:
        grade = t.take_str("grade", default=None)
        tol = t.take_value("tolerance", unit="ratio")
        tcr = t.take_value("tcr", unit="ratio/°C")
        if grade is not None and (tol is not None or tcr is not None):
            raise t.error("grade", "give a 'grade' or 'tolerance'/'tcr', not both")
        try:
            if grade is not None:
                self.resistors[name] = resistor_parameters(grade)
            elif tol is not None or tcr is not None:
                self.resistors[name] = ResistorParams(
                    float(tol or 0), float(tcr or 0), f"{name} grade"
                )
        except OpsymError as err:
            raise t.wrap("grade" if grade is not None else "tolerance", err) from err

    def opamp(self, circuit: Circuit, name: str, t: Table, fda: bool = False) -> None:
        """An ``[opamps.U1]`` table, or with ``fda`` an ``[fdas.U1]`` one."""
        plus, minus = t.take_node("plus"), t.take_node("minus")
        if fda:
            outs = [t.take_node("out-plus"), t.take_node("out-minus")]
            outs.append(t.take_node("vocm") if t.has("vocm") else "0")
        else:
            outs = [t.take_node("out")]
        gain: Any = "ideal"
        if t.has("gain"):
            raw = t.raw("gain")
            if raw in ("ideal", "finite") or (isinstance(raw, str) and gain_model(raw)):
                gain = raw
            else:
                gain = t.value_of(raw, "gain", unit="ratio", names=self.names)
        default = FDA_DEFAULT_INCLUDE if fda else DEFAULT_INCLUDE
        include = t.take_strings("include") if t.has("include") else list(default)
        for kind in include:
            if kind not in KINDS:
                raise t.error(
                    "include", f"{kind!r} is not a non-ideality; use any of {', '.join(KINDS)}"
                )
        if len(set(include)) != len(include):
            raise t.error("include", "a non-ideality is listed twice")
        self.opamp_values(name, t, gain, include)
        own = self.take_rails(t)
        if own is not None:
            self.rails[name] = own
        if t.has("parameters"):
            self.opamps[name] = self.parameter_set(name, t)
        flagged = ("offset", "bias", "cmrr", "psrr")  # Circuit.opamp's own switches
        for kind in include:
            needs = KINDS[kind].requires
            if needs is not None and needs not in include:
                raise t.error("include", f"{kind!r} builds on {needs!r}; add \"{needs}\" too")
        switches = {f: f in include for f in flagged}
        extra = [KINDS[k]() for k in include if k not in flagged]
        if fda:
            op, on, vocm = outs
            circuit.fda(name, plus, minus, op, on, vocm, gain=gain, noise=False,
                        ocm_offset=False, extra=extra, **switches)  # fmt: skip
        else:
            circuit.opamp(name, plus=plus, minus=minus, out=outs[0], gain=gain, noise=False,
                          extra=extra, **switches)  # fmt: skip

    def opamp_values(self, name: str, t: Table, gain: Any, include: list[str]) -> None:
        """The op-amp's own numbers (``Vcm``, ``A0``, ``en``, ...: see ``opamp_values``)."""
        own = set(SinglePole().parameters(name))
        model = gain_model(gain) if isinstance(gain, str) else None
        pole = model is not None or (isinstance(gain, sp.Expr) and bool(gain.free_symbols & own))
        poles = model.poles if model is not None else 1
        for what, (unit, needs) in opamp_values().items():
            value = t.take_value(what, unit=unit)
            if value is None:
                continue
            if what in ("Vcm", "dVs"):  # read as they always were, whatever is included
                self.values[f"{name}.{what}"] = value
                continue
            if not value.is_number:  # pragma: no cover - names are not allowed here
                raise t.error(what, "give a number")
            if what in ("A0", "GBW"):
                if not value.is_positive:
                    raise t.error(what, f"{what} = {value} must be positive; give e.g. "
                                  + ("'100 dB'" if what == "A0" else "'1 MHz'"))  # fmt: skip
                if not pole:
                    raise t.error(
                        what, f"{what} belongs to the single-pole gain model; set "
                        "gain = \"pole\" or remove it"
                    )  # fmt: skip
            elif needs.startswith("pole"):  # a further pole f2, f3, ...
                k = int(what[1:])
                if not value.is_positive:
                    raise t.error(what, f"{what} = {value} must be positive; give e.g. '20 MHz'")
                if poles < k:
                    raise t.error(
                        what, f"{what} is pole {k} of the open-loop gain; set gain = "
                        f"\"pole{k}\" (or more poles) or remove it"
                    )  # fmt: skip
            else:
                if value.is_negative:
                    raise t.error(what, f"{what} = {value} is negative; give a value >= 0")
                if needs not in include:
                    words = SYMBOLS[what].words
                    raise t.error(
                        what, f"{what} ({words}) belongs to the kind {needs!r}, which the "
                        f"op-amp does not carry; add \"{needs}\" to include or remove {what}"
                    )  # fmt: skip
            self.values[f"{name}.{what}"] = value

    @staticmethod
    def take_rails(t: Table) -> tuple[sp.Expr, sp.Expr] | None:
        """``rails = ["-15 V", "15 V"]``: the negative and the positive supply rail."""
        if not t.has("rails"):
            return None
        raw = t.raw("rails")
        hint = 'give the negative and the positive rail, e.g. rails = ["-15 V", "15 V"]'
        if not isinstance(raw, list) or len(raw) != 2:
            raise t.error("rails", hint)
        neg, pos = (t.value_of(v, "rails", unit="V") for v in raw)
        if not (neg.is_number and pos.is_number) or not neg < pos:
            raise t.error("rails", f"{neg} V and {pos} V: {hint} (negative first)")
        return neg, pos

    def parameter_set(self, name: str, t: Table) -> OpAmpParams:
        raw = t.raw("parameters")
        try:
            if isinstance(raw, str):
                return opamp_parameters(raw)
        except OpsymError as err:
            raise t.wrap("parameters", err) from err
        p = t.sub("parameters")
        if p is None:  # pragma: no cover - raw is present
            raise t.error("parameters", "missing")
        base = p.take_str("based-on", default=None)
        fields: dict[str, Any] = {}
        label = p.take_str("name", default=None)
        if label is not None:
            fields["name"] = label
        description = p.take_str("description", default=None)
        if description is not None:
            fields["description"] = description
        for key, unit in field_units().items():
            if not p.has(key):
                continue
            value = p.raw(key)
            if unit == "dB":  # a number of dB: "90 dB" or 90, not the ratio 10**(90/20)
                if isinstance(value, str):
                    text = value.strip()
                    value = text[:-2] if text.endswith("dB") else text
                fields[key] = float(p.value_of(value, key))
            else:
                fields[key] = float(p.value_of(value, key, unit=unit))
        if p.has("bias_law"):
            fields["bias_law"] = p.raw("bias_law")
        p.finish()
        try:
            if base is not None:
                params = opamp_parameters(base)
                if "name" not in fields:
                    fields["name"] = f"{params.name}, as changed for {name}"
                return params.replace(**fields)
            fields.setdefault("name", f"{name} parameters")
            return OpAmpParams.from_mapping(fields)
        except OpsymError as err:
            raise p.wrap(None, err) from err

    def check_equations(self, equations: Mapping[str, tuple[Table, str]]) -> None:
        """Refuse ``equals`` that refer to themselves, directly or round a loop."""
        uses = {name: {s.name for s in self.names_in(name)} & set(equations) for name in equations}
        for start in equations:
            path, todo = [start], list(uses[start])
            seen: set[str] = set()
            while todo:
                n = todo.pop()
                if n == start:
                    t, key = equations[start]
                    raise t.error(
                        key, f"'{start}' is defined through itself; break the loop of 'equals'"
                    )
                if n not in seen:
                    seen.add(n)
                    path.append(n)
                    todo.extend(uses[n])
        self.check_equals_values(equations)

    def check_equals_values(self, equations: Mapping[str, tuple[Table, str]]) -> None:
        """Refuse an ``equals`` that gives a component a value <= 0 at the given values."""
        known = {self.names[n]: v for n, v in self.values.items() if n in self.names}
        elements = {n: self.circuit.element(n) for n in equations}
        defined = {self.names[n]: e.value for n, e in elements.items()
                   if n in self.names and isinstance(e, TwoTerminal)}  # fmt: skip
        for name, (t, key) in equations.items():
            element = elements[name]
            if not isinstance(element, (Resistor, Capacitor, Inductor)):
                continue
            value = element.value
            for _ in range(len(defined) + 1):  # loops were refused above
                value = value.xreplace(defined)
            value = value.xreplace(known)
            if value.is_number and value.is_positive is False:
                shown = f"{float(value):.6g}" if value.is_real else str(value)
                raise t.error(
                    key, f"{element.kind} {name} = {element.value} is {shown} at the given "
                    f"values; a "
                    f"{element.kind} must be > 0: change the expression or the values it uses"
                )

    def names_in(self, name: str) -> set[sp.Symbol]:
        value = getattr(self.circuit.element(name), "value", sp.S.Zero)
        return set(value.free_symbols)

    # -- settings ----------------------------------------------------------------------

    def output(self, circuit: Circuit) -> str | tuple[str, str]:
        top = self.top
        if not top.has("output"):
            raise top.error(
                None, "the key 'output' is missing; give the output node (\"out\") or a pair"
            )
        raw = top.raw("output")
        if isinstance(raw, list):
            nodes = top.take_nodes("output", 2)
            out: str | tuple[str, str] = (nodes[0], nodes[1])
            checked = [nodes[0], nodes[1]]
        else:
            out = top.node_of(raw, "output")
            checked = [out]
        for i, node in enumerate(checked):
            try:
                checked[i] = circuit.node(node)  # canonical: "gnd" and "GND" are "0"
            except OpsymError as err:
                raise top.wrap("output", err) from err
        if checked == ["0"] or checked == ["gnd"] or (len(checked) == 2 and
                                                      checked[0] == checked[1]):  # fmt: skip
            raise top.error("output", "the output cannot be ground or a node against itself")
        return out

    def signal(self, circuit: Circuit) -> str | None:
        top = self.top
        name = top.take_str("input", default=None)
        signals = list(circuit.signal_sources)
        if name is None:
            return signals[0] if len(signals) == 1 else None
        if name not in signals:
            known = ", ".join(signals) or "none"
            raise top.error("input", f"{name!r} is not a signal source; the sources are {known}")
        return name
