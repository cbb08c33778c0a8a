"""The reference solvers checked against each other and against hand formulas.

None of this uses opsym: it establishes that the two numeric references
(:mod:`nodal`, :mod:`spice`) can be trusted before they judge opsym.
"""

from __future__ import annotations

import circuits
import nodal
import pytest
import spice
from compare import close


def _finite(desc, gain):
    """Every ideal op-amp of ``desc`` given the finite gain ``gain``."""
    return [
        (*it[:5], gain if it[5] is None else it[5], *it[6:]) if it[0] == "OA" else it
        for it in desc
    ]


# -- nodal against closed forms ([derived] KCL, and the reference-checks cases) --------


def test_inverting_finite_gain_closed_form():
    # reference-checks case 7 [mem]: V3/Vin = -A·R2/(A·R1 + R1 + R2)
    r1, r2, a = 1e3, 1e4, 1e5
    want = -a * r2 / (a * r1 + r1 + r2)
    for exact in (True, False):
        got = nodal.output_value(circuits.inverting(r1, r2, gain=a), "out", exact=exact)
        assert close(got, want, 1e-12)
    assert round(want, 9) == -9.998900121  # case 7's printed value


def test_ideal_stages_closed_forms():
    # [derived]: single stages, NG·Vos, Ib-·R2, -Ib+·Rp·NG
    r1, r2, rp = 1e4, 1e5, 9e3
    c = nodal.coefficients(circuits.inverting(r1, r2, rp=rp), "out", exact=True)
    assert close(c["Vin"], -r2 / r1, 1e-14)
    assert close(c["U1.Vos"], 1 + r2 / r1, 1e-14)
    assert close(c["U1.Ib-"], r2, 1e-14)
    assert close(c["U1.Ib+"], -rp * (1 + r2 / r1), 1e-14)
    c = nodal.coefficients(circuits.noninverting(1e3, 9e3, rs=2e3), "out", exact=True)
    assert close(c["Vin"], 10, 1e-14)
    assert close(c["U1.Ib+"], -2e3 * 10, 1e-14)
    assert close(c["U1.Ib-"], 9e3, 1e-14)


def test_instrumentation_gain():
    # reference-checks case 9 [pub]: G = (1 + 2·R2/RG)·R4/R3 = 100
    c = nodal.coefficients(circuits.instrumentation(), "out", exact=True)
    assert close(c["V2"], 100, 1e-14)
    assert close(c["V1"], -100, 1e-14)


def test_transimpedance_t_network():
    # [derived]: T network Ra, Rb, Rc is a feedback resistance Ra + Rb + Ra·Rb/Rc
    ra, rb, rc = 1e6, 1e6, 1e4
    c = nodal.coefficients(circuits.transimpedance_t(ra, rb, rc, rsh=1e8), "out", exact=True)
    assert close(c["Iin"], -(ra + rb + ra * rb / rc), 1e-14)


def test_float_and_exact_agree_on_random_circuits():
    worst = 0.0
    for seed in range(150):
        desc, out, _ = circuits.random_circuit(circuits.RandomPicker(seed), tame=True)
        ex = nodal.coefficients_with_scale(desc, out, exact=True)
        fl = nodal.coefficients_with_scale(desc, out, exact=False)
        for name, (want, scale) in ex.items():
            got = fl[name][0]
            assert close(got, want, 1e-9, 1e-12 * scale), (seed, name, got, want)
            worst = max(worst, abs(got - want) / max(abs(want), scale, 1e-300))
    assert worst < 1e-10


def test_singular_loops_are_detected():
    # two voltage sources in parallel, and a source across an op-amp output
    desc = [("V", "Va", "a", "0", 1.0), ("V", "Vb", "a", "0", 2.0), ("R", "R1", "a", "0", 1e3)]
    with pytest.raises(nodal.ReferenceSingularError, match="Vb"):
        nodal.solve(desc)
    desc = [("R", "R1", "n", "out", 1e3), ("V", "Vx", "out", "0", 1.0)]
    desc.append(("OA", "U1", "0", "n", "out", None, 0.0, 0.0, 0.0))
    with pytest.raises(nodal.ReferenceSingularError, match="loop"):
        nodal.solve(desc)
    # a floating island
    desc = [("V", "V1", "a", "0", 1.0), ("R", "R1", "a", "0", 1e3), ("R", "R2", "x", "y", 1e3)]
    with pytest.raises(nodal.ReferenceSingularError, match="x, y"):
        nodal.solve(desc)


# -- nodal against ngspice -------------------------------------------------------------

TEXTBOOK = {
    "inverting": (circuits.inverting(rp=9.09e2, vos=1e-3, ibp=1e-7, ibm=9.5e-8), "out"),
    "noninverting": (circuits.noninverting(rs=1e4, vos=-2e-3, ibp=1e-7, ibm=1.1e-7), "out"),
    "difference": (circuits.difference(r4=1.01e5, vos=5e-4, ibp=2e-8, ibm=3e-8), "out"),
    "instrumentation": (
        circuits.instrumentation(errors=((1e-3, 1e-9, 2e-9), (-5e-4, 3e-9, 1e-9), (2e-4, 0, 0))),
        "out",
    ),
    "transimpedance_t": (circuits.transimpedance_t(vos=5e-4, ibp=2e-12, ibm=3e-12), "out"),
}


@pytest.mark.parametrize("gain", [1e3, 1e5, 1e6])
@pytest.mark.parametrize("name", sorted(TEXTBOOK))
def test_spice_agrees_with_nodal_on_textbook_stages(ngspice, name, gain):
    desc, out = TEXTBOOK[name]
    desc = _finite(desc, gain)
    want = nodal.coefficients_with_scale(desc, out, exact=True)
    got = ngspice.coefficients_with_scale(desc, out)
    for source, (w, scale) in want.items():
        assert close(got[source][0], w, 1e-9, 1e-12 * scale), (source, got[source][0], w)
    # and the full operating point, every node
    ref = nodal.solve(desc, exact=True)
    op = ngspice.operating_point(desc)
    big = max(abs(v) for v in ref.values())
    for node, v in ref.items():
        assert close(op[node], v, 1e-9, 1e-12 * big), node


def test_spice_agrees_with_nodal_on_random_circuits(ngspice):
    # ngspice solves in float64 LU without refinement; on random networks whose
    # feedback loops make the matrix ill-conditioned it keeps ~1e-9 of the largest
    # node voltage, so the floor is relative to that scale here.
    for seed in range(40):
        desc, out, _ = circuits.random_circuit(circuits.RandomPicker(seed), tame=True)
        desc = _finite(desc, 1e5)
        want = nodal.coefficients_with_scale(desc, out, exact=True)
        got = ngspice.coefficients_with_scale(desc, out)
        for source, (w, scale) in want.items():
            assert close(got[source][0], w, 1e-9, 1e-8 * scale), (seed, source, got[source], w)


@pytest.mark.parametrize("name", sorted(TEXTBOOK))
def test_spice_ideal_stand_in(ngspice, name):
    # nullor (nodal, exact) against ngspice VCVS runs extrapolated to 1/A = 0
    desc, _ = TEXTBOOK[name]
    want = nodal.solve(desc, exact=True)
    got = ngspice.ideal_operating_point(desc)
    big = max(map(abs, want.values()))
    for node, w in want.items():
        assert close(got[node], w, 1e-8, 1e-10 * big), (node, got[node], w)


def test_netlist_marks_every_source():
    text, nodes = spice.netlist(TEXTBOOK["instrumentation"][0])
    for card in ("VOS", "IBP", "IBM", "E"):
        assert sum(line.startswith(card) for line in text.splitlines()) == 3
    assert set(nodes.values()) == {"0", *nodal.nodes_of(TEXTBOOK["instrumentation"][0])}


def test_missing_ngspice_skips_or_fails(monkeypatch):
    monkeypatch.setattr(spice.shutil, "which", lambda name: None)
    monkeypatch.delenv("OPSYM_REQUIRE_NGSPICE", raising=False)
    with pytest.raises(pytest.skip.Exception):
        spice.require_ngspice()
    monkeypatch.setenv("OPSYM_REQUIRE_NGSPICE", "1")
    with pytest.raises(pytest.fail.Exception):
        spice.require_ngspice()
