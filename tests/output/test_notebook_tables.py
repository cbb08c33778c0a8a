"""Studies render as tables in Jupyter, their symbols written as ``Result`` writes them.

The HTML is read back with the standard library's parser (``html.parser``), not
with opsym's writer; the LaTeX names are the ones ``Result.symbol_latex`` gives
for the same symbols (one notation across a notebook).
"""

from __future__ import annotations

from html.parser import HTMLParser

import pytest
import sympy as sp

import opsym
from opsym.numeric.params import opamp_parameters, resistor_parameters
from opsym.study.budget import error_budget
from opsym.study.noise import noise_budget
from opsym.study.temperature import budget_over_temperature
from opsym.study.tolerance import tolerance_analysis


class _Cells(HTMLParser):
    """Rows of cell texts, and whether every opened tag was closed."""

    def __init__(self) -> None:
        super().__init__()
        self.rows: list[list[str]] = []
        self.open: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.open.append(tag)
        if tag == "tr":
            self.rows.append([])
        if tag in ("td", "th"):
            self.rows[-1].append("")

    def handle_endtag(self, tag):
        assert self.open.pop() == tag

    def handle_data(self, data):
        if self.open and self.open[-1] in ("td", "th"):
            self.rows[-1][-1] += data


def cells(html: str) -> list[list[str]]:
    p = _Cells()
    p.feed(html)
    p.close()
    assert p.open == []
    return p.rows


@pytest.fixture(scope="module")
def stage():
    c = opsym.Circuit("inverting x10")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", psrr=True)
    res = c.analyze("out")
    values = {"R1": "10k", "R2": "100k", "Vin": -1.0, "U1.dVs": 0.5}
    ops = {"U1": opamp_parameters("generic general-purpose bipolar")}
    return res, values, ops, resistor_parameters("thick film 1%")


def test_budget_shows_latex_names_of_result(stage):
    res, values, ops, grade = stage
    b = error_budget(res, values, ops, resistors=grade)
    names = res.symbol_latex()
    vos = "$" + names[sp.Symbol("U1.Vos", real=True)] + "$"
    dvs = "$" + names[sp.Symbol("U1.dVs", real=True)] + "$"
    html = b._repr_html_()
    rows = cells(html)
    assert len(rows) == 1 + len(b.rows) + 2  # header, one per source, worst case and RSS
    first = [r[0] for r in rows]
    assert f"U1 offset voltage {vos}" in first
    assert f"U1 supply change {dvs}/PSRR" in first
    assert "U1.Vos" not in html and "offset voltage Vos" not in html
    md = b._repr_markdown_()
    assert f"| U1 offset voltage {vos} |" in md
    # The plain renderings keep plain text (a terminal has no MathJax).
    assert "U1 offset voltage Vos" in b.to_text() and "$" not in b.to_text()


def test_temperature_sweep_headers_and_noise_rows(stage):
    res, values, ops, grade = stage
    sweep = budget_over_temperature(res, values, ops, resistors=grade, step=50)
    header = cells(sweep._repr_html_())[0]
    assert len(header) == len(sweep.table().headers)
    assert any("$V_{" in h for h in header), header
    assert "$V_{" in sweep._repr_markdown_().splitlines()[2]

    c = opsym.Circuit("inverting x10")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n", value="1k")
    c.resistor("R2", "n", "out", value="10k")
    c.opamp("U1", plus="0", minus="n", out="out")
    n = c.noise("out", values={"U1.en": "8n", "U1.in": "1p"})
    nb = noise_budget(n, 1.0, 1e3)
    first = [r[0] for r in cells(nb._repr_html_())[1:]]
    # Voltage noise density e_n and the resistor's thermal noise voltage.
    assert r"$e_{\mathrm{n},\mathrm{U1}}$" in first and r"$e_{\mathrm{n},\mathrm{R1}}$" in first
    assert "| $e_{\\mathrm{n},\\mathrm{R2}}$ |" in nb._repr_markdown_()


def test_tolerance_study_renders_and_escapes(stage):
    res, values, _, grade = stage
    study = tolerance_analysis(res, values, grade, samples=200, seed=2)
    html = study._repr_html_()
    rows = cells(html)
    assert rows[0] == ["estimate", "low", "high", "relative"]
    assert rows[1][0] == "nominal" and len(rows) >= 4
    assert study._repr_markdown_() == study.to_markdown()
