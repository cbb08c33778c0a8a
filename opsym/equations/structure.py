"""Structure before algebra: block-triangular order of a sparse square system.

A maximum bipartite matching (rows to columns) puts a structural nonzero on
every diagonal position; the strongly connected components of the resulting
dependency graph are the diagonal blocks, found here in an order in which each
block depends only on blocks before it (Duff and Reid's method: matching, then
Tarjan's algorithm). Both routines are iterative, so deep cascades do not hit
Python's recursion limit.

Examples
--------
>>> from opsym.equations.structure import block_order
>>> rows = [{0: 1, 1: 1}, {1: 1}, {1: 1, 2: 1}]
>>> block_order(rows, 3)
([[1], [0], [2]], [0, 1, 2])
"""

from __future__ import annotations

from collections.abc import Sequence

__all__ = ["StructurallySingular", "block_order", "column_index", "match_rows"]


class StructurallySingular(Exception):
    """No perfect matching: ``rows`` cannot be matched to distinct columns."""

    def __init__(self, rows: list[int], cols: list[int]) -> None:
        super().__init__(f"unmatched rows {rows}, columns {cols}")
        self.rows = rows
        self.cols = cols


def column_index(rows: dict[int, dict[int, object]], cols: Sequence[int]) -> dict[int, set[int]]:
    """For each column of ``cols``, the rows that hold an entry in it (the pivot search's view).

    Examples
    --------
    >>> column_index({0: {0: 1, 1: 1}, 1: {1: 1}}, [0, 1])
    {0: {0}, 1: {0, 1}}
    """
    found: dict[int, set[int]] = {c: set() for c in cols}
    for r, row in rows.items():
        for c in row:
            found[c].add(r)
    return found


def match_rows(rows: Sequence[dict[int, object]], n: int) -> list[int]:
    """Match each row to a distinct column holding one of its entries.

    Returns ``col_of_row``. Raises :class:`StructurallySingular` when the
    sparsity pattern admits no perfect matching (Kuhn's augmenting paths,
    after a cheap greedy start).
    """
    row_of_col = [-1] * n
    col_of_row = [-1] * len(rows)
    for r, entries in enumerate(rows):  # greedy pass: most rows match at once
        for c in entries:
            if row_of_col[c] < 0:
                row_of_col[c] = r
                col_of_row[r] = c
                break
    for root in range(len(rows)):
        if col_of_row[root] >= 0:
            continue
        # Depth-first search for an augmenting path from `root`.
        parent_col: dict[int, int] = {}
        stack = [(root, iter(rows[root]))]
        visited: set[int] = set()
        found = -1
        while stack and found < 0:
            r, it = stack[-1]
            for c in it:
                if c in visited:
                    continue
                visited.add(c)
                parent_col[c] = r
                if row_of_col[c] < 0:
                    found = c
                    break
                stack.append((row_of_col[c], iter(rows[row_of_col[c]])))
                break
            else:
                stack.pop()
        if found < 0:
            unmatched = [r for r in range(len(rows)) if col_of_row[r] < 0]
            free = [c for c in range(n) if row_of_col[c] < 0]
            raise StructurallySingular(unmatched, free)
        c = found
        while True:  # flip the path
            r = parent_col[c]
            previous = col_of_row[r]
            col_of_row[r] = c
            row_of_col[c] = r
            if r == root:
                break
            c = previous
    return col_of_row


def block_order(rows: Sequence[dict[int, object]], n: int) -> tuple[list[list[int]], list[int]]:
    """Diagonal blocks of ``rows`` in solving order, and the row matched to each column.

    Returns ``(blocks, row_of_col)``: each block is a list of columns whose
    unknowns must be solved together; a block's equations involve only its
    own columns and those of earlier blocks.
    """
    col_of_row = match_rows(rows, n)
    row_of_col = [0] * n
    for r, c in enumerate(col_of_row):
        row_of_col[c] = r
    # Column c "depends on" column d if the row matched to c has an entry in d.
    succ = [[d for d in rows[row_of_col[c]] if d != c] for c in range(n)]
    return _tarjan(succ), row_of_col


def _tarjan(succ: list[list[int]]) -> list[list[int]]:
    """Strongly connected components, each after every component it reaches."""
    n = len(succ)
    index = [-1] * n
    low = [0] * n
    on_stack = [False] * n
    stack: list[int] = []
    components: list[list[int]] = []
    counter = 0
    for start in range(n):
        if index[start] >= 0:
            continue
        work = [(start, 0)]
        while work:
            v, i = work.pop()
            if i == 0:
                index[v] = low[v] = counter
                counter += 1
                stack.append(v)
                on_stack[v] = True
            recurse = False
            for j in range(i, len(succ[v])):
                w = succ[v][j]
                if index[w] < 0:
                    work.append((v, j + 1))
                    work.append((w, 0))
                    recurse = True
                    break
                if on_stack[w]:
                    low[v] = min(low[v], index[w])
            if recurse:
                continue
            if low[v] == index[v]:
                comp = []
                while True:
                    w = stack.pop()
                    on_stack[w] = False
                    comp.append(w)
                    if w == v:
                        break
                components.append(sorted(comp))
            if work:
                parent = work[-1][0]
                low[parent] = min(low[parent], low[v])
    return components
