"""Hypothesis glue shared by the property tests: settings and the draw-backed picker."""

from __future__ import annotations

import os

from hypothesis import HealthCheck, settings
from hypothesis import strategies as st

#: ``OPSYM_HYPOTHESIS_SCALE=15`` multiplies every example count (a long local run).
SCALE = int(os.environ.get("OPSYM_HYPOTHESIS_SCALE", "1"))


def example_settings(n: int):
    """``n`` examples (times :data:`SCALE`), no deadline, slow draws allowed."""
    return settings(
        max_examples=n * SCALE,
        deadline=None,
        suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much],
    )


class DrawPicker:
    """The picker protocol of ``circuits.random_circuit`` over Hypothesis draws."""

    def __init__(self, draw):
        self._draw = draw

    def int(self, lo, hi):
        return self._draw(st.integers(lo, hi))

    def choice(self, seq):
        return self._draw(st.sampled_from(list(seq)))

    def coin(self, p=0.5):
        return self._draw(st.integers(0, 99)) < round(100 * p)
