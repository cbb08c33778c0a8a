"""Resistor mismatch in budgets: rows for every valued non-signal source, the network CMRR,
and budgets of long cascades (opsym.study._plan, opsym.numeric._mismatch)."""

import itertools
import math

import pytest

import opsym
from opsym.numeric.params import OpAmpParams, ResistorParams
from opsym.study.budget import error_budget
from opsym.study.temperature import budget_over_temperature
from opsym.study.tolerance import tolerance_analysis

ONE_PERCENT = ResistorParams(0.01, 0.0)
# An invented op-amp with only an offset: the mismatch rows stand out.
OFFSET_ONLY = OpAmpParams("offset only", vos_typ=10e-6, vos_max=25e-6, ib_typ=0, ib_max=0,
                          ios_typ=0, ios_max=0)  # fmt: skip


def _acm(r1, r2, r3, r4):
    # Difference-amplifier common-mode gain (R1·R4 − R2·R3)/(R1·(R3 + R4)).
    # Source: Sedra & Smith, Microelectronic Circuits 6th ed., §2.4 (reference case 8) [pub].
    return (r1 * r4 - r2 * r3) / (r1 * (r3 + r4))


def _ad(r1, r2, r3, r4):
    # Gain from V2 − V1 with V1 = Vcm: R4/(R3 + R4)·(1 + R2/R1) (same source, case 8).
    return r4 / (r3 + r4) * (1 + r2 / r1)


def _hand_corners(f, nominal, t):
    """f at every ±t corner, written here without opsym."""
    return [f(*(x * (1 + s * t) for x, s in zip(nominal, signs, strict=True)))
            for signs in itertools.product((-1, 1), repeat=len(nominal))]  # fmt: skip


def _difference_amp_with_common_mode():
    # Case 8 topology: V1 –R1– N; N –R2– OUT; V2 –R3– P; P –R4– ground, with
    # V1 = Vcm and V2 = Vcm + Vd (the differential source is the signal).
    c = opsym.Circuit("difference amplifier at a large common mode")
    c.voltage_source("Vcm", "a", "0")
    c.voltage_source("Vd", "b", "a")
    c.resistor("R1", "a", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "b", "p")
    c.resistor("R4", "p", "0")
    c.opamp("U1", plus="p", minus="n", out="out", bias=False)
    return c.analyze("out")


def test_common_mode_gets_its_mismatch_row_and_matches_corners_and_hand():
    res = _difference_amp_with_common_mode()
    nominal = (10e3, 100e3, 10e3, 100e3)  # K = 10, 1 % parts
    vcm, t, k = 10.0, 0.01, 10.0
    values = dict(zip(("R1", "R2", "R3", "R4"), nominal, strict=True))
    values.update(Vcm=vcm, Vd=0.01)
    b = error_budget(res, values, {"U1": OFFSET_ONLY}, signal="Vd", resistors=ONE_PERCENT)

    row = b.row("tolerance: Vcm")
    assert row.label == "common-mode error from resistor mismatch"
    # Independent: the exact worst corner of Acm (Sedra & Smith §2.4 formula) times Vcm.
    hand = max(abs(a) for a in _hand_corners(_acm, nominal, t)) * vcm
    assert row.magnitude == pytest.approx(hand, rel=1e-9)
    # Scale: first order 4t·K/(1 + K)·Vcm (each resistor moves Acm by t·K/(1 + K)) [derived].
    assert row.magnitude == pytest.approx(4 * t * k / (1 + k) * vcm, rel=0.03)
    # The corner tolerance study of the same coefficient agrees.
    study = tolerance_analysis(res, values, ONE_PERCENT, of="Vcm", samples=None)
    assert row.magnitude == pytest.approx(max(-study.low, study.high) * vcm, rel=1e-9)
    # It is in the worst case, which is the sum of every row (JCGM 100 §5.1.2 [pub]).
    assert b.worst_case == pytest.approx(sum(r.magnitude for r in b.rows), rel=1e-12)
    assert b.worst_case > row.magnitude > 100 * b.row("U1.Vos").magnitude
    # The signal's own tolerance row is still there: |ΔG|·|Vd| at the worst corner.
    gain_row = b.row("gain: tolerance")
    dev = max(abs(g - _ad(*nominal)) for g in _hand_corners(_ad, nominal, t))
    assert gain_row.magnitude == pytest.approx(dev * 0.01, rel=1e-9)


def test_network_cmrr_of_reference_case_8():
    # R1 = R3 = 2 kΩ, R2 = R4 = 200 kΩ, 1 % parts: worst Acm ≈ 0.04 V/V, CMRR ≈ 68 dB,
    # exact corner 68.04 dB; ≈ (1 + K)/(4t). Source: Sedra & Smith 6th ed., §2.4 and
    # exercise 2.15 (reference case 8) [pub].
    res = _difference_amp_with_common_mode()
    values = {"R1": 2e3, "R2": 200e3, "R3": 2e3, "R4": 200e3, "Vcm": 1.0, "Vd": 0.01}
    b = error_budget(res, values, {"U1": OFFSET_ONLY}, signal="Vd", resistors=ONE_PERCENT)
    assert b.cmrr_db == pytest.approx(68.04, abs=0.005)
    assert b.cmrr_db == pytest.approx(20 * math.log10(101 / 0.04), abs=0.01)
    assert b.row("tolerance: Vcm").coefficient == pytest.approx(0.04, rel=0.02)
    assert any("network CMRR" in n and "68.0 dB" in n for n in b.notes)
    assert "network CMRR" in b.to_text()


def test_two_inputs_give_a_row_each_and_the_pair_its_cmrr():
    # The same network read from two grounded sources V1, V2 (case 8 as drawn): the
    # second input gets a "V1 × resistor tolerance" row; the pair has Ad = (g2 − g1)/2,
    # Acm = g1 + g2, whose worst corner ratio is again 68.04 dB (Sedra & Smith §2.4 [pub]).
    c = opsym.Circuit("difference amplifier, two inputs")
    c.voltage_source("V1", "a", "0")
    c.voltage_source("V2", "b", "0")
    c.resistor("R1", "a", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "b", "p")
    c.resistor("R4", "p", "0")
    c.opamp("U1", plus="p", minus="n", out="out", bias=False)
    nominal = (2e3, 200e3, 2e3, 200e3)
    values = dict(zip(("R1", "R2", "R3", "R4"), nominal, strict=True))
    values.update(V1=0.5, V2=0.5)
    b = error_budget(c.analyze("out"), values, {"U1": OFFSET_ONLY}, signal="V2",
                     resistors=ONE_PERCENT)  # fmt: skip
    row = b.row("tolerance: V1")
    assert row.label == "V1 × resistor tolerance"
    # |Δ(−R2/R1)|·V1 at the worst corner: K·((1 + t)/(1 − t) − 1)·V1 [derived].
    assert row.magnitude == pytest.approx(100 * (1.01 / 0.99 - 1) * 0.5, rel=1e-9)

    def pair_ratio(r1, r2, r3, r4):
        g1, g2 = -r2 / r1, _ad(r1, r2, r3, r4)
        acm = abs(g1 + g2)
        return abs((g2 - g1) / 2) / acm if acm else math.inf

    hand = 20 * math.log10(min(_hand_corners(pair_ratio, nominal, 0.01)))
    assert b.cmrr_db == pytest.approx(hand, abs=1e-9)
    assert b.cmrr_db == pytest.approx(68.04, abs=0.01)


def test_a_source_without_value_or_without_tolerance_adds_no_row():
    res = _difference_amp_with_common_mode()
    values = {"R1": 2e3, "R2": 200e3, "R3": 2e3, "R4": 200e3, "Vd": 0.01}
    b = error_budget(res, values, {"U1": OFFSET_ONLY}, signal="Vd", resistors=ONE_PERCENT)
    assert "tolerance: Vcm" not in [r.source for r in b.rows]
    assert b.cmrr_db == pytest.approx(68.04, abs=0.005)  # a property of the network
    plain = error_budget(res, {**values, "Vcm": 10}, {"U1": OFFSET_ONLY}, signal="Vd")
    assert plain.cmrr_db is None and [r.source for r in plain.rows] == ["U1.Vos"]


def test_mismatch_row_widens_with_tcr_over_temperature():
    # Spread t + TCR·|T − 25 °C| (docs/budget.md rule, common practice [trade]).
    res = _difference_amp_with_common_mode()
    values = {"R1": 10e3, "R2": 100e3, "R3": 10e3, "R4": 100e3, "Vcm": 10, "Vd": 0.01}
    grade = ResistorParams(0.001, 50e-6)
    sweep = budget_over_temperature(res, values, {"U1": OFFSET_ONLY}, signal="Vd",
                                    resistors=grade, temperatures=[25, 85])  # fmt: skip
    at = dict(zip(sweep.temperatures, sweep.contribution("tolerance: Vcm"), strict=True))
    for temp, t in ((25, 0.001), (85, 0.001 + 50e-6 * 60)):
        hand = max(abs(a) for a in _hand_corners(_acm, (10e3, 100e3, 10e3, 100e3), t)) * 10
        assert at[temp] == pytest.approx(hand, rel=1e-9)


def _non_inverting_cascade(stages):
    c = opsym.Circuit(f"{stages} non-inverting stages")
    c.voltage_source("Vin", "s0", "0")
    for k in range(1, stages + 1):
        c.resistor(f"Ra{k}", f"n{k}", "0")
        c.resistor(f"Rb{k}", f"n{k}", f"s{k}")
        c.opamp(f"U{k}", plus=f"s{k - 1}", minus=f"n{k}", out=f"s{k}", gain="finite",
                bias=False)  # fmt: skip
    return c


def test_forty_stage_cascade_budget_completes_and_matches_hand_products():
    # Each stage: closed-loop gain with finite A, G = A/(1 + A·β), β = Ra/(Ra + Rb)
    # (Sedra & Smith §2.3, finite open-loop gain [mem]); Vos sits in series with the + pin,
    # so stage k's Vos reaches the output times G^(n − k + 1) (cascade of gains [derived]).
    n, ra, rb, a = 40, 10e3, 1e3, 1e6
    c = _non_inverting_cascade(n)
    values = {"Vin": 1e-3}
    for k in range(1, n + 1):
        values[f"Ra{k}"], values[f"Rb{k}"] = ra, rb
    amp = OFFSET_ONLY.replace(a_typ=a, a_min=a)
    b = error_budget(c.analyze(f"s{n}"), values, {f"U{k}": amp for k in range(1, n + 1)},
                     resistors=ResistorParams(0.001, 0.0))  # fmt: skip
    beta = ra / (ra + rb)
    g = a / (1 + a * beta)
    for k in (1, 20, 40):
        assert b.row(f"U{k}.Vos").coefficient == pytest.approx(g ** (n - k + 1), rel=1e-9)
    assert b.input_gain == pytest.approx(g**n, rel=1e-9)
    # Open-loop row: (G(A)^n − G(∞)^n)·Vin.
    assert b.row("gain: open-loop").output == pytest.approx(
        (g**n - (1 / beta) ** n) * 1e-3, rel=1e-6
    )
    # 80 parts: first-order bound Σ|∂G/∂R·R|·t, with per stage
    # ∂ln G/∂ln Rb = −∂ln G/∂ln Ra = (1 − β)·A·β/(1 + A·β) [derived: differentiate G].
    s = (1 - beta) * a * beta / (1 + a * beta)
    want = g**n * n * 2 * s * 0.001 * 1e-3
    assert b.row("gain: tolerance").magnitude == pytest.approx(want, rel=1e-9)
