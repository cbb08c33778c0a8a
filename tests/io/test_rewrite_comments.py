"""``opsym rewrite`` keeps a design file's ``#`` comments (opsym.io._comments).

The expectation is the file itself: every comment line the user wrote is still
in the rewritten text, end-of-line comments stay on the key they annotate, and
the rewritten file reads back to the same design (its own rewrite is unchanged).
"""

from __future__ import annotations

from pathlib import Path

import pytest

from opsym.cli import main
from opsym.io._comments import keep_comments
from opsym.io.designfile import parse_design
from opsym.io.writer import dump_design

EXAMPLES = sorted((Path(__file__).resolve().parents[2] / "opsym" / "examples").glob("*.toml"))


def _comments(text: str) -> list[str]:
    """The comment of each line that has one, as written (from the first #)."""
    out = []
    for line in text.splitlines():
        if "#" in line:
            out.append(line[line.index("#") :].rstrip())
    return out


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_every_shipped_example_keeps_its_comments(path, capsys):
    original = path.read_text(encoding="utf-8")
    assert main(["rewrite", str(path)]) == 0
    rewritten = capsys.readouterr().out
    kept = _comments(rewritten)
    for comment in _comments(original):
        assert comment in kept, f"{path.name}: lost {comment!r}"
    # the same design: rewriting the rewrite (or the original) gives the same file
    again = dump_design(parse_design(rewritten))
    assert again == dump_design(parse_design(original, filename=str(path)))


def test_end_of_line_comments_stay_on_their_key():
    original = (
        '# header comment\nformat = 1\ntitle = "t"\noutput = "out"\n\n'
        "[resistors]\n"
        'R1 = { between = ["in", "n"], value = "1k" }   # input resistor\n'
        "# the feedback one\n"
        'R2 = { between = ["n", "out"], value = "10k" }\n\n'
        '[voltage-sources]\nVin = { plus = "in", minus = "0" }  # signal\n\n'
        '[opamps.U1]  # the only op-amp\nplus = "0"\nminus = "n"\nout = "out"\n'
        "# trailing words\n"
    )
    text = dump_design(parse_design(original), comments=original)
    lines = text.splitlines()
    r1 = next(x for x in lines if x.startswith("R1 ="))
    assert r1.endswith("# input resistor")
    assert lines[lines.index(next(x for x in lines if x.startswith("R2 ="))) - 1] == (
        "# the feedback one"
    )
    assert "[opamps.U1]  # the only op-amp" in lines
    assert lines[-1] == "# trailing words"
    assert text.count("# opsym design file") == 1
    # rewriting again changes nothing
    assert dump_design(parse_design(text), comments=text) == text


def test_comments_of_a_key_the_writer_drops_move_on():
    """A key the writer leaves out (a default) hands its comments to the next one."""
    original = 'format = 1\n# old note\ntitle = "a"\n'
    rewritten = "format = 1\nb = 2\n"
    out = keep_comments(original, rewritten)
    assert "# old note" in out.splitlines()


def test_hash_inside_a_string_is_not_a_comment():
    original = 'title = "A #1 amp"  # real\n'
    out = keep_comments(original, 'title = "A #1 amp"\n')
    assert out == 'title = "A #1 amp"  # real\n'


def test_the_shipped_examples_are_found():
    """The cases above are parametrized over the examples: an empty folder would test nothing."""
    assert len(EXAMPLES) >= 6
