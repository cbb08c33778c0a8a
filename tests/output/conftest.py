"""Invented circuits shared by the output tests (no real parts: values made up).

* ``inverting``: R1 = 2 kΩ, R2 = 20 kΩ, single-pole op-amp A0 = 200 000, GBW = 3 MHz.
* ``transimpedance``: Rf = 1 MΩ ‖ Cf = 2.2 pF, an input capacitance Cd = 47 pF,
  single-pole op-amp A0 = 100 000, GBW = 10 MHz, en = 12 nV/√Hz, in = 3 fA/√Hz.
"""

from __future__ import annotations

import pytest

import opsym

INVERTING_VALUES = {"U1.A0": "200k", "U1.GBW": "3M"}
TIA_VALUES = {"U1.A0": "100k", "U1.GBW": "10M", "U1.en": "12n", "U1.in": "3f"}


def inverting_circuit(values: bool = True, gain: str = "pole") -> opsym.Circuit:
    c = opsym.Circuit("inverting x10")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n", value="2k" if values else None)
    c.resistor("R2", "n", "out", value="20k" if values else None)
    c.opamp("U1", plus="0", minus="n", out="out", gain=gain, bias=False)
    return c


def tia_circuit() -> opsym.Circuit:
    c = opsym.Circuit("transimpedance")
    c.current_source("Iin", "0", "n")
    c.capacitor("Cd", "n", "0", value="47p")
    c.resistor("Rf", "n", "out", value="1M")
    c.capacitor("Cf", "n", "out", value="2.2p")
    c.opamp("U1", plus="0", minus="n", out="out", gain="pole")
    return c


@pytest.fixture(scope="session")
def inverting():
    """The inverting stage in the s domain, every value given."""
    return inverting_circuit().analyze("out", domain="s", values=INVERTING_VALUES)


@pytest.fixture(scope="session")
def inverting_symbolic():
    """The same stage with R1, R2, A0 and GBW left as symbols."""
    return inverting_circuit(values=False).analyze("out", domain="s")


@pytest.fixture(scope="session")
def tia():
    return tia_circuit().analyze("out", domain="s", values=TIA_VALUES)


@pytest.fixture(scope="session")
def tia_noise():
    return tia_circuit().noise("out", values=TIA_VALUES)
