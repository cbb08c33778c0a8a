"""Design files the tests share, as TOML text (invented values).

``OLD_BRIDGE``: the shipped bridge example as it was before its output was brought
inside the rails — a balanced bridge whose T-network to ground puts about +125 V at
the output of a ±15 V op-amp. Reports must warn about it.
"""

__all__ = ["OLD_BRIDGE"]

OLD_BRIDGE = """\
title = "Bridge amplifier with a T-network, R6 to ground"
output = "out"
input = "Vex"
[resistors]
Ra = { between = ["ex", "ref"], value = "10k" }
Rb = { between = ["ref", "0"], value = "10k" }
Rg = { between = ["ex", "n"], value = "350" }
Rc = { between = ["n", "0"], value = "350" }
R4 = { between = ["n", "t"], value = "100k" }
R5 = { between = ["t", "out"], value = "100k" }
R6 = { between = ["t", "0"], value = "1k" }
[voltage-sources]
Vex = { plus = "ex", minus = "0", value = "2.5 V" }
[opamps.U1]
plus = "ref"
minus = "n"
out = "out"
gain = "finite"
include = ["offset", "bias", "cmrr"]
Vcm = "1.25 V"
parameters = "generic precision bipolar"
[budget]
grade = "typical"
"""
