"""The fully differential amplifier (``Circuit.fda``) against published FDA analysis.

Sources:

* [Karki] J. Karki, "Fully-Differential Amplifiers", a published application
  report (SLOA054), sections on the basic FDA stage and on feedback-factor
  imbalance — cited from memory. Its results used here: with Rf/Rg each side the
  differential gain is Rf/Rg; the output common mode follows Vocm; the common
  mode at the amplifier inputs is Vicm·Rf/(Rf + Rg) + Vocm·Rg/(Rf + Rg); and with
  β1 ≠ β2 (β = Rg/(Rg + Rf) per side, β1 the side fed back from out−)
  Vod = 2·[Vip(1 − β1) − Vim(1 − β2) + Vocm(β1 − β2)]/(β1 + β2).
* Noise gain: an input offset appears at the output times 1 + Rf/Rg = 1/β
  (common practice for any feedback amplifier; the FDA's differential half
  circuit is a non-inverting stage).
* Finite gain: closed-loop gain error −1/(A·β) to first order (Franco, Design
  with Operational Amplifiers, ch. 1 — the same loop algebra on the
  differential half circuit).
* [derived] the output balance error's definition (docs/conventions.md) and the
  independent nodal solver ``tests/reference/nodal_fda.py`` (its own KCL rows
  and branch currents, no opsym code).
"""

from __future__ import annotations

import re
from fractions import Fraction

import nodal_fda
import pytest
import sympy as sp
from drawing import example_settings
from hypothesis import assume, given
from hypothesis import strategies as st

import opsym
from opsym.io.designfile import parse_design
from opsym.io.examples import example_path
from opsym.io.writer import dump_design

Rg, Rf, Rg1, Rf1, Rg2, Rf2 = sp.symbols("Rg Rf Rg1 Rf1 Rg2 Rf2", positive=True)


def _stage(gain="ideal", **options):
    """Vip at ip, Vim at im (both to ground), Vocm at cm; Rg1/Rf1 and Rg2/Rf2 symbolic."""
    c = opsym.Circuit("FDA stage")
    c.voltage_source("Vip", "ip", "0")
    c.voltage_source("Vim", "im", "0")
    c.voltage_source("Vocm", "cm", "0")
    c.resistor("Rg1", "ip", "p")
    c.resistor("Rf1", "p", "on")
    c.resistor("Rg2", "im", "m")
    c.resistor("Rf2", "m", "op")
    c.fda("U1", "p", "m", "op", "on", "cm", gain=gain, **options)
    return c


def _balanced(expr):
    """``expr`` with both sides equal: Rg1 = Rg2 = Rg, Rf1 = Rf2 = Rf."""
    return sp.simplify(expr.subs({Rg1: Rg, Rg2: Rg, Rf1: Rf, Rf2: Rf}))


def test_balanced_stage_gain_common_mode_and_offset():
    c = _stage()
    vod = c.analyze(("op", "on"))
    # [Karki] Vod = (Rf/Rg)·Vid, Vid = Vip − Vim
    assert _balanced(vod.coefficient("Vip") - Rf / Rg) == 0
    assert _balanced(vod.coefficient("Vim") + Rf / Rg) == 0
    assert _balanced(vod.coefficient("Vocm")) == 0
    # noise gain: Vos appears at the output as Vos·(1 + Rf/Rg)
    assert _balanced(vod.coefficient("U1.Vos") - (1 + Rf / Rg)) == 0
    # [Karki] the output common mode is Vocm (plus the common-mode offset)
    op, on = c.analyze("op"), c.analyze("on")
    for s in ("Vip", "Vim", "Vocm", "U1.Vos", "U1.Voscm"):
        mean = _balanced((op.coefficient(s) + on.coefficient(s)) / 2)
        assert mean == (1 if s in ("Vocm", "U1.Voscm") else 0), s
    # [Karki] input common mode Vicm·Rf/(Rf + Rg) + Vocm·Rg/(Rf + Rg), Vicm = (Vip + Vim)/2
    vip, vim, vocm = (sp.Symbol(n, real=True) for n in ("Vip", "Vim", "Vocm"))
    want = (vip + vim) / 2 * Rf / (Rf + Rg) + vocm * Rg / (Rf + Rg)
    assert _balanced(vod.common_mode("U1") - want) == 0


def test_feedback_factor_mismatch_moves_vod_with_vocm():
    vod = _stage().analyze(("op", "on"))
    b1, b2 = Rg1 / (Rg1 + Rf1), Rg2 / (Rg2 + Rf2)  # β1: side 1, fed back from out−
    # [Karki, from memory] Vod = 2·[Vip(1 − β1) − Vim(1 − β2) + Vocm(β1 − β2)]/(β1 + β2)
    assert sp.simplify(vod.coefficient("Vocm") - 2 * (b1 - b2) / (b1 + b2)) == 0
    assert sp.simplify(vod.coefficient("Vip") - 2 * (1 - b1) / (b1 + b2)) == 0
    assert sp.simplify(vod.coefficient("Vim") + 2 * (1 - b2) / (b1 + b2)) == 0
    # the sign against the independent solver: β1 > β2 gives Vod > 0 for Vocm > 0
    desc = [("V", "Vocm", "cm", "0", 1), ("V", "Vip", "ip", "0", 0), ("V", "Vim", "im", "0", 0),
            ("R", "Rg1", "ip", "p", 2000), ("R", "Rf1", "p", "on", 1000),
            ("R", "Rg2", "im", "m", 1000), ("R", "Rf2", "m", "op", 2000),
            ("FDA", "U1", "p", "m", "op", "on", "cm", None, 0, {})]  # fmt: skip
    v = nodal_fda.solve(desc, {"Vocm": 1})
    beta1, beta2 = Fraction(2, 3), Fraction(1, 3)
    assert v["op"] - v["on"] == 2 * (beta1 - beta2) / (beta1 + beta2) > 0


def test_finite_gain_error_is_minus_one_over_a_beta():
    c = _stage(gain="finite")
    vod = c.analyze(("op", "on"), values={"Rg2": "1k", "Rg1": "1k", "Rf1": "3k", "Rf2": "3k"})
    a = c.symbol("U1.A")
    beta = sp.Rational(1, 4)  # Rg/(Rg + Rf)
    # Franco ch. 1: first-order gain error −1/(A·β)
    assert sp.simplify(vod.gain_error("Vip", order=1) + 1 / (a * beta)) == 0
    # the exact one: −1/(1 + A·β)
    assert sp.simplify(vod.gain_error("Vip") + 1 / (1 + a * beta)) == 0
    # loop gain of the differential loop: T = A·β (docs/conventions.md); with β1 ≠ β2
    # the differential loop's feedback factor is their mean (β1 + β2)/2 [Karki, from memory]
    b1, b2 = Rg1 / (Rg1 + Rf1), Rg2 / (Rg2 + Rf2)
    loop = opsym.loop_gain(c, "U1")
    assert sp.simplify(loop.feedback - (b1 + b2) / 2) == 0
    assert sp.simplify(_balanced(loop.gain).subs({Rg: 1000, Rf: 3000}) - a * beta) == 0


def test_output_balance_error_moves_only_the_output_common_mode():
    c = _stage(gain="finite", balance=True)
    e = c.symbol("U1.ebal")
    vod = c.analyze(("op", "on"))
    op, on = c.analyze("op"), c.analyze("on")
    for s in ("Vip", "Vim", "Vocm", "U1.Vos", "U1.Voscm", "U1.Ib+", "U1.Ib-"):
        d = vod.coefficient(s)
        assert _balanced(sp.diff(d, e)) == 0, s  # Vod does not see ebal (balanced load)
        # docs/conventions.md: Vout,cm = Vocm + Voscm + ebal·Vod
        cm = (op.coefficient(s) + on.coefficient(s)) / 2
        direct = 1 if s in ("Vocm", "U1.Voscm") else 0
        assert _balanced(cm - direct - e * d) == 0, s


def test_vocm_left_out_is_zero_volts():
    c = opsym.Circuit()
    c.voltage_source("Vid", "ip", "im")
    c.resistor("Rt", "im", "0", "1k")
    for n, a, b in (("R1", "ip", "p"), ("R2", "p", "on"), ("R3", "im", "m"), ("R4", "m", "op")):
        c.resistor(n, a, b, "1k")
    c.fda("U1", "p", "m", "op", "on", bias=False, ocm_offset=False)
    op, on = c.analyze("op"), c.analyze("on")
    assert sp.simplify(op.expression + on.expression) == 0  # (op + on)/2 = 0 V


# -- random circuits against the independent solver ----------------------------------

_EXTRAS = (("Rl", "op", "on"), ("Rp", "p", "0"), ("Rm", "m", "0"), ("Ra", "op", "0"),
           ("Rb", "on", "0"), ("Rpm", "p", "m"), ("Rii", "ip", "im"))  # fmt: skip


@st.composite
def fda_circuits(draw):
    ohms = st.integers(100, 100_000)
    desc = [("V", "Vip", "ip", "0", 0), ("V", "Vim", "im", "0", 0), ("V", "Vocm", "cm", "0", 0),
            ("I", "Iin", "0", "p", 0)]  # fmt: skip
    for name, a, b in (("Rg1", "ip", "p"), ("Rf1", "p", "on"), ("Rg2", "im", "m"),
                       ("Rf2", "m", "op")):  # fmt: skip
        desc.append(("R", name, a, b, draw(ohms)))
    for name, a, b in _EXTRAS:
        if draw(st.booleans()):
            desc.append(("R", name, a, b, draw(ohms)))
    gain = draw(st.one_of(st.none(), st.integers(10, 10**6)))
    ebal = Fraction(draw(st.integers(-50, 50)), 1000)
    desc.append(("FDA", "U1", "p", "m", "op", "on", "cm", gain, ebal, {}))
    output = draw(st.sampled_from([("op", "on"), "op", "on", ("p", "m")]))
    return desc, output


@example_settings(40)
@given(fda_circuits())
def test_random_fda_circuits_match_the_independent_solver(case):
    desc, output = case
    try:
        want = nodal_fda.coefficients(desc, output)
    except nodal_fda.SingularError:
        assume(False)
    c = opsym.Circuit("random FDA")
    for item in desc:
        if item[0] == "R":
            c.resistor(item[1], item[2], item[3], item[4])
        elif item[0] == "V":
            c.voltage_source(item[1], item[2], item[3])
        elif item[0] == "I":
            c.current_source(item[1], item[2], item[3])
        else:
            _, name, p, m, op, on, cm, gain, ebal, _ = item
            c.fda(name, p, m, op, on, cm, gain="ideal" if gain is None else gain,
                  noise=False, balance=True)  # fmt: skip
    res = c.analyze(output, values={"U1.ebal": sp.Rational(ebal.numerator, ebal.denominator)})
    assert {str(s) for s in res.terms} == set(want)
    for name, value in want.items():
        got = res.coefficient(name)
        assert got == sp.Rational(value.numerator, value.denominator), (name, got, value)


# -- design files and netlists -------------------------------------------------------


def test_design_file_round_trip_and_example_report():
    d = opsym.load_design(example_path("fda-adc-driver"))
    text = dump_design(d)
    assert "[fdas.U1]" in text and 'out-minus = "on"' in text
    again = parse_design(text)
    assert dump_design(again) == text
    amp = again.circuit.element("U1")
    assert isinstance(amp, opsym.model.FullyDifferentialAmp) and amp.vocm == "cm"
    # [Karki] the example's gain Rf/Rg = 2 with its Vocm of 2.5 V at the output common mode
    res = d.circuit.analyze(d.output, values=d.values)
    assert res.ideal().coefficient("Vd") == 2


def test_ngspice_agrees_with_the_exported_fda_stage(ngspice):
    c = _stage(gain="finite", balance=True)
    values = {"Vip": 0.7, "Vim": -0.2, "Vocm": 2.5, "Rg1": 1000, "Rf1": 2210, "Rg2": 1020,
              "Rf2": 2180, "U1.A": 20000, "U1.Vos": 1.5e-3, "U1.Ib+": 2e-6, "U1.Ib-": 1.4e-6,
              "U1.Voscm": 4e-3, "U1.ebal": -0.003}  # fmt: skip
    commands = [".options pivrel=1", ".control", "set numdgt=17", "op", "print all", "quit",
                ".endc"]  # fmt: skip
    text = opsym.write_netlist(c, values, commands=commands)
    out, _ = ngspice.run_batch(text)
    line = re.compile(r"^\s*v?\(?([A-Za-z0-9_]+)\)?\s*=\s*([-+]?[0-9.]+(?:[eE][-+]?[0-9]+)?)\s*$")
    v = {m.group(1).lower(): float(m.group(2)) for m in map(line.match, out.splitlines()) if m}
    for output, got in ((("op", "on"), v["op"] - v["on"]), ("op", v["op"]), ("on", v["on"])):
        want = float(c.analyze(output).subs(values).expression)
        assert got == pytest.approx(want, rel=1e-9, abs=1e-12), output


# -- user mistakes: each an OpsymError that names the element and says what to do ----


def _mistake(exc, match, build):
    with pytest.raises(exc, match=match) as info:
        build()
    assert isinstance(info.value, opsym.OpsymError)


def test_user_mistakes_are_refused_with_a_clear_message():
    def circuit():
        c = opsym.Circuit()
        c.voltage_source("Vid", "ip", "im")
        c.resistor("Rt", "im", "0", "1k")
        for n, a, b in (("R1", "ip", "p"), ("R2", "p", "on"), ("R3", "im", "m"),
                        ("R4", "m", "op")):  # fmt: skip
            c.resistor(n, a, b, "1k")
        return c

    def with_fda(**kw):
        c = circuit()
        c.fda("U1", "p", "m", "op", "on", **kw)
        return c

    # vocm given as an output
    _mistake(opsym.CircuitError, r"FDA U2: vocm is the output node 'op'",
             lambda: circuit().fda("U2", "p", "m", "op", "on", "op"))  # fmt: skip
    # both outputs on one node, an output on ground, the inputs on one node
    _mistake(opsym.CircuitError, r"FDA U2: both outputs",
             lambda: circuit().fda("U2", "p", "m", "op", "op"))  # fmt: skip
    _mistake(opsym.CircuitError, r"FDA U2: out_minus is tied to ground",
             lambda: circuit().fda("U2", "p", "m", "op", "0"))  # fmt: skip
    _mistake(opsym.CircuitError, r"FDA U2: both inputs",
             lambda: circuit().fda("U2", "p", "p", "op", "on"))  # fmt: skip
    # duplicate names
    _mistake(opsym.errors.DuplicateNameError, r"'R1' is already used",
             lambda: circuit().fda("R1", "p", "m", "op", "on"))  # fmt: skip
    # a missing node asked for
    _mistake(opsym.errors.UnknownNameError, r"no node named 'outp'",
             lambda: with_fda().analyze(("outp", "on")))  # fmt: skip
    # a single-ended-only analysis of an FDA: its output current
    _mistake(opsym.CircuitError, r"I\(U1\): U1 is an FDA with two outputs",
             lambda: with_fda().analyze("I(U1)"))  # fmt: skip
    # kinds of a single output, and the FDA's own kinds on an op-amp
    _mistake(opsym.CircuitError, r"FDA U2: kind 'ro' acts on a single-ended output",
             lambda: circuit().fda("U2", "p", "m", "op", "on", extra=["ro"]))  # fmt: skip
    _mistake(opsym.CircuitError, r"op-amp U2: 'ocm-offset' belongs to a fully differential",
             lambda: circuit().opamp("U2", "p", "m", "op", extra=["ocm-offset"]))  # fmt: skip
    # an option that does not exist, a flag that is not a bool
    _mistake(opsym.errors.ArgumentTypeError, r"FDA U2: out is not an option",
             lambda: circuit().fda("U2", "p", "m", "op", "on", out="x"))  # fmt: skip
    _mistake(opsym.errors.ArgumentTypeError, r"FDA U2: balance= expects True or False",
             lambda: circuit().fda("U2", "p", "m", "op", "on", balance="yes"))  # fmt: skip


def test_missing_feedback_names_the_fda_and_the_pin():
    c = opsym.Circuit()
    c.voltage_source("Vin", "ip", "0")
    c.resistor("R1", "ip", "p", "1k")
    c.resistor("R2", "p", "on", "1k")
    c.resistor("R3", "m", "0", "1k")
    c.fda("U1", "p", "m", "op", "on")
    with pytest.raises(opsym.errors.NoFeedbackError, match=r"FDA U1 .* \+ output 'op'"):
        c.analyze(("op", "on"))


def test_design_file_mistakes_name_the_table():
    base = """format = 1
output = ["op", "on"]
[resistors]
R1 = { between = ["ip", "p"], value = "1k" }
R2 = { between = ["p", "on"], value = "1k" }
R3 = { between = ["im", "m"], value = "1k" }
R4 = { between = ["m", "op"], value = "1k" }
[voltage-sources]
Vp = { plus = "ip", minus = "0" }
Vm = { plus = "im", minus = "0" }
[fdas.U1]
plus = "p"
minus = "m"
"""
    with pytest.raises(opsym.errors.DesignFileError, match=r"out-plus"):
        opsym.parse_design(base + 'out-minus = "on"\n')
    with pytest.raises(opsym.errors.DesignFileError, match=r"vocm is the output node"):
        opsym.parse_design(base + 'out-plus = "op"\nout-minus = "on"\nvocm = "on"\n')
    with pytest.raises(opsym.errors.DesignFileError, match=r"single-ended output"):
        opsym.parse_design(base + 'out-plus = "op"\nout-minus = "on"\ninclude = ["ro"]\n')


def test_netlist_reader_refuses_an_fda_pin_map():
    text = "fda\nV1 ip 0 1\nR1 ip p 1k\nR2 p on 1k\nX1 p m op on cm FDAMOD\n.end\n"
    pins = {"FDAMOD": ["+", "-", "out", "out-", "vocm"]}
    with pytest.raises(opsym.errors.DesignFileError, match=r"FDAMOD: pin 'out-' belongs to"):
        opsym.read_netlist(text, output="op", opamps=pins)
