"""Circuits the benchmarks (and scaling tests) share; invented values only."""

from __future__ import annotations

import opsym


def inverting_cascade(stages: int, gain: str = "finite") -> opsym.Circuit:
    """``stages`` inverting stages in a row, each with R1, R2 and a bias-compensation
    resistor R3 to its + pin; every op-amp carries Vos and Ib± (and finite gain)."""
    c = opsym.Circuit(f"{stages}-stage inverting cascade")
    c.voltage_source("Vin", "s0", "0")
    for k in range(1, stages + 1):
        c.resistor(f"R1_{k}", f"s{k - 1}", f"n{k}")
        c.resistor(f"R2_{k}", f"n{k}", f"s{k}")
        c.resistor(f"R3_{k}", f"p{k}", "0")
        c.opamp(f"U{k}", plus=f"p{k}", minus=f"n{k}", out=f"s{k}", gain=gain)
    return c


def instrumentation_amplifier(gain: str = "finite") -> opsym.Circuit:
    """Three-op-amp instrumentation amplifier (input pair, gain resistor, difference stage)."""
    c = opsym.Circuit("three-op-amp instrumentation amplifier")
    c.voltage_source("V1", "i1", "0")
    c.voltage_source("V2", "i2", "0")
    c.opamp("A1", plus="i1", minus="n1", out="o1", gain=gain)
    c.opamp("A2", plus="i2", minus="n2", out="o2", gain=gain)
    c.resistor("R2a", "o1", "n1")
    c.resistor("RG", "n1", "n2")
    c.resistor("R2b", "o2", "n2")
    c.resistor("R3a", "o1", "n3")
    c.resistor("R4a", "n3", "out")
    c.resistor("R3b", "o2", "p3")
    c.resistor("R4b", "p3", "0")
    c.opamp("A3", plus="p3", minus="n3", out="out", gain=gain)
    return c


def r2r_dac(bits: int, gain: str = "finite") -> opsym.Circuit:
    """Voltage-mode R-2R ladder into an inverting op-amp: one source ``B{i}`` per bit.

    Bit ``i`` (0 = least significant) drives ladder node ``i`` through its own
    2R leg ``R2_{i}``; series resistors ``R_{i}`` join node ``i`` to node
    ``i + 1``; ``Rt`` (2R) terminates the least significant end; the most
    significant node is the virtual ground ``n``, and ``Rf`` closes the loop.
    """
    c = opsym.Circuit(f"{bits}-bit R-2R DAC")

    def node(i: int) -> str:
        return "n" if i == bits - 1 else f"l{i}"

    c.resistor("Rt", node(0), "0")
    for i in range(bits):
        c.voltage_source(f"B{i}", f"b{i}", "0")
        c.resistor(f"R2_{i}", f"b{i}", node(i))
        if i + 1 < bits:
            c.resistor(f"R_{i}", node(i), node(i + 1))
    c.resistor("Rf", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", gain=gain)
    return c


def summer(inputs: int, gain: str = "finite") -> opsym.Circuit:
    """Inverting summing amplifier: ``inputs`` sources, each through its own resistor."""
    c = opsym.Circuit(f"{inputs}-input summer")
    for i in range(inputs):
        c.voltage_source(f"V{i}", f"i{i}", "0")
        c.resistor(f"R{i}", f"i{i}", "n")
    c.resistor("Rf", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", gain=gain)
    return c


def resistor_mesh(k: int, gain: str = "finite") -> opsym.Circuit:
    """A k×k grid of resistors from the source (corner 0,0) to the − pin (corner k-1,k-1)."""
    c = opsym.Circuit(f"{k}x{k} resistor mesh")

    def node(i: int, j: int) -> str:
        if (i, j) == (k - 1, k - 1):
            return "n"
        return f"m{i}_{j}"

    c.voltage_source("Vin", node(0, 0), "0")
    for i in range(k):
        for j in range(k):
            if i + 1 < k:
                c.resistor(f"Rv{i}_{j}", node(i, j), node(i + 1, j))
            if j + 1 < k:
                c.resistor(f"Rh{i}_{j}", node(i, j), node(i, j + 1))
    c.resistor("Rf", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", gain=gain)
    return c


def integrator_ring(stages: int) -> opsym.Circuit:
    """``stages`` inverting integrators in a loop (s domain, ideal op-amps), driven by Vin."""
    c = opsym.Circuit(f"ring of {stages} integrators")
    c.voltage_source("Vin", "in", "0")
    c.resistor("Rin", "in", "n1")
    for k in range(1, stages + 1):
        source = f"o{stages}" if k == 1 else f"o{k - 1}"
        c.resistor(f"R{k}", source, f"n{k}")
        c.capacitor(f"C{k}", f"n{k}", f"o{k}")
        c.opamp(f"U{k}", plus="0", minus=f"n{k}", out=f"o{k}")
    return c


def sallen_key_chain(sections: int, gain: str = "finite") -> opsym.Circuit:
    """``sections`` unity-gain Sallen–Key low-pass sections in a row (s domain).

    Section ``k``: ``R1_k`` from the previous output to node ``a{k}``, ``R2_k``
    on to the + pin ``p{k}``, ``C1_k`` from ``a{k}`` back to the output
    ``o{k}`` (the feedback capacitor), ``C2_k`` from ``p{k}`` to ground; the
    op-amp ``U{k}`` is a follower. Ideal op-amps give
    ``1/(s²·R1R2C1C2 + s·C2(R1 + R2) + 1)`` per section. Every component is
    symbolic; every op-amp carries Vos and Ib± (and the gain model ``gain``).
    """
    c = opsym.Circuit(f"{sections}-section Sallen-Key low-pass")
    c.voltage_source("Vin", "o0", "0")
    for k in range(1, sections + 1):
        c.resistor(f"R1_{k}", f"o{k - 1}", f"a{k}")
        c.resistor(f"R2_{k}", f"a{k}", f"p{k}")
        c.capacitor(f"C1_{k}", f"a{k}", f"o{k}")
        c.capacitor(f"C2_{k}", f"p{k}", "0")
        c.opamp(f"U{k}", plus=f"p{k}", minus=f"o{k}", out=f"o{k}", gain=gain)
    return c
