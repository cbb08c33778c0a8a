"""Reading SPICE netlists as schematic editors export them (``opsym.io.spice``).

The netlists are written here in the shapes two common kinds of schematic editor
produce (a ``.title`` card, ``/``-prefixed net names and ``Net-(…)`` nets, ``.include``
of a model file; or ``N001`` nets, ``.param`` values in braces, a five-pin op-amp
with supplies, ``.backanno``); every value is invented. SPICE's number rules are
those of the SPICE3 user manual and the ngspice manual (section "Scale factors"),
cited from memory: f p n u m k meg g t mil, case-insensitive, letters after them
ignored.
"""

from __future__ import annotations

import pytest
import sympy as sp

import opsym
from opsym.cli import main
from opsym.errors import DesignFileError
from opsym.io._spice_text import spice_number

EDITOR_A = """\
.title inverting stage with bias compensation
.include "/home/someone/models/opamp.lib"
* Sheet: /
V1 /in GND DC 0 AC 1
R1 /in Net-(R1-Pad2) 10k
R2 Net-(R1-Pad2) /out 47k
R3 Net-(R3-Pad1) GND 8.2k
XU1 Net-(R3-Pad1) Net-(R1-Pad2) /vcc /vee /out OPAMP_MODEL
V2 /vcc GND 15
V3 GND /vee 15
.tran 1u 1m
.end
"""

EDITOR_B = """\
* C:\\work\\lowpass.asc
V1 N001 0 SINE(0 1 1k) AC 1
R1 N002 N001 {Rin}
R2 out N002 {Rf}
C1 out N002 100p
XU1 0 N002 VCC VEE out opamp Aol=100K GBW=10Meg
V2 VCC 0 15
V3 0 VEE 15
.param Rin=10k Rf=100k
.lib UniversalOpAmp.lib
.tran 0 5m 0
.backanno
.end
"""


def _gain(design, source="V1"):
    return design.analyze().subs(design.values).coefficient(source)


def test_editor_a_netlist_reads_with_a_pin_map():
    d = opsym.read_netlist(EDITOR_A, output="/out",
                           opamps={"opamp_model": ("+", "-", "v+", "v-", "out")})  # fmt: skip
    assert d.title == "inverting stage with bias compensation"
    # inverting amplifier: G = -R2/R1 (any analog text, e.g. Sedra & Smith, ch. 2) [pub]
    assert _gain(d) == sp.Rational(-47, 10)
    res = d.analyze()
    # bias-current null: R3 = R1‖R2 (common practice; reference-checks case 2) [pub]
    r1, r2 = (d.circuit.symbol(n) for n in ("R1", "R2"))
    assert sp.simplify(res.null("U1.Ib", by="R3").rhs - r1 * r2 / (r1 + r2)) == 0
    assert d.signal == "V1"
    assert "R3" in d.values and d.values["R3"] == 8200
    assert "Line 3" not in d.notes and ".tran" in d.notes and ".include" in d.notes
    assert "'/out' is called '_out'" in d.notes


def test_pin_map_must_name_each_role_once():
    with pytest.raises(DesignFileError, match=r"must name '\+', '-' and 'out' once each"):
        opsym.read_netlist(EDITOR_B, output="out", opamps={"opamp": ["in+", "-", "a", "b", "out"]})


def test_editor_b_lowpass_dc_and_s_domain():
    d = opsym.read_netlist(EDITOR_B, output="out", opamps=["+", "-", "v+", "v-", "out"])
    assert d.values["R1"] == 10000 and d.values["R2"] == 100000
    assert d.values["C1"] == sp.Rational(1, 10**10)
    assert d.values["V1"] == 0  # no DC value: 0 V, the SINE function is noted
    assert _gain(d) == -10  # -Rf/Rin [pub: inverting amplifier]
    h = d.analyze(domain="s").subs(d.values).coefficient("V1")
    s = opsym.s
    # inverting integrator-lowpass: H = -(R2/R1)/(1 + s·R2·C1) [pub: any active-filter text]
    assert sp.simplify(h - (-10 / (1 + s * sp.Rational(1, 100000)))) == 0
    assert "SINE" in d.notes and "Aol" in d.notes and ".backanno" in d.notes


def test_default_pin_order_ignores_supplies_with_a_note():
    d = opsym.read_netlist(EDITOR_B.replace("XU1 0 N002 VCC VEE out", "XU1 0 N002 out VCC VEE"),
                           output="out")  # fmt: skip
    assert _gain(d) == -10
    assert "read as +, -, out" in d.notes and "VCC VEE" in d.notes


@pytest.mark.parametrize(
    ("word", "expected"),
    [
        ("1F", sp.Rational(1, 10**15)),  # F is femto in SPICE, not farad
        ("1M", sp.Rational(1, 1000)),  # M is milli in SPICE
        ("1m", sp.Rational(1, 1000)),
        ("1MEG", 10**6),
        ("2.2Meg", 2200000),
        ("10kohm", 10000),
        ("10KOhms", 10000),
        ("1uF", sp.Rational(1, 10**6)),
        ("4.7nF", sp.Rational(47, 10**10)),
        ("2mil", sp.Rational(508, 10**7)),  # 1 mil = 25.4 µm (exact, inch = 25.4 mm)
        ("1G", 10**9),
        ("1T", 10**12),
        ("1e3", 1000),
        ("-2.5e-3", sp.Rational(-1, 400)),
        (".5", sp.Rational(1, 2)),
        ("10V", 10),
        ("100Hz", 100),
    ],
)
def test_spice_numbers(word, expected):
    assert spice_number(word, "test") == expected  # SPICE3/ngspice scale factors [pub, memory]


def test_spice_rules_stay_in_the_spice_reader():
    # opsym's own syntax: M is mega (docs/conventions.md); SPICE's M is milli
    assert opsym.parse_value("1M", where="x") == 10**6
    assert spice_number("1M", "x") == sp.Rational(1, 1000)


def test_continuations_and_comments():
    text = "title\n* a comment\nV1 in 0\n+ DC 2 ; the input\nR1 in out\n+ 1k\nR2 out 0 1k ; load\n"
    d = opsym.read_netlist(text, output="out")
    assert d.values["V1"] == 2 and d.values["R1"] == 1000
    assert _gain(d) == sp.Rational(1, 2)  # divider [pub: R2/(R1+R2)]


def test_e_source_becomes_an_opamp_of_that_gain():
    text = "follower\nV1 p 0 1\nE1 out 0 p out 1e5\nR1 out 0 10k\n.end\n"
    d = opsym.read_netlist(text, output="out")
    # follower of open-loop gain A: A/(1 + A) (negative feedback, beta = 1) [pub]
    assert _gain(d) == sp.Rational(100000, 100001)
    neg = opsym.read_netlist(text.replace("p out 1e5", "out p -1e5"), output="out")
    assert _gain(neg) == sp.Rational(100000, 100001)


@pytest.mark.parametrize(
    ("line", "match"),
    [
        ("D1 out 0 DMOD", r"line 4 \('D1 out 0 DMOD'\): D1 is a diode; opsym reads R"),
        ("Q1 c b e QMOD", r"line 4 .*Q1 is a bipolar transistor"),
        ("M1 d g s b NMOS", r"line 4 .*M1 is a MOSFET"),
        ("G1 out 0 in 0 1m", r"G1 is a voltage-controlled current source"),
        ("E2 out in p 0 10", r"E2's output is referred to in, not ground"),
        ("E2 x 0 VALUE={V(in)*2}", r"opsym maps only a linear E source"),
        ("R9 in out {2*Rx}", r"only \{name\} references"),
        ("R9 in out {Rx}", r"no .param defines 'Rx'"),
        ("R9 in out 0", r"R9 = 0 Ω; join its two nodes"),
        ("L1 in out 1m Rser=0.1", r"draw a series or parallel part as its own element"),
        (".func f(x) {x}", r"\.func is not a card opsym reads"),
        ("R1 in 0 1k", r"R1 is defined twice"),
        ("V9 in 0 DC 1 foo", r"'foo': a source reads"),
        ("R9 in out ten", r"'ten' is not a SPICE number"),
        ("R9 in out -1k", r"R9 = -1000 is not positive"),
        ("C9 in out 1e-200", r"outside 1e-150"),
        ("R9 in out 4k7", r"'4k7' is ambiguous: SPICE .* reads 4k, .* write e.g. 4.7k"),
    ],
)
def test_unsupported_lines_name_the_line_and_say_what_to_do(line, match):
    text = f"title\nV1 in 0 1\nr1 in out 1k\n{line}\nR2 out 0 1k\n.end\n"
    with pytest.raises(DesignFileError, match=match):
        opsym.read_netlist(text, output="out", filename="t.cir")


def test_blocks_and_output_errors():
    sub = "t\n.subckt amp a b c\nR1 a b 1k\n.ends\nV1 in 0 1\nR1 in out 1k\nR2 out 0 1k\n"
    d = opsym.read_netlist(sub, output="out")
    assert "subcircuit amp is not read" in d.notes
    with pytest.raises(DesignFileError, match="not closed"):
        opsym.read_netlist("t\n.control\nrun\n", output="out")
    with pytest.raises(DesignFileError, match=r"output='out' \(Python\) or --output out"):
        opsym.read_netlist(sub)
    with pytest.raises(DesignFileError, match=r"output node 'nowhere' is not in the netlist"):
        opsym.read_netlist(sub, output="nowhere")
    with pytest.raises(DesignFileError, match=r"line 1 \('R1 in out 1k'\) looks like an element"):
        opsym.read_netlist("R1 in out 1k\nR2 out 0 1k\nV1 in 0 1\n", output="out")
    with pytest.raises(DesignFileError, match="continuation with no line before it"):
        opsym.read_netlist("t\n+ 1k\n", output="out")
    with pytest.raises(DesignFileError, match="has 3 pins but the pin map"):
        opsym.read_netlist("t\nV1 p 0 1\nXU1 p out out OA\n", output="out",
                           opamps={"oa": ("+", "-", "v+", "v-", "out")})  # fmt: skip
    pair = opsym.read_netlist(sub.replace("R2 out 0 1k", "R2 out m 1k\nR3 m 0 1k"), output="out,m")
    assert pair.output == ("out", "m")


def test_round_trip_through_a_design_file():
    """netlist → Design → dump_design → parse_design: the same closed form and numbers."""
    for text, output, pins in ((EDITOR_A, "/out", ("+", "-", "v+", "v-", "out")),
                               (EDITOR_B, "out", ("+", "-", "v+", "v-", "out"))):  # fmt: skip
        d = opsym.read_netlist(text, output=output, opamps=[*pins])
        back = opsym.parse_design(opsym.dump_design(d))
        assert dict(back.values) == dict(d.values)
        for domain in ("dc", "s"):
            a = d.analyze(domain=domain).subs(d.values)
            b = back.analyze(domain=domain).subs(back.values)
            assert sp.simplify(a.expression - b.expression) == 0


def test_files_and_the_command_line(tmp_path, capsys):
    path = tmp_path / "stage.cir"
    path.write_text(EDITOR_A, encoding="utf-8")
    d = opsym.load_design(path, output="/out", opamps=["+", "-", "v+", "v-", "out"])
    assert _gain(d) == sp.Rational(-47, 10)
    assert main(["check", str(path), "--output", "/out", "--opamp-pins=+,-,v+,v-,out"]) == 0
    assert "7 elements, output _out" in capsys.readouterr().out
    assert main(["check", str(path)]) == 2
    assert "--output out" in capsys.readouterr().err
    toml = tmp_path / "d.toml"
    toml.write_text(opsym.dump_design(d), encoding="utf-8")
    assert main(["check", str(toml), "--output", "out"]) == 2
    assert "applies to other formats" in capsys.readouterr().err
