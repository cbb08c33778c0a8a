"""What a budget takes from the circuit itself: declared signal values, fixed parts, units.

Each check names the hand result it is compared with.
"""

from __future__ import annotations

import pytest

import opsym
from opsym import ResistorParams
from opsym.output import figures
from opsym.output.sections import response_table


def _inverting(r1=None, r2=None):
    c = opsym.Circuit("inverting, gain -10")
    c.voltage_source("Vin", "in", "0", "1 V")  # the signal's value, declared in the circuit
    c.resistor("R1", "in", "n", r1)
    c.resistor("R2", "n", "out", r2)
    c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    return c


def test_a_signal_value_declared_in_the_circuit_is_used():
    # Gain −R2/R1 = −10 at 1 V in, resistors ±0.1 %: the exact worst corner is
    # 10·(1.001/0.999 − 1) V = 20.02 mV (hand computation of the ratio's extremes).
    c = _inverting()
    b = opsym.error_budget(
        c.analyze("out"), {"R1": "10k", "R2": "100k", "U1.Vos": "1 mV"},
        resistors=ResistorParams.from_text("0.1%"),
    )  # fmt: skip
    row = b.row("gain: tolerance")
    assert row.value == 1.0
    assert row.magnitude == pytest.approx(10 * (1.001 / 0.999 - 1), rel=1e-9)
    assert "values: as given in values=" in b.notes  # no parameter set was named


def test_values_override_the_declared_signal_value():
    c = _inverting()
    values = {"R1": "10k", "R2": "100k", "U1.Vos": "1 mV", "Vin": "2 V"}
    b = opsym.error_budget(c.analyze("out"), values, resistors=ResistorParams.from_text("0.1%"))
    assert b.row("gain: tolerance").magnitude == pytest.approx(20 * (1.001 / 0.999 - 1))


def test_resistor_tolerance_of_parts_given_as_numbers_is_never_silently_dropped():
    # R1 and R2 fixed as numbers: the gain −10 is a constant of the solution, so their
    # tolerance cannot be budgeted. Asking for it is an error that says what to do.
    c = _inverting("10k", "100k")
    res = c.analyze("out")
    with pytest.raises(opsym.BudgetError, match=r"R1, R2 have numbers in the circuit"):
        opsym.error_budget(res, {"U1.Vos": "1 mV"}, resistors=ResistorParams.from_text("1%"))
    # One fixed, one symbolic: the symbolic one is budgeted, the fixed one named in a note.
    c = _inverting("10k", None)
    b = opsym.error_budget(
        c.analyze("out"), {"R2": "100k", "U1.Vos": "1 mV"},
        resistors=ResistorParams.from_text("0.1%"),
    )  # fmt: skip
    assert b.row("gain: tolerance").magnitude == pytest.approx(10 * 0.001, rel=1e-9)
    assert any("not budgeted: R1 has a number in the circuit" in n for n in b.notes)


def test_resistor_params_from_text_is_named_when_text_is_given():
    with pytest.raises(opsym.BudgetError, match=r"ResistorParams\.from_text"):
        ResistorParams("0.1%")


def test_response_table_and_bode_label_of_a_current_output():
    # Load current of R2 in an inverting stage is Vin/R1 (KCL at the virtual ground):
    # 1/10k = 100 µS, flat, in siemens — not V/V.
    c = _inverting("10k", "100k")
    res = c.analyze("I(R2)", domain="s")
    text = response_table(res, [0, 1e3]).to_text()
    assert "100 µS" in text and "V/V" not in text
    pytest.importorskip("matplotlib")
    fig = figures.bode_chart(res)
    assert fig.axes[0].get_ylabel() == "magnitude (dBS, re 1 A/V)"


def test_tolerance_study_never_reports_a_silent_zero_spread():
    # With R1, R2 fixed as numbers the gain is the constant −10: a ±1 % study of it
    # would print ±0. Each way of asking says why instead.
    from opsym.study.tolerance import tolerance_analysis

    res = _inverting("10k", "100k").analyze("out")
    with pytest.raises(opsym.BudgetError, match="R1 has a number in the circuit"):
        tolerance_analysis(res, {}, {"R1": "1%", "R2": "1%"})
    with pytest.raises(opsym.BudgetError, match="'R9', which is not a part"):
        tolerance_analysis(res, {}, {"R9": "1%"})
    with pytest.raises(opsym.BudgetError, match="R1, R2 have numbers in the circuit"):
        tolerance_analysis(res, {}, ResistorParams.from_text("1%"))
    # Symbolic parts: the corners of −R2/R1 at ±1 % are −10·1.01/0.99 and −10·0.99/1.01
    # (hand computation of the ratio's extremes).
    res = _inverting().analyze("out")
    study = tolerance_analysis(res, {"R1": "10k", "R2": "100k"}, {"R1": "1%", "R2": "1%"},
                               samples=None)  # fmt: skip
    assert (study.corner_low, study.corner_high) == pytest.approx(
        (-10 * 1.01 / 0.99, -10 * 0.99 / 1.01), rel=1e-12
    )


def test_a_parameter_the_set_lacks_is_named_with_its_field():
    # An FDA's output-balance error ebal is a parameter the generic sets do not give;
    # the budget names the set, the field to add and the values= key.
    c = opsym.Circuit("FDA, gain 2")
    c.voltage_source("Vd", "ip", "im", "1 V")
    c.voltage_source("Vc", "im", "0", "1 V")
    for name, a, b in (("Rg1", "ip", "p"), ("Rf1", "p", "on"), ("Rg2", "im", "m"),
                       ("Rf2", "m", "op")):  # fmt: skip
        c.resistor(name, a, b)
    c.fda("U1", plus="p", minus="m", out_plus="op", out_minus="on", balance=True)
    res = c.analyze("op")
    values = {"Rg1": "1k", "Rg2": "1k", "Rf1": "2k", "Rf2": "2k"}
    generic = opsym.opamp_parameters("generic precision bipolar").replace(voscm_max=5e-3)
    named = r"gives no ebal_max; add it .* values\['U1.ebal'\]"
    with pytest.raises(opsym.BudgetError, match=named):
        opsym.error_budget(res, values, opamps={"U1": generic})
    # With it: Vop = Vocm + ebal·Vod + Vod/2 and Vod = (1 + Rf/Rg)·Vos = 3·Vos (noise
    # gain), so Vos reaches V(op) with (0.5 + ebal)·3 = 1.503 at ebal = 1e-3.
    b = opsym.error_budget(res, values, opamps={"U1": generic.replace(ebal_max=1e-3)})
    assert b.row("U1.Vos").coefficient == pytest.approx(1.503, rel=1e-12)
    # A datasheet's balance error is a magnitude: the note says how to see the other sign.
    assert any("U1.ebal = 0.001" in n and "= -0.001 for the other" in n for n in b.notes)
