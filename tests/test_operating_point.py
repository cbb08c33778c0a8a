"""The nominal operating point: node voltages against hand analysis, rails and warnings.

Each expected voltage is derived beside it from KCL with an ideal op-amp (the two
inputs at one voltage, no current into them) [derived]. Circuits and values are invented.
"""

from __future__ import annotations

from fractions import Fraction

import pytest
from designs import OLD_BRIDGE

import opsym
from opsym.analyses.operating import Rails, operating_point
from opsym.errors import DesignFileError, InvalidValueError
from opsym.io.designfile import parse_design
from opsym.io.writer import dump_design
from opsym.numeric.params import OPAMP_SETS, OpAmpParams
from opsym.study.design import rails_of, run_design


def test_inverting_stage_output_is_minus_r2_over_r1_times_vin():
    # Inverting stage [derived, KCL at n with V(n) = V(+) = 0]: Vin/R1 + Vout/R2 = 0,
    # so Vout = −R2/R1·Vin = −(47k/10k)·0.3 V = −1.41 V exactly.
    c = opsym.Circuit("inverting")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out")
    op = operating_point(c, {"R1": "10k", "R2": "47k", "Vin": "0.3"})
    assert op.nodes["out"] == float(-Fraction(47, 10) * Fraction(3, 10))
    assert op.nodes["n"] == 0.0  # the virtual ground
    (u1,) = op.opamps
    assert u1.output == op.nodes["out"] and u1.common_mode == 0.0
    assert op.warnings == ()  # no rails given: nothing to check
    assert op.lines()[1].endswith("no rails given, not checked")


def test_difference_amplifier_common_mode_is_v2_r4_over_r3_plus_r4():
    # Difference amplifier [derived, KCL at p]: no current into +, so V(p) is the
    # divider V2·R4/(R3 + R4); V(n) = V(p), so the input common mode (V(+) + V(−))/2
    # is V2·R4/(R3 + R4) = 2.51·200k/202k V. The output is (R2/R1)·(V2 − V1) when
    # R2/R1 = R4/R3: 100·(2.51 − 2.5) = 1 V.
    c = opsym.Circuit("difference")
    c.voltage_source("V1", "a", "0", value="2.5")
    c.voltage_source("V2", "b", "0", value="2.51")
    c.resistor("R1", "a", "n", value="2k")
    c.resistor("R2", "n", "out", value="200k")
    c.resistor("R3", "b", "p", value="2k")
    c.resistor("R4", "p", "0", value="200k")
    c.opamp("U1", plus="p", minus="n", out="out")
    op = operating_point(c)
    (u1,) = op.opamps
    assert u1.common_mode == pytest.approx(2.51 * 200e3 / 202e3, rel=1e-15)
    assert op.nodes["out"] == pytest.approx(1.0, rel=1e-13)


def test_finite_gain_is_used_when_it_has_a_number():
    # Follower with gain A [derived]: Vout = A/(1 + A)·Vin = 0.999·1 V for A = 999.
    c = opsym.Circuit("follower")
    c.voltage_source("Vin", "p", "0", value=1)
    c.opamp("U1", plus="p", minus="out", out="out", gain="finite")
    assert operating_point(c, {"U1.A": 999}).nodes["out"] == pytest.approx(0.999, rel=1e-15)
    op = operating_point(c)  # no number for A: taken as ideal, and said so
    assert op.nodes["out"] == 1.0 and op.ideal == ("U1",)


def test_rails_warn_on_output_and_common_mode():
    c = opsym.Circuit("follower")
    c.voltage_source("Vin", "p", "0", value="4.9")
    c.opamp("U1", plus="p", minus="out", out="out")
    # Output 4.9 V against 0 V/5 V rails with 0.2 V swing headroom: highest 4.8 V.
    (w,) = operating_point(c, rails={"U1": Rails(0, 5, swing=0.2)}).warnings
    assert w.startswith("U1 output 4.9 V is outside its output range 200 mV to 4.8 V")
    both = operating_point(c, rails={"U1": Rails(0, 5, swing=0.2, common_mode=1)}).warnings
    assert len(both) == 2 and "input common mode 4.9 V" in both[1]
    assert operating_point(c, rails={"U1": Rails(-15, 15, 1.5, 2)}).warnings == ()


def test_missing_values_are_named():
    c = opsym.Circuit("inverting")
    c.voltage_source("Vin", "in", "0", value=1)
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out", value="1k")
    c.opamp("U1", plus="0", minus="n", out="out")
    with pytest.raises(InvalidValueError, match="R1 needs a number"):
        operating_point(c)




def test_bridge_with_t_network_to_ground_sits_far_outside_its_rails():
    # The shipped bridge example's old values. Balanced bridge [derived]: V(n) = V(ref)
    # = 1.25 V and no current in R4, so V(t) = 1.25 V and R5 carries V(t)/R6:
    # V(out) = 1.25·(1 + R5/R6) = 126.25 V with an ideal op-amp. The set's typical gain
    # (5e6) against the noise gain 1 + (R4 + R5 + R4·R5/R6)/(Rg‖Rc) ≈ 5.8e4 lowers it by
    # about NG/A ≈ 1.2 % (first-order gain error −1/(A·β), docs/conventions.md).
    study = run_design(parse_design(OLD_BRIDGE))
    op = study.operating
    assert op.nodes["out"] == pytest.approx(126.25 * (1 - 58287 / 5e6), rel=2e-4)
    (warning,) = op.warnings  # the output; the inputs sit at 1.25 V, inside ±13.5 V
    assert warning.startswith("U1 output 124.8 V is outside its output range -13.8 V to 13.8 V")
    assert "(rails -15 V and 15 V, 1.2 V headroom)" in warning


def test_rails_in_design_files_override_the_set_and_round_trip():
    text = OLD_BRIDGE.replace('output = "out"', 'output = "out"\nrails = ["-200 V", "200 V"]')
    d = parse_design(text)
    (rails,) = rails_of(d).values()
    assert (rails.negative, rails.positive, rails.swing) == (-200.0, 200.0, 1.2)
    assert run_design(d).operating.warnings == ()  # 126 V fits ±198.8 V
    own = text.replace('Vcm = "1.25 V"', 'Vcm = "1.25 V"\nrails = ["0", "5 V"]')
    d = parse_design(own)
    assert rails_of(d)["U1"].positive == 5.0  # the op-amp's own rails win
    again = parse_design(dump_design(d))
    assert again.rails == d.rails and again.supply == d.supply


@pytest.mark.parametrize(
    "change, message",
    [
        (('Vcm = "1.25 V"', 'Vcm = "1.25 V"\nrails = ["5 V", "0"]'), "negative first"),
        (('Vcm = "1.25 V"', 'Vcm = "1.25 V"\nrails = "15 V"'), "the negative and the positive"),
        (('Vcm = "1.25 V"', 'Vcm = "1.25 V"\nrail = ["0", "5"]'), "unknown key 'rail'"),
        (('output = "out"', 'output = "out"\nsupply = ["0", "5"]'), "unknown key 'supply'"),
        (('Vcm = "1.25 V"', 'Vcm = "1.25 V"\nrails = ["-1 V", "1 V"]'), "no range"),
    ],
)
def test_bad_rails_are_file_errors(change, message):
    with pytest.raises((DesignFileError, opsym.OpsymError), match=message):
        run_design(parse_design(OLD_BRIDGE.replace(*change)))


def test_shipped_sets_have_rails_and_sets_check_them():
    for p in OPAMP_SETS.values():  # invented generic values, every set has them
        assert p.rail_neg is not None and p.rail_neg < p.rail_pos
        assert p.swing_headroom is not None and p.cm_headroom is not None
    with pytest.raises(opsym.OpsymError, match="give both rail_neg and rail_pos"):
        OpAmpParams("mine", rail_neg=-5.0)
    p = OpAmpParams.from_mapping({"name": "mine", "rail_neg": "-5 V", "rail_pos": "5 V",
                                  "swing_headroom": "100 mV"})  # fmt: skip
    assert (p.rail_neg, p.rail_pos, p.swing_headroom) == (-5.0, 5.0, 0.1)
