"""One place for the three renderings every numeric study offers."""

from __future__ import annotations

from typing import Any

__all__ = ["TableViews"]


class TableViews:
    """``to_markdown``, ``to_latex`` and ``to_text`` for a class with a ``table()`` method."""

    def table(self) -> Any:  # pragma: no cover - every user defines it
        raise NotImplementedError

    def to_markdown(self) -> str:
        """Markdown table."""
        return self.table().to_markdown()

    def to_latex(self, *, float_env: bool = True) -> str:
        """LaTeX booktabs table, in a ``table`` float unless ``float_env=False``."""
        return self.table().to_latex(float_env=float_env)

    def to_text(self) -> str:
        """Aligned plain-text table for a terminal."""
        return self.table().to_text()
