"""Design files in the s domain: inductors, the single-pole op-amp, noise, [response], [noise]."""

from __future__ import annotations

import math
import textwrap

import pytest
import sympy as sp

import opsym
from opsym.errors import BudgetError, DesignFileError
from opsym.io.design import DEFAULT_INCLUDE
from opsym.io.designfile import parse_design
from opsym.model.elements import Inductor
from opsym.model.nonideal import SinglePole
from opsym.numeric.params import OPAMP_SETS, opamp_parameters
from opsym.study.design import numeric_values, run_design

#: Boltzmann and elementary charge, exact in the SI since 2019 (BIPM SI Brochure, 9th ed.).
K_B = 1.380649e-23
Q_E = 1.602176634e-19

FOLLOWER = """\
title = "follower"
output = "out"
[voltage-sources]
Vin = { plus = "p", minus = "0", value = "1 V" }
[resistors]
RL = { between = ["out", "0"], value = "10k" }
[opamps.U1]
plus = "p"
minus = "out"
out = "out"
gain = "pole"
A0 = "120 dB"
GBW = "1 MHz"
"""

TIA = """\
title = "tia"
output = "out"
[resistors]
Rf = { between = ["n", "out"], value = "1M" }
[capacitors]
Cf = { between = ["n", "out"], value = "1p" }
Cd = { between = ["n", "0"], value = "20p" }
[current-sources]
Iph = { from = "0", into = "n", value = "1u" }
[opamps.U1]
plus = "0"
minus = "n"
out = "out"
gain = "pole"
A0 = "100k"
GBW = "10 MHz"
en = "8 nV/√Hz"
in = "1 fA/√Hz"
"""


def read(text: str):
    return parse_design(textwrap.dedent(text), filename="t.toml")


def fails(text: str, *fragments: str) -> str:
    with pytest.raises(DesignFileError) as info:
        read(text)
    message = str(info.value)
    assert message.startswith("t.toml"), message
    for f in fragments:
        assert f in message, message
    return message


# -- elements and op-amp keys ---------------------------------------------------------------


def test_inductors_are_read_like_capacitors():
    d = read(
        FOLLOWER.replace(
            "[opamps.U1]",
            '[inductors]\nL1 = { between = ["q", "r"], value = "10 mH" }\n'
            'L2 = { between = ["r", "0"], value = "1u", symbolic = false }\n[opamps.U1]',
        ).replace('["out", "0"]', '["out", "q"]')
    )
    assert isinstance(d.circuit.element("L1"), Inductor)
    assert d.values["L1"] == sp.Rational(1, 100)
    assert d.circuit.element("L2").value == sp.Rational(1, 10**6)
    fails(
        FOLLOWER + '[inductors]\nL1 = { between = ["p", "q"], value = "1 nF" }\n', "does not fit"
    )
    fails(FOLLOWER + '[inductors]\nL1 = { between = ["p", "q"], value = "-1m" }\n', "positive")


def test_pole_gain_and_its_numbers():
    d = read(FOLLOWER)
    amp = d.circuit.element("U1")
    assert amp.gain == SinglePole().gain("U1")
    assert d.values["U1.A0"] == 10**6 and d.values["U1.GBW"] == 10**6
    assert read(FOLLOWER.replace('"120 dB"', '"100k"')).values["U1.A0"] == 100_000


def test_default_include_is_the_python_default():
    """Without ``include`` an op-amp carries what ``Circuit.opamp`` gives it by default."""
    c = opsym.Circuit()
    c.opamp("U1", plus="0", minus="n", out="out")
    kinds = [n.kind for n in c.element("U1").nonideals]
    assert kinds == list(DEFAULT_INCLUDE) == ["offset", "bias", "vnoise", "inoise"]
    assert [n.kind for n in read(FOLLOWER).circuit.element("U1").nonideals] == kinds
    only = read(FOLLOWER + 'include = ["vnoise", "offset"]\n').circuit.element("U1")
    assert [n.kind for n in only.nonideals] == ["offset", "vnoise"]


@pytest.mark.parametrize("text", ["9 nV/√Hz", "9nV/√Hz", "9 nV/rtHz", "9n", "9e-9"])
def test_noise_density_spellings(text):
    d = read(TIA.replace('"8 nV/√Hz"', f'"{text}"') + 'fce = "100 Hz"\nfci = 0\n')
    assert d.values["U1.en"] == sp.Rational(9, 10**9)
    assert d.values["U1.in"] == sp.Rational(1, 10**15)
    assert (d.values["U1.fce"], d.values["U1.fci"]) == (100, 0)


@pytest.mark.parametrize(
    ("change", "fragments"),
    [
        (lambda t: t.replace('"10 MHz"', '"-10 MHz"'), ["[opamps.U1] GBW", "must be positive"]),
        (lambda t: t.replace('"10 MHz"', '"0"'), ["GBW", "must be positive"]),
        (lambda t: t.replace('"100k"', '"-3 dB"').replace("A0 =", "A0 = 1\nX ="), ["'X'"]),
        (lambda t: t.replace('gain = "pole"', 'gain = "finite"'), ["A0", 'gain = "pole"']),
        (lambda t: t.replace('"8 nV/√Hz"', '"8 nA/√Hz"'), ["[opamps.U1] en", "does not fit"]),
        (lambda t: t.replace('"8 nV/√Hz"', '"-8n"'), ["en", "negative"]),
        (lambda t: t + 'include = ["offset", "inoise"]\n', ["en", 'add "vnoise"']),
        (lambda t: t + 'include = ["vnoise"]\n', ["in", 'add "inoise"']),
        (lambda t: t + 'fce = "1 kΩ"\n', ["fce", "does not fit"]),
    ],
)
def test_bad_opamp_numbers_name_the_key(change, fragments):
    fails(change(TIA), *fragments)


# -- parameter sets -------------------------------------------------------------------------


def test_parameter_tables_take_the_new_fields():
    d = read(
        TIA.replace('en = "8 nV/√Hz"\n', "")
        + 'parameters = { based-on = "generic JFET", en_typ = "9 nV/√Hz", gbw_typ = "3 MHz" }\n'
    )
    p = d.opamps["U1"]
    assert p.en_typ == 9e-9 and p.gbw_typ == 3e6 and p.fce == opamp_parameters("JFET").fce
    values = numeric_values(d)
    assert values["U1.en"] == 9e-9  # from the set: the file gives no en
    assert values["U1.GBW"] == 1e7  # the file's GBW wins over the set's
    assert values["U1.in"] == 1e-15  # the file's in wins
    assert values["U1.fce"] == 200.0  # from the set


def test_every_generic_set_has_dynamics_and_noise():
    for p in OPAMP_SETS.values():
        assert p.gbw_typ > 0 and p.en_typ > 0 and p.fce >= 0 and p.fci >= 0, p.name
        # The current noise is at least the shot noise of the bias current, √(2q·Ib)
        # (Schottky's shot-noise formula, e.g. Horowitz & Hill, noise chapter [mem]).
        assert p.in_typ >= math.sqrt(2 * Q_E * abs(p.ib_typ)), p.name
    # FET-input leakage is shot noise, white: no current-noise 1/f corner (common practice)
    assert opamp_parameters("JFET").fci == 0 and opamp_parameters("CMOS").fci == 0
    # a chopped (zero-drift) input has no 1/f voltage noise (common practice)
    assert opamp_parameters("zero-drift CMOS").fce == 0


# -- [response] -----------------------------------------------------------------------------


def test_response_settings_and_defaults():
    d = read(FOLLOWER + '[response]\nfrom = "1 Hz"\nto = "1 GHz"\npoints-per-decade = 2\n'
             'at = ["1 kHz", 100000]\n')  # fmt: skip
    r = d.response
    assert (r.signal, r.f_start, r.f_stop, r.points_per_decade) == ("Vin", 1, 10**9, 2)
    assert r.at == (1000, 100_000)
    r = read(FOLLOWER + "[response]\n").response
    assert (r.signal, r.f_start, r.f_stop, r.points_per_decade, r.at) == ("Vin", None, None,
                                                                          None, ())  # fmt: skip


@pytest.mark.parametrize(
    ("table", "fragments"),
    [
        ('from = "1 MHz"\nto = "1 kHz"', ["[response] to", "not above 'from'"]),
        ('from = "100 MHz"', ["[response] to", "10 MHz (the default)"]),
        ('from = "0"', ["[response] from", "> 0"]),
        ('at = ["1 kHz", "-1 Hz"]', ["[response] at", "> 0"]),
        ("at = []", ["[response] at", "a list"]),
        ('signal = "RL"', ["[response] signal", "not a signal source"]),
        ('to = "1 MΩ"', ["[response] to", "does not fit"]),
        ("points-per-decade = 0", ["points-per-decade", "from 1 to 1000"]),
        ("points = 3", ["unknown key 'points'", "points-per-decade"]),
    ],
)
def test_bad_response_tables(table, fragments):
    fails(FOLLOWER + "[response]\n" + table + "\n", *fragments)


def test_follower_response_matches_first_order_feedback_theory():
    """Follower on a single-pole op-amp: H = A/(1 + A), A = A0/(1 + jf·A0/GBW).

    Closed-loop bandwidth GBW·(1 + A0)/A0 and gain error |1/(1 + A)| ≈ f/GBW for
    f ≪ GBW (Franco, *Design with Operational Amplifiers*, ch. 6, β·GBW [mem]).
    """
    d = read(FOLLOWER + '[response]\nat = ["1 kHz", "10 kHz"]\n')
    r = run_design(d).response
    assert r.bandwidth == pytest.approx(1e6 * (1 + 1e6) / 1e6, rel=1e-9)
    for p in r.points:
        a = 1e6 / (1 + 1j * p.frequency * 1e6 / 1e6)
        assert abs(p.error) == pytest.approx(abs(1 / (1 + a)), rel=1e-9)
        assert abs(p.error) == pytest.approx(p.frequency / 1e6, rel=1e-3)
        assert p.ideal == pytest.approx(1.0)
    assert r.unit == "V/V" and r.dc_gain == pytest.approx(1e6 / (1 + 1e6), rel=1e-12)
    assert [p.frequency for p in r.grid] == pytest.approx([10.0 * 10**k for k in range(7)])
    text = r.to_text()
    assert "Frequency response of V(out) from Vin" in text and "Gain and gain error" in text


def test_buffered_rc_bandwidth_is_one_over_two_pi_rc():
    # First-order RC low-pass: f_c = 1/(2πRC) (any circuits textbook).
    d = read(
        FOLLOWER.replace('gain = "pole"\nA0 = "120 dB"\nGBW = "1 MHz"\n', "include = []\n")
        .replace('plus = "p", minus', 'plus = "in", minus')
        .replace("[resistors]", '[resistors]\nR1 = { between = ["in", "p"], value = "10k" }')
        + '[capacitors]\nC1 = { between = ["p", "0"], value = "10n" }\n[response]\n'
    )
    r = run_design(d).response
    assert r.bandwidth == pytest.approx(1 / (2 * math.pi * 1e4 * 1e-8), rel=1e-9)
    assert all(abs(p.error) < 1e-12 for p in r.grid)  # ideal op-amp: no gain error


def test_a_missing_number_names_the_file_and_the_symbol():
    d = read(TIA.replace(', value = "1M" }', " }") + "[response]\n")
    with pytest.raises(BudgetError, match=r"t\.toml: \[response\]: .*Rf"):
        run_design(d)


# -- [noise] --------------------------------------------------------------------------------


def test_noise_settings():
    n = read(TIA + '[noise]\nfrom = "1 Hz"\nto = "inf"\ntemperature = 35\n').noise
    assert (n.f_start, n.f_stop, n.temperature, n.signal) == (1, sp.oo, 35, "Iph")
    assert read(TIA + '[noise]\nfrom = 0\nto = "1 MHz"\n').noise.temperature is None


@pytest.mark.parametrize(
    ("table", "fragments"),
    [
        ('from = "1 kHz"\nto = "10 Hz"', ["[noise] to", "not above 'from'"]),
        ('from = "1 Hz"\nto = "1 Hz"', ["[noise] to", "not above"]),
        ('to = "1 kHz"', ["[noise]", "'from' is missing"]),
        ('from = "1 Hz"', ["[noise]", "'to' is missing"]),
        ('from = "1 Hz"\nto = "1 kHz"\nband = 3', ["[noise]", "unknown key 'band'", "from, to"]),
        ('from = "1 Hz"\nto = "1 kHz"\ntemperature = -300', ["temperature", "-273.15"]),
        ('from = "1 Hz"\nto = "1 kHz"\ntemperature = "hot"', ["temperature", "not a number"]),
        ('from = "-1 Hz"\nto = "1 kHz"', ["[noise] from", ">= 0"]),
        ('from = "1 Hz"\nto = "forever"', ["[noise] to", "cannot read"]),
    ],
)
def test_bad_noise_tables(table, fragments):
    fails(TIA + "[noise]\n" + table + "\n", *fragments)


def test_a_one_over_f_corner_with_a_band_from_zero_names_the_field():
    fails(
        TIA + 'fce = "100 Hz"\n[noise]\nfrom = 0\nto = "1 kHz"\n',
        "[noise] from",
        "U1.fce",
        "from > 0",
    )
    # the corner may come from the parameter set (generic CMOS: fce = 1 kHz)
    fails(
        TIA + 'parameters = "generic CMOS"\n[noise]\nfrom = 0\nto = "1 kHz"\n',
        "[noise] from",
        "U1.fce",
    )
    # white noise only: a band from 0 Hz is fine
    assert read(TIA + "[noise]\nfrom = 0\nto = '1 kHz'\n").noise.f_start == 0


def test_kt_over_c_noise_of_a_buffered_rc():
    """R then C, buffered: over all frequencies the noise is √(kT/C), whatever R is.

    ∫ 4kTR·|1/(1 + j2πfRC)|² df from 0 to ∞ = 4kTR·1/(4RC) = kT/C (Johnson–Nyquist
    over the (π/2)·fc noise bandwidth; Horowitz & Hill, noise chapter [mem]; case 13).
    """
    d = read(
        FOLLOWER.replace('gain = "pole"\nA0 = "120 dB"\nGBW = "1 MHz"\n', "include = []\n")
        .replace('plus = "p", minus', 'plus = "in", minus')
        .replace("[resistors]", '[resistors]\nR1 = { between = ["in", "p"], value = "10k" }')
        + '[capacitors]\nC1 = { between = ["p", "0"], value = "1n" }\n'
        '[noise]\nfrom = 0\nto = "inf"\n'
    )
    n = run_design(d).noise
    rows = {r.name: r.rms for r in n.budget.rows}
    assert rows["R1"] == pytest.approx(math.sqrt(K_B * 298.15 / 1e-9), rel=1e-5)  # 2.0289 µV
    assert n.budget.input_rms is None  # the input-referred density grows without bound
    assert "does not converge" in n.to_text()


def test_tia_noise_from_the_file_numbers():
    d = read(TIA + '[noise]\nfrom = "1 Hz"\nto = "10 Hz"\ntemperature = 35\n')
    n = run_design(d).noise
    # Well below the feedback pole Rf's noise reaches the output as its own √(4kTR):
    # 128.32 nV/√Hz for 1 MΩ at 298.15 K (case 13, scaled by √100), here at 308.15 K.
    # (the loop gain, A0 = 100 dB, leaves a part in 1e5).
    want = math.sqrt(4 * K_B * 308.15 * 1e6)
    assert float(n.result.contribution("Rf", 1.0)) == pytest.approx(want, rel=3e-5)
    assert {r.name for r in n.budget.rows} == {"Rf", "U1.en", "U1.in+", "U1.in-"}
    assert n.budget.input_rms is not None  # in A rms, referred to Iph
    assert "referred to the input" in n.to_text() and "fA rms" in n.to_text()


def test_noise_without_densities_says_what_to_add():
    d = read(TIA.replace('en = "8 nV/√Hz"\n', "") + '[noise]\nfrom = "1 Hz"\nto = "1 kHz"\n')
    with pytest.raises(BudgetError, match=r"t\.toml: \[noise\]: .*U1\.en.*en_typ"):
        run_design(d)


def test_a_band_to_infinity_that_diverges_names_the_field():
    # A resistor divider has a flat density: its power over an infinite band is infinite.
    d = read(
        'output = "a"\n[resistors]\nR1 = { between = ["a", "0"], value = "1k" }\n'
        '[current-sources]\nI1 = { from = "0", into = "a", value = 0 }\n'
        '[noise]\nfrom = "1 Hz"\nto = "inf"\n'
    )
    with pytest.raises(DesignFileError, match=r"t\.toml \[noise\] to: .*finite upper"):
        run_design(d)
