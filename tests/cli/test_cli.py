"""The command line, run as users run it: ``python -m opsym ...`` in a subprocess.

Each subprocess costs about a second (importing SymPy), so the checks are grouped:
one run per example, and bad files checked together where one run can show it.
"""

from __future__ import annotations

import os
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
