"""The noise sum as LaTeX and the budget as Markdown (opsym.output.noise)."""

from __future__ import annotations

import math
import re

import opsym
from opsym.model.symbols import latex_name, opamp_symbol, thermal_symbol
from opsym.output.noise import noise_latex, noise_markdown


def inverting_noise(values=None):
    c = opsym.Circuit("inverting x10")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", bias=False)
    return c.noise("out", values=values)


def rows(text: str) -> dict[str, str]:
    """``{source LaTeX: the H(s) line}`` of a noise block."""
    out = {}
    for line in text.splitlines()[2:-1]:
        m = re.match(r"\\frac\{V_\{\\mathrm\{out\}\}\}\{(.+?)\}\(s\) &= (.+), & S\(f\) &= (.+?)"
                     r"(?: \\\\)?$", line)  # fmt: skip
        assert m, line
        out[m.group(1)] = (m.group(2), m.group(3))
    return out


def test_noise_block_lists_every_source_with_its_transfer():
    text = noise_latex(inverting_noise())
    assert text.startswith("\\begin{aligned}\n") and text.endswith("\n\\end{aligned}")
    assert r"e_{\mathrm{out}}^{2}(f) &= \sum_{k} \left|H_{k}(j 2\pi f)\right|^{2} S_{k}(f)" in text
    assert r"T = 298.15\,\mathrm{K}" in text  # 25 °C + 273.15 (SI)
    got = rows(text)
    sources = [thermal_symbol("R1"), thermal_symbol("R2"), opamp_symbol("U1", "en"),
               opamp_symbol("U1", "in+"), opamp_symbol("U1", "in-")]  # fmt: skip
    assert list(got) == [latex_name(x) for x in sources]
    # R1's noise voltage sees the signal gain -R2/R1, R2's appears directly at the output,
    # en sees the noise gain 1 + R2/R1, in- flows through R2 and in+ into a grounded pin
    # (noise gain: Jung (ed.), Op Amp Applications Handbook, ch. 1 [from memory]; case 6).
    assert got[r"e_{\mathrm{n},\mathrm{R1}}"] == (r"-\frac{R_{2}}{R_{1}}", r"4 k T\, R_{1}")
    assert got[r"e_{\mathrm{n},\mathrm{R2}}"][0] == "1"
    assert got[r"e_{\mathrm{n},\mathrm{U1}}"] == (
        r"1 + \frac{R_{2}}{R_{1}}", r"e_{\mathrm{n},\mathrm{U1}}^{2}"
    )
    assert got[r"i_{\mathrm{n+},\mathrm{U1}}"][0] == "0"
    assert got[r"i_{\mathrm{n-},\mathrm{U1}}"] == ("R_{2}", r"i_{\mathrm{n},\mathrm{U1}}^{2}")


def test_noise_block_of_transimpedance_has_poles_and_corners(tia_noise):
    with_corners = tia_noise.subs({"U1.fce": "100", "U1.fci": "1k"})
    got = rows(noise_latex(with_corners))
    h_rf, s_rf = got[r"e_{\mathrm{n},\mathrm{Rf}}"]
    # The 1/f corners appear once given: S = en²·(1 + fce/f) [common practice].
    assert got[r"e_{\mathrm{n},\mathrm{U1}}"][1] == (
        r"e_{\mathrm{n},\mathrm{U1}}^{2} \left(1 + \frac{f_{\mathrm{ce},\mathrm{U1}}}{f}\right)"
    )
    assert s_rf == r"4 k T\, R_{f}"
    # Rf's noise reaches the output with gain A0/(1 + A0) = 0.99999 at DC, over the two
    # closed-loop poles; en's has the zero of the noise gain at 1/(2π·Rf·(Cd + Cf))
    # = 3.2349 kHz [derived: noise gain 1 + Zf/Zin].
    assert h_rf.startswith(r"0.99999 \cdot \frac{1}{\left(1 + \frac{s}{2\pi")
    zero = 1 / (2 * math.pi * 1e6 * (47e-12 + 2.2e-12))
    assert f"{zero / 1e3:.5g}" == "3.2349"
    h_en = got[r"e_{\mathrm{n},\mathrm{U1}}"][0]
    assert r"1 + \frac{s}{2\pi \cdot 3.2349\,\mathrm{kHz}}" in h_en


def test_noise_markdown_table_rows():
    n = inverting_noise({"R1": "1k", "R2": "10k", "U1.en": "8n", "U1.in": "1p"})
    md = noise_markdown(n.budget(0, 10e3))
    assert md == n.budget(0, 10e3).to_markdown()
    lines = md.splitlines()
    assert lines[0] == "**Noise budget at out, 0 Hz to 10 kHz**"
    assert lines[2] == "| source | what | output rms | share of power |"
    body = {line.split(" | ")[0][2:]: line for line in lines[4:9]}
    assert set(body) == {"U1.en", "R1", "R2", "U1.in-", "U1.in+"}
    # Case 13: 10 kΩ over 10 kHz gives 1.283 µV rms at 298.15 K (BIPM SI Brochure 2019);
    # R2's noise has gain 1. en: 8 nV/√Hz × noise gain 11 × √10 kHz = 8.8 µV [derived].
    assert body["R2"].startswith("| R2 | thermal noise √(4kTR) of R2 | 1.283 µV |")
    assert body["U1.en"].startswith("| U1.en | voltage noise en of U1 | 8.8 µV |")
    assert "| **total** | **root-sum-square** |" in md
    # Peak-to-peak as 6.6 × RMS: common practice, stated as such in the table notes.
    assert "common practice" in md and "**64.85 µV p-p**" in md

