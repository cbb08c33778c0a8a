"""Shared test setup.

Puts ``tests/reference`` on ``sys.path`` so that tests import the independent
reference helpers as plain modules (``import nodal``, ``import spice``); pytest runs
with ``--import-mode=importlib``, which does not do this by itself.

Environment variables read by the reference tests:

* ``OPSYM_REQUIRE_NGSPICE=1``: a missing ``ngspice`` fails the ngspice tests
  instead of skipping them.
* ``OPSYM_HYPOTHESIS_SCALE=<n>``: multiply the number of property-test examples.
"""

from __future__ import annotations

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
