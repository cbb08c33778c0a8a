"""What ``opsym report`` notes say they were computed with: values, parameter sets,
the design's notes, the nominal operating point, and UTF-8 text kept intact.

Run as users run it, in a subprocess, under the plain C locale (no UTF-8 in the
environment) so that the files must be UTF-8 whatever the locale says.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

from designs import OLD_BRIDGE

ROOT = Path(__file__).parents[2]
TEXT = "Ω µ ‖ ° — é"

DESIGN = f"""\
title = "Gauge amplifier {TEXT}"
notes = "Notes: 350 Ω gauge, drift 2 µV/°C, R1 ‖ R2 — café ± 1 % ({TEXT})"
output = "out"
input = "Vin"
[resistors]
R1 = {{ between = ["in", "n"], value = "10k", tolerance = "0.1%", tcr = "25 ppm/°C" }}
R2 = {{ between = ["n", "out"], equals = "47*R1" }}
[voltage-sources]
Vin = {{ plus = "in", minus = "0", value = "-0.1 V" }}
[opamps.U1]
plus = "0"
minus = "n"
out = "out"
parameters = "generic precision bipolar"
"""


def run_c_locale(*args: str, cwd: Path) -> subprocess.CompletedProcess[bytes]:
    env = {k: v for k, v in os.environ.items()
           if not k.startswith(("LC_", "LANG", "PYTHONIOENCODING", "PYTHONUTF8"))}  # fmt: skip
    env.update({"PYTHONPATH": str(ROOT), "LC_ALL": "C", "LANG": "C", "PYTHONUTF8": "0",
                "PYTHONCOERCECLOCALE": "0", "PYTHONIOENCODING": "ascii"})  # fmt: skip
    return subprocess.run(
        [sys.executable, "-m", "opsym", *args], capture_output=True, cwd=cwd, env=env,
        timeout=120,
    )  # fmt: skip


def test_notes_state_every_value_and_keep_utf8_text(tmp_path, pdflatex):
    (tmp_path / "gauge.toml").write_text(DESIGN, encoding="utf-8")
    run = run_c_locale("report", "gauge.toml", "--markdown", "note.md", "--latex", "note.tex",
                       "--standalone", cwd=tmp_path)  # fmt: skip
    assert run.returncode == 0, run.stderr.decode("utf-8", "replace")
    out = run.stdout.decode("utf-8")  # standard output is UTF-8 even under an ASCII locale
    assert f"Gauge amplifier {TEXT}" in out and "R1 ‖ R2 — café" in out
    md = (tmp_path / "note.md").read_text(encoding="utf-8")
    assert md.startswith(f"## Design note: Gauge amplifier {TEXT}\n")
    assert f"R1 ‖ R2 — café ± 1 % ({TEXT})" in md and "?" not in md.split("### Conventions")[0]
    # Every value the note was computed with: element values with units, resistor grades,
    # the parameter set by name and the values taken from it (the budget's grade: max).
    assert "- resistor R1 (in-n) = 10 kΩ, tolerance 0.1 %, TCR 25 ppm/°C" in md
    assert "- resistor R2 (n-out) = 47*R1 = 470 kΩ" in md
    assert "- voltage source Vin (in-0) = -100 mV" in md
    assert "parameter set 'generic precision bipolar' (grade max, at 25 °C): Vos 25 µV" in md
    assert "Ib 2 nA" in md and "CMRR 120 dB" in md and "rails -15 V and 15 V" in md
    assert " A 1e+06 V/V" not in md  # an ideal op-amp takes no gain from the set
    # The nominal operating point: Vout = −R2/R1·Vin = −47·(−0.1 V) = 4.7 V [derived,
    # inverting stage with an ideal op-amp, so the set's A is not listed].
    assert "### Nominal operating point" in md and "V(out) = 4.7 V" in md
    assert "WARNING" not in md
    tex = (tmp_path / "note.tex").read_text(encoding="utf-8")
    assert r"\usepackage[utf8]{inputenc}" in tex and "café" in tex
    assert r"Gauge amplifier $\Omega$ \textmu{} $\parallel$ \textdegree{} --- é" in tex
    assert "10 k$\\Omega$" in tex and "generic precision bipolar" in tex
    pdflatex(tmp_path, "note.tex")




def test_report_warns_when_an_output_is_outside_its_rails(tmp_path, pdflatex):
    # The bridge example's old values: a balanced bridge leaves no current in R4, so
    # V(out) ≈ 1.25 V·(1 + R5/R6) = 126 V [derived, KCL], far past the ±15 V rails.
    (tmp_path / "bridge.toml").write_text(OLD_BRIDGE, encoding="utf-8")
    run = run_c_locale("report", "bridge.toml", "--markdown", "note.md", "--latex", "note.tex",
                       "--standalone", cwd=tmp_path)  # fmt: skip
    assert run.returncode == 0
    err, out = run.stderr.decode("utf-8"), run.stdout.decode("utf-8")
    assert "opsym: warning: bridge.toml: U1 output 124.8 V is outside its output range" in err
    assert "WARNING: U1 output 124.8 V" in out
    md = (tmp_path / "note.md").read_text(encoding="utf-8")
    assert "- **WARNING: U1 output 124.8 V is outside its output range -13.8 V to 13.8 V" in md
    tex = (tmp_path / "note.tex").read_text(encoding="utf-8")
    assert r"\textbf{WARNING: U1 output 124.8 V" in tex
    pdflatex(tmp_path, "note.tex")
    quiet = run_c_locale("report", "bridge.toml", "-q", cwd=tmp_path)
    assert quiet.stdout == b"" and b"opsym: warning:" in quiet.stderr  # even when quiet
