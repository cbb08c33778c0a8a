"""One test per class of hostile or careless input; each failed before the checks existed.

The expectations are opsym's own promises (``opsym/errors.py``: every user mistake
is an :class:`opsym.OpsymError` that names the field; ``docs/design-files.md``,
"Limits") and facts of the trade named beside the assertions.
"""

from __future__ import annotations

import io
import os
import textwrap
import threading
import time
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import pytest
import sympy as sp

import opsym
from opsym.cli import _Progress, main

STAGE_TOML = """\
title = "inverting stage"
output = "out"
[resistors]
R1 = { between = ["in", "n"], value = "10k" }
R2 = { between = ["n", "out"], value = "100k" }
R3 = { between = ["p", "0"], value = "9.09k" }
[voltage-sources]
Vin = { plus = "in", minus = "0", value = "0.1 V" }
[opamps.U1]
plus = "p"
minus = "n"
out = "out"
"""


def stage(domain: str = "dc") -> opsym.Circuit:
    c = opsym.Circuit("inverting stage")
    c.voltage_source("Vin", "in", "0")
    c.resistor("R1", "in", "n")
    c.resistor("R2", "n", "out")
    c.opamp("U1", "0", "n", "out", gain="pole" if domain == "s" else "ideal")
    return c


def cli(*argv: str) -> tuple[int, str]:
    err = io.StringIO()
    with redirect_stdout(io.StringIO()), redirect_stderr(err):
        code = main(list(argv))
    return code, err.getvalue()


# -- 1. numbers out of range ------------------------------------------------------------


@pytest.mark.parametrize(
    "value", [10**5000, sp.Float("1e400"), 1e308, 1e-300, -(10**160)],
    ids=["int 1e5000", "Float 1e400", "1e308", "1e-300", "-1e160"],
)
def test_numbers_out_of_range_name_the_field(value):
    """Limits: |x| within 1e-150 … 1e150 (docs/design-files.md, "Limits")."""
    with pytest.raises(opsym.InvalidValueError, match=r"resistor R9: the number .* out of range"):
        stage().resistor("R9", "a", "0", value=value)


@pytest.mark.parametrize("x", [1e308, 10**400, 5e-324, 1e-310],
                         ids=["1e308", "int 1e400", "5e-324", "1e-310"])
def test_preferred_value_refuses_numbers_past_the_limits(x):
    with pytest.raises(opsym.OpsymError, match="preferred_value x"):
        opsym.preferred_value(x)


def test_values_and_budget_values_are_range_checked():
    with pytest.raises(opsym.InvalidValueError, match=r"values\[R1\]"):
        stage().analyze("out", values={"R1": 10**5000})
    res = stage().analyze("out")
    with pytest.raises(opsym.OpsymError, match=r"error_budget values\['R1'\]"):
        opsym.error_budget(res, {"R1": 1e300, "R2": "10k", "Vin": 1})


# -- 2. wrong Python types --------------------------------------------------------------


@pytest.mark.parametrize(
    ("call", "expected"),
    [
        (lambda: stage().analyze("out", values=[("R1", 1)]), "values: expected a mapping"),
        (lambda: stage().analyze("out", values="R1=1k"), "values: expected a mapping"),
        (lambda: stage().analyze("out").subs(["R1"]), "subs: expected a mapping"),
        (lambda: stage().opamp("U2", "a", "b", "c", extra=None), "extra= expects a list"),
        (lambda: stage().resistor(["R"], "a", "0"), "element name: expected text"),
        (lambda: stage().resistor("R9", None, "0"), "node name: expected text"),
        (lambda: stage().opamp("U2", "a", "b", "c", cmrr="no"), "cmrr= expects True or False"),
        (lambda: opsym.parse_design(None), "parse_design text: expected text"),
        (lambda: opsym.transfer_latex("H"), "transfer_latex: expected a Result"),
    ],
)
def test_wrong_types_raise_argument_type_errors(call, expected):
    """Also a TypeError, so ``except TypeError`` keeps working (opsym/errors.py)."""
    with pytest.raises(opsym.ArgumentTypeError, match=expected) as info:
        call()
    assert isinstance(info.value, TypeError)


def test_frequencies_and_band_edges_as_text_are_refused():
    res = stage("s").analyze("out", domain="s", values={"R1": "1k", "R2": "10k",
                                                        "U1.A0": "100k", "U1.GBW": "1M"})
    with pytest.raises(opsym.ArgumentTypeError, match="response f: expected frequencies"):
        res.response("1k")
    n = stage("s").noise("out", values={"R1": "1k", "R2": "10k", "U1.A0": "100k",
                                        "U1.GBW": "1M", "U1.en": "10n", "U1.in": "1p",
                                        "U1.fce": 0, "U1.fci": 0})
    with pytest.raises(opsym.ArgumentTypeError, match="noise budget f_low: expected a number"):
        n.budget("0.1", 10.0)
    with pytest.raises(opsym.InvalidValueError, match="not a band"):
        n.rms(10.0, 1.0)


# -- 3. units checked from Python as in design files ------------------------------------


@pytest.mark.parametrize(
    ("method", "text", "unit"),
    [("capacitor", "10 Ω", "F"), ("inductor", "1 V", "H"), ("resistor", "10 nF", "Ω"),
     ("voltage_source", "1 A", "V"), ("current_source", "5 V", "A")],
)
def test_units_are_checked_from_python(method, text, unit):
    with pytest.raises(opsym.ValueSyntaxError, match=f"expected a value in {unit}"):
        getattr(stage(), method)("X9", "a", "0", value=text)


def test_the_right_unit_is_accepted():
    c = stage()
    c.capacitor("C1", "n", "out", value="100 pF")
    assert c.element("C1").value == sp.Rational(1, 10**10)  # 100 pF = 1e-10 F (SI prefix p)


# -- 4. physically impossible values ----------------------------------------------------


@pytest.mark.parametrize("value", [0, -1, "-1k"])
def test_subs_refuses_a_resistor_that_is_not_positive(value):
    with pytest.raises(opsym.InvalidValueError, match=r"subs\[R1\] = .*resistor R1 must be"):
        stage().analyze("out").subs({"R1": value})


def test_budget_refuses_a_negative_resistor():
    res = stage().analyze("out")
    params = {"U1": opsym.opamp_parameters("generic precision bipolar")}
    with pytest.raises(opsym.BudgetError, match=r"\['R1'\] = -1000: resistor R1 must be pos"):
        opsym.error_budget(res, {"R1": "-1k", "R2": "10k", "Vin": 1}, params)


def test_preferred_value_of_a_positive_number_is_positive_and_near():
    """IEC 60063: E96 steps are about 2.4 %; the nearest value is within one step."""
    for x in (1e-30, 3.3e-17, 1.0, 666.67, 9.99e29):
        v = opsym.preferred_value(x, "E96")
        assert v > 0 and abs(v / x - 1) < 0.025, (x, v)


# -- 5. names ---------------------------------------------------------------------------


def test_an_element_cannot_be_called_s():
    with pytest.raises(opsym.DuplicateNameError, match="reserved for the Laplace variable"):
        stage().resistor("s", "a", "0")


def test_names_that_print_alike_are_refused():
    with pytest.raises(opsym.DuplicateNameError, match=r"'R_1' prints as R_\{1\}"):
        stage().resistor("R_1", "a", "0")  # stage() has R1


def test_a_look_alike_symbol_in_a_value_is_refused():
    with pytest.raises(opsym.DuplicateNameError, match="the symbol R1 in its value"):
        stage().resistor("R9", "a", "0", value=2 * sp.Symbol("R1"))  # not positive=True


def test_subs_by_a_look_alike_symbol_means_the_circuits_own():
    """Inverting gain −R2/R1 (any analog text); R1 → 1k leaves −R2/1000."""
    res = stage().analyze("out").subs({sp.Symbol("R1"): 1000})
    R2 = sp.Symbol("R2", positive=True)
    assert sp.simplify(res.coefficient("Vin") - (-R2 / 1000)) == 0


# -- 6. design-file meaning --------------------------------------------------------------


def read(text: str):
    return opsym.parse_design(textwrap.dedent(text), filename="t.toml")


@pytest.mark.parametrize("output", ['["gnd", "0"]', '"GND"', '["GND", "gnd"]'])
def test_ground_aliases_as_output_are_refused_while_reading(output):
    with pytest.raises(opsym.DesignFileError, match=r"output .*cannot be ground"):
        read(STAGE_TOML.replace('output = "out"', f"output = {output}"))


@pytest.mark.parametrize(("expr", "shown"), [("R1 - 10k", "0"), ("R1 - 20k", "-10000")])
def test_equals_that_is_not_positive_at_the_values_is_refused(expr, shown, tmp_path):
    text = STAGE_TOML.replace('value = "9.09k" }', f'equals = "{expr}" }}')
    with pytest.raises(opsym.DesignFileError, match=f"R3.* equals .*is {shown} at the given"):
        read(text)
    path = tmp_path / "t.toml"
    path.write_text(text, encoding="utf-8")
    code, err = cli("report", "--quiet", str(path))
    assert code == 2 and "Traceback" not in err and err.count("\n") == 1, err


def test_a_signal_is_not_an_error_term_to_null():
    with pytest.raises(opsym.DesignFileError, match="'Vin' is a signal source"):
        read(STAGE_TOML + '[analysis]\nnulls = ["Vin by R3"]\n')


# -- 7. files ---------------------------------------------------------------------------


@pytest.mark.parametrize("spelling", ["same", "relative", "symlink"])
def test_report_never_overwrites_its_design_file(tmp_path, monkeypatch, spelling):
    design = tmp_path / "amp.toml"
    design.write_text(STAGE_TOML, encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    target = {"same": "amp.toml", "relative": f"../{tmp_path.name}/amp.toml",
              "symlink": "link.md"}[spelling]  # fmt: skip
    if spelling == "symlink":
        os.symlink(design, tmp_path / "link.md")
    code, err = cli("report", "--quiet", "amp.toml", "--markdown", target)
    assert code == 2 and "is the design file" in err, err
    assert design.read_text(encoding="utf-8") == STAGE_TOML


def test_two_outputs_on_one_path_are_refused(tmp_path):
    design = tmp_path / "amp.toml"
    design.write_text(STAGE_TOML, encoding="utf-8")
    note = str(tmp_path / "note.txt")
    code, err = cli("report", "--quiet", str(design), "--markdown", note, "--latex", note)
    assert code == 2 and "another output" in err, err
    assert not (tmp_path / "note.txt").exists()


def test_a_failed_write_leaves_the_old_file_whole(tmp_path, monkeypatch):
    design = tmp_path / "amp.toml"
    design.write_text(STAGE_TOML, encoding="utf-8")
    note = tmp_path / "note.md"
    note.write_text("the previous note\n", encoding="utf-8")

    def disk_full(fd):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", disk_full)
    code, err = cli("report", "--quiet", str(design), "--markdown", str(note))
    assert code == 2 and "No space left" in err, err
    assert note.read_text(encoding="utf-8") == "the previous note\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["amp.toml", "note.md"]  # no debris


# -- 8. progress ------------------------------------------------------------------------


def test_report_names_each_long_phase(tmp_path):
    """run_design tells the command line's reporter every phase it starts."""
    from opsym.study.design import run_design

    text = STAGE_TOML + '[response]\nfrom = "10 Hz"\nto = "1 MHz"\n'
    text = text.replace('out = "out"\n', 'out = "out"\ngain = "pole"\nparameters = '
                        '"generic precision bipolar"\n')  # fmt: skip
    text += '[noise]\nfrom = "0.1 Hz"\nto = "10 Hz"\n'
    phases: list[str] = []

    class Recorder:
        def __call__(self, done, total, what):
            pass

        def phase(self, name):
            phases.append(name)

    run_design(read(text), progress=Recorder())
    assert any("error budget" in p for p in phases)
    assert any("frequency response" in p for p in phases)
    assert any("noise" in p for p in phases)


def test_progress_keeps_talking_during_one_long_step():
    """A heartbeat: a step that reports nothing for a while still shows its phase."""
    stream = io.StringIO()
    progress = _Progress(stream, delay=0.0, interval=0.1)
    progress.phase("deriving the closed form")
    time.sleep(0.6)  # one long block, no callback
    progress.close()
    lines = [ln for ln in stream.getvalue().splitlines() if "deriving the closed form" in ln]
    assert len(lines) >= 2, stream.getvalue()
    assert not any(t.name == "opsym-progress" for t in threading.enumerate())  # stopped


def test_progress_is_silent_for_quick_runs():
    stream = io.StringIO()
    progress = _Progress(stream, delay=5.0)
    progress.phase("error budget")
    progress(1, 1, "block of 3 equation(s)")
    progress.close()
    assert stream.getvalue() == ""


def test_design_file_limits_are_documented():
    docs = Path(__file__).parents[1] / "docs"
    text = (docs / "design-files.md").read_text(encoding="utf-8")
    assert "## Limits" in text and "1e150" in text and "2000" in text


def test_the_element_count_is_limited():
    """Limits: at most 2000 elements (docs/design-files.md, "Limits")."""
    c = opsym.Circuit("big")
    for i in range(2000):
        c.resistor(f"R{i}", f"n{i}", f"n{i + 1}", value=1000)
    with pytest.raises(opsym.CircuitError, match="already has 2000 elements"):
        c.resistor("Rx", "a", "0")


def test_a_complex_temperature_is_refused():
    """A temperature is a real number of °C; sp.I has no order (docs/conventions.md)."""
    c = opsym.Circuit()
    c.resistor("R1", "a", "0", "1k")
    c.current_source("I1", "0", "a", 0)
    for t in (sp.I, 25 + sp.I):
        with pytest.raises(opsym.CircuitError, match="give a number of °C"):
            c.noise("a", temperature=t)
