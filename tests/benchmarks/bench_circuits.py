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
