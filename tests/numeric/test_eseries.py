"""Preferred values (opsym.numeric.eseries) against the IEC 60063 tables."""

import itertools
import math

import pytest
import sympy as sp

from opsym import UnknownNameError
from opsym.numeric.eseries import SERIES, choose_for_null, preferred_value, series_values

# Source: IEC 60063:2015 tables, as listed in reference-checks §15 [pub]
E24_REF = (
    "1.0 1.1 1.2 1.3 1.5 1.6 1.8 2.0 2.2 2.4 2.7 3.0 3.3 3.6 3.9 4.3 4.7 5.1 5.6 6.2 6.8 "
    "7.5 8.2 9.1"
)
E96_REF = (
    "1.00 1.02 1.05 1.07 1.10 1.13 1.15 1.18 1.21 1.24 1.27 1.30 1.33 1.37 1.40 1.43 "
    "1.47 1.50 1.54 1.58 1.62 1.65 1.69 1.74 1.78 1.82 1.87 1.91 1.96 2.00 2.05 2.10 2.15 2.21 "
    "2.26 2.32 2.37 2.43 2.49 2.55 2.61 2.67 2.74 2.80 2.87 2.94 3.01 3.09 3.16 3.24 3.32 3.40 "
    "3.48 3.57 3.65 3.74 3.83 3.92 4.02 4.12 4.22 4.32 4.42 4.53 4.64 4.75 4.87 4.99 5.11 5.23 "
    "5.36 5.49 5.62 5.76 5.90 6.04 6.19 6.34 6.49 6.65 6.81 6.98 7.15 7.32 7.50 7.68 7.87 8.06 "
    "8.25 8.45 8.66 8.87 9.09 9.31 9.53 9.76"
)


def _cents(values):
    return [round(v * 100) for v in values]


def test_e24_and_e96_tables_match_iec_60063():
    # Source: IEC 60063:2015 tables (reference-checks §15) [pub]
    assert _cents(SERIES["E24"]) == _cents(float(x) for x in E24_REF.split())
    assert _cents(SERIES["E96"]) == _cents(float(x) for x in E96_REF.split())


def test_tables_are_not_the_formula():
    # Source: IEC 60063:2015 [pub]: E24 is not round(10^(i/24)); E96 has no 9.88
    formula = [round(10 ** (i / 24), 1) for i in range(24)]
    assert _cents(SERIES["E24"]) != _cents(formula)
    assert 9.88 not in SERIES["E96"] and 9.88 in SERIES["E192"]


def test_e192_value_by_value():
    e192, e96 = _cents(SERIES["E192"]), _cents(SERIES["E96"])
    assert len(e192) == 192 and all(a < b for a, b in itertools.pairwise(e192))
    # Source: IEC 60063:2015 [pub]: every second E192 value is the E96 value
    assert e192[0::2] == e96
    # Odd values: round(100·10^(i/192)) except 9.20 (formula 9.19) — IEC 60063 [mem]
    deviations = [
        (i, v) for i, v in enumerate(e192) if i % 2 and v != round(100 * 10 ** (i / 192))
    ]
    assert deviations == [(185, 920)]


def test_subseries_structure():
    # Source: IEC 60063:2015 [pub]: E48 ⊂ E96 (every second), E12/E6/E3 ⊂ E24
    assert _cents(SERIES["E48"]) == _cents(SERIES["E96"])[0::2]
    assert _cents(SERIES["E12"]) == _cents(SERIES["E24"])[0::2]
    assert _cents(SERIES["E6"]) == _cents(SERIES["E24"])[0::4]
    assert _cents(SERIES["E3"]) == _cents(SERIES["E24"])[0::8]


@pytest.mark.parametrize(
    ("x", "series", "want"),
    [
        # Source: reference-checks §15, IEC 60063:2015 tables [pub], nearest by ratio
        (9090.9, "E24", 9100.0),
        (9090.9, "E96", 9090.0),
        (666.67, "E24", 680.0),
        (666.67, "E96", 665.0),
        # ratio-nearest vs linear-nearest differ at 9.545 kΩ (E24: 10 k vs 9.1 k)
        (9545.0, "E24", 10000.0),
        (9.19e3, "E192", 9200.0),
        (0.99, "E12", 1.0),
        (1.0e-12, "E6", 1.0e-12),
    ],
)
def test_preferred_value(x, series, want):
    assert preferred_value(x, series) == pytest.approx(want, rel=1e-12)


def test_ratio_rule_is_geometric_midpoint():
    below, above = math.sqrt(9.1 * 10) * (1 - 1e-9), math.sqrt(9.1 * 10) * (1 + 1e-9)
    assert preferred_value(below, "E24") == pytest.approx(9.1)
    assert preferred_value(above, "E24") == pytest.approx(10.0)


def test_series_values_and_errors():
    assert series_values("E3", 1e3, 1e4) == [1000.0, 2200.0, 4700.0, 10000.0]
    with pytest.raises(UnknownNameError, match="E96"):
        preferred_value(1.0, "E95")


def test_choose_for_null_with_residual():
    # Source: Eggleston §6.4 eqs. 6.16–6.18 [pub]: Rp = R1‖R2 nulls Ib; 9.0909 kΩ → E96 9.09 kΩ
    r1, r2, r3 = sp.symbols("R1 R2 R3", positive=True)
    ib = sp.Symbol("U1.Ib", real=True)

    class _Stub:  # the Result interface choose_for_null uses: coefficient(source)
        def coefficient(self, source):
            # inverting stage: Ib coefficient R2 - R3·(1 + R2/R1) [derived]
            return r2 - r3 * (1 + r2 / r1)

    pick = choose_for_null(
        sp.Eq(r3, r1 * r2 / (r1 + r2)), {"R1": "10k", "R2": "100k"}, "E96",
        result=_Stub(), source=ib, magnitude="100n",
    )  # fmt: skip
    assert pick.chosen == 9090.0
    assert pick.exact == pytest.approx(9090.909090909, rel=1e-9)
    # residual: (R2 - 9090·11)·Ib = 10 Ω·100 nA = 1 µV [derived]
    assert pick.residual_coefficient == pytest.approx(10.0, rel=1e-9)
    assert pick.residual == pytest.approx(1e-6, rel=1e-9)
