"""Shared test setup.

Puts ``tests/reference`` on ``sys.path`` so that tests import the independent
reference helpers as plain modules (``import nodal``, ``import spice``); pytest runs
with ``--import-mode=importlib``, which does not do this by itself.

Environment variables read by the reference tests:

* ``OPSYM_REQUIRE_NGSPICE=1``: a missing ``ngspice`` fails the ngspice tests
  instead of skipping them.
* ``OPSYM_REQUIRE_LATEX=1``: a missing ``pdflatex`` fails the LaTeX compile tests
  instead of skipping them.
* ``OPSYM_HYPOTHESIS_SCALE=<n>``: multiply the number of property-test examples.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

REFERENCE = Path(__file__).resolve().parent / "reference"
if str(REFERENCE) not in sys.path:
    sys.path.insert(0, str(REFERENCE))


@pytest.fixture
def ngspice():
    """The :mod:`spice` reference module; skips without ngspice (fails if required)."""
    import spice

    spice.require_ngspice()
    return spice


@pytest.fixture
def pdflatex():
    """``compile(directory, name)``: run pdflatex on ``directory/name``, return the PDF path.

    Called without pdflatex it skips the rest of the test (fails if
    ``OPSYM_REQUIRE_LATEX=1``), so the checks before it still run; a failed run
    fails the test with the end of the log.
    """

    def compile_tex(directory: Path, name: str) -> Path:
        if not shutil.which("pdflatex"):
            if os.environ.get("OPSYM_REQUIRE_LATEX") == "1":
                pytest.fail("OPSYM_REQUIRE_LATEX=1 but pdflatex is not on PATH")
            pytest.skip("pdflatex not installed")
        run = subprocess.run(
            ["pdflatex", "-interaction=nonstopmode", "-halt-on-error", name],
            cwd=directory, capture_output=True, text=True, timeout=120,
        )  # fmt: skip
        assert run.returncode == 0, run.stdout[-3000:]
        pdf = (Path(directory) / name).with_suffix(".pdf")
        assert pdf.stat().st_size > 1000
        return pdf

    return compile_tex
