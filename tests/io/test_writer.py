"""Writing design files: file -> design -> file gives the same design and results."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest
import sympy as sp

import opsym
from opsym.errors import DesignFileError
from opsym.io.designfile import load_design, parse_design
from opsym.io.writer import dump_design

if sys.version_info >= (3, 11):
    import tomllib
else:  # Python 3.10: the backport
    import tomli as tomllib

EXAMPLES = sorted((Path(__file__).parents[2] / "docs" / "examples").glob("*.toml"))


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
