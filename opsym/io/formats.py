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

__all__ = ["MAX_BYTES", "READERS", "load", "reader"]

#: The largest design file read, in bytes.
MAX_BYTES = 1_000_000

#: Reader of each suffix: ``parse(text, filename=...)`` returning a Design.
READERS: dict[str, Callable[..., Any]] = {}

_F = TypeVar("_F", bound=Callable[..., Any])


def reader(*suffixes: str) -> Callable[[_F], _F]:
    """Register the decorated ``parse(text, *, filename)`` for files ending in ``suffixes``."""

    def register(parse: _F) -> _F:
        for suffix in suffixes:
            READERS[suffix.lower()] = parse
        return parse

    return register


def load(path: str | os.PathLike[str]) -> Any:
    """Read the design in ``path`` with the reader of its suffix.

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
    return parse(_text(name), filename=name)


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
