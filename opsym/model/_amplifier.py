"""What op-amps and fully differential amplifiers share when they are declared.

The gain model a ``gain=`` argument names and the list of non-ideal kinds an
amplifier carries, each checked once for :meth:`opsym.Circuit.opamp` and
:meth:`opsym.Circuit.fda`.

Examples
--------
>>> resolve_gain("U1", "finite", None)
U1.A
>>> [k.kind for k in collect_kinds("U1", [("offset", True), ("bias", False)], ())]
['offset']
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

import sympy as sp

from ..errors import ArgumentTypeError, InvalidValueError, ValueSyntaxError
from .limits import exact_value, shown
from .nonideal import KINDS, MultiPole, NonIdeal, gain_model
from .symbols import component_symbol, opamp_symbol

__all__ = ["collect_kinds", "positive_value", "resolve_gain"]


def positive_value(value: Any, name: str, kind: str, unit: str) -> sp.Expr:
    """``value`` as an exact positive expression for element ``name`` (its symbol if None)."""
    if value is None:
        return component_symbol(name)
    v = exact_value(value, f"{kind} {name}", unit)
    if v.is_number:
        if v.is_zero:
            hint = " (for a wire, give both ends the same node name)" if kind == "resistor" else ""
            raise InvalidValueError(f"{kind} {name}: value is zero; give a positive value{hint}")
        if v.is_extended_real is False or v.is_negative:
            raise InvalidValueError(f"{kind} {name}: value {v} is not positive; give a value > 0")
    elif v.is_positive is False:
        raise InvalidValueError(f"{kind} {name}: value {v} cannot be positive; give a value > 0")
    return v


def resolve_gain(name: str, gain: Any, poles: Any, what: str = "op-amp") -> sp.Expr | None:
    """The open-loop gain ``gain=`` names (``None``: the nullor)."""
    if poles is not None:
        gain = _poles(name, gain, poles, what)
    model = gain_model(gain) if isinstance(gain, str) else None
    if isinstance(gain, str) and gain == "ideal":
        return None
    if isinstance(gain, str) and gain == "finite":
        return opamp_symbol(name, "A")
    if model is not None:
        return model.gain(name)
    if gain is None:
        raise InvalidValueError(
            f"{what} {name}: gain=None is ambiguous; write gain='ideal' or gain='finite'"
        )
    try:  # a number, an expression or text such as "100k"
        return positive_value(gain, name + ".A", f"{what} gain", "ratio")
    except ValueSyntaxError as err:
        raise InvalidValueError(
            f"{what} {name}: gain {gain!r} is not 'ideal', 'finite', 'pole' or a number "
            "('pole2', 'pole3'… for more poles) "
            f"({err})"
        ) from None


def _poles(name: str, gain: Any, poles: Any, what: str) -> str:
    """``gain=`` text for ``poles=n``; ``gain`` must be left at its default."""
    if isinstance(gain, str) and gain in ("ideal", "pole", f"pole{poles}"):
        try:
            return MultiPole(poles).kind
        except ValueError:
            pass
        raise InvalidValueError(
            f"{what} {name}: poles={poles!r} must be a whole number >= 1, e.g. poles=2"
        )
    raise InvalidValueError(
        f"{what} {name}: give poles= or gain={gain!r}, not both (poles=2 is gain='pole2')"
    )


def collect_kinds(
    name: str, wanted: list[tuple[str, Any]], extra: Any, what: str = "op-amp"
) -> list[NonIdeal]:
    """The kinds switched on by the ``wanted`` flags, then ``extra``'s, each once."""
    for flag, on in wanted:
        if not isinstance(on, bool):
            raise ArgumentTypeError(
                f"{what} {name}: {flag}= expects True or False, not {shown(on)}"
            )
    kinds: list[NonIdeal] = []
    for key, on in wanted:
        keys = ("vnoise", "inoise") if key == "noise" else (key,)
        kinds += [KINDS[k]() for k in keys if on]
    if isinstance(extra, NonIdeal):
        extra = (extra,)
    if extra is None or isinstance(extra, str) or not isinstance(extra, Iterable):
        raise ArgumentTypeError(
            f"{what} {name}: extra= expects a list of NonIdeal instances, "
            f"not {type(extra).__name__}"
        )
    for item in extra:
        item = _kind(name, item, what)
        if item not in kinds:
            kinds.append(item)
    have = {k.kind for k in kinds}
    for k in kinds:
        if k.requires is not None and k.requires not in have:
            raise InvalidValueError(
                f"{what} {name}: {k.kind!r} builds on {k.requires!r}, which it does not "
                f"carry; add {k.requires}=True (files: \"{k.requires}\" in include)"
            )
    return kinds


def _kind(opamp: str, item: Any, what: str) -> NonIdeal:
    """A non-ideality from ``extra=``: an instance, or the key of a registered kind."""
    if isinstance(item, NonIdeal):
        return item
    if isinstance(item, str) and item in KINDS:
        return KINDS[item]()
    raise InvalidValueError(
        f"{what} {opamp}: extra={item!r} is not a NonIdeal or the key of one; "
        f"pass instances or any of {', '.join(KINDS)}"
    )
