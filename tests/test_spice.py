"""opsym against ngspice operating points (an independent numeric reference).

Each textbook stage is solved by opsym with its parts symbolic, then evaluated at
invented demo values, and compared with ``ngspice -b`` ``.op`` on the same circuit:
op-amps as VCVS ``E`` cards of gain A behind a ``Vos`` source in series with the
``+`` pin, bias currents as ``I`` cards out of the pin nodes. Checks are [derived]
(KCL and superposition); the closed forms they stand for are in
``/work/shared/reference-checks.md`` cases 1–10.

Skipped without ngspice; ``OPSYM_REQUIRE_NGSPICE=1`` makes a missing ngspice fail.
"""

from __future__ import annotations

import circuits
import nodal
import pytest
from compare import close, evaluate

REL = 1e-9
FLOOR = 1e-12  # of the largest node voltage of the run

ERRORS = {"vos": 1e-3, "ibp": 1.2e-7, "ibm": 0.8e-7}

STAGES = {
    # name: (description, output, parts kept symbolic)
    "inverting": (circuits.inverting(1e3, 1e5, rp=9.9e2, **ERRORS), "out", ["R1", "R2", "Rp"]),
    "noninverting": (
        circuits.noninverting(1e4, 9e4, rs=4.7e3, **ERRORS),
        "out",
        ["R1", "R2", "Rs"],
    ),
    "difference": (
        circuits.difference(1e4, 1e5, 1e4, 1.01e5, **ERRORS),
        "out",
        ["R1", "R2", "R3", "R4"],
    ),
    "instrumentation": (
        circuits.instrumentation(
            errors=((1e-3, 1e-9, 2e-9), (-5e-4, 3e-9, 1e-9), (2e-4, 4e-9, -1e-9))
        ),
        "out",
        ["R2a", "R2b", "RG"],
    ),
    "transimpedance_t": (
        circuits.transimpedance_t(vos=5e-4, ibp=2e-12, ibm=3e-12, rp=1e5),
        "out",
        ["Ra", "Rb", "Rc", "Rsh"],
    ),
    "instrumentation_differential": (
        circuits.instrumentation(
            r2=2.2e4, rg=4.7e3, errors=((1e-3, 1e-9, 2e-9), (-5e-4, 3e-9, 1e-9), (0, 0, 0))
        ),
        ("o2", "o1"),  # the first stage's differential output
        ["RG"],
    ),
}


def _with_gain(desc, gain):
    return [(*it[:5], gain, *it[6:]) if it[0] == "OA" else it for it in desc]


def _all_values(circuit, desc, symbolic):
    """Symbol -> value for the symbolic parts and for every source."""
    values = nodal.numeric_values(circuit, desc, symbolic)
    for item in desc:
        if item[0] in ("V", "I"):
            values[circuit.symbol(item[1])] = item[4]
        elif item[0] == "OA":
            for suffix, v in zip(("Vos", "Ib+", "Ib-"), item[6:9], strict=True):
                values[circuit.symbol(f"{item[1]}.{suffix}")] = v
    return values


def _read(volts, output):
    if isinstance(output, tuple):
        return volts[output[0]] - volts[output[1]]
    return volts[output]


@pytest.mark.parametrize("symbolic_gain", [True, False], ids=["A-symbol", "A-number"])
@pytest.mark.parametrize("gain", [1e5, 2e3])
@pytest.mark.parametrize("name", sorted(STAGES))
def test_finite_gain_operating_point(ngspice, name, gain, symbolic_gain):
    desc, output, symbolic = STAGES[name]
    desc = _with_gain(desc, gain)
    if symbolic_gain:
        symbolic = [*symbolic, *(it[1] for it in desc if it[0] == "OA")]
    c = nodal.to_circuit(desc, symbolic, title=name)
    res = c.analyze(output)
    volts = ngspice.operating_point(desc)
    want = _read(volts, output)
    got = evaluate(res.expression, _all_values(c, desc, symbolic))
    assert close(got, want, REL, FLOOR * max(map(abs, volts.values()))), (got, want)


@pytest.mark.parametrize("name", sorted(STAGES))
def test_finite_gain_every_term(ngspice, name):
    # superposition through ngspice: one source at a time, A = 1e5
    desc, output, symbolic = STAGES[name]
    desc = _with_gain(desc, 1e5)
    symbolic = [*symbolic, *(it[1] for it in desc if it[0] == "OA")]
    c = nodal.to_circuit(desc, symbolic, title=name)
    res = c.analyze(output)
    values = nodal.numeric_values(c, desc, symbolic)
    for source, (want, scale) in ngspice.coefficients_with_scale(desc, output).items():
        got = evaluate(res.coefficient(source), values)
        assert close(got, want, REL, FLOOR * scale), (source, got, want)


@pytest.mark.parametrize("name", sorted(STAGES))
def test_ideal_against_high_gain_vcvs(ngspice, name):
    # the nullor against VCVS runs at A = 1e7 and 2e7, extrapolated to 1/A = 0
    desc, output, symbolic = STAGES[name]
    c = nodal.to_circuit(desc, symbolic, title=name)
    res = c.analyze(output)
    volts = ngspice.ideal_operating_point(desc)
    got = evaluate(res.expression, _all_values(c, desc, symbolic))
    want = _read(volts, output)
    assert close(got, want, 1e-8, 1e-8 * max(map(abs, volts.values()))), (got, want)


def test_bias_currents_alone(ngspice):
    # only Ib+ and Ib- on (as current sources in the netlist): inverting stage,
    # Vo = Ib-·R2 − Ib+·Rp·(1 + R2/R1) at A = 1e5 versus ngspice
    desc = circuits.inverting(1e4, 1e5, rp=9.0909e3, gain=1e5, vin=0.0, ibp=1.0e-7, ibm=0.9e-7)
    c = nodal.to_circuit(desc, ["R1", "R2", "Rp", "U1"])
    res = c.analyze("out")
    volts = ngspice.operating_point(desc)
    got = evaluate(res.expression, _all_values(c, desc, ["R1", "R2", "Rp", "U1"]))
    assert close(got, volts["out"], REL, 1e-15)
