"""The example design files shipped inside the package (``opsym/examples/*.toml``).

There is one copy of each example: the package data, which ``opsym example``
prints and the documentation links to.

Examples
--------
>>> "difference-amplifier" in example_names()
True
>>> example_text("difference-amplifier").startswith("#")
True
>>> example_path("difference-amplifier").name
'difference-amplifier.toml'
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

from ..errors import UnknownNameError

__all__ = ["example_names", "example_path", "example_text"]


def _folder() -> Path:
    return Path(str(resources.files("opsym") / "examples"))


def example_names() -> list[str]:
    """The shipped examples' names (file names without ``.toml``), sorted."""
    return sorted(p.stem for p in _folder().glob("*.toml"))


def example_path(name: str) -> Path:
    """The file of one shipped example, by name (``.toml`` may be given or not).

    Raises
    ------
    UnknownNameError
        No example of that name; the message lists them.
    """
    stem = name[:-5] if name.endswith(".toml") else name
    names = example_names()
    if stem not in names:
        raise UnknownNameError(
            f"no example named {name!r}; the examples are {', '.join(names)} "
            "(opsym example --list)"
        )
    return _folder() / f"{stem}.toml"


def example_text(name: str) -> str:
    """The text of one shipped example (see :func:`example_path`)."""
    return example_path(name).read_text(encoding="utf-8")
