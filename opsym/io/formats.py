"""Design formats by file suffix: one reader per format, one place to add another.

A format module registers its text reader with :func:`reader`; :func:`load`
reads a file (size limit, UTF-8) and hands the text to the reader its suffix
names. opsym's own format is TOML (:mod:`opsym.io.designfile`).

Examples
--------
>>> import opsym
>>> ".toml" in READERS
True
>>> load("design.xyz")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
opsym.errors.DesignFileError: design.xyz: no reader for '.xyz' files; ...
"""

from __future__ import annotations

import os
from collections.abc import Callable
from pathlib import Path
from typing import Any, TypeVar

from ..errors import DesignFileError

__all__ = ["MAX_BYTES", "OPTIONS", "READERS", "load", "reader"]

#: The largest design file read, in bytes.
MAX_BYTES = 1_000_000

#: Reader of each suffix: ``parse(text, filename=...)`` returning a Design.
READERS: dict[str, Callable[..., Any]] = {}
#: Reading options (such as a netlist's ``output``) each suffix's reader takes.
OPTIONS: dict[str, tuple[str, ...]] = {}

_F = TypeVar("_F", bound=Callable[..., Any])


def reader(*suffixes: str, options: tuple[str, ...] = ()) -> Callable[[_F], _F]:
    """Register the decorated ``parse(text, *, filename)`` for files ending in ``suffixes``.

    ``options`` names the keyword arguments it takes besides ``filename``
    (a netlist reader takes ``output``), passed on by :func:`load`.
    """

    def register(parse: _F) -> _F:
        for suffix in suffixes:
            READERS[suffix.lower()] = parse
            OPTIONS[suffix.lower()] = tuple(options)
        return parse

    return register


def load(path: str | os.PathLike[str], **options: Any) -> Any:
    """Read the design in ``path`` with the reader of its suffix.

    ``options`` given as ``None`` are left out; any other must be one the
    suffix's reader takes (``output`` and ``opamps`` for netlists).

    Raises
    ------
    DesignFileError
        The file cannot be read, is too large, is not UTF-8, has a suffix no
        reader knows, or does not describe a design (the reader's message
        names the file, table, key and line).
    """
    name = os.fspath(path)
    suffix = Path(name).suffix.lower()
    parse = READERS.get(suffix)
    if parse is None:
        known = ", ".join(sorted(READERS)) or "none"
        raise DesignFileError(
            f"{name}: no reader for {suffix or 'suffix-less'!r} files; opsym reads {known}"
        )
    given = {k: v for k, v in options.items() if v is not None}
    unknown = sorted(set(given) - set(OPTIONS.get(suffix, ())))
    if unknown:
        raise DesignFileError(
            f"{name}: {', '.join(unknown)} applies to other formats, not to {suffix} files; "
            "a design file states its output and op-amps itself"
        )
    return parse(_text(name), filename=name, **given)


def _text(name: str) -> str:
    try:
        with open(name, "rb") as f:
            data = f.read(MAX_BYTES + 1)
    except OSError as err:
        reason = err.strerror or str(err)
        raise DesignFileError(f"{name}: cannot read the design file: {reason}") from None
    if len(data) > MAX_BYTES:
        raise DesignFileError(f"{name}: larger than {MAX_BYTES} bytes; is it a design file?")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as err:
        raise DesignFileError(
            f"{name}: not UTF-8 text (byte {err.start}); save the file as UTF-8"
        ) from None
