"""Methods on products, section by section: Sallen–Key chains and the inverting cascade.

Each check compares with an expectation from outside the code under test: the
unity-gain Sallen–Key low-pass ``1/(1 + s·C2(R1 + R2) + s²·R1R2C1C2)`` with
``ω0 = 1/√(R1R2C1C2)``, ``Q = √(R1R2C1C2)/(C2(R1 + R2))`` and its
sensitivities (S. Franco, *Design with Operational Amplifiers and Analog
Integrated Circuits*, ch. 3, from memory; C1 is the feedback capacitor, C2 the
one to ground), the first-order gain error ``−1/(A·β)`` of a stage with
feedback factor ``β`` (Franco ch. 1, from memory), the bias-current
compensation resistor ``R1‖R2`` (Franco ch. 5, from memory), ``sympy.solve``
and the whole product computed by SymPy directly.
"""

from __future__ import annotations

import sys
from pathlib import Path

import sympy as sp

import opsym
from opsym.model.symbols import LAPLACE as s

sys.path.insert(0, str(Path(__file__).resolve().parent / "benchmarks"))
from bench_circuits import inverting_cascade, sallen_key_chain


def _parts(c: opsym.Circuit, k: int) -> tuple[sp.Symbol, ...]:
    return tuple(c.symbol(f"{n}_{k}") for n in ("R1", "R2", "C1", "C2"))


def _section(c: opsym.Circuit, k: int) -> sp.Expr:
    """Franco's unity-gain low-pass ``1/(1 + s/(ω0·Q) + s²/ω0²)`` of section ``k``."""
    r1, r2, c1, c2 = _parts(c, k)
    w0 = 1 / sp.sqrt(r1 * r2 * c1 * c2)
    q = sp.sqrt(r1 * r2 * c1 * c2) / (c2 * (r1 + r2))
    return 1 / (1 + s / (w0 * q) + s**2 / w0**2)


def _in_s(expr: sp.Expr) -> list[sp.Expr]:
    """The bases in ``s`` of a product, nesting flattened (written here, not opsym's)."""
    out = []
    for factor in sp.Mul.make_args(expr):
        base = factor.as_base_exp()[0]
        if isinstance(base, sp.Mul):
            out += _in_s(base)
        elif s in base.free_symbols:
            out.append(base)
    return out


def test_one_section_is_the_textbook_low_pass():
    c = sallen_key_chain(1, gain="ideal")
    h = c.analyze("o1", domain="s").coefficient("Vin")
    assert sp.simplify(h - _section(c, 1)) == 0  # Franco ch. 3, unity-gain Sallen–Key


def test_chain_is_the_product_of_its_sections_kept_per_section():
    c = sallen_key_chain(4, gain="ideal")
    h = c.analyze("o4", domain="s").coefficient("Vin")
    expected = sp.Mul(*[_section(c, k) for k in range(1, 5)])
    assert sp.cancel(h / expected) == 1  # exact: a cascade of buffered sections multiplies
    # the readable form keeps four section polynomials, each 1 at s = 0 (main expanded them)
    assert len(_in_s(h)) == 4
    assert all(b.subs(s, 0) == 1 for b in _in_s(h))


def test_finite_gain_coefficient_equals_the_solved_one():
    c = sallen_key_chain(2)
    res = c.analyze("o2", domain="s")
    for sym, raw in res.terms.items():
        assert sp.cancel(res.coefficient(sym) - raw) == 0  # the same function, reshaped


def _textbook_sensitivities(c):
    r1, r2, c1, c2 = _parts(c, 1)
    half = sp.Rational(1, 2)
    w0 = {r1: -half, r2: -half, c1: -half, c2: -half}
    q = {r1: (r2 - r1) / (2 * (r1 + r2)), r2: (r1 - r2) / (2 * (r1 + r2)), c1: half, c2: -half}
    return w0, q


def test_sensitivities_of_w0_and_q_through_the_gain_sensitivity():
    # S(H) = −(x/D)·∂D/∂x with D = 1 + a1·s + a2·s²: the s² coefficient of −S·D is
    # S(a2)·a2 = −2·S(ω0)·a2, the s coefficient S(a1)·a1 with S(a1) = −S(ω0) − S(Q).
    c = sallen_key_chain(3, gain="ideal")
    res = c.analyze("o3", domain="s")
    r1, r2, c1, c2 = _parts(c, 1)
    a1, a2 = c2 * (r1 + r2), r1 * r2 * c1 * c2
    w0_book, q_book = _textbook_sensitivities(c)
    for x in (r1, r2, c1, c2):
        sens = res.sensitivity(x)
        poly = sp.Poly(sp.cancel(-sens * (1 + a1 * s + a2 * s**2)), s)
        s_a2 = poly.coeff_monomial(s**2) / a2
        s_a1 = poly.coeff_monomial(s) / a1
        s_w0 = sp.cancel(-s_a2 / 2)
        s_q = sp.cancel(-s_a1 - s_w0)
        assert s_w0 == w0_book[x]  # Franco ch. 3: S(ω0) = −1/2 for every R and C
        assert sp.cancel(s_q - q_book[x]) == 0  # Franco ch. 3, S(Q)


def test_sensitivity_of_a_chain_is_that_of_the_section_holding_the_part():
    c = sallen_key_chain(4, gain="ideal")
    h = sp.Mul(*[_section(c, k) for k in range(1, 5)])
    res = c.analyze("o4", domain="s")
    x = c.symbol("R2_3")
    direct = sp.cancel(x * sp.diff(h, x) / h)  # SymPy on the whole product
    assert sp.cancel(res.sensitivity("R2_3") - direct) == 0


def test_gain_error_is_the_product_of_the_sections_errors():
    c = sallen_key_chain(2)
    res = c.analyze("o2", domain="s")
    g = res.terms[c.symbol("Vin")]
    ideal = _section(c, 1) * _section(c, 2)
    err = res.gain_error()
    assert sp.cancel(err - (g / ideal - 1)) == 0  # exact, against the expanded computation
    assert isinstance(err + 1, sp.Mul) and len((err + 1).args) == 2  # Π(1 + εᵢ) − 1


def test_cascade_first_order_gain_error_is_the_sum_of_the_stages():
    n = 16
    c = inverting_cascade(n)
    res = c.analyze(f"s{n}")
    first = res.gain_error(order=1)
    terms = sp.Add.make_args(first)
    assert len(terms) == n
    for k in range(1, n + 1):
        r1, r2, a = c.symbol(f"R1_{k}"), c.symbol(f"R2_{k}"), c.symbol(f"U{k}.A")
        beta = r1 / (r1 + r2)
        (term,) = [t for t in terms if a in t.free_symbols]
        assert sp.cancel(term - (-1 / (a * beta))) == 0  # Franco ch. 1: −1/(A·β) per stage
    exact = res.gain_error()
    assert len(sp.Mul.make_args(exact + 1)) == n  # exact: one factor (1 + εᵢ) per stage


def test_null_of_a_product_agrees_with_solve():
    c = sallen_key_chain(1)
    res = c.analyze("o1", domain="s")
    values = {"U1.Vos": "1m", "U1.Ib+": "1u"}
    got = res.null(["U1.Vos", "U1.Ib+"], by="R1_1", values=values)
    total = (res.terms[c.symbol("U1.Vos")] * sp.Rational(1, 1000)
             + res.terms[c.symbol("U1.Ib+")] * sp.Rational(1, 10**6))  # fmt: skip
    r1 = c.symbol("R1_1")
    (root,) = sp.solve(sp.numer(sp.together(total)), r1)
    assert sp.simplify(got.rhs - root) == 0  # sympy.solve, independently
    # eight sections: only section 1 holds R1_1, so the same root, from its factors alone
    big = sallen_key_chain(8).analyze("o8", domain="s")
    assert sp.simplify(big.null(["U1.Vos", "U1.Ib+"], by="R1_1", values=values).rhs - root) == 0


def test_bias_compensation_null_in_a_long_cascade():
    c = inverting_cascade(16)
    got = c.analyze("s16").null("U1.Ib", by="R3_1")
    r1, r2 = c.symbol("R1_1"), c.symbol("R2_1")
    assert sp.simplify(got.rhs - r1 * r2 / (r1 + r2)) == 0  # Franco ch. 5: R3 = R1‖R2


def _expanded(e: sp.Expr) -> int:
    num, den = sp.fraction(sp.together(e))
    return len(sp.Add.make_args(sp.expand(num))) + len(sp.Add.make_args(sp.expand(den)))


def test_expanded_terms_counts_what_expand_would_give():
    from opsym.analyses.present import expanded_terms  # new on this branch

    a, b, c_, d, e, f = sp.symbols("a b c d e f")
    for expr in [(a + b) * (c_ + d) * (e + f), (a + b) / (c_ + d) + 1 / (e + f)]:
        assert expanded_terms(expr) == _expanded(expr)  # SymPy's expansion: no like terms
    for expr in [(a + b) ** 3 * (c_ + d), (a + b + c_) ** 2 / (a + d)]:
        assert expanded_terms(expr) >= _expanded(expr)  # like terms merge: a bound
