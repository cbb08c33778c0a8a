"""ADC units, parameter sets and the bias-current temperature law."""

import pytest

from opsym import UnknownNameError
from opsym.errors import BudgetError
from opsym.numeric.adc import ADC
from opsym.numeric.params import (
    OPAMP_SETS,
    BiasLaw,
    OpAmpParams,
    ResistorParams,
    opamp_parameters,
    resistor_parameters,
)


def test_adc_units():
    # Source: reference-checks §16, LSB = FSR/2^N [trade] common practice
    adc = ADC.unipolar(16, 10.0)
    assert adc.lsb == pytest.approx(152.59e-6, rel=1e-4)
    assert adc.ppm(adc.lsb) == pytest.approx(15.26, rel=1e-3)
    five = ADC.unipolar(16, "5 V")
    assert five.lsbs(1e-3) == pytest.approx(13.1, abs=0.05)
    assert five.ppm(1e-3) == pytest.approx(200.0, rel=1e-12)
    bip = ADC.bipolar(12, 2.5)
    assert bip.fsr == 5.0 and bip.is_bipolar and "FSR/2^N" in bip.describe()


@pytest.mark.parametrize("bits", [0, 33, 1.5, True])
def test_adc_rejects_bits(bits):
    with pytest.raises(BudgetError, match="bits"):
        ADC(bits, 0.0, 1.0)


def test_bias_current_doubling_rule():
    # Source: reference-checks §17 [trade]: Ib doubles every 10 °C; 3 pA at 25 °C → 192 pA at 85 °C
    p = OpAmpParams("fet", ib_max=3e-12, bias_law=BiasLaw("doubling", 10.0))
    assert p.ib("max", 85.0) == pytest.approx(192e-12, rel=1e-12)
    assert p.ib("max", 15.0) == pytest.approx(1.5e-12, rel=1e-12)
    # bipolar inputs change slowly: the constant law [trade]
    assert opamp_parameters("precision bipolar").bias_law.factor(85.0) == 1.0
    assert BiasLaw("doubling", 5.0).factor(35.0) == pytest.approx(4.0)


def test_vos_drift_adds_magnitude():
    p = opamp_parameters("generic precision bipolar")
    assert p.vos("max", -40.0) == pytest.approx(25e-6 + 0.6e-6 * 65, rel=1e-12)
    assert p.vos("typical", 85.0) == pytest.approx(10e-6 + 0.1e-6 * 60, rel=1e-12)
    assert p.cmrr("max") == pytest.approx(1e6, rel=1e-12)


def test_sets_are_generic_and_listed_in_errors():
    assert all(name.startswith("generic ") for name in OPAMP_SETS)
    with pytest.raises(UnknownNameError) as err:
        opamp_parameters("fastest")
    assert "generic JFET" in str(err.value)


def test_from_mapping_reads_text_and_rejects_unknown_fields():
    p = OpAmpParams.from_mapping(
        {"name": "mine", "vos_max": "25 µV", "ib_max": "-2 nA", "cmrr_min_db": "100 dB",
         "bias_law": {"kind": "doubling", "doubling_c": 8}}
    )  # fmt: skip
    assert p.vos_max == pytest.approx(25e-6) and p.ib_max == pytest.approx(-2e-9)
    assert p.cmrr_min_db == 100 and p.bias_law.doubling_c == 8
    with pytest.raises(BudgetError, match="vos_mx"):
        OpAmpParams.from_mapping({"name": "x", "vos_mx": 1})
    with pytest.raises(BudgetError, match="vos_max"):
        OpAmpParams("x", vos_max=-1.0)
    with pytest.raises(BudgetError, match="bias law"):
        BiasLaw("tripling")


def test_resistor_params():
    r = ResistorParams.from_text("0.1%", "25 ppm/°C")
    assert r.tolerance == pytest.approx(1e-3) and r.tcr == pytest.approx(25e-6)
    assert r.spread(-40.0) == pytest.approx(1e-3 + 25e-6 * 65)
    assert resistor_parameters("thick-film 1%").tolerance == 0.01
    with pytest.raises(BudgetError, match="tolerance"):
        ResistorParams(1.5)
