"""The loop gain of an op-amp's loop: the return ratio at its controlled source.

An op-amp's output is the controlled source ``Vout = A·(V+ − V-)``. Break it:
the output becomes an independent source of value ``u`` (the op-amp still
drives its node, so every load on the output and the inputs stays in place),
every independent source (signals and error sources) is set to zero, and the
other op-amps keep their own loops closed. The source would have returned
``A·(V+ − V-)``; the loop gain is the returned value over the injected one,
with a minus sign:

``T = −A·(V+ − V-)/u = A·β``,  ``β = −(V+ − V-)/u``,

so ``T > 0`` at low frequency for negative feedback. ``β`` is the feedback
factor with loading, and does not depend on ``A``. For an inverting or
non-inverting stage ``β = R1/(R1 + R2)``; for a follower ``β = 1`` and
``T = A``. The closed loop is unstable when ``1 + T`` has a zero in the right
half plane; :meth:`LoopGain.margins` gives the crossover, margins, peaking and
the closed-loop poles (see :mod:`opsym.numeric.stability`).

The break is made in the op-amp's own row of the nodal equations,
``V(-) − V(+) + Vout/A + … = 0``: the controlling voltage ``V(+) − V(-)`` in it
is replaced by the test variable ``x``, so the row reads ``Vout/A + … = x``
(the output source is ``A·x``, whatever else the row holds), and one adjoint
solve gives the returned ``(V+ − V-)/x``; ``T = −(V+ − V-)/x``, the same as
``−A·(V+ − V-)/(A·x)``. For an ideal op-amp the row becomes ``Vout = x`` and
gives ``β`` alone (:mod:`opsym.equations.adjoint`).

A fully differential amplifier's row is its differential one, with ``Vout``
the differential output ``V(out+) − V(out-)``: the same break gives the
differential loop gain with the output common-mode loop closed (``A·Rg/(Rg +
Rf)`` for a balanced stage).

Examples
--------
>>> import opsym
>>> c = opsym.Circuit()
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="0", minus="n", out="out", gain="finite")
>>> lg = opsym.loop_gain(c, "U1")
>>> lg.feedback
R1/(R1 + R2)
>>> lg.gain
R1*U1.A/(R1 + R2)
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import sympy as sp

from ..equations.adjoint import solve_adjoint
from ..equations.mna import DOMAINS, build_equations
from ..errors import InvalidValueError, UnknownNameError
from ..model.circuit import GROUND, Circuit
from ..model.elements import FullyDifferentialAmp, OpAmp
from ..model.symbols import LAPLACE
from ..model.topology import check_topology
from ..numeric.stability import Margins, stability_margins
from .derive import resolve_values

__all__ = ["LoopGain", "loop_gain"]

#: The injected test value at the broken controlled source (volts at the output).
_TEST = sp.Symbol("u_test")


@dataclass(frozen=True)
class LoopGain:
    """The loop gain of one op-amp's loop.

    Attributes
    ----------
    circuit : Circuit
    opamp : str
        The op-amp whose controlled source was broken.
    open_loop : sympy.Expr or None
        Its open-loop gain ``A`` (``None`` for an ideal op-amp).
    feedback : sympy.Expr
        ``β = −(V+ − V-)/u``, the feedback factor with loading kept.
    fixed : dict
        The values put in before solving.
    domain : str
        ``"s"`` (default) or ``"dc"``.
    """

    circuit: Circuit
    opamp: str
    open_loop: sp.Expr | None
    feedback: sp.Expr
    fixed: dict[sp.Symbol, sp.Expr]
    domain: str

    @property
    def gain(self) -> sp.Expr:
        """The loop gain ``T = A·β`` (positive at low frequency for negative feedback)."""
        if self.open_loop is None:
            raise InvalidValueError(
                f"op-amp {self.opamp} is ideal (gain='ideal'), so its loop gain is infinite; "
                "declare it with gain='finite', gain='pole' or an open-loop gain expression "
                "(LoopGain.feedback is the feedback factor β whatever the gain)"
            )
        return sp.factor(self.open_loop * self.feedback)

    def subs(self, values: Mapping[Any, Any]) -> LoopGain:
        """The same loop gain with further values put in (names or symbols as keys)."""
        fixed = resolve_values(self.circuit, values)
        return dataclasses.replace(
            self,
            open_loop=None if self.open_loop is None else self.open_loop.xreplace(fixed),
            feedback=sp.factor(self.feedback.xreplace(fixed)),
            fixed={**self.fixed, **fixed},
        )

    def margins(self, values: Mapping[Any, Any] | None = None) -> Margins:
        """Crossover, phase and gain margins, peaking and the closed-loop poles.

        Every symbol but ``s`` needs a value, here or when the loop gain was taken.
        """
        if self.domain != "s":
            raise InvalidValueError(
                f"loop gain of {self.opamp}: margins need the Laplace domain; "
                "take the loop gain with domain='s'"
            )
        lg = self.subs(values) if values else self
        return stability_margins(lg.gain, what=f"loop gain of op-amp {self.opamp}")


def loop_gain(
    circuit: Circuit,
    opamp: str,
    values: Mapping[Any, Any] | None = None,
    domain: str = "s",
) -> LoopGain:
    """The return ratio at op-amp ``opamp``'s controlled source, loading kept.

    Parameters
    ----------
    circuit : Circuit
    opamp : str
        Name of the op-amp whose loop to break.
    values : mapping, optional
        Values fixed before solving (as for :meth:`Circuit.analyze`).
    domain : "s" or "dc"

    Examples
    --------
    A follower: ``T = A``.

    >>> import opsym
    >>> c = opsym.Circuit()
    >>> c.voltage_source("Vin", "p", "0")
    >>> c.opamp("U1", plus="p", minus="out", out="out", gain="pole")
    >>> opsym.loop_gain(c, "U1").gain
    2*pi*U1.A0*U1.GBW/(U1.A0*s + 2*pi*U1.GBW)
    """
    if domain not in DOMAINS:
        raise InvalidValueError(f"domain {domain!r} is not known; use 'dc' or 's'")
    amp = circuit.element(opamp)
    if not isinstance(amp, OpAmp):
        raise UnknownNameError(f"{opamp!r} is a {amp.kind}, not an op-amp; name an op-amp")
    check_topology(circuit, domain)
    fixed = resolve_values(circuit, values)
    eqs = build_equations(circuit, fixed, domain=domain)
    row = eqs.index[f"I({amp.name})"]
    pins: dict[int, sp.Expr] = {}  # V(+) − V(−) as weights on the unknowns
    for node, w in ((amp.plus, sp.S.One), (amp.minus, sp.S.NegativeOne)):
        if node != GROUND:
            col = eqs.index[f"V({node})"]
            pins[col] = pins.get(col, sp.S.Zero) + w
    pins = {k: v for k, v in pins.items() if v != 0}
    gain = None if amp.gain is None else amp.gain.xreplace(fixed)
    if domain == "dc" and gain is not None:
        gain = gain.xreplace({LAPLACE: sp.S.Zero})
    if gain is None:  # a nullor: the output imposed, Vout = x, gives β = −(V+ − V−)/x
        broken_row = {eqs.index[f"V({amp.out})"]: sp.S.One}
        if isinstance(amp, FullyDifferentialAmp):  # an FDA's differential output, Vod = x
            broken_row[eqs.index[f"V({amp.out_minus})"]] = sp.S.NegativeOne
    else:  # the row V(−) − V(+) + Vout/A + … = 0 with V(+) − V(−) replaced by x
        broken_row = dict(eqs.rows[row])
        for col, w in pins.items():
            broken_row[col] = broken_row.get(col, sp.S.Zero) + w
        broken_row = {k: v for k, v in broken_row.items() if v != 0}
    rows = list(eqs.rows)
    rows[row] = broken_row
    broken = dataclasses.replace(eqs, rows=tuple(rows), sources={_TEST: {row: sp.S.One}})
    returned = solve_adjoint(broken, pins)[row]  # (V(+) − V(−))/x
    loop = sp.cancel(sp.together(-returned))
    beta = sp.factor(loop if gain is None else sp.cancel(loop / gain))
    return LoopGain(circuit, amp.name, gain, beta, fixed, domain)
