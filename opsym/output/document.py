r"""A design note's content, written once, and its two renderers (Markdown and LaTeX).

A :class:`Document` is a title, a few opening paragraphs and a list of
:class:`Section` s; a section is a heading and a list of blocks:
:class:`Paragraph`, :class:`Fact` (one stated result), :class:`Bullets`,
:class:`Math` (display math), :class:`TableBlock` and :class:`Figure`. The
content says nothing about syntax: :func:`markdown` and :func:`latex` walk the
same structure, so a note's Markdown and LaTeX say the same things.

Markdown separates blocks with a blank line; LaTeX writes one block after the
other and keeps tables and figures in place (no floats), so a note reads in order.

Examples
--------
>>> doc = Document("Note", sections=(
...     Section("Facts", (Bullets((Text("plain"), Text("loud", strong=True),
...                                Text("x^2", math=True))),)),))
>>> print(markdown(doc))
## Note
<BLANKLINE>
### Facts
<BLANKLINE>
- plain
- **loud**
- $x^2$
<BLANKLINE>
>>> print(latex(doc))
\section*{Note}
\subsection*{Facts}
\begin{itemize}
\item plain
\item \textbf{loud}
\item $x^2$
\end{itemize}
<BLANKLINE>
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import Any, NamedTuple

from .tables import Table, latex_text

__all__ = [
    "Bullets", "Document", "Fact", "Figure", "Math", "Paragraph", "Section", "TableBlock",
    "Text", "figure_list", "latex", "latex_section", "markdown", "markdown_section",
]  # fmt: skip


@dataclass(frozen=True)
class Text:
    """A run of text: plain, in bold (``strong``), or inline LaTeX math (``math``)."""

    text: str
    strong: bool = False
    math: bool = False


@dataclass(frozen=True)
class Paragraph:
    """Running text."""

    text: str


@dataclass(frozen=True)
class Fact:
    """One stated result (a bandwidth): a bullet line in Markdown, a line of its own in LaTeX."""

    text: str


@dataclass(frozen=True)
class Bullets:
    """A bulleted list."""

    items: tuple[Text, ...]


@dataclass(frozen=True)
class Math:
    """Display math (LaTeX source)."""

    latex: str


@dataclass(frozen=True)
class TableBlock:
    """A table with its caption, in place; ``unbreakable`` keeps it on one page in LaTeX."""

    table: Table
    unbreakable: bool = False


class Figure(NamedTuple):
    """An image file and its caption (the file's stem stands in as Markdown alt text)."""

    path: Path
    caption: str = ""


#: What a section holds.
Block = Paragraph | Fact | Bullets | Math | TableBlock | Figure


@dataclass(frozen=True)
class Section:
    """A heading (``None``: the blocks continue the previous section) and its blocks."""

    heading: str | None
    blocks: tuple[Block, ...]


@dataclass(frozen=True)
class Document:
    """A note: its title, opening paragraphs and sections."""

    title: str
    opening: tuple[str, ...] = ()
    sections: tuple[Section, ...] = ()


def figure_list(figures: Iterable[Any]) -> tuple[Figure, ...]:
    """Figures given as paths or ``(path, caption)`` pairs.

    Examples
    --------
    >>> figure_list(["a.png", ("b.png", "B")])[1]
    Figure(path=PosixPath('b.png'), caption='B')
    >>> figure_list(["a.png"])[0] == (Path("a.png"), "")
    True
    """
    return tuple(
        Figure(Path(f[0]), str(f[1])) if isinstance(f, tuple) else Figure(Path(f)) for f in figures
    )


# -- Markdown ------------------------------------------------------------------------------


def _md_text(t: Text) -> str:
    if t.math:
        return f"${t.text}$"
    return f"**{t.text}**" if t.strong else t.text


def _md_block(block: Block) -> str:
    if isinstance(block, Paragraph):
        return block.text
    if isinstance(block, Fact):
        return f"- {block.text}"
    if isinstance(block, Bullets):
        return "\n".join(f"- {_md_text(t)}" for t in block.items)
    if isinstance(block, Math):
        return f"$$\n{block.latex}\n$$"
    if isinstance(block, TableBlock):
        return block.table.to_markdown()
    return f"![{block.caption or block.path.stem}]({block.path.as_posix()})"


def markdown_section(section: Section) -> str:
    """One section as Markdown: a level-3 heading, blocks one blank line apart."""
    parts = [] if section.heading is None else [f"### {section.heading}"]
    return "\n\n".join([*parts, *filter(None, map(_md_block, section.blocks))])


def markdown(doc: Document) -> str:
    """The document as Markdown: a level-2 title, then its sections; ends with a newline."""
    parts = [f"## {doc.title}", *doc.opening, *(markdown_section(s) for s in doc.sections)]
    return "\n\n".join(parts) + "\n"


# -- LaTeX ---------------------------------------------------------------------------------


def _tex_text(t: Text) -> str:
    if t.math:
        return f"${t.text}$"
    return r"\textbf{" + latex_text(t.text) + "}" if t.strong else latex_text(t.text)


def _tex_table(block: TableBlock) -> list[str]:
    table, keep = block.table, block.unbreakable
    out = [r"\begin{center}"]
    out += [r"\begin{minipage}{\linewidth}", r"\centering"] if keep else []
    out += [r"\textbf{" + latex_text(table.caption) + r"}\par\smallskip"] if table.caption else []
    out += [table.to_latex(float_env=False)]
    return [*out, r"\end{minipage}", r"\end{center}"] if keep else [*out, r"\end{center}"]


def _tex_figure(block: Figure) -> list[str]:
    graphic = r"\includegraphics[width=0.8\linewidth]{" + block.path.as_posix() + "}"
    out = [r"\begin{center}", graphic]
    if block.caption:
        out.append(r"\par\smallskip " + latex_text(block.caption))
    return [*out, r"\end{center}"]


def _tex_block(block: Block) -> list[str]:
    if isinstance(block, (Paragraph, Fact)):
        return [latex_text(block.text)]
    if isinstance(block, Bullets):
        items = [r"\item " + _tex_text(t) for t in block.items]
        return [r"\begin{itemize}", *items, r"\end{itemize}"] if items else []
    if isinstance(block, Math):
        return [r"\[", block.latex, r"\]"]
    if isinstance(block, TableBlock):
        return _tex_table(block)
    return _tex_figure(block)


def latex_section(section: Section) -> str:
    """One section as LaTeX: ``\\subsection*`` and its blocks, one line after another."""
    heading = section.heading
    lines = [] if heading is None else [r"\subsection*{" + latex_text(heading) + "}"]
    for block in section.blocks:
        lines += _tex_block(block)
    return "\n".join(lines)


def latex(doc: Document) -> str:
    """The document as LaTeX (``\\section*`` title); ends with a newline.

    Needs ``amsmath``, ``booktabs`` and ``graphicx`` in the preamble.
    """
    opening = [latex_text(text) + "\n" for text in doc.opening]  # each ends its paragraph
    lines = [r"\section*{" + latex_text(doc.title) + "}", *opening]
    lines += [text for text in map(latex_section, doc.sections) if text]
    return "\n".join(lines) + "\n"
