"""Nested results (a sequence of expressions ``X₁ = …``) where the expanded form is too large.

The nested path is forced (``nest_terms=0`` or ``sparse.NEST_TERMS = 0``) on
cases small enough to expand, and compared with the expanded solve exactly at
random rational values [derived: both are the same rational function]. Large
cases are checked against the R-2R ladder's binary weights (Horowitz & Hill,
The Art of Electronics, 3rd ed., §13.2 [from memory]: an R-2R ladder into an
inverting amplifier gives −(Rf/R)·Σ Vₖ·2^(k−n)) and against the independent
nodal solver in ``tests/reference/nodal.py`` (exact fractions).
"""

from __future__ import annotations

import random
import sys
from fractions import Fraction
from pathlib import Path

import nodal
import numpy as np
import pytest
import sympy as sp

import opsym
from opsym.analyses.derive import output_weights
from opsym.equations import sparse
from opsym.equations._poly import flint_available
from opsym.equations.adjoint import solve_adjoint
from opsym.equations.mna import build_equations
from opsym.equations.nested import Aux, expanded

sys.path.insert(0, str(Path(__file__).resolve().parent / "benchmarks"))
from bench_circuits import r2r_dac, resistor_mesh

ENGINES = [
    "sympy",
    pytest.param(
        "flint",
        marks=pytest.mark.skipif(not flint_available(), reason="python-flint is not installed"),
    ),
]


def _z(circuit, method, nest_terms):
    eqs = build_equations(circuit)
    weights, _ = output_weights(circuit, "out", eqs.index)
    return solve_adjoint(eqs, weights, method=method, nest_terms=nest_terms)


def _random_values(exprs, seed=7):
    rnd = random.Random(seed)
    symbols = set().union(*(e.free_symbols for e in exprs))
    return {s: sp.Rational(rnd.randint(1, 999), rnd.randint(1, 99)) for s in symbols}


def _nested(circuit, monkeypatch):
    monkeypatch.setattr(sparse, "NEST_TERMS", 0)
    try:
        return circuit.analyze("out")
    finally:
        monkeypatch.undo()


def _dac_values(bits, r=10_000, rf=10_000, gain=None):
    values = {"Rt": 2 * r, "Rf": rf}
    for i in range(bits):
        values[f"R2_{i}"] = 2 * r
        if i + 1 < bits:
            values[f"R_{i}"] = r
    if gain is not None:
        values["U1.A"] = gain
    return values


def _exact(desc):
    """Each source's coefficient at ``out`` from the nodal solver, in exact fractions."""
    return {
        name: nodal._difference(nodal.solve_fractions(nodal.with_sources(desc, {name: 1})), "out")
        for name in nodal.source_names(desc)
    }


def _dac_description(bits, r, rf, gain):
    """The same ladder for the independent nodal solver."""
    node = lambda i: "n" if i == bits - 1 else f"l{i}"  # noqa: E731 - a short local map
    desc = [("R", "Rt", node(0), "0", 2 * r), ("R", "Rf", "n", "out", rf)]
    for i in range(bits):
        desc += [("V", f"B{i}", f"b{i}", "0", 0), ("R", f"R2_{i}", f"b{i}", node(i), 2 * r)]
        if i + 1 < bits:
            desc.append(("R", f"R_{i}", node(i), node(i + 1), r))
    desc.append(("OA", "U1", "0", "n", "out", gain, 0, 0, 0))
    return desc


@pytest.mark.parametrize("method", ENGINES)
@pytest.mark.parametrize(
    "circuit", [r2r_dac(4), r2r_dac(6), resistor_mesh(2), resistor_mesh(3)],
    ids=["dac4", "dac6", "mesh2", "mesh3"],
)  # fmt: skip
def test_nested_equals_expanded_at_random_values(circuit, method):
    """Forced nesting gives the expanded solve's numbers exactly [derived: same function]."""
    flat = _z(circuit, method, 10**9)
    nested = _z(circuit, method, 0)
    assert any(e.atoms(Aux) for e in nested)
    values = _random_values(flat)
    for a, b in zip(flat, nested, strict=True):
        assert a.xreplace(values) == b.xreplace(values)


def test_both_engines_give_the_same_numbers_past_the_limit():
    """8 bits passes the nesting limit during the fraction-free solve in either engine."""
    if not flint_available():
        pytest.skip("python-flint is not installed")
    a, b = _z(r2r_dac(8), "flint", None), _z(r2r_dac(8), "sympy", None)
    assert any(e.atoms(Aux) for e in a) and any(e.atoms(Aux) for e in b)
    values = _random_values(a, seed=3)
    assert [e.xreplace(values) for e in a] == [e.xreplace(values) for e in b]


def test_expanded_form_equals_the_flat_solve_symbolically(monkeypatch):
    """DAC 4 bits: the nested result expanded is the flat result [derived]."""
    circuit = r2r_dac(4)
    flat, nested = circuit.analyze("out"), _nested(circuit, monkeypatch)
    assert nested.definitions and not flat.definitions
    back = nested.expanded()
    assert not back.definitions
    for s in flat.terms:
        assert sp.cancel(back.coefficient(s) - flat.coefficient(s)) == 0


@pytest.mark.parametrize("bits", [12, 16])
def test_r2r_binary_weights_from_the_nested_result(bits):
    """Horowitz & Hill [from memory]: coefficient of Bₖ is −(Rf/R)·2^(k−n) (ideal op-amp)."""
    res = r2r_dac(bits, gain="ideal").analyze("out")
    assert res.definitions  # the nested path was taken
    got = res.subs(_dac_values(bits, rf=15_000))
    for k in range(bits):
        want = -sp.Rational(15_000, 10_000) * sp.Rational(2) ** (k - bits)
        assert got.coefficient(f"B{k}") == want


@pytest.mark.parametrize("bits", [12, 16])
def test_r2r_finite_gain_against_the_nodal_reference(bits):
    """Finite A = 10^5: every bit's coefficient equals the independent exact nodal solve."""
    res = r2r_dac(bits).analyze("out")
    got = res.subs(_dac_values(bits, gain=100_000))
    want = _exact(_dac_description(bits, 10_000, 10_000, 100_000))
    assert len(want) == bits + 3
    for name, value in want.items():
        assert Fraction(str(got.coefficient(name))) == value, name


def test_mesh_4x4_against_the_nodal_reference():
    """Random resistor values and A: the nested 4×4 mesh equals the nodal solve."""
    circuit = resistor_mesh(4)
    res = circuit.analyze("out")
    assert res.definitions
    rnd = random.Random(11)
    desc = [("V", "Vin", "m0_0", "0", 0), ("R", "Rf", "n", "out", rnd.randint(1, 99) * 1000)]
    node = lambda i, j: "n" if (i, j) == (3, 3) else f"m{i}_{j}"  # noqa: E731
    for i in range(4):
        for j in range(4):
            if i + 1 < 4:
                desc.append(("R", f"Rv{i}_{j}", node(i, j), node(i + 1, j), rnd.randint(1, 99)))
            if j + 1 < 4:
                desc.append(("R", f"Rh{i}_{j}", node(i, j), node(i, j + 1), rnd.randint(1, 99)))
    desc.append(("OA", "U1", "0", "n", "out", 54_321, 0, 0, 0))
    values = {d[1]: d[4] for d in desc if d[0] == "R"} | {"U1.A": 54_321}
    got = res.subs(values)
    for name, value in _exact(desc).items():
        assert Fraction(str(got.coefficient(name))) == value, name


def test_sensitivity_by_the_chain_rule_is_exact(monkeypatch):
    """DAC 4 bits: nested sensitivities equal the flat ones at random values [derived]."""
    circuit = r2r_dac(4)
    flat, nested = circuit.analyze("out"), _nested(circuit, monkeypatch)
    values = _random_values(flat.terms.values(), seed=5)
    for part in ("Rf", "R_2", "R2_0", "U1.A"):
        a = flat.sensitivity(part, of="B3").xreplace(values)
        b = nested.sensitivity(part, of="B3").xreplace(values)
        assert a == b, part


def test_sensitivity_at_16_bits_against_a_nodal_difference():
    """∂y/∂Rf·Rf/y of the MSB at 16 bits vs a central difference of the nodal solve."""
    bits = 16
    res = r2r_dac(bits).analyze("out")
    values = _dac_values(bits, gain=100_000)
    s = res.sensitivity("Rf", of=f"B{bits - 1}")
    got = float(s.xreplace({res.circuit.symbol(k): v for k, v in values.items()}))
    h = Fraction(1, 10**6)  # central difference: error ~h², far below the tolerance
    key = f"B{bits - 1}"
    up, dn, y = (
        _exact(_dac_description(bits, 10_000, 10_000 * (1 + d), 100_000))[key] for d in (h, -h, 0)
    )
    want = float((up - dn) / (2 * h) / y)
    assert got == pytest.approx(want, rel=1e-9)


def test_what_needs_the_expanded_form_says_so():
    """12 bits: nulls and expanded() refuse with a named error and a size; no silent number."""
    res = r2r_dac(12).analyze("out")
    with pytest.raises(opsym.ExpressionTooLargeError, match="more than"):
        res.null("U1.Vos", by="Rf")
    with pytest.raises(opsym.ExpressionTooLargeError, match="Give values"):
        res.expanded()
    with pytest.raises(opsym.ExpressionTooLargeError):
        expanded(res.compact_coefficient("B0"))


def test_null_expands_a_small_nested_result(monkeypatch):
    """A forced-nested DAC 3 bits still solves a null by expanding [same as the flat one]."""
    circuit = r2r_dac(3)
    flat, nested = circuit.analyze("out"), _nested(circuit, monkeypatch)
    assert nested.definitions
    with pytest.raises(opsym.NoSolutionError) as a:
        flat.null("U1.Ib-", by="Rf")
    with pytest.raises(opsym.NoSolutionError) as b:
        nested.null("U1.Ib-", by="Rf")
    assert str(a.value) == str(b.value)


def test_latex_lists_the_definitions():
    res = r2r_dac(12).analyze("out")
    text = res.latex()
    assert r"\text{where } X_{1} ={} &" in text
    assert text.count("={} &") == 1 + len(res.definitions)


def test_progress_inside_a_large_block():
    """The ladder is one block: progress must be heard at its pivots, not only at its end."""
    calls = []
    r2r_dac(12).analyze("out", progress=lambda done, total, what: calls.append(what))
    assert sum("eliminating a block" in what for what in calls) >= 10


def test_budget_of_a_nested_result_equals_the_flat_one(monkeypatch):
    """Budgets evaluate the definitions forward: the same rows as the flat result."""
    circuit = r2r_dac(5)
    flat, nested = circuit.analyze("out"), _nested(circuit, monkeypatch)
    values = _dac_values(5) | {f"B{i}": 1 for i in range(5)}
    opamps = {"U1": opsym.opamp_parameters("generic precision bipolar")}
    grade = opsym.ResistorParams.from_text("0.1%", "25 ppm")
    a = opsym.error_budget(flat, values=values, opamps=opamps, resistors=grade)
    b = opsym.error_budget(nested, values=values, opamps=opamps, resistors=grade)
    assert str(a) == str(b)


def test_twelve_bits_budget_and_gain_error():
    """12 bits, nested: the budget's Vos row and the gain error against the textbook.

    A terminated R-2R ladder looks like R from its last node (every node sees 2R ‖ 2R;
    Horowitz & Hill, from memory), so with Rf = R the noise gain is 2 and the gain
    error is −NG/(A + NG) = −1/(1 + Aβ) (single-loop feedback, e.g. Franco, from memory).
    """
    res = r2r_dac(12).analyze("out")
    values = _dac_values(12) | {f"B{i}": 1 for i in range(12)}
    errors = {"U1.A": 100_000, "U1.Vos": "1 mV", "U1.Ib": "1 nA", "U1.Ios": "0.1 nA"}
    budget = opsym.error_budget(res, values=values | errors)
    assert budget.row("U1.Vos").coefficient == pytest.approx(2 * 100_000 / 100_002, rel=1e-12)
    exact = res.gain_error("B11")  # nested: G/G_ideal − 1 in the result's auxiliaries
    assert exact.atoms(Aux)
    at = res.subs(values | {"U1.A": 100_000}).gain_error("B11")
    assert at == sp.Rational(-2, 100_002)


def test_a_substituted_nested_result_expands_when_small():
    """Values in make the definitions small: the solver's size bound no longer applies."""
    res = r2r_dac(12).analyze("out")
    values = _dac_values(12) | {"U1.A": 100_000}
    partial = res.subs({k: v for k, v in values.items() if k != "Rf"})
    coefficient = partial.expanded().coefficient("B11")
    rf = sp.Symbol("Rf", positive=True)
    assert coefficient.xreplace({rf: 10_000}) == res.subs(values).coefficient("B11")


def test_frequency_response_of_a_nested_result(monkeypatch):
    """A forced-nested ring of integrators answers response(f) as the flat one [derived]."""
    from bench_circuits import integrator_ring

    circuit = integrator_ring(5)
    values = {e.name: (1e3 if e.name[0] == "R" else 1e-9) * (i + 1)
              for i, e in enumerate(circuit.elements) if e.name[0] in "RC"}  # fmt: skip
    flat = circuit.analyze("o5", domain="s").subs(values)
    monkeypatch.setattr(sparse, "NEST_TERMS", 0)
    nested = circuit.analyze("o5", domain="s")
    assert nested.definitions
    f = np.logspace(1, 6, 11)
    a, b = flat.response(f), nested.subs(values).response(f)
    assert np.max(np.abs(a - b) / np.abs(a)) < 1e-12


def test_frequency_evaluator_runs_the_definitions_forward():
    """H(s) = X₂/(s + 5), X₁ = s² + 3s + 2, X₂ = X₁·s + 7: compiled per definition."""
    from opsym.model.symbols import LAPLACE as s
    from opsym.numeric.frequency import evaluator

    x1 = Aux.define(s**2 + 3 * s + 2, 1)
    x2 = Aux.define(x1 * s + 7, 2)
    f = np.array([1.0, 1e3, 1e5])
    w = 2j * np.pi * f
    want = ((w**2 + 3 * w + 2) * w + 7) / (w + 5)
    got = evaluator(x2 / (s + 5), "H")(f)
    assert np.allclose(got, want, rtol=1e-13, atol=0)


def test_dominant_terms_of_a_nested_result_expand_or_refuse(monkeypatch):
    """Small nested: the same dominant form as the flat result; 12 bits: a named refusal."""
    circuit = r2r_dac(3)
    flat, nested = circuit.analyze("out"), _nested(circuit, monkeypatch)
    values = _dac_values(3, gain=100_000)
    a, b = flat.dominant("U1.Ib-", values=values), nested.dominant("U1.Ib-", values=values)
    assert sp.simplify(a.expression - b.expression) == 0 and a.bound == b.bound
    with pytest.raises(opsym.ExpressionTooLargeError, match="dominant terms"):
        r2r_dac(12).analyze("out").dominant("U1.Ib-", values=_dac_values(12, gain=100_000))


def test_design_note_of_a_nested_result_lists_the_definitions():
    """A note of a 10-bit ladder with finite A printed; it used to crash expanding in 1/A."""
    res = r2r_dac(10).analyze("out")
    note = opsym.design_note(res, fmt="markdown")
    assert "sequence of definitions" in note and "X_{1} ={} &" in note
    assert "first order in 1/A" not in note


def test_input_impedance_of_a_nested_ladder():
    """The MSB source of a 12-bit ladder sees its 2R leg plus the virtual ground.

    Hand analysis: with every other source grounded the terminated ladder is 2R from
    the last node through R (each node sees 2R ‖ 2R = R, Horowitz & Hill, from memory);
    the op-amp drives −A·V(n) through Rf, so the node is 2R ‖ Rf/(1 + A) to ground:
    Zin = 2R + 1/(1/(2R) + (1 + A)/Rf) = 20 kΩ + 20 kΩ/200 003 at R = Rf = 10 kΩ, A = 1e5.
    SymPy's simplify, which the zero test used, crashed on the auxiliaries before.
    """
    circuit = r2r_dac(12)
    z = opsym.input_impedance(circuit, "B11").impedance
    values = {circuit.symbol(k): v for k, v in _dac_values(12, gain=100_000).items()}
    assert z.xreplace(values) == sp.Rational(20_000 * 200_004, 200_003)
    assert sp.simplify(z).atoms(Aux)  # simplify leaves the auxiliaries standing
