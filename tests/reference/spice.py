"""ngspice as an independent numeric reference: netlist writer and ``.op`` runner.

Takes the same plain description as :mod:`nodal` and writes a SPICE netlist:
resistors and capacitors as ``R``/``C`` cards, sources as ``V``/``I`` cards, and each
op-amp as a voltage-controlled voltage source ``E`` whose non-inverting control
node sits behind a DC source ``Vos`` (the offset in series with the ``+`` pin), with
the bias currents as ``I`` cards drawing current out of the pin nodes. An ideal
op-amp becomes a VCVS of gain :data:`IDEAL_GAIN`.

ngspice is only a test-time reference; opsym never calls it.
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import tempfile
from collections.abc import Sequence
from typing import Any

import pytest
from nodal import GROUND, canonical_node, nodes_of, source_names, with_sources

__all__ = [
    "IDEAL_GAIN",
    "SpiceError",
    "coefficients",
    "coefficients_with_scale",
    "have_ngspice",
    "ideal_operating_point",
    "netlist",
    "operating_point",
    "require_ngspice",
]

#: Gain of the VCVS that stands in for an ideal op-amp. Not higher: ngspice solves
#: in float64, and an output of A·(v+ - v-) carries round-off of about eps·A volts.
IDEAL_GAIN = 1e7

_LINE = re.compile(r"^\s*([A-Za-z0-9_#.\-+]+)\s*=\s*([-+]?[0-9.]+(?:[eE][-+]?[0-9]+)?)\s*$")


class SpiceError(RuntimeError):
    """ngspice failed or printed something this module cannot read."""


def have_ngspice() -> bool:
    """True if an ``ngspice`` executable is on PATH."""
    return shutil.which("ngspice") is not None


def require_ngspice() -> None:
    """Skip the calling test without ngspice; fail instead when OPSYM_REQUIRE_NGSPICE=1."""
    if have_ngspice():
        return
    if os.environ.get("OPSYM_REQUIRE_NGSPICE") == "1":
        pytest.fail("ngspice is not on PATH but OPSYM_REQUIRE_NGSPICE=1")
    pytest.skip("ngspice is not installed (set OPSYM_REQUIRE_NGSPICE=1 to make this fail)")


def _num(x: Any) -> str:
    return repr(float(x))


def netlist(
    desc: Sequence[Sequence[Any]], title: str = "opsym reference", ideal_gain: float = IDEAL_GAIN
) -> tuple[str, dict[str, str]]:
    """Return the netlist text and the map from spice node name to description node."""
    names = {GROUND: "0", "gnd": "0"}
    for i, n in enumerate(nodes_of(desc), start=1):
        names[n] = f"n{i}"
    back = {v: k for k, v in names.items() if k != "gnd"}
    lines = [f"* {title}"]
    for k, item in enumerate(desc, start=1):
        kind, name = item[0], item[1]
        if kind in ("R", "C", "V", "I"):
            a, b = names[canonical_node(item[2])], names[canonical_node(item[3])]
            value = _num(item[4])
            if kind in ("V", "I"):
                value = "DC " + value
            lines.append(f"{kind}{k} {a} {b} {value} ; {name}")
        elif kind == "OA":
            plus, minus, out = (names[canonical_node(p)] for p in item[2:5])
            gain = ideal_gain if item[5] is None else item[5]
            inner = f"x{k}"  # the + pin behind the offset source
            lines += [
                f"VOS{k} {inner} {plus} DC {_num(item[6])} ; {name}.Vos",
                f"IBP{k} {plus} 0 DC {_num(item[7])} ; {name}.Ib+ (into the pin)",
                f"IBM{k} {minus} 0 DC {_num(item[8])} ; {name}.Ib- (into the pin)",
                f"E{k} {out} 0 {inner} {minus} {_num(gain)} ; {name}",
            ]
        else:
            raise ValueError(f"unknown element kind {kind!r}")
    # pivrel=1: partial pivoting on every column; the default threshold (1e-3) loses
    # digits on the ill-conditioned matrices that high-gain feedback loops make
    lines += [
        ".options pivrel=1",
        ".control",
        "set numdgt=17",
        "op",
        "print all",
        "quit",
        ".endc",
        ".end",
        "",
    ]
    return "\n".join(lines), back


def run_batch(
    text: str, timeout: float = 30, read: Sequence[str] = ()
) -> tuple[str, dict[str, str]]:
    """Run ``ngspice -b`` on the netlist ``text`` in a scratch directory.

    Returns its standard output and the text of each file in ``read`` that the
    run wrote there (``wrdata`` tables). A failed or singular run raises
    :class:`SpiceError` with the netlist.
    """
    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "circuit.cir")
        with open(path, "w") as fh:
            fh.write(text)
        run = subprocess.run(
            ["ngspice", "-b", path],
            capture_output=True,
            text=True,
            timeout=timeout,
            cwd=tmp,
            check=False,
        )
        out = run.stdout
        if run.returncode != 0 or "singular" in (out + run.stderr).lower():
            raise SpiceError(
                f"ngspice failed (exit {run.returncode}):\n{run.stderr}\n{out}"
                f"\n--- netlist\n{text}"
            )
        files = {}
        for name in read:
            with open(os.path.join(tmp, name)) as fh:
                files[name] = fh.read()
    return out, files


def operating_point(
    desc: Sequence[Sequence[Any]], ideal_gain: float = IDEAL_GAIN, timeout: float = 30
) -> dict[str, float]:
    """Run ``ngspice -b`` on the circuit; return every node voltage (ground included)."""
    text, back = netlist(desc, ideal_gain=ideal_gain)
    out, _ = run_batch(text, timeout=timeout)
    volts = {GROUND: 0.0}
    for line in out.splitlines():
        m = _LINE.match(line)
        if m and m.group(1).lower() in back:
            volts[back[m.group(1).lower()]] = float(m.group(2))
    missing = set(back.values()) - set(volts)
    if missing:
        raise SpiceError(f"ngspice printed no voltage for {sorted(missing)}:\n{out}")
    return volts


def ideal_operating_point(
    desc: Sequence[Sequence[Any]], gain: float = IDEAL_GAIN
) -> dict[str, float]:
    """Node voltages with ideal op-amps, by Richardson extrapolation in 1/A.

    Every ideal op-amp of ``desc`` (gain ``None``) is run at ``A`` and ``2A``; a node
    voltage is ``v_inf + c/A + O(1/A^2)``, so ``2·v(2A) - v(A)`` removes the 1/A
    term. Op-amps with a finite gain keep it.
    """
    lo = operating_point(desc, ideal_gain=gain)
    hi = operating_point(desc, ideal_gain=2 * gain)
    return {n: 2 * hi[n] - lo[n] for n in lo}


def coefficients(
    desc: Sequence[Sequence[Any]],
    output: str | tuple[str, str],
    ideal_gain: float = IDEAL_GAIN,
) -> dict[str, float]:
    """Superposition with ngspice: the output for each source alone at unit value."""
    result = {}
    for s in source_names(desc):
        v = operating_point(with_sources(desc, {s: 1.0}), ideal_gain=ideal_gain)
        if isinstance(output, tuple):
            result[s] = v[canonical_node(output[0])] - v[canonical_node(output[1])]
        else:
            result[s] = v[canonical_node(output)]
    return result


def coefficients_with_scale(
    desc: Sequence[Sequence[Any]],
    output: str | tuple[str, str],
    ideal_gain: float = IDEAL_GAIN,
) -> dict[str, tuple[float, float]]:
    """Like :func:`coefficients`, with the largest node voltage of each unit-source run."""
    result = {}
    for s in source_names(desc):
        v = operating_point(with_sources(desc, {s: 1.0}), ideal_gain=ideal_gain)
        if isinstance(output, tuple):
            y = v[canonical_node(output[0])] - v[canonical_node(output[1])]
        else:
            y = v[canonical_node(output)]
        result[s] = (y, max(abs(x) for x in v.values()))
    return result


def output_value(desc: Sequence[Sequence[Any]], output: str | tuple[str, str]) -> float:
    """The output with every source at its described value."""
    v = operating_point(desc)
    if isinstance(output, tuple):
        return v[canonical_node(output[0])] - v[canonical_node(output[1])]
    return v[canonical_node(output)]
