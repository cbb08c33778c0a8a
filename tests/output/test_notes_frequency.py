"""Design notes with frequency-response and noise sections (opsym.output.notes, sections)."""

from __future__ import annotations

import shutil
import subprocess

import pytest

import opsym
from opsym.errors import BudgetError, InvalidValueError
from opsym.output import figures
from opsym.output.notes import CAUTION, design_note
from opsym.output.sections import FrequencySection, NoiseSection, response_table


def test_response_table_of_single_pole_stage(inverting):
    table = response_table(inverting, [0, 1e4, inverting.bandwidth()])
    assert table.headers == ("frequency", "|H|", "phase", "|H/H_ideal − 1|")
    dc, mid, corner = table.rows
    # DC: 10·A0β/(1 + A0β) = 9.99945 V/V, error 1/(1 + A0β) = 55 ppm (reference case 5).
    assert dc == ("0 Hz", "9.99945 V/V", "180.00°", "55 ppm")
    # 10 kHz: |error| ≈ f·NG/GBW = 3.67 % (Franco ch. 6 [from memory]); exact 3.664 %.
    assert mid[0] == "10 kHz" and mid[3] == "3.664 %"
    # At the −3 dB corner of a single pole: |H| = H(0)/√2 and 45° of lag (Bode [from memory]).
    assert corner[1] == f"{9.99945 / 2**0.5:.6g} V/V" and corner[2] == "135.00°"


def test_frequency_section_defaults(inverting, tia):
    section = FrequencySection(inverting)
    # DC, whole decades from three below the 272.7 kHz bandwidth, then the bandwidth.
    assert section.points == (0.0, 100.0, 1e3, 1e4, 1e5, section.bandwidth)
    md = section.markdown()
    assert md.startswith("### Frequency response\n\n$$\nH(s) = ")
    assert "- Bandwidth (−3 dB): 272.7 kHz." in md
    assert "| 100 kHz |" in md
    # The transimpedance gain is in ohms: Rf·A0/(1 + A0) = 999.99 kΩ at DC.
    assert "| 0 Hz | 999.99 kΩ | 180.00° | 10 ppm |" in FrequencySection(tia).markdown()


def test_sections_reject_wrong_inputs(tia_noise):
    c = opsym.Circuit("dc only")
    c.voltage_source("Vin", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out")
    with pytest.raises(InvalidValueError, match="domain='s'"):
        FrequencySection(c.analyze("out"))
    with pytest.raises(InvalidValueError, match="f_low"):
        NoiseSection(tia_noise, 1e3, 10.0)
    with pytest.raises(BudgetError, match="FrequencySection"):
        design_note(c.analyze("out"), frequency=c.analyze("out", domain="s"))
    with pytest.raises(BudgetError, match="NoiseSection"):
        design_note(c.analyze("out"), noise=tia_noise)


@pytest.fixture(scope="module")
def tia_note_parts(tia, tia_noise, tmp_path_factory):
    d = tmp_path_factory.mktemp("tia_note")
    bode, error, density = d / "bode.png", d / "gain_error.png", d / "noise.png"
    figures.bode_chart(tia, bode)  # each returns its Figure; the note takes the path
    figures.gain_error_chart(tia, error)
    figures.noise_density_chart(tia_noise, density, top=2)
    frequency = FrequencySection(tia, figures=[(bode, "Bode plot"), (error, "Gain error")])
    noise = NoiseSection(tia_noise, 1.0, 1e6, figures=[(density, "Output noise density")])
    return d, frequency, noise


def test_markdown_note_with_both_sections(tia, tia_note_parts):
    _, frequency, noise = tia_note_parts
    md = design_note(tia, frequency=frequency, noise=noise, fmt="markdown")
    headings = [line for line in md.splitlines() if line.startswith("### ")]
    assert headings == ["### Record", "### Circuit", "### Conventions", "### Symbolic terms",
                        "### Frequency response", "### Noise", "### Caution"]  # fmt: skip
    assert md.rstrip().endswith(CAUTION)  # the caution stays last
    assert "single-pole open-loop gain A0/(1 + s·A0/(2π·GBW))" in md
    assert "A0 = 100000, GBW = 10 MHz" not in md  # values= not given: no parameters listed
    assert "![Bode plot](" in md and "![Output noise density](" in md
    noise_part = md[md.index("### Noise"):md.index("### Caution")]
    assert r"\frac{V_{\mathrm{out}}}{e_{\mathrm{n},\mathrm{Rf}}}(s)" in noise_part
    assert "| U1.en | voltage noise en of U1 |" in noise_part
    assert "peak-to-peak ≈ 6.6 × RMS" in noise_part and "common practice" in noise_part


def test_latex_note_with_both_sections_compiles(tia, tia_note_parts, pdflatex):
    d, frequency, noise = tia_note_parts
    values = {"U1.A0": "100k", "U1.GBW": "10M", "U1.en": "12n", "U1.in": "3f"}
    tex = design_note(tia, values=values, frequency=frequency, noise=noise, standalone=True)
    order = [r"\subsection*{Symbolic terms}", r"\subsection*{Frequency response}",
             r"\subsection*{Noise}", r"\subsection*{Caution}"]  # fmt: skip
    positions = [tex.index(h) for h in order]
    assert positions == sorted(positions)
    assert tex.index(r"\subsection*{Caution}") > tex.rindex(r"\includegraphics")
    assert r"GBW = 10 MHz, en = 12 nV/$\surd$Hz" in tex
    (d / "note.tex").write_text(tex, encoding="utf-8")
    pdflatex(d, "note.tex")
    log = (d / "note.log").read_text(encoding="utf-8", errors="replace")
    assert "Overfull \\hbox" not in log  # the formulas and tables fit the page
    if shutil.which("pdftotext"):
        text = subprocess.run(["pdftotext", "note.pdf", "-"], cwd=d, capture_output=True,
                              text=True, timeout=60).stdout  # fmt: skip
        flat = " ".join(text.split())
        for phrase in ("Frequency response", "Bandwidth (−3 dB): 84.82 kHz",
                       "Noise budget at out, 1 Hz to 1 MHz", "Caution"):  # fmt: skip
            assert phrase in flat
        assert flat.rindex("Caution") > flat.index("Noise budget")
