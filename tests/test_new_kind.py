"""A new kind of error source, declared in this file alone, works everywhere.

The kind is an input-protection leakage: a clamp at the inverting input leaks
a current ``Ilk`` into the − pin. It is one class with its facts
(:class:`~opsym.model.symbols.SymbolSpec`) and nothing else; Python, design
files (``include`` and a parameter-set field), error budgets and design notes
must all take it from the registry.

Expectation [derived, KCL]: with the + pin grounded and an ideal op-amp, the −
pin is a virtual ground, so a current ``Ilk`` into the − pin must come through
the feedback resistor: ``Vout = +Ilk·R2`` (the same path as ``Ib-``, reference
case 2 of the shared checks: ``+Ib-·R2``).
"""

from __future__ import annotations

import pytest
import sympy as sp

import opsym
from opsym.model.nonideal import KINDS, NonIdeal, PinAdmittance, PinCurrent
from opsym.model.symbols import SYMBOLS, SymbolSpec, opamp_symbol


class ProtectionLeakage(NonIdeal):
    """Leakage of an input clamp, ``Ilk``, flowing into the − pin."""

    kind = "leakage"
    symbols = (
        SymbolSpec("Ilk", "A", r"I_{\mathrm{LK}}", "clamp leakage Ilk", signed=True,
                   datasheet="ilk"),
    )  # fmt: skip
    convention = "Ilk is the clamp's leakage, positive into the − pin."

    def sources(self, opamp):
        return (opamp_symbol(opamp, "Ilk"),)

    def injections(self, opamp):
        return (PinCurrent(opamp_symbol(opamp, "Ilk"), "minus"),)


R1, R2 = 10_000, 100_000
LEAK = 2e-9  # 2 nA, the invented set's limit below

DESIGN = """
format = 1
title = "Inverting stage with an input clamp — 10 kΩ / 100 kΩ"
notes = "The clamp leaks into the − pin."
output = "out"
input = "Vin"

[resistors]
R1 = { between = ["in", "n"], value = "10k" }
R2 = { between = ["n", "out"], value = "100k" }

[voltage-sources]
Vin = { plus = "in", minus = "0", value = "0.1 V" }

[opamps.U1]
plus = "0"
minus = "n"
out = "out"
include = ["offset", "leakage"]
parameters = { based-on = "generic CMOS", ilk_typ = "0.5 nA", ilk_max = "2 nA" }
"""


def _circuit() -> opsym.Circuit:
    c = opsym.Circuit("inverting stage with a clamp")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", bias=False, noise=False,
            extra=[ProtectionLeakage()])  # fmt: skip
    return c


def test_the_kind_registers_itself_with_its_facts():
    assert KINDS["leakage"] is ProtectionLeakage
    assert SYMBOLS["Ilk"].unit == "A" and SYMBOLS["Ilk"].datasheet == "ilk"


def test_from_python_the_term_follows_kcl():
    c = _circuit()
    res = c.analyze("out")
    ilk = c.symbol("U1.Ilk")
    assert ilk == opamp_symbol("U1", "Ilk")
    assert sp.simplify(res.coefficient(ilk) - c.symbol("R2")) == 0  # +Ilk·R2 [derived, KCL]
    assert "I_{\\mathrm{LK},\\mathrm{U1}}" in res.latex()


def test_a_budget_row_takes_the_value_from_the_parameter_set():
    res = _circuit().analyze("out")
    params = opsym.opamp_parameters("generic CMOS").replace(ilk_max="2 nA", ilk_typ="0.5 nA")
    b = opsym.error_budget(res, {"R1": R1, "R2": R2, "Vin": "0.1"}, {"U1": params})
    row = b.row("U1.Ilk")
    assert row.value == pytest.approx(LEAK)
    assert row.output == pytest.approx(LEAK * R2)  # signed: the set gives its sign
    assert "clamp leakage Ilk" in row.label
    typical = opsym.error_budget(res, {"R1": R1, "R2": R2, "Vin": "0.1"}, {"U1": params},
                                 grade="typical")  # fmt: skip
    assert typical.row("U1.Ilk").output == pytest.approx(0.5e-9 * R2)


def test_a_design_file_includes_it_and_its_parameter_set_gives_the_value(tmp_path):
    design = opsym.parse_design(DESIGN, filename="clamp.toml")
    res = design.circuit.analyze(design.output)
    ilk = design.circuit.symbol("U1.Ilk")
    assert sp.simplify(res.coefficient(ilk) - design.circuit.symbol("R2")) == 0
    assert design.opamps["U1"].value("ilk", "max") == pytest.approx(LEAK)
    text = opsym.dump_design(design)
    assert "ilk_max = 2e-09" in text and '"leakage"' in text  # fields are written as numbers
    again = opsym.parse_design(text, filename="again.toml")
    assert again.opamps["U1"].value("ilk", "max") == pytest.approx(LEAK)


def test_the_design_file_study_budgets_it_and_the_note_shows_it():
    from opsym.study import run_design

    design = opsym.parse_design(DESIGN, filename="clamp.toml")
    study = run_design(design)
    row = study.budget.row("U1.Ilk")
    assert row.output == pytest.approx(LEAK * R2)
    note = opsym.design_note(study.result, study.budget, values=design.values, fmt="markdown")
    assert "clamp leakage Ilk" in note
    assert "Ilk is the clamp's leakage, positive into the − pin." in note
    latex = opsym.design_note(study.result, study.budget, values=design.values, fmt="latex")
    assert "I_{\\mathrm{LK},\\mathrm{U1}}" in latex


class ClampResistance(NonIdeal):
    """Leakage resistance ``Rlk`` of an input clamp, − pin to ground: an impedance, not a source.

    (The differential input resistance ``Rid`` is built in, ``opsym.InputResistance``;
    with the + pin grounded, as below, ``Rlk`` loads the summing node the same way.)
    """

    kind = "clamp-r"
    symbols = (
        SymbolSpec("Rlk", "Ω", r"R_{\mathrm{LK}}", "clamp leakage resistance Rlk",
                   (("positive", True),), datasheet="rlk", role="parameter"),
    )  # fmt: skip
    convention = "Rlk is the input clamp's leakage resistance, from the − pin to ground."

    def sources(self, opamp):
        return ()

    def injections(self, opamp):
        return (PinAdmittance("minus", "ground", 1 / opamp_symbol(opamp, "Rlk")),)


def test_an_impedance_kind_changes_the_gain_as_the_noise_gain_says():
    """Vout/Vin = −(R2/R1)/(1 + (1 + R2/R1 + R2/Rlk)/A): Rlk loads the summing node, so
    it enters the noise gain 1/β = 1 + R2/R1 + R2/Rlk [derived, KCL at the − pin with
    Vout = −A·V−; the form of Franco, *Design with Operational Amplifiers*, ch. 1, mem]."""
    c = opsym.Circuit("inverting stage, finite A and Rlk")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", gain="finite", offset=False, bias=False,
            noise=False, extra=[ClampResistance()])  # fmt: skip
    res = c.analyze("out")
    r1, r2, a, rid = (c.symbol(n) for n in ("R1", "R2", "U1.A", "U1.Rlk"))
    want = -(r2 / r1) / (1 + (1 + r2 / r1 + r2 / rid) / a)
    assert sp.simplify(res.coefficient("Vin") - want) == 0
    assert sp.simplify(res.ideal().coefficient("Vin") + r2 / r1) == 0  # no effect at A = ∞
    params = opsym.OpAmpParams.from_mapping(
        {"name": "mine", "a_min": "100k", "a_typ": "1M", "rlk_max": "10k", "rlk_typ": "1M"})
    b = opsym.error_budget(res, {"R1": "1k", "R2": "100k", "Vin": "10m"}, {"U1": params})
    ideal, noise_gain = -100.0, 1 + 100 + 100e3 / 10e3  # 1/β with Rlk = 10 kΩ
    assert b.row("gain: open-loop").output == pytest.approx(
        0.01 * ideal * (1 / (1 + noise_gain / 1e5) - 1), rel=1e-9)
