"""Band edges and figures of merit from the exact rational function (opsym.numeric.passband).

Each expected number comes from a published formula or a derivation written beside it
(tags as in the shared reference checks: [pub] published, [mem] cited from memory,
[derived] worked out here). Values are invented.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import opsym
from opsym.errors import InvalidValueError
from opsym.numeric.frequency import bandwidth, evaluator
from opsym.numeric.passband import passband

s = opsym.s


def second_order_edges(f0: float, q: float) -> tuple[float, float]:
    """−3 dB edges of a second-order band-pass or notch: f0·(√(1 + 1/(4Q²)) ∓ 1/(2Q)).

    Schaumann & Van Valkenburg, "Design of Analog Filters", second-order sections [mem];
    their product is f0² and their difference f0/Q.
    """
    root = math.sqrt(1 + 1 / (4 * q * q))
    return f0 * (root - 1 / (2 * q)), f0 * (root + 1 / (2 * q))


def buffered(title: str) -> opsym.Circuit:
    """A circuit whose node ``p`` is buffered by an ideal follower to ``out``."""
    c = opsym.Circuit(title)
    c.voltage_source("Vin", "in", "0")
    c.opamp("U1", plus="p", minus="out", out="out")
    return c


# -- narrow bands: Q = 1000 -------------------------------------------------------------


def rlc_notch(r: str, l_: str, c_: str) -> opsym.Circuit:
    # Vin -R- p, p to ground through L in series with C: H = (1 + s²LC)/(1 + sRC + s²LC),
    # f0 = 1/(2π√(LC)), Q = √(L/C)/R [derived; the series-resonant trap of any filter text].
    c = buffered("series-LC notch")
    c.resistor("R1", "in", "p", value=r)
    c.inductor("L1", "p", "q", value=l_)
    c.capacitor("C1", "q", "0", value=c_)
    return c


def test_notch_with_q_1000_has_the_second_order_edges():
    # L = 100 mH, C = 100 nF, R = 1 Ω: f0 = 1591.549 Hz, Q = √(1e6)/1 = 1000. The stop
    # band is 1.59 Hz wide: a grid of 20 points per decade (main) steps over it.
    res = rlc_notch("1", "100m", "100n").analyze("out", domain="s")
    f0, q = 1 / (2 * math.pi * math.sqrt(0.1 * 100e-9)), 1000.0
    lower, upper = second_order_edges(f0, q)
    band = res.passband()
    assert band.kind == "band-stop" and band.reference == "DC"
    assert band.edges == pytest.approx((lower, upper), rel=1e-12)
    assert band.centre == pytest.approx(f0, rel=1e-12)
    assert band.q == pytest.approx(q, rel=1e-9)
    assert band.centre_gain == pytest.approx(0.0, abs=1e-9)  # a zero on the jω axis
    # The bandwidth is the first frequency 3 dB below DC (docs/conventions.md): the notch's
    # lower edge, not "within 3 dB up to 1 THz".
    assert res.bandwidth() == pytest.approx(lower, rel=1e-12)
    # Independently: |H| evaluated in floating point at the edges is 1/√2 [definition].
    h = evaluator(res.coefficient("Vin"), "H")
    assert np.abs(h(np.array(band.edges))) == pytest.approx([2**-0.5] * 2, rel=1e-9)


def test_band_pass_with_q_1000_has_the_second_order_edges():
    # Vin -R- p, L and C in parallel from p to ground: H = sL/R / (1 + sL/R + s²LC),
    # f0 = 1/(2π√(LC)), Q = R·√(C/L), peak gain 1 [derived; parallel-resonant tank].
    c = buffered("parallel-LC band-pass")
    c.resistor("R1", "in", "p", value="1M")
    c.inductor("L1", "p", "0", value="100m")
    c.capacitor("C1", "p", "0", value="100n")
    band = c.analyze("out", domain="s").passband()
    f0, q = 1 / (2 * math.pi * math.sqrt(0.1 * 100e-9)), 1e6 * math.sqrt(100e-9 / 0.1)
    assert band.kind == "band-pass" and band.reference == "peak"
    assert band.edges == pytest.approx(second_order_edges(f0, q), rel=1e-12)
    assert (band.centre, band.q, band.centre_gain) == pytest.approx((f0, q, 1.0), rel=1e-9)
    assert band.bandwidth == pytest.approx(f0 / q, rel=1e-9)  # f2 − f1 = f0/Q


# -- first-order edges anywhere ------------------------------------------------------------


def test_first_order_high_pass_edge_is_one_over_two_pi_rc():
    # C in series, R to ground: H = sRC/(1 + sRC), edge 1/(2πRC) = 159.155 Hz
    # (Horowitz & Hill, RC filters [mem]).
    c = buffered("RC high-pass")
    c.capacitor("C1", "in", "p", value="100n")
    c.resistor("R1", "p", "0", value="10k")
    res = c.analyze("out", domain="s")
    band = res.passband()
    assert band.kind == "high-pass" and band.reference == "high frequency"
    assert band.edges == pytest.approx((1 / (2 * math.pi * 1e4 * 100e-9),), rel=1e-12)
    with pytest.raises(InvalidValueError, match=r"\|H\(0\)\| is zero"):
        res.bandwidth()  # a true message: there is no DC value to fall from


@pytest.mark.parametrize(
    ("r", "c_", "want"),
    [
        ("10M", "100u", 1 / (2 * math.pi * 1e3)),  # τ = 1000 s: 159.2 µHz, below 1 mHz
        ("1", "1f", 1 / (2 * math.pi * 1e-15)),  # τ = 1 fs: 159 THz, above 1 THz
    ],
)
def test_low_pass_edge_at_any_frequency(r, c_, want):
    # RC low-pass: −3 dB at 1/(2πRC) (Horowitz & Hill, RC filters [mem]).
    c = buffered("RC low-pass")
    c.resistor("R1", "in", "p", value=r)
    c.capacitor("C1", "p", "0", value=c_)
    res = c.analyze("out", domain="s")
    assert res.bandwidth() == pytest.approx(want, rel=1e-12)
    assert res.passband().kind == "low-pass"


def test_rising_gain_is_a_high_pass_not_a_bandwidth():
    # Non-inverting stage with R1 + C1 in series to ground: G = 1 + sR2C/(1 + sR1C), DC
    # gain 1, high-frequency gain K = 1 + R2/R1 = 11. |G|² = K²/2 where
    # ω = √(K² − 2)/((R1 + R2)·C) [derived from |G|² = (1 + ω²a²)/(1 + ω²b²), a = (R1+R2)C,
    # b = R1·C = a/K].
    c = opsym.Circuit("shelving non-inverting")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "m", value="1k")
    c.capacitor("C1", "m", "0", value="1u")
    c.resistor("R2", "n", "out", value="10k")
    c.opamp("U1", plus="p", minus="n", out="out")
    res = c.analyze("out", domain="s")
    band = res.passband()
    assert band.kind == "high-pass" and band.reference_gain == pytest.approx(11.0)
    want = math.sqrt(11**2 - 2) / (11e3 * 1e-6) / (2 * math.pi)
    assert band.edges == pytest.approx((want,), rel=1e-12)
    with pytest.raises(InvalidValueError, match=r"never 3\.01 dB below its DC value") as info:
        res.bandwidth()
    assert "THz" not in str(info.value) and "1e+12" not in str(info.value)


def test_flat_and_unbounded_responses_say_so():
    # An all-pass (1 − sτ)/(1 + sτ) has |H| = 1 at every frequency [derived].
    flat = passband((1 - s / 100) / (1 + s / 100))
    assert flat.kind == "flat" and flat.edges == ()
    assert "at any frequency" in flat.describe()
    # An ideal integrator 1/(sτ): |H(0)| is infinite, no edge is defined.
    integ = passband(1 / (s / 100))
    assert integ.kind == "unbounded" and integ.edges == ()
    with pytest.raises(InvalidValueError, match="infinite"):
        bandwidth(1 / (s / 100))


def test_bandwidth_refuses_a_sampled_function():
    h = evaluator(1 / (1 + s), "H")
    with pytest.raises(InvalidValueError, match="expression in s"):
        bandwidth(h)


def test_gain_error_of_an_ac_coupled_stage_is_quoted_in_the_passband():
    # AC-coupled follower with a single-pole op-amp: the ideal gain is zero at DC, so
    # H/H_ideal − 1 is not defined there (nan); in the passband it is −1/(1 + A(jω)) with
    # |…| ≈ f/GBW (Franco, ch. 6 [mem]) at f = √(f1·f2), f1 = 1/(2πRC) = 1.5915 Hz and
    # f2 = GBW·(1 + A0)/A0 [derived: the follower's closed-loop pole].
    c = opsym.Circuit("AC-coupled follower")
    c.voltage_source("Vin", "in", "0")
    c.capacitor("C1", "in", "p", value="1u")
    c.resistor("R1", "p", "0", value="100k")
    c.opamp("U1", plus="p", minus="out", out="out", gain="pole", bias=False)
    res = c.analyze("out", domain="s", values={"U1.A0": "1M", "U1.GBW": "1M"})
    assert math.isnan(abs(res.gain_error_response(0.0)[()]))
    f, where = res.gain_error_frequency()
    f1, f2 = 1 / (2 * math.pi * 0.1), 1e6 * (1 + 1e6) / 1e6
    assert where == "passband" and f == pytest.approx(math.sqrt(f1 * f2), rel=1e-9)
    a = 1e6 / (1 + 1j * f * 1e6 / 1e6)
    assert abs(res.gain_error_response(f)[()]) == pytest.approx(abs(1 / (1 + a)), rel=1e-6)


def test_note_section_quotes_the_gain_error_where_asked():
    # A single-pole follower: gain error −1/(1 + A(jω)), |…| ≈ f/GBW = 1 % at 10 kHz for
    # GBW = 1 MHz (Franco, ch. 6 [mem]); exactly |1/(1 + A)| with A = A0/(1 + j·f·A0/GBW).
    from opsym.output.sections import FrequencySection

    c = opsym.Circuit("follower")
    c.voltage_source("Vin", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out", gain="pole", bias=False)
    res = c.analyze("out", domain="s", values={"U1.A0": "100k", "U1.GBW": "1M"})
    a = 1e5 / (1 + 1j * 1e4 * 1e5 / 1e6)
    want = f"{100 * abs(1 / (1 + a)):.4g} %"
    md = FrequencySection(res, reference=1e4).markdown()
    assert f"- Gain error at f = 10 kHz (given): {want} " in md
    # By default at DC, where the ideal gain is defined: 1/(1 + A0) = 10 ppm.
    assert "- Gain error at f = 0 Hz (DC): 10 ppm " in FrequencySection(res).markdown()


def test_eight_stage_cascade_edge_is_half_power():
    # 8 identical inverting low-pass stages (10 k, 10 k ∥ 1 nF) on single-pole op-amps:
    # |H|² is a ratio of degree-16 polynomials in ω² whose coefficients have hundreds of
    # digits. The edge, evaluated independently in floating point, is at half power
    # [definition].
    c = opsym.Circuit("8-stage low-pass cascade")
    c.voltage_source("Vin", "s0", "0")
    values: dict = {}
    for k in range(1, 9):
        c.resistor(f"R1_{k}", f"s{k - 1}", f"n{k}", value="10k")
        c.resistor(f"R2_{k}", f"n{k}", f"s{k}", value="10k")
        c.capacitor(f"C2_{k}", f"n{k}", f"s{k}", value="1n")
        c.opamp(f"U{k}", plus="0", minus=f"n{k}", out=f"s{k}", gain="pole", bias=False,
                noise=False)  # fmt: skip
        values.update({f"U{k}.A0": "100k", f"U{k}.GBW": "1M"})
    res = c.analyze("s8", domain="s", values=values)
    f3 = res.bandwidth()
    h = evaluator(res.coefficient("Vin"), "H")
    ratio = abs(h(np.array([f3]))[0]) / abs(h(np.array([0.0]))[0])
    assert ratio == pytest.approx(2**-0.5, rel=1e-9)
    # Eight coincident RC poles at 15.9 kHz alone would give 15.9 kHz·√(2^(1/8) − 1) =
    # 4.77 kHz (a cascade of n equal poles [derived]); the op-amp poles lower it a little.
    assert 4.6e3 < f3 < 1 / (2 * math.pi * 1e-5) * math.sqrt(2 ** (1 / 8) - 1)
