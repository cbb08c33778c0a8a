"""Express an error in converter units: LSBs and ppm of full scale.

Rule used throughout opsym: **LSB = FSR / 2^N**, where FSR is the full-scale
range ``high - low`` of the converter input and N its number of bits. (Some
datasheets use FSR/(2^N − 1); the difference is one part in 2^N.) A unipolar
converter spans ``0 … Vref``; a bipolar one ``−Vref … +Vref`` (FSR = 2·Vref).
ppm of full scale is ``error / FSR × 10^6``.

Examples
--------
>>> adc = ADC.unipolar(16, 10.0)
>>> round(adc.lsb * 1e6, 2)
152.59
>>> round(adc.ppm(adc.lsb), 2)
15.26
>>> round(ADC.unipolar(16, 5.0).lsbs(1e-3), 1)
13.1
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from ..errors import BudgetError
from ..model.limits import shown
from ._inputs import read_number
from .units import format_si

__all__ = ["ADC", "LSB_RULE"]

#: The LSB rule, stated in reports.
LSB_RULE = "1 LSB = FSR/2^N"


@dataclass(frozen=True)
class ADC:
    """An N-bit converter whose input spans ``low … high`` volts.

    Attributes
    ----------
    bits : int
        Resolution N (1 … 32).
    low, high : float
        Input range, volts; FSR = high − low.

    Examples
    --------
    >>> ADC.bipolar(12, "2.5").describe()
    '12-bit, -2.5 V … 2.5 V (bipolar), 1 LSB = FSR/2^N = 1.221 mV'
    """

    bits: int
    low: float
    high: float

    def __post_init__(self) -> None:
        if (
            isinstance(self.bits, bool)
            or not isinstance(self.bits, int)
            or not (1 <= self.bits <= 32)
        ):
            raise BudgetError(
                f"ADC bits={shown(self.bits)} must be a whole number from 1 to 32"
            )
        for name in ("low", "high"):
            v = getattr(self, name)
            if not (isinstance(v, (int, float)) and math.isfinite(v)):
                raise BudgetError(f"ADC {name}={shown(v)} must be a finite number of volts")
        if not self.high > self.low:
            raise BudgetError(f"ADC range {self.low} … {self.high} V is empty; give high > low")

    @classmethod
    def unipolar(cls, bits: int, vref: Any) -> ADC:
        """A converter spanning ``0 … vref``."""
        return cls(bits, 0.0, read_number(vref, "ADC vref", "V"))

    @classmethod
    def bipolar(cls, bits: int, vref: Any) -> ADC:
        """A converter spanning ``−vref … +vref`` (FSR = 2·vref)."""
        v = read_number(vref, "ADC vref", "V")
        return cls(bits, -v, v)

    @property
    def fsr(self) -> float:
        """Full-scale range, volts."""
        return self.high - self.low

    @property
    def lsb(self) -> float:
        """One LSB, volts: FSR/2^N."""
        return self.fsr / 2.0**self.bits

    @property
    def is_bipolar(self) -> bool:
        """True when the range straddles zero."""
        return self.low < 0 < self.high

    def lsbs(self, error: float) -> float:
        """``error`` (volts at the converter input) in LSBs."""
        return float(error) / self.lsb

    def ppm(self, error: float) -> float:
        """``error`` in ppm of the full-scale range."""
        return float(error) / self.fsr * 1e6

    def describe(self) -> str:
        """One line for reports, stating the LSB rule."""
        kind = "bipolar" if self.is_bipolar else "unipolar"
        return (
            f"{self.bits}-bit, {format_si(self.low, 'V')} … {format_si(self.high, 'V')} "
            f"({kind}), {LSB_RULE} = {format_si(self.lsb, 'V')}"
        )
