"""``opsym example`` prints the shipped examples; ``--figure-format pdf`` writes vector figures.

Sources: a PDF file starts with ``%PDF-`` (ISO 32000-1:2008, 7.5.2).
"""

from __future__ import annotations

from pathlib import Path

import pytest

from opsym.cli import main
from opsym.io.designfile import load_design
from opsym.io.examples import example_names, example_path

ROOT = Path(__file__).parents[2]


def test_list_names_every_shipped_example(capsys):
    assert main(["example", "--list"]) == 0
    names = capsys.readouterr().out.split()
    assert names == sorted(p.stem for p in (ROOT / "opsym" / "examples").glob("*.toml"))
    assert "photodiode-transimpedance" in names and names == example_names()


def test_example_prints_the_file_and_writes_a_copy_that_loads(capsys, tmp_path):
    assert main(["example", "difference-amplifier"]) == 0
    text = capsys.readouterr().out
    assert text == example_path("difference-amplifier").read_text(encoding="utf-8")
    out = tmp_path / "mine.toml"
    assert main(["example", "difference-amplifier.toml", "-o", str(out)]) == 0
    assert out.read_text(encoding="utf-8") == text
    assert load_design(out).title
    # Never overwrite: a second write to the same file is refused.
    assert main(["example", "difference-amplifier", "-o", str(out)]) == 2
    assert "exists" in capsys.readouterr().err


def test_unknown_example_names_the_choices(capsys):
    assert main(["example", "no-such"]) == 2
    err = capsys.readouterr().err
    assert "no-such" in err and "difference-amplifier" in err and "--list" in err
    assert main(["example"]) == 2


def test_the_examples_ship_only_inside_the_package():
    # One copy: the docs folder holds no design files of its own.
    assert not list((ROOT / "docs" / "examples").glob("*.toml"))


def test_report_writes_pdf_figures(tmp_path, capsys):
    pytest.importorskip("matplotlib")
    design = example_path("inverting-bias-compensation")
    figs = tmp_path / "figs"
    assert main(["report", str(design), "--quiet", "--figures", str(figs),
                 "--figure-format", "pdf", "--latex", str(tmp_path / "n.tex")]) == 0  # fmt: skip
    written = sorted(figs.iterdir())
    assert written and all(p.suffix == ".pdf" for p in written)
    assert all(p.read_bytes()[:5] == b"%PDF-" for p in written)  # ISO 32000-1, 7.5.2
    tex = (tmp_path / "n.tex").read_text(encoding="utf-8")
    assert "figs/contributions.pdf}" in tex
