"""Write a circuit (or a whole :class:`~opsym.io.design.Design`) as a design file.

:func:`dump_design` returns TOML text that :func:`~opsym.io.designfile.parse_design`
reads back to the same circuit, numbers and settings. A tiny writer for the
subset of TOML design files use (text, numbers, booleans, lists, inline tables)
keeps opsym free of a TOML-writing dependency.

Examples
--------
>>> import opsym
>>> from opsym.io.designfile import parse_design
>>> c = opsym.Circuit("follower")
>>> c.voltage_source("Vs", "p", "0")
>>> c.resistor("RL", "out", "0", value="2k")
>>> c.opamp("U1", plus="p", minus="out", out="out", gain="finite")
>>> text = dump_design(c, output="out")
>>> print(text)  # doctest: +NORMALIZE_WHITESPACE
# opsym design file
format = 1
title = "follower"
output = "out"
<BLANKLINE>
[resistors]
RL = { between = ["out", "0"], value = "2k", symbolic = false }
<BLANKLINE>
[voltage-sources]
Vs = { plus = "p", minus = "0" }
<BLANKLINE>
[opamps.U1]
plus = "p"
minus = "out"
out = "out"
gain = "finite"
>>> parse_design(text).analyze().coefficient("Vs") == c.analyze("out").coefficient("Vs")
True

The op-amp carries what ``Circuit.opamp`` gives by default (offset, bias and
noise), so ``include`` is left out; it is written when it differs.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from fractions import Fraction
from typing import Any

import sympy as sp

from ..errors import DesignFileError, OpsymError
from ..model.circuit import Circuit
from ..model.elements import (
    TWO_TERMINALS,
    CurrentSource,
    FullyDifferentialAmp,
    OpAmp,
    Resistor,
    VoltageSource,
)
from ..model.nonideal import KINDS, MultiPole
from ..model.symbols import component_symbol, opamp_symbol, source_symbol
from ..numeric.params import (
    OPAMP_SETS,
    RESISTOR_SETS,
    BiasLaw,
    OpAmpParams,
    ResistorParams,
    field_units,
)
from ..values import to_exact
from ._comments import keep_comments
from .design import DEFAULT_INCLUDE, FDA_DEFAULT_INCLUDE, FORMAT, Design, opamp_values
from .formatting import format_value, plain_decimal

__all__ = ["dump_design"]

_BARE = re.compile(r"^[A-Za-z0-9_-]+$")
#: A number as format_number writes it, split into mantissa and SI prefix.
_PREFIXED = re.compile(r"^(-?[0-9.]+(?:e-?[0-9]+)?)([yzafpnumkMGT]?)$")


def dump_design(
    design: Design | Circuit,
    *,
    output: str | tuple[str, str] | None = None,
    values: Mapping[Any, Any] | None = None,
    comments: str | None = None,
) -> str:
    """Write a design file for ``design`` and return its text.

    Parameters
    ----------
    design : Design or opsym.Circuit
        A loaded design (everything is written), or a bare circuit.
    output : str or (str, str), optional
        The output node or pair; required for a bare circuit, and overrides
        the design's own.
    values : mapping, optional
        Nominal numbers by name or symbol (``{"R1": "10k"}``) for elements
        that stay symbolic; merged over the design's own.
    comments : str, optional
        The text of the design file as written by hand: its ``#`` comments
        are kept, at the tables and keys they stood beside
        (:func:`opsym.io._comments.keep_comments`).

    Raises
    ------
    DesignFileError
        Something cannot be written: no output, a value the value syntax cannot
        express, or a non-ideality of a kind design files do not know.
    """
    if isinstance(design, Design):
        circuit, base = design.circuit, design
    elif isinstance(design, Circuit):
        circuit, base = design, None
    else:
        raise DesignFileError(
            f"dump_design: cannot write a {type(design).__name__}; give a Design or a Circuit"
        )
    out = output if output is not None else (base.output if base else None)
    if out is None:
        raise DesignFileError("dump_design: give the output node, e.g. output='out'")
    nominal: dict[str, sp.Expr] = dict(base.values) if base else {}

    for key, v in (values or {}).items():
        name = key.name if isinstance(key, sp.Symbol) else str(key)
        nominal[name] = to_exact(v, f"values[{name}]")
    try:
        text = _Writer(circuit, out, nominal, base).text()
    except OpsymError as err:
        if isinstance(err, DesignFileError):
            raise
        raise DesignFileError(f"dump_design: {err}") from err
    return text if comments is None else keep_comments(comments, text)


class _Writer:
    def __init__(
        self, circuit: Circuit, output: Any, nominal: dict[str, sp.Expr], base: Design | None
    ) -> None:
        self.circuit = circuit
        self.output = output
        self.nominal = nominal
        self.base = base
        self.lines: list[str] = []
        self.written: set[str] = set()

    def text(self) -> str:
        b = self.base
        self.lines += ["# opsym design file", f"format = {FORMAT}"]
        self.key("title", self.circuit.title)
        if b and b.notes:
            self.key("notes", b.notes)
        for key in ("revision", "date"):
            if b and getattr(b, key):
                self.key(key, getattr(b, key))
        out = list(self.output) if isinstance(self.output, tuple) else self.output
        self.key("output", out)
        if b and b.signal is not None and self._signals() != [b.signal]:
            self.key("input", b.signal)
        if b and b.supply is not None:
            self.key("rails", _rails(b.supply))
        for cls in TWO_TERMINALS:
            rows = [e for e in self.circuit.elements if type(e) is cls]
            if rows:
                self.lines += ["", f"[{cls.table}]"]
                for e in rows:
                    self.lines.append(f"{_key(e.name)} = {_inline(self.two_terminal(e))}")
        for amp in self.circuit.opamps:
            self.opamp(amp)
        unplaced = sorted(set(self.nominal) - self.written)
        if unplaced:
            raise DesignFileError(
                f"dump_design: no place for the values of {', '.join(unplaced)}; design files "
                f"hold numbers of elements and each op-amp's {', '.join(opamp_values())}"
            )
        if b:
            self.settings(b)
        return "\n".join(self.lines) + "\n"

    def _signals(self) -> list[str]:
        return list(self.circuit.signal_sources)

    def key(self, name: str, value: Any) -> None:
        self.lines.append(f"{_key(name)} = {_toml(value)}")

    # -- elements ----------------------------------------------------------------------

    def two_terminal(self, e: Any) -> dict[str, Any]:
        if isinstance(e, VoltageSource):
            body: dict[str, Any] = {"plus": e.a, "minus": e.b}
            own = source_symbol(e.name)
        elif isinstance(e, CurrentSource):
            body = {"from": e.a, "into": e.b}
            own = source_symbol(e.name)
        else:
            body = {"between": [e.a, e.b]}
            own = component_symbol(e.name)
        if e.value == own:
            if e.name in self.nominal:
                body["value"] = _text(self.nominal[e.name], e.name)
        elif e.value.is_number:
            body["value"] = _text(e.value, e.name)
            body["symbolic"] = False
        else:
            body["equals"] = _text(e.value, e.name)
        self.written.add(e.name)
        if isinstance(e, Resistor) and self.base and e.name in self.base.resistors:
            grade = self.base.resistors[e.name]
            if grade != self.base.resistor_default:
                body.update(_grade(grade))
        return body

    def opamp(self, amp: OpAmp) -> None:
        fda = isinstance(amp, FullyDifferentialAmp)
        self.lines += ["", f"[{amp.table}.{_key(amp.name)}]"]
        self.key("plus", amp.plus)
        self.key("minus", amp.minus)
        if isinstance(amp, FullyDifferentialAmp):
            self.key("out-plus", amp.out)
            self.key("out-minus", amp.out_minus)
            if amp.vocm != "0":
                self.key("vocm", amp.vocm)
        else:
            self.key("out", amp.out)
        if amp.gain is not None:
            if amp.gain == opamp_symbol(amp.name, "A"):
                self.key("gain", "finite")
            elif (model := _gain_model(amp)) is not None:
                self.key("gain", model.kind)
            else:
                self.key("gain", _text(amp.gain, f"{amp.name} gain"))
        kinds = []
        for n in amp.nonideals:
            if n.kind not in KINDS or type(n) is not KINDS[n.kind]:
                raise DesignFileError(
                    f"dump_design: op-amp {amp.name} carries {n!r}, a non-ideality design files "
                    f"cannot describe (they know {', '.join(KINDS)})"
                )
            kinds.append(n.kind)
        if kinds != list(FDA_DEFAULT_INCLUDE if fda else DEFAULT_INCLUDE):
            self.key("include", kinds)
        for what, (unit, _needs) in opamp_values().items():
            name = f"{amp.name}.{what}"
            if name in self.nominal:
                text = _text(self.nominal[name], name)
                self.key(what, text if what in ("Vcm", "dVs") else _with_unit(text, unit))
                self.written.add(name)
        if self.base and amp.name in self.base.rails:
            self.key("rails", _rails(self.base.rails[amp.name]))
        params = self.base.opamps.get(amp.name) if self.base else None
        if params is not None:
            shipped = [k for k, v in OPAMP_SETS.items() if v == params]
            if shipped:
                self.key("parameters", shipped[0])
            else:
                self.lines += ["", f"[{amp.table}.{_key(amp.name)}.parameters]"]
                for k, v in _parameter_fields(params).items():
                    self.key(k, v)

    # -- analyses ----------------------------------------------------------------------

    def settings(self, b: Design) -> None:
        analysis: dict[str, Any] = {}
        if b.nulls:
            analysis["nulls"] = [str(n) for n in b.nulls]
        if b.sensitivity is not None:
            analysis["sensitivity-of"] = list(b.sensitivity.of)
            analysis["sensitivity-to"] = list(b.sensitivity.to)
            if not b.sensitivity.normalized:
                analysis["normalized"] = False
        if not b.average_bias:
            analysis["average-bias"] = False
        if b.series != "E96":
            analysis["series"] = b.series
        self.table("analysis", analysis)
        if b.budget is not None:
            s = b.budget
            body: dict[str, Any] = {"grade": s.grade, "temperatures": list(s.temperatures)}
            if s.full_scale is not None:
                body["full-scale"] = _with_unit(_text(s.full_scale, "full-scale"), "V")
            self.table("budget", body)
            if s.adc_bits is not None and s.adc_reference is not None:
                adc = {"bits": s.adc_bits, "range": s.adc_range,
                       "reference": _with_unit(_text(s.adc_reference, "adc"), "V")}  # fmt: skip
                self.table("budget.adc", adc)
        tol: dict[str, Any] = {}
        if b.resistor_default is not None:
            g = _grade(b.resistor_default)
            if "grade" in g:
                tol["resistors"] = g["grade"]
            elif "tcr" not in g:
                tol["resistors"] = g["tolerance"]
            else:
                raise DesignFileError(
                    "dump_design: the default resistor grade has a TCR but no shipped name; "
                    "give each resistor its own tolerance and tcr"
                )
        if b.tolerance is not None:
            t = b.tolerance
            tol.update({"of": list(t.of), "samples": t.samples, "distribution": t.distribution})
            if t.seed is not None:
                tol["seed"] = t.seed
        self.table("tolerance", tol)
        if b.response is not None:
            r = b.response
            body = {}
            if r.signal is not None and (b.signal is None or r.signal != b.signal):
                body["signal"] = r.signal
            for key, f in (("from", r.f_start), ("to", r.f_stop)):
                if f is not None:
                    body[key] = _hertz(f, f"[response] {key}")
            if r.points_per_decade is not None:
                body["points-per-decade"] = r.points_per_decade
            if r.at:
                body["at"] = [_hertz(f, "[response] at") for f in r.at]
            if r.phase_margin is not None:
                body["phase-margin"] = r.phase_margin
            self.lines += ["", "[response]"]
            for k, v in body.items():
                self.key(k, v)
        if b.noise is not None:
            n = b.noise
            stop = "inf" if n.f_stop == sp.oo else _hertz(n.f_stop, "[noise] to")
            body = {"from": _hertz(n.f_start, "[noise] from"), "to": stop}
            if n.temperature is not None:
                body["temperature"] = n.temperature
            if n.signal is not None and (b.signal is None or n.signal != b.signal):
                body["signal"] = n.signal
            self.table("noise", body)
        if b.requirement is not None:
            req = b.requirement
            key = f"max-{req.referred}-error"
            limit = format_value(Fraction(repr(req.limit)))
            limit = _with_unit(limit, req.unit) if req.unit else limit
            self.table("requirement", {key: limit, "sum": req.sum})

    def table(self, name: str, body: dict[str, Any]) -> None:
        if body:
            self.lines += ["", f"[{name}]"]
            for k, v in body.items():
                self.key(k, v)


def _grade(p: ResistorParams) -> dict[str, Any]:
    shipped = [k for k, v in RESISTOR_SETS.items() if v == p]
    if shipped:
        return {"grade": shipped[0]}
    body = {"tolerance": plain_decimal(Fraction(repr(p.tolerance)) * 100) + "%"}
    if p.tcr:
        body["tcr"] = plain_decimal(Fraction(repr(p.tcr)) * 10**6) + " ppm/°C"
    return body


def _parameter_fields(p: OpAmpParams) -> dict[str, Any]:
    default = OpAmpParams(p.name)
    out: dict[str, Any] = {"name": p.name}
    if p.description:
        out["description"] = p.description
    for key in field_units():
        v = p.extra.get(key) if key in p.extra else getattr(p, key, None)
        if v is not None and v != getattr(default, key, None):
            if not math.isfinite(v):
                raise DesignFileError(f"dump_design: {p.name} {key} = {v} cannot be written")
            out[key] = float(v)
    if p.bias_law != BiasLaw():
        law = p.bias_law
        out["bias_law"] = "constant" if law.kind == "constant" else f"doubling {law.doubling_c:g}"
        if law.kind == "doubling" and float(f"{law.doubling_c:g}") != law.doubling_c:
            out["bias_law"] = f"doubling {law.doubling_c!r}"
    return out


def _rails(pair: tuple[sp.Expr, sp.Expr]) -> list[str]:
    return [_with_unit(_text(v, "rails"), "V") for v in pair]


def _with_unit(text: str, unit: str) -> str:
    """``"2.5m"`` and ``"V"`` give ``"2.5 mV"``; text that is no plain number stays as it is."""
    m = _PREFIXED.match(text)
    if not m or unit == "ratio":
        return text
    return f"{m.group(1)} {m.group(2)}{unit}"


def _hertz(value: sp.Expr, what: str) -> str:
    return _with_unit(_text(value, what), "Hz")


def _text(value: sp.Expr, what: str) -> str:
    try:
        return format_value(value)
    except OpsymError as err:
        raise DesignFileError(f"dump_design: {what}: {err}") from err


# -- a tiny TOML writer ------------------------------------------------------------------


def _key(name: str) -> str:
    return name if _BARE.match(name) else _string(name)


def _string(s: str) -> str:
    out = ['"']
    for ch in s:
        if ch == '"':
            out.append('\\"')
        elif ch == "\\":
            out.append("\\\\")
        elif ch == "\n":
            out.append("\\n")
        elif ch == "\t":
            out.append("\\t")
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04X}")
        else:
            out.append(ch)
    out.append('"')
    return "".join(out)


def _toml(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise DesignFileError(f"dump_design: {value} cannot be written as a number")
        return repr(value)
    if isinstance(value, str):
        return _string(value)
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_toml(v) for v in value) + "]"
    if isinstance(value, dict):
        return _inline(value)
    raise DesignFileError(f"dump_design: cannot write {value!r}")  # pragma: no cover


def _inline(body: Mapping[str, Any]) -> str:
    return "{ " + ", ".join(f"{_key(k)} = {_toml(v)}" for k, v in body.items()) + " }"


def _gain_model(amp: OpAmp) -> MultiPole | None:
    """The named gain model (``pole``, ``pole2``, …) whose gain ``amp`` has, if any."""
    names = {s.name for s in amp.gain.free_symbols} if amp.gain is not None else set()
    poles = 1 + sum(1 for n in names if n.startswith(f"{amp.name}.f"))
    model = MultiPole(poles)
    return model if amp.gain == model.gain(amp.name) else None
