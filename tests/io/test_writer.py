"""Writing design files: file -> design -> file gives the same design and results."""

from __future__ import annotations

import itertools
import sys
from pathlib import Path

import pytest
import sympy as sp

import opsym
from opsym.errors import DesignFileError
from opsym.io.designfile import load_design, parse_design
from opsym.io.writer import dump_design
from opsym.model.nonideal import KINDS

if sys.version_info >= (3, 11):
    import tomllib
else:  # Python 3.10: the backport
    import tomli as tomllib

EXAMPLES = sorted((Path(__file__).parents[2] / "opsym" / "examples").glob("*.toml"))


def same_design(a, b):
    assert a.title == b.title
    assert a.output == b.output
    assert set(a.circuit.elements) == set(b.circuit.elements)
    assert dict(a.values) == dict(b.values)
    assert dict(a.opamps) == dict(b.opamps)
    assert dict(a.resistors) == dict(b.resistors)
    assert a.resistor_default == b.resistor_default
    assert (a.nulls, a.sensitivity, a.budget, a.tolerance) == (
        b.nulls,
        b.sensitivity,
        b.budget,
        b.tolerance,
    )
    assert (a.signal, a.average_bias, a.series, a.notes) == (
        b.signal,
        b.average_bias,
        b.series,
        b.notes,
    )
    assert (a.response, a.noise) == (b.response, b.noise)
    kinds = [[n.kind for n in amp.nonideals] for amp in a.circuit.opamps]
    assert kinds == [[n.kind for n in amp.nonideals] for amp in b.circuit.opamps]


def same_results(a, b):
    ra, rb = a.analyze(), b.analyze()
    assert list(ra.terms) == list(rb.terms)
    for s in ra.terms:
        assert sp.simplify(ra.terms[s] - rb.terms[s]) == 0, s


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_examples_round_trip(path):
    first = load_design(path)
    text = dump_design(first)
    tomllib.loads(text)  # the writer writes valid TOML
    second = parse_design(text, filename="again.toml")
    same_design(first, second)
    same_results(first, second)
    assert dump_design(second) == text  # writing is stable


def test_a_python_circuit_round_trips():
    c = opsym.Circuit('odd "title" \\ with\ttabs')
    r1 = sp.Symbol("R1", positive=True)
    c.voltage_source("Vin", "in", "0", value="-1.5")
    c.current_source("Ib", "0", "n", value="2 nA")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out", value=r1 * 10)
    c.resistor("R3", "p", "0", value=sp.Rational(1, 3))
    c.capacitor("C1", "n", "out", value="4.7n")
    c.opamp("U1", plus="p", minus="n", out="out", gain=200_000, cmrr=True, psrr=True)
    text = dump_design(c, output="out", values={"R1": "10k", "U1.Vcm": 1})
    d = parse_design(text)
    assert d.title == c.title
    assert set(d.circuit.elements) == set(c.elements)
    assert d.values == {"R1": 10_000, "U1.Vcm": 1}
    ra, rb = c.analyze("out"), d.circuit.analyze("out")
    for s in ra.terms:
        assert sp.simplify(ra.terms[s] - rb.terms[s]) == 0


def test_what_cannot_be_written_is_an_error():
    c = opsym.Circuit("x")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "p", "0", value=sp.sqrt(sp.Symbol("R2", positive=True)))
    c.resistor("R2", "p", "0")
    with pytest.raises(DesignFileError, match="R1"):
        dump_design(c, output="p")
    with pytest.raises(DesignFileError, match="give the output"):
        dump_design(c)
    with pytest.raises(DesignFileError, match=r"no place for the values of U1\.Vos"):
        dump_design(opsym.Circuit(), output="a", values={"U1.Vos": 1})
    with pytest.raises(DesignFileError, match="cannot write a dict"):
        dump_design({}, output="a")  # type: ignore[arg-type]


S_DOMAIN = """\
title = "LC-filtered transimpedance stage"
output = "out"
[resistors]
Rf = { between = ["n", "out"], value = "1M" }
Rs = { between = ["in", "m"], value = "50" }
[capacitors]
Cf = { between = ["n", "out"], value = "1p" }
[inductors]
L1 = { between = ["m", "n"], value = "4.7 mH" }
[voltage-sources]
Vin = { plus = "in", minus = "0", value = "10m" }
[opamps.U1]
plus = "0"
minus = "n"
out = "out"
gain = "pole"
A0 = "110 dB"
GBW = "8 MHz"
en = "7 nV/rtHz"
fce = "50 Hz"
in = "3 fA/√Hz"
fci = 0
parameters = { based-on = "generic JFET", gbw_typ = "4 MHz", en_typ = "11n", fce = "300 Hz" }
[response]
from = "1 Hz"
to = "100 MHz"
points-per-decade = 3
at = ["1 kHz", "12.5 kHz"]
[noise]
from = "0.1 Hz"
to = "inf"
temperature = 40.5
"""


def test_inductor_pole_and_noise_round_trip():
    first = parse_design(S_DOMAIN, filename="s.toml")
    text = dump_design(first)
    second = parse_design(text, filename="again.toml")
    same_design(first, second)
    same_results(first, second)
    assert dump_design(second) == text
    assert 'gain = "pole"' in text and "include" not in text  # the default is left out
    assert 'A0 = "110 dB"' in text and 'en = "7 nV/√Hz"' in text and 'to = "inf"' in text
    assert second.values["U1.GBW"] == 8 * 10**6 and second.noise.f_stop == sp.oo


def test_every_include_list_round_trips():
    kinds = ["offset", "bias", "cmrr", "psrr", "vnoise", "inoise"]
    for n in range(len(kinds) + 1):
        for chosen in itertools.combinations(kinds, n):
            c = opsym.Circuit("x")
            c.voltage_source("Vin", "p", "0")
            c.opamp("U1", plus="p", minus="out", out="out", offset="offset" in chosen,
                    bias="bias" in chosen, cmrr="cmrr" in chosen, psrr="psrr" in chosen,
                    noise=False, extra=[KINDS[k]() for k in chosen if "noise" in k])  # fmt: skip
            text = dump_design(c, output="out")
            again = parse_design(text).circuit.element("U1").nonideals
            assert [k.kind for k in again] == list(chosen), text
            assert ("include" in text) == (list(chosen) != ["offset", "bias", "vnoise", "inoise"])


def test_a_python_circuit_with_an_inductor_and_a_pole():
    c = opsym.Circuit("series resonance")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "a", value="100")
    c.inductor("L1", "a", "p", value="10 mH")
    c.capacitor("C1", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out", gain="pole")
    text = dump_design(c, output="out", values={"C1": "100n", "U1.A0": 10**5, "U1.GBW": "1M",
                                                 "U1.en": "5n", "U1.fci": "1k"})  # fmt: skip
    assert 'GBW = "1 MHz"' in text and 'fci = "1 kHz"' in text and 'en = "5 nV/√Hz"' in text
    d = parse_design(text)
    assert d.values == {"C1": sp.Rational(1, 10**7), "U1.A0": 10**5, "U1.GBW": 10**6,
                        "U1.en": sp.Rational(5, 10**9), "U1.fci": 1000}  # fmt: skip
    ra, rb = c.analyze("out", domain="s"), d.circuit.analyze("out", domain="s")
    for s in ra.terms:
        assert sp.simplify(ra.terms[s] - rb.terms[s]) == 0


def test_settings_with_prefixed_voltages_round_trip():
    """A full-scale or reference with a prefix is written as "2.5 mV", which reads back."""
    text = dump_design(parse_design(
        'output = "out"\n[resistors]\nR1 = { between = ["in", "out"], value = "1k" }\n'
        '[voltage-sources]\nVin = { plus = "in", minus = "0" }\n'
        '[budget]\nfull-scale = "2.5m"\nadc = { bits = 12, reference = "1.25" }\n'
    ))  # fmt: skip
    assert 'full-scale = "2.5 mV"' in text and 'reference = "1.25 V"' in text
    again = parse_design(text).budget
    assert again.full_scale == sp.Rational(1, 400) and again.adc_reference == sp.Rational(5, 4)
