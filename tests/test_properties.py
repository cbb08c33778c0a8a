"""Property tests: opsym's symbolic terms against the independent nodal solver.

Random small networks (one to three op-amps, ideal and finite gain, symbolic and
numeric parts mixed) are generated valid by construction (see
``tests/reference/circuits.py``). For each, every coefficient of ``res.terms`` is
evaluated exactly at the circuit's values and compared with the reference's
superposition (one unit source at a time, exact rational elimination). All checks
here are [derived]: KCL and superposition, no published number.

``OPSYM_HYPOTHESIS_SCALE=<n>`` multiplies the number of examples.
"""

from __future__ import annotations

import circuits
import nodal
import pytest
import sympy as sp
from compare import close, evaluate
from drawing import DrawPicker, example_settings
from hypothesis import assume, event, given
from hypothesis import strategies as st

import opsym

REL = 1e-9  # relative agreement of every coefficient
FLOOR = 1e-12  # absolute floor, as a fraction of the largest node voltage of that run


@st.composite
def networks(draw, max_opamps=3, finite=None, tame=False):
    return circuits.random_circuit(
        DrawPicker(draw), max_opamps=max_opamps, finite=finite, tame=tame
    )


def _reference(desc, output):
    try:
        return nodal.coefficients_with_scale(desc, output, exact=True)
    except nodal.ReferenceSingularError:
        return None


def _check_terms(res, circuit, desc, symbolic, ref):
    values = nodal.numeric_values(circuit, desc, symbolic)
    terms = res.terms
    want_keys = {circuit.symbol(s) for s in nodal.source_names(desc)}
    assert set(terms) == want_keys
    for name, (want, scale) in ref.items():
        got = evaluate(terms[circuit.symbol(name)], values)
        assert close(got, want, REL, FLOOR * scale), (name, got, want, scale)


# -- the core property ---------------------------------------------------------------


@example_settings(400)
@given(networks())
def test_every_term_matches_reference(case):
    desc, output, symbolic = case
    ref = _reference(desc, output)
    assume(ref is not None)  # singular draws: see test_singular_circuits_raise
    c = nodal.to_circuit(desc, symbolic)
    res = c.analyze(output)
    _check_terms(res, c, desc, symbolic, ref)


@example_settings(60)
@given(networks(max_opamps=2, finite=True))
def test_symbolic_gain_terms_match_reference(case):
    # every finite op-amp keeps its gain symbol U*.A, plus up to two symbolic parts
    desc, output, symbolic = case
    ref = _reference(desc, output)
    assume(ref is not None)
    symbolic = sorted({*symbolic, *(it[1] for it in desc if it[0] == "OA")})
    c = nodal.to_circuit(desc, symbolic)
    res = c.analyze(output)
    _check_terms(res, c, desc, symbolic, ref)


@example_settings(40)
@given(networks(), st.data())
def test_values_fixed_before_solving_agree(case, data):
    # analyze(values=...) and subs() afterwards give the same numbers as the reference
    desc, output, symbolic = case
    ref = _reference(desc, output)
    assume(ref is not None and symbolic)
    c = nodal.to_circuit(desc, symbolic)
    values = nodal.numeric_values(c, desc, symbolic)
    fixed_names = data.draw(st.sets(st.sampled_from(symbolic), min_size=1))
    fixed = {c.symbol(n if not n.startswith("U") else n + ".A"): None for n in fixed_names}
    fixed = {k: values[k] for k in fixed}
    res = c.analyze(output, values=fixed)
    rest = {k: v for k, v in values.items() if k not in fixed}
    for name, (want, scale) in ref.items():
        got = evaluate(res.coefficient(name), rest)
        assert close(got, want, REL, FLOOR * scale), name
    done = c.analyze(output).subs({k.name: v for k, v in values.items()})  # names as keys
    for name, (want, scale) in ref.items():
        assert close(evaluate(done.coefficient(name)), want, REL, FLOOR * scale), name


# -- derived views of the result ----------------------------------------------------------


@example_settings(40)
@given(networks(max_opamps=2))
def test_expression_is_the_superposition(case):
    desc, output, symbolic = case
    assume(_reference(desc, output) is not None)
    c = nodal.to_circuit(desc, symbolic)
    res = c.analyze(output)
    total = sum((coef * src for src, coef in res.terms.items()), sp.S.Zero)
    assert sp.simplify(res.expression - total) == 0
    # the reference's full operating point, all sources at their described values
    values = nodal.numeric_values(c, desc, symbolic)
    for item in desc:
        if item[0] in ("V", "I"):
            values[c.symbol(item[1])] = item[4]
        elif item[0] == "OA":
            for suffix, v in zip(("Vos", "Ib+", "Ib-"), item[6:9], strict=True):
                values[c.symbol(f"{item[1]}.{suffix}")] = v
    volts = nodal.solve(desc, exact=True)
    want = nodal.output_value(desc, output, exact=True)
    assert close(
        evaluate(res.expression, values), want, REL, 1e-12 * max(map(abs, volts.values()))
    )


@example_settings(40)
@given(networks(max_opamps=2))
def test_average_bias_rewrites_exactly(case):
    # Ib± = Ib ± Ios/2  =>  c(Ib) = c(Ib+) + c(Ib-),  c(Ios) = (c(Ib+) - c(Ib-))/2
    desc, output, symbolic = case
    ref = _reference(desc, output)
    assume(ref is not None)
    c = nodal.to_circuit(desc, symbolic)
    res = c.analyze(output)
    avg = res.with_average_bias()
    values = nodal.numeric_values(c, desc, symbolic)
    for item in desc:
        if item[0] != "OA":
            continue
        u = item[1]
        assert c.symbol(f"{u}.Ib+") not in avg.terms and c.symbol(f"{u}.Ib-") not in avg.terms
        cp, cm = res.coefficient(f"{u}.Ib+"), res.coefficient(f"{u}.Ib-")
        assert sp.simplify(avg.coefficient(f"{u}.Ib") - (cp + cm)) == 0
        assert sp.simplify(avg.coefficient(f"{u}.Ios") - (cp - cm) / 2) == 0
        (wp, sp_), (wm, sm) = ref[f"{u}.Ib+"], ref[f"{u}.Ib-"]
        scale = max(sp_, sm)
        got = evaluate(avg.coefficient(f"{u}.Ib"), values)
        assert close(got, wp + wm, REL, FLOOR * scale)
        got = evaluate(avg.coefficient(f"{u}.Ios"), values)
        assert close(got, (wp - wm) / 2, REL, FLOOR * scale)


@example_settings(30)
@given(networks(max_opamps=2))
def test_cmrr_and_psrr_act_like_offset(case):
    # [derived] by the convention: Vcm/CMRR and dVs/PSRR sit in series with the + pin,
    # exactly where Vos sits, so their coefficients are Vos's divided by CMRR, PSRR
    desc, output, symbolic = case
    ref = _reference(desc, output)
    assume(ref is not None)
    c = nodal.to_circuit(desc, symbolic, opamp_options={"cmrr": True, "psrr": True})
    res = c.analyze(output)
    values = nodal.numeric_values(c, desc, symbolic)
    for item in desc:
        if item[0] != "OA":
            continue
        u = item[1]
        vos = res.coefficient(f"{u}.Vos")
        cmrr, psrr = c.symbol(f"{u}.CMRR"), c.symbol(f"{u}.PSRR")
        assert sp.simplify(res.coefficient(f"{u}.Vcm") - vos / cmrr) == 0
        assert sp.simplify(res.coefficient(f"{u}.dVs") - vos / psrr) == 0
        want, scale = ref[f"{u}.Vos"]
        got = evaluate(res.coefficient(f"{u}.Vcm"), {**values, cmrr: 31622.0})
        assert close(got, want / 31622.0, REL, FLOOR * scale / 31622.0)


def _all_ideal(desc):
    return [(*it[:5], None, *it[6:]) if it[0] == "OA" else it for it in desc]


@example_settings(40)
@given(networks(max_opamps=2, finite=True), st.booleans())
def test_ideal_limit_matches_nullor_reference(case, symbolic_gain):
    desc, output, symbolic = case
    ref = _reference(_all_ideal(desc), output)
    assume(ref is not None and _reference(desc, output) is not None)
    symbolic = [s for s in symbolic if not s.startswith("U")]
    if symbolic_gain:
        symbolic += [it[1] for it in desc if it[0] == "OA"]
    c = nodal.to_circuit(desc, symbolic)
    res = c.analyze(output).ideal()
    values = {
        k: v
        for k, v in nodal.numeric_values(c, desc, symbolic).items()
        if not k.name.endswith(".A")
    }
    for name, (want, scale) in ref.items():
        got = evaluate(res.coefficient(name), values)
        assert close(got, want, REL, FLOOR * scale), (name, got, want)


@example_settings(30)
@given(networks(max_opamps=2, finite=True, tame=True))
def test_gain_error_matches_reference(case):
    desc, output, symbolic = case
    signals = [it[1] for it in desc if it[0] in ("V", "I")]
    assume(signals)
    finite_ref = _reference(desc, output)
    ideal_ref = _reference(_all_ideal(desc), output)
    assume(finite_ref is not None and ideal_ref is not None)
    sig = signals[0]
    g, g0 = finite_ref[sig][0], ideal_ref[sig][0]
    assume(abs(g0) > 1e-9 * ideal_ref[sig][1])
    c = nodal.to_circuit(desc, symbolic)
    res = c.analyze(output)
    values = nodal.numeric_values(c, desc, symbolic)
    got = evaluate(res.gain_error(sig), values)
    want = (g - g0) / g0
    assert close(got, want, 1e-7, 1e-12), (got, want)


@example_settings(30)
@given(networks(max_opamps=2, tame=True))
def test_input_referred_is_a_ratio(case):
    desc, output, symbolic = case
    ref = _reference(desc, output)
    assume(ref is not None)
    signals = [n for n in ref if "." not in n and abs(ref[n][0]) > 1e-6 * ref[n][1]]
    assume(signals)
    sig = signals[0]
    c = nodal.to_circuit(desc, symbolic)
    referred = c.analyze(output).input_referred(sig)
    values = nodal.numeric_values(c, desc, symbolic)
    assert c.symbol(sig) not in referred
    g = ref[sig][0]
    for name, (want, scale) in ref.items():
        if name == sig:
            continue
        got = evaluate(referred[c.symbol(name)], values)
        assert close(got, want / g, 1e-8, 1e-12 * scale / abs(g)), name


@example_settings(30)
@given(networks(max_opamps=2, tame=True), st.data())
def test_sensitivity_matches_finite_differences(case, data):
    # S(y, x) = (x/y)·dy/dx by a central difference of the exact reference
    desc, output, symbolic = case
    resistors = [it[1] for it in desc if it[0] == "R"]
    part = data.draw(st.sampled_from(resistors))
    ref = _reference(desc, output)
    assume(ref is not None)
    sources = [n for n, (w, s) in ref.items() if abs(w) > 1e-6 * s]
    assume(sources)
    src = data.draw(st.sampled_from(sources))
    symbolic = sorted({*symbolic, part})
    c = nodal.to_circuit(desc, symbolic)
    res = c.analyze(output)
    values = nodal.numeric_values(c, desc, symbolic)
    got = evaluate(res.sensitivity(part, of=src), values)
    h = 1e-6
    shifted = []
    for f in (1 + h, 1 - h):
        d = [(*it[:4], it[4] * f) if it[1] == part else it for it in desc]
        shifted.append(nodal.coefficients(d, output, exact=True)[src])
    want = (shifted[0] - shifted[1]) / (2 * h) / ref[src][0]
    assert close(got, want, 1e-5, 1e-7), (part, src, got, want)


@example_settings(60)
@given(networks(max_opamps=2), st.data())
def test_null_matches_the_reference_zero(case, data):
    # null(source, by=R): the reference finds the zero of the (bilinear) coefficient
    # in R exactly; positive -> opsym must give it, otherwise NoSolutionError
    desc, output, _ = case
    ref = _reference(desc, output)
    assume(ref is not None)
    part = data.draw(st.sampled_from([it[1] for it in desc if it[0] == "R"]))
    src = data.draw(st.sampled_from(sorted(ref)))
    try:
        r0 = nodal.zero_of_coefficient(desc, output, src, part)
    except nodal.ReferenceSingularError:
        assume(False)  # singular at one of the sample values
    c = nodal.to_circuit(desc, [part])
    res = c.analyze(output)
    if r0 is None or r0 <= 0:
        event("no positive solution")
        with pytest.raises(opsym.NoSolutionError):
            res.null(src, by=part)
        return
    event("nulled")
    eq = res.null(src, by=part)
    assert eq.lhs == c.symbol(part)
    assert close(evaluate(eq.rhs), float(r0), 1e-12), (part, src, eq, float(r0))


@st.composite
def bias_nulls(draw):
    """An op-amp network plus a resistor Rn from a fresh node to the U1 + pin."""
    desc, output, _ = draw(networks(max_opamps=2, tame=True))
    desc = list(desc)
    k = next(i for i, it in enumerate(desc) if it[1] == "U1")
    plus = desc[k][2]
    desc[k] = (*desc[k][:2], "pn", *desc[k][3:])
    desc.append(("R", "Rn", plus, "pn", 1e3))
    return desc, output


@example_settings(40)
@given(bias_nulls(), st.sampled_from(["U1.Ib", "U1.Ib", "U1.Ib+", "U1.Ib-", "U1.Vos"]))
def test_null_through_a_plus_pin_resistor(case, src):
    # a resistor in series with the + pin: the common way to null the bias term
    # (U1.Ib, coefficient c(Ib+) + c(Ib-), from Ib± = Ib ± Ios/2)
    desc, output = case
    ref = _reference(desc, output)
    assume(ref is not None)
    weights = {"U1.Ib+": 1.0, "U1.Ib-": 1.0} if src == "U1.Ib" else src
    r0 = nodal.zero_of_coefficient(desc, output, weights, "Rn")
    c = nodal.to_circuit(desc, ["Rn"])
    res = c.analyze(output)
    if r0 is None or r0 <= 0:
        event("no positive solution")
        with pytest.raises(opsym.NoSolutionError):
            res.null(src, by="Rn")
        return
    event("nulled")
    assert close(evaluate(res.null(src, by="Rn").rhs), float(r0), 1e-12)


# -- singular circuits -------------------------------------------------------------------


@st.composite
def singular_networks(draw):
    """A valid network with one singular motif added.

    Returns ``(desc, inside, elsewhere, symbolic, motif)``: an output node inside
    the motif and the network's own output, which may lie in a well-posed part.
    """
    desc, elsewhere, symbolic = draw(networks(max_opamps=2))
    assume(_reference(desc, elsewhere) is not None)  # the motif is the only fault
    desc = list(desc)
    outs = [it[4] for it in desc if it[0] == "OA"]
    nodes = nodal.nodes_of(desc)
    motif = draw(st.sampled_from(sorted(_EXPECTED)))
    if motif == "parallel-sources":
        a = draw(st.sampled_from(nodes))
        desc += [("V", "Vz1", "z", a, 1.0), ("V", "Vz2", "z", a, 2.0)]
        inside = "z"
    elif motif == "source-on-output":
        inside = draw(st.sampled_from(outs))
        desc.append(("V", "Vz1", inside, "0", 1.0))
    elif motif == "tied-outputs":
        inside = draw(st.sampled_from(outs))
        desc += [("R", "Rz", inside, "zm", 1e4), ("OA", "Uz", "0", "zm", inside, None, 1e-3, 0, 0)]
    elif motif == "self-follower":
        # the + pin hangs off the op-amp's own output: v+ - v- does not depend on it
        desc += [("R", "Rz", "zp", "zo", 1e4), ("OA", "Uz", "zp", "zo", "zo", None, 1e-3, 1e-9, 0)]
        inside = "zo"
    else:
        desc += [("R", "Rz1", "za", "zb", 1e3), ("I", "Iz", "za", "zb", 1e-6)]
        inside = "za"
    return desc, inside, elsewhere, symbolic, motif


_EXPECTED = {
    "parallel-sources": (opsym.SingularCircuitError, "Vz"),
    "source-on-output": (opsym.SingularCircuitError, "Vz1"),
    "tied-outputs": (opsym.SingularCircuitError, "Uz"),
    "self-follower": (opsym.SingularCircuitError, "Uz"),
    "island": (opsym.FloatingNodeError, "za"),
}


@example_settings(60)
@given(singular_networks())
def test_singular_circuits_raise(case):
    # output inside the singular part: a specific error naming the culprit
    desc, inside, _, symbolic, motif = case
    with pytest.raises(nodal.ReferenceSingularError):
        nodal.solve(desc, exact=True)
    error, named = _EXPECTED[motif]
    c = nodal.to_circuit(desc, symbolic)
    with pytest.raises(error, match=named):
        c.analyze(inside)


@example_settings(40)
@given(singular_networks())
def test_singular_part_elsewhere_still_raises(case):
    # the circuit has no unique DC solution even when the asked-for output lies in
    # a well-posed part of it; the contract is an error, not a partial answer
    desc, _, elsewhere, symbolic, motif = case
    c = nodal.to_circuit(desc, symbolic)
    with pytest.raises(_EXPECTED[motif][0]):
        c.analyze(elsewhere)


def _moved(element):
    """The element with its value (an op-amp: its finite gain) moved by a factor 1.37."""
    if element[0] == "OA":
        gain = element[5]
        return element if gain is None else (*element[:5], gain * 1.37, *element[6:])
    return (*element[:4], element[4] * 1.37, *element[5:])


@example_settings(40)
@given(networks())
def test_drawn_singular_circuits_raise(case):
    # the generator's own singular draws (degenerate op-amp loops), where the
    # reference decides singularity exactly
    desc, output, symbolic = case
    try:
        nodal.solve(desc, exact=True)
    except nodal.ReferenceSingularError:
        pass
    else:
        assume(False)
    # A component left symbolic may be what makes the draw singular (singular at its
    # drawn value only): opsym's result is then valid for every other value of it, so
    # only draws singular whatever the symbolic values are must raise.
    moved = [_moved(e) if e[1] in symbolic else e for e in desc]
    try:
        nodal.solve(moved, exact=True)
    except nodal.ReferenceSingularError:
        pass
    else:
        assume(False)
    c = nodal.to_circuit(desc, symbolic)
    with pytest.raises(opsym.SingularCircuitError):
        c.analyze(output)
