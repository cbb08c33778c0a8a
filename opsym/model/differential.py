"""The fully differential amplifier's own error sources: one small kind each.

An FDA (:class:`~opsym.model.elements.FullyDifferentialAmp`) shares the input
side of an op-amp — ``offset`` (``Vos``), ``bias`` (``Ib+``, ``Ib-``), ``cmrr``,
``psrr``, ``vnoise`` and ``inoise`` act on its differential row as on an
op-amp's. Its output common-mode loop adds:

* ``ocm-offset`` — ``Voscm``, the output common-mode offset: the output common
  mode is ``V(vocm) + Voscm`` (plus the balance term);
* ``balance`` — ``ebal``, the output balance error ΔVout,cm/ΔVout,diff, a signed
  ratio, ideal 0: the output common mode gains ``ebal·Vod``;
* ``ocm-noise`` — ``encm``, the voltage noise of the Vocm path, in series with
  the ``vocm`` input (white, no 1/f corner).

Only an FDA accepts them (their injections are
:class:`~opsym.model.nonideal.CommonModeVoltage` and
:class:`~opsym.model.nonideal.OutputBalance`).

Examples
--------
>>> OutputCommonModeOffset().sources("U1")
(U1.Voscm,)
>>> OutputBalanceError().injections("U1")
(OutputBalance(ratio=U1.ebal),)
"""

from __future__ import annotations

import sympy as sp

from .nonideal import CommonModeVoltage, NoiseSpectrum, NonIdeal, OutputBalance
from .symbols import SymbolSpec, opamp_symbol

__all__ = ["CommonModeNoise", "OutputBalanceError", "OutputCommonModeOffset"]


class OutputCommonModeOffset(NonIdeal):
    """An FDA's output common-mode offset ``Voscm``, added to ``V(vocm)``."""

    kind = "ocm-offset"
    symbols = (SymbolSpec("Voscm", "V", r"V_{\mathrm{OS,CM}}",
                          "output common-mode offset Voscm", datasheet="voscm"),)  # fmt: skip
    convention = "Voscm adds to the output common mode: Vout,cm = V(vocm) + Voscm."

    def sources(self, opamp):
        return (opamp_symbol(opamp, "Voscm"),)

    def injections(self, opamp):
        return (CommonModeVoltage(opamp_symbol(opamp, "Voscm"), sp.S.One),)


class OutputBalanceError(NonIdeal):
    """An FDA's output balance error ``ebal`` = ΔVout,cm/ΔVout,diff (ideal 0)."""

    kind = "balance"
    symbols = (SymbolSpec("ebal", "", r"\varepsilon_{\mathrm{bal}}", "output balance error ebal",
                          datasheet="ebal", file_value=True, role="parameter"),)  # fmt: skip
    convention = (
        "ebal is the output balance error: the output common mode gains ebal·Vod "
        "(Vod = V(out+) − V(out-)), ideal 0."
    )

    def sources(self, opamp):
        return ()

    def parameters(self, opamp):
        return (opamp_symbol(opamp, "ebal"),)

    def injections(self, opamp):
        return (OutputBalance(opamp_symbol(opamp, "ebal")),)


class CommonModeNoise(NonIdeal):
    """The voltage noise ``encm`` of an FDA's Vocm path, in series with its ``vocm`` input."""

    kind = "ocm-noise"
    noise = True
    symbols = (SymbolSpec("encm", "V/√Hz", r"e_{\mathrm{n,CM}}", "Vocm-path noise encm",
                          (("nonnegative", True),), datasheet="encm",
                          file_value=True),)  # fmt: skip
    convention = "The Vocm-path noise encm is in series with the vocm input (white)."

    def sources(self, opamp):
        return (opamp_symbol(opamp, "encm"),)

    def injections(self, opamp):
        return (CommonModeVoltage(opamp_symbol(opamp, "encm"), sp.S.One),)

    def spectra(self, opamp):
        encm = opamp_symbol(opamp, "encm")
        return (NoiseSpectrum(encm, encm, sp.S.Zero),)
