"""Bode, gain-error and noise-density figures (opsym.output.figures): data, labels, files."""

from __future__ import annotations

import math
import sys

import numpy as np
import pytest

import opsym
from opsym.errors import BudgetError, InvalidValueError, MissingDependencyError
from opsym.numeric.frequency import HALF_POWER_DB
from opsym.numeric.units import format_si
from opsym.output import figures

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"


def legend_texts(ax) -> list[str]:
    return [t.get_text() for t in ax.get_legend().get_texts()]


def line(ax, label: str):
    (found,) = [ln for ln in ax.get_lines() if ln.get_label() == label]
    return found


def at(ln, f: float) -> float:
    """The line's y at frequency f, interpolated in log f."""
    x, y = ln.get_xdata(), ln.get_ydata()
    return float(np.interp(math.log10(f), np.log10(x), y))


# -- Bode ------------------------------------------------------------------------------


def test_bode_of_single_pole_stage(inverting, tmp_path):
    fig = figures._bode(inverting, None, None, None, True)
    ax_mag, ax_ph = fig.axes
    bw = inverting.bandwidth()
    assert legend_texts(ax_mag) == [
        "circuit",
        "ideal op-amp (nullor)",
        f"−3 dB at {format_si(bw, 'Hz', 4)}",
    ]
    assert legend_texts(ax_mag)[2] == "−3 dB at 272.7 kHz"
    mag, phase = line(ax_mag, "circuit"), line(ax_ph, "circuit")
    # DC gain (R2/R1)·A0·beta/(1 + A0·beta) = 10·200000/200011 (reference case 5, Franco ch. 1).
    dc_db = 20 * math.log10(10 * 200e3 / 200011)
    assert math.isclose(mag.get_ydata()[0], dc_db, abs_tol=1e-4)
    # A single pole: 3.01 dB down and 45° of lag at its corner (Bode; Sedra & Smith 6th ed.,
    # appendix on Bode plots [from memory]); inverting, so the phase starts at 180°.
    assert math.isclose(at(mag, bw), dc_db - HALF_POWER_DB, abs_tol=0.01)
    assert math.isclose(at(phase, bw), 135.0, abs_tol=0.1)
    # The nullor limit is flat at 20 dB (gain -R2/R1 = -10).
    ideal = line(ax_mag, "ideal op-amp (nullor)")
    assert np.allclose(ideal.get_ydata(), 20.0) and ideal.get_linestyle() == "--"
    # Default range: whole decades, three below the bandwidth to two above.
    x = mag.get_xdata()
    assert math.isclose(x[0], 100.0) and math.isclose(x[-1], 1e8)
    assert ax_mag.get_ylabel() == "magnitude (dB, re 1 V/V)" and ax_ph.get_ylabel() == "phase (°)"
    path = tmp_path / "bode.png"
    figures.bode_chart(inverting, path)  # returns the Figure since figures draw into ax=
    assert path.read_bytes()[:8] == PNG_MAGIC


def test_bode_of_transimpedance_is_in_dB_ohm(tia):
    fig = figures._bode(tia, None, 10.0, 1e6, False)
    ax_mag = fig.axes[0]
    assert ax_mag.get_ylabel() == "magnitude (dBΩ, re 1 V/A)"
    assert "ideal op-amp (nullor)" not in legend_texts(ax_mag)  # ideal=False
    # Rf = 1 MΩ: 120 dBΩ at low frequency, less the 1/(1 + 1/A0) of the finite gain.
    assert math.isclose(line(ax_mag, "circuit").get_ydata()[0], 120.0, abs_tol=1e-3)


def test_bode_without_gain_model_and_range_fallbacks():
    c = opsym.Circuit("RC low-pass")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "p", value="10k")
    c.capacitor("C1", "p", "0", value="10n")
    c.opamp("U1", plus="p", minus="out", out="out")
    res = c.analyze("out", domain="s")
    ax = figures._bode(res, None, None, None, True).axes[0]
    # Ideal op-amps only: nothing to overlay. Corner 1/(2πRC) = 1.592 kHz.
    assert legend_texts(ax) == ["circuit", "−3 dB at 1.592 kHz"]
    assert math.isclose(line(ax, "circuit").get_xdata()[0], 1.0)
    assert math.isclose(line(ax, "circuit").get_xdata()[-1], 1e6)
    # A high-pass has no −3 dB bandwidth: the range comes from its pole (159.2 Hz).
    h = opsym.Circuit("RC high-pass")
    h.voltage_source("Vin", "in", "0")
    h.capacitor("C1", "in", "p", value="100n")
    h.resistor("R1", "p", "0", value="10k")
    h.opamp("U1", plus="p", minus="out", out="out")
    x = line(figures._bode(h.analyze("out", domain="s"), None, None, None, True).axes[0],
             "circuit").get_xdata()  # fmt: skip
    assert math.isclose(x[0], 0.1) and math.isclose(x[-1], 1e5)
    # A flat response, no poles: 1 Hz to 10 MHz.
    b = opsym.Circuit("follower")
    b.voltage_source("Vin", "p", "0")
    b.opamp("U1", plus="p", minus="out", out="out")
    x = line(figures._bode(b.analyze("out", domain="s"), None, None, None, True).axes[0],
             "circuit").get_xdata()  # fmt: skip
    assert math.isclose(x[0], 1.0) and math.isclose(x[-1], 1e7)


def test_bode_errors(inverting, tmp_path):
    dc = opsym.Circuit("dc")
    dc.voltage_source("Vin", "p", "0")
    dc.opamp("U1", plus="p", minus="out", out="out")
    with pytest.raises(InvalidValueError, match="domain='s'"):
        figures.bode_chart(dc.analyze("out"), tmp_path / "x.png")
    with pytest.raises(InvalidValueError, match="f_start"):
        figures.bode_chart(inverting, tmp_path / "x.png", f_start=1e6, f_stop=1e3)
    with pytest.raises(BudgetError, match=r"\.png"):
        figures.bode_chart(inverting, tmp_path / "x.gif")


def test_missing_matplotlib_is_reported(inverting, tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "matplotlib.figure", None)  # import now fails
    with pytest.raises(MissingDependencyError, match="pip install matplotlib"):
        figures.bode_chart(inverting, tmp_path / "bode.png")


# -- gain error ----------------------------------------------------------------------------


def test_gain_error_of_single_pole_stage(inverting, tmp_path):
    ax = figures._gain_error(inverting, None, 10.0, 1e6).axes[0]
    err = line(ax, "|H/H_ideal − 1|")
    # Above the open-loop pole |error| ≈ f·NG/GBW: 11·10 kHz/3 MHz = 3.67 % (Franco ch. 6
    # [from memory]); the exact value with A0 = 200 000 is 3.664 %.
    assert math.isclose(at(err, 1e4), 3.664, rel_tol=2e-3)
    # DC: 1/(1 + A0·beta) = 11/200011 = 0.0055 % (reference case 5).
    dc = 100 * 11 / 200011
    assert legend_texts(ax) == ["|H/H_ideal − 1|", f"at DC: {dc:.4g} %"]
    assert ax.get_ylabel() == "|gain error| (%)"
    assert ax.get_xscale() == "log" and ax.get_yscale() == "log"
    figures.gain_error_chart(inverting, tmp_path / "ge.pdf")
    assert (tmp_path / "ge.pdf").read_bytes()[:4] == b"%PDF"


def test_gain_error_in_ppm_when_small():
    c = opsym.Circuit("fast follower")
    c.voltage_source("Vin", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out", gain="pole")
    res = c.analyze("out", domain="s", values={"U1.A0": "1M", "U1.GBW": "1G"})
    ax = figures._gain_error(res, None, 1.0, 1e3).axes[0]
    assert ax.get_ylabel() == "|gain error| (ppm)"
    # Follower: 1/(1 + A0) = 1 ppm at DC (reference case 5 with beta = 1).
    assert math.isclose(line(ax, "|H/H_ideal − 1|").get_ydata()[0], 1e6 / (1 + 1e6), rel_tol=1e-3)


def test_gain_error_needs_a_gain_model(tmp_path):
    c = opsym.Circuit("ideal")
    c.voltage_source("Vin", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out")
    with pytest.raises(BudgetError, match="gain='pole'"):
        figures.gain_error_chart(c.analyze("out", domain="s"), tmp_path / "ge.png")


# -- noise density -------------------------------------------------------------------------


def test_noise_density_of_transimpedance(tia_noise, tmp_path):
    ax = figures._noise_density(tia_noise, 1.0, 1e6, 1).axes[0]
    # U1.in+ sees a grounded pin (H = 0) and is left out; top=1 keeps U1.en, the largest.
    assert legend_texts(ax) == [
        "total (root-sum-square)",
        "U1.en (voltage noise)",
        "others (2 sources, in power)",
    ]
    total = line(ax, "total (root-sum-square)")
    f = total.get_xdata()
    assert np.allclose(total.get_ydata(), tia_noise.density(f), rtol=1e-12)
    others = line(ax, "others (2 sources, in power)").get_ydata()
    parts = tia_noise.contributions(f)
    assert np.allclose(others, np.sqrt(parts["Rf"] ** 2 + parts["U1.in-"] ** 2), rtol=1e-12)
    # At 1 Hz the 1 MΩ feedback resistor dominates: √(4kTR) = 128.32 nV/√Hz at 298.15 K
    # (case 13: 12.832 nV/√Hz for 10 kΩ, ×10 for 100× R; BIPM SI Brochure 2019, exact k),
    # with en = 12 nV/√Hz and in·Rf = 3 nV/√Hz added in power [derived].
    expected = math.sqrt(128.32e-9**2 * (1e5 / 100001) ** 2 + 12e-9**2 + 3e-9**2)
    assert math.isclose(total.get_ydata()[0], expected, rel_tol=1e-3)
    assert ax.get_xscale() == "log" and ax.get_yscale() == "log"
    path = tmp_path / "noise.png"
    figures.noise_density_chart(tia_noise, path)
    assert path.read_bytes()[:8] == PNG_MAGIC


def test_noise_density_all_sources_and_errors(tia_noise, tmp_path):
    ax = figures._noise_density(tia_noise, 1.0, 1e6, None).axes[0]
    assert legend_texts(ax)[1:] == [
        "U1.en (voltage noise)", "Rf (thermal noise)", "U1.in- (current noise)",
    ]  # fmt: skip
    with pytest.raises(BudgetError, match="top"):
        figures.noise_density_chart(tia_noise, tmp_path / "n.png", top=0)
    with pytest.raises(InvalidValueError, match="0 < start < stop"):
        figures.noise_density_chart(tia_noise, tmp_path / "n.png", f_start=1e3, f_stop=10)
