"""Late binding: a lower layer calls a service that a higher layer provides.

The layers import only downwards (``tests/test_architecture.py``). A few
conveniences cross them the other way: ``Circuit.analyze`` runs an analysis,
``Result.latex`` writes LaTeX, ``NoiseResult.budget`` runs a noise study. The
lower module names the service and calls :func:`call`; the module that does the
work registers its function with :func:`provides` when it is imported, and
``import opsym`` imports every layer. So the graph stays acyclic and each idea
lives in one place.

Examples
--------
>>> import opsym
>>> "derive" in registered()
True
>>> call("no such service")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.MissingDependencyError: no module provides 'no such service'; import opsym ...
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any, TypeVar

from .errors import MissingDependencyError

__all__ = ["call", "provides", "registered"]

_F = TypeVar("_F", bound=Callable[..., Any])
_SERVICES: dict[str, Callable[..., Any]] = {}


def provides(name: str) -> Callable[[_F], _F]:
    """Register the decorated function as the service ``name``; return it unchanged."""

    def register(function: _F) -> _F:
        _SERVICES[name] = function
        return function

    return register


def call(name: str, *args: Any, **kwargs: Any) -> Any:
    """Run the service ``name`` with the given arguments."""
    try:
        function = _SERVICES[name]
    except KeyError:
        raise MissingDependencyError(
            f"no module provides {name!r}; import opsym (its package import loads every layer)"
        ) from None
    return function(*args, **kwargs)


def registered() -> tuple[str, ...]:
    """The names of the services provided so far."""
    return tuple(_SERVICES)
