"""Reading the analysis tables of a design file: ``[analysis]`` to ``[noise]``.

:class:`SettingsReader` is the half of the design-file reader that turns the
settings tables into the records of :mod:`opsym.io.design`; the other half, in
:mod:`opsym.io.designfile`, reads the elements. Every value goes through the
checked :class:`~opsym.io._tables.Table`, so unknown keys are errors and every
message names the file, the table, the key and the line.
"""

from __future__ import annotations

import sympy as sp

from ..errors import DesignFileError, OpsymError
from ..model.circuit import Circuit
from ..model.elements import Resistor
from ..model.nonideal import KINDS
from ..numeric.params import OpAmpParams, ResistorParams, resistor_parameters
from ..numeric.requirement import SUMS, Requirement
from ._tables import Table
from .design import (
    BudgetSettings,
    NoiseSettings,
    NullRequest,
    ResponseSettings,
    SensitivityRequest,
    ToleranceSettings,
)

__all__ = ["SettingsReader"]

_INFINITE = ("inf", "∞")


class SettingsReader:
    """Mixin of the design-file reader: the analysis tables.

    It relies on the reader's ``names`` (every symbol name of the design),
    ``kinds`` (each op-amp's non-ideal kinds), ``values``, ``opamps``,
    ``resistors`` and ``circuit``.
    """

    names: dict[str, sp.Expr]
    kinds: dict[str, tuple[str, ...]]
    values: dict[str, sp.Expr]
    opamps: dict[str, OpAmpParams]
    resistors: dict[str, ResistorParams]
    circuit: Circuit

    def term_name(self, t: Table, key: str, text: str, *, gain: bool) -> str:
        if gain and text == "gain":
            return text
        valid = [n for n in self.names if "." not in n and self._is_signal(n)]
        errors = [n for n in self.names if "." in n and self._is_source(n)]
        if not gain and text in valid:
            raise t.error(
                key, f"{text!r} is a signal source, whose coefficient is the gain, not an error "
                f"term; name an error term ({', '.join(errors[:6]) or 'none in this design'})"
            )
        circuit_terms = valid + errors
        if text not in circuit_terms:
            some = ", ".join((["gain"] if gain else []) + circuit_terms[:12])
            raise t.error(key, f"{text!r} is not a term of this design; use one of {some}")
        return text

    def _is_signal(self, name: str) -> bool:
        return self.names[name].is_positive is not True  # sources are real, not positive

    def _is_source(self, name: str) -> bool:
        """``U1.X`` is a term when a DC kind that U1 carries declares X as a source."""
        owner, _, what = name.partition(".")
        return any(
            spec.suffix == what and spec.role == "source"
            for kind in self.kinds.get(owner, ())
            if kind in KINDS and not KINDS[kind].noise
            for spec in KINDS[kind].symbols
        )

    def component_name(self, t: Table, key: str, text: str) -> str:
        comps = [n for n, s in self.names.items() if "." not in n and s.is_positive]
        if text not in comps:
            raise t.error(key, f"{text!r} is not a component; use one of {', '.join(comps[:12])}")
        return text

    def null(self, t: Table, text: str) -> NullRequest:
        words = text.split()
        if len(words) != 3 or words[1] != "by":
            raise t.error("nulls", f"{text!r} is not 'TERM by COMPONENT', e.g. 'U1.Ib by R3'")
        by = self.component_name(t, "nulls", words[2])
        return NullRequest(self.term_name(t, "nulls", words[0], gain=False), by)

    def sensitivity(self, t: Table, circuit: Circuit) -> SensitivityRequest | None:
        if not t.has("sensitivity-to"):
            if t.has("sensitivity-of") or t.has("normalized"):
                raise t.error(None, "give 'sensitivity-to', the components to vary")
            return None
        to = tuple(self.component_name(t, "sensitivity-to", n)
                   for n in t.take_strings("sensitivity-to"))  # fmt: skip
        of = tuple(self.term_name(t, "sensitivity-of", n, gain=True)
                   for n in t.take_strings("sensitivity-of")) or ("gain",)  # fmt: skip
        return SensitivityRequest(of, to, t.take_bool("normalized", True))

    def budget(self, t: Table) -> BudgetSettings:
        grade = t.take_str("grade", "max", choices=("max", "typical")) or "max"
        temps: tuple[float, ...] = (25.0,)
        if t.has("temperatures"):
            raw = t.raw("temperatures")
            if not isinstance(raw, list) or not raw:
                raise t.error("temperatures", "give a list of °C, e.g. [-40, 25, 85]")
            temps = tuple(float(t.value_of(v, "temperatures")) for v in raw)
            if any(not -273.15 < x < 1000 for x in temps):
                raise t.error("temperatures", "temperatures are in °C, above -273.15")
        full_scale = t.take_value("full-scale", unit="V")
        adc = t.sub("adc")
        bits = reference = None
        adc_range = "unipolar"
        if adc is not None:
            bits = adc.take_int("bits", None, low=1, high=32)
            if bits is None:
                raise adc.error(None, "the key 'bits' is missing; give e.g. bits = 16")
            reference = adc.take_value("reference", unit="V", required=True)
            adc_range = adc.take_str("range", "unipolar", choices=("unipolar", "bipolar")) or ""
            adc.finish()
        t.finish()
        return BudgetSettings(grade, temps, full_scale, bits, reference, adc_range)

    def requirement(self, t: Table) -> Requirement:
        """``[requirement]``: one limit (``max-output-error`` or ``max-input-error``) and a sum."""
        given = [k for k in ("max-output-error", "max-input-error") if t.has(k)]
        if len(given) != 1:
            raise t.error(None, "give one limit: max-output-error = \"5 mV\" or "
                          "max-input-error = \"50 µV\"")  # fmt: skip
        raw = t.raw(given[0])
        total = t.take_str("sum", "worst-case", choices=SUMS) or "worst-case"
        t.finish()
        if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
            raise t.error(given[0], "give a limit such as \"5 mV\" (\"20 µA\" for a "
                          "current output)")  # fmt: skip
        try:
            return Requirement(**{given[0].replace("-", "_"): raw}, sum=total)
        except OpsymError as err:
            raise t.error(None, str(err)) from None

    def tolerance(
        self, t: Table | None, circuit: Circuit
    ) -> tuple[ResistorParams | None, ToleranceSettings | None]:
        if t is None:
            return None, None
        default = None
        if t.has("resistors"):
            raw = t.raw("resistors")
            try:
                if isinstance(raw, str) and any(c.isalpha() for c in raw.replace("ppm", "")):
                    default = resistor_parameters(raw)
                else:
                    tol = t.value_of(raw, "resistors", unit="ratio")
                    default = ResistorParams(float(tol), 0.0, "default tolerance")
            except DesignFileError:
                raise
            except OpsymError as err:
                raise t.wrap("resistors", err) from err
            for e in circuit.elements:
                if isinstance(e, Resistor) and e.name not in self.resistors:
                    self.resistors[e.name] = default
        study = None
        of = tuple(self.term_name(t, "of", n, gain=True) for n in t.take_strings("of"))
        samples = t.take_int("samples", 10000, low=0, high=10**7)
        seed = t.take_int("seed", None, low=0, high=2**63 - 1)
        distribution = t.take_str("distribution", "uniform", choices=("uniform", "normal"))
        if of or t.has("samples") or t.has("seed"):
            study = ToleranceSettings(of or ("gain",), samples or 0, seed, distribution or "")
        t.finish()
        return default, study

    # -- frequency analyses ------------------------------------------------------------

    def signal_of(self, t: Table, default: str | None) -> str:
        """The ``signal`` of a table, or the design's input; one of the signal sources."""
        signals = list(self.circuit.signal_sources)
        name = t.take_str("signal", default=None)
        if name is None:
            if default is None:
                some = ", ".join(signals) or "none"
                raise t.error(
                    None, f"give 'signal', the source to refer to (the sources are {some})"
                )
            return default
        if name not in signals:
            raise t.error(
                "signal", f"{name!r} is not a signal source; the sources are {', '.join(signals)}"
            )
        return name

    def frequency(self, t: Table, key: str, *, zero: bool = False) -> sp.Expr | None:
        """A frequency in Hz: positive (or zero where ``zero`` allows it)."""
        value = t.take_value(key, unit="Hz")
        if value is None:
            return None
        if value.is_negative or (value.is_zero and not zero):
            need = ">= 0" if zero else "> 0"
            raise t.error(key, f"{value} Hz: give a frequency {need}, e.g. '10 Hz'")
        return value

    def response(self, t: Table, signal: str | None) -> ResponseSettings:
        source = self.signal_of(t, signal)
        start, stop = self.frequency(t, "from"), self.frequency(t, "to")
        low = start if start is not None else sp.Integer(10)
        if (stop if stop is not None else sp.Integer(10**7)) <= low:
            shown = "10 MHz (the default)" if stop is None else f"{stop} Hz"
            raise t.error("to", f"{shown} is not above 'from' ({low} Hz); give to > from")
        points = t.take_int("points-per-decade", None, low=1, high=1000)
        at: list[sp.Expr] = []
        if t.has("at"):
            raw = t.raw("at")
            if not isinstance(raw, list) or not raw:
                raise t.error("at", 'give a list of frequencies, e.g. ["1 kHz", "100 kHz"]')
            for v in raw:
                f = t.value_of(v, "at", unit="Hz")
                if not f.is_positive:
                    raise t.error("at", f"{f} Hz: every frequency must be > 0")
                at.append(f)
        margin = t.take_number("phase-margin", None)
        if margin is not None and not 0 < margin < 180:
            raise t.error("phase-margin", f"{margin}: give the threshold in degrees, e.g. 45")
        t.finish()
        return ResponseSettings(source, start, stop, points, tuple(at), margin)

    def noise(self, t: Table, circuit: Circuit, signal: str | None) -> NoiseSettings:
        for key, example in (("from", "0.1 Hz"), ("to", "10 kHz")):
            if not t.has(key):
                raise t.error(
                    None, f"the key '{key}' is missing; give the noise band's edge, e.g. "
                    f'{key} = "{example}"'
                )  # fmt: skip
        start = self.frequency(t, "from", zero=True)
        raw = t.raw("to")
        stop: sp.Expr | None
        if (isinstance(raw, str) and raw.strip().lower() in _INFINITE) or raw == float("inf"):
            stop = sp.oo
        else:
            stop = self.frequency(t, "to")
        assert start is not None and stop is not None
        if stop <= start:
            raise t.error("to", f"{stop} Hz is not above 'from' ({start} Hz); give to > from")
        temperature = t.take_number("temperature", None)
        if temperature is not None and not -273.15 < temperature < 1000:
            raise t.error("temperature", "the temperature is in °C, above -273.15; e.g. 25")
        source = None
        if t.has("signal") or signal is not None:
            source = self.signal_of(t, signal)
        t.finish()
        if start == 0:
            for amp in circuit.opamps:
                for what in ("fce", "fci"):
                    corner = self.values.get(f"{amp.name}.{what}")
                    params = self.opamps.get(amp.name)
                    if corner is None and params is not None:
                        corner = getattr(params, what)
                    kinds = {n.kind for n in amp.nonideals}
                    needs = "vnoise" if what == "fce" else "inoise"
                    if needs in kinds and corner is not None and corner > 0:
                        raise t.error(
                            "from", f"a band from 0 Hz: the 1/f noise of {amp.name} (corner "
                            f"{amp.name}.{what} = {corner} Hz) has no finite power down to 0 Hz; "
                            'give from > 0, e.g. from = "0.1 Hz"'
                        )  # fmt: skip
        return NoiseSettings(start, stop, temperature, source)
