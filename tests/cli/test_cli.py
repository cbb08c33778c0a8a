"""The command line, run as users run it: ``python -m opsym ...`` in a subprocess.

Each subprocess costs about a second (importing SymPy), so the checks are grouped:
one run per example, and bad files checked together where one run can show it.
"""

from __future__ import annotations

import math
import os
import subprocess
import sys
from pathlib import Path

import pytest

from opsym.cli import main

ROOT = Path(__file__).parents[2]
EXAMPLES = sorted((ROOT / "opsym" / "examples").glob("*.toml"))

GOOD = """\
title = "inverting"
output = "out"
[resistors]
R1 = { between = ["in", "n"], value = "10k" }
R2 = { between = ["n", "out"], value = "100k" }
R3 = { between = ["p", "0"], value = "9.1k" }
[voltage-sources]
Vin = { plus = "in", minus = "0", value = "0.1 V" }
[opamps.U1]
plus = "p"
minus = "n"
out = "out"
parameters = "generic precision bipolar"
[analysis]
nulls = ["U1.Ib by R3"]
"""


def opsym(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess[str]:
    env = {**os.environ, "PYTHONPATH": str(ROOT), "PYTHONIOENCODING": "utf-8"}
    return subprocess.run(
        [sys.executable, "-m", "opsym", *args],
        capture_output=True,
        text=True,
        encoding="utf-8",
        cwd=cwd or ROOT,
        env=env,
        timeout=120,
    )


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_report_every_example(path):
    run = opsym("report", str(path))
    assert run.returncode == 0, run.stderr
    assert "Terms of V(" in run.stdout
    assert "Traceback" not in run.stderr
    # Every shipped example states its nominal operating point and fits its rails.
    assert "Nominal operating point" in run.stdout and "node voltages: V(" in run.stdout
    assert "WARNING" not in run.stdout and "warning" not in run.stderr


def test_report_writes_notes_and_figures(tmp_path):
    design = ROOT / "opsym" / "examples" / "difference-amplifier.toml"
    run = opsym(
        "report", str(design), "--quiet",
        "--latex", str(tmp_path / "note.tex"), "--standalone",
        "--markdown", str(tmp_path / "notes" / "note.md"),
        "--figures", str(tmp_path / "fig"),
    )  # fmt: skip
    assert run.returncode == 0, run.stderr
    assert run.stdout == ""
    tex = (tmp_path / "note.tex").read_text(encoding="utf-8")
    assert r"\documentclass" in tex and "contributions.png" in tex
    md = (tmp_path / "notes" / "note.md").read_text(encoding="utf-8")
    assert "](../fig/contributions.png)" in md
    assert sorted(p.name for p in (tmp_path / "fig").iterdir()) == [
        "contributions.png",
        "monte-carlo-1.png",
        "monte-carlo-2.png",
    ]


def test_bad_files_exit_2_write_nothing_and_run_nothing(tmp_path):
    marker = tmp_path / "pwned"
    bad = {
        "unknown-key.toml": GOOD.replace('value = "10k" }', 'value = "10k", colour = "red" }'),
        "bad-value.toml": GOOD.replace('"10k"', '"10 kF"'),
        "floating.toml": GOOD.replace('minus = "n"', 'minus = "nowhere"'),
        "injection.toml": GOOD.replace(
            '"10k"', f'"__import__(\\"os\\").system(\\"touch {marker}\\")"'
        ),
        "not-toml.toml": GOOD.replace("= {", "= {{"),
    }
    for name, text in bad.items():
        (tmp_path / name).write_text(text, encoding="utf-8")
    # one process checks them all: each file gets its own one-paragraph message
    run = opsym("check", *sorted(bad), str(tmp_path / "missing.toml"), cwd=tmp_path)
    assert run.returncode == 2
    assert "Traceback" not in run.stderr
    lines = run.stderr.strip().splitlines()
    assert len(lines) == len(bad) + 1, run.stderr
    assert all(line.startswith("opsym: error: ") for line in lines)
    joined = run.stderr
    assert "unknown key 'colour'" in joined
    assert "does not fit" in joined
    assert "no DC path to ground" in joined
    assert "injection.toml [resistors.R1] value" in joined
    assert "not valid TOML" in joined
    assert "cannot read the design file" in joined
    assert not marker.exists()
    # report on a bad file: exit 2 and no output files
    run = opsym(
        "report", "injection.toml", "--markdown", "out.md", "--figures", "fig", cwd=tmp_path
    )
    assert run.returncode == 2 and "Traceback" not in run.stderr
    assert not (tmp_path / "out.md").exists() and not (tmp_path / "fig").exists()
    assert not marker.exists()


def test_check_good_file_and_help(tmp_path):
    (tmp_path / "good.toml").write_text(GOOD, encoding="utf-8")
    run = opsym("check", "good.toml", cwd=tmp_path)
    assert run.returncode == 0
    assert "good.toml: ok: 'inverting', 5 elements, output out" in run.stdout


# -- in-process: quick checks of the paths that need no fresh interpreter ------------------


@pytest.mark.parametrize("command", [[], ["demo"], ["check"], ["report"], ["rewrite"]])
def test_help_on_every_command(command, capsys):
    with pytest.raises(SystemExit) as info:
        main([*command, "--help"])
    assert info.value.code == 0
    assert "usage: opsym" in capsys.readouterr().out


def test_no_command_prints_help_and_exits_2(capsys):
    assert main([]) == 2
    assert "commands" in capsys.readouterr().err


def test_demo(capsys):
    assert main(["demo"]) == 0
    assert "R5 = R3*R4/(R3 + R4)" in capsys.readouterr().out


def test_report_summary_in_process(tmp_path, capsys):
    (tmp_path / "good.toml").write_text(GOOD, encoding="utf-8")
    assert main(["report", str(tmp_path / "good.toml")]) == 0
    out = capsys.readouterr().out
    assert "U1.Ib by R3: R3 = R1*R2/(R1 + R2)" in out
    assert "E96 9.09 kΩ" in out
    assert "Error budget" in out


def test_rewrite_prints_a_design_that_reads_back(tmp_path, capsys):
    (tmp_path / "good.toml").write_text(GOOD, encoding="utf-8")
    assert main(["rewrite", str(tmp_path / "good.toml")]) == 0
    text = capsys.readouterr().out
    (tmp_path / "again.toml").write_text(text, encoding="utf-8")
    assert main(["check", str(tmp_path / "again.toml")]) == 0


def test_budget_without_numbers_is_a_user_error(tmp_path, capsys):
    text = GOOD.replace(', value = "0.1 V" }', " }").replace("[analysis]", "[budget]\n[analysis]")
    text = text.replace('nulls = ["U1.Ib by R3"]', "")
    text = text.replace(
        'R1 = { between = ["in", "n"], value = "10k" }', 'R1 = { between = ["in", "n"] }'
    )
    (tmp_path / "f.toml").write_text(text, encoding="utf-8")
    assert main(["report", str(tmp_path / "f.toml")]) == 2
    err = capsys.readouterr().err
    assert err.startswith("opsym: error: ") and "R1" in err


def test_internal_faults_exit_1_with_a_bug_note(monkeypatch, capsys):
    import opsym.io.designfile as designfile

    def broken(path):
        raise RuntimeError("boom")

    monkeypatch.setattr(designfile, "load_design", broken)
    assert main(["check", "x.toml"]) == 1
    err = capsys.readouterr().err
    assert "internal error (RuntimeError: boom)" in err and "bug" in err


# -- frequency response and noise ------------------------------------------------------------

TIA = ROOT / "opsym" / "examples" / "photodiode-transimpedance.toml"

TIA_BAD_BASE = """\
output = "out"
[resistors]
Rf = { between = ["n", "out"], value = "1M" }
[capacitors]
Cf = { between = ["n", "out"], value = "1p" }
[current-sources]
Iph = { from = "0", into = "n", value = "1u" }
[opamps.U1]
plus = "0"
minus = "n"
out = "out"
gain = "pole"
A0 = "100k"
GBW = "10 MHz"
en = "8n"
fce = "100 Hz"
in = "1f"
[noise]
from = "1 Hz"
to = "10 kHz"
"""


def _after(text: str, marker: str) -> str:
    """What follows the last ``marker`` (which must be there)."""
    assert marker in text
    return text[text.rindex(marker) + len(marker) :]


def test_report_writes_the_frequency_and_noise_notes(tmp_path, pdflatex):
    from opsym.output.notes import CAUTION

    run = opsym(
        "report", str(TIA), "--latex", "note.tex", "--markdown", "note.md", "--figures", "figs/",
        cwd=tmp_path,
    )  # fmt: skip
    assert run.returncode == 0, run.stderr
    assert "Traceback" not in run.stderr and "cannot draw" not in run.stderr
    out = run.stdout
    assert "Frequency response of V(out) from Iph, 10 Hz to 10 MHz" in out
    assert "−3 dB bandwidth" in out and "Gain and gain error of V(out) from Iph" in out
    assert "Noise budget at out, 100 mHz to 100 kHz" in out and "referred to the input" in out
    assert out.index("Error budget") < out.index("Frequency response") < out.index("Noise budget")
    figures = ["bode.png", "contributions.png", "gain-error.png", "noise-density.png"]
    assert sorted(p.name for p in (tmp_path / "figs").iterdir()) == figures
    assert all((tmp_path / "figs" / f).stat().st_size > 1000 for f in figures)

    md = (tmp_path / "note.md").read_text(encoding="utf-8")
    frequency, noise = md.index("### Frequency response"), md.index("### Noise")
    assert frequency < noise < md.index("### Caution")
    assert _after(md, "### Caution").strip() == CAUTION  # the caution is last
    # An ideal transimpedance stage: V(out)/Iph = -Rf = -1 MΩ at DC [from memory: any
    # op-amp text, the inverting current-to-voltage converter].
    assert r"H(s) = \frac{V_{\mathrm{out}}}{I_{\mathrm{ph}}} = -999999" in md
    assert "- Bandwidth (−3 dB): " in md[frequency:noise]
    # The response table: DC, the grid (10 Hz ... 10 MHz, one a decade) and the `at`
    # frequencies (1, 10, 100 kHz, on the grid), each once, with |H/H_ideal - 1|.
    rows = [line.split("|")[1].strip() for line in md[frequency:noise].splitlines()
            if line.startswith("| ") and "Hz" in line.split("|")[1]]  # fmt: skip
    assert rows == ["0 Hz", "10 Hz", "100 Hz", "1 kHz", "10 kHz", "100 kHz", "1 MHz", "10 MHz"]
    # DC gain error of an inverting stage: 1/(A0·β) with β = Rsh/(Rf + Rsh) ≈ 1, A0 = 120 dB
    # -> 1 ppm [from memory: loop-gain error 1/(1 + Aβ), e.g. Franco, op-amp chapter].
    assert "| 0 Hz | 1 MΩ | 180.00° | 1 ppm |" in md
    for file in ("bode.png", "gain-error.png"):
        assert frequency < md.index(f"](figs/{file})") < noise  # in their section
    assert noise < md.index("](figs/noise-density.png)") < md.index("### Caution")
    assert "](figs/contributions.png)" in md
    # The noise budget: Rf's Johnson noise sqrt(4kTR) at 35 °C (308.15 K), k exact (BIPM SI
    # Brochure, 9th ed.; reference-checks case 13), over 0.1 Hz-100 kHz through |H| <= 1:
    # at most sqrt(4kTR·Δf) = 41.25 µV, and more than 90 % of it (|H(100 kHz)| = 0.93).
    assert "\\begin{aligned}" in md[noise:] and "S(f) &= 4 k T\\, R_{f}" in md
    row = next(line for line in md[noise:].splitlines() if line.startswith("| Rf |"))
    rf_rms = float(row.split("|")[3].split()[0]) * 1e-6
    bound = (4 * 1.380649e-23 * 308.15 * 1e6 * (1e5 - 0.1)) ** 0.5
    assert 0.9 * bound < rf_rms < bound
    assert "**peak-to-peak estimate**" in md and "**referred to the input**" in md

    tex = (tmp_path / "note.tex").read_text(encoding="utf-8")
    assert r"\documentclass" not in tex  # without --standalone: a part to \input
    assert tex.index(r"\subsection*{Frequency response}") < tex.index(r"\subsection*{Noise}")
    assert _after(tex, r"\subsection*{Caution}").strip() == CAUTION
    assert r"H(s) = \frac{V_{\mathrm{out}}}{I_{\mathrm{ph}}}" in tex
    assert "Noise budget at out, 100 mHz to 100 kHz" in tex
    for file in figures:
        assert r"\includegraphics[width=0.8\linewidth]{figs/" + file + "}" in tex
    (tmp_path / "wrap.tex").write_text(
        "\\documentclass{article}\n\\usepackage{textcomp,amsmath,booktabs,graphicx}\n"
        "\\usepackage[margin=2cm]{geometry}\n\\begin{document}\n\\input{note.tex}\n"
        "\\end{document}\n",
        encoding="utf-8",
    )
    pdflatex(tmp_path, "wrap.tex")


def test_standalone_frequency_note_compiles(tmp_path, pdflatex):
    note = tmp_path / "alone.tex"
    assert main(["report", str(TIA), "-q", "--latex", str(note), "--standalone"]) == 0
    tex = note.read_text(encoding="utf-8")
    assert tex.rstrip().endswith(r"\end{document}")
    assert r"\subsection*{Noise}" in tex and r"\begin{aligned}" in tex
    pdflatex(tmp_path, "alone.tex")


def test_figures_without_matplotlib_are_a_user_error(tmp_path, monkeypatch, capsys):
    import sys as system

    (tmp_path / "f.toml").write_text(TIA_BAD_BASE, encoding="utf-8")
    for module in ("matplotlib.figure", "matplotlib.backends.backend_agg"):
        monkeypatch.setitem(system.modules, module, None)  # importing them now fails
    args = ["report", str(tmp_path / "f.toml"), "-q", "--figures", str(tmp_path / "fig"),
            "--markdown", str(tmp_path / "note.md")]  # fmt: skip
    assert main(args) == 2
    err = capsys.readouterr().err
    assert err.startswith("opsym: error: figures need matplotlib") and "pip install" in err
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    assert not (tmp_path / "fig").exists() and not (tmp_path / "note.md").exists()


def test_noise_plot_band_is_finite():
    from types import SimpleNamespace as S

    from opsym.output.report import noise_plot_band as _noise_plot_band

    def band(f_start, f_stop, response=None):
        return _noise_plot_band(S(noise=S(f_start=f_start, f_stop=f_stop), response=response))

    inf = float("inf")
    assert band(0.1, 1e5) == (0.1, 1e5)  # a finite band is drawn as given
    assert band(0.1, inf, S(f_stop=1e6)) == (0.1, 1e6)  # to ∞: to the response's end
    assert band(0.0, inf) == (1.0, 1e7)  # from 0 Hz: from 1 Hz, on a log axis
    assert band(0.0, 1e3) == (1e-3, 1e3)  # six decades below a low top


def test_bad_frequency_tables_exit_2_naming_the_field(tmp_path):
    bad = {
        "negative-gbw.toml": (TIA_BAD_BASE.replace('"10 MHz"', '"-10 MHz"'),
                              "[opamps.U1] GBW (line 14): GBW = -10000000 must be positive"),
        "noise-key.toml": (TIA_BAD_BASE + "bandwidth = 3\n",
                           "[noise] (line 21): unknown key 'bandwidth'"),
        "to-below-from.toml": (TIA_BAD_BASE.replace('"10 kHz"', '"0.5 Hz"'),
                               "[noise] to (line 20): 1/2 Hz is not above 'from'"),
        "corner-from-zero.toml": (TIA_BAD_BASE.replace('from = "1 Hz"', "from = 0"),
                                  "[noise] from (line 19): a band from 0 Hz: the 1/f noise"),
    }  # fmt: skip
    for name, (text, _) in bad.items():
        (tmp_path / name).write_text(text, encoding="utf-8")
    run = opsym("check", *sorted(bad), cwd=tmp_path)
    assert run.returncode == 2 and "Traceback" not in run.stderr
    lines = run.stderr.strip().splitlines()
    assert len(lines) == len(bad), run.stderr
    for name, (_, message) in bad.items():
        assert any(line.startswith(f"opsym: error: {name} ") and message in line
                   for line in lines), (name, run.stderr)  # fmt: skip
    # found only when the noise is integrated: a flat density to infinity
    (tmp_path / "flat.toml").write_text(
        'output = "a"\n[resistors]\nR1 = { between = ["a", "0"], value = "1k" }\n'
        '[current-sources]\nI1 = { from = "0", into = "a", value = 0 }\n'
        '[noise]\nfrom = "1 Hz"\nto = "inf"\n',
        encoding="utf-8",
    )
    run = opsym("report", "flat.toml", "--markdown", "out.md", cwd=tmp_path)
    assert run.returncode == 2 and "Traceback" not in run.stderr
    assert run.stderr.startswith("opsym: error: flat.toml [noise] to: ")
    assert len(run.stderr.strip().splitlines()) == 1
    assert not (tmp_path / "out.md").exists()


def test_noise_without_densities_is_a_user_error(tmp_path, capsys):
    (tmp_path / "f.toml").write_text(TIA_BAD_BASE.replace('en = "8n"\nfce = "100 Hz"\n', ""),
                                     encoding="utf-8")  # fmt: skip
    assert main(["report", str(tmp_path / "f.toml")]) == 2
    err = capsys.readouterr().err
    assert err.startswith("opsym: error: ") and "[noise]" in err and "U1.en" in err
    assert "en_typ" in err and "Traceback" not in err


# -- high-pass, band-pass and AC-coupled designs -----------------------------------------

AC_COUPLED = """\
title = "AC-coupled non-inverting x11"
output = "out"
[voltage-sources]
Vin = { plus = "in", minus = "0", value = "1 V" }
[capacitors]
C1 = { between = ["in", "p"], value = "1u" }
[resistors]
R3 = { between = ["p", "0"], value = "100k" }
R1 = { between = ["n", "0"], value = "1k" }
R2 = { between = ["n", "out"], value = "10k" }
[opamps.U1]
plus = "p"
minus = "n"
out = "out"
gain = "pole"
A0 = "100 dB"
GBW = "10 MHz"
[response]
at = ["1 kHz"]
"""

MFB_BAND_PASS = """\
title = "MFB band-pass"
output = "out"
[voltage-sources]
Vin = { plus = "in", minus = "0", value = "1 V" }
[resistors]
R1 = { between = ["in", "a"], value = "10k" }
R3 = { between = ["n", "out"], value = "1M" }
[capacitors]
C1 = { between = ["a", "n"], value = "10n" }
C2 = { between = ["a", "out"], value = "10n" }
[opamps.U1]
plus = "0"
minus = "n"
out = "out"
gain = "pole"
A0 = "120 dB"
GBW = "10 MHz"
[response]
from = "1 Hz"
to = "100 kHz"
"""


def _number(text: str, before: str, after: str) -> float:
    """The number between ``before`` and ``after`` in ``text``, SI prefix applied."""
    from opsym.numeric.units import parse_quantity

    start = text.index(before) + len(before)
    return parse_quantity(text[start : text.index(after, start)].strip(), where=before)


def test_ac_coupled_stage_gets_a_note_and_figures(tmp_path):
    # The ideal gain is zero at 0 Hz, so the gain error is quoted in the passband (main:
    # "the ideal gain from Vin is zero at some frequency", no note, no figures).
    (tmp_path / "ac.toml").write_text(AC_COUPLED, encoding="utf-8")
    run = opsym("report", "ac.toml", "--markdown", "note.md", "--figures", "figs", cwd=tmp_path)
    assert run.returncode == 0, run.stderr
    assert sorted(p.name for p in (tmp_path / "figs").iterdir()) == ["bode.png", "gain-error.png"]
    md = (tmp_path / "note.md").read_text(encoding="utf-8")
    line = next(x for x in md.splitlines() if x.startswith("- Response (exact"))
    # Lower edge: the input RC high-pass, 1/(2π·R3·C1) = 1.5915 Hz (Horowitz & Hill, RC
    # filters [mem]). Upper edge: the single-pole closed loop, (GBW/A0)·(1 + A0·β) =
    # 909.19 kHz with β = 1/11, A0 = 1e5, about GBW/NG (Franco, ch. 6 [mem]).
    f1 = _number(line, "−3 dB at ", " and")
    f2 = _number(line, " and ", " (re")
    assert f1 == pytest.approx(1 / (2 * math.pi * 1e5 * 1e-6), rel=1e-3)
    assert f2 == pytest.approx(1e2 * (1 + 1e5 / 11), rel=1e-4)
    # Gain error −1/(1 + A(jω)·β), A = A0/(1 + j·f·A0/GBW) (Franco, ch. 1 and 6 [mem]),
    # quoted at the geometric middle of the passband, √(f1·f2).
    gain_line = next(x for x in md.splitlines() if x.startswith("- Gain error at f = "))
    f = math.sqrt(1 / (2 * math.pi * 0.1) * 1e2 * (1 + 1e5 / 11))
    assert _number(gain_line, "f = ", " (passband)") == pytest.approx(f, rel=1e-3)
    a = 1e5 / (1 + 1j * f * 1e5 / 1e7)
    want = abs(1 / (1 + a / 11))
    assert _number(gain_line, "(passband): ", " %") / 100 == pytest.approx(want, rel=1e-3)
    assert "| 0 Hz | 0 V/V |" in md and "| n/a |" in md  # no error where the ideal is 0


def test_band_pass_design_note_has_its_figures_of_merit(tmp_path):
    # Multiple-feedback band-pass with C1 = C2 = C: f0 = 1/(2π·C·√(R1·R3)) = 159.15 Hz,
    # Q = ½·√(R3/R1) = 5, centre gain −R3/(2·R1) = −50 (Schaumann & Van Valkenburg,
    # "Design of Analog Filters", MFB band-pass [mem]); GBW = 10 MHz moves them < 0.1 %.
    (tmp_path / "mfb.toml").write_text(MFB_BAND_PASS, encoding="utf-8")
    note = tmp_path / "note.md"
    assert main(["report", str(tmp_path / "mfb.toml"), "-q", "--markdown", str(note)]) == 0
    md = note.read_text(encoding="utf-8")
    line = next(x for x in md.splitlines() if x.startswith("- Response (exact"))
    assert "band-pass" in line
    f0, q = 1 / (2 * math.pi * 1e-8 * 1e5), 5.0
    assert _number(line, "f0 = ", ",") == pytest.approx(f0, rel=1e-3)
    assert float(line.rsplit("Q = ", 1)[1].rstrip(".")) == pytest.approx(q, rel=1e-3)
    assert _number(line, "|H(f0)| = ", ",") == pytest.approx(50.0, rel=1e-3)
    root = math.sqrt(1 + 1 / (4 * q * q))  # second-order edges f0·(√(1 + 1/4Q²) ∓ 1/2Q)
    assert _number(line, "−3 dB at ", " and") == pytest.approx(f0 * (root - 0.1), rel=1e-3)
    assert _number(line, " and ", " (re") == pytest.approx(f0 * (root + 0.1), rel=1e-3)
    # The gain error is quoted at the ideal response's centre, 159.2 Hz.
    assert "- Gain error at f = 159.2 Hz (passband): " in md


def test_check_prints_what_a_netlist_reader_skipped(capsys, tmp_path):
    # A netlist carries simulator lines opsym does not use; `check` lists them so the
    # engineer sees what was left out before trusting the numbers.
    (tmp_path / "amp.cir").write_text(
        "inverting stage\nR1 in n 10k\nR2 n out 100k\nV1 in 0 AC 1\n"
        "E1 out 0 0 n 1meg\n.tran 1u 1m\n.end\n",
        encoding="utf-8",
    )
    assert main(["check", str(tmp_path / "amp.cir"), "--output", "out"]) == 0
    shown = capsys.readouterr().out
    assert ": ok: 'inverting stage'" in shown
    assert "  note: Netlist line 6 (.tran)" in shown
