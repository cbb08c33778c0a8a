"""A note's content is gathered once and written twice (opsym.output.document, notes).

The Markdown and the LaTeX note come from one :class:`~opsym.output.document.Document`,
so they must carry the same sections in the same order; and what LaTeX rejects in
an empty list must never reach it.
"""

from __future__ import annotations

import re

import opsym
from opsym.numeric.params import opamp_parameters
from opsym.output.document import Bullets, Document, Section, latex, markdown
from opsym.output.notes import design_note
from opsym.study.budget import error_budget


def _ideal_follower() -> opsym.Result:
    c = opsym.Circuit("ideal follower")
    c.voltage_source("Vin", "p", "0")
    c.opamp("U1", plus="p", minus="out", out="out", offset=False, bias=False, noise=False)
    return c.analyze("out")


def test_note_of_ideal_opamps_compiles(tmp_path, pdflatex):
    # An op-amp with no error source states no conventions. LaTeX refuses a list
    # environment without an \item ("Something's wrong--perhaps a missing \item",
    # Lamport, LaTeX: A Document Preparation System, 2nd ed., app. C.6.2 [from memory]),
    # so the note must not open an empty itemize; pdflatex is the judge.
    tex = design_note(_ideal_follower(), standalone=True)
    assert re.search(r"\\begin\{itemize\}\s*\\end\{itemize\}", tex) is None
    (tmp_path / "ideal.tex").write_text(tex, encoding="utf-8")
    pdflatex(tmp_path, "ideal.tex")


def test_markdown_note_of_ideal_opamps_has_no_empty_section():
    md = design_note(_ideal_follower(), fmt="markdown")
    assert "### Conventions" not in md
    assert "\n\n\n" not in md


def _headings(md: str, tex: str) -> tuple[list[str], list[str]]:
    in_md = re.findall(r"^### (.+)$", md, flags=re.MULTILINE)
    in_tex = re.findall(r"^\\subsection\*\{(.+)\}$", tex, flags=re.MULTILINE)
    return in_md, in_tex


def test_both_formats_have_the_same_sections_in_order():
    c = opsym.Circuit("inverting x10")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out")
    res = c.analyze("out")
    values = {"R1": "10k", "R2": "100k", "Vin": -1.0}
    budget = error_budget(res, values, {"U1": opamp_parameters("generic general-purpose bipolar")})
    kwargs = {"values": values, "notes": "Invented stage.", "figures": ["bars.png"]}
    md = design_note(res, budget, fmt="markdown", **kwargs)
    tex = design_note(res, budget, fmt="latex", **kwargs)
    in_md, in_tex = _headings(md, tex)
    assert in_md == in_tex
    assert in_md == [
        "Record", "Circuit", "Conventions", "Symbolic terms", "Numeric budget", "Caution",
    ]  # fmt: skip
    # Markdown blocks are one blank line apart (the budget's tables used to end with two).
    assert "\n\n\n" not in md


def test_empty_list_renders_as_nothing():
    doc = Document("T", sections=(Section("S", (Bullets(()),)),))
    assert markdown(doc) == "## T\n\n### S\n"
    assert latex(doc) == "\\section*{T}\n\\subsection*{S}\n"
