"""Error budgets (opsym.study.budget) and temperature sweeps (opsym.study.temperature)."""

import math

import pytest
import sympy as sp

import opsym
from opsym.errors import BudgetError
from opsym.numeric.adc import ADC
from opsym.numeric.params import OpAmpParams, ResistorParams, opamp_parameters
from opsym.study.budget import error_budget
from opsym.study.temperature import budget_over_temperature


def _follower_with_rs():
    c = opsym.Circuit("follower")
    c.voltage_source("Vs", "s", "0")
    c.resistor("Rs", "s", "p")
    c.opamp("U1", plus="p", minus="out", out="out", cmrr=True, psrr=True)
    return c.analyze("out")


def test_worst_case_and_rss_sums():
    # Errors 100, 50, 30, 40 µV: worst case 220 µV, RSS 122.47 µV.
    # Source: JCGM 100:2008 (GUM) §5.1.2 eq. (10) for the RSS of uncorrelated terms [pub];
    # RSS of datasheet maxima is common practice [trade].
    values = {
        "Rs": 1000, "U1.Vos": 100e-6, "U1.CMRR": 1, "U1.Vcm": 50e-6,
        "U1.PSRR": 1, "U1.dVs": 30e-6, "U1.Ib": 40e-9, "U1.Ios": 0,
    }  # fmt: skip
    b = error_budget(_follower_with_rs(), values)
    assert b.worst_case == pytest.approx(220e-6, rel=1e-9)
    assert b.rss == pytest.approx(122.47e-6, rel=1e-4)  # GUM §5.1.2 eq. (10)
    assert b.rss == pytest.approx(math.sqrt(100**2 + 50**2 + 30**2 + 40**2) * 1e-6, rel=1e-9)
    assert [r.source for r in b.rows][:4] == ["U1.Vos", "U1.Vcm", "U1.Ib", "U1.dVs"]
    # Ib flows into the + pin through Rs: a signed-known -40 µV (Ib+ positive into the pin)
    ib = b.row("U1.Ib")
    assert ib.signed and ib.output == pytest.approx(-40e-6, rel=1e-9)
    assert not b.row("U1.Vos").signed
    assert sum(r.share for r in b.rows) == pytest.approx(1.0)


def test_cmrr_error_referred_to_input():
    # Non-inverting G = 10, Vcm = 1 V, CMRR = 90 dB → 31.6 µV RTI, 316 µV RTO.
    # Source: reference-checks §12 [derived]
    c = opsym.Circuit("G = 10")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0", value=1000)
    c.resistor("R2", "n", "out", value=9000)
    c.opamp("U1", plus="p", minus="n", out="out", bias=False, offset=False, cmrr=True)
    params = OpAmpParams("cmrr only", cmrr_typ_db=90, cmrr_min_db=90)
    b = error_budget(c.analyze("out"), {"U1.Vcm": 1.0}, {"U1": params})
    row = b.row("U1.Vcm")
    assert row.output == pytest.approx(316.2e-6, rel=1e-4)
    assert row.input == pytest.approx(31.62e-6, rel=1e-4)
    # The same case with Vcm derived from the signal: the + pin sits at Vin = 1 V.
    derived = error_budget(c.analyze("out"), {"Vin": 1.0}, {"U1": params})
    assert derived.row("U1.Vcm").value == pytest.approx(1.0, rel=1e-12)
    assert derived.row("U1.Vcm").output == pytest.approx(316.2e-6, rel=1e-4)
    assert any("from the signal values" in n for n in derived.notes)


def test_common_mode_of_a_difference_stage_is_derived_from_its_signals():
    # Vcm at the pins = V2·R4/(R3 + R4) with ideal op-amp [derived: KCL, divider];
    # difference amplifier of reference-checks §8 (Sedra & Smith 6th ed., §2.4) [pub].
    c = opsym.Circuit("difference")
    c.voltage_source("V1", "a", "0")
    c.voltage_source("V2", "b", "0")
    c.resistor("R1", "a", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "b", "p")
    c.resistor("R4", "p", "0")
    c.opamp("U1", plus="p", minus="n", out="out", cmrr=True)
    res = c.analyze("out")
    R3, R4, V2 = c.symbol("R3"), c.symbol("R4"), c.symbol("V2")
    assert sp.simplify(res.common_mode("U1") - V2 * R4 / (R3 + R4)) == 0
    values = {"R1": "10k", "R2": "100k", "R3": "10k", "R4": "100k", "V1": 1.0, "V2": 1.01}
    b = error_budget(res, values, {"U1": opamp_parameters("generic precision bipolar")},
                     signal="V2")  # fmt: skip
    assert b.row("U1.Vcm").value == pytest.approx(1.01 * 100 / 110, rel=1e-12)


def test_adc_columns():
    # 1 mV into a 0–5 V 16-bit converter → 13.1 LSB = 200 ppm FS (LSB = FSR/2^N).
    # Source: reference-checks §16 [trade] common practice
    c = opsym.Circuit("buffer")
    c.voltage_source("Vin", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out", bias=False)
    b = error_budget(c.analyze("out"), {"U1.Vos": "1m"}, adc=ADC.unipolar(16, 5.0))
    row = b.row("U1.Vos")
    assert row.lsb == pytest.approx(13.1072, rel=1e-6)
    assert row.ppm == pytest.approx(200.0, rel=1e-12)
    assert "FSR/2^N" in b.to_markdown()


def test_inverting_bias_and_offset_numbers():
    # Vo = Vos·(1 + R2/R1) − Ios·R2 with Rp = R1‖R2; R1 = 10 k, R2 = 100 k, Ios = 10 nA → 1 mV.
    # Source: Eggleston, Basic Electronics for Scientists and Engineers, §6.4 eqs. 6.16–6.18
    # [pub]; Ios sign mapped to opsym's Ios = Ib+ − Ib-.
    c = opsym.Circuit("inverting")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n", value="10k")
    c.resistor("R2", "n", "out", value="100k")
    c.resistor("R3", "p", "0", value=sum([0]) + 100000 / 11)
    c.opamp("U1", plus="p", minus="n", out="out")
    p = OpAmpParams("t", ib_max=100e-9, ios_max=10e-9)
    b = error_budget(c.analyze("out"), {}, {"U1": p})
    assert b.row("U1.Ios").output == pytest.approx(1e-3, rel=1e-9)
    assert b.row("U1.Ib").output == pytest.approx(0.0, abs=1e-15)


def test_gain_rows_and_temperature_sweep():
    c = opsym.Circuit("non-inverting")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", gain="finite")
    res = c.analyze("out")
    params = OpAmpParams("t", vos_max=1e-3, a_typ=2e4, a_min=2e4, drift_max=10e-6)
    values = {"R1": 1e3, "R2": 9e3, "Vin": 1.0}
    b = error_budget(res, values, {"U1": params}, resistors=ResistorParams(0.01, 100e-6))
    # Finite gain: G = A/(1 + A·beta), A = 20 000, ideal 10 → error 0.04998 %.
    # Source: reference-checks §5, Franco ch. 1 [mem]
    gain_row = b.row("gain: open-loop")
    assert gain_row.output / 10.0 == pytest.approx(-0.04998e-2, rel=1e-3)
    # Tolerance: exact corners +1.818 % (the larger side) of G = 10 at Vin = 1 V
    # Source: reference-checks §11 [derived]
    # with A = 20 000 the corner deviation is of G(A) = A(R1 + R2)/(A·R1 + R1 + R2) [derived]
    g = res.coefficient("Vin").subs({c.symbol("U1.A"): 2e4})
    r1, r2 = c.symbol("R1"), c.symbol("R2")
    dev = float(g.subs({r1: 990, r2: 9090}) - g.subs({r1: 1e3, r2: 9e3}))
    assert b.row("gain: tolerance").output == pytest.approx(dev, rel=1e-9)
    assert dev == pytest.approx(10 * 0.0181818, rel=2e-3)  # ≈ ideal +1.818 % (§11)
    sweep = budget_over_temperature(
        res, values, {"U1": params}, resistors=ResistorParams(0.01, 100e-6), step=25
    )
    assert sweep.temperatures[0] == -40 and 25.0 in sweep.temperatures
    assert sweep.worst_temperature == -40.0  # |T − 25| is largest at the cold end
    cold = sweep.budgets[0]
    assert cold.row("U1.Vos").magnitude == pytest.approx(
        (1e-3 + 10e-6 * 65)
        * float(
            res.coefficient("U1.Vos").subs(
                {c.symbol("R1"): 1e3, c.symbol("R2"): 9e3, c.symbol("U1.A"): 2e4}
            )
        ),
        rel=1e-9,
    )
    assert "worst" in sweep.to_text()


def test_a_single_pole_op_amp_has_its_open_loop_row_at_dc():
    """The DC budget of gain="pole" takes A0 as the open-loop gain, like gain="finite"."""
    c = opsym.Circuit("non-inverting, single pole")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", gain="pole")
    res = c.analyze("out", domain="s")
    params = OpAmpParams("t", vos_max=1e-3, a_typ=2e4, a_min=2e4, gbw_typ=1e6)
    b = error_budget(res, {"R1": 1e3, "R2": 9e3, "Vin": 1.0}, {"U1": params})
    # G(A0) − G(∞) = 10·(1/(1 + 10/A0) − 1), A0 = 20 000: −0.04998 % of 10 V
    # Source: reference-checks §5, Franco ch. 1 [mem]
    assert b.row("gain: open-loop").output == pytest.approx(10 * (1 / (1 + 10 / 2e4) - 1))


def test_fet_transimpedance_worst_at_hot_end():
    # Ib doubles every 10 °C [trade]: 3 pA → 192 pA at 85 °C; Rf = 10 MΩ → 1.92 mV. [derived]
    c = opsym.Circuit("TIA")
    c.current_source("Iin", "0", "n")
    c.resistor("Rf", "n", "out", value="10M")
    c.opamp("U1", plus="0", minus="n", out="out")
    p = opamp_parameters("generic JFET").replace(ib_max="3p", ios_max=0, vos_max=0, drift_max=0)
    sweep = budget_over_temperature(res := c.analyze("out"), {}, {"U1": p}, low=-40, high=85)
    assert sweep.worst_temperature == 85.0
    assert sweep.worst_budget.row("U1.Ib").output == pytest.approx(192e-12 * 10e6, rel=1e-9)
    assert error_budget(res, {}, {"U1": p}).row("U1.Ib").output == pytest.approx(30e-6)


def test_budget_errors_name_the_field():
    res = _follower_with_rs()
    with pytest.raises(BudgetError, match=r"U1\.Vcm"):
        error_budget(res, {"Rs": 1}, {"U1": opamp_parameters("generic CMOS")})
    with pytest.raises(BudgetError, match="Rx"):
        error_budget(res, {"Rx": 1})
    with pytest.raises(BudgetError, match="grade"):
        error_budget(res, {"Rs": 1}, grade="worst")
    with pytest.raises(BudgetError, match=r"U1\.Vos"):
        error_budget(res, {"Rs": 1, "U1.Vcm": 0, "U1.dVs": 0, "U1.CMRR": 1, "U1.PSRR": 1})


def test_outputs_render():
    values = {"Rs": 1000, "U1.Vcm": 0.1, "U1.dVs": 0.2}
    b = error_budget(
        _follower_with_rs(), values, {"U1": opamp_parameters("zero-drift CMOS")}, full_scale=10.0
    )
    md, tex, txt = b.to_markdown(), b.to_latex(), b.to_text()
    assert md.count("\n|") >= len(b.rows) + 2 and "GUM" in md
    assert r"\toprule" in tex and r"\bottomrule" in tex and "±" not in tex
    assert "worst case" in txt and "ppm FS" in txt
