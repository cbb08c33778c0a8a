"""Loop gain against an ngspice ``.ac`` run with the loop broken at the controlled source.

The netlist of ``tests/reference/spice_ac.py`` builds each single-pole op-amp as a
VCCS of 1 S driven by ``V(+) − V(−)`` into a node ``x`` loaded by ``1/A0`` and
``1/(2π·GBW)``, so ``V(x) = A(s)·(V(+) − V(−))``, and a unity VCVS from ``x`` to the
output. Breaking the loop (the return-ratio definition, e.g. Franco ch. 8 [mem]):
the buffer becomes an independent source ``AC 1`` at the output, every signal source is
set to ``AC 0``, and ``V(x)`` is what the controlled source returns, so
``T = −V(x)/1``. The loads on the output and inputs stay as they are.

Cases: the two-stage filter of ``circuits_ac`` — U1 an inverting RC stage, U2 a
Sallen–Key follower whose output also feeds back positively through C2 — and the
inverting single-pole stage. Relative 1e-9, as the other ``.ac`` comparisons: both
sides solve the same linear equations in float64.
"""

from __future__ import annotations

import circuits_ac
import numpy as np
import pytest

import opsym

CASES = [
    ("two_stage_filter", "U1"),
    ("two_stage_filter", "U2"),
    ("inverting_pole", "U1"),
]


def _broken_netlist(spice_ac, desc, opamp):
    cards, _, _ = spice_ac.netlist(desc, source="(none)")
    k = 1 + next(i for i, it in enumerate(desc) if it[0] == "OA" and it[1] == opamp)
    lines = cards.splitlines()
    at = next(i for i, ln in enumerate(lines) if ln.startswith(f"EB{k} "))
    out = lines[at].split()[1]
    lines[at] = f"VT{k} {out} 0 DC 0 AC 1 ; the controlled source, broken"
    return "\n".join(lines), f"x{k}"


@pytest.mark.parametrize(("stage", "opamp"), CASES)
def test_loop_gain_matches_ngspice_loop_break(ngspice, stage, opamp):
    import spice_ac

    desc = getattr(circuits_ac, stage)()
    cards, x = _broken_netlist(spice_ac, desc, opamp)
    control = [
        "set numdgt=17",
        "set wr_singlescale",
        "set wr_vecnames",
        "ac dec 10 10 1e8",
        f"let t = -v({x})",
        "wrdata loop.txt real(t) imag(t)",
    ]
    _, tables = spice_ac._run(cards, control, ["loop.txt"])
    cols = list(tables["loop.txt"].values())
    f, t_spice = cols[0], cols[1] + 1j * cols[2]
    c, values = circuits_ac.to_circuit(desc, title=stage)
    lg = opsym.loop_gain(c, opamp, values)
    t_opsym = opsym.numeric.frequency.evaluator(lg.gain, "T")(f)
    np.testing.assert_allclose(t_opsym, t_spice, rtol=1e-9, atol=0)
