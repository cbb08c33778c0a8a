"""``opsym report`` with a ``[response]``: every op-amp loop's margins, and a warning
when the phase margin is under the threshold (45° by default, common practice).

The design: a non-inverting gain of 2 (R1 = R2 = 1 MΩ) with 100 pF from the − input
to ground and a single-pole op-amp (A0 = 10⁵, GBW = 10 MHz). Hand analysis:
β(s) = ½/(1 + s·(R1‖R2)·C), a pole at 1/(2π·500 kΩ·100 pF) ≈ 3.18 kHz in the loop
beside the op-amp's own at 100 Hz, so the phase margin is far under 45°.
"""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import pytest

from opsym.io.designfile import parse_design
from opsym.io.writer import dump_design
from opsym.study.design import run_design

ROOT = Path(__file__).parents[2]


def _design(threshold: str = "") -> str:
    return f"""\
title = "Input-capacitance stage"
output = "out"
[resistors]
R1 = {{ between = ["n", "0"], value = "1meg" }}
R2 = {{ between = ["n", "out"], value = "1meg" }}
[capacitors]
Cin = {{ between = ["n", "0"], value = "100p" }}
[voltage-sources]
Vin = {{ plus = "p", minus = "0", value = "0.1" }}
[opamps.U1]
plus = "p"
minus = "n"
out = "out"
gain = "pole"
A0 = "100k"
GBW = "10 MHz"
[response]
{threshold}
"""


def _hand_phase_margin() -> float:
    # T(jω) = (A0/2)/((1 + jω/ωa)(1 + jω/ωb)), ωa = 2π·100 Hz, ωb = 1/(500 kΩ·100 pF).
    fa, fb, t0 = 100.0, 1 / (2 * math.pi * 5e5 * 1e-10), 5e4
    qa, qb, qc = 1 / (fa * fb) ** 2, 1 / fa**2 + 1 / fb**2, 1 - t0**2
    fc = math.sqrt((-qb + math.sqrt(qb * qb - 4 * qa * qc)) / (2 * qa))
    return 180 - math.degrees(math.atan(fc / fa) + math.atan(fc / fb))


def test_study_flags_the_loop():
    study = run_design(parse_design(_design()))
    (loop,) = study.stability
    assert loop.opamp == "U1" and loop.threshold_deg == 45.0
    assert loop.margins.phase_margin_deg == pytest.approx(_hand_phase_margin(), abs=1e-6)
    assert loop.flagged


def test_threshold_from_the_file_and_round_trip():
    d = parse_design(_design("phase-margin = 1"))
    assert d.response.phase_margin == 1
    assert not run_design(d).stability[0].flagged  # PM ≈ 1.5° is above 1°
    assert parse_design(dump_design(d)).response.phase_margin == 1


def test_report_warns_and_notes_say_so(tmp_path, pdflatex):
    (tmp_path / "stage.toml").write_text(_design(), encoding="utf-8")
    run = subprocess.run(
        [sys.executable, "-m", "opsym", "report", "stage.toml", "--markdown", "note.md",
         "--latex", "note.tex", "--standalone"],
        capture_output=True, cwd=tmp_path, env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin"},
        timeout=120, text=True,
    )  # fmt: skip
    assert run.returncode == 0, run.stderr
    assert "warning" in run.stderr and "phase margin" in run.stderr and "U1" in run.stderr
    note = (tmp_path / "note.md").read_text(encoding="utf-8")
    assert "### Stability" in note and "**WARNING: op-amp U1: phase margin" in note
    assert "common practice" in note
    tex = (tmp_path / "note.tex").read_text(encoding="utf-8")
    assert r"\subsection*{Stability}" in tex and r"\textbf{WARNING: op-amp U1" in tex
    pdflatex(tmp_path, "note.tex")  # the section's text is valid LaTeX
