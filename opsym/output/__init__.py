"""Presentation at the edge: LaTeX of results, tables, figures and design notes.

:mod:`~opsym.output.tables` (Markdown, LaTeX booktabs, terminal),
:mod:`~opsym.output.figures` (matplotlib, imported only when a figure is drawn),
:mod:`~opsym.output.notes` (a complete design-note section),
:mod:`~opsym.output.document` (a note's content and its Markdown and LaTeX renderers),
:mod:`~opsym.output.sections` (its frequency-response and noise sections),
:mod:`~opsym.output.summary` and :mod:`~opsym.output.report` (what ``opsym report``
prints, draws and writes for a design-file study),
:mod:`~opsym.output.latex` (the superposed output and ``H(s)`` as LaTeX),
:mod:`~opsym.output.laplace` (transfer functions as gain, zeros and poles) and
:mod:`~opsym.output.noise` (noise budgets and the noise sum). Importing this
package does not import matplotlib.
"""

from .notes import CAUTION, design_note
from .sections import FrequencySection, NoiseSection
from .tables import Table, latex_text

__all__ = ["CAUTION", "FrequencySection", "NoiseSection", "Table", "design_note", "latex_text"]
