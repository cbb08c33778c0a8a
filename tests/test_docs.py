"""The Python examples in the README and the guides run as written."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize(
    "doc",
    ["README.md", "docs/getting-started.md", "docs/frequency-and-noise.md", "docs/stability.md"],
)
def test_python_examples_run(doc):
    text = (ROOT / doc).read_text(encoding="utf-8")
    blocks = re.findall(r"```python\n(.*?)```", text, re.S)
    assert blocks, f"{doc} has no Python example"
    namespace: dict = {}
    # The blocks of one page form one session, as a reader would type them.
    # Runs the project's own documentation, never user text.
    exec(compile("\n".join(blocks), doc, "exec"), namespace)
    assert "res" in namespace


def test_readme_quick_start_has_exactly_two_lines():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    blocks = re.findall(r"```[a-z]*\n(.*?)```", section, re.S)
    assert len(blocks) == 1
    lines = blocks[0].strip().splitlines()
    assert len(lines) == 2
    assert "opsym demo" in lines[0] and "pytest" in lines[1]
