"""ngspice ``.ac`` and ``.noise`` runs of a :mod:`circuits_ac` description.

The netlist builds every op-amp from primitives:

* single pole ``("pole", A0, GBW)``: a VCCS of 1 S driven by ``V(+) - V(-)`` into a
  node loaded by a conductance ``1/A0`` (a self-controlled VCCS, which is
  noiseless) and a capacitor ``1/(2π·GBW)``, so that node is
  ``A0/(1 + s·A0/(2π·GBW))·(V(+) - V(-))``; a unity VCVS buffers it to the output;
* a fixed gain (or ``("finite", A)``) as a VCVS of that gain; ideal as a VCVS of
  :data:`spice.IDEAL_GAIN`.

Op-amp noise is emulated with noisy resistors (``opamp_noise={"U1": (en, in)}``):

* ``en``: a resistor ``en²/(4kT)`` in series with the ``+`` pin; no current flows in
  it (the VCCS input draws none), so it adds exactly ``√(4kT·R) = en`` in series;
* ``in+``/``in-``: a resistor ``4kT/in²`` across a 0-V source; the resistor's noise
  current ``√(4kT/R) = in`` flows in the source, and a CCCS of gain 1 copies it
  into the pin. ``k`` is ngspice's own Boltzmann constant (:func:`boltzmann`).

Everything else in the netlist is noiseless except the circuit's resistors.
"""

from __future__ import annotations

import functools
import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from spice import IDEAL_GAIN, run_batch

__all__ = ["NoiseRun", "ac", "boltzmann", "netlist", "noise"]

_SCALAR = re.compile(r"^\s*([A-Za-z0-9_#.\-+()]+)\s*=\s*([-+]?[0-9.]+(?:[eE][-+]?[0-9]+)?)\s*$")


def _num(x: Any) -> str:
    return repr(float(x))


def netlist(
    desc: Sequence[tuple],
    source: str,
    celsius: float = 25.0,
    opamp_noise: Mapping[str, tuple[float, float]] | None = None,
    k_boltzmann: float | None = None,
) -> tuple[str, dict[str, str], dict[str, str]]:
    """Return (element cards, node map desc → spice, noise-device map spice → opsym name).

    ``source`` is the signal source that gets ``AC 1``; every other source ``AC 0``.
    """
    nodes = {"0": "0", "gnd": "0"}
    for it in desc:
        pins = it[2:5] if it[0] == "OA" else it[2:4]
        for p in pins:
            nodes.setdefault(p, f"n{len(nodes) - 1}")
    lines = [f"* opsym reference ({celsius:g} C)"]
    noisy: dict[str, str] = {}  # lower-case spice device -> opsym noise-source name
    kt4 = 4 * (k_boltzmann or 0.0) * (celsius + 273.15)
    for k, it in enumerate(desc, start=1):
        kind, name = it[0], it[1]
        if kind in ("R", "C", "L"):
            a, b = nodes[it[2]], nodes[it[3]]
            lines.append(f"{kind}{k} {a} {b} {_num(it[4])} ; {name}")
            if kind == "R":
                noisy[f"r{k}"] = name
        elif kind in ("V", "I"):
            a, b = nodes[it[2]], nodes[it[3]]
            ac_ = 1 if name == source else 0
            lines.append(f"{kind}{k} {a} {b} DC 0 AC {ac_} ; {name}")
        elif kind == "OA":
            plus, minus, out = (nodes[p] for p in it[2:5])
            inner = plus
            en_in = (opamp_noise or {}).get(name)
            if en_in is not None:
                if not kt4:
                    raise ValueError("op-amp noise emulation needs k_boltzmann")
                en, i_n = en_in
                inner = f"xp{k}"
                lines.append(f"RE{k} {plus} {inner} {_num(en**2 / kt4)} ; {name}.en")
                noisy[f"re{k}"] = f"{name}.en"
                for tag, pin in (("P", plus), ("M", minus)):
                    y = f"y{tag.lower()}{k}"
                    lines += [
                        f"RN{tag}{k} {y} 0 {_num(kt4 / i_n**2)}",
                        f"VN{tag}{k} {y} 0 DC 0",
                        f"FN{tag}{k} {pin} 0 VN{tag}{k} 1 ; {name}.in{'+' if tag == 'P' else '-'}",
                    ]
                    noisy[f"rn{tag.lower()}{k}"] = f"{name}.in{'+' if tag == 'P' else '-'}"
            model = it[5]
            if isinstance(model, tuple) and model[0] == "pole":
                a0, gbw = model[1], model[2]
                x = f"x{k}"
                lines += [
                    f"G{k} 0 {x} {inner} {minus} 1 ; {name}: 1 S into the pole node",
                    f"GL{k} {x} 0 {x} 0 {_num(1 / a0)} ; conductance 1/A0 (noiseless)",
                    f"CP{k} {x} 0 {_num(1 / (2 * math.pi * gbw))} ; pole at GBW/A0",
                    f"EB{k} {out} 0 {x} 0 1 ; buffer",
                ]
            else:
                gain = IDEAL_GAIN if model is None else model
                if isinstance(gain, tuple):
                    gain = gain[1]
                lines.append(f"E{k} {out} 0 {inner} {minus} {_num(gain)} ; {name}")
        else:
            raise ValueError(f"unknown element kind {kind!r}")
    lines.append(f".options TEMP={celsius:g} TNOM={celsius:g}")
    return "\n".join(lines), nodes, noisy


def _run(cards: str, control: list[str], files: Sequence[str], timeout: float = 60):
    text = "\n".join([cards, ".control", *control, "quit", ".endc", ".end", ""])
    out, raw = run_batch(text, timeout=timeout, read=files)
    return out, {name: _table(body) for name, body in raw.items()}


def _table(text: str) -> dict[str, np.ndarray]:
    """A ``wrdata`` file (``wr_singlescale``, ``wr_vecnames``) as columns by name."""
    lines = [ln.split() for ln in text.splitlines() if ln.strip()]
    head, rows = lines[0], np.array([[float(x) for x in ln] for ln in lines[1:]])
    return {h.lower(): rows[:, i] for i, h in enumerate(head)}


def _probe(nodes: Mapping[str, str], output) -> str:
    if isinstance(output, tuple):
        return f"v({nodes[output[0]]},{nodes[output[1]]})"
    return f"v({nodes[output]})"


def _card_of(desc: Sequence[tuple], source: str) -> str:
    for k, it in enumerate(desc, start=1):
        if it[1] == source:
            return f"{it[0]}{k}"
    raise ValueError(f"no source {source!r}")


def ac(
    desc: Sequence[tuple],
    source: str,
    output: str | tuple[str, str],
    f_start: float,
    f_stop: float,
    points_per_decade: int = 5,
) -> tuple[np.ndarray, np.ndarray]:
    """``(f, H)``: ngspice ``.ac`` of ``output`` for ``source`` at ``AC 1``."""
    cards, nodes, _ = netlist(desc, source)
    control = [
        "set numdgt=17",  # wrdata writes with this many digits (the default loses 1e-9)
        "set wr_singlescale",
        "set wr_vecnames",
        f"ac dec {points_per_decade} {_num(f_start)} {_num(f_stop)}",
        f"let vo = {_probe(nodes, output)}",
        "wrdata ac.txt real(vo) imag(vo)",
    ]
    _, tables = _run(cards, control, ["ac.txt"])
    t = tables["ac.txt"]
    cols = list(t)
    return t[cols[0]], t[cols[1]] + 1j * t[cols[2]]


@dataclass(frozen=True)
class NoiseRun:
    """ngspice ``.noise``: output density (V/√Hz) total and by source, and band totals (V rms)."""

    f: np.ndarray
    density: np.ndarray
    parts: dict[str, np.ndarray]
    total: float
    part_totals: dict[str, float]


def noise(
    desc: Sequence[tuple],
    source: str,
    output: str | tuple[str, str],
    f_start: float,
    f_stop: float,
    points_per_decade: int = 20,
    celsius: float = 25.0,
    opamp_noise: Mapping[str, tuple[float, float]] | None = None,
) -> NoiseRun:
    """ngspice ``.noise`` of ``output`` (input ``source``); parts keyed by opsym's names."""
    cards, nodes, noisy = netlist(
        desc, source, celsius, opamp_noise, k_boltzmann=boltzmann() if opamp_noise else None
    )
    vectors = " ".join(f"onoise_{d}" for d in noisy)
    control = [
        "set numdgt=17",
        "set wr_singlescale",
        "set wr_vecnames",
        f"noise {_probe(nodes, output)} {_card_of(desc, source)} dec {points_per_decade} "
        f"{_num(f_start)} {_num(f_stop)} 1",
        "setplot noise1",
        f"wrdata noise.txt onoise_spectrum {vectors}",
        "setplot noise2",
        "print all",
    ]
    out, tables = _run(cards, control, ["noise.txt"])
    t = tables["noise.txt"]
    scalars = {}
    for line in out.splitlines():
        m = _SCALAR.match(line)
        if m:
            scalars[m.group(1).lower()] = float(m.group(2))
    f = t[next(iter(t))]
    return NoiseRun(
        f=f,
        density=t["onoise_spectrum"],
        parts={name: t[f"onoise_{d}"] for d, name in noisy.items()},
        total=scalars["onoise_total"],
        part_totals={name: scalars[f"onoise_total_{d}"] for d, name in noisy.items()},
    )


@functools.cache
def boltzmann(ohms: float = 1e3, celsius: float = 25.0) -> float:
    """ngspice's Boltzmann constant, read from a lone resistor's noise: ``e²/(4·T·R)``.

    (ngspice-39 uses the CODATA 2014 value 1.38064852e-23 J/K; SI 2019 fixes
    1.380649e-23 exactly, 3.5e-7 higher.)
    """
    desc = [("I", "I1", "0", "a", 0.0), ("R", "R1", "a", "0", ohms)]
    run = noise(desc, "I1", "a", 1.0, 10.0, 1, celsius)
    return float(run.density[0] ** 2 / (4 * (celsius + 273.15) * ohms))
