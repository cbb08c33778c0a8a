"""The note's record (file, revision, date, tool version, parameter sets) and the
PASS/FAIL line of a ``[requirement]``, from a design file and from Python.

The numbers are worked by hand. An inverting amplifier R2/R1 = 10k/1k whose op-amp
carries only its offset: the offset reaches the output times the noise gain
1 + R2/R1 = 11 (the standard inverting-amplifier result, e.g. Horowitz & Hill,
The Art of Electronics, 3rd ed., §4.2; from memory), so a 3 mV limit (the
"generic JFET" set) gives ±33 mV at the output and ±3.3 mV referred to the input
(over the signal gain |−R2/R1| = 10). Worst case and RSS are equal for one term.
"""

from __future__ import annotations

import datetime
from pathlib import Path

import pytest

import opsym
from opsym import Requirement
from opsym.cli import main
from opsym.errors import BudgetError, DesignFileError
from opsym.io.designfile import parse_design
from opsym.io.writer import dump_design

DESIGN = """\
format = 1
title = "x10"
notes = "Inverting gain of ten."
revision = "B"
output = "out"
[resistors]
R1 = { between = ["in", "n"], value = "1k" }
R2 = { between = ["n", "out"], value = "10k" }
[voltage-sources]
Vin = { plus = "in", minus = "0", value = "0.1" }
[opamps.U1]
plus = "0"
minus = "n"
out = "out"
include = ["offset"]
parameters = "generic JFET"
[budget]
"""


def _report(tmp_path: Path, capsys, extra: str, design: str = DESIGN) -> tuple[str, str]:
    path = tmp_path / "x10.toml"
    path.write_text(design + extra, encoding="utf-8")
    note = tmp_path / "x10.md"
    assert main(["report", str(path), "--markdown", str(note)]) == 0
    return capsys.readouterr().out, note.read_text(encoding="utf-8")


def test_note_record_names_file_revision_date_version_and_sets(tmp_path, capsys):
    _, note = _report(tmp_path, capsys, "")
    assert "- Design file: x10.toml" in note
    assert "- Revision: B" in note
    assert f"- Date: {datetime.date.today().isoformat()}" in note  # no date given: today
    assert f"- Written by opsym {opsym.__version__}" in note
    assert "- Parameter sets (datasheet limits): U1: generic JFET" in note
    assert "Inverting gain of ten." in note
    assert "Requirement" not in note


def test_a_given_date_is_stated_and_written_back(tmp_path, capsys):
    text = DESIGN.replace('revision = "B"', 'revision = "B"\ndate = "2026-03-01"')
    _, note = _report(tmp_path, capsys, "", text)
    assert "- Date: 2026-03-01" in note
    design = parse_design(text)
    assert (design.revision, design.date) == ("B", "2026-03-01")
    again = parse_design(dump_design(design))
    assert (again.revision, again.date) == ("B", "2026-03-01")


def test_unknown_top_level_key_is_still_an_error():
    with pytest.raises(DesignFileError, match="revison"):
        parse_design(DESIGN.replace("revision", "revison"))


def test_output_requirement_passes_with_hand_margin(tmp_path, capsys):
    # 40 mV − 33 mV = 7 mV, 7/40 = 17.5 % (shown to two digits)
    out, note = _report(tmp_path, capsys, '[requirement]\nmax-output-error = "40 mV"\n')
    line = "PASS: worst-case output error ±33 mV ≤ 40 mV required; margin 7 mV (18 % of the limit)"
    assert line in out
    assert f"**{line}**" in note


def test_input_requirement_fails_with_hand_shortfall(tmp_path, capsys):
    # input-referred 33 mV / 10 = 3.3 mV against 3 mV: short by 300 µV, 0.3/3 = 10 %
    extra = '[requirement]\nmax-input-error = "3 mV"\nsum = "rss"\n'
    out, note = _report(tmp_path, capsys, extra)
    line = (
        "FAIL: RSS input-referred error ±3.3 mV > 3 mV required; "
        "short by 300 µV (10 % of the limit)"
    )
    assert line in out and line in note


def test_requirement_from_python(tmp_path):
    c = opsym.Circuit("x10")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n", value="1k")
    c.resistor("R2", "n", "out", value="10k")
    c.opamp("U1", plus="0", minus="n", out="out", bias=False, noise=False)
    result = c.analyze("out")
    budget = opsym.error_budget(result, {"Vin": 0.1, "U1.Vos": 1e-3})
    # 1 mV × 11 = 11 mV against 10 mV: short by 1 mV, 10 %
    text = opsym.design_note(result, budget, fmt="markdown",
                             requirement=Requirement(max_output_error="10 mV"))  # fmt: skip
    assert (
        "FAIL: worst-case output error ±11 mV > 10 mV required; short by 1 mV (10 % of the limit)"
        in text
    )
    with pytest.raises(BudgetError, match="exactly one"):
        Requirement()
    with pytest.raises(BudgetError, match="rss"):
        Requirement(max_output_error="1 mV", sum="typical")
    with pytest.raises(BudgetError, match="budget"):
        opsym.design_note(result, fmt="markdown", requirement=Requirement(max_output_error=1e-3))


def test_bad_requirement_table_names_its_key():
    with pytest.raises(DesignFileError, match=r"requirement.*one limit"):
        parse_design(DESIGN + '[requirement]\nsum = "rss"\n')
    with pytest.raises(DesignFileError, match="sum"):
        parse_design(DESIGN + '[requirement]\nmax-output-error = "1 mV"\nsum = "typ"\n')
