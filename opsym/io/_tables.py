"""Checked reading of parsed TOML tables: every key used once, every error located.

A :class:`Table` wraps one TOML table with its path (``resistors.R1``). Each
``take_*`` method reads one key, checks its type and says what was expected;
:meth:`Table.finish` rejects every key nobody asked for. Messages name the
file, the table, the key and, when it can be found, the line.

Examples
--------
>>> from opsym.io._tables import Table, Locator
>>> t = Table({"between": ["a", "0"], "colour": "red"}, ("resistors", "R1"),
...           Locator("demo.toml", "[resistors]\\nR1 = {between = ['a', '0'], colour = 'red'}\\n"))
>>> t.take_nodes("between", 2)
('a', '0')
>>> t.finish()
Traceback (most recent call last):
...
opsym.errors.DesignFileError: demo.toml [resistors.R1] (line 2): unknown key 'colour'; \
the keys here are: between
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from typing import Any

import sympy as sp

from ..errors import DesignFileError, OpsymError, ValueSyntaxError
from ..values import parse_value

__all__ = ["Locator", "Table"]

_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")


class Locator:
    """Finds the line of a table or key in the raw text (a best effort, for messages)."""

    def __init__(self, filename: str, text: str) -> None:
        self.filename = filename
        self._lines: list[tuple[int, tuple[str, ...]]] = []
        header: tuple[str, ...] = ()
        for number, line in enumerate(text.splitlines(), start=1):
            stripped = line.strip()
            if stripped.startswith("["):
                inner = stripped.strip("[]").split("#")[0].strip().rstrip("]").strip()
                header = _split_key(inner)
                self._lines.append((number, header))
            elif "=" in stripped and not stripped.startswith("#"):
                key = _split_key(stripped.split("=", 1)[0].strip())
                if key:
                    self._lines.append((number, header + key))

    def line(self, path: Sequence[str]) -> int | None:
        """The line that best matches ``path``: the key itself, or its enclosing table."""
        path = tuple(path)
        best, best_len = None, 0
        for number, where in self._lines:
            n = len(where)
            if where == path[:n] and n > best_len:
                best, best_len = number, n
        return best


def _split_key(text: str) -> tuple[str, ...]:
    parts: list[str] = []
    for raw in re.findall(r'"[^"]*"|\'[^\']*\'|[^.]+', text):
        part = raw.strip()
        if len(part) >= 2 and part[0] == part[-1] and part[0] in "\"'":
            part = part[1:-1]
        elif not _BARE_KEY.fullmatch(part):
            return ()
        parts.append(part)
    return tuple(parts)


def _dotted(path: Sequence[str]) -> str:
    return ".".join(p if _BARE_KEY.fullmatch(p) else f'"{p}"' for p in path)


class Table:
    """One TOML table being read; see the module docstring."""

    def __init__(self, data: Mapping[str, Any], path: tuple[str, ...], locator: Locator) -> None:
        self.data = data
        self.path = path
        self.locator = locator
        self._used: set[str] = set()
        self._asked: list[str] = []

    # -- messages ----------------------------------------------------------------------

    def where(self, key: str | None = None, *, show_key: bool = True) -> str:
        """``file [table] key (line n)`` for messages."""
        full = (*self.path, key) if key is not None else self.path
        line = self.locator.line(full)
        at = f" (line {line})" if line else ""
        table = f" [{_dotted(self.path)}]" if self.path else ""
        what = f" {key}" if key is not None and show_key else ""
        return f"{self.locator.filename}{table}{what}{at}"

    def error(self, key: str | None, problem: str) -> DesignFileError:
        """A DesignFileError located at ``key`` (or at the table itself)."""
        return DesignFileError(f"{self.where(key)}: {problem}")

    def wrap(self, key: str | None, err: OpsymError) -> DesignFileError:
        """Re-raise an error of the model or parser with this location in front."""
        text = str(err)
        if isinstance(err, ValueSyntaxError):  # the value parser already names the field
            return DesignFileError(text)
        return DesignFileError(f"{self.where(key)}: {text}")

    # -- reading -----------------------------------------------------------------------

    def _present(self, key: str) -> bool:
        if key not in self._asked:
            self._asked.append(key)
        return key in self.data

    def has(self, key: str) -> bool:
        """Whether ``key`` is given (it counts as a known key of this table)."""
        return self._present(key)

    def raw(self, key: str, default: Any = None) -> Any:
        """The value as TOML gave it, marking the key as read."""
        self._present(key)
        self._used.add(key)
        return self.data.get(key, default)

    def take_str(
        self, key: str, default: str | None = None, *, required: bool = False,
        choices: Sequence[str] | None = None,
    ) -> str | None:  # fmt: skip
        if not self._present(key):
            if required:
                raise self.error(None, f"the key '{key}' is missing; {self._expect_str(choices)}")
            return default
        value = self.raw(key)
        if not isinstance(value, str):
            raise self.error(key, f"{_shown(value)} is not text; {self._expect_str(choices)}")
        if choices is not None and value not in choices:
            raise self.error(key, f"{value!r} is not known; {self._expect_str(choices)}")
        return value

    @staticmethod
    def _expect_str(choices: Sequence[str] | None) -> str:
        if choices:
            return "expected one of " + ", ".join(repr(c) for c in choices)
        return "expected text in quotes"

    def take_bool(self, key: str, default: bool) -> bool:
        if not self._present(key):
            return default
        value = self.raw(key)
        if not isinstance(value, bool):
            raise self.error(key, f"{_shown(value)} is not true or false; expected true or false")
        return value

    def take_int(self, key: str, default: int | None, *, low: int, high: int) -> int | None:
        if not self._present(key):
            return default
        value = self.raw(key)
        if isinstance(value, bool) or not isinstance(value, int) or not low <= value <= high:
            raise self.error(
                key, f"{_shown(value)} is not a whole number from {low} to {high}; give one"
            )
        return value

    def take_number(self, key: str, default: float | None = None) -> float | None:
        """A plain TOML number (temperatures in °C, for example)."""
        if not self._present(key):
            return default
        value = self.raw(key)
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.error(key, f"{_shown(value)} is not a number; give e.g. 25 or -40")
        if value != value or value in (float("inf"), float("-inf")):
            raise self.error(key, f"{value} is not a finite number")
        return value

    def take_value(
        self, key: str, *, unit: str | None = None,
        names: Mapping[str, sp.Expr] | None = None, required: bool = False,
    ) -> sp.Expr | None:  # fmt: skip
        """A value: a TOML number, or text read by :func:`~opsym.values.parse_value`."""
        if not self._present(key):
            if required:
                raise self.error(None, f"the key '{key}' is missing; give a value such as '10k'")
            return None
        return self.value_of(self.raw(key), key, unit=unit, names=names)

    def value_of(
        self, value: Any, key: str, *, unit: str | None = None,
        names: Mapping[str, sp.Expr] | None = None,
    ) -> sp.Expr:  # fmt: skip
        if isinstance(value, bool):
            raise self.error(key, f"{_shown(value)} is not a value; give a number or text '10k'")
        if isinstance(value, int):
            return sp.Integer(value)
        if isinstance(value, float):
            if value != value or value in (float("inf"), float("-inf")):
                raise self.error(key, f"{value} is not a finite value")
            return sp.Rational(repr(value))
        if isinstance(value, str):
            try:
                return parse_value(value, where=self.where(key), names=names, unit=unit)
            except ValueSyntaxError as err:  # the message already names file, table and key
                raise DesignFileError(str(err)) from err
        raise self.error(key, f"{_shown(value)} is not a value; give a number or text '10k'")

    def take_nodes(self, key: str, count: int) -> tuple[str, ...]:
        """``count`` node names as an array of text (or whole numbers, like 0)."""
        if not self._present(key):
            raise self.error(
                None, f'the key \'{key}\' is missing; give {count} node names, e.g. ["in", "0"]'
            )
        value = self.raw(key)
        if not isinstance(value, list) or len(value) != count:
            raise self.error(key, f"{_shown(value)} is not a list of {count} node names")
        return tuple(self.node_of(v, key) for v in value)

    def take_node(self, key: str) -> str:
        if not self._present(key):
            raise self.error(None, f"the key '{key}' is missing; give a node name such as \"out\"")
        return self.node_of(self.raw(key), key)

    def node_of(self, value: Any, key: str) -> str:
        if isinstance(value, int) and not isinstance(value, bool):
            return str(value)
        if not isinstance(value, str):
            raise self.error(key, f'{_shown(value)} is not a node name; give text such as "out"')
        return value

    def take_strings(self, key: str) -> list[str]:
        if not self._present(key):
            return []
        value = self.raw(key)
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise self.error(key, f'{_shown(value)} is not a list of text, e.g. ["R1", "R2"]')
        return list(value)

    def sub(self, key: str, *, required: bool = False) -> Table | None:
        if not self._present(key):
            if required:
                raise self.error(None, f"the table '{key}' is missing")
            return None
        value = self.raw(key)
        if not isinstance(value, dict):
            header = _dotted((*self.path, key))
            raise self.error(
                key, f"{_shown(value)} is not a table; write [{header}] or an inline table {{ }}"
            )
        return Table(value, (*self.path, key), self.locator)

    def items(self) -> list[tuple[str, Any]]:
        """Every key of a table whose keys are names (elements, for example)."""
        self._used.update(self.data)
        return list(self.data.items())

    def finish(self) -> None:
        """Reject keys that nothing read: unknown keys are errors, never ignored."""
        unknown = [k for k in self.data if k not in self._used]
        if unknown:
            known = ", ".join(self._asked) or "none (it must be empty)"
            raise DesignFileError(
                f"{self.where(unknown[0], show_key=False)}: unknown key '{unknown[0]}'; "
                f"the keys here are: {known}"
            )


def _shown(value: Any) -> str:
    text = repr(value)
    return text if len(text) <= 40 else text[:37] + "..."
