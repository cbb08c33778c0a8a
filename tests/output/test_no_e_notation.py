"""Numbers in notes, tables and the summary are never written in e-notation.

Engineers read ``57710 V/V`` or ``31.94 µV/V``; ``5.771e+04`` is a programming
artefact (SI prefixes as in the SI Brochure, 9th ed., §3, BIPM 2019). The shipped
examples below used to print coefficients such as ``3.194e-05 V/V``.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from opsym.cli import main
from opsym.numeric.units import format_plain

EXAMPLES = Path(__file__).resolve().parents[2] / "opsym" / "examples"
E_NOTATION = re.compile(r"\b\d+(?:\.\d+)?[eE][+-]?\d+\b")


@pytest.mark.parametrize(
    "name", ["bridge-t-network", "difference-amplifier", "photodiode-transimpedance"]
)
def test_notes_and_summary_have_no_e_notation(name, tmp_path, capsys):
    md, tex = tmp_path / "n.md", tmp_path / "n.tex"
    args = ["report", str(EXAMPLES / f"{name}.toml"), "--markdown", str(md), "--latex", str(tex)]
    assert main(args) == 0
    texts = {"summary": capsys.readouterr().out, "markdown": md.read_text("utf-8"),
             "latex": tex.read_text("utf-8")}  # fmt: skip
    for what, text in texts.items():
        found = E_NOTATION.findall(text)
        assert not found, f"{name} {what}: e-notation {found[:5]}"


@pytest.mark.parametrize(
    ("x", "unit", "digits", "text"),
    [
        (57712.3, "V/V", 4, "57710 V/V"),  # four significant figures, written out
        (3.1939e-05, "V/V", 4, "31.94 µV/V"),  # µ = 10^-6 (SI prefix)
        (1e6, "V/V", 6, "1000000 V/V"),
        (2.5e9, "V/V", 3, "2.5 GV/V"),  # G = 10^9
        (0.0101, "", 3, "0.0101"),
        (-12.345, "", 3, "-12.3"),
        (999.96, "", 4, "1000"),  # rounding carries into the next decade
    ],
)
def test_format_plain(x, unit, digits, text):
    assert format_plain(x, unit, digits) == text
    assert "e" not in text.replace("V/V", "")
