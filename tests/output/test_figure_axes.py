"""Figures return their matplotlib Figure, draw into a given Axes, name Hz, keep legends clear.

Sources named beside the checks: the hertz is the SI unit of frequency (SI
Brochure, 9th edition, 2019, Table 4); a PDF file starts with ``%PDF-`` (ISO
32000-1:2008, 7.5.2); a PNG file starts with the 8-byte signature
``89 50 4E 47 0D 0A 1A 0A`` (PNG specification, ISO/IEC 15948:2004, 5.2).
"""

from __future__ import annotations

import pytest

import opsym
from opsym.errors import BudgetError
from opsym.numeric.params import opamp_parameters, resistor_parameters
from opsym.output import figures
from opsym.study.budget import error_budget
from opsym.study.temperature import budget_over_temperature
from opsym.study.tolerance import tolerance_analysis

pytest.importorskip("matplotlib")
from matplotlib.figure import Figure  # after the skip: matplotlib is optional

BEST = 0  # matplotlib's code for legend loc="best": placed where it covers the fewest points


@pytest.fixture(scope="module")
def studies():
    c = opsym.Circuit("inverting x10")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out")
    res = c.analyze("out")
    values = {"R1": "10k", "R2": "100k", "Vin": -1.0}
    ops = {"U1": opamp_parameters("generic general-purpose bipolar")}
    grade = resistor_parameters("thick film 1%")
    budget = error_budget(res, values, ops, resistors=grade)
    sweep = budget_over_temperature(res, values, ops, resistors=grade, step=25)
    study = tolerance_analysis(res, values, grade, samples=500, seed=1)
    return budget, sweep, study


def _draws(studies, inverting, tia_noise):
    budget, sweep, study = studies
    return {
        "contribution_chart": (figures.contribution_chart, budget, {}),
        "temperature_chart": (figures.temperature_chart, sweep, {}),
        "monte_carlo_histogram": (figures.monte_carlo_histogram, study, {}),
        "gain_error_chart": (figures.gain_error_chart, inverting, {"f_start": 10.0,
                                                                     "f_stop": 1e6}),
        "noise_density_chart": (figures.noise_density_chart, tia_noise, {"top": 2}),
    }  # fmt: skip


NAMES = ("contribution_chart", "temperature_chart", "monte_carlo_histogram",
         "gain_error_chart", "noise_density_chart")  # fmt: skip


@pytest.mark.parametrize("name", NAMES)
def test_each_figure_returns_its_figure_and_draws_into_a_given_axes(
    name, studies, inverting, tia_noise, tmp_path
):
    draw, obj, kw = _draws(studies, inverting, tia_noise)[name]
    fig = draw(obj, **kw)  # no path: draw only
    assert isinstance(fig, Figure) and len(fig.axes) == 1
    assert fig.axes[0].get_legend()._loc == BEST
    # Into the caller's layout: the second of two panels, nothing else touched.
    own = figures._figure(8, 3)
    left, right = own.subplots(1, 2)
    assert draw(obj, tmp_path / f"{name}.pdf", ax=right, **kw) is own
    assert right.has_data() and not left.has_data()
    assert (tmp_path / f"{name}.pdf").read_bytes()[:5] == b"%PDF-"  # ISO 32000-1, 7.5.2


def test_bode_draws_into_two_given_axes_and_names_hertz(inverting, tmp_path):
    fig = figures.bode_chart(inverting, tmp_path / "b.png")
    assert isinstance(fig, Figure)
    assert (tmp_path / "b.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # ISO/IEC 15948, 5.2
    assert fig.axes[1].get_xlabel() == "frequency (Hz)"  # SI Brochure, Table 4
    assert fig.axes[0].get_legend()._loc == BEST
    own = figures._figure(6, 6)
    mag, phase = own.subplots(2, 1)
    assert figures.bode_chart(inverting, ax=(mag, phase)) is own
    assert mag.has_data() and phase.has_data()
    with pytest.raises(BudgetError, match="two Axes"):
        figures.bode_chart(inverting, ax=mag)


def test_frequency_axes_name_hertz(inverting, tia_noise):
    for fig in (figures.gain_error_chart(inverting, f_start=10.0, f_stop=1e6),
                figures.noise_density_chart(tia_noise)):  # fmt: skip
        assert fig.axes[0].get_xlabel() == "frequency (Hz)"  # SI Brochure, Table 4


def test_a_bad_suffix_is_refused_before_drawing(studies, tmp_path):
    with pytest.raises(BudgetError, match=r"\.pdf"):
        figures.contribution_chart(studies[0], tmp_path / "bars.jpeg")
    assert not list(tmp_path.iterdir())
