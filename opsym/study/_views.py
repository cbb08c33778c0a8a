"""One place for the renderings every numeric study offers, notebooks included."""

from __future__ import annotations

from typing import Any

from ..output.tables import to_html, with_math

__all__ = ["TableViews"]


class TableViews:
    """``to_markdown``, ``to_latex``, ``to_text`` and notebook views for a class with ``table()``.

    In Jupyter the study shows as its table (``_repr_html_``, ``_repr_markdown_``),
    symbols written in ``$…$`` math as :class:`~opsym.analyses.result.Result`
    writes them (``U1.Vos`` as :math:`V_{\\mathrm{OS},\\mathrm{U1}}`): the cells
    named by :meth:`_math_names`.
    """

    def table(self) -> Any:  # pragma: no cover - every user defines it
        raise NotImplementedError

    def _math_names(self) -> dict[str, str]:
        """Cell text → the same text with its symbol in LaTeX math (none by default)."""
        return {}

    def _notebook_table(self) -> Any:
        return with_math(self.table(), self._math_names())

    def to_markdown(self) -> str:
        """Markdown table."""
        return self.table().to_markdown()

    def to_latex(self, *, float_env: bool = True) -> str:
        """LaTeX booktabs table, in a ``table`` float unless ``float_env=False``."""
        return self.table().to_latex(float_env=float_env)

    def to_text(self) -> str:
        """Aligned plain-text table for a terminal."""
        return self.table().to_text()

    def _repr_html_(self) -> str:
        return to_html(self._notebook_table())

    def _repr_markdown_(self) -> str:
        return self._notebook_table().to_markdown()
