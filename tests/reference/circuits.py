"""Circuits for the reference tests, in the plain description of :mod:`nodal`.

Two kinds: the textbook stages the published and ngspice checks use (each a
function returning a description), and :func:`random_circuit`, a generator of small
valid networks for the property tests, driven by any *picker* (an object with
``int(lo, hi)``, ``choice(seq)`` and ``coin(p)``) so that Hypothesis and a plain
``random.Random`` can both drive it.

All values are invented demo values.
"""

from __future__ import annotations

import random
from typing import Any

__all__ = [
    "RandomPicker",
    "difference",
    "instrumentation",
    "inverting",
    "noninverting",
    "random_circuit",
    "transimpedance_t",
]

# -- textbook stages ----------------------------------------------------------------


def inverting(r1=1e3, r2=1e4, rp=None, gain=None, vin=1.0, vos=0.0, ibp=0.0, ibm=0.0):
    """IN –R1– N –R2– OUT, + pin to ground (through Rp if given)."""
    desc: list[tuple[Any, ...]] = [
        ("V", "Vin", "in", "0", vin),
        ("R", "R1", "in", "n", r1),
        ("R", "R2", "n", "out", r2),
    ]
    plus = "0"
    if rp is not None:
        desc.append(("R", "Rp", "p", "0", rp))
        plus = "p"
    desc.append(("OA", "U1", plus, "n", "out", gain, vos, ibp, ibm))
    return desc


def noninverting(r1=1e3, r2=9e3, rs=None, gain=None, vin=1.0, vos=0.0, ibp=0.0, ibm=0.0):
    """Source through Rs (if given) to the + pin; N: R1 to ground, R2 to OUT."""
    desc: list[tuple[Any, ...]] = [("V", "Vin", "in", "0", vin)]
    plus = "in"
    if rs is not None:
        desc.append(("R", "Rs", "in", "p", rs))
        plus = "p"
    desc += [
        ("R", "R1", "n", "0", r1),
        ("R", "R2", "n", "out", r2),
        ("OA", "U1", plus, "n", "out", gain, vos, ibp, ibm),
    ]
    return desc


def difference(
    r1=1e4, r2=1e5, r3=1e4, r4=1e5, gain=None, v1=0.3, v2=0.5, vos=0.0, ibp=0.0, ibm=0.0
):
    """V1 –R1– N –R2– OUT; V2 –R3– P –R4– ground."""
    return [
        ("V", "V1", "a", "0", v1),
        ("V", "V2", "b", "0", v2),
        ("R", "R1", "a", "n", r1),
        ("R", "R2", "n", "out", r2),
        ("R", "R3", "b", "p", r3),
        ("R", "R4", "p", "0", r4),
        ("OA", "U1", "p", "n", "out", gain, vos, ibp, ibm),
    ]


def instrumentation(
    r2=49.5e3, rg=1e3, r3=1e4, r4=1e4, gain=None, v1=0.1, v2=0.11, errors=((0.0,) * 3,) * 3
):
    """Three op-amps: A1 (+=V1, -=N1, out O1), A2 (+=V2, -=N2, out O2), difference stage."""
    (e1, e2, e3) = errors
    return [
        ("V", "V1", "i1", "0", v1),
        ("V", "V2", "i2", "0", v2),
        ("R", "R2a", "o1", "n1", r2),
        ("R", "RG", "n1", "n2", rg),
        ("R", "R2b", "n2", "o2", r2),
        ("R", "R3a", "o1", "n3", r3),
        ("R", "R4a", "n3", "out", r4),
        ("R", "R3b", "o2", "p3", r3),
        ("R", "R4b", "p3", "0", r4),
        ("OA", "U1", "i1", "n1", "o1", gain, *e1),
        ("OA", "U2", "i2", "n2", "o2", gain, *e2),
        ("OA", "U3", "p3", "n3", "out", gain, *e3),
    ]


def transimpedance_t(
    ra=1e6, rb=1e6, rc=1e4, rsh=1e8, rp=None, gain=None, iin=1e-6, vos=0.0, ibp=0.0, ibm=0.0
):
    """Iin into N, Rsh from N to ground; T-network feedback N–Ra–T–Rb–OUT with T–Rc–0."""
    desc: list[tuple[Any, ...]] = [
        ("I", "Iin", "0", "n", iin),
        ("R", "Rsh", "n", "0", rsh),
        ("R", "Ra", "n", "t", ra),
        ("R", "Rb", "t", "out", rb),
        ("R", "Rc", "t", "0", rc),
        ("C", "Cf", "n", "out", 1e-12),
    ]
    plus = "0"
    if rp is not None:
        desc.append(("R", "Rp", "p", "0", rp))
        plus = "p"
    desc.append(("OA", "U1", plus, "n", "out", gain, vos, ibp, ibm))
    return desc


# -- random valid networks ----------------------------------------------------------

_MANTISSA = (1.0, 1.5, 2.2, 3.3, 4.7, 6.8, 8.2)
_GAINS = (1e3, 2e4, 1e5, 1e6)


class RandomPicker:
    """The picker protocol over ``random.Random``."""

    def __init__(self, seed: int) -> None:
        self._r = random.Random(seed)

    def int(self, lo: int, hi: int) -> int:
        return self._r.randint(lo, hi)

    def choice(self, seq):
        seq = list(seq)
        return seq[self._r.randrange(len(seq))]

    def coin(self, p: float = 0.5) -> bool:
        return self._r.random() < p


def _resistance(pick) -> float:
    return float(f"{pick.choice(_MANTISSA)}e{pick.int(2, 6)}")


def random_circuit(pick, max_opamps: int = 3, finite: bool | None = None, tame: bool = False):
    """A small valid network: returns ``(desc, output, symbolic_names)``.

    Valid by construction: every op-amp has a resistor (or a wire, for a follower)
    from its output to its own inverting pin, which no other op-amp, source or
    ground drives; every node has a DC path to ground; voltage sources each add a
    fresh node, so they never form loops. ``finite=None`` mixes ideal and finite
    gain op-amps. ``tame=True`` feeds each ``+`` pin only from ground, a grounded
    source or an earlier op-amp's output, so that no loop has positive feedback and
    the equations stay well conditioned (for comparisons with ngspice's float LU).
    """
    desc: list[tuple[Any, ...]] = []
    n_op = pick.int(1, max_opamps)
    outs = [f"o{k}" for k in range(1, n_op + 1)]
    minus: list[str] = []
    soft: list[str] = []  # nodes not driven by a voltage-defined branch
    stiff = ["0", *outs]
    for k, out in enumerate(outs, start=1):
        if pick.coin(0.2):
            minus.append(out)  # follower
        else:
            m = f"m{k}"
            minus.append(m)
            soft.append(m)
            desc.append(("R", f"Rf{k}", out, m, _resistance(pick)))
    # extra soft nodes, tied to something already grounded
    grounded = [*stiff, *soft]
    for j in range(pick.int(0 if len(soft) + n_op >= 3 else 1, 2)):
        x = f"x{j + 1}"
        desc.append(("R", f"Rx{j + 1}", x, pick.choice(grounded), _resistance(pick)))
        soft.append(x)
        grounded.append(x)
    # voltage sources: each on a fresh node, anchored to ground or an existing node
    n_v = pick.int(0, 2)
    quiet = ["0"]  # nodes whose voltage no op-amp loop moves
    for j in range(n_v):
        v = f"v{j + 1}"
        anchor = "0" if pick.coin(0.6) else pick.choice(grounded)
        if anchor == "0":
            quiet.append(v)
        desc.append(("V", f"Vs{j + 1}", v, anchor, float(pick.choice((1, -2, 0.5)))))
        grounded.append(v)
    # the minus pins need a second path besides the feedback resistor, mostly
    for m in minus:
        if m in soft and pick.coin(0.8):
            others = [n for n in grounded if n != m]
            desc.append(("R", f"Rg_{m}", m, pick.choice(others), _resistance(pick)))
    # a few more resistors anywhere
    for j in range(pick.int(0, 2)):
        a = pick.choice(grounded)
        b = pick.choice([n for n in grounded if n != a])
        desc.append(("R", f"Re{j + 1}", a, b, _resistance(pick)))
    # current sources and a capacitor (open at DC)
    for j in range(pick.int(0 if n_v else 1, 1)):
        a = pick.choice(grounded)
        b = pick.choice([n for n in grounded if n != a])
        desc.append(("I", f"Is{j + 1}", a, b, 1e-6))
    if pick.coin(0.3):
        a = pick.choice(grounded)
        b = pick.choice([n for n in grounded if n != a])
        desc.append(("C", "C1", a, b, 1e-9))
    # the op-amps
    for k, (out, m) in enumerate(zip(outs, minus, strict=True), start=1):
        if tame:
            choices = [*quiet, *outs[: k - 1]]
        else:
            choices = [n for n in grounded if n != out and n not in minus]
        plus = pick.choice(choices)
        is_finite = pick.coin(0.5) if finite is None else finite
        gain = pick.choice(_GAINS) if is_finite else None
        desc.append(("OA", f"U{k}", plus, m, out, gain, 1e-3, 1e-9, 2e-9))
    # what to look at, and what to keep symbolic
    nodes = [n for n in grounded if n != "0"]
    if pick.coin(0.15):
        a = pick.choice(nodes)
        output: Any = (a, pick.choice([n for n in [*nodes, "0"] if n != a]))
    else:
        output = pick.choice(nodes)
    parts = [item[1] for item in desc if item[0] == "R"]
    parts += [item[1] for item in desc if item[0] == "OA" and item[5] is not None]
    symbolic = []
    for _ in range(pick.int(0, 2)):
        name = pick.choice(parts)
        if name not in symbolic:
            symbolic.append(name)
    return desc, output, symbolic
