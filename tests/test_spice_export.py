"""Netlists written by ``opsym.write_netlist``, run in ngspice, against opsym's numbers.

Three invented stages: an inverting stage with bias compensation (offset and bias
currents as V and I sources), a difference amplifier with a finite open-loop gain
and a CMRR error, and a single-pole inverting stage with a feedback capacitor
(``.ac``). The ideal op-amp is a VCVS of gain 1e7, run at A and 2A and extrapolated
in 1/A (Richardson), so the comparison is with the A → ∞ limit.

Tolerances: operating points relative 1e-9 (ngspice solves the same linear
equations in float64 and prints 17 digits; ``.options pivrel=1`` as in
``tests/reference/spice.py``); ``.ac`` relative 1e-9 likewise.

Skipped without ngspice; ``OPSYM_REQUIRE_NGSPICE=1`` makes a missing ngspice fail.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
import sympy as sp

import opsym

REL = 1e-9
_OP = [".options pivrel=1", ".control", "set numdgt=17", "op", "print all", "quit", ".endc"]
_LINE = re.compile(r"^\s*v?\(?([A-Za-z0-9_]+)\)?\s*=\s*([-+]?[0-9.]+(?:[eE][-+]?[0-9]+)?)\s*$")


def _op(spice, text: str) -> dict[str, float]:
    out, _ = spice.run_batch(text)
    return {m.group(1).lower(): float(m.group(2)) for m in map(_LINE.match, out.splitlines()) if m}


def _ideal_op(spice, circuit, values, **kw) -> dict[str, float]:
    """Richardson in 1/A: 2·v(2A) − v(A) removes the 1/A term of a high-gain stand-in."""
    lo = _op(spice, opsym.write_netlist(circuit, values, commands=_OP, ideal_gain=1e7, **kw))
    hi = _op(spice, opsym.write_netlist(circuit, values, commands=_OP, ideal_gain=2e7, **kw))
    return {k: 2 * hi[k] - lo[k] for k in lo}


def _opsym_output(circuit, output, values) -> float:
    return float(circuit.analyze(output).subs(values).expression)


def test_inverting_stage_with_bias_compensation(ngspice):
    c = opsym.Circuit("inverting stage with bias compensation")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "p", "0")
    c.opamp("U1", plus="p", minus="n", out="out")
    values = {"Vin": 0.25, "R1": 12e3, "R2": 56e3, "R3": 9.88e3,
              "U1.Vos": 1.5e-3, "U1.Ib+": 85e-9, "U1.Ib-": 60e-9}  # fmt: skip
    text = opsym.write_netlist(c, values)
    assert "V_U1_Vos" in text and "I_U1_Ibp p 0 DC 8.5e-08" in text
    v = _ideal_op(ngspice, c, values)
    expected = _opsym_output(c, "out", values)
    # KCL by hand [derived]: Vout = -R2/R1·Vin + (1+R2/R1)(Vos - Ib+·R3) + Ib-·R2
    hand = -56 / 12 * 0.25 + (1 + 56 / 12) * (1.5e-3 - 85e-9 * 9.88e3) + 60e-9 * 56e3
    assert expected == pytest.approx(hand, rel=1e-12)
    assert v["out"] == pytest.approx(expected, rel=REL)


def test_difference_amplifier_with_finite_gain_and_cmrr(ngspice):
    c = opsym.Circuit("difference amplifier")
    c.voltage_source("V1", "a", "0")
    c.voltage_source("V2", "b", "0")
    c.resistor("R1", "a", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "b", "p")
    c.resistor("R4", "p", "0")
    c.opamp("U1", plus="p", minus="n", out="out", gain="finite", cmrr=True)
    values = {"V1": 1.02, "V2": 1.07, "R1": 10e3, "R2": 47e3, "R3": 10.1e3, "R4": 46.8e3,
              "U1.A": 2.5e5, "U1.Vos": -0.4e-3, "U1.Ib+": 20e-9, "U1.Ib-": 25e-9,
              "U1.Vcm": 0.88, "U1.CMRR": 3.2e4}  # fmt: skip
    v = _op(ngspice, opsym.write_netlist(c, values, commands=_OP))
    assert v["out"] == pytest.approx(_opsym_output(c, "out", values), rel=REL)


def test_parameter_set_values_reach_the_netlist(ngspice):
    c = opsym.Circuit("follower with source resistance")
    c.voltage_source("Vs", "s", "0")
    c.resistor("Rs", "s", "p")
    c.resistor("RL", "out", "0")
    c.opamp("U1", plus="p", minus="out", out="out", gain="finite")
    params = opsym.opamp_parameters("generic CMOS")
    values = {"Vs": 0.5, "Rs": 1e6, "RL": 10e3}
    text = opsym.write_netlist(c, values, params={"U1": params}, grade="max")
    # Ib± = Ib ± Ios/2 (docs/conventions.md), Vos and A from the set at grade max
    vos, ib, ios = (params.value(k, "max") for k in ("vos", "ib", "ios"))
    full = {**values, "U1.Vos": vos, "U1.Ib+": ib + ios / 2, "U1.Ib-": ib - ios / 2,
            "U1.A": params.value("a", "max")}  # fmt: skip
    assert f"DC {ib + ios / 2!r}" in text
    v = _op(ngspice, text.replace(".op\n", "\n".join(_OP) + "\n"))
    assert v["out"] == pytest.approx(_opsym_output(c, "out", full), rel=REL)


def test_single_pole_stage_ac(ngspice):
    c = opsym.Circuit("single-pole inverting stage")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.capacitor("C2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", gain="pole")
    values = {"Vin": 0, "R1": 4.7e3, "R2": 47e3, "C2": 150e-12, "U1.A0": 1.2e5,
              "U1.GBW": 3e6}  # fmt: skip
    control = [".control", "set numdgt=17", "set wr_singlescale", "set wr_vecnames",
               "ac dec 4 10 10meg", "wrdata ac.txt real(v(out)) imag(v(out))", "quit",
               ".endc"]  # fmt: skip
    text = opsym.write_netlist(c, values, signal="Vin", commands=control)
    _, files = ngspice.run_batch(text, read=("ac.txt",))
    rows = np.array([[float(x) for x in ln.split()] for ln in files["ac.txt"].splitlines()[1:]])
    f, h_spice = rows[:, 0], rows[:, 1] + 1j * rows[:, 2]
    h = c.analyze("out", domain="s").subs(values).coefficient("Vin")
    fn = sp.lambdify(opsym.s, h, "numpy")
    h_opsym = fn(2j * math.pi * f)
    assert len(f) == 25
    np.testing.assert_allclose(h_spice, h_opsym, rtol=REL)
    # DC end [pub: inverting gain with finite A0]: -(R2/R1)/(1 + (1 + R2/R1)/A0)
    assert abs(h_opsym[0]) == pytest.approx(10 / (1 + 11 / 1.2e5), rel=1e-4)


def test_a_netlist_read_back_gives_the_same_numbers():
    """write_netlist → read_netlist: E sources become op-amps, error sources plain sources."""
    c = opsym.Circuit("inverting")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", gain="finite")
    values = {"Vin": 0.1, "R1": 1e3, "R2": 1e4, "U1.A": 1e5, "U1.Vos": 1e-3,
              "U1.Ib+": 1e-9, "U1.Ib-": 2e-9}  # fmt: skip
    d = opsym.read_netlist(opsym.write_netlist(c, values), output="out")
    back = float(d.analyze().subs(d.values).expression)
    assert back == pytest.approx(_opsym_output(c, "out", values), rel=1e-15)


@pytest.mark.parametrize(
    ("stage", "source"),
    [("inverting_pole", "Vin"), ("transimpedance", "Iin"), ("two_stage_filter", "Vin")],
)
def test_the_exported_netlist_matches_the_reference_runner(ngspice, stage, source):
    """The stages of tests/test_spice_ac.py: opsym's netlist and the test's own agree in ngspice.

    The two netlists are written independently (the reference builds a pole from a
    VCCS into an RC; the exporter from a VCVS, R and C and a buffer).
    """
    import circuits_ac
    import spice_ac

    desc = getattr(circuits_ac, stage)()
    c, values = circuits_ac.to_circuit(desc, title=stage)
    f_ref, h_ref = spice_ac.ac(desc, source, "out", 10.0, 1e7, points_per_decade=5)
    sources = {e.name: 0.0 for e in c.elements if e.name[0] in "VI" and e.name not in values}
    control = [".control", "set numdgt=17", "set wr_singlescale", "set wr_vecnames",
               "ac dec 5 10 1e7", "wrdata ac.txt real(v(out)) imag(v(out))", "quit",
               ".endc"]  # fmt: skip
    text = opsym.write_netlist(c, {**values, **sources}, signal=source, commands=control)
    _, files = ngspice.run_batch(text, read=("ac.txt",))
    rows = np.array([[float(x) for x in ln.split()] for ln in files["ac.txt"].splitlines()[1:]])
    np.testing.assert_allclose(rows[:, 0], f_ref, rtol=1e-12)
    np.testing.assert_allclose(rows[:, 1] + 1j * rows[:, 2], h_ref, rtol=REL)


def test_command_line_export_of_an_example_design(ngspice, tmp_path, capsys):
    """``opsym export`` of opsym/examples/inverting-bias-compensation.toml, run in ngspice."""
    from pathlib import Path

    from opsym.cli import main

    toml = Path(__file__).resolve().parents[1] / "opsym/examples/inverting-bias-compensation.toml"
    out = tmp_path / "stage.cir"
    assert main(["export", str(toml), "--netlist", str(out)]) == 0
    assert "stage.cir: written" in capsys.readouterr().out
    design = opsym.load_design(toml)
    p = design.opamps["U1"]
    vos, ib, ios = (p.value(k, "typical") for k in ("vos", "ib", "ios"))
    values = {**design.values, "U1.Vos": vos, "U1.Ib+": ib + ios / 2, "U1.Ib-": ib - ios / 2,
              **p.values_for("U1", "typical")}  # fmt: skip
    expected = float(design.circuit.analyze("out").subs(values).expression)  # Ib+, Ib-
    text = out.read_text(encoding="utf-8").replace(".op\n", "\n".join(_OP) + "\n")
    assert _op(ngspice, text)["out"] == pytest.approx(expected, rel=REL)


def test_names_spice_would_confuse_are_kept_apart():
    """SPICE ignores case and reads a card by its first letter; opsym does neither."""
    c = opsym.Circuit("names")
    c.voltage_source("Sig", "in+", "0")
    c.resistor("Rtop", "in+", "A")
    c.resistor("Z1", "A", "a")  # a resistor not named R…, between nodes A and a
    c.resistor("Rbot", "a", "0")
    values = {"Sig": 1.0, "Rtop": 1e3, "Z1": 2e3, "Rbot": 3e3}
    text = opsym.write_netlist(c, values)
    assert "V_Sig in_ 0" in text and "R_Z1 A a_ 2000.0" in text
    d = opsym.read_netlist(text, output="a_")
    # divider [pub]: V(a) = Rbot/(Rtop + Z1 + Rbot)
    assert d.analyze().subs(d.values).coefficient("V_Sig") == sp.Rational(1, 2)
