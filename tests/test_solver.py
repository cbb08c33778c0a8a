"""The structure-aware solver: block order, compact = expanded, cascades against numbers.

The numeric reference is ``tests/reference/nodal.py``, written separately from the
symbolic stamps ([derived]: KCL and superposition).
"""

from __future__ import annotations

import random
import sys
from pathlib import Path

import nodal
import pytest
import sympy as sp
from compare import close, evaluate

import opsym
from opsym.equations.adjoint import solve_adjoint
from opsym.equations.mna import build_equations
from opsym.equations.structure import StructurallySingular, block_order, match_rows

sys.path.insert(0, str(Path(__file__).resolve().parent / "benchmarks"))
from bench_circuits import instrumentation_amplifier, inverting_cascade


def cascade_description(stages: int, seed: int) -> list[tuple]:
    """A random-valued inverting cascade in the reference solver's plain form."""
    rnd = random.Random(seed)
    desc: list[tuple] = [("V", "Vin", "s0", "0", 0.1)]
    for k in range(1, stages + 1):
        r1 = rnd.choice([1e3, 2.2e3, 4.7e3, 10e3])
        r2 = r1 * rnd.uniform(0.5, 3.0)
        desc += [
            ("R", f"R1_{k}", f"s{k - 1}", f"n{k}", r1),
            ("R", f"R2_{k}", f"n{k}", f"s{k}", r2),
            ("R", f"R3_{k}", f"p{k}", "0", r1 * r2 / (r1 + r2) * rnd.uniform(0.8, 1.2)),
            ("OA", f"U{k}", f"p{k}", f"n{k}", f"s{k}", rnd.choice([1e4, 1e5, 1e6]), 0, 0, 0),
        ]
    return desc


@pytest.mark.parametrize("stages", range(1, 9))
def test_cascade_agrees_with_the_nodal_reference(stages):
    desc = cascade_description(stages, seed=stages)
    names = [item[1] for item in desc if item[0] in ("R", "OA")]
    circuit = nodal.to_circuit(desc, symbolic=names)
    res = circuit.analyze(f"s{stages}")
    values = nodal.numeric_values(circuit, desc, names)
    want = nodal.coefficients_with_scale(desc, f"s{stages}")
    assert {str(s) for s in res.terms} == set(want)
    for source, coeff in res.terms.items():
        ref, scale = want[str(source)]
        got = evaluate(coeff, values)
        assert close(got, ref, rel=1e-9, abs_floor=1e-12 * scale), (source, got, ref)


def _random_point(symbols, rnd):
    return {s: sp.Rational(rnd.randint(1, 97), rnd.randint(1, 13)) for s in symbols}


@pytest.mark.parametrize(
    ("circuit", "output"),
    [
        (inverting_cascade(4), "s4"),
        (instrumentation_amplifier(), "out"),
        (instrumentation_amplifier(gain="ideal"), "out"),
    ],
    ids=["cascade4", "inamp-finite", "inamp-ideal"],
)
def test_compact_terms_equal_fully_expanded_ones(circuit, output):
    """Products of block factors, their collected form and the fully expanded rational
    function are one function: compare them exactly at random rational points."""
    res = circuit.analyze(output)
    rnd = random.Random(7)
    for source, compact in res.terms.items():
        expanded = sp.cancel(sp.expand(sp.together(compact)))
        collected = res.coefficient(source)
        for _ in range(3):
            point = _random_point(compact.free_symbols | expanded.free_symbols, rnd)
            a = compact.xreplace(point)
            assert a == expanded.xreplace(point) == collected.xreplace(point), source


def test_cascade_splits_into_small_blocks():
    eqs = build_equations(inverting_cascade(8))
    n = len(eqs.unknowns)
    transposed = [dict() for _ in range(n)]
    for r, row in enumerate(eqs.rows):
        for u, v in row.items():
            transposed[u][r] = v
    blocks, _ = block_order(transposed, n)
    assert max(len(b) for b in blocks) <= 2  # each stage: V(n), V(out) together
    assert sum(len(b) for b in blocks) == n


def test_structurally_singular_pattern_is_reported():
    with pytest.raises(StructurallySingular) as info:
        match_rows([{0: 1}, {0: 1}], 2)
    assert info.value.rows == [1] and info.value.cols == [1]


def test_values_fixed_before_solving_equal_substitution_after():
    c = inverting_cascade(3)
    fixed = {"R1_1": 1000, "R2_2": "22k", "U3.A": 1e5}
    early = c.analyze("s3", values=fixed)
    late = c.analyze("s3").subs(fixed)
    for source in early.terms:
        assert sp.cancel(early.coefficient(source) - late.coefficient(source)) == 0


def test_progress_reports_and_library_stays_silent(capsys):
    seen = []
    inverting_cascade(3).analyze("s3", progress=lambda done, total, what: seen.append(done))
    assert seen and seen == sorted(seen)
    captured = capsys.readouterr()
    assert captured.out == "" and captured.err == ""


def test_adjoint_gives_every_coefficient_from_one_solve():
    """z from one transposed solve reproduces x = M^-1 b for every source ([derived])."""
    eqs = build_equations(instrumentation_amplifier())
    out = eqs.index["V(out)"]
    z = solve_adjoint(eqs, {out: sp.S.One})
    m = eqs.matrix()
    point = _random_point(m.free_symbols, random.Random(3))
    m_at = m.xreplace(point)  # exact rationals: a direct solve per source is cheap
    for source, stamps in eqs.sources.items():
        b = sp.zeros(len(eqs.rows), 1)
        for r, w in stamps.items():
            b[r] = w.xreplace(point)
        direct = m_at.LUsolve(b)[out]
        via_adjoint = sum(z[r].xreplace(point) * w.xreplace(point) for r, w in stamps.items())
        assert direct == via_adjoint, source


def test_long_cascade_coefficient_is_a_product_of_stage_factors():
    res = inverting_cascade(24).analyze("s24")
    first = res.coefficient("U1.Vos")
    # One factor per downstream stage gain: the size grows linearly, not exponentially.
    assert sp.count_ops(first) < 40 * 24
    assert opsym.Circuit  # the public API is importable alongside
