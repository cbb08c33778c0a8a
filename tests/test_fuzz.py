"""Hostile and careless input: every mistake is an OpsymError, nothing hangs, no traceback.

Hypothesis throws wrong types, huge and tiny numbers, NaN, text and containers at
the public API, and random fragments at the design-file reader and the command
line. The promise under test is opsym's own (``docs/design-files.md``, "Limits";
``opsym/errors.py``): a user mistake raises an :class:`opsym.OpsymError` subclass
(never a bare TypeError, AttributeError, OverflowError…), each example ends within
its deadline, and the command line exits with 0 or 2 and a one-paragraph message.
Examples are few and small so that the default run stays within a few seconds.
"""

from __future__ import annotations

import io
import math
import os
from collections.abc import Callable
from contextlib import redirect_stderr, redirect_stdout
from typing import Any

import sympy as sp
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import opsym
from opsym.cli import main

SCALE = int(os.environ.get("OPSYM_HYPOTHESIS_SCALE", "1"))  # see tests/conftest.py
FAST = settings(
    max_examples=60 * SCALE,
    deadline=3000,  # ms per example: a hang or a runaway derivation fails
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture],
    database=None,
)

#: What a careless or hostile caller passes where a name, number or mapping belongs.
GARBAGE = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(min_value=-(10**6), max_value=10**6),
    st.sampled_from([10**160, -(10**400), 10**5000, 0, -1]),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([1e308, 5e-324, 1e-310, -0.0]),
    st.sampled_from([sp.Float("1e400"), sp.Float("-1e-400"), sp.nan, sp.zoo, sp.oo, sp.I]),
    st.text(max_size=12),
    st.sampled_from(["1k", "10 Ω", "1e6 dB", "1e99", "gnd", "s", "R1", "U1.Vos", "-5", "inf"]),
    st.lists(st.integers(min_value=-3, max_value=3), max_size=3),
    st.dictionaries(st.sampled_from(["R1", "R2", "U1.Vos", "x", "s"]), st.integers(), max_size=2),
    st.just(object()),
    st.just((1, 2, 3)),
)


def _stage(domain: str = "dc") -> Any:
    c = opsym.Circuit("fuzz")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", "0", "n", "out", gain="pole" if domain == "s" else "ideal")
    return c


_DC = _stage().analyze("out")
_S = _stage("s").analyze("out", domain="s", values={"R1": "1k", "R2": "10k",
                                                     "U1.A0": "100k", "U1.GBW": "1M"})
_N = _stage("s").noise("out", values={"R1": "1k", "R2": "10k", "U1.A0": "100k",
                                      "U1.GBW": "1M", "U1.en": "10n", "U1.in": "1p",
                                      "U1.fce": 0, "U1.fci": 0})
_PARAMS = {"U1": opsym.opamp_parameters("generic precision bipolar")}

#: Every public entry point, with the garbage put in one argument.
CALLS: dict[str, Callable[[Any], Any]] = {
    "resistor name": lambda x: _stage().resistor(x, "a", "0"),
    "resistor node": lambda x: _stage().resistor("R9", x, "0"),
    "resistor value": lambda x: _stage().resistor("R9", "a", "0", value=x),
    "capacitor value": lambda x: _stage().capacitor("C9", "a", "0", value=x),
    "inductor value": lambda x: _stage().inductor("L9", "a", "0", value=x),
    "voltage source value": lambda x: _stage().voltage_source("V9", "a", "0", value=x),
    "current source value": lambda x: _stage().current_source("I9", "a", "0", value=x),
    "opamp gain": lambda x: _stage().opamp("U9", "a", "b", "c", gain=x),
    "opamp extra": lambda x: _stage().opamp("U9", "a", "b", "c", extra=x),
    "opamp flag": lambda x: _stage().opamp("U9", "a", "b", "c", cmrr=x),
    "fda gain": lambda x: _stage().fda("U9", "a", "b", "c", "d", gain=x),
    "fda node": lambda x: _stage().fda("U9", "a", "b", x, "d"),
    "fda vocm": lambda x: _stage().fda("U9", "a", "b", "c", "d", x),
    "fda extra": lambda x: _stage().fda("U9", "a", "b", "c", "d", extra=x),
    "fda flag": lambda x: _stage().fda("U9", "a", "b", "c", "d", balance=x),
    "element": lambda x: _stage().element(x),
    "node": lambda x: _stage().node(x),
    "symbol": lambda x: _stage().symbol(x),
    "analyze output": lambda x: _stage().analyze(x),
    "analyze values": lambda x: _stage().analyze("out", values=x),
    "analyze domain": lambda x: _stage().analyze("out", domain=x),
    "noise temperature": lambda x: _stage().noise("out", temperature=x),
    "subs": lambda x: _DC.subs(x),
    "subs value": lambda x: _DC.subs({"R1": x}),
    "coefficient": lambda x: _DC.coefficient(x),
    "null": lambda x: _DC.null("U1.Ib+", by=x),
    "sensitivity": lambda x: _DC.sensitivity(x),
    "gain_error": lambda x: _DC.gain_error(x),
    "response": lambda x: _S.response(x),
    "bandwidth": lambda x: _S.bandwidth(drop_db=x),
    "density": lambda x: _N.density(x),
    "rms low": lambda x: _N.rms(x, 1e3),
    "rms high": lambda x: _N.rms(1.0, x),
    "noise budget": lambda x: _N.budget(x, 1e4),
    "noise source": lambda x: _N.source(x),
    "noise subs": lambda x: _N.subs(x),
    "preferred_value": lambda x: opsym.preferred_value(x),
    "preferred_value series": lambda x: opsym.preferred_value(1000, x),
    "error_budget values": lambda x: opsym.error_budget(_DC, x, _PARAMS),
    "error_budget value": lambda x: opsym.error_budget(
        _DC, {"R1": x, "R2": "10k", "Vin": 1}, _PARAMS),
    "error_budget opamps": lambda x: opsym.error_budget(_DC, {"R1": 1, "R2": 1}, x),
    "error_budget temperature": lambda x: opsym.error_budget(
        _DC, {"R1": 1, "R2": 1, "Vin": 1}, _PARAMS, temperature=x),
    "budget_over_temperature": lambda x: opsym.budget_over_temperature(
        _DC, {"R1": 1, "R2": 1, "Vin": 1}, _PARAMS, temperatures=x),
    "tolerance_analysis values": lambda x: opsym.tolerance_analysis(
        _DC, x, {"R1": 0.01}, samples=50),
    "tolerance_analysis tolerances": lambda x: opsym.tolerance_analysis(
        _DC, {"R1": 1, "R2": 1}, x, samples=50),
    "parse_value": lambda x: opsym.parse_value(x, where="fuzz"),
    "parse_quantity": lambda x: opsym.parse_quantity(x, where="fuzz"),
    "format_si": lambda x: opsym.format_si(x, "V"),
    "opamp_parameters": lambda x: opsym.opamp_parameters(x),
    "resistor_parameters": lambda x: opsym.resistor_parameters(x),
    "ADC bits": lambda x: opsym.ADC.unipolar(x, 5.0),
    "ADC reference": lambda x: opsym.ADC.unipolar(16, x),
    "parse_design": lambda x: opsym.parse_design(x),
    "transfer_latex": lambda x: opsym.transfer_latex(x),
    "noise_latex": lambda x: opsym.noise_latex(x),
    "choose_for_null": lambda x: opsym.choose_for_null(_DC.null("U1.Ib+", by="R1"), x),
    "corner_values": lambda x: opsym.corner_values(_DC.coefficient("Vin"), x, {"R1": 0.01}),
    "monte_carlo": lambda x: opsym.monte_carlo(_DC.coefficient("Vin"), {"R1": 1, "R2": 2}, x,
                                               samples=20),
    "null values": lambda x: _DC.null(["U1.Vos", "Vin"], by="R1", values=x),
    "null sources": lambda x: _DC.null(x, by="R1"),
    "transfer_function": lambda x: opsym.transfer_function(x),
    "transfer_function source": lambda x: opsym.transfer_function(_S, x),
    "step_response": lambda x: opsym.transfer_function(_S).step_response(x),
    "settling_time": lambda x: opsym.transfer_function(_S).settling_time(x),
    "noise_figure": lambda x: opsym.noise_figure(x, "4n", "1p"),
    "noise_figure temperature": lambda x: opsym.noise_figure("1k", "4n", "1p", temperature=x),
    "optimum_source_resistance": lambda x: opsym.optimum_source_resistance("4n", x),
    "minimum_noise_figure": lambda x: opsym.minimum_noise_figure(x, "1p"),
    "circuit_noise_figure": lambda x: opsym.circuit_noise_figure(_N, x, f=1e3),
    "circuit_noise_figure f": lambda x: opsym.circuit_noise_figure(_N, "R1", f=x),
    "circuit_noise_figure band": lambda x: opsym.circuit_noise_figure(_N, "R1", band=x),
    "circuit_optimum_source_resistance": lambda x: opsym.circuit_optimum_source_resistance(
        _N, "R1", f=1e3, bounds=x),
    "design_note": lambda x: opsym.design_note(x),
    "design_note nominal": lambda x: opsym.design_note(_DC, nominal=x),
    "dominant_form": lambda x: opsym.dominant_form(x, {}),
    "dominant_form values": lambda x: opsym.dominant_form(_DC.coefficient("Vin"), x),
    "dominant_form error": lambda x: opsym.dominant_form(
        _DC.coefficient("Vin"), {_DC.circuit.symbol("R1"): 1, _DC.circuit.symbol("R2"): 2}, x),
    "dominant source": lambda x: _DC.dominant(x, values={"R1": 1, "R2": 2}),
    "dominant values": lambda x: _DC.dominant("Vin", values=x),
    "dominant error": lambda x: _DC.dominant("Vin", error=x, values={"R1": 1, "R2": 2}),
    "dump_design": lambda x: opsym.dump_design(x),
    "load_design": lambda x: opsym.load_design(x),
    "read_netlist": lambda x: opsym.read_netlist(x, output="out"),
    "read_netlist output": lambda x: opsym.read_netlist("t\nR1 out 0 1k\n.end\n", output=x),
    "write_netlist": lambda x: opsym.write_netlist(x),
    "write_netlist values": lambda x: opsym.write_netlist(_stage(), x),
    "loop_gain": lambda x: opsym.loop_gain(_stage("s"), x),
    "loop_gain values": lambda x: opsym.loop_gain(_stage("s"), "U1", x),
    "output_impedance": lambda x: opsym.output_impedance(_stage(), x),
    "input_impedance": lambda x: opsym.input_impedance(_stage(), x),
}


@FAST
@given(st.sampled_from(sorted(CALLS)), GARBAGE)
def test_public_api_raises_only_opsym_errors(call, garbage):
    """Anything at all in one argument: a result, or an OpsymError; nothing bare."""
    try:
        CALLS[call](garbage)
    except opsym.OpsymError as err:
        assert str(err), call  # a message, not an empty exception
        assert "\n\n" not in str(err)


def test_every_public_function_is_fuzzed():
    """Each function in opsym.__all__ has an entry above."""
    functions = {n for n in opsym.__all__ if callable(getattr(opsym, n))
                 and not isinstance(getattr(opsym, n), type)}  # fmt: skip
    called = {name.split()[0] for name in CALLS}
    assert functions - called == set()


# -- design files ---------------------------------------------------------------------------

_VALUES = st.one_of(
    st.sampled_from(['"10k"', '"0"', '"-1k"', '"1e400"', '"1e-40"', '"10 F"', '"R2"', '"s"',
                     '"R1 - 10k"', '"R1 ‖ R1"', '"1/0"', "0", "-5", "1e308", "1e-320",
                     "inf", "nan", "true", "[1, 2]", '"1e6 dB"', '"meg"', '"((((1))))"',
                     '"R2 - R1"', '"R2*0"']),
    st.text(alphabet="0123456789.ekMRu+-*/ ()", max_size=10).map(lambda t: f'"{t}"'),
)
_NODES = st.sampled_from(['"out"', '"gnd"', '"GND"', '"0"', '["out", "gnd"]', '["gnd", "0"]',
                          '["out", "out"]', '"nowhere"', "5", "[]", '""', '"n"'])
_NULLS = st.sampled_from(['"U1.Ib by R3"', '"Vin by R3"', '"R1 by R3"', '"U1.Vos by U1"',
                          '"gain by R1"', '"x"', '"U1.Ib by s"'])
_TEMPLATE = """\
title = "fuzz"
output = {output}
[resistors]
R1 = {{ between = ["in", "n"], value = {r1} }}
R2 = {{ between = ["n", "out"], value = "100k" }}
R3 = {{ between = ["p", "0"], {r3key} = {r3} }}
[capacitors]
C1 = {{ between = ["n", "out"], value = {c1} }}
[voltage-sources]
Vin = {{ plus = "in", minus = "0", value = {vin} }}
[opamps.U1]
plus = "p"
minus = "n"
out = "out"
parameters = "generic precision bipolar"
[analysis]
nulls = [{null}]
{tail}"""
_TAILS = st.sampled_from([
    '[noise]\nfrom = "1e-40 Hz"\nto = "inf"\n', '[noise]\nfrom = 0\nto = "10k"\n',
    '[noise]\nfrom = "10k"\nto = "1"\n', '[noise]\nfrom = "1"\nto = "1e400"\n',
    '[response]\nfrom = "-1"\n', '[response]\nat = ["1k", "1e99"]\n',
    '[budget]\ntemperatures = [-300, 1e400]\n', '[budget]\nfull-scale = "0 V"\n',
    '[tolerance]\nresistors = "thick film 1%"\nsamples = 100000000\n',
    '[response]\nfrom = "10 Hz"\nto = "1 MHz"\n',
    '[noise]\nfrom = "0.1 Hz"\nto = "10 Hz"\n',
])


def _mostly(good: str, bad: st.SearchStrategy[str]) -> st.SearchStrategy[str]:
    """The sound value three times in four, so that many files get past the reader."""
    return st.one_of(st.just(good), st.just(good), st.just(good), bad)


@st.composite
def design_texts(draw: Any) -> str:
    key = draw(st.sampled_from(["value", "equals"]))
    return _TEMPLATE.format(
        output=draw(_mostly('"out"', _NODES)), r1=draw(_mostly('"10k"', _VALUES)), r3key=key,
        r3=draw(_mostly('"9.09k"' if key == "value" else '"R1 ‖ R2"', _VALUES)),
        c1=draw(_mostly('"100p"', _VALUES)), vin=draw(_mostly('"0.1 V"', _VALUES)),
        null=draw(_mostly('"U1.Ib by R3"', _NULLS)), tail=draw(_mostly("", _TAILS)),
    )


@FAST
@given(design_texts())
def test_design_fragments_read_or_say_what_is_wrong(text):
    try:
        design = opsym.parse_design(text, filename="fuzz.toml")
    except opsym.OpsymError as err:
        assert str(err).startswith("fuzz.toml"), err
        return
    result = design.analyze()  # what the reader accepts can be derived
    assert result.terms


def _run_cli(tmp_path: Any, text: str, *extra: str) -> tuple[int, str]:
    path = tmp_path / "fuzz.toml"
    path.write_text(text, encoding="utf-8")
    err = io.StringIO()
    with redirect_stdout(io.StringIO()), redirect_stderr(err):
        code = main(["report", "--quiet", str(path), *extra])
    return code, err.getvalue()


@settings(FAST, max_examples=15 * SCALE, deadline=10000)
@given(design_texts())
def test_cli_never_shows_a_traceback(tmp_path_factory, text):
    """``opsym report``: exit 0, or 2 with one paragraph naming the problem; never 1."""
    code, err = _run_cli(tmp_path_factory.mktemp("cli"), text)
    assert code in (0, 2), err
    assert "Traceback" not in err and "internal error" not in err, err
    if code == 2:
        assert err.startswith("opsym: error: ") and err.count("\n") == 1, err


def test_fuzz_strategies_cover_the_limits():
    """The garbage above includes numbers past every limit the docs state."""
    assert 10**160 > 1e150 and 5e-324 < 1e-150 and math.isinf(float(sp.Float("1e400")))
