"""Circuits with capacitors, inductors and op-amp dynamics, for the s-domain reference tests.

The plain description of :mod:`nodal`, extended:

* ``("L", name, a, b, value)``: inductor, henries.
* ``("OA", name, plus, minus, out, model, vos, ibp, ibm)`` where ``model`` is
  ``None`` (ideal), a number (a fixed open-loop gain), ``("finite", A)`` (the
  symbol ``U.A``, valued ``A``) or ``("pole", A0, GBW, f2, …)`` (single pole, GBW in
  Hz, and any further poles in Hz: ``gain="pole<n>"``).

:func:`to_circuit` builds the ``opsym.Circuit`` and the ``values`` mapping that
fixes its symbolic parts; :func:`random_ac_circuit` grows a random valid DC
network of :func:`circuits.random_circuit` into one with capacitors, inductors
and mixed op-amp models. The three stages at the end are the ngspice cases.

All values are invented demo values.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import Any

import circuits

__all__ = [
    "inverting_pole",
    "random_ac_circuit",
    "to_circuit",
    "transimpedance",
    "two_stage_filter",
]

_MANTISSA = (1.0, 1.5, 2.2, 3.3, 4.7, 6.8)
_CAPS = (1e-11, 1e-10, 1e-9, 1e-8, 1e-7)
_INDUCTORS = (1e-5, 1e-4, 1e-3, 1e-2, 1e-1)
_A0 = (1e4, 1e5, 1e6)
_GBW = (1e5, 1e6, 1e7, 1e8)


def to_circuit(
    desc: Iterable[tuple],
    symbolic: Iterable[str] = (),
    title: str = "",
    opamp_options: Mapping[str, Any] | None = None,
):
    """``(opsym.Circuit, values)``: parts named in ``symbolic`` are given by ``values``.

    ``values`` (names to floats) also carries each op-amp's model parameters
    (``U.A`` for ``("finite", A)``, ``U.A0`` and ``U.GBW`` for a pole) and, with
    ``opamp_options={"cmrr": True}``, ``U.CMRR``. Sources stay symbolic.
    ``opamp_options`` may also carry ``extra`` (kind keys, as ``Circuit.opamp``
    reads them) and ``params`` (``{"Ro": 50.0, ...}``: each op-amp's value of
    those kinds' parameters).
    """
    import opsym

    symbolic = set(symbolic)
    options = dict(opamp_options or {})
    params = dict(options.pop("params", {}))
    c = opsym.Circuit(title)
    values: dict[str, float] = {}
    add = {"R": c.resistor, "C": c.capacitor, "L": c.inductor}
    for item in desc:
        kind, name = item[0], item[1]
        if kind in add:
            if name in symbolic:
                add[kind](name, item[2], item[3])
                values[name] = item[4]
            else:
                add[kind](name, item[2], item[3], value=item[4])
        elif kind == "V":
            c.voltage_source(name, item[2], item[3])
        elif kind == "I":
            c.current_source(name, item[2], item[3])
        elif kind == "OA":
            model = item[5]
            if model is None:
                gain: Any = "ideal"
            elif isinstance(model, tuple) and model[0] == "finite":
                gain = "finite"
                values[f"{name}.A"] = model[1]
            elif isinstance(model, tuple) and model[0] == "pole":
                gain = "pole" if len(model) == 3 else f"pole{len(model) - 2}"
                values[f"{name}.A0"], values[f"{name}.GBW"] = model[1], model[2]
                for k, fk in enumerate(model[3:], start=2):
                    values[f"{name}.f{k}"] = fk
            else:
                gain = model
            if options.get("cmrr"):
                values[f"{name}.CMRR"] = 31622.0
            if options.get("psrr"):
                values[f"{name}.PSRR"] = 10000.0
            values.update((f"{name}.{k}", v) for k, v in params.items())
            c.opamp(name, plus=item[2], minus=item[3], out=item[4], gain=gain, **options)
        else:
            raise ValueError(f"unknown element kind {kind!r}")
    return c, values


def _value(pick, choices) -> float:
    return float(f"{pick.choice(_MANTISSA)}e0") * pick.choice(choices)


def random_ac_circuit(pick, max_opamps: int = 3, max_reactive: int = 3):
    """A random valid network with reactances: returns ``(desc, output, symbolic)``.

    Starts from :func:`circuits.random_circuit` (valid at DC by construction),
    then: each op-amp gets an ideal, fixed-gain, symbolic-gain or single-pole
    model; up to ``max_reactive`` capacitors go between random nodes; an
    inductor may go in series with a resistor (a wire at DC, so the DC
    validity stays). Parts named in ``symbolic`` are fixed through ``values``.
    """
    desc, output, symbolic = circuits.random_circuit(pick, max_opamps=max_opamps)
    desc = [it for it in desc if it[0] != "C"]
    symbolic = [s for s in symbolic if not s.startswith("U")]
    out: list[tuple] = []
    for it in desc:
        if it[0] == "OA":
            which = pick.int(0, 3)
            if which == 0:
                model: Any = None
            elif which == 1:
                model = float(pick.choice((2e3, 1e5, 1e6)))
            elif which == 2:
                model = ("finite", float(pick.choice((2e3, 1e5, 1e6))))
            else:
                model = ("pole", pick.choice(_A0), pick.choice(_GBW))
            out.append((*it[:5], model, *it[6:]))
        else:
            out.append(it)
    nodes = ["0", *dict.fromkeys(p for it in out for p in it[2:4] if it[0] != "OA")]
    nodes += [it[4] for it in out if it[0] == "OA" and it[4] not in nodes]
    n_reactive = pick.int(1, max_reactive)
    resistors = [k for k, it in enumerate(out) if it[0] == "R"]
    if resistors and pick.coin(0.5):  # an inductor in series with a resistor
        k = pick.choice(resistors)
        _, name, a, b, r = out[k]
        out[k] = ("R", name, a, f"{name}_l", r)
        out.append(("L", f"L{name}", f"{name}_l", b, _value(pick, _INDUCTORS)))
        n_reactive -= 1
    for j in range(max(n_reactive, 0)):
        a = pick.choice(nodes)
        b = pick.choice([n for n in nodes if n != a])
        out.append(("C", f"C{j + 1}", a, b, _value(pick, _CAPS)))
    return out, output, symbolic


# -- the ngspice cases --------------------------------------------------------------


def inverting_pole(a0=1e5, gbw=1e6):
    """Inverting stage, gain −10: Vin –R1 1k– N –R2 10k– OUT; + pin to ground via Rp 909."""
    return [
        ("V", "Vin", "in", "0", 0.0),
        ("R", "R1", "in", "n", 1e3),
        ("R", "R2", "n", "out", 1e4),
        ("R", "Rp", "p", "0", 909.0),
        ("OA", "U1", "p", "n", "out", ("pole", a0, gbw), 0.0, 0.0, 0.0),
    ]


def transimpedance(a0=2e5, gbw=2e7):
    """Iin into N (with Cd 22 pF to ground); feedback Rf 1 MΩ ∥ Cf 1 pF; + to ground."""
    return [
        ("I", "Iin", "0", "n", 0.0),
        ("C", "Cd", "n", "0", 22e-12),
        ("R", "Rf", "n", "out", 1e6),
        ("C", "Cf", "n", "out", 1e-12),
        ("OA", "U1", "0", "n", "out", ("pole", a0, gbw), 0.0, 0.0, 0.0),
    ]


def two_stage_filter():
    """Inverting RC low-pass (gain −2, 7.96 kHz) into a unity-gain Sallen–Key low-pass.

    Stage 1: Vin –R1 10k– N1, R2 20k ∥ C1 1 nF from N1 to O1. Stage 2: O1 –R3 10k– A
    –R4 10k– P2, C2 2.2 nF from A to OUT, C3 1 nF from P2 to ground, follower U2.
    An inductor L1 100 µH in series with R3 (invented, to exercise the model).
    """
    return [
        ("V", "Vin", "in", "0", 0.0),
        ("R", "R1", "in", "n1", 1e4),
        ("R", "R2", "n1", "o1", 2e4),
        ("C", "C1", "n1", "o1", 1e-9),
        ("OA", "U1", "0", "n1", "o1", ("pole", 1e5, 5e6), 0.0, 0.0, 0.0),
        ("R", "R3", "o1", "l", 1e4),
        ("L", "L1", "l", "a", 1e-4),
        ("R", "R4", "a", "p2", 1e4),
        ("C", "C2", "a", "out", 2.2e-9),
        ("C", "C3", "p2", "0", 1e-9),
        ("OA", "U2", "p2", "out", "out", ("pole", 2e5, 3e6), 0.0, 0.0, 0.0),
    ]
