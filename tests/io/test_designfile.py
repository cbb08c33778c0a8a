"""Reading design files: what they describe, and every way a file can be wrong."""

from __future__ import annotations

import json
import re
import textwrap
from pathlib import Path

import pytest
import sympy as sp

from opsym.errors import DesignFileError, FloatingNodeError, InvalidValueError
from opsym.io.designfile import load_design, parse_design
from opsym.model.elements import Capacitor, CurrentSource, OpAmp, Resistor
from opsym.numeric.params import opamp_parameters

EXAMPLES = sorted((Path(__file__).parents[2] / "opsym" / "examples").glob("*.toml"))

BASE = """\
title = "inverting"
output = "out"
[resistors]
R1 = { between = ["in", "n"], value = "10k" }
R2 = { between = ["n", "out"], value = "100k" }
[voltage-sources]
Vin = { plus = "in", minus = "0", value = "1 V" }
[opamps.U1]
plus = "0"
minus = "n"
out = "out"
"""


def read(text: str):
    return parse_design(textwrap.dedent(text), filename="t.toml")


def fails(text: str, *fragments: str) -> str:
    with pytest.raises(DesignFileError) as info:
        read(text)
    message = str(info.value)
    assert message.startswith("t.toml")
    for f in fragments:
        assert f in message, message
    return message


def test_examples_exist():
    assert len(EXAMPLES) >= 6
    assert "photodiode-transimpedance.toml" in [p.name for p in EXAMPLES]


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_every_example_loads_and_derives(path):
    d = load_design(path)
    res = d.analyze()
    assert res.terms
    assert d.title
    assert d.source == str(path)


def test_values_stay_symbolic_and_numbers_are_kept():
    d = read(BASE)
    assert d.analyze().coefficient("Vin") == -sp.Symbol("R2", positive=True) / sp.Symbol(
        "R1", positive=True
    )
    assert d.values == {"R1": 10_000, "R2": 100_000, "Vin": 1}
    assert d.signal == "Vin"
    assert d.title == "inverting"


def test_symbolic_false_puts_the_number_in_the_circuit():
    d = read(BASE.replace('value = "100k" }', 'value = "100k", symbolic = false }'))
    assert d.circuit.element("R2").value == 100_000
    assert "R2" not in d.values
    assert d.analyze().coefficient("Vin") == -100_000 / sp.Symbol("R1", positive=True)


def test_equals_relation_and_parallel():
    d = read(
        BASE
        + """
[resistors.R3]
between = ["p", "0"]
equals = "R1 ‖ R2"
"""
    ).circuit
    r1, r2 = sp.symbols("R1 R2", positive=True)
    assert sp.simplify(d.element("R3").value - r1 * r2 / (r1 + r2)) == 0


def test_every_element_kind_and_opamp_option():
    d = read(
        """
        output = ["o", "n"]
        [resistors]
        R1 = { between = ["n", "0"], tolerance = "1%", tcr = "50 ppm/°C" }
        R2 = { between = ["n", "o"], grade = "thin film 0.1%" }
        [capacitors]
        C1 = { between = ["n", "o"], value = "100p" }
        [current-sources]
        Iin = { from = "0", into = "n", value = "1 µA" }
        [opamps.U1]
        plus = "gnd"
        minus = "n"
        out = "o"
        gain = "120 dB"
        include = ["offset", "psrr", "cmrr"]
        Vcm = "1 V"
        dVs = "0.1 V"
        parameters = { based-on = "generic CMOS", vos_max = "2 mV", cmrr_min_db = "90 dB" }
        [analysis]
        series = "E24"
        average-bias = false
        """
    )
    c = d.circuit
    assert isinstance(c.element("C1"), Capacitor)
    assert isinstance(c.element("Iin"), CurrentSource)
    amp = c.element("U1")
    assert isinstance(amp, OpAmp) and amp.gain == 10**6 and amp.plus == "0"
    assert [n.kind for n in amp.nonideals] == ["offset", "cmrr", "psrr"]
    assert d.values["U1.Vcm"] == 1 and d.values["U1.dVs"] == sp.Rational(1, 10)
    p = d.opamps["U1"]
    assert p.vos_max == 0.002 and p.cmrr_min_db == 90.0
    assert p.ib_max == opamp_parameters("generic CMOS").ib_max
    assert d.resistors["R1"].tolerance == 0.01 and d.resistors["R1"].tcr == 50e-6
    assert d.resistors["R2"].name == "thin film 0.1%"
    assert d.output == ("o", "n")
    assert d.series == "E24" and d.average_bias is False
    assert isinstance(c.element("R1"), Resistor)


def test_analysis_budget_and_tolerance_settings():
    d = read(
        BASE.replace('plus = "0"', 'plus = "p"')
        + """
[resistors.R3]
between = ["p", "0"]
[analysis]
nulls = ["U1.Ib by R3"]
sensitivity-of = ["gain", "U1.Vos"]
sensitivity-to = ["R1"]
normalized = false
[budget]
grade = "typical"
temperatures = [-20, 25, 70]
full-scale = "10 V"
adc = { bits = 12, reference = "2.5 V", range = "bipolar" }
[tolerance]
resistors = "2%"
of = ["gain"]
samples = 100
seed = 3
"""
    )
    assert [str(n) for n in d.nulls] == ["U1.Ib by R3"]
    assert d.sensitivity.of == ("gain", "U1.Vos") and d.sensitivity.normalized is False
    b = d.budget
    assert (b.grade, b.temperatures, b.full_scale) == ("typical", (-20.0, 25.0, 70.0), 10)
    assert (b.adc_bits, b.adc_reference, b.adc_range) == (12, sp.Rational(5, 2), "bipolar")
    assert d.tolerance.samples == 100 and d.tolerance.seed == 3
    assert d.resistors["R3"].tolerance == 0.02


# -- errors -----------------------------------------------------------------------------


def test_unknown_key_in_an_element_names_the_line():
    msg = fails(
        BASE.replace('value = "10k" }', 'value = "10k", tolerence = "1%" }'),
        "[resistors.R1] (line 4)",
        "unknown key 'tolerence'",
        "tolerance",
    )
    assert "between" in msg


@pytest.mark.parametrize(
    ("change", "fragments"),
    [
        (lambda t: t + "colour = 1\n", ["unknown key 'colour'"]),
        (lambda t: "colour = 1\n" + t, ["unknown key 'colour'", "output"]),
        (lambda t: t.replace('"10k"', '"10x"'), ["[resistors.R1] value (line 4)", "'10x'"]),
        (lambda t: t.replace('"10k"', '"10 nF"'), ["does not fit"]),
        (lambda t: t.replace('"10k"', '"-10k"'), ["not positive"]),
        (lambda t: t.replace('"10k"', "true"), ["not a value"]),
        (lambda t: t.replace('output = "out"\n', ""), ["'output' is missing"]),
        (lambda t: t.replace('output = "out"', 'output = "nowhere"'), ["no node named"]),
        (lambda t: t.replace('output = "out"', 'output = ["out", "out"]'), ["against itself"]),
        (lambda t: t.replace('["in", "n"]', '["in"]'), ["list of 2 node names"]),
        (lambda t: t.replace('["in", "n"]', '["in", "in"]'), ["both ends"]),
        (lambda t: t.replace('minus = "n"', 'minus = "nn"'), ["no DC path"]),
        (lambda t: t + "[analysis]\nnulls = ['U1.Ib R1']\n", ["TERM by COMPONENT"]),
        (lambda t: t + "[analysis]\nnulls = ['U1.Vcm by R1']\n", ["not a term"]),
        (lambda t: t + "[analysis]\nnulls = ['Vin by U1']\n", ["not a component"]),
        (lambda t: t + 'include = ["noise"]\n', ["not a non-ideality"]),
        (lambda t: t + 'parameters = "fast"\n', ["no op-amp set named 'fast'"]),
        (lambda t: t + "parameters = { vos_max = '1 A' }\n", ["does not fit"]),
        (lambda t: t + "parameters = { vos_mx = '1m' }\n", ["unknown key 'vos_mx'"]),
        (lambda t: t + 'gain = "huge"\n', ["unknown name 'huge'"]),
        (lambda t: t + "[budget]\ngrade = 'best'\n", ["'best' is not known", "'max'"]),
        (lambda t: t + "[budget]\nadc = { bits = 40, reference = 1 }\n", ["from 1 to 32"]),
        (lambda t: t + "[tolerance]\nresistors = 'gold'\n", ["resistor set"]),
        (lambda t: "format = 2\n" + t, ["format 2 is not known"]),
        (lambda t: t.replace('title = "inverting"', "title = 3"), ["not text"]),
        (lambda t: t + "[[resistors]]\n", ["not valid TOML"]),
        (lambda t: t.replace("= {", "= {{"), ["not valid TOML"]),
    ],
)
def test_bad_files_say_where_and_what(change, fragments):
    fails(change(BASE), *fragments)


def test_value_and_equals_together():
    fails(
        BASE.replace('value = "10k" }', 'value = "10k", equals = "R2" }'),
        "either 'value'",
    )


def test_symbolic_false_without_value():
    fails(BASE.replace('value = "10k" }', "symbolic = false }"), "needs a 'value'")


def test_equals_loops_are_refused():
    fails(
        BASE.replace('value = "10k" }', 'equals = "R2/10" }').replace(
            'value = "100k" }', 'equals = "R1*10" }'
        ),
        "defined through itself",
    )


def test_model_errors_keep_their_cause():
    with pytest.raises(DesignFileError) as info:
        read(BASE.replace('minus = "n"', 'minus = "nn"'))
    assert isinstance(info.value.__cause__, FloatingNodeError)
    with pytest.raises(DesignFileError) as info:
        read(BASE.replace('"10k"', '"-10k"'))
    assert isinstance(info.value.__cause__, InvalidValueError)
    with pytest.raises(DesignFileError) as info:
        read(BASE.replace('"10k"', '"-10k", symbolic = false'))
    assert isinstance(info.value.__cause__, InvalidValueError)


@pytest.mark.parametrize(
    "attack",
    [
        "__import__('os').system('echo pwned')",
        "R1.__class__",
        "lambda: 0",
        "eval('1')",
    ],
)
def test_injection_in_a_value_is_a_syntax_error(attack):
    fails(BASE.replace('"10k"', json.dumps(attack)), "cannot read", "[resistors.R1] value")


def test_missing_and_unreadable_files(tmp_path):
    with pytest.raises(DesignFileError, match="cannot read the design file"):
        load_design(tmp_path / "nope.toml")
    bad = tmp_path / "bin.toml"
    bad.write_bytes(b"\xff\xfe\x00")
    with pytest.raises(DesignFileError, match="not UTF-8"):
        load_design(bad)


def test_title_defaults_to_the_file_name(tmp_path):
    path = tmp_path / "my-amp.toml"
    path.write_text(BASE.replace('title = "inverting"\n', ""), encoding="utf-8")
    assert load_design(path).title == "my-amp"


def test_a_registered_non_ideality_is_read_from_include(monkeypatch):
    """A new kind of error source is one class plus its KINDS entry (DEVELOPERS.md)."""
    from opsym.model import nonideal, symbols

    class SeriesDrift(nonideal.NonIdeal):
        kind = "drift"

        def sources(self, opamp):
            return (symbols.opamp_symbol(opamp, "Vdrift"),)

        def injections(self, opamp):
            return (nonideal.SeriesVoltage(symbols.opamp_symbol(opamp, "Vdrift"), sp.S.One),)

    monkeypatch.setitem(symbols.OPAMP_PARAMETERS, "Vdrift", {"real": True})
    monkeypatch.setitem(nonideal.KINDS, "drift", SeriesDrift)
    design = parse_design(
        'output = "out"\n'
        "[resistors]\n"
        'R1 = { between = ["n", "0"] }\n'
        'R2 = { between = ["n", "out"] }\n'
        "[opamps.U1]\n"
        'plus = "0"\nminus = "n"\nout = "out"\ninclude = ["offset", "drift"]\n'
    )
    res = design.circuit.analyze("out")
    vos, drift = design.circuit.symbol("U1.Vos"), sp.Symbol("U1.Vdrift", real=True)
    assert set(res.terms) == {vos, drift}
    assert sp.simplify(res.coefficient(drift) - res.coefficient(vos)) == 0


def test_the_examples_in_the_design_file_guide_read_and_run():
    from opsym.study.design import run_design

    guide = (Path(__file__).parents[2] / "docs" / "design-files.md").read_text(encoding="utf-8")
    blocks = [b for b in re.findall(r"```toml\n(.*?)```", guide, re.S) if "output =" in b]
    assert len(blocks) == 2
    complete, frequency = (parse_design(b, filename="guide.toml") for b in blocks)
    assert complete.budget is not None and complete.tolerance is not None
    study = run_design(frequency)
    assert study.response.bandwidth > 0 and study.noise.budget.total > 0
