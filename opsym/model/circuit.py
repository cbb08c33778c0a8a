"""The :class:`Circuit`: a named collection of elements between named nodes.

Examples
--------
An inverting amplifier with a bias-compensation resistor:

>>> import opsym
>>> c = opsym.Circuit("inverting stage")
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n")
>>> c.resistor("R2", "n", "out")
>>> c.resistor("R3", "p", "0")
>>> c.opamp("U1", plus="p", minus="n", out="out")
>>> res = c.analyze("out")
>>> res.coefficient("Vin")
-R2/R1
>>> res.null("U1.Ib", by="R3")
Eq(R3, R1*R2/(R1 + R2))
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping
from typing import TYPE_CHECKING, Any

import sympy as sp

from .._services import call
from ..errors import (
    CircuitError,
    DuplicateNameError,
    InvalidValueError,
    UnknownNameError,
)
from ._amplifier import collect_kinds, positive_value, resolve_gain
from ._fda import build_fda
from .elements import (
    Capacitor,
    CurrentSource,
    Element,
    Inductor,
    OpAmp,
    Resistor,
    VoltageSource,
)
from .limits import MAX_ELEMENTS, exact_value, expect_text, shown
from .naming import check_names
from .nonideal import FDA_ONLY_SHAPES, NonIdeal
from .symbols import LAPLACE, OPAMP_PARAMETERS, component_symbol, opamp_symbol, source_symbol

if TYPE_CHECKING:
    from ..analyses.noise import NoiseResult
    from ..analyses.result import Result

__all__ = ["GROUND", "Circuit"]

#: The ground node's name; "gnd" (any case) is accepted as an alias.
GROUND = "0"
_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")
_NODE = re.compile(r"^[A-Za-z0-9_][A-Za-z0-9_+\-]*$")


class Circuit:
    """A circuit to analyse; ground is node ``"0"`` (alias ``"gnd"``).

    Parameters
    ----------
    title : str
        A name for reports.

    Examples
    --------
    >>> c = Circuit("follower")
    >>> c.voltage_source("Vs", "p", "0")
    >>> c.opamp("U1", plus="p", minus="out", out="out")
    >>> c.analyze("out").expression
    U1.Vos + Vs
    """

    def __init__(self, title: str = "") -> None:
        self.title = str(title)
        self._elements: dict[str, Element] = {}
        self._latex: dict[str, str] = {}  # element names by their LaTeX
        self._used: dict[str, sp.Symbol] = {}  # symbols the values use, by name

    # -- declaring ---------------------------------------------------------------

    def resistor(self, name: str, a: str, b: str, value: Any = None) -> None:
        """Add a resistor between nodes ``a`` and ``b``; ``None`` keeps it symbolic."""
        name = self._new_name(name)
        na, nb = self._nodes(name, a, b)
        self._add(Resistor(name, na, nb, positive_value(value, name, "resistor", Resistor.unit)))

    def capacitor(self, name: str, a: str, b: str, value: Any = None) -> None:
        """Add a capacitor: open at DC, admittance ``s·C`` in the s domain."""
        name = self._new_name(name)
        na, nb = self._nodes(name, a, b)
        value = positive_value(value, name, "capacitor", Capacitor.unit)
        self._add(Capacitor(name, na, nb, value))

    def inductor(self, name: str, a: str, b: str, value: Any = None) -> None:
        """Add an inductor: a wire at DC, impedance ``s·L`` in the s domain."""
        name = self._new_name(name)
        na, nb = self._nodes(name, a, b)
        self._add(Inductor(name, na, nb, positive_value(value, name, "inductor", Inductor.unit)))

    def voltage_source(self, name: str, plus: str, minus: str, value: Any = None) -> None:
        """Add a signal voltage source, ``V(plus) - V(minus) = value``."""
        name = self._new_name(name)
        na, nb = self._nodes(name, plus, minus)
        self._add(VoltageSource(name, na, nb, self._source_value(name, value, "voltage source")))

    def current_source(self, name: str, a: str, b: str, value: Any = None) -> None:
        """Add a signal current source; its current flows through it from ``a`` into ``b``."""
        name = self._new_name(name)
        na, nb = self._nodes(name, a, b)
        self._add(CurrentSource(name, na, nb, self._source_value(name, value, "current source")))

    def opamp(
        self,
        name: str,
        plus: str,
        minus: str,
        out: str,
        gain: Any = "ideal",
        *,
        offset: bool = True,
        bias: bool = True,
        cmrr: bool = False,
        psrr: bool = False,
        noise: bool = True,
        extra: Iterable[NonIdeal | str] = (),
        poles: int | None = None,
    ) -> None:
        """Add an op-amp.

        Parameters
        ----------
        name : str
            Element name, e.g. ``"U1"``; its symbols are ``U1.Vos`` and so on.
        plus, minus, out : str
            Nodes of the non-inverting input, inverting input and output.
        gain : "ideal", "finite", "pole", "pole2", …, number or expression
            ``"ideal"``: a nullor. ``"finite"``: open-loop gain symbol ``U1.A``.
            ``"pole"``: the single-pole model ``U1.A0/(1 + s·U1.A0/(2π·U1.GBW))``
            (:class:`~opsym.SinglePole`; ``U1.A0`` at DC). ``"pole2"``,
            ``"pole3"``…: that many poles, the further ones at ``U1.f2``,
            ``U1.f3``… hertz (:class:`~opsym.model.nonideal.MultiPole`). Anything
            else: that open-loop gain, which may contain the Laplace variable ``s``.
        offset, bias, cmrr, psrr : bool
            Which error sources it carries: ``Vos``; ``Ib+``/``Ib-``;
            ``Vcm/CMRR``; ``dVs/PSRR``.
        noise : bool
            Whether it carries voltage noise ``U1.en`` and current noise
            ``U1.in+``/``U1.in-``. They enter only :meth:`noise`, never the DC
            error terms.
        extra : iterable of NonIdeal or str
            Further non-idealities: instances of your own kinds, or the keys of
            registered ones (``["ro", "rid", "cid", "ccm", "cmrr-pole"]``).
        poles : int, optional
            The multi-pole gain model with this many poles (``poles=2`` is
            ``gain="pole2"``); leave ``gain`` at its default.

        Examples
        --------
        >>> c = Circuit()
        >>> c.opamp("U1", "p", "out", "out", poles=2, noise=False, extra=["ro"])
        >>> sorted(str(x) for x in c.free_symbols_by_name().values())
        ['U1.A0', 'U1.GBW', 'U1.Ro', 'U1.f2']
        """
        name = self._new_name(name)
        nodes = self._nodes(name, plus, minus, out)
        if nodes[2] == GROUND:
            raise InvalidValueError(
                f"op-amp {name}: output is tied to ground; give the output its own node"
            )
        a = resolve_gain(name, gain, poles)
        wanted = [("offset", offset), ("bias", bias), ("cmrr", cmrr), ("psrr", psrr),
                  ("noise", noise)]  # fmt: skip
        kinds = collect_kinds(name, wanted, extra)
        for k in kinds:
            if any(isinstance(i, FDA_ONLY_SHAPES) for i in k.injections(name)):
                raise InvalidValueError(
                    f"op-amp {name}: {k.kind!r} belongs to a fully differential amplifier's "
                    "output common mode; declare the part with Circuit.fda (files: [fdas.NAME])"
                )
        plus_node, minus_node, out_node = nodes
        self._add(OpAmp(name, plus_node, minus_node, out_node, gain=a, nonideals=tuple(kinds)))

    def fda(self, name: str, plus: str, minus: str, out_plus: str, out_minus: str,
            vocm: str = GROUND, gain: Any = "ideal", **options: Any) -> None:
        """Add a fully differential amplifier (FDA).

        ``V(out_plus) − V(out_minus) = A·(V(plus) − V(minus) + Vos)`` (a nullor
        when ideal) and ``(V(out_plus) + V(out_minus))/2 = V(vocm) + Voscm +
        ebal·(V(out_plus) − V(out_minus))`` (``docs/conventions.md``). The inputs
        draw no current but the error sources'.

        Parameters
        ----------
        name : str
            Element name, e.g. ``"U1"``; its symbols are ``U1.Vos``, ``U1.Voscm``…
        plus, minus : str
            The non-inverting and inverting inputs.
        out_plus, out_minus : str
            The outputs; ``out_plus`` moves with ``plus``.
        vocm : str
            The output common-mode input's node; ground (the default) sets an
            ideal 0 V output common mode.
        gain : "ideal", "finite", "pole", "pole2", …, number or expression
            The differential open-loop gain, as :meth:`opamp` reads it.
        **options
            ``offset``, ``bias``, ``cmrr``, ``psrr``, ``noise`` (bool, as for
            :meth:`opamp`; ``noise`` adds ``en`` and ``in±``), ``ocm_offset``
            (``Voscm``, default True), ``balance`` (``ebal``, default False),
            ``extra`` (kind keys, e.g. ``["ocm-noise", "rid"]``), ``poles``.

        Examples
        --------
        >>> c = Circuit("FDA stage")
        >>> c.voltage_source("Vid", "ip", "im")
        >>> c.resistor("Rgp", "ip", "p", "1k"); c.resistor("Rfp", "p", "on", "2k")
        >>> c.resistor("Rgm", "im", "m", "1k"); c.resistor("Rfm", "m", "op", "2k")
        >>> c.fda("U1", "p", "m", "op", "on", bias=False)
        >>> c.analyze(("op", "on")).coefficient("Vid")
        2
        """
        name = self._new_name(name)
        nodes = self._nodes(name, plus, minus, out_plus, out_minus, vocm)
        self._add(build_fda(name, nodes, gain, options))

    # -- reading -----------------------------------------------------------------

    @property
    def elements(self) -> tuple[Element, ...]:
        """All elements, in declaration order."""
        return tuple(self._elements.values())

    @property
    def signal_sources(self) -> tuple[str, ...]:
        """Names of the independent voltage and current sources, in the order declared.

        Examples
        --------
        >>> c = Circuit()
        >>> c.voltage_source("Vin", "in", "0")
        >>> c.resistor("R1", "in", "0")
        >>> c.signal_sources
        ('Vin',)
        """
        return tuple(e.name for e in self._elements.values()
                     if isinstance(e, (VoltageSource, CurrentSource)))  # fmt: skip

    @property
    def opamps(self) -> tuple[OpAmp, ...]:
        """The op-amps, in declaration order."""
        return tuple(e for e in self._elements.values() if isinstance(e, OpAmp))

    @property
    def nodes(self) -> tuple[str, ...]:
        """Every node name, ground first, then in order of first use."""
        seen = {GROUND: None}
        for e in self._elements.values():
            seen.update(dict.fromkeys(e.nodes))
        return tuple(seen)

    def element(self, name: str) -> Element:
        """Return the element called ``name``."""
        expect_text(name, "element name", "'R1'")
        try:
            return self._elements[name]
        except KeyError:
            raise UnknownNameError(
                f"no element named {name!r} in circuit {self.title!r}; "
                f"it has {_listing(self._elements)}"
            ) from None

    def node(self, name: str) -> str:
        """Return the canonical spelling of node ``name``; raise if the circuit lacks it."""
        if isinstance(name, int) and not isinstance(name, bool) and 0 <= name < 10**9:
            name = str(name)
        canon = _canonical_node(name)
        if canon not in self.nodes:
            raise UnknownNameError(
                f"no node named {name!r} in circuit {self.title!r}; "
                f"its nodes are {_listing(self.nodes)}"
            )
        return canon

    def symbol(self, name: str) -> sp.Symbol:
        """Return the SymPy symbol for a component, source or op-amp parameter.

        ``"R1"`` gives the component symbol (even if R1 has a numeric value);
        ``"U1.Vos"``, ``"U1.Ib+"``, ``"U1.Ib-"``, ``"U1.Ib"``, ``"U1.Ios"``,
        ``"U1.A"``, ``"U1.CMRR"``, ``"U1.Vcm"``, ``"U1.PSRR"``, ``"U1.dVs"``,
        ``"U1.A0"``, ``"U1.GBW"``, ``"U1.en"``, ``"U1.in"``… the op-amp's own;
        ``"s"`` the Laplace variable; any other name a symbol the elements use
        (in a value or a ``gain=`` expression, see :meth:`free_symbols_by_name`).

        Examples
        --------
        >>> c = Circuit()
        >>> c.opamp("U1", "p", "n", "out")
        >>> c.symbol("U1.Ib-")
        U1.Ib-
        """
        if not isinstance(name, str):
            raise UnknownNameError(
                f"symbol names are text such as 'R1' or 'U1.Vos', not {shown(name)}"
            )
        if name == "s" and "s" not in self._elements:
            return LAPLACE
        owner, dot, what = name.partition(".")
        if owner not in self._elements and name in self.free_symbols_by_name():
            return self.free_symbols_by_name()[name]  # a user symbol in a value or gain=
        element = self.element(owner)
        if not dot:
            if isinstance(element, (VoltageSource, CurrentSource)):
                return source_symbol(owner)
            if isinstance(element, OpAmp):
                raise UnknownNameError(
                    f"{name!r} is an op-amp; ask for one of its symbols, "
                    f"e.g. {name}.Vos ({', '.join(name + '.' + p for p in OPAMP_PARAMETERS)})"
                )
            return component_symbol(owner)
        if not isinstance(element, OpAmp) or what not in OPAMP_PARAMETERS:
            valid = ", ".join(owner + "." + p for p in OPAMP_PARAMETERS)
            hint = (
                f"op-amp symbols are {valid}"
                if isinstance(element, OpAmp)
                else (f"{owner} is a {element.kind}; only op-amps have dotted symbols")
            )
            raise UnknownNameError(f"no symbol named {name!r}: {hint}")
        return opamp_symbol(owner, what)

    def free_symbols_by_name(self) -> dict[str, sp.Symbol]:
        """Every symbol the elements use that is not a source, by name.

        Element values, op-amp gain expressions (``gain=A0/(1 + s/w1)``) and
        the non-ideality parameters; ``s`` is left out.

        Examples
        --------
        >>> import sympy as sp
        >>> c = Circuit()
        >>> w1 = sp.Symbol("w1", positive=True)
        >>> c.opamp("U1", "p", "n", "out", gain=10**5 / (1 + LAPLACE / w1))
        >>> c.free_symbols_by_name()["w1"] == w1
        True
        """
        found: dict[str, sp.Symbol] = {}
        for e in self._elements.values():
            exprs = [getattr(e, "value", None)]
            if isinstance(e, OpAmp):
                exprs.append(e.gain)
                for kind in e.nonideals:
                    exprs.extend(kind.parameters(e.name))
            for expr in exprs:
                if isinstance(expr, sp.Basic):
                    for sym in expr.free_symbols:
                        if isinstance(sym, sp.Symbol) and sym != LAPLACE:
                            found.setdefault(sym.name, sym)
        return found

    def analyze(
        self,
        output: str | tuple[str, str],
        values: Mapping[Any, Any] | None = None,
        progress: Any = None,
        domain: str = "dc",
    ) -> Result:
        """Derive the output: every source's coefficient in closed form.

        Parameters
        ----------
        output : str or (str, str)
            Output node, or a ``(plus, minus)`` pair for a differential output.
        values : mapping, optional
            Component or parameter values fixed *before* solving (names or
            symbols as keys); the rest stay symbolic. Large designs solve much
            faster with the uninteresting parts fixed.
        progress : callable, optional
            Called as ``progress(done, total, what)`` during long solves. The
            library is silent without it.
        domain : "dc" or "s"
            ``"dc"`` (default): capacitors open, inductors shorted, ``s = 0``.
            ``"s"``: Laplace domain; every coefficient is a transfer function
            in ``s`` (capacitors ``1/(s·C)``, inductors ``s·L``).

        Examples
        --------
        >>> c = Circuit("RC low-pass buffer")
        >>> c.voltage_source("Vin", "in", "0")
        >>> c.resistor("R1", "in", "p")
        >>> c.capacitor("C1", "p", "0")
        >>> c.opamp("U1", plus="p", minus="out", out="out")
        >>> c.analyze("out", domain="s").coefficient("Vin")
        1/(C1*R1*s + 1)
        """
        return call("derive", self, output, values=values, progress=progress, domain=domain)

    def noise(
        self,
        output: str | tuple[str, str],
        values: Mapping[Any, Any] | None = None,
        temperature: Any = 25,
        progress: Any = None,
        opamps: Mapping[str, Any] | None = None,
    ) -> NoiseResult:
        """Noise analysis: every noise source's transfer to ``output``, in the s domain.

        Sources are each resistor's thermal noise (``4kTR``, at
        ``temperature`` in °C) and each op-amp's voltage and current noise.
        The result evaluates output and input-referred densities, RMS over a
        band and a noise budget once every density and value is numeric.

        Parameters
        ----------
        output : str or (str, str)
            Output node, or a ``(plus, minus)`` pair.
        values : mapping, optional
            Component values, op-amp parameters and noise densities
            (``"U1.en"`` V/√Hz, ``"U1.in"`` A/√Hz, corners ``"U1.fce"``,
            ``"U1.fci"`` in Hz); the rest stay symbolic.
        temperature : number or text
            Resistor temperature in °C (``25`` is 298.15 K).
        opamps : mapping of str to OpAmpParams, optional
            Parameter sets by op-amp name: their typical densities, corners,
            ``GBW`` and gain fill what ``values`` leaves out.

        Examples
        --------
        >>> c = Circuit("noisy divider")
        >>> c.resistor("R1", "a", "0", value="10k")
        >>> c.current_source("I1", "0", "a", value=0)
        >>> n = c.noise("a")
        >>> round(float(n.density(1000.0)) * 1e9, 3)  # nV/√Hz: 4kTR at 298.15 K
        12.832
        """
        merged: dict[Any, Any] = {}
        for name, params in (opamps or {}).items():
            if not hasattr(params, "values_for"):
                raise InvalidValueError(
                    f"opamps[{name!r}]: give an OpAmpParams, e.g. "
                    "opamp_parameters('generic CMOS')"
                )
            if not isinstance(self.element(name), OpAmp):
                raise InvalidValueError(f"opamps[{name!r}]: {name} is not an op-amp")
            merged.update(params.values_for(name, "typical"))
        for key, value in (values or {}).items():
            merged[key.name if isinstance(key, sp.Symbol) else key] = value
        return call("noise", self, output, values=merged, temperature=temperature,
                    progress=progress)  # fmt: skip

    def __repr__(self) -> str:
        return f"Circuit({self.title!r}, {len(self._elements)} elements)"

    # -- helpers -----------------------------------------------------------------

    def _new_name(self, name: Any) -> str:
        expect_text(name, "element name", "'R1'")
        if not _NAME.match(name):
            raise InvalidValueError(
                f"element name {name!r} is not valid; use letters, digits and '_', "
                "starting with a letter (e.g. 'R1', 'U2', 'Vin')"
            )
        if name in self._elements:
            raise DuplicateNameError(
                f"element name {name!r} is already used by "
                f"{self._elements[name].describe()}; choose another name"
            )
        return name

    def _nodes(self, name: str, *nodes: Any) -> tuple[str, ...]:
        out = []
        for n in nodes:
            if isinstance(n, int) and not isinstance(n, bool) and 0 <= n < 10**9:
                n = str(n)
            expect_text(n, f"element {name}: node name", "'out' or '0'")
            if not _NODE.match(n):
                raise InvalidValueError(
                    f"element {name}: node name {n!r} is not valid; use letters, digits, '_', "
                    "'+' or '-' (ground is '0' or 'gnd')"
                )
            out.append(_canonical_node(n))
        if len(out) == 2 and out[0] == out[1]:
            raise InvalidValueError(
                f"element {name}: both ends are on node {out[0]!r}; connect it between two nodes"
            )
        return tuple(out)

    def _source_value(self, name: str, value: Any, kind: str) -> sp.Expr:
        unit = VoltageSource.unit if kind == "voltage source" else CurrentSource.unit
        if value is None:
            return source_symbol(name)
        return exact_value(value, f"{kind} {name}", unit)

    def _add(self, element: Element) -> None:
        if len(self._elements) >= MAX_ELEMENTS:
            raise CircuitError(
                f"{element.kind} {element.name}: circuit {self.title!r} already has "
                f"{MAX_ELEMENTS} elements, the most opsym accepts; split the design into stages"
            )
        check_names(self._elements, self._latex, self._used, element)
        self._elements[element.name] = element


def _canonical_node(name: str) -> str:
    expect_text(name, "node name", "'out' or '0'")
    return GROUND if name.lower() == "gnd" else name


def _listing(names: Iterable[str]) -> str:
    names = list(names)
    if not names:
        return "none yet"
    shown = ", ".join(repr(n) for n in names[:12])
    return shown + (f" and {len(names) - 12} more" if len(names) > 12 else "")

