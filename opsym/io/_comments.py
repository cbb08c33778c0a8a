"""Carry the ``#`` comments of a design file over to its rewritten text.

:func:`keep_comments` reads both texts line by line. Every table header and
every key line is an *anchor* (``("table", name)`` or ``("key", table, key)``);
the whole-line comments above an anchor and the comment at the end of its line
travel with it. An anchor that the rewritten file no longer has hands its
comments to the next anchor that survives (end-of-line comments become
whole-line comments there), so no comment line is lost. Values are never
touched: comments only.

Examples
--------
>>> old = ('# top\\nformat = 1\\ntitle = "x"  # the name\\n\\n'
...        '[resistors]  # R\\nR1 = { value = "1k" }\\n')
>>> new = 'format = 1\\ntitle = "x"\\n\\n[resistors]\\nR1 = { value = "1k" }\\n'
>>> print(keep_comments(old, new), end="")
# top
format = 1
title = "x"  # the name
<BLANKLINE>
[resistors]  # R
R1 = { value = "1k" }
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

__all__ = ["keep_comments"]

_HEADER = re.compile(r"^\s*\[\[?\s*([^\]]+?)\s*\]\]?\s*(#.*)?$")
_KEY = re.compile(r"""^\s*("[^"]*"|'[^']*'|[A-Za-z0-9_.-]+)\s*=""")
#: The first line the writer puts in every file; never doubled by a rewrite.
_STAMP = "# opsym design file"

Anchor = tuple[str, ...]


@dataclass
class _Notes:
    """The comments one anchor carries: whole lines above it, and one at its end."""

    above: list[str] = field(default_factory=list)
    end: str | None = None


def _split_comment(line: str) -> tuple[str, str | None, int]:
    """``(code, comment, depth)``: the comment outside strings, the bracket depth at the end."""
    quote, depth, i = "", 0, 0
    while i < len(line):
        ch = line[i]
        if quote:
            if ch == "\\" and quote == '"':
                i += 1
            elif ch == quote:
                quote = ""
        elif ch in "\"'":
            quote = ch
        elif ch in "[{":
            depth += 1
        elif ch in "]}":
            depth -= 1
        elif ch == "#":
            return line[:i].rstrip(), line[i:].rstrip(), depth
        i += 1
    return line.rstrip(), None, depth


def _key_name(raw: str) -> str:
    return raw[1:-1] if raw[:1] in "\"'" else raw


def _anchors(text: str) -> list[tuple[Anchor | None, str, str | None, bool]]:
    """Each line as ``(anchor, code, comment, complete)``; ``anchor`` None for others.

    ``complete``: a key line whose value ends on the same line (a comment may follow it).
    """
    table, depth, out = "", 0, []
    for line in text.splitlines():
        code, comment, change = _split_comment(line)
        anchor: Anchor | None = None
        if depth == 0:
            header = _HEADER.match(code)
            key = _KEY.match(code)
            if header and not key:
                table = header.group(1).replace(" ", "")
                anchor = ("table", table)
            elif key:
                anchor = ("key", table, _key_name(key.group(1)))
        depth += change
        out.append((anchor, code, comment, depth == 0))
    return out


def _gather(original: str) -> tuple[list[Anchor], dict[Anchor, _Notes], list[str]]:
    """The original's anchors in order, their comments, and the comments after the last one."""
    order: list[Anchor] = []
    notes: dict[Anchor, _Notes] = {}
    pending: list[str] = []
    last: Anchor | None = None
    for anchor, code, comment, _ in _anchors(original):
        if anchor is None:
            if comment is not None and not code.strip():
                if comment.strip() != _STAMP:
                    pending.append(comment)
            elif comment is not None and last is not None:  # inside a value spread over lines
                notes[last].above.append(comment)
            continue
        if anchor in notes:  # the same anchor twice (TOML refuses it): keep the comments
            anchor = (*anchor, str(len(order)))
        order.append(anchor)
        notes[anchor] = _Notes(pending, comment)
        pending, last = [], anchor
    return order, notes, pending


def keep_comments(original: str, rewritten: str) -> str:
    """``rewritten`` with the comments of ``original`` placed at the same tables and keys.

    Parameters
    ----------
    original : str
        The design file as the user wrote it.
    rewritten : str
        The same design as the writer writes it (no comments but its first line).

    Returns
    -------
    str
        ``rewritten`` with every comment line of ``original`` in it.
    """
    order, notes, tail = _gather(original)
    lines = _anchors(rewritten)
    present = {a for a, *_ in lines if a is not None}
    carried: list[str] = []
    for anchor in order:  # comments of lost anchors move on to the next that survives
        n = notes[anchor]
        if anchor in present:
            n.above[:0] = carried
            carried = []
        else:
            carried += n.above + ([n.end] if n.end else [])
    tail = carried + tail
    out: list[str] = []
    for at, code, comment, complete in lines:
        here = notes.pop(at) if at is not None and at in notes else None
        if here is None:
            out.append(code if comment is None else f"{code}  {comment}".lstrip())
            continue
        out += here.above
        if here.end and complete:
            out.append(f"{code}  {here.end}")
        else:
            out += [here.end] if here.end else []
            out.append(code)
    if tail:
        out += ["", *tail]
    return "\n".join(out) + "\n"
