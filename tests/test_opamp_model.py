"""The op-amp model engineers design with: impedances, further poles, rejection corners.

Each kind (``ro``, ``lo``, ``rid``, ``ricm``, ``cid``, ``ccm``, ``cmrr-pole``,
``psrr-pole``) and the multi-pole gain (``gain="pole2"``) against a published form
or a hand derivation, named beside each assertion ([derived]: by hand, KCL;
[mem]: a citation from memory); then random networks carrying them against the
independent complex nodal solver ``tests/reference/nodal_ac.py``, which models
each one as an element of its own (Ro and Lo as real parts between an internal
node and the output pin), never through opsym's stamps.
"""

from __future__ import annotations

import math

import circuits
import circuits_ac
import nodal
import nodal_ac
import numpy as np
import pytest
import sympy as sp
from compare import evaluate
from drawing import DrawPicker, example_settings
from hypothesis import assume, event, given
from hypothesis import strategies as st

import opsym
from opsym.numeric.frequency import evaluator

S = opsym.s


def _sym(c, *names):
    return [c.symbol(n) for n in names]


def _zero(expr) -> bool:
    return sp.simplify(sp.together(expr)) == 0


def _follower_with_load(gain="finite", extra=("ro",)) -> opsym.Circuit:
    c = opsym.Circuit("follower, output resistance and a load")
    c.voltage_source("Vin", "in", "0")
    c.opamp("U1", plus="in", minus="out", out="out", gain=gain, offset=False, bias=False,
            noise=False, extra=list(extra))  # fmt: skip
    c.current_source("Iload", "out", "0")  # draws Iload out of the output node
    return c


# -- Ro ---------------------------------------------------------------------------------


def test_closed_loop_output_resistance_is_ro_over_one_plus_a():
    """A follower's closed-loop output impedance is Ro/(1 + A) at DC [derived, KCL:
    Vout = A·(Vin − Vout) − Ro·Iload; the form of Franco, *Design with Operational
    Amplifiers and Analog ICs*, ch. 1 (negative feedback lowers Zo by 1 + Aβ), mem]."""
    c = _follower_with_load()
    res = c.analyze("out")
    a, ro = _sym(c, "U1.A", "U1.Ro")
    assert _zero(res.coefficient("Iload") + ro / (1 + a))
    assert _zero(res.coefficient("Vin") - a / (1 + a))
    assert res.ideal().coefficient("Iload") == 0  # A → ∞: Ro/(1 + A) → 0
    assert _zero(res.coefficient("Iload").subs(ro, 0))  # Ro → 0: the plain model (a limit)


def test_ro_with_a_resistive_load_divides_the_gain():
    """Follower into RL: Vout/Vin = A/(A + 1 + Ro/RL) [derived: Vint = A·(Vin − Vout),
    Vout = Vint·RL/(RL + Ro)]."""
    c = _follower_with_load()
    c.resistor("RL", "out", "0")
    res = c.analyze("out")
    a, ro, rl = _sym(c, "U1.A", "U1.Ro", "RL")
    assert _zero(res.coefficient("Vin") - a / (a + 1 + ro / rl))


def test_ro_and_a_capacitive_load_put_a_second_pole_in_the_loop():
    """Follower, single-pole A(s), Ro and CL: the loop gain is A(s)/(1 + s·Ro·CL), a
    second pole at 1/(2π·Ro·CL) (Franco, *Design with Operational Amplifiers and
    Analog ICs*, ch. 8, capacitive-load instability, mem); the closed loop is
    A(s)/(A(s) + 1 + s·Ro·CL) [derived, KCL at the output]."""
    c = _follower_with_load(gain="pole")
    c.capacitor("CL", "out", "0")
    res = c.analyze("out", domain="s")
    a0, gbw, ro, cl = _sym(c, "U1.A0", "U1.GBW", "U1.Ro", "CL")
    a = a0 / (1 + S * a0 / (2 * sp.pi * gbw))
    assert _zero(res.coefficient("Vin") - a / (a + 1 + S * ro * cl))
    # closed-loop output impedance Ro/(1 + A(s) + s·Ro·CL) [derived]
    assert _zero(res.coefficient("Iload") + ro / (a + 1 + S * ro * cl))
    # numbers: GBW 1 MHz, Ro 100 Ω, CL 10 nF: fp2 = 159 kHz below the 1 MHz crossing;
    # the closed-loop poles are the roots of (1 + s/ω1)(1 + s·Ro·CL) + A0 [derived]
    vals = {a0: 10**5, gbw: 10**6, ro: 100, cl: sp.Rational(1, 10**8)}
    den = sp.Poly(sp.expand((1 + S * a0 / (2 * sp.pi * gbw)) * (1 + S * ro * cl) + a0).subs(vals),
                  S)  # fmt: skip
    want = sorted((complex(r) for r in sp.Poly(den).nroots()), key=lambda z: (z.real, z.imag))
    _, opsym_den = sp.fraction(sp.together(res.coefficient("Vin").subs(vals)))
    got = sorted((complex(r) for r in sp.Poly(opsym_den, S).nroots()),
                 key=lambda z: (z.real, z.imag))  # fmt: skip
    assert got == pytest.approx(want, rel=1e-9)
    zeta = -want[0].real / abs(want[0])  # damping of the pole pair, far below 1/√2
    assert zeta == pytest.approx(1 / (2 * math.sqrt(2 * math.pi * 1e6 * 100e-8)), rel=1e-3)


def test_output_inductance_adds_s_lo_in_series():
    """Lo in series with Ro: the closed-loop output impedance is (Ro + s·Lo)/(1 + A)
    [derived, as for Ro]; at DC Lo is a wire."""
    c = _follower_with_load(extra=("ro", "lo"))
    a, ro, lo = _sym(c, "U1.A", "U1.Ro", "U1.Lo")
    assert _zero(c.analyze("out", domain="s").coefficient("Iload") + (ro + S * lo) / (1 + a))
    assert _zero(c.analyze("out").coefficient("Iload") + ro / (1 + a))


def test_ro_on_an_ideal_opamp_has_no_effect():
    """A nullor's output is a norator: Ro in series with it changes nothing (the
    A → ∞ limit of Ro/(1 + A)) [derived]."""
    c = _follower_with_load(gain="ideal")
    assert c.analyze("out").coefficient("Iload") == 0


# -- input resistances and capacitances ----------------------------------------------


def _inverting(extra, gain="finite", domain="dc"):
    c = opsym.Circuit("inverting stage")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", gain=gain, offset=False, bias=False,
            noise=False, extra=list(extra))  # fmt: skip
    return c, c.analyze("out", domain=domain)


def test_inverting_stage_with_finite_gain_and_rid():
    """−(R2/R1)/(1 + (1 + R2/R1 + R2/Rid)/A) [derived, KCL at the − pin with
    Vout = −A·V−]; Rid → ∞ gives the plain finite-gain stage."""
    c, res = _inverting(["rid"])
    r1, r2, a, rid = _sym(c, "R1", "R2", "U1.A", "U1.Rid")
    assert _zero(res.coefficient("Vin") + (r2 / r1) / (1 + (1 + r2 / r1 + r2 / rid) / a))
    limit = sp.limit(res.coefficient("Vin"), rid, sp.oo)
    assert _zero(limit + (r2 / r1) / (1 + (1 + r2 / r1) / a))


def test_ricm_at_the_grounded_plus_pin_does_nothing_and_at_minus_loads_like_rid():
    """Ricm from each pin to ground: the + pin's is shorted by the grounded pin, the −
    pin's loads the summing node as Rid does here [derived, KCL]."""
    c, res = _inverting(["ricm"])
    r1, r2, a, ricm = _sym(c, "R1", "R2", "U1.A", "U1.Ricm")
    assert _zero(res.coefficient("Vin") + (r2 / r1) / (1 + (1 + r2 / r1 + r2 / ricm) / a))


def test_ricm_loads_a_follower_source_resistance():
    """A follower fed through Rs: V+ = Vin·Ricm/(Rs + Ricm) with an ideal op-amp (no
    current in Rid at a virtual short) [derived, divider]."""
    c = opsym.Circuit("follower and source resistance")
    c.voltage_source("Vin", "in", "0")
    c.resistor("Rs", "in", "p")
    c.opamp("U1", plus="p", minus="out", out="out", offset=False, bias=False, noise=False,
            extra=["ricm", "rid"])  # fmt: skip
    rs, ricm = _sym(c, "Rs", "U1.Ricm")
    assert _zero(c.analyze("out").coefficient("Vin") - ricm / (rs + ricm))


def test_transimpedance_noise_gain_tends_to_one_plus_cin_over_cf():
    """Photodiode transimpedance stage, Rf ∥ Cf, Cin = Cid + Ccm at the − pin: the
    voltage-noise gain is 1 + s·Rf·Cin/(1 + s·Rf·Cf) [derived, KCL], which tends to
    1 + Cin/Cf at high frequency (Graeme, *Photodiode Amplifiers*, ch. on noise, mem)."""
    c = opsym.Circuit("transimpedance stage")
    c.current_source("Ipd", "0", "n")
    c.resistor("Rf", "n", "out")
    c.capacitor("Cf", "n", "out")
    c.opamp("U1", plus="0", minus="n", out="out", offset=False, bias=False, noise=True,
            extra=["cid", "ccm"])  # fmt: skip
    rf, cf, cid, ccm = _sym(c, "Rf", "Cf", "U1.Cid", "U1.Ccm")
    h = c.noise("out").transfer("U1.en")
    cin = cid + ccm
    assert _zero(h - (1 + S * rf * cin / (1 + S * rf * cf)))
    assert _zero(sp.limit(h, S, sp.oo) - (1 + cin / cf))
    res = c.analyze("out", domain="s")
    assert _zero(res.coefficient("Ipd") + rf / (1 + S * rf * cf))  # ideal: Cin unseen
    assert c.analyze("out").coefficient("Ipd") == -rf  # into n, out through Rf; open at DC


# -- further poles ----------------------------------------------------------------------


@pytest.mark.parametrize("how", [{"gain": "pole2"}, {"poles": 2}])
def test_two_pole_follower_against_the_hand_formula(how):
    """Follower: H = A(s)/(1 + A(s)), A(s) = A0/((1 + s/ω1)(1 + s/ω2)), ω1 = 2π·GBW/A0,
    ω2 = 2π·f2 [derived: the follower's β = 1]; f2 → ∞ is the single pole."""
    c = opsym.Circuit("two-pole follower")
    c.voltage_source("Vin", "in", "0")
    c.opamp("U1", plus="in", minus="out", out="out", offset=False, bias=False, noise=False,
            **how)  # fmt: skip
    a0, gbw, f2 = _sym(c, "U1.A0", "U1.GBW", "U1.f2")
    a = a0 / ((1 + S * a0 / (2 * sp.pi * gbw)) * (1 + S / (2 * sp.pi * f2)))
    res = c.analyze("out", domain="s")
    assert _zero(res.coefficient("Vin") - a / (1 + a))
    assert _zero(c.analyze("out").coefficient("Vin") - a0 / (1 + a0))
    single = a0 / (1 + S * a0 / (2 * sp.pi * gbw))
    assert _zero(sp.limit(res.coefficient("Vin"), f2, sp.oo) - single / (1 + single))
    assert res.ideal().coefficient("Vin") == 1


def test_three_poles_and_the_phase_margin_of_a_follower():
    """With f2 = GBW the follower's phase margin is 180° − 90° − arctan(fc/f2) at the
    crossing fc where |A| = 1 (common practice: a second pole at the crossing gives
    about 52°) [derived numerically from the hand A(s) and checked against opsym]."""
    c = opsym.Circuit("three-pole follower")
    c.voltage_source("Vin", "in", "0")
    c.opamp("U1", plus="in", minus="out", out="out", gain="pole3", offset=False, bias=False,
            noise=False)  # fmt: skip
    vals = {"U1.A0": 1e5, "U1.GBW": 1e6, "U1.f2": 1e6, "U1.f3": 1e9}
    res = c.analyze("out", domain="s", values=vals)

    def a(f):
        s = 2j * math.pi * f
        return 1e5 / ((1 + s * 1e5 / (2 * math.pi * 1e6)) * (1 + s / (2 * math.pi * 1e6))
                      * (1 + s / (2 * math.pi * 1e9)))  # fmt: skip

    for f in (1e3, 3e5, 1e6, 3e7):
        assert complex(res.response(f)[()]) == pytest.approx(a(f) / (1 + a(f)), rel=1e-9)
    lo, hi = 1e5, 1e7  # bisect |A| = 1
    for _ in range(80):
        mid = math.sqrt(lo * hi)
        lo, hi = (mid, hi) if abs(a(mid)) > 1 else (lo, mid)
    margin = 180 + math.degrees(math.atan2(a(lo).imag, a(lo).real))
    assert margin == pytest.approx(51.8, abs=0.5)


# -- rejection corners ---------------------------------------------------------------------


def test_cmrr_and_psrr_corners_raise_the_weight_with_frequency():
    """Follower, ideal gain: Vcm and dVs reach the output with weight (1 + s/(2π·fc))/CMRR
    and (1 + s/(2π·fpsrr))/PSRR (noise gain 1) [derived from the stated convention];
    DC unchanged."""
    c = opsym.Circuit("follower with rejection corners")
    c.voltage_source("Vin", "in", "0")
    c.opamp("U1", plus="in", minus="out", out="out", bias=False, noise=False, cmrr=True,
            psrr=True, extra=["cmrr-pole", "psrr-pole"])  # fmt: skip
    cmrr, psrr, fc, fp = _sym(c, "U1.CMRR", "U1.PSRR", "U1.fcmrr", "U1.fpsrr")
    res = c.analyze("out", domain="s")
    assert _zero(res.coefficient("U1.Vcm") - (1 + S / (2 * sp.pi * fc)) / cmrr)
    assert _zero(res.coefficient("U1.dVs") - (1 + S / (2 * sp.pi * fp)) / psrr)
    dc = c.analyze("out")
    assert _zero(dc.coefficient("U1.Vcm") - 1 / cmrr)
    assert _zero(dc.coefficient("U1.dVs") - 1 / psrr)
    assert _zero(sp.limit(res.coefficient("U1.Vcm"), fc, sp.oo) - 1 / cmrr)


def test_a_corner_without_its_rejection_is_refused():
    c = opsym.Circuit()
    with pytest.raises(opsym.InvalidValueError, match="'cmrr-pole' builds on 'cmrr'"):
        c.opamp("U1", "p", "out", "out", extra=["cmrr-pole"])
    with pytest.raises(opsym.InvalidValueError, match="not a NonIdeal or the key of one"):
        c.opamp("U2", "p", "o2", "o2", extra=["ro2"])
    with pytest.raises(opsym.InvalidValueError, match="poles=0 must be a whole number"):
        c.opamp("U3", "p", "o3", "o3", poles=0)
    with pytest.raises(opsym.InvalidValueError, match="not both"):
        c.opamp("U4", "p", "o4", "o4", gain="finite", poles=2)


# -- design files, parameter sets, budgets and notes -------------------------------------

DESIGN = """
format = 1
title = "Follower into a cable — two poles, Ro and input capacitance"
output = "out"
input = "Vin"

[resistors]
Rs = { between = ["in", "p"], value = "1k" }
RL = { between = ["out", "0"], value = "2k" }

[capacitors]
CL = { between = ["out", "0"], value = "1n" }

[voltage-sources]
Vin = { plus = "in", minus = "0", value = "1 V" }

[opamps.U1]
plus = "p"
minus = "out"
out = "out"
gain = "pole2"
f2 = "8 MHz"
include = ["offset", "ro", "rid", "ricm", "cid", "ccm", "cmrr", "cmrr-pole"]
parameters = { based-on = "generic CMOS", ro_max = "300 Ω", ro_typ = "120 Ω" }

[budget]
grade = "max"
"""


def test_a_design_file_includes_the_kinds_and_writes_them_back():
    design = opsym.parse_design(DESIGN, filename="cable.toml")
    amp = design.circuit.opamps[0]
    assert [k.kind for k in amp.nonideals] == [
        "offset", "cmrr", "ro", "rid", "ricm", "cid", "ccm", "cmrr-pole"]  # fmt: skip
    assert design.values["U1.f2"] == 8 * 10**6
    assert design.opamps["U1"].value("ro") == 300.0  # the file's field
    assert design.opamps["U1"].value("rid", "typical") == 1e13  # the shipped set's
    text = opsym.dump_design(design)
    assert 'gain = "pole2"' in text and '"cmrr-pole"' in text and "ro_max = 300" in text
    again = opsym.parse_design(text, filename="again.toml")
    assert again.circuit.opamps[0] == amp


@pytest.mark.parametrize(
    ("line", "says"),
    [('f2 = "8 MHz"\ngain = "pole"', 'set gain = "pole2"'),
     ('include = ["cmrr-pole"]', "'cmrr-pole' builds on 'cmrr'")],
)  # fmt: skip
def test_design_file_mistakes_name_the_field(line, says):
    text = '[opamps.U1]\nplus = "0"\nminus = "n"\nout = "out"\n' + line
    body = 'format = 1\noutput = "out"\n[resistors]\nR1 = { between = ["n", "out"] }\n'
    with pytest.raises(opsym.DesignFileError, match=says):
        opsym.parse_design(body + text, filename="bad.toml")


def test_the_budget_takes_ro_from_the_set_and_the_note_shows_it():
    """Follower into RL at DC: gain A/(A + 1 + Ro/RL) [derived above], behind the divider
    Ricm/(Rs + Ricm) [derived]; the budget's open-loop row is the gain less its A → ∞
    value, Vin = 1 V, with the set's a_min and the file's ro_max."""
    from opsym.study import run_design

    design = opsym.parse_design(DESIGN, filename="cable.toml")
    study = run_design(design)
    a, ro, rl, rs, ricm = 1e5, 300.0, 2e3, 1e3, 1e12  # generic CMOS a_min, ricm_max
    divider = ricm / (rs + ricm)
    want = divider * (a / (a + 1 + ro / rl) - 1.0)
    row = study.budget.row("gain: open-loop")
    assert row.output == pytest.approx(want, rel=1e-6)
    note = opsym.design_note(study.result, study.budget, values=design.values, fmt="markdown")
    assert "Ro is in series with the open-loop gain stage's output" in note
    latex = opsym.design_note(study.result, study.budget, values=design.values, fmt="latex")
    assert r"R_{\mathrm{o},\mathrm{U1}}" in latex


# -- random networks against the independent nodal solver -------------------------------

_KINDS = ("ro", "lo", "rid", "ricm", "cid", "ccm")
_PARAMS = {
    "Ro": (10.0, 75.0, 1e3), "Lo": (1e-7, 1e-5), "Rid": (1e4, 1e6, 1e9),
    "Ricm": (1e5, 1e8, 1e11), "Cid": (1e-12, 1e-10), "Ccm": (2.2e-12, 4.7e-11),
    "fcmrr": (1e2, 1e5), "fpsrr": (10.0, 1e4),
}  # fmt: skip


@st.composite
def networks_with_kinds(draw):
    pick = DrawPicker(draw)
    desc, output, symbolic = circuits_ac.random_ac_circuit(pick, max_opamps=2)
    out = []
    for it in desc:  # some single poles get one or two further poles
        if it[0] == "OA" and isinstance(it[5], tuple) and it[5][0] == "pole" and pick.coin():
            further = tuple(pick.choice((3e5, 2e6, 3e7)) for _ in range(pick.int(1, 2)))
            it = (*it[:5], (*it[5], *further), *it[6:])
        out.append(it)
    kinds = [k for k in _KINDS if pick.coin(0.4)]
    options: dict = {"bias": False, "offset": pick.coin(), "noise": False}
    if pick.coin():
        options.update(cmrr=True, psrr=True)
        kinds += ["cmrr-pole", "psrr-pole"]
    params = {name: pick.choice(choices) for name, choices in _PARAMS.items()}
    return out, output, symbolic, {**options, "extra": kinds, "params": params}


def _reference(c, output, f, values):
    try:
        return nodal_ac.transfers_with_scale(c, output, f, values, precise=True)
    except nodal_ac.ReferenceSingularError:
        return None


@example_settings(40)
@given(networks_with_kinds(), st.floats(0.0, 7.0).map(lambda x: 10.0**x))
def test_random_networks_with_the_new_kinds_match_the_nodal_reference(case, f):
    """Every coefficient, s domain at one frequency and DC, against ``nodal_ac``
    [derived: KCL, the reference's own element models]."""
    desc, output, symbolic, options = case
    c, values = circuits_ac.to_circuit(desc, symbolic, opamp_options=options)
    for domain, at in (("s", f), ("dc", 0.0)):
        try:
            res = c.analyze(output, domain=domain, values=values)
        except (opsym.SingularCircuitError, opsym.NoSolutionError):
            event(f"singular ({domain})")
            assert _reference(c, output, at, values) is None
            continue
        ref = _reference(c, output, at, values)
        if ref is None:
            event("reference singular at one frequency only")
        assume(ref is not None)
        assert {x.name for x in res.terms} == set(ref)
        for source in res.terms:
            want, scale = ref[source.name]
            if domain == "s":
                got = complex(evaluator(res.coefficient(source), "H")(f)[()])
            else:
                got = complex(res.coefficient(source))
            assert abs(got - want) <= 1e-9 * abs(want) + 1e-12 * scale, (domain, source, got, want)


@st.composite
def dc_networks_with_resistances(draw):
    pick = DrawPicker(draw)
    desc, output, symbolic = circuits.random_circuit(pick, max_opamps=2)
    out = []
    for it in desc:
        if it[0] == "OA":
            extras = {k: pick.choice(v) for k, v in
                      (("Ro", (10.0, 100.0, 2e3)), ("Rid", (1e4, 1e6, 1e9)),
                       ("Ricm", (1e5, 1e9))) if pick.coin(0.5)}  # fmt: skip
            it = (*it[:9], extras)
        out.append(it)
    return out, output, symbolic


@example_settings(60)
@given(dc_networks_with_resistances())
def test_random_dc_networks_with_ro_rid_ricm_match_the_dc_reference(case):
    """Every DC coefficient against ``tests/reference/nodal.py`` (exact rationals), where
    Ro, Rid and Ricm are plain resistors around an internal node [derived: KCL]."""
    desc, output, symbolic = case
    try:
        ref = nodal.coefficients_with_scale(desc, output, exact=True)
    except nodal.ReferenceSingularError:
        ref = None
    assume(ref is not None)
    c = nodal.to_circuit(desc, symbolic)
    values = nodal.numeric_values(c, desc, symbolic)
    res = c.analyze(output)
    assert {x.name for x in res.terms} == set(ref)
    for name, (want, scale) in ref.items():
        got = evaluate(res.coefficient(name), values)
        assert abs(got - want) <= 1e-9 * abs(want) + 1e-12 * scale, (name, got, want)


def test_ro_and_a_capacitive_load_against_ngspice(ngspice):
    """Follower, single pole (A0 = 1e5, GBW = 1 MHz), Ro = 100 Ω, CL = 10 nF: ngspice
    ``.ac`` of the op-amp built from primitives with a real 100 Ω resistor after its
    output buffer, 1 kHz … 10 MHz. The response peaks (ζ ≈ 0.2 above: the
    capacitive-load peaking of Franco, ch. 8, mem)."""
    import spice_ac

    desc = [
        ("V", "Vin", "in", "0", 0.0),
        ("OA", "U1", "in", "out", "x", ("pole", 1e5, 1e6), 0.0, 0.0, 0.0),
        ("R", "Ro", "x", "out", 100.0),
        ("C", "CL", "out", "0", 10e-9),
    ]
    f, want = spice_ac.ac(desc, "Vin", "out", 1e3, 1e7, points_per_decade=20)
    c = _follower_with_load(gain="pole")
    c.capacitor("CL", "out", "0", value=10e-9)
    values = {"U1.A0": 1e5, "U1.GBW": 1e6, "U1.Ro": 100.0}
    got = c.analyze("out", domain="s", values=values).response(f, source="Vin")
    assert np.abs(got) == pytest.approx(np.abs(want), rel=1e-9)
    assert np.max(np.abs(np.angle(got / want))) <= 1e-9
    assert np.max(np.abs(want)) > 2.0  # peaking of about 1/(2ζ) with ζ ≈ 0.2
