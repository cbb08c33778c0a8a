"""Presentation at the edge: LaTeX of results, tables, figures and design notes.

:mod:`~opsym.output.tables` (Markdown, LaTeX booktabs, terminal),
:mod:`~opsym.output.figures` (matplotlib, imported only when a figure is drawn),
:mod:`~opsym.output.notes` (a complete design-note section) and
:mod:`~opsym.output.latex` (the superposed output as LaTeX). Importing this
package does not import matplotlib.
"""

from .notes import CAUTION, design_note
from .tables import Table, latex_text

__all__ = ["CAUTION", "Table", "design_note", "latex_text"]
