"""A new design format is one reader registered by suffix (DEVELOPERS.md, "a file format")."""

from __future__ import annotations

import pytest

import opsym
from opsym.cli import main
from opsym.errors import DesignFileError
from opsym.io.formats import READERS, reader


@pytest.fixture
def mini_format():
    """A toy format: one 'R name a b value' line per resistor, then 'amp name + - out'."""

    @reader(".mini")
    def parse_mini(text, *, filename="<text>"):
        c = opsym.Circuit(filename)
        for number, line in enumerate(text.splitlines(), 1):
            words = line.split()
            if not words:
                continue
            if words[0] == "R" and len(words) == 5:
                c.resistor(words[1], words[2], words[3], value=words[4])
            elif words[0] == "V" and len(words) == 4:
                c.voltage_source(words[1], words[2], words[3])
            elif words[0] == "amp" and len(words) == 5:
                c.opamp(words[1], plus=words[2], minus=words[3], out=words[4])
            else:
                raise DesignFileError(f"{filename}: line {number}: cannot read {line!r}")
        return opsym.parse_design(opsym.dump_design(c, output="out"), filename=filename)

    yield parse_mini
    READERS.pop(".mini")


def test_a_registered_reader_serves_load_design_and_the_command_line(tmp_path, mini_format,
                                                                      capsys):  # fmt: skip
    path = tmp_path / "follower.mini"
    path.write_text("V Vin p 0\nR R1 n 0 1k\nR R2 n out 9k\namp U1 p n out\n", encoding="utf-8")
    design = opsym.load_design(path)
    res = design.circuit.analyze("out")
    assert res.coefficient("Vin").subs(design.values) == 10  # 1 + R2/R1, case 6 [pub]
    assert main(["check", str(path)]) == 0
    assert "4 elements, output out" in capsys.readouterr().out


def test_an_unknown_suffix_names_the_readers(tmp_path):
    path = tmp_path / "design.xyz"
    path.write_text("* a netlist\n", encoding="utf-8")
    with pytest.raises(DesignFileError, match=r"no reader for .\.xyz. files; opsym reads"):
        opsym.load_design(path)
