"""Declaring a fully differential amplifier: its nodes, gain and kinds, checked.

Examples
--------
>>> amp = build_fda("U1", ("p", "m", "op", "on", "cm"), "finite", {"bias": False})
>>> amp.describe(), [k.kind for k in amp.nonideals]
('FDA U1 (+=p, -=m, out+=op, out-=on, vocm=cm)', ['offset', 'vnoise', 'inoise', 'ocm-offset'])
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..errors import ArgumentTypeError, InvalidValueError
from . import differential  # noqa: F401  (registers the FDA's own kinds)
from ._amplifier import collect_kinds, resolve_gain
from .elements import FullyDifferentialAmp
from .nonideal import NonIdeal, OutputImpedance, PinAdmittance

__all__ = ["FDA_OPTIONS", "build_fda"]

#: The keyword options of ``Circuit.fda`` and their defaults.
FDA_OPTIONS: dict[str, Any] = {
    "offset": True, "bias": True, "cmrr": False, "psrr": False, "noise": True,
    "ocm_offset": True, "balance": False, "extra": (), "poles": None,
}  # fmt: skip
_GROUND = "0"


def build_fda(
    name: str, nodes: tuple[str, ...], gain: Any, options: Mapping[str, Any]
) -> FullyDifferentialAmp:
    """The FDA ``name`` on ``nodes`` = (plus, minus, out_plus, out_minus, vocm), checked."""
    unknown = sorted(set(options) - set(FDA_OPTIONS))
    if unknown:
        raise ArgumentTypeError(
            f"FDA {name}: {', '.join(unknown)} is not an option; use any of "
            f"{', '.join(FDA_OPTIONS)}"
        )
    opts = {**FDA_OPTIONS, **options}
    plus, minus, out_plus, out_minus, vocm = nodes
    _check_nodes(name, plus, minus, out_plus, out_minus, vocm)
    a = resolve_gain(name, gain, opts["poles"], "FDA")
    wanted = [(k, opts[k]) for k in ("offset", "bias", "cmrr", "psrr", "noise")]
    wanted += [("ocm-offset", opts["ocm_offset"]), ("balance", opts["balance"])]
    kinds = collect_kinds(name, wanted, opts["extra"], "FDA")
    for k in kinds:
        _check_kind(name, k)
    return FullyDifferentialAmp(
        name, plus, minus, out_plus, gain=a, nonideals=tuple(kinds),
        out_minus=out_minus, vocm=vocm,
    )  # fmt: skip


def _check_nodes(name: str, plus: str, minus: str, op: str, on: str, vocm: str) -> None:
    for label, node in (("out_plus", op), ("out_minus", on)):
        if node == _GROUND:
            raise InvalidValueError(
                f"FDA {name}: {label} is tied to ground; give each output its own node"
            )
    if op == on:
        raise InvalidValueError(
            f"FDA {name}: both outputs are node {op!r}; give out_plus and out_minus their "
            "own nodes"
        )
    if vocm in (op, on):
        raise InvalidValueError(
            f"FDA {name}: vocm is the output node {vocm!r}; connect vocm to the node that "
            "sets the output common mode (a reference source), or leave it out for 0 V"
        )
    if plus == minus:
        raise InvalidValueError(
            f"FDA {name}: both inputs are node {plus!r}; give plus and minus their own nodes"
        )


def _check_kind(name: str, kind: NonIdeal) -> None:
    """Refuse kinds that act on a single output pin, which an FDA does not have."""
    for inj in kind.injections(name):
        single = isinstance(inj, OutputImpedance) or (
            isinstance(inj, PinAdmittance) and "out" in (inj.a, inj.b)
        )
        if single:
            raise InvalidValueError(
                f"FDA {name}: kind {kind.kind!r} acts on a single-ended output, which an FDA "
                "does not model; leave it out (input-side kinds such as 'rid', 'ricm', 'cid' "
                "and 'ccm' are fine)"
            )
