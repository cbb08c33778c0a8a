"""Long closed forms stay on the page (opsym.output.display).

A three-op-amp instrumentation amplifier with a finite open-loop gain on every
op-amp: its exact output has lines of several hundred characters. The note must
print the ideal form and the first-order correction instead, every display line
within :data:`~opsym.output.display.WIDTH` characters of LaTeX source, and
pdflatex must set it without an overfull box wider than a few points.

Independent expectations: the ideal differential gain of the three-op-amp
instrumentation amplifier with R1 = R2 = R, R3 = R5, R4 = R6 is
(1 + 2R/Rg)·R4/R3 (Horowitz & Hill, The Art of Electronics, 3rd ed., §5.15; from
memory); an op-amp stage's first-order gain error is −1/(A·β) with β its feedback
factor (Black's feedback formula, G = A/(1 + Aβ) ≈ (1/β)(1 − 1/(Aβ))), so the
difference stage U3 has 1/β = 1 + R4/R3 and the input stage U1, for the signal at
its own + pin, 1/β = 1 + R1/Rg.
"""

from __future__ import annotations

import re

import sympy as sp

import opsym
from opsym.output.display import WIDTH, first_order_latex

#: The widest overfull box tolerated, in points (common practice: a few pt go unseen).
OVERFULL_PT = 3.0


def _inamp(gain: str = "finite") -> opsym.Circuit:
    c = opsym.Circuit("three-op-amp instrumentation amplifier")
    c.voltage_source("Vp", "inp", "0")
    c.voltage_source("Vn", "inn", "0")
    c.resistor("R1", "a1", "g1")
    c.resistor("Rg", "g1", "g2")
    c.resistor("R2", "g2", "a2")
    c.opamp("U1", plus="inp", minus="g1", out="a1", gain=gain, bias=False)
    c.opamp("U2", plus="inn", minus="g2", out="a2", gain=gain, bias=False)
    c.resistor("R3", "a1", "m")
    c.resistor("R4", "m", "out")
    c.resistor("R5", "a2", "p")
    c.resistor("R6", "p", "0")
    c.opamp("U3", plus="p", minus="m", out="out", gain=gain, bias=False)
    return c


def _display_lines(tex: str) -> list[str]:
    return [line for block in re.findall(r"\\\[(.*?)\\\]", tex, re.S)
            for line in block.splitlines()]  # fmt: skip


def test_exact_form_is_long_on_main():
    """The premise: printed as it is, the exact form runs far past the budget."""
    res = _inamp().analyze("out")
    assert max(map(len, res.latex().splitlines())) > 3 * WIDTH


def test_instrumentation_amplifier_note_fits_the_page(tmp_path, pdflatex):
    res = _inamp().analyze("out")
    tex = opsym.design_note(res, fmt="latex", standalone=True)
    lines = _display_lines(tex)
    assert lines and max(map(len, lines)) <= WIDTH, max(lines, key=len)
    assert r"\beta_{\mathrm{U3}}" in tex and "ideal op-amps" in tex
    (tmp_path / "inamp.tex").write_text(tex, encoding="utf-8")
    pdflatex(tmp_path, "inamp.tex")
    log = (tmp_path / "inamp.log").read_text(encoding="latin-1")
    widths = [float(w) for w in re.findall(r"Overfull \\hbox \(([0-9.]+)pt too wide\)", log)]
    assert all(w <= OVERFULL_PT for w in widths), widths


def test_markdown_note_says_the_same():
    md = opsym.design_note(_inamp().analyze("out"), fmt="markdown")
    lines = [x for x in md.splitlines() if "\\" in x]
    assert max(map(len, lines)) <= WIDTH
    assert "first order in 1/A" in md


def test_ideal_differential_gain_matches_the_textbook():
    res = _inamp().analyze("out")
    r, rg, r3, r4 = sp.symbols("R Rg R3 R4", positive=True)
    ideal = res.ideal()
    diff = ideal.coefficient("Vp")
    equal = {"R1": r, "R2": r, "Rg": rg, "R3": r3, "R5": r3, "R4": r4, "R6": r4}
    subs = {sp.Symbol(n): v for n, v in equal.items()}
    symbols = {s.name: s for s in diff.free_symbols}
    diff = diff.xreplace({symbols[k.name]: v for k, v in subs.items() if k.name in symbols})
    # Vp drives the stage that feeds U3's − input: out = (Vn − Vp)·(1 + 2R/Rg)·R4/R3
    assert sp.simplify(diff + (1 + 2 * r / rg) * r4 / r3) == 0


def test_first_order_shares_are_one_over_a_beta():
    res = _inamp().analyze("out")
    blocks = first_order_latex(res, "Vp", res.symbol_latex())
    text = "\n".join(blocks)
    u3 = next(b for b in blocks[1:] if r"\beta_{\mathrm{U3}}" in b.split("=")[0])
    assert r"1 + \frac{R_{4}}{R_{3}}" in u3  # difference stage: 1/β = 1 + R4/R3
    u1 = next(b for b in blocks[1:] if r"\beta_{\mathrm{U1}}" in b.split("=")[0])
    assert r"\frac{R_{1}}{R_{g}} + 1" in u1  # input stage, own signal: 1 + R1/Rg
    assert text.count(r"\frac{1}{A_{\mathrm{U") == 3


def test_first_order_sum_matches_the_exact_error_numerically():
    """Σ −1/(A_k β_k) against the exact fractional error at A = 10⁵: equal to O(1/A²)."""
    res = _inamp().analyze("out")
    values = {"R1": 10e3, "R2": 10e3, "Rg": 1e3, "R3": 10e3, "R4": 10e3, "R5": 10e3,
              "R6": 10e3, "U1.A": 1e5, "U2.A": 1e5, "U3.A": 1e5}  # fmt: skip
    by_name = {s.name: s for c in res.terms.values() for s in c.free_symbols}
    numbers = {by_name[k]: v for k, v in values.items() if k in by_name}
    exact = float(res.gain_error("Vp").xreplace(numbers))
    first = float(res.gain_error("Vp", order=1).xreplace(numbers))
    assert abs(first - exact) <= 10 * exact**2
