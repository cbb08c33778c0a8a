"""Op-amp and resistor parameter sets as plain data, and a few invented generic ones.

An :class:`OpAmpParams` holds what a datasheet table gives for the DC error
terms: offset voltage, its drift, bias and offset currents, open-loop gain,
CMRR and PSRR, each as a typical value and a limit (maximum, or minimum for
gain and rejection ratios). Optional typical values describe the dynamics and
noise: gain-bandwidth product, voltage and current noise densities and their
1/f corners. Optional supply rails, with the output swing and input
common-mode range as headroom to each rail, let a report check that the
nominal operating point fits. A :class:`BiasLaw` says how the bias current moves with
temperature. A :class:`ResistorParams` holds a tolerance and a TCR.

The shipped sets are **invented and generic**, of the orders of magnitude the
trade associates with each input technology; they describe no real part. Use
them to explore, then put your part's datasheet values in a set of your own.

Units: volts, amperes, V/V, dB for CMRR/PSRR (as datasheets give them), V/°C
for drift, hertz for GBW and corners, V/√Hz and A/√Hz for noise densities,
fractions for tolerance and 1/°C for TCR, volts for rails and headroom.

Examples
--------
>>> p = opamp_parameters("generic JFET")
>>> p.name
'generic JFET'
>>> round(p.bias_law.factor(85.0))
64
>>> resistor_parameters("thin film 0.1%").tolerance
0.001
"""

from __future__ import annotations

import dataclasses
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from ..errors import BudgetError, UnknownNameError
from ..model.limits import shown
from ..model.nonideal import KINDS
from ..model.symbols import SYMBOLS
from .units import db_to_ratio, parse_db, parse_fraction, parse_quantity

__all__ = [
    "OPAMP_SETS",
    "REFERENCE_TEMPERATURE",
    "RESISTOR_SETS",
    "BiasLaw",
    "OpAmpParams",
    "ResistorParams",
    "field_units",
    "opamp_parameters",
    "resistor_parameters",
]

#: Temperature (°C) at which datasheet values are given; drifts are measured from it.
REFERENCE_TEMPERATURE = 25.0

_GRADES = ("typical", "max")


def _check_grade(grade: str) -> str:
    if grade not in _GRADES:
        raise BudgetError(
            f"grade {grade!r} is not known; use 'max' (datasheet limits) or 'typical'"
        )
    return grade


@dataclass(frozen=True)
class BiasLaw:
    """How input bias (and offset) current scales with temperature.

    ``kind="constant"``: no change (a fair first guess for bipolar inputs,
    which change slowly). ``kind="doubling"``: the current doubles every
    ``doubling_c`` degrees above 25 °C and halves every ``doubling_c`` below
    (FET and CMOS inputs, whose bias current is junction leakage). Doubling
    every 10 °C is a rule of thumb of the trade, not a specification.

    Examples
    --------
    >>> BiasLaw("doubling", 10.0).factor(85.0)
    64.0
    >>> BiasLaw().factor(-40.0)
    1.0
    """

    kind: str = "constant"
    doubling_c: float = 10.0

    def __post_init__(self) -> None:
        if self.kind not in ("constant", "doubling"):
            raise BudgetError(
                f"bias law kind {self.kind!r} is not known; use 'constant' or 'doubling'"
            )
        if self.kind == "doubling" and not (
            math.isfinite(self.doubling_c) and self.doubling_c > 0
        ):
            raise BudgetError(
                f"bias law doubling_c={self.doubling_c} must be a positive number of °C"
            )

    def factor(self, temperature: float) -> float:
        """Ratio of the current at ``temperature`` (°C) to the current at 25 °C."""
        if self.kind == "constant":
            return 1.0
        return 2.0 ** ((float(temperature) - REFERENCE_TEMPERATURE) / self.doubling_c)

    def describe(self) -> str:
        """Words for reports, e.g. ``doubles every 10 °C``."""
        if self.kind == "constant":
            return "constant over temperature"
        return f"doubles every {self.doubling_c:g} °C"


@dataclass(frozen=True)
class OpAmpParams:
    """DC error parameters of one op-amp type, at 25 °C unless stated.

    Attributes
    ----------
    name, description : str
        What the set is called and what it stands for.
    vos_typ, vos_max : float
        Input offset voltage magnitude, V.
    drift_typ, drift_max : float
        Offset drift magnitude, V/°C.
    ib_typ, ib_max : float
        Input bias current, A, signed: positive *into* the pins (opsym's
        convention). A negative value says the current flows out.
    ios_typ, ios_max : float
        Input offset current magnitude, A.
    a_typ, a_min : float
        Open-loop DC gain, V/V.
    cmrr_typ_db, cmrr_min_db, psrr_typ_db, psrr_min_db : float
        Rejection ratios, dB (20·log10 of the V/V ratio). PSRR is for the
        change of the total supply span.
    bias_law : BiasLaw
        How Ib and Ios scale with temperature.
    gbw_typ : float or None
        Gain-bandwidth product, Hz, for the single-pole gain model (its DC gain
        ``A0`` is :meth:`gain`). ``None``: not given.
    en_typ, in_typ : float or None
        Input voltage noise density, V/√Hz, and current noise density, A/√Hz
        (white part). ``None``: not given.
    fce, fci : float or None
        1/f corner frequencies of the voltage and current noise, Hz (0: white).
    rail_neg, rail_pos : float or None
        Supply rails, V (negative and positive; ``0`` for a single supply).
        Give both or neither.
    swing_headroom : float or None
        How close the output swings to each rail, V (``0``: rail to rail).
    cm_headroom : float or None
        How close the input common-mode voltage may come to each rail, V.
    """

    name: str
    description: str = ""
    vos_typ: float = 0.0
    vos_max: float = 0.0
    drift_typ: float = 0.0
    drift_max: float = 0.0
    ib_typ: float = 0.0
    ib_max: float = 0.0
    ios_typ: float = 0.0
    ios_max: float = 0.0
    a_typ: float = math.inf
    a_min: float = math.inf
    cmrr_typ_db: float = math.inf
    cmrr_min_db: float = math.inf
    psrr_typ_db: float = math.inf
    psrr_min_db: float = math.inf
    bias_law: BiasLaw = field(default_factory=BiasLaw)
    gbw_typ: float | None = None
    en_typ: float | None = None
    in_typ: float | None = None
    fce: float | None = None
    fci: float | None = None
    rail_neg: float | None = None
    rail_pos: float | None = None
    swing_headroom: float | None = None
    cm_headroom: float | None = None
    extra: Mapping[str, float] = field(default_factory=dict)

    def __post_init__(self) -> None:
        object.__setattr__(self, "extra", MappingProxyType(dict(self.extra)))
        for key, v in self.extra.items():
            if key not in registered_fields():
                raise BudgetError(
                    f"op-amp set {self.name!r}: extra field {key!r} belongs to no registered "
                    f"non-ideality; the registered ones are {', '.join(registered_fields())}"
                )
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                raise BudgetError(f"op-amp set {self.name!r}: {key}={v!r} is not a number")
        for f in dataclasses.fields(self):
            if f.name in ("name", "description", "bias_law", "extra"):
                continue
            v = getattr(self, f.name)
            if v is None and f.name in _OPTIONAL:
                continue
            if isinstance(v, bool) or not isinstance(v, (int, float)) or math.isnan(v):
                raise BudgetError(
                    f"op-amp set {self.name!r}: {f.name}={v!r} is not a number; give a float "
                    "(or build the set with OpAmpParams.from_mapping to read text like '25u')"
                )
            if f.name.startswith(("a_", "cmrr", "psrr", "gbw")):
                if not v > 0:
                    raise BudgetError(f"op-amp set {self.name!r}: {f.name}={v} must be > 0")
            elif f.name not in ("ib_typ", "ib_max", "rail_neg", "rail_pos") and v < 0:
                raise BudgetError(
                    f"op-amp set {self.name!r}: {f.name}={v} is a magnitude; give it >= 0"
                )
        if not isinstance(self.bias_law, BiasLaw):
            raise BudgetError(f"op-amp set {self.name!r}: bias_law must be a BiasLaw")
        self._check_rails()

    def _check_rails(self) -> None:
        neg, pos = self.rail_neg, self.rail_pos
        if (neg is None) != (pos is None):
            raise BudgetError(
                f"op-amp set {self.name!r}: give both rail_neg and rail_pos (V), or neither"
            )
        if neg is None or pos is None:
            return
        if not (math.isfinite(neg) and math.isfinite(pos) and neg < pos):
            raise BudgetError(
                f"op-amp set {self.name!r}: rails {neg} V and {pos} V must be finite with "
                "rail_neg < rail_pos"
            )
        room = (self.swing_headroom or 0.0, self.cm_headroom or 0.0)
        if any(2 * h >= pos - neg for h in room):
            raise BudgetError(
                f"op-amp set {self.name!r}: headroom {max(room)} V from each rail leaves no "
                f"range between {neg} V and {pos} V"
            )

    # -- values at a grade and temperature ------------------------------------------

    def vos(self, grade: str = "max", temperature: float = REFERENCE_TEMPERATURE) -> float:
        """Offset magnitude at ``temperature``: Vos + drift·|T − 25 °C|."""
        g = _check_grade(grade)
        base, drift = (self.vos_max, self.drift_max) if g == "max" else (
            self.vos_typ, self.drift_typ)  # fmt: skip
        return base + drift * abs(float(temperature) - REFERENCE_TEMPERATURE)

    def ib(self, grade: str = "max", temperature: float = REFERENCE_TEMPERATURE) -> float:
        """Signed bias current at ``temperature`` by the bias law."""
        base = self.ib_max if _check_grade(grade) == "max" else self.ib_typ
        return base * self.bias_law.factor(temperature)

    def ios(self, grade: str = "max", temperature: float = REFERENCE_TEMPERATURE) -> float:
        """Offset-current magnitude at ``temperature``; it follows the bias law too."""
        base = self.ios_max if _check_grade(grade) == "max" else self.ios_typ
        return base * self.bias_law.factor(temperature)

    def gain(self, grade: str = "max") -> float:
        """Open-loop gain, V/V: the minimum for ``grade="max"`` (the worst case)."""
        return self.a_min if _check_grade(grade) == "max" else self.a_typ

    def cmrr(self, grade: str = "max") -> float:
        """CMRR as a V/V ratio: the minimum for ``grade="max"``."""
        db = self.cmrr_min_db if _check_grade(grade) == "max" else self.cmrr_typ_db
        return db_to_ratio(db)

    def psrr(self, grade: str = "max") -> float:
        """PSRR as a V/V ratio: the minimum for ``grade="max"``."""
        db = self.psrr_min_db if _check_grade(grade) == "max" else self.psrr_typ_db
        return db_to_ratio(db)

    def value(
        self, stem: str, grade: str = "max", temperature: float = REFERENCE_TEMPERATURE
    ) -> float | None:
        """The number this set gives for a datasheet stem (a ``SymbolSpec.datasheet``).

        ``"vos"``, ``"ib"``, ``"ios"`` (at ``temperature``), ``"a"``, ``"cmrr"``,
        ``"psrr"`` (at ``grade``), ``"gbw"``, ``"en"``, ``"in"``, ``"fce"``, ``"fci"``
        (typical), or the stem of a registered kind, read from ``extra`` as
        ``<stem>_max`` or ``<stem>_typ``. ``None``: the set does not give it.

        Examples
        --------
        >>> p = opamp_parameters("generic CMOS")
        >>> p.value("vos") == p.vos_max, p.value("gbw") == p.gbw_typ
        (True, True)
        """
        g = _check_grade(grade)
        graded = {"vos": self.vos, "ib": self.ib, "ios": self.ios}
        if stem in graded:
            return graded[stem](g, temperature)
        ratios = {"a": self.gain, "cmrr": self.cmrr, "psrr": self.psrr}
        if stem in ratios:
            return ratios[stem](g)
        typical = {"gbw": self.gbw_typ, "en": self.en_typ, "in": self.in_typ,
                   "fce": self.fce, "fci": self.fci}  # fmt: skip
        if stem in typical:
            return typical[stem]
        return self.extra.get(f"{stem}_{'max' if g == 'max' else 'typ'}")

    def values_for(self, opamp: str, grade: str = "max") -> dict[str, float]:
        """The set's numbers under op-amp ``opamp``'s symbol names, for ``values=``.

        ``A`` and ``A0`` (the DC gain of a single pole), ``CMRR`` and ``PSRR``
        follow ``grade``; ``GBW``, the noise densities ``en``, ``in`` and their
        corners ``fce``, ``fci`` are typical values. Fields the set leaves out,
        and infinite ratios, are not given.

        Examples
        --------
        >>> v = opamp_parameters("generic CMOS").values_for("U1")
        >>> sorted(k for k in v if k.startswith("U1.") and k[3:] in ("en", "GBW"))
        ['U1.GBW', 'U1.en']
        """
        pairs = (
            (spec.suffix, self.value(spec.datasheet, grade))
            for spec in SYMBOLS.values()
            if spec.datasheet is not None and spec.suffix not in budget_sources()
        )
        return {
            f"{opamp}.{what}": float(v)
            for what, v in pairs
            if v is not None and math.isfinite(v)
        }

    def replace(self, **changes: Any) -> OpAmpParams:
        """A copy with some fields changed (text like ``"25u"`` is read too).

        Examples
        --------
        >>> opamp_parameters("generic CMOS").replace(vos_max="2m").vos_max
        0.002
        """
        fields = {f.name: getattr(self, f.name) for f in dataclasses.fields(self)}
        return OpAmpParams.from_mapping({**fields.pop("extra"), **fields, **changes})

    @classmethod
    def from_mapping(cls, data: Mapping[str, Any]) -> OpAmpParams:
        """Build a set from a mapping, reading text values with SI prefixes.

        ``bias_law`` may be a :class:`BiasLaw`, ``"constant"``, a mapping
        ``{"kind": "doubling", "doubling_c": 10}`` or ``"doubling 10"``.

        Examples
        --------
        >>> p = OpAmpParams.from_mapping({"name": "mine", "vos_max": "25 µV",
        ...                               "ib_max": "2 nA", "bias_law": "doubling 10"})
        >>> p.vos_max, p.bias_law.kind
        (2.5e-05, 'doubling')
        """
        units = field_units()
        unknown = sorted(set(data) - set(units) - {"name", "description", "bias_law", "extra"})
        if unknown:
            raise BudgetError(
                f"op-amp set: unknown field(s) {', '.join(unknown)}; "
                f"the fields are {', '.join(sorted(units))}, name, description, bias_law"
            )
        if "name" not in data:
            raise BudgetError("op-amp set: give it a 'name'")
        kw: dict[str, Any] = {"extra": {}}
        for key, raw in data.items():
            where = f"op-amp set {data['name']!r} field {key}"
            if key in ("name", "description"):
                kw[key] = str(raw)
            elif key == "extra":
                kw["extra"].update(raw)
            elif raw is None and key in _OPTIONAL:
                kw[key] = None
            elif isinstance(raw, (int, float)) and not isinstance(raw, bool):
                kw[key] = float(raw)  # numbers as they are (inf: "no limit"); checked below
            elif key == "bias_law":
                kw[key] = _bias_law(raw, where)
            elif units[key] == "dB":
                kw[key] = _db(raw, where)
            else:
                kw[key] = parse_quantity(raw, units[key], where=where)
        for key in registered_fields():
            if key in kw:
                kw["extra"][key] = kw.pop(key)
        return cls(**kw)


#: The unit of each built-in field (``None``: a plain ratio; ``"dB"``: a number of dB).
_FIELD_UNITS: dict[str, str | None] = {
    "vos_typ": "V", "vos_max": "V", "drift_typ": "V/°C", "drift_max": "V/°C",
    "ib_typ": "A", "ib_max": "A", "ios_typ": "A", "ios_max": "A",
    "a_typ": None, "a_min": None,
    "cmrr_typ_db": "dB", "cmrr_min_db": "dB", "psrr_typ_db": "dB", "psrr_min_db": "dB",
    "gbw_typ": "Hz", "en_typ": "V/√Hz", "in_typ": "A/√Hz", "fce": "Hz", "fci": "Hz",
    "rail_neg": "V", "rail_pos": "V", "swing_headroom": "V", "cm_headroom": "V",
}  # fmt: skip
#: Datasheet stems the built-in fields already hold.
_BUILT_IN_STEMS = frozenset({"vos", "ib", "ios", "a", "cmrr", "psrr", "gbw", "en", "in",
                             "fce", "fci"})  # fmt: skip


def registered_fields() -> dict[str, str | None]:
    """``<stem>_typ`` and ``<stem>_max`` for every registered kind's own datasheet stem.

    Examples
    --------
    >>> "vos_max" in registered_fields()  # built in, not an extra field
    False
    """
    found: dict[str, str | None] = {}
    for spec in SYMBOLS.values():
        if spec.datasheet is not None and spec.datasheet not in _BUILT_IN_STEMS:
            for grade in ("typ", "max"):
                found[f"{spec.datasheet}_{grade}"] = spec.unit or None
    return found


def field_units() -> dict[str, str | None]:
    """Every parameter-set field a file or mapping may give, with its unit.

    Examples
    --------
    >>> field_units()["vos_max"], field_units()["cmrr_min_db"]
    ('V', 'dB')
    """
    return {**_FIELD_UNITS, **registered_fields()}


def budget_sources() -> frozenset[str]:
    """Suffixes of the DC error sources a budget takes as rows (``Vos``, ``Ib``, …)."""
    return frozenset(
        spec.suffix
        for kind in KINDS.values()
        if not kind.noise
        for spec in kind.symbols
        if spec.role == "source"
    )


#: Fields that may be ``None`` (not given).
_OPTIONAL = frozenset({
    "gbw_typ", "en_typ", "in_typ", "fce", "fci", "rail_neg", "rail_pos", "swing_headroom",
    "cm_headroom",
})  # fmt: skip


def _db(raw: Any, where: str) -> float:
    return parse_db(raw, where=where)


def _bias_law(raw: Any, where: str) -> BiasLaw:
    if isinstance(raw, BiasLaw):
        return raw
    if isinstance(raw, Mapping):
        kind = str(raw.get("kind", "constant"))
        return BiasLaw(kind, parse_quantity(raw.get("doubling_c", 10.0), where=where))
    if isinstance(raw, str):
        m = re.fullmatch(
            r"\s*(constant|doubling)(?:\s+(?:every\s+)?([0-9.]+)\s*(?:°?C)?)?\s*", raw
        )
        if m:
            step = parse_quantity(m.group(2), where=where) if m.group(2) else 10.0
            return BiasLaw(m.group(1), step)
    raise BudgetError(
        f"{where}: {raw!r} is not a bias law; write 'constant' or 'doubling 10' "
        "(doubles every 10 °C)"
    )


@dataclass(frozen=True)
class ResistorParams:
    """Resistor tolerance (fraction, ``R = Rnom·(1 + d)``, ``|d| ≤ tolerance``) and TCR (1/°C).

    Examples
    --------
    >>> r = ResistorParams.from_text("1%", "100 ppm")
    >>> r.tolerance, r.tcr
    (0.01, 0.0001)
    >>> round(r.spread(85.0), 6)
    0.016
    """

    tolerance: float
    tcr: float = 0.0
    name: str = ""

    def __post_init__(self) -> None:
        for label in ("tolerance", "tcr"):
            v = getattr(self, label)
            if (
                isinstance(v, bool)
                or not isinstance(v, (int, float))
                or not (math.isfinite(v) and v >= 0)
            ):
                text = " (for text, use ResistorParams.from_text)" if isinstance(v, str) else ""
                raise BudgetError(
                    f"resistor set {self.name!r}: {label}={v!r} must be a number >= 0 "
                    f"(a fraction: 0.01 for 1 %; TCR per °C: 25e-6 for 25 ppm/°C){text}"
                )
        if self.tolerance >= 1:
            raise BudgetError(
                f"resistor set {self.name!r}: tolerance={self.tolerance} is 100 % or more; "
                "give a fraction such as 0.01 for 1 %"
            )

    @classmethod
    def from_text(cls, tolerance: Any, tcr: Any = 0.0, name: str = "") -> ResistorParams:
        """Read ``"1%"``, ``"0.1 %"``, ``"25 ppm"`` (TCR per °C) or plain numbers."""
        tcr_text = tcr.replace("/°C", "").replace("/K", "") if isinstance(tcr, str) else tcr
        return cls(
            parse_fraction(tolerance, where="resistor tolerance"),
            parse_fraction(tcr_text, where="resistor TCR"),
            name,
        )

    def spread(self, temperature: float = REFERENCE_TEMPERATURE) -> float:
        """Worst-case fractional deviation at ``temperature``: tolerance + TCR·|T − 25 °C|.

        Each part may drift either way, independently of the others: a
        conservative reading of a TCR limit (parts that track are better).
        """
        return self.tolerance + self.tcr * abs(float(temperature) - REFERENCE_TEMPERATURE)


def _impedances(**pairs: tuple[float, float]) -> dict[str, float]:
    """``{"ro_typ": 60, "ro_max": 100, ...}`` from ``ro=(typical, worst case)``."""
    grades = ("typ", "max")
    return {f"{k}_{g}": v for k, both in pairs.items() for g, v in zip(grades, both, strict=True)}


#: Invented generic op-amp sets (no real part): typical / limit values of the usual order.
#: Supplies: ±15 V for the bipolar and JFET sets, a single 5 V for the CMOS ones (rail-to-rail
#: output, inputs to the rails). Noise is typical only, as datasheets
#: give it: FET and CMOS inputs have the shot noise
#: of their leakage, white (fci = 0); a zero-drift part chops away its 1/f noise (fce = 0)
#: but its switching adds current noise. Impedances and poles (``extra``) are typical and
#: worst-case values (``_max`` is the worst case: the highest Ro, Cid, Ccm; the lowest Rid,
#: Ricm, f2 and rejection corners).
OPAMP_SETS: dict[str, OpAmpParams] = {
    p.name: p
    for p in (
        OpAmpParams(
            "generic precision bipolar",
            "low offset, low drift bipolar input",
            vos_typ=1e-05, vos_max=2.5e-05, drift_typ=1e-07, drift_max=6e-07,
            ib_typ=1e-09, ib_max=2e-09, ios_typ=3e-10, ios_max=2e-09,
            a_typ=5e6, a_min=1e6, cmrr_typ_db=130, cmrr_min_db=120,
            psrr_typ_db=120, psrr_min_db=110,
            gbw_typ=1e6, en_typ=10e-9, in_typ=0.1e-12, fce=5.0, fci=100.0,
            rail_neg=-15.0, rail_pos=15.0, swing_headroom=1.2, cm_headroom=1.5,
            extra=_impedances(
                ro=(60, 100), rid=(30e6, 10e6), ricm=(200e9, 50e9),
                cid=(2e-12, 4e-12), ccm=(2e-12, 4e-12), f2=(4e6, 2.5e6),
                fcmrr=(300, 100), fpsrr=(30, 10),
            ),
        ),
        OpAmpParams(
            "generic general-purpose bipolar",
            "an inexpensive bipolar-input amplifier",
            vos_typ=1e-3, vos_max=5e-3, drift_typ=5e-06, drift_max=2e-05,
            ib_typ=8e-08, ib_max=5e-07, ios_typ=2e-08, ios_max=2e-07,
            a_typ=2e5, a_min=2e4, cmrr_typ_db=90, cmrr_min_db=70,
            psrr_typ_db=90, psrr_min_db=76,
            gbw_typ=1e6, en_typ=20e-9, in_typ=0.5e-12, fce=100.0, fci=300.0,
            rail_neg=-15.0, rail_pos=15.0, swing_headroom=1.5, cm_headroom=2.0,
            extra=_impedances(
                ro=(75, 150), rid=(2e6, 0.3e6), ricm=(10e9, 1e9),
                cid=(1.5e-12, 3e-12), ccm=(3e-12, 6e-12), f2=(5e6, 3e6),
                fcmrr=(1e3, 300), fpsrr=(100, 30),
            ),
        ),
        OpAmpParams(
            "generic JFET",
            "JFET input: picoampere bias current that doubles every 10 °C",
            vos_typ=0.5e-3, vos_max=3e-3, drift_typ=5e-06, drift_max=1.5e-05,
            ib_typ=3e-11, ib_max=2e-10, ios_typ=5e-12, ios_max=1e-10,
            a_typ=2e5, a_min=5e4, cmrr_typ_db=100, cmrr_min_db=80,
            psrr_typ_db=100, psrr_min_db=80, bias_law=BiasLaw("doubling", 10.0),
            gbw_typ=4e6, en_typ=12e-9, in_typ=10e-15, fce=200.0, fci=0.0,
            rail_neg=-15.0, rail_pos=15.0, swing_headroom=1.5, cm_headroom=3.0,
            extra=_impedances(
                ro=(50, 100), rid=(1e12, 1e11), ricm=(1e12, 1e11),
                cid=(3e-12, 6e-12), ccm=(3e-12, 6e-12), f2=(15e6, 10e6),
                fcmrr=(2e3, 1e3), fpsrr=(500, 200),
            ),
        ),
        OpAmpParams(
            "generic CMOS",
            "CMOS input: femto- to picoampere bias current, leakage doubling every 10 °C",
            vos_typ=0.25e-3, vos_max=1.5e-3, drift_typ=2e-06, drift_max=8e-06,
            ib_typ=1e-12, ib_max=1e-11, ios_typ=5e-13, ios_max=1e-11,
            a_typ=1e6, a_min=1e5, cmrr_typ_db=95, cmrr_min_db=80,
            psrr_typ_db=95, psrr_min_db=80, bias_law=BiasLaw("doubling", 10.0),
            gbw_typ=2e6, en_typ=20e-9, in_typ=2e-15, fce=1000.0, fci=0.0,
            rail_neg=0.0, rail_pos=5.0, swing_headroom=0.05, cm_headroom=0.0,
            extra=_impedances(
                ro=(100, 250), rid=(1e13, 1e12), ricm=(1e13, 1e12),
                cid=(2e-12, 5e-12), ccm=(4e-12, 8e-12), f2=(6e6, 4e6),
                fcmrr=(1e3, 300), fpsrr=(300, 100),
            ),
        ),
        OpAmpParams(
            "generic zero-drift CMOS",
            "auto-zero or chopper CMOS: microvolt offset, nanovolt drift",
            vos_typ=1e-06, vos_max=5e-06, drift_typ=5e-09, drift_max=2e-08,
            ib_typ=2e-11, ib_max=1e-10, ios_typ=2e-11, ios_max=2e-10,
            a_typ=1e7, a_min=1e6, cmrr_typ_db=130, cmrr_min_db=115,
            psrr_typ_db=130, psrr_min_db=115, bias_law=BiasLaw("doubling", 10.0),
            gbw_typ=1.5e6, en_typ=30e-9, in_typ=100e-15, fce=0.0, fci=0.0,
            rail_neg=0.0, rail_pos=5.0, swing_headroom=0.05, cm_headroom=0.0,
            extra=_impedances(
                ro=(150, 300), rid=(1e11, 1e10), ricm=(1e12, 1e11),
                cid=(8e-12, 15e-12), ccm=(8e-12, 15e-12), f2=(4e6, 3e6),
                fcmrr=(100, 30), fpsrr=(50, 20),
            ),
        ),
    )
}  # fmt: skip

#: Invented generic resistor grades: tolerance and TCR of the usual order.
RESISTOR_SETS: dict[str, ResistorParams] = {
    r.name: r
    for r in (
        ResistorParams(0.05, 200e-6, "carbon film 5%"),
        ResistorParams(0.01, 100e-6, "thick film 1%"),
        ResistorParams(0.001, 25e-6, "thin film 0.1%"),
        ResistorParams(0.0001, 5e-6, "precision 0.01%"),
    )
}


def _normal(name: str) -> str:
    s = re.sub(r"[\s_\-]+", " ", name.strip().lower())
    return s.removeprefix("generic ").replace(" %", "%")


def _lookup(name: Any, table: dict[str, Any], what: str) -> Any:
    if isinstance(name, str):
        want = _normal(name)
        for key, value in table.items():
            if _normal(key) == want:
                return value
    raise UnknownNameError(
        f"no {what} named {shown(name)}; the shipped sets are "
        f"{', '.join(repr(k) for k in table)} (or build your own)"
    )


def opamp_parameters(name: str) -> OpAmpParams:
    """Look up a shipped generic op-amp set by name (case, '-' and 'generic' optional).

    Examples
    --------
    >>> opamp_parameters("precision-bipolar").vos_max
    2.5e-05
    >>> opamp_parameters("fast")
    Traceback (most recent call last):
    ...
    opsym.errors.UnknownNameError: no op-amp set named 'fast'; the shipped sets are \
'generic precision bipolar', 'generic general-purpose bipolar', 'generic JFET', \
'generic CMOS', 'generic zero-drift CMOS' (or build your own)
    """
    return _lookup(name, OPAMP_SETS, "op-amp set")


def resistor_parameters(name: str) -> ResistorParams:
    """Look up a shipped generic resistor grade by name.

    Examples
    --------
    >>> resistor_parameters("thick film 1%").tcr
    0.0001
    """
    return _lookup(name, RESISTOR_SETS, "resistor set")
