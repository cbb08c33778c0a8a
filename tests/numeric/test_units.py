"""SI notation in and out, dB and fractions (opsym.numeric.units)."""

import math

import pytest

from opsym import OpsymError, ValueSyntaxError
from opsym.numeric.units import (
    db_to_ratio,
    format_si,
    parse_fraction,
    parse_quantity,
    ratio_to_db,
)
from opsym.values import parse_value


@pytest.mark.parametrize(
    ("text", "unit", "want"),
    [
        ("10k", None, 1e4),
        ("4.7n", None, 4.7e-9),
        ("25u", "V", 25e-6),
        ("25 µV", "V", 25e-6),
        ("1.5 MΩ", "Ω", 1.5e6),
        ("1.5 Mohm", "Ω", 1.5e6),
        ("100 nA", "A", 100e-9),
        ("1m", None, 1e-3),  # SI: m is milli, M is mega
        ("1M", None, 1e6),
        (" -3.3 V ", "V", -3.3),
        (2.5, "V", 2.5),
    ],
)
def test_parse_quantity(text, unit, want):
    # Source: BIPM SI Brochure, 9th ed. (2019), §3 table 7, SI prefixes [pub]
    assert parse_quantity(text, unit) == pytest.approx(want, rel=1e-12)


@pytest.mark.parametrize("bad", ["abc", "1__import__('os')", "10 k k", "", "nan", "inf", True])
def test_parse_quantity_rejects(bad):
    with pytest.raises(ValueSyntaxError) as err:
        parse_quantity(bad, "Ω", where="R1")
    assert "R1" in str(err.value)
    assert isinstance(err.value, OpsymError) and isinstance(err.value, ValueError)


def test_parse_quantity_wrong_unit_names_field_and_unit():
    with pytest.raises(ValueSyntaxError, match=r"U1 Ib: '3 mV' is in V, expected amperes"):
        parse_quantity("3 mV", "A", where="U1 Ib")


def test_format_si_round_trip():
    for x, unit in [(152.587890625e-6, "V"), (9.09e3, "Ω"), (2e-12, "A"), (-0.0101, "V")]:
        text = format_si(x, unit, digits=6)
        assert parse_quantity(text, unit) == pytest.approx(x, rel=1e-5)
    assert format_si(152.587890625e-6, "V") == "152.6 µV"
    assert format_si(0.0, "V") == "0 V"
    assert format_si(math.inf, "V") == "∞"


def test_fraction_and_db():
    assert parse_fraction("1%") == pytest.approx(0.01)
    assert parse_fraction("0.1 %") == pytest.approx(0.001)
    assert parse_fraction("25ppm") == pytest.approx(25e-6)
    # 20·log10 for voltage ratios; 90 dB is 31 623 V/V [trade] common practice
    assert db_to_ratio(90) == pytest.approx(31622.776601683792, rel=1e-12)
    assert ratio_to_db(db_to_ratio(68.04)) == pytest.approx(68.04, rel=1e-12)


@pytest.mark.parametrize(
    ("text", "unit", "want"),
    [("4k7", "Ω", 4700.0), ("2R2", "Ω", 2.2), ("100R", None, 100.0), ("5 µV/°C", None, 5e-6)],
)
def test_quantities_read_the_same_forms_as_design_files(text, unit, want):
    # The trade's R-notation (4k7 = 4.7 kΩ) [trade]: budgets and design files share one syntax.
    assert parse_quantity(text, unit) == pytest.approx(want, rel=1e-15)
    assert float(parse_value(text, where="x")) == pytest.approx(want, rel=1e-15)
