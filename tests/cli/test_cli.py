"""The command line, run as users run it: ``python -m opsym ...`` in a subprocess.

Each subprocess costs about a second (importing SymPy), so the checks are grouped:
one run per example, and bad files checked together where one run can show it.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from opsym.cli import main

ROOT = Path(__file__).parents[2]
EXAMPLES = sorted((ROOT / "docs" / "examples").glob("*.toml"))

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


def test_report_writes_notes_and_figures(tmp_path):
    design = ROOT / "docs" / "examples" / "difference-amplifier.toml"
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

TIA = ROOT / "docs" / "examples" / "photodiode-transimpedance.toml"

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


def test_report_prints_and_writes_the_frequency_sections(tmp_path):
    from opsym.output import figures

    run = opsym(
        "report", str(TIA), "--markdown", str(tmp_path / "note.md"),
        "--latex", str(tmp_path / "note.tex"), "--standalone", "--figures", str(tmp_path / "fig"),
    )  # fmt: skip
    assert run.returncode == 0, run.stderr
    assert "Traceback" not in run.stderr
    out = run.stdout
    assert "Frequency response of V(out) from Iph, 10 Hz to 10 MHz" in out
    assert "−3 dB bandwidth" in out and "Gain and gain error of V(out) from Iph" in out
    assert "Noise budget at out, 100 mHz to 100 kHz" in out and "referred to the input" in out
    assert out.index("Error budget") < out.index("Frequency response") < out.index("Noise budget")
    md = (tmp_path / "note.md").read_text(encoding="utf-8")
    assert md.index("### Frequency response") < md.index("### Noise") < md.index("### Caution")
    assert "H(s) =" in md or "\\frac" in md
    tex = (tmp_path / "note.tex").read_text(encoding="utf-8")
    assert tex.index(r"\subsection*{Noise}") < tex.index(r"\subsection*{Caution}")
    drawn = {"contributions.png"}
    for name, file in [("bode_chart", "bode.png"), ("gain_error_chart", "gain-error.png"),
                       ("noise_density_chart", "noise-density.png")]:  # fmt: skip
        if hasattr(figures, name):
            drawn.add(file)
            assert f"fig/{file}" in md
        else:
            assert f"cannot draw {file}" in run.stderr
    assert {p.name for p in (tmp_path / "fig").iterdir()} == drawn
    if shutil.which("pdflatex"):  # the note compiles as written
        build = subprocess.run(
            ["pdflatex", "-interaction=nonstopmode", "-halt-on-error", "note.tex"],
            cwd=tmp_path, capture_output=True, text=True, timeout=120,
        )  # fmt: skip
        assert build.returncode == 0, build.stdout[-2000:]


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


def test_frequency_figures_and_formulas_are_called_as_documented(tmp_path, monkeypatch, capsys):
    """The report calls the figure and formula functions with their documented signatures."""
    import inspect

    from opsym.output import figures, latex

    calls: dict[str, dict] = {}

    def fake(name):
        def draw(first, path, **options):
            calls[name] = {"first": first, **options}
            Path(path).write_bytes(b"png")
            return Path(path)

        return draw

    documented = {
        "bode_chart": ("source", "f_start", "f_stop", "ideal"),
        "gain_error_chart": ("signal", "f_start", "f_stop"),
        "noise_density_chart": ("f_start", "f_stop", "top"),
    }
    for name, keywords in documented.items():
        real = getattr(figures, name, None)
        if real is not None:  # the real one exists: it takes the keywords the report passes
            assert set(keywords) <= set(inspect.signature(real).parameters), name
        monkeypatch.setattr(figures, name, fake(name), raising=False)
    monkeypatch.setattr(latex, "transfer_latex", lambda r, source=None: r"H_{x}(s)", raising=False)
    monkeypatch.setattr(latex, "noise_latex", lambda n: r"\[ e_{x} \]", raising=False)
    monkeypatch.setattr(figures, "contribution_chart", fake("contribution_chart"))
    md = tmp_path / "note.md"
    assert main(["report", str(TIA), "-q", "--figures", str(tmp_path / "f"), "--markdown",
                 str(md)]) == 0  # fmt: skip
    assert capsys.readouterr().err == ""
    assert calls["bode_chart"]["source"] == "Iph" and calls["bode_chart"]["ideal"] is True
    assert (calls["bode_chart"]["f_start"], calls["bode_chart"]["f_stop"]) == (10.0, 1e7)
    assert calls["gain_error_chart"]["signal"] == "Iph"
    assert (calls["noise_density_chart"]["f_start"], calls["noise_density_chart"]["f_stop"]) == (
        0.1,
        1e5,
    )
    assert calls["noise_density_chart"]["first"].names[0] == "Rf"  # a NoiseResult
    text = md.read_text(encoding="utf-8")
    assert "$$\nH_{x}(s)\n$$" in text and "$$\ne_{x}\n$$" in text
    for file in ("bode.png", "gain-error.png", "noise-density.png"):
        assert f"(../f/{file})" in text or f"(f/{file})" in text
