"""One derivation per domain per report, and one exact values map through a study.

``opsym report`` derives the design's output once at DC, once in the Laplace
domain (with ``[response]``) and runs the noise analysis once (with
``[noise]``); every study, figure and note section reuses those results. The
ideal-op-amp gain the gain error divides by is the A → ∞ limit of the same
coefficients, not a second derivation. The derivations are counted by
wrapping the registered services of :mod:`opsym._services`, and the figures
are checked against a fresh, separate ``analyze`` with the numbers put in.
"""

from __future__ import annotations

import math
from collections import Counter
from pathlib import Path

import numpy as np
import pytest
import sympy as sp

import opsym
from opsym import _services
from opsym.analyses._ideal import ideal_circuit
from opsym.cli import main
from opsym.io.designfile import load_design
from opsym.model.symbols import LAPLACE
from opsym.study.design import design_values, run_design

EXAMPLES = sorted((Path(__file__).parents[1] / "opsym" / "examples").glob("*.toml"))


@pytest.fixture
def derivations(monkeypatch: pytest.MonkeyPatch) -> Counter:
    """Count each call of the derivation services by domain: ``derive``/dc, /s, ``noise``."""
    counts: Counter = Counter()
    for name in ("derive", "noise"):
        service = _services._SERVICES[name]

        def counted(*args, _name=name, _service=service, **kwargs):
            domain = kwargs.get("domain", "dc") if _name == "derive" else "s"
            counts[f"{_name}/{domain}"] += 1
            return _service(*args, **kwargs)

        monkeypatch.setitem(_services._SERVICES, name, counted)
    return counts


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_a_report_derives_each_domain_once(path, derivations, tmp_path, capsys):
    design = load_design(path)
    notes = ["--markdown", str(tmp_path / "n.md"), "--latex", str(tmp_path / "n.tex")]
    figures = ["--figures", str(tmp_path)] if design.response is not None else []
    assert main(["report", str(path), *notes, *figures]) == 0
    capsys.readouterr()
    expected = Counter({"derive/dc": 1})
    if design.response is not None:
        expected["derive/s"] = 1
    if design.noise is not None:
        expected["noise/s"] = 1
    assert derivations == expected  # main: the photodiode took 8 in the s domain


def _fresh_numbers(design, values):
    """Each coefficient from a separate derivation, the exact numbers in, as floats."""
    fresh = design.circuit.analyze(design.output)
    if design.average_bias:
        fresh = fresh.with_average_bias()
    subs = {fresh.circuit.symbol(k): v for k, v in values.items()}
    out = {}
    for source, coeff in fresh.terms.items():
        v = sp.cancel(coeff.xreplace(subs))
        if not v.free_symbols:
            out[source] = float(v)
    return out


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_a_study_carries_one_exact_map_and_its_numbers_are_unchanged(path):
    design = load_design(path)
    study = run_design(design)
    # one exact map: the file's numbers as read, never a float
    assert all(isinstance(v, sp.Basic) and v.is_number for v in study.values.values())
    assert {k: study.values[k] for k in design.values} == dict(design.values)
    expected = _fresh_numbers(design, study.values)
    assert expected and set(study.numbers) == set(expected)
    for source, number in study.numbers.items():
        assert number == pytest.approx(expected[source], rel=1e-12, abs=1e-300), source
    if study.operating is not None and isinstance(design.output, str):
        # the operating point's output: the signal terms of the same coefficients
        signals = {s for s in expected if s.name in design.values and "." not in s.name}
        v_out = sum(expected[s] * float(design.values[s.name]) for s in signals)
        assert study.operating.nodes[design.output] == pytest.approx(v_out, rel=1e-9, abs=1e-12)


def test_the_photodiode_response_against_a_fresh_derivation_and_the_hand_formula():
    path = next(p for p in EXAMPLES if p.stem == "photodiode-transimpedance")
    design = load_design(path)
    study = run_design(design)
    r = study.response
    values = design_values(design)
    sym = design.circuit.analyze(design.output, domain="s")
    subs = {sym.circuit.symbol(k): v for k, v in values.items() if k != "Iph"}
    h = sp.cancel(sym.coefficient("Iph").xreplace(subs))
    # a separate derivation of the circuit with ideal op-amps (the nullor)
    nullor = ideal_circuit(design.circuit).analyze(design.output, domain="s")
    h0 = sp.cancel(nullor.coefficient("Iph").xreplace(subs))
    rf, cf = float(values["Rf"]), float(values["Cf"])
    for p in (*r.grid, *r.points):
        s = 2j * math.pi * p.frequency
        assert p.gain == pytest.approx(complex(h.subs(LAPLACE, s)), rel=1e-9)
        assert p.ideal == pytest.approx(complex(h0.subs(LAPLACE, s)), rel=1e-12)
        # The ideal transimpedance stage: H = −Rf/(1 + s·Rf·Cf); with the inverting
        # node held at ground, Cd and Rsh carry no current (Graeme, "Photodiode
        # Amplifiers", 1996, ch. 2 [from memory]; also any op-amp text's inverting stage).
        assert p.ideal == pytest.approx(-rf / (1 + s * rf * cf), rel=1e-12)
    assert r.dc_gain == pytest.approx(abs(float(h.subs(LAPLACE, 0))), rel=1e-12)


def _follower_stage():
    c = opsym.Circuit("non-inverting, noise gain 10")
    c.voltage_source("Vin", "p", "0")
    c.resistor("R1", "n", "0")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="p", minus="n", out="out", gain="pole")
    return c


def test_ideal_of_a_substituted_result_is_the_limit_without_a_derivation(derivations):
    c = _follower_stage()
    res = c.analyze("out", domain="s")
    numbers = res.subs({"R1": "1k", "R2": "9k", "U1.A0": "100k", "U1.GBW": "1M"})
    before = Counter(derivations)
    ideal = numbers.ideal()
    assert derivations == before  # taken from the coefficients, not derived again
    assert numbers.ideal() is ideal  # and kept
    # The ideal non-inverting gain 1 + R2/R1 = 10 at every frequency (Sedra & Smith,
    # the non-inverting configuration).
    assert ideal.coefficient("Vin") == 10
    # the same as the nullor circuit derived on its own
    fresh = ideal_circuit(c).analyze("out", domain="s").subs({"R1": "1k", "R2": "9k"})
    f = np.array([0.0, 1e3, 1e5, 1e6])
    assert np.allclose(ideal.response(f, "Vin"), fresh.response(f, "Vin"), rtol=1e-14)
    assert numbers.coefficient("U1.Vos") != ideal.coefficient("U1.Vos")


def test_ideal_with_gains_fixed_before_solving_is_derived_once(derivations):
    c = _follower_stage()
    res = c.analyze("out", domain="s", values={"U1.A0": "100k", "U1.GBW": "1M"})
    derivations.clear()
    first = res.subs({"R1": "1k", "R2": "9k"})
    second = res.subs({"R1": "2k", "R2": "18k"})
    assert first.ideal().coefficient("Vin") == 10 == second.ideal().coefficient("Vin")
    assert derivations == Counter({"derive/s": 1})  # once for the root, shared by both
    assert first.at_dc() is first.at_dc()
    second.at_dc()
    assert derivations == Counter({"derive/s": 1, "derive/dc": 1})


def test_common_mode_is_derived_once_per_root(derivations):
    c = opsym.Circuit("difference stage")
    c.voltage_source("V1", "a", "0", value="1")
    c.voltage_source("V2", "b", "0", value="3")
    c.resistor("R1", "a", "n")
    c.resistor("R2", "n", "out")
    c.resistor("R3", "b", "p")
    c.resistor("R4", "p", "0")
    c.opamp("U1", plus="p", minus="n", out="out", cmrr=True)
    res = c.analyze("out")
    derivations.clear()
    a = res.subs({"R1": 1, "R2": 1, "R3": 1, "R4": 1})
    b = res.subs({"R1": 1, "R2": 3, "R3": 1, "R4": 3})
    # V+ = V2·R4/(R3 + R4) = V− for an ideal op-amp: the common mode is V(+)
    # (the voltage divider; any circuits text).
    assert a.common_mode("U1") == sp.Rational(3, 2)
    assert b.common_mode("U1") == sp.Rational(9, 4)
    assert a.common_mode("U1") == sp.Rational(3, 2)
    assert derivations == Counter({"derive/dc": 2})  # the two pins, once for both results


def test_without_a_budget_table_the_gain_is_the_sets_limit_as_the_budget_says():
    """No [budget] table: the budget is at its default grade, the limits (min A), and the
    gain put in must be a_min too, not a_typ [derived: G(A) − G(∞) for a follower,
    A/(1 + A) − 1 = −1/(1 + A); reference case 5 of the shared checks]."""
    from opsym.io.designfile import parse_design
    from opsym.study.design import run_design

    design = parse_design(
        'output = "out"\n'
        "[voltage-sources]\n"
        'Vin = { plus = "in", minus = "0", value = "1" }\n'
        "[opamps.U1]\n"
        'plus = "in"\nminus = "out"\nout = "out"\ngain = "finite"\ninclude = ["offset"]\n'
        'parameters = { name = "mine", a_typ = "1M", a_min = "1k", vos_max = "1m" }\n'
    )
    study = run_design(design)
    row = study.budget.row("gain: open-loop")
    assert row.output == pytest.approx(-1 / (1 + 1000), rel=1e-9)
