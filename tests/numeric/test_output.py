"""Design notes, tables and figures (opsym.output): LaTeX compiles, figures are written."""

import doctest
from pathlib import Path

import pytest

import opsym
from opsym.errors import BudgetError
from opsym.numeric.eseries import choose_for_null
from opsym.numeric.params import opamp_parameters, resistor_parameters
from opsym.output import figures
from opsym.output.notes import CAUTION, design_note
from opsym.study.budget import error_budget
from opsym.study.temperature import budget_over_temperature
from opsym.study.tolerance import tolerance_analysis

DOCS = Path(__file__).resolve().parents[2] / "docs" / "budget.md"


@pytest.fixture(scope="module")
def design():
    c = opsym.Circuit("inverting x10 (R1 ‖ R2 compensated)")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "p", "0")
    c.opamp("U1", plus="p", minus="n", out="out", cmrr=True, psrr=True)
    res = c.analyze("out")
    values = {"R1": "10k", "R2": "100k", "Vin": -1.0, "U1.Vcm": 0.0, "U1.dVs": 0.5}
    cond = res.null("U1.Ib", by="R3")
    pick = choose_for_null(cond, values, "E96", result=res, source="U1.Ib", magnitude="500n")
    values["R3"] = pick.chosen
    ops = {"U1": opamp_parameters("generic general-purpose bipolar")}
    grade = resistor_parameters("thick film 1%")
    budget = error_budget(res, values, ops, resistors=grade)
    study = tolerance_analysis(res, values, grade, samples=2000, seed=1)
    sweep = budget_over_temperature(res, values, ops, resistors=grade, step=25)
    return res, budget, cond, pick, study, sweep, values


def test_figures_are_written(design, tmp_path):
    _, budget, _, _, study, sweep, _ = design
    paths = [tmp_path / "bars.png", tmp_path / "temp.pdf", tmp_path / "mc.svg"]
    figures.contribution_chart(budget, paths[0])  # each returns its Figure
    figures.temperature_chart(sweep, paths[1])
    figures.monte_carlo_histogram(study, paths[2])
    for p in paths:
        assert p.exists() and p.stat().st_size > 1000
    with pytest.raises(BudgetError, match=r"\.png"):
        figures.contribution_chart(budget, tmp_path / "bars.gif")


def test_markdown_note_has_every_section(design):
    res, budget, cond, pick, study, sweep, values = design
    md = design_note(
        res, budget, values=values, conditions=[cond], choices=[pick], studies=[study],
        sweep=sweep, fmt="markdown",
    )  # fmt: skip
    for heading in ("### Circuit", "### Symbolic terms", "### Conditions",
                    "### Numeric budget", "### Caution"):  # fmt: skip
        assert heading in md
    assert "resistor R1 (in-n) = 10 kΩ" in md and CAUTION in md
    assert "R3 = 9.091 kΩ exactly; E96 9.09 kΩ" in md


def test_latex_note_compiles(design, tmp_path, pdflatex):
    res, budget, cond, pick, study, sweep, values = design
    fig = tmp_path / "bars.png"
    figures.contribution_chart(budget, fig)
    tex = design_note(
        res,
        budget,
        values=values,
        conditions=[cond],
        choices=[pick],
        studies=[study],
        sweep=sweep,
        figures=[(fig, "Contributions")],
        standalone=True,
    )
    assert r"\toprule" in tex and "verification" in tex
    (tmp_path / "note.tex").write_text(tex, encoding="utf-8")
    assert pdflatex(tmp_path, "note.tex").stat().st_size > 1000


def test_docs_example_runs():
    # The worked example in docs/budget.md is a doctest; run it as written.
    result = doctest.testfile(
        str(DOCS),
        module_relative=False,
        optionflags=doctest.NORMALIZE_WHITESPACE | doctest.ELLIPSIS,
    )
    assert result.attempted > 0 and result.failed == 0
