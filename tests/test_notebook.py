"""The shipped notebook, docs/examples/tour.ipynb, runs cell by cell and its numbers hold.

The notebook is our own example: its JSON is read with the standard library and
each code cell's source is run in order in one namespace, as a kernel would
(no Jupyter needed). Its numbers are checked against hand formulas, sources named.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
import sympy as sp

NOTEBOOK = Path(__file__).resolve().parents[1] / "docs" / "examples" / "tour.ipynb"


@pytest.fixture(scope="module")
def tour():
    pytest.importorskip("matplotlib")
    nb = json.loads(NOTEBOOK.read_text(encoding="utf-8"))
    assert nb["nbformat"] == 4
    namespace: dict = {}
    for cell in nb["cells"]:
        if cell["cell_type"] == "code":
            code = compile("".join(cell["source"]), f"{NOTEBOOK.name} cell {cell['id']}", "exec")
            exec(code, namespace)  # our own shipped example, not user text
    return namespace


def test_notebook_has_prose_between_the_code():
    nb = json.loads(NOTEBOOK.read_text(encoding="utf-8"))
    kinds = [c["cell_type"] for c in nb["cells"]]
    assert kinds[0] == "markdown" and kinds.count("markdown") >= 4 and "code" in kinds
    # Shipped without outputs: the notebook is run by the reader (and by this test).
    assert all(not c.get("outputs") for c in nb["cells"] if c["cell_type"] == "code")


def test_closed_form_and_null(tour):
    R1, R2 = sp.Symbol("R1", positive=True), sp.Symbol("R2", positive=True)
    res = tour["res"]
    # Offset referred to the output by the noise gain 1 + R2/R1 (Franco, Design with
    # Operational Amplifiers, ch. 5; from memory).
    assert sp.simplify(res.coefficient("U1.Vos") - (1 + R2 / R1)) == 0
    # Bias-current cancellation at R3 = R1 ‖ R2 (same source).
    assert sp.simplify(tour["null"].rhs - R1 * R2 / (R1 + R2)) == 0


def test_budget_numbers_and_tables(tour):
    budget = tour["budget"]
    noise_gain = 1 + 100e3 / 4.99e3
    vos = budget.row("U1.Vos")
    assert math.isclose(abs(vos.output), 5e-3 * noise_gain, rel_tol=1e-9)
    # Worst case is the sum of magnitudes, RSS the root of the sum of squares.
    assert math.isclose(budget.worst_case, sum(r.magnitude for r in budget.rows), rel_tol=1e-12)
    assert math.isclose(budget.rss, math.sqrt(sum(r.magnitude**2 for r in budget.rows)),
                        rel_tol=1e-12)  # fmt: skip
    # Notebook views: the symbols in Result's notation.
    vos_latex = tour["res"].symbol_latex()[sp.Symbol("U1.Vos", real=True)]
    for shown in (budget, tour["sweep"]):
        assert f"${vos_latex}$" in shown._repr_html_()
        assert f"${vos_latex}$" in shown._repr_markdown_()
    study = tour["study"]
    assert math.isclose(study.nominal, -100e3 / 4.99e3, rel_tol=1e-12)
    assert "<table>" in study._repr_html_()


def test_frequency_noise_and_figures(tour):
    # Single-pole op-amp: closed-loop bandwidth = GBW / noise gain, exact for A0 → ∞
    # (Franco, ch. 6, from memory); with A0 = 1e5 and NG ≈ 21 it differs by ~2e-4.
    noise_gain = 1 + 100e3 / 4.99e3
    assert math.isclose(tour["bandwidth"], 1e6 / noise_gain, rel_tol=1e-3)
    nb = tour["nb"]
    assert math.isclose(nb.total, math.sqrt(sum(r.rms**2 for r in nb.rows)), rel_tol=1e-9)
    assert r"$e_{\mathrm{n},\mathrm{R1}}$" in nb._repr_markdown_()
    # R1's thermal noise at the output: √(4kTR1·Δf)·R2/R1 over 1 Hz–1 kHz
    # (Johnson–Nyquist; k exact in the 2019 SI), the loop gain flat below 1 kHz.
    k, t = 1.380649e-23, 298.15
    r1 = next(r for r in nb.rows if r.name == "R1")
    expected = math.sqrt(4 * k * t * 4.99e3 * 999.0) * 100e3 / 4.99e3
    assert math.isclose(r1.rms, expected, rel_tol=2e-3)
    fig, bode = tour["fig"], tour["bode"]
    assert len(fig.axes) == 2 and all(ax.has_data() for ax in fig.axes)
    assert bode.axes[1].get_xlabel() == "frequency (Hz)"


def test_shipped_examples_listed(tour):
    assert "inverting-bias-compensation" in tour["example_names"]()
    assert tour["design"].title
