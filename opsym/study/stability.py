"""The stability of each op-amp's loop in a design: margins against a threshold.

:func:`run_stability` takes the loop gain of every op-amp that has a gain model
(:func:`opsym.analyses.loop.loop_gain`) with the design's numbers, and its
:class:`~opsym.numeric.stability.Margins`. A loop is flagged when its phase
margin is under the threshold (the ``[response]`` key ``phase-margin``; 45° by
default, common practice rather than a standard) or its closed loop has a pole in
the right half plane. Rendering is :mod:`opsym.output.stability`'s job.

Examples
--------
>>> from opsym.io.designfile import parse_design
>>> d = parse_design('''
... output = "out"
... [resistors]
... R1 = { between = ["n", "0"], value = "1k" }
... R2 = { between = ["n", "out"], value = "1k" }
... [voltage-sources]
... Vin = { plus = "p", minus = "0", value = "0.1" }
... [opamps.U1]
... plus = "p"
... minus = "n"
... out = "out"
... gain = "pole"
... A0 = "100k"
... GBW = "1 MHz"
... ''')
>>> from opsym.study.design import numeric_values
>>> [round(r.margins.phase_margin_deg, 1) for r in run_stability(d, numeric_values(d))]
[90.0]
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from ..analyses.loop import loop_gain
from ..errors import BudgetError, OpsymError
from ..io.design import Design
from ..numeric.stability import Margins

__all__ = ["DEFAULT_PHASE_MARGIN", "LoopReport", "run_stability"]

#: The phase margin under which a loop is flagged, degrees (common practice, not a standard).
DEFAULT_PHASE_MARGIN = 45.0


@dataclass(frozen=True)
class LoopReport:
    """One op-amp's loop: its margins and whether they are under the threshold."""

    opamp: str
    margins: Margins
    threshold_deg: float

    @property
    def flagged(self) -> bool:
        """Phase margin under the threshold, or a closed-loop pole in the right half plane."""
        return self.margins.below(self.threshold_deg)


def run_stability(
    design: Design,
    values: Mapping[str, float],
    threshold_deg: float = DEFAULT_PHASE_MARGIN,
) -> tuple[LoopReport, ...]:
    """The :class:`LoopReport` of each op-amp with a gain model, in declaration order."""
    out: list[LoopReport] = []
    for amp in design.circuit.opamps:
        if amp.gain is None:
            continue  # an ideal op-amp's loop gain is infinite: nothing to judge
        known = {k: v for k, v in values.items() if _is_known(design, k)}
        try:
            margins = loop_gain(design.circuit, amp.name, known).margins()
        except BudgetError as err:
            raise BudgetError(f"{design.source}: loop gain of {amp.name}: {err}") from err
        out.append(LoopReport(amp.name, margins, threshold_deg))
    return tuple(out)


def _is_known(design: Design, name: str) -> bool:
    try:
        design.circuit.symbol(name)
    except OpsymError:  # a value for a name the circuit does not have
        return False
    return True
