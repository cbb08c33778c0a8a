"""The op-amp's impedances and the poles of its rejections: one small kind each.

They add no source; each changes the terms through its parameter:

* ``ro`` — open-loop output resistance ``Ro`` in series with the controlled
  source's output (:class:`~opsym.model.nonideal.OutputImpedance`); ``lo`` —
  an output inductance ``Lo`` in series with it (s domain; a wire at DC).
* ``rid`` — differential input resistance ``Rid`` between the pins; ``ricm`` —
  common-mode input resistance ``Ricm`` from *each* pin to ground.
* ``cid`` — differential input capacitance ``Cid`` between the pins; ``ccm`` —
  common-mode input capacitance ``Ccm`` from each pin to ground (s domain).
* ``cmrr-pole`` and ``psrr-pole`` — CMRR and PSRR that fall above a corner:
  the weight of ``Vcm`` becomes ``(1 + s/(2π·fcmrr))/CMRR`` (``dVs`` likewise
  with ``fpsrr``). Each adds the part ``s/(2π·fc·CMRR)`` to the ``cmrr`` kind's
  series source, so it needs that kind; the DC value is unchanged.

Every one of them tends to the model without it as its parameter tends to its
ideal value (``Ro, Lo, Cid, Ccm → 0``; ``Rid, Ricm, fcmrr, fpsrr → ∞``).

Examples
--------
>>> from opsym.model.nonideal import KINDS
>>> [k for k in KINDS if k in ("ro", "rid", "ricm", "cid", "ccm")]
['ro', 'rid', 'ricm', 'cid', 'ccm']
>>> OutputResistance().injections("U1")
(OutputImpedance(impedance=U1.Ro),)
"""

from __future__ import annotations

import sympy as sp

from .nonideal import NonIdeal, OutputImpedance, PinAdmittance, SeriesVoltage
from .symbols import LAPLACE, SymbolSpec, opamp_symbol

__all__ = [
    "CommonModeCapacitance",
    "CommonModeRejectionPole",
    "CommonModeResistance",
    "InputCapacitance",
    "InputResistance",
    "OutputInductance",
    "OutputResistance",
    "SupplyRejectionPole",
]

_POSITIVE = (("positive", True),)


class _Parameter(NonIdeal):
    """A kind with one parameter and no source (the helpers below share this)."""

    def sources(self, opamp):
        return ()

    def parameters(self, opamp):
        return tuple(spec.symbol(opamp) for spec in self.symbols)

    def injections(self, opamp):  # pragma: no cover - every kind below gives its own
        return ()


class OutputResistance(_Parameter):
    """Open-loop output resistance ``Ro``, in series with the controlled source's output."""

    kind = "ro"
    symbols = (SymbolSpec("Ro", "Ω", r"R_{\mathrm{o}}", "open-loop output resistance Ro",
                          _POSITIVE, datasheet="ro", role="parameter"),)  # fmt: skip
    convention = (
        "Ro is in series with the open-loop gain stage's output: Vout = A·(V+ − V-) − Ro·Iout, "
        "Iout the current the op-amp drives into its output node."
    )

    def injections(self, opamp):
        return (OutputImpedance(opamp_symbol(opamp, "Ro")),)


class OutputInductance(_Parameter):
    """Open-loop output inductance ``Lo`` in series with the output (with ``Ro``, if any)."""

    kind = "lo"
    symbols = (SymbolSpec("Lo", "H", r"L_{\mathrm{o}}", "open-loop output inductance Lo",
                          _POSITIVE, datasheet="lo", role="parameter"),)  # fmt: skip
    convention = "Lo is in series with the gain stage's output, impedance s·Lo (0 at DC)."

    def injections(self, opamp):
        return (OutputImpedance(LAPLACE * opamp_symbol(opamp, "Lo")),)


class InputResistance(_Parameter):
    """Differential input resistance ``Rid`` between the pins."""

    kind = "rid"
    symbols = (SymbolSpec("Rid", "Ω", r"R_{\mathrm{id}}", "differential input resistance Rid",
                          _POSITIVE, datasheet="rid", role="parameter"),)  # fmt: skip
    convention = "Rid is the differential input resistance, between the + and − pins."

    def injections(self, opamp):
        return (PinAdmittance("plus", "minus", 1 / opamp_symbol(opamp, "Rid")),)


class CommonModeResistance(_Parameter):
    """Common-mode input resistance ``Ricm`` from each pin to ground."""

    kind = "ricm"
    symbols = (SymbolSpec("Ricm", "Ω", r"R_{\mathrm{icm}}", "common-mode input resistance Ricm",
                          _POSITIVE, datasheet="ricm", role="parameter"),)  # fmt: skip
    convention = "Ricm is from each input pin to ground (the pins tied together see Ricm/2)."

    def injections(self, opamp):
        g = 1 / opamp_symbol(opamp, "Ricm")
        return (PinAdmittance("plus", "ground", g), PinAdmittance("minus", "ground", g))


class InputCapacitance(_Parameter):
    """Differential input capacitance ``Cid`` between the pins (admittance ``s·Cid``)."""

    kind = "cid"
    symbols = (SymbolSpec("Cid", "F", r"C_{\mathrm{id}}", "differential input capacitance Cid",
                          _POSITIVE, datasheet="cid", role="parameter"),)  # fmt: skip
    convention = "Cid is between the + and − pins (admittance s·Cid; open at DC)."

    def injections(self, opamp):
        return (PinAdmittance("plus", "minus", LAPLACE * opamp_symbol(opamp, "Cid")),)


class CommonModeCapacitance(_Parameter):
    """Common-mode input capacitance ``Ccm`` from each pin to ground."""

    kind = "ccm"
    symbols = (SymbolSpec("Ccm", "F", r"C_{\mathrm{cm}}", "common-mode input capacitance Ccm",
                          _POSITIVE, datasheet="ccm", role="parameter"),)  # fmt: skip
    convention = "Ccm is from each input pin to ground (admittance s·Ccm; open at DC)."

    def injections(self, opamp):
        y = LAPLACE * opamp_symbol(opamp, "Ccm")
        return (PinAdmittance("plus", "ground", y), PinAdmittance("minus", "ground", y))


class CommonModeRejectionPole(_Parameter):
    """CMRR falling above ``fcmrr``: ``Vcm`` weighs ``(1 + s/(2π·fcmrr))/CMRR``."""

    kind = "cmrr-pole"
    requires = "cmrr"
    symbols = (SymbolSpec("fcmrr", "Hz", r"f_{\mathrm{CMRR}}", "CMRR corner fcmrr", _POSITIVE,
                          datasheet="fcmrr", role="parameter"),)  # fmt: skip
    convention = "CMRR falls above fcmrr: Vcm is weighted (1 + s/(2π·fcmrr))/CMRR (DC unchanged)."

    def injections(self, opamp):
        cmrr, fc = opamp_symbol(opamp, "CMRR"), opamp_symbol(opamp, "fcmrr")
        return (SeriesVoltage(opamp_symbol(opamp, "Vcm"), LAPLACE / (2 * sp.pi * fc * cmrr)),)


class SupplyRejectionPole(_Parameter):
    """PSRR falling above ``fpsrr``: ``dVs`` weighs ``(1 + s/(2π·fpsrr))/PSRR``."""

    kind = "psrr-pole"
    requires = "psrr"
    symbols = (SymbolSpec("fpsrr", "Hz", r"f_{\mathrm{PSRR}}", "PSRR corner fpsrr", _POSITIVE,
                          datasheet="fpsrr", role="parameter"),)  # fmt: skip
    convention = "PSRR falls above fpsrr: dVs is weighted (1 + s/(2π·fpsrr))/PSRR (DC unchanged)."

    def injections(self, opamp):
        psrr, fc = opamp_symbol(opamp, "PSRR"), opamp_symbol(opamp, "fpsrr")
        return (SeriesVoltage(opamp_symbol(opamp, "dVs"), LAPLACE / (2 * sp.pi * fc * psrr)),)
