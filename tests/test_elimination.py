"""Fraction-free elimination: equal to field elimination, engine-independent, fast on dense blocks.

Each block is solved fraction-free over integer polynomials (Bareiss), with
python-flint when installed and SymPy's polynomials otherwise. The reference is
the field elimination (``method="field"``: rational functions, every result
factored), exactly: ``cancel(a − b) == 0`` [derived]. The R-2R ladder is
checked against its published binary weights.
"""

from __future__ import annotations

import sys
from pathlib import Path

import circuits
import nodal
import pytest
import sympy as sp
from drawing import DrawPicker, example_settings
from hypothesis import assume, given
from hypothesis import strategies as st

from opsym.analyses.derive import output_weights
from opsym.equations._poly import engine, flint_available
from opsym.equations.adjoint import solve_adjoint
from opsym.equations.mna import build_equations

sys.path.insert(0, str(Path(__file__).resolve().parent / "benchmarks"))
from bench_circuits import integrator_ring, r2r_dac, resistor_mesh, summer

ENGINES = [
    "sympy",
    pytest.param(
        "flint",
        marks=pytest.mark.skipif(not flint_available(), reason="python-flint is not installed"),
    ),
]


def _solutions(circuit, output, domain, method):
    eqs = build_equations(circuit, domain=domain)
    weights, _ = output_weights(circuit, output, eqs.index)
    return solve_adjoint(eqs, weights, method=method)


def _assert_equal(circuit, output, domain, method):
    new = _solutions(circuit, output, domain, method)
    old = _solutions(circuit, output, domain, "field")
    for a, b in zip(new, old, strict=True):
        assert sp.cancel(sp.together(a - b)) == 0, (a, b)


@st.composite
def networks(draw):
    return circuits.random_circuit(DrawPicker(draw), max_opamps=3)


@example_settings(40)
@given(networks(), st.sampled_from(["sympy", "flint"]))
def test_fraction_free_equals_field_elimination_on_random_circuits(case, method):
    assume(method == "sympy" or flint_available())
    desc, output, symbolic = case
    try:
        nodal.coefficients_with_scale(desc, output, exact=True)
    except nodal.ReferenceSingularError:
        assume(False)
    _assert_equal(nodal.to_circuit(desc, symbolic), output, "dc", method)


@pytest.mark.parametrize("method", ENGINES)
@pytest.mark.parametrize(
    ("circuit", "output", "domain"),
    [
        (r2r_dac(3), "out", "dc"),
        (summer(5), "out", "dc"),
        (resistor_mesh(2), "out", "dc"),
        (integrator_ring(3), "o3", "s"),
        (integrator_ring(4), "o4", "s"),
    ],
    ids=["dac3", "summer5", "mesh2", "ring3", "ring4"],
)
def test_fraction_free_equals_field_elimination_on_dense_circuits(circuit, output, domain, method):
    _assert_equal(circuit, output, domain, method)


def test_both_engines_give_identical_forms():
    """The engines convert back to the same SymPy ring: the shown forms are the same."""
    if not flint_available():
        pytest.skip("python-flint is not installed")
    circuit = resistor_mesh(2)
    assert _solutions(circuit, "out", "dc", "flint") == _solutions(circuit, "out", "dc", "sympy")


@pytest.mark.parametrize("name", ENGINES)
def test_engine_gcd_and_exact_division(name):
    from sympy.polys.rings import ring

    R, x, y, z = ring("x y z", sp.ZZ)
    eng = engine(R, name)
    a = eng.native(6 * x**2 * (x + y * z) ** 2 * (y - 3))
    b = eng.native(4 * x * (x + y * z) * (z + 1))
    assert eng.back(eng.gcd(a, b)) in (2 * x * (x + y * z), -2 * x * (x + y * z))
    assert eng.back(eng.exquo(a, eng.native(x + y * z))) == 6 * x**2 * (x + y * z) * (y - 3)
    coprime = eng.gcd(eng.native(x * y + 1), eng.native(x + y))
    assert eng.back(coprime) in (R.one, -R.one)


@pytest.mark.parametrize("bits", [3, 5])
def test_r2r_ladder_has_binary_weights(bits):
    """Kester (ed.), Data Conversion Handbook (2005), ch. 3 [from memory]: an R-2R ladder
    into an inverting amplifier gives Vout = −Vref·(Rf/R)·Σ bᵢ/2^(N−i), i = 0 … N−1;
    here each bit drives its own 2R leg with bᵢ·Vref (the voltage-mode ladder)."""
    r, rf = sp.symbols("R R_f", positive=True)
    circuit = r2r_dac(bits, gain="ideal")
    values = {"Rt": 2 * r, "Rf": rf}
    for i in range(bits):
        values |= {f"R2_{i}": 2 * r} | ({f"R_{i}": r} if i + 1 < bits else {})
    res = circuit.analyze("out", values=values)
    for i in range(bits):
        want = -rf / r / 2 ** (bits - i)
        assert sp.cancel(res.coefficient(f"B{i}") - want) == 0


def test_wide_summer_weights():
    """A 64-input summer (one hub node, 64 symbolic resistors; its time is in bench_dense.py)."""
    res = summer(64).analyze("out")
    # Ideal limit of each weight: −Rf/Ri (inverting summer, any op-amp text).
    names = {str(s): s for s in res.coefficient("V7").free_symbols}
    t = sp.Dummy("t", positive=True)
    inverse = res.coefficient("V7").xreplace({names["U1.A"]: 1 / t})
    num, den = sp.fraction(sp.cancel(sp.together(inverse)))
    assert sp.cancel(num.subs(t, 0) / den.subs(t, 0) + names["Rf"] / names["R7"]) == 0


def test_null_reads_a_linear_zero_off_its_coefficients():
    """c1·x + c0 = 0 at x = −c0/c1 (algebra); the same answer sympy.solve gives."""
    from opsym.analyses._null import null_roots as zeros_in

    r1, r2, r3, x = sp.symbols("R1 R2 R3 x", positive=True)
    numerator = r1 * r2 - x * (r1 + r2) + r3 * x * r1
    (root,) = zeros_in(numerator, x)
    assert sp.cancel(root - r1 * r2 / (r1 + r2 - r1 * r3)) == 0
    assert [sp.factor(s) for s in sp.solve(numerator, x)] == [root]
    quadratic = zeros_in(x**2 - r1 * r2, x)  # not linear: solved, positive root only
    assert quadratic == [sp.sqrt(r1) * sp.sqrt(r2)]
