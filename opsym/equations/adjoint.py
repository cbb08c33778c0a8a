"""One adjoint solve gives the output coefficient of every source at once.

With ``M·x = Σ_s s·b_s`` and the output ``y = cᵀx``, the coefficient of source
``s`` is ``cᵀM⁻¹b_s = zᵀb_s`` where ``Mᵀz = c``. So the transposed system is
solved once, block by block in block-triangular order, and every coefficient is
a short dot product with ``z``. Each block is solved exactly on its own; what
flows between blocks stays a product of the blocks' factored results, never
expanded — a cascade's coefficient is the product of its stage factors.

Examples
--------
>>> import opsym, sympy as sp
>>> from opsym.equations.mna import build_equations
>>> from opsym.equations.adjoint import solve_adjoint
>>> c = opsym.Circuit()
>>> c.voltage_source("Vin", "in", "0")
>>> c.resistor("R1", "in", "n")
>>> c.resistor("R2", "n", "out")
>>> c.opamp("U1", plus="0", minus="n", out="out", bias=False)
>>> eqs = build_equations(c)
>>> z = solve_adjoint(eqs, {eqs.index["V(out)"]: sp.S.One})
>>> z[3]  # the coefficient of Vin: its only stamp is row 3 with weight 1
-R2/R1
"""

from __future__ import annotations

from collections.abc import Callable, Hashable, Mapping

import sympy as sp

from ..errors import SingularCircuitError
from .mna import NodalEquations
from .sparse import SingularBlock, solve_block
from .structure import StructurallySingular, block_order

__all__ = ["product", "solve_adjoint"]

Progress = Callable[[int, int, str], None]


def solve_adjoint(
    eqs: NodalEquations,
    output: Mapping[int, sp.Expr],
    progress: Progress | None = None,
    method: str | None = None,
    nest_terms: int | None = None,
) -> list[sp.Expr]:
    """Solve ``Mᵀz = c`` where ``c`` has entries ``output`` (unknown index → weight).

    Returns ``z`` indexed by the rows (equations) of ``M``. ``method`` and
    ``nest_terms`` choose how each block is eliminated (see
    :func:`~opsym.equations.sparse.solve_block`); ``progress`` also hears
    every pivot of a large block.
    """
    n = len(eqs.unknowns)
    transposed: list[dict[int, sp.Expr]] = [{} for _ in range(n)]
    for r, row in enumerate(eqs.rows):
        for u, v in row.items():
            transposed[u][r] = v
    try:
        blocks, row_of_col = block_order(transposed, n)
    except StructurallySingular as err:
        raise _structural_error(eqs, err) from None
    z: list[sp.Expr] = [sp.S.Zero] * n
    for done, block in enumerate(blocks, start=1):
        members = set(block)
        matrix: dict[int, dict[int, sp.Expr]] = {}
        rhs: dict[int, dict[Hashable, sp.Expr]] = {}
        coupling: dict[Hashable, sp.Expr] = {}
        for r in block:
            u = row_of_col[r]
            matrix[u] = {rr: v for rr, v in transposed[u].items() if rr in members}
            rhs[u] = {}
            weight = output.get(u, 0)
            if weight != 0:
                rhs[u]["c"] = sp.Integer(weight) if isinstance(weight, int) else weight
            known = [
                product(_together(v), z[rr])
                for rr, v in transposed[u].items()
                if rr not in members and z[rr] != 0
            ]
            if known:
                rhs[u][u] = sp.S.One
                coupling[u] = product(sp.S.NegativeOne, sp.Add(*known))
        try:
            # Undriven blocks are eliminated too: a singular part of the circuit is an
            # error whichever output is asked for.
            solution = solve_block(matrix, rhs, block, method, progress, nest_terms)
        except SingularBlock:
            raise _block_error(eqs, block) from None
        if not any(rhs.values()):
            continue  # nothing drives this block: its z entries stay zero
        for r in block:
            parts = [
                y if key == "c" else product(y, coupling[key]) for key, y in solution[r].items()
            ]
            z[r] = sp.Add(*parts)
        if progress is not None:
            progress(done, len(blocks), f"block of {len(block)} equation(s)")
    return z


#: Products longer than this many factors are nested rather than flattened.
_NEST_AT = 8


def product(a: sp.Expr, b: sp.Expr) -> sp.Expr:
    """``a·b``, nested instead of flattened once it is long.

    A flattened product copies and re-sorts all its factors, so building a
    cascade's coefficients one stage at a time would cost quadratic time and
    memory; a nested product shares the downstream factor and stays linear.

    Examples
    --------
    >>> import sympy as sp
    >>> x, y = sp.symbols("x y")
    >>> product(x, y)
    x*y
    """
    if a == 0 or b == 0:
        return sp.S.Zero
    if a == 1:
        return b
    if b == 1:
        return a
    if _length(a) + _length(b) > _NEST_AT:
        return sp.Mul(a, b, evaluate=False)
    return a * b


def _length(e: sp.Expr) -> int:
    """Factor count of a product; a nested (unevaluated) product counts as long."""
    if not e.is_Mul:
        return 1
    if any(arg.is_Mul for arg in e.args):
        return _NEST_AT + 1
    return len(e.args)


def _together(entry: sp.Expr) -> sp.Expr:
    """A coupling entry over one denominator: ``1/R1 + 1/R2`` becomes ``(R1 + R2)/(R1*R2)``.

    Not factored: factoring is presentation, done when a coefficient is shown.
    """
    return sp.together(entry) if isinstance(entry, sp.Add) else entry


def _elements_of(eqs: NodalEquations, rows) -> str:
    names: list[str] = []
    for r in rows:
        for name in eqs.row_elements[r]:
            if name not in names:
                names.append(name)
    return ", ".join(names) if names else "(none)"


def _structural_error(eqs: NodalEquations, err: StructurallySingular) -> SingularCircuitError:
    unknowns = ", ".join(eqs.unknowns[u] for u in err.rows)
    return SingularCircuitError(
        f"the circuit equations cannot determine {unknowns}; the elements involved are "
        f"{_elements_of(eqs, err.cols)}. Look for a node held only by op-amp inputs, an "
        "output with nothing to drive, or a loop of sources, and add the missing connection"
    )


def _block_error(eqs: NodalEquations, block: list[int]) -> SingularCircuitError:
    labels = "; ".join(eqs.row_labels[r] for r in block)
    return SingularCircuitError(
        f"the circuit has no unique solution: the equations ({labels}) are dependent. "
        f"Elements involved: {_elements_of(eqs, block)}. Check for an op-amp whose feedback "
        "network cannot set its inputs, or values that make a bridge exactly degenerate"
    )
