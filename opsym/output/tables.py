r"""One small table type, written as Markdown, LaTeX (booktabs) or terminal text.

Cells are plain Unicode text (``152.6 µV``, ``±``); :func:`latex_text` turns
them into LaTeX that pdflatex accepts with only the ``booktabs`` package
(``\textmu`` and ``\textdegree`` are in the LaTeX kernel's text commands);
other text (``é``) passes through as UTF-8, which LaTeX reads by default.

Examples
--------
>>> t = Table(("source", "output"), (("U1 Vos", "±2.5 mV"), ("U1 Ib", "9.5 mV")), "lr")
>>> print(t.to_markdown())
| source | output |
| :--- | ---: |
| U1 Vos | ±2.5 mV |
| U1 Ib | 9.5 mV |
>>> print(t.to_text())
source   output
------  -------
U1 Vos  ±2.5 mV
U1 Ib    9.5 mV
"""

from __future__ import annotations

import html
from collections.abc import Mapping
from dataclasses import dataclass, replace

import sympy as sp

from ..errors import OpsymError
from ..model.symbols import SYMBOLS, latex_name

__all__ = ["SHORT_CAUTION", "Table", "latex_text", "math_label", "with_math"]

#: The caution every budget and noise table ends with (design notes carry the long one).
SHORT_CAUTION = (
    "A design aid: verify by measurement; for medical or safety instrumentation follow "
    "local codes and have the design reviewed by a licensed engineer."
)

_LATEX_SPECIAL = {
    "\\": r"\textbackslash{}",
    "&": r"\&",
    "%": r"\%",
    "$": r"\$",
    "#": r"\#",
    "_": r"\_",
    "{": r"\{",
    "}": r"\}",
    "~": r"\textasciitilde{}",
    "^": r"\textasciicircum{}",
    "µ": r"\textmu{}",
    "μ": r"\textmu{}",
    "Ω": r"$\Omega$",
    "\u2126": r"$\Omega$",
    "±": r"$\pm$",
    "°": r"\textdegree{}",
    "×": r"$\times$",
    "−": r"$-$",
    "–": "--",
    "—": "---",
    "…": r"\ldots{}",
    "‖": r"$\parallel$",
    "√": r"$\surd$",
    "≤": r"$\leq$",
    "≥": r"$\geq$",
    "≈": r"$\approx$",
    "Σ": r"$\Sigma$",
    "∂": r"$\partial$",
    "∞": r"$\infty$",
    "Δ": r"$\Delta$",
    "π": r"$\pi$",
    "²": r"\textsuperscript{2}",
    "·": r"$\cdot$",
    "§": r"\S{}",
    "|": r"\textbar{}",
    "<": r"\textless{}",
    ">": r"\textgreater{}",
    "→": r"$\rightarrow$",
    "∥": r"$\parallel$",
    "≠": r"$\neq$",
    "‰": r"\textperthousand{}",
    "℃": r"\textdegree{}C",
    "α": r"$\alpha$",
    "β": r"$\beta$",
    "γ": r"$\gamma$",
    "δ": r"$\delta$",
    "ε": r"$\varepsilon$",
    "θ": r"$\theta$",
    "λ": r"$\lambda$",
    "ν": r"$\nu$",
    "ρ": r"$\rho$",
    "σ": r"$\sigma$",
    "τ": r"$\tau$",
    "φ": r"$\varphi$",
    "ω": r"$\omega$",
    **{ch: r"\textsuperscript{" + d + "}"
       for ch, d in zip("⁰¹³⁴⁵⁶⁷⁸⁹⁺⁻", "013456789+-", strict=True)},
}


def latex_text(text: str) -> str:
    r"""Escape plain text for LaTeX text mode, mapping the trade's symbols.

    The trade's symbols (Ω µ ‖ ± ° √ …) become LaTeX commands; other text
    outside ASCII (``é``, ``ü``) passes through as UTF-8 for ``inputenc``.

    Examples
    --------
    >>> latex_text("±25 µV (1 %)")
    '$\\pm$25 \\textmu{}V (1 \\%)'
    >>> latex_text("Résumé — 10 kΩ ‖ 1 kΩ")
    'Résumé --- 10 k$\\Omega$ $\\parallel$ 1 k$\\Omega$'
    """
    return "".join(_LATEX_SPECIAL.get(ch, ch) for ch in str(text))


@dataclass(frozen=True)
class Table:
    r"""A table of text cells.

    Attributes
    ----------
    headers : tuple of str
    rows : tuple of tuple of str
        Body rows.
    align : str
        One of ``l``, ``r``, ``c`` per column.
    caption : str
        Printed above (text, Markdown) or as ``\caption`` (LaTeX).
    footer : tuple of tuple of str
        Summary rows (totals), set off by a rule.
    notes : tuple of str
        Lines printed under the table (rules used, assumptions).
    """

    headers: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    align: str = ""
    caption: str = ""
    footer: tuple[tuple[str, ...], ...] = ()
    notes: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        n = len(self.headers)
        align = self.align or "l" + "r" * (n - 1)
        if len(align) != n or set(align) - set("lrc"):
            raise OpsymError(f"table align {self.align!r} must give l, r or c for {n} columns")
        object.__setattr__(self, "align", align)
        for row in (*self.rows, *self.footer):
            if len(row) != n:
                raise OpsymError(f"table row {row!r} has {len(row)} cells, expected {n}")

    def to_markdown(self) -> str:
        """GitHub-flavoured Markdown; footer rows in bold."""

        def cell(s: str) -> str:
            return str(s).replace("|", r"\|")

        rule = {"l": ":---", "r": "---:", "c": ":---:"}
        lines = []
        if self.caption:
            lines += [f"**{cell(self.caption)}**", ""]
        lines.append("| " + " | ".join(cell(h) for h in self.headers) + " |")
        lines.append("| " + " | ".join(rule[a] for a in self.align) + " |")
        for row in self.rows:
            lines.append("| " + " | ".join(cell(c) for c in row) + " |")
        for row in self.footer:
            lines.append("| " + " | ".join(f"**{cell(c)}**" if c else "" for c in row) + " |")
        if self.notes:
            lines.append("")
            lines += ["- " + n for n in self.notes]
        return "\n".join(lines)

    def to_latex(self, *, float_env: bool = True) -> str:
        r"""A booktabs ``tabular``; in a ``table`` float with caption unless ``float_env=False``.

        Needs ``\usepackage{booktabs}`` in the document.
        """
        body = [
            r"\begin{tabular}{" + self.align + "}",
            r"\toprule",
            " & ".join(latex_text(h) for h in self.headers) + r" \\",
            r"\midrule",
        ]
        body += [" & ".join(latex_text(c) for c in row) + r" \\" for row in self.rows]
        if self.footer:
            body.append(r"\midrule")
            body += [" & ".join(latex_text(c) for c in row) + r" \\" for row in self.footer]
        body += [r"\bottomrule", r"\end{tabular}"]
        notes = [r"\par\smallskip{\footnotesize " + latex_text(n) + "}" for n in self.notes]
        if not float_env:
            return "\n".join(body + notes)
        head = [r"\begin{table}[htbp]", r"\centering"]
        if self.caption:
            head.append(r"\caption{" + latex_text(self.caption) + "}")
        return "\n".join(head + body + notes + [r"\end{table}"])

    def to_text(self) -> str:
        """Aligned columns for a terminal (monospace)."""
        grid = [self.headers, *self.rows, *self.footer]
        widths = [max(len(str(r[i])) for r in grid) for i in range(len(self.headers))]

        def line(row: tuple[str, ...]) -> str:
            cells = []
            for text, w, a in zip(row, widths, self.align, strict=True):
                s = str(text)
                cells.append(s.ljust(w) if a == "l" else s.rjust(w) if a == "r" else s.center(w))
            return "  ".join(cells).rstrip()

        rule = "  ".join("-" * w for w in widths)
        lines = [self.caption] if self.caption else []
        lines += [line(self.headers), rule]
        lines += [line(r) for r in self.rows]
        if self.footer:
            lines.append(rule)
            lines += [line(r) for r in self.footer]
        lines += list(self.notes)
        return "\n".join(lines)


def _html_row(cells: tuple[str, ...], align: str, tag: str) -> str:
    side = {"l": "left", "r": "right", "c": "center"}
    return "<tr>" + "".join(
        f'<{tag} style="text-align: {side[a]}">{html.escape(str(c))}</{tag}>'
        for c, a in zip(cells, align, strict=True)
    ) + "</tr>"


def to_html(table: Table) -> str:
    """An HTML ``<table>`` (caption, header, body, footer rows in bold) and its notes.

    Text is escaped; ``$…$`` math is left for the notebook's MathJax.

    Examples
    --------
    >>> t = Table(("source", "output"), (("$V_{a}$ <1>", "2 mV"),), "lr", "Budget")
    >>> print(to_html(t))  # doctest: +ELLIPSIS
    <table>
    <caption>Budget</caption>
    <thead><tr><th style="text-align: left">source</th>...</thead>
    <tbody>
    <tr><td style="text-align: left">$V_{a}$ &lt;1&gt;</td>...</tr>
    </tbody>
    </table>
    """
    lines = ["<table>"]
    if table.caption:
        lines.append(f"<caption>{html.escape(table.caption)}</caption>")
    lines.append("<thead>" + _html_row(table.headers, table.align, "th") + "</thead>")
    lines += ["<tbody>", *(_html_row(r, table.align, "td") for r in table.rows), "</tbody>"]
    if table.footer:
        lines += ["<tfoot>", *(_html_row(r, table.align, "th") for r in table.footer),
                  "</tfoot>"]  # fmt: skip
    lines.append("</table>")
    if table.notes:
        lines.append("<ul>" + "".join(f"<li>{html.escape(n)}</li>" for n in table.notes)
                     + "</ul>")  # fmt: skip
    return "\n".join(lines)


def math_label(name: str, label: str | None = None) -> str:
    r"""A table label with its symbol written as ``Result`` writes it, in ``$…$`` math.

    ``name`` is a symbol's name (``U1.Vos``, ``R1``); a label that ends with
    the symbol's own short name (``U1 offset voltage Vos``) gets that word
    replaced, another label gets the symbol appended. Names that are no symbol
    (``gain: open-loop``) leave the label as it is.

    Examples
    --------
    >>> print(math_label("U1.Vos", "U1 offset voltage Vos"))
    U1 offset voltage $V_{\mathrm{OS},\mathrm{U1}}$
    >>> print(math_label("U1.dVs", "U1 supply change dVs/PSRR"))
    U1 supply change $\Delta V_{\mathrm{S},\mathrm{U1}}$/PSRR
    >>> print(math_label("U1.A"))
    $A_{\mathrm{U1}}$
    >>> math_label("gain: open-loop", "finite open-loop gain")
    'finite open-loop gain'
    """
    owner, dot, what = name.partition(".")
    if (dot and what not in SYMBOLS) or (not dot and not name.replace("_", "").isalnum()):
        return label if label is not None else name
    math = "$" + latex_name(sp.Symbol(name)) + "$"
    if label is None:
        return math
    head, _, last = label.rpartition(" ")
    word, slash, rest = last.partition("/")
    if word == (what if dot else owner):
        return f"{head} {math}{slash}{rest}".lstrip()
    return f"{label} ({math})"


def with_math(table: Table, names: Mapping[str, str]) -> Table:
    """``table`` with each header or body cell that is a key of ``names`` replaced by its value."""

    def cells(row: tuple[str, ...]) -> tuple[str, ...]:
        return tuple(names.get(c, c) for c in row)

    return replace(table, headers=cells(table.headers), rows=tuple(cells(r) for r in table.rows))
