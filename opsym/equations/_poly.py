"""Multivariate integer polynomials for the exact solver: one small interface, two engines.

The elimination needs ring arithmetic (``+``, ``−``, ``·`` and ``== 0`` on the
values themselves) and four functions: :meth:`PolyEngine.exquo` (exact
division), :meth:`PolyEngine.gcd`, :meth:`PolyEngine.size` and conversion to and
from SymPy's ``PolyElement``. :func:`engine` returns python-flint's
``fmpz_mpoly`` when the optional package is installed (``pip install
opsym[fast]``) and SymPy's own sparse polynomials otherwise. Both convert
results back to the same SymPy ring, so the forms opsym shows do not depend on
which engine ran.

Examples
--------
>>> import sympy as sp
>>> from sympy.polys.rings import ring
>>> R, x, y = ring("x y", sp.ZZ)
>>> eng = engine(R, "sympy")
>>> a, b = eng.native((x + y) ** 2 * x), eng.native((x + y) * y)
>>> eng.back(eng.gcd(a, b))
x + y
>>> eng.back(eng.exquo(a, eng.native(x + y)))
x**2 + x*y
"""

from __future__ import annotations

from typing import Any

__all__ = ["PolyEngine", "engine", "flint_available"]

_flint: Any
try:  # optional: python-flint, the fast engine
    import flint as _flint
except ImportError:  # pragma: no cover - depends on the environment
    _flint = None


def flint_available() -> bool:
    """True when python-flint is installed and used by default."""
    return _flint is not None


class PolyEngine:
    """SymPy's sparse polynomials over ``ZZ``: the reference engine, always available."""

    name = "sympy"

    def __init__(self, ring: Any) -> None:
        self.ring = ring

    def native(self, p: Any) -> Any:
        """A SymPy ``PolyElement`` of :attr:`ring` in this engine's type."""
        return p

    def back(self, p: Any) -> Any:
        """This engine's polynomial as a ``PolyElement`` of :attr:`ring`."""
        return p

    def exquo(self, a: Any, b: Any) -> Any:
        """``a/b``, known to be exact."""
        return a.exquo(b)

    def gcd(self, a: Any, b: Any) -> Any:
        """Greatest common divisor (up to sign).

        SymPy's heuristic gcd recurses once per variable and grows slow with
        many; most solver gcds are trivial, which :func:`_coprime` proves cheaply.
        """
        (ma, a), (mb, b) = _split_monomial(a), _split_monomial(b)
        common = self.ring.from_dict(
            {tuple(map(min, ma, mb)): self.ring.domain.gcd(a.content(), b.content())}
        )
        if _coprime(a, b):
            return common
        return common * a.primitive()[1].gcd(b.primitive()[1])

    def size(self, p: Any) -> int:
        """Number of terms: the Markowitz tie-break."""
        return len(p)


class _FlintEngine(PolyEngine):
    """python-flint's ``fmpz_mpoly``: the same results, computed in C."""

    name = "flint"

    def __init__(self, ring: Any) -> None:
        super().__init__(ring)
        assert _flint is not None
        names = tuple(f"x{i}" for i in range(max(ring.ngens, 1)))
        self.ctx = _flint.fmpz_mpoly_ctx.get(names, "lex")
        self._pad = (0,) if ring.ngens == 0 else ()

    def native(self, p: Any) -> Any:
        return self.ctx.from_dict({m + self._pad: int(c) for m, c in p.items()})

    def back(self, p: Any) -> Any:
        n = self.ring.ngens
        return self.ring.from_dict(
            {m[:n]: self.ring.domain(int(c)) for m, c in p.to_dict().items()}
        )

    def exquo(self, a: Any, b: Any) -> Any:
        return a / b  # exact division; raises if it is not

    def gcd(self, a: Any, b: Any) -> Any:
        return a.gcd(b)

    def size(self, p: Any) -> int:
        return len(p)


def _split_monomial(p: Any) -> tuple[tuple[int, ...], Any]:
    """``p = x**m · q`` with ``q`` free of monomial factors: ``(m, q)``."""
    m = tuple(min(e) for e in zip(*p.keys(), strict=True))
    if not any(m):
        return m, p
    return m, p.ring.from_dict(
        {tuple(x - y for x, y in zip(k, m, strict=True)): c for k, c in p.items()}
    )


def _coprime(a: Any, b: Any) -> bool:
    """True when ``gcd(a, b)`` is proved free of every variable (False: not proved).

    For each variable ``x`` of both, the others are set to fixed integers that
    keep both leading coefficients in ``x`` nonzero; the true gcd's image then
    divides both images with its full degree in ``x``, so images with a
    constant gcd prove that the gcd does not contain ``x``.
    """
    from sympy import ZZ
    from sympy.polys.euclidtools import dup_gcd

    shared = [i for i in range(a.ring.ngens) if a.degree(i) > 0 and b.degree(i) > 0]
    if not shared:
        return True
    point = [3 + 2 * k for k in range(a.ring.ngens)]  # odd, distinct: rarely a root
    for i in shared:
        images = [_image(p, i, point) for p in (a, b)]
        if any(img is None for img in images):
            return False
        if len(dup_gcd(images[0], images[1], ZZ)) > 1:
            return False
    return True


def _image(p: Any, i: int, point: list[int]) -> list | None:
    """``p`` with every variable but ``x_i`` set to ``point``: dense in ``x_i``, or None."""
    coeffs: dict[int, int] = {}
    for monom, c in p.items():
        value = int(c)
        for j, e in enumerate(monom):
            if e and j != i:
                value *= point[j] ** e
        coeffs[monom[i]] = coeffs.get(monom[i], 0) + value
    top = max(coeffs)
    if coeffs[top] == 0:  # the leading coefficient vanished here: degree not kept
        return None
    from sympy import ZZ

    return [ZZ(coeffs.get(k, 0)) for k in range(top, -1, -1)]


def engine(ring: Any, name: str | None = None) -> PolyEngine:
    """The polynomial engine for ``ring`` (a SymPy ``PolyRing`` over ``ZZ``).

    ``name`` is ``"flint"``, ``"sympy"`` or ``None`` (flint when installed).
    """
    if name is None:
        name = "flint" if _flint is not None else "sympy"
    if name == "flint":
        if _flint is None:
            raise ImportError("python-flint is not installed (pip install opsym[fast])")
        return _FlintEngine(ring)
    if name != "sympy":
        raise ValueError(f"unknown polynomial engine {name!r}; use 'flint' or 'sympy'")
    return PolyEngine(ring)
