"""One value syntax everywhere: the same text gives the same number, or the same error,
through every public entry point that reads a value.

Sources for the expected numbers:

* SI prefixes, case-sensitive (``m`` milli, ``M`` mega, ``k`` kilo, ``µ``/``u`` micro):
  BIPM, *The International System of Units*, 9th ed. (2019), §3, table 7 [pub].
* ``meg`` = 1e6 and ``mil`` = 25.4e-6 (a thousandth of an inch): the scale factors of
  the SPICE3 user manual (T. Quarles et al., UC Berkeley, 1989), §2.2 [mem]: "T=1E12,
  G=1E9, MEG=1E6, K=1E3, MIL=25.4E-6, M=1E-3 ..." (cited from memory). opsym reads
  ``meg`` as SPICE does and refuses ``mil`` rather than misread it as milli.
* The R/k decimal-point notation (4k7 = 4.7 kΩ, 2R2 = 2.2 Ω, 100R = 100 Ω):
  IEC 60062:2016 §4, letter and digit code for resistance values [pub, from memory].
* dB as a voltage ratio, 10**(dB/20): IEC 60027-3 / ISO 80000-3 decibel for a
  root-power quantity [pub].
"""

from __future__ import annotations

import math
import textwrap
from collections.abc import Callable

import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import opsym
from opsym import (
    BudgetError,
    DesignFileError,
    OpAmpParams,
    ResistorParams,
    ValueRangeError,
    ValueSyntaxError,
)
from opsym.io.designfile import parse_design
from opsym.numeric.eseries import preferred_value
from opsym.numeric.units import parse_db, parse_fraction, parse_quantity
from opsym.study.budget import error_budget
from opsym.study.tolerance import corner_values
from opsym.values import MAX_LENGTH, PREFIXES, parse_value

# text, what it means (a number, or the error class), the unit written in the text
# (None: a plain number that fits every field).
CASES: list[tuple[str, float | type[Exception], str | None]] = [
    ("1meg", 1e6, None),  # SPICE3 scale factor MEG [mem]
    ("1Meg", 1e6, None),  # SPICE scale factors are case-insensitive [mem]
    ("1MEG", 1e6, None),
    ("2.2meg", 2.2e6, None),
    ("10 megohm", 1e7, "Ω"),  # meg + ohm
    ("10 Megohm", 1e7, "Ω"),
    ("10megohms", 1e7, "Ω"),
    ("4k7", 4.7e3, None),  # IEC 60062 letter code [pub]
    ("2R2", 2.2, None),
    ("100R", 100.0, None),
    ("1.5 MΩ", 1.5e6, "Ω"),  # SI: M is mega [BIPM table 7]
    ("1m", 1e-3, None),  # SI: m is milli [BIPM table 7]
    ("1M", 1e6, None),
    ("10 kohm", 1e4, "Ω"),
    ("25 µV", 25e-6, "V"),
    ("10 %", 0.1, "ratio"),
    ("25 ppm", 25e-6, "ratio"),
    ("-3 dB", 10 ** (-3 / 20), "ratio"),  # root-power dB [ISO 80000-3]
    ("1 mil", ValueSyntaxError, None),  # SPICE's 25.4e-6, never milli: refused
    ("1mil", ValueSyntaxError, None),
    ("1 mega", ValueSyntaxError, None),
    ("1 MEGOHM", ValueSyntaxError, None),
    ("1 furlong", ValueSyntaxError, None),  # an unknown word is never dropped
    ("10 x", ValueSyntaxError, None),
    ("1e400", ValueRangeError, None),
    ("1e99*1e99*1e99*1e99", ValueRangeError, None),  # 1e396 overflows a float
    ("1e-99/1e99", ValueRangeError, None),  # 1e-198 would round towards zero
    ("1e6 dB", ValueRangeError, None),  # 10**50000 as a ratio
    ("1" * 200, ValueRangeError, None),  # a 200-digit number
    ("1" * (MAX_LENGTH + 1), ValueSyntaxError, None),
]


def _circuit() -> opsym.Circuit:
    c = opsym.Circuit("inverting")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out")
    return c


def _circuit_value(text: str) -> float:
    c = opsym.Circuit("one")
    c.resistor("R1", "a", "0", value=text)
    return float(c.elements[0].value)


def _analyze_values(text: str) -> float:
    gain = _circuit().analyze("out", values={"R1": 1, "R2": text}).coefficient("Vin")
    return -float(gain)  # -R2/R1 [ideal inverting amplifier]


def _result_subs(text: str) -> float:
    return -float(_circuit().analyze("out").subs({"R1": 1, "R2": text}).coefficient("Vin"))


def _budget_value(text: str) -> float:
    c = opsym.Circuit("follower")
    c.voltage_source("Vs", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out")
    budget = error_budget(c.analyze("out"), {"U1.Vos": text, "U1.Ib": 0, "U1.Ios": 0})
    return budget.row("U1.Vos").value


def _tolerance_study(text: str) -> float:
    r1, r2 = sp.symbols("R1 R2", positive=True)
    _, _, table = corner_values([r2 / r1], {"R1": 1, "R2": text}, {"R1": "0 %"})
    return float(table[0][0])


def _preferred(text: str) -> float:
    return preferred_value(text)


def _opamp_set(text: str) -> float:
    return OpAmpParams.from_mapping({"name": "t", "vos_max": text}).vos_max


def _design_file(text: str) -> float:
    design = parse_design(
        textwrap.dedent(f"""\
            title = "one"
            output = "out"
            [resistors]
            R1 = {{ between = ["in", "n"], value = "1" }}
            R2 = {{ between = ["n", "out"], value = "{text}" }}
            [voltage-sources]
            Vin = {{ plus = "in", minus = "0", value = "1 V" }}
            [opamps.U1]
            plus = "0"
            minus = "n"
            out = "out"
            """),
        filename="t.toml",
    )
    return float(design.values["R2"])


# entry point, the unit of its field (None: any unit), how it reports a mistake
ENTRY_POINTS: dict[str, tuple[Callable[[str], float], str | None]] = {
    "Circuit.resistor value": (_circuit_value, "Ω"),
    "analyze(values=)": (_analyze_values, None),
    "Result.subs": (_result_subs, None),
    "error_budget values": (_budget_value, None),
    "tolerance study values": (_tolerance_study, None),
    "preferred_value": (_preferred, None),
    "parse_quantity": (parse_quantity, None),
    "parse_fraction": (parse_fraction, "ratio"),
    "OpAmpParams.from_mapping": (_opamp_set, "V"),
    "design file [resistors]": (_design_file, "Ω"),
}


@pytest.mark.parametrize(("text", "want", "unit"), CASES, ids=[c[0][:20] for c in CASES])
@pytest.mark.parametrize("entry", list(ENTRY_POINTS))
def test_same_text_same_number_everywhere(entry, text, want, unit):
    read, field_unit = ENTRY_POINTS[entry]
    if isinstance(want, type) or (unit is not None and field_unit not in (None, unit)):
        expected = want if isinstance(want, type) else ValueSyntaxError  # the unit does not fit
        wrapper = DesignFileError if entry.startswith("design file") else expected
        with pytest.raises(wrapper) as info:
            read(text)
        error = info.value.__cause__ if entry.startswith("design file") else info.value
        assert isinstance(error, expected), (entry, text, error)
        where = {"parse_quantity": "value", "parse_fraction": "value"}.get(entry)
        assert where is None or str(error).startswith(f"{where}: ")
        return
    if entry == "preferred_value":  # the E96 value nearest to the number read
        assert read(text) == preferred_value(want)
    else:
        assert read(text) == pytest.approx(want, rel=1e-12), (entry, text)


def test_every_error_names_the_field():
    for text in ("1 mil", "1e400", "1 furlong", "1e6 dB"):
        for call in (
            lambda t: parse_quantity(t, where="R9"),
            lambda t: parse_fraction(t, where="R9"),
            lambda t: opsym.Circuit("x").resistor("R9", "a", "0", value=t),
        ):
            with pytest.raises(ValueSyntaxError, match="R9"):
                call(text)


@pytest.mark.parametrize(
    ("text", "want"),
    [("100 dB", 100.0), ("-3dB", -3.0), ("90", 90.0), (120, 120.0), ("1/2 dB", 0.5)],
)
def test_db_readers(text, want):
    # a level in dB is the number before "dB" [ISO 80000-3]
    assert parse_db(text, where="CMRR") == want
    if want > 0:  # an op-amp set's rejection ratios are positive
        assert OpAmpParams.from_mapping({"name": "t", "cmrr_min_db": text}).cmrr_min_db == want


@pytest.mark.parametrize(
    ("text", "error"),
    [("1e6 dB", ValueRangeError), ("1meg", ValueRangeError), ("1e400", ValueRangeError),
     ("10 %", ValueSyntaxError), ("100 db", ValueSyntaxError), ("1 furlong", ValueSyntaxError)],
)  # fmt: skip
def test_db_readers_refuse(text, error):
    with pytest.raises(error, match="CMRR"):
        parse_db(text, where="CMRR")
    with pytest.raises(error, match="cmrr_min_db"):
        OpAmpParams.from_mapping({"name": "t", "cmrr_min_db": text})


def test_db_to_ratio_never_overflows():
    # 1e6 dB would be 10**50000 V/V: a range error that names the field, not OverflowError
    p = OpAmpParams.from_mapping({"name": "t", "cmrr_min_db": 1e6})
    with pytest.raises(ValueRangeError):
        p.cmrr()
    assert math.isinf(opsym.numeric.db_to_ratio(math.inf))  # inf dB: no limit, as before


def test_long_text_is_refused_by_its_length():
    # MAX_LENGTH applies to every reader: a 100 000-character text is refused for its
    # length before any parsing (quantiphy's regular expression took minutes on it).
    for read in (parse_quantity, parse_fraction, parse_db, preferred_value):
        with pytest.raises(ValueSyntaxError, match="at most"):
            read("1" * 100_000)


_PREFIX = st.sampled_from(["", *sorted(PREFIXES), "meg", "Meg", "MEG"])
_UNIT = st.sampled_from(["", " ", "Ω", " V", "A", " Hz", "ohm", " ohms"])


@settings(max_examples=300, deadline=None)
@given(
    mantissa=st.decimals(min_value=-1e6, max_value=1e6, allow_nan=False, places=4),
    prefix=_PREFIX,
    unit=_UNIT,
)
def test_parse_quantity_is_parse_value_as_a_float(mantissa, prefix, unit):
    text = f"{mantissa}{prefix}{unit}"
    try:
        exact = parse_value(text, where="x")
    except ValueSyntaxError as err:
        with pytest.raises(type(err)):
            parse_quantity(text)
        return
    assert parse_quantity(text) == float(exact)
    if prefix.lower() == "meg":  # SPICE3 MEG = 1e6 [mem]
        assert exact == sp.Rational(str(mantissa)) * 10**6


def test_parameter_set_text_is_read_by_the_one_parser():
    # ResistorParams.from_text reads ratios; an unknown word is an error, 1meg is 10**6
    with pytest.raises(ValueSyntaxError, match="resistor tolerance"):
        ResistorParams.from_text("1 furlong")
    with pytest.raises(BudgetError, match="100 % or more"):
        ResistorParams.from_text("1meg")  # read as 1e6 [SPICE3 MEG, mem], then refused
    assert ResistorParams.from_text("0.1 %", "25 ppm/°C").tcr == pytest.approx(25e-6)
    # a bias law's doubling step: a malformed number is a ValueSyntaxError, not a bare one
    with pytest.raises(ValueSyntaxError, match="bias_law"):
        OpAmpParams.from_mapping({"name": "t", "bias_law": "doubling 1.2.3"})
