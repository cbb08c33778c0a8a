"""Dense-network benchmark: opsym against plain fraction-free solves of the same equations.

Run ``python tests/benchmarks/bench_dense.py`` (not part of the test run). The
circuits form one large block each, where block-triangular order cannot help:
an R-2R DAC and a summing amplifier (finite gain), a k×k resistor mesh (finite
gain) and a ring of ideal integrators in ``s``; every component is symbolic.
Sallen–Key chains in ``s`` and the 16-stage inverting cascade, which block
order does help, are timed against the same references (their other methods
are in ``bench_methods.py``).
Each measurement runs in a fresh subprocess with a time limit, in CPU seconds
(``time.process_time``: the machine may be shared). The references
solve the same nodal equations (rows cleared of denominators, every source
switched on): SymPy's ``DomainMatrix.solve_den`` and, when python-flint is
installed, a dense Bareiss elimination on ``fmpz_mpoly``. opsym's time is
``analyze`` and its terms from the circuit on; the references' time starts at
the built equations. The budget column times ``error_budget`` on opsym's
result with every value given (resistors 10 kΩ, 2R legs 20 kΩ, sources 1 V, a
generic op-amp parameter set); the ring, with no DC solution, has none. Blocks
too large to expand come out nested (auxiliaries ``X₁ = …``); the budget
evaluates their definitions forward. Prints a Markdown table.

Options: ``--limit SECONDS`` (default 60), ``--quick`` (small sizes, 20 s),
``--cases dac4 sum16 …`` to choose cases.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

CASES = ["dac4", "dac6", "dac8", "dac12", "dac16", "sum4", "sum16", "sum64"] + [
    "mesh2",
    "mesh3",
    "mesh4",
] + [f"ring{n}" for n in range(2, 9)] + [f"sk{n}" for n in (1, 2, 4, 8)] + ["cascade16"]
QUICK = ["dac4", "sum4", "sum16", "mesh2", "ring2", "ring4"]
METHODS = ("opsym", "solve_den", "flint")


def circuit_of(name: str):
    """``(circuit, output, domain, label)`` of a benchmark case."""
    from bench_circuits import (
        integrator_ring,
        inverting_cascade,
        r2r_dac,
        resistor_mesh,
        sallen_key_chain,
        summer,
    )

    if name.startswith("sk"):
        n = int(name[2:])
        return sallen_key_chain(n), f"o{n}", "s", f"Sallen–Key chain, {n} sections in s, finite A"
    if name.startswith("cascade"):
        n = int(name[7:])
        return inverting_cascade(n), f"s{n}", "dc", f"inverting cascade, {n} stages, finite A"

    if name.startswith("dac"):
        n = int(name[3:])
        return r2r_dac(n), "out", "dc", f"R-2R DAC, {n} bits, finite A"
    if name.startswith("sum"):
        n = int(name[3:])
        return summer(n), "out", "dc", f"summer, {n} inputs, finite A"
    if name.startswith("mesh"):
        k = int(name[4:])
        return resistor_mesh(k), "out", "dc", f"{k}×{k} resistor mesh, finite A"
    n = int(name[4:])
    return integrator_ring(n), f"o{n}", "s", f"ring of {n} integrators in s, ideal"


def polynomial_system(eqs):
    """Rows of ``[M | b]`` each multiplied by the LCM of its denominators."""
    import sympy as sp

    m, b = eqs.matrix(), eqs.rhs()
    rows = []
    for i in range(m.rows):
        row = [sp.together(e) for e in [*m.row(i), b[i]]]
        scale = sp.lcm_list([sp.fraction(e)[1] for e in row])
        rows.append([sp.cancel(e * scale) for e in row])
    return rows


def solve_den(rows) -> None:
    """SymPy's fraction-free ``DomainMatrix.solve_den`` on the cleared system."""
    import sympy as sp
    from sympy.polys.matrices import DomainMatrix

    n = len(rows)
    a = DomainMatrix.from_Matrix(sp.Matrix([r[:n] for r in rows]))
    b = DomainMatrix.from_Matrix(sp.Matrix([r[n:] for r in rows]))
    a, b = a.unify(b)
    if a.domain.is_Field and hasattr(a.domain, "get_ring"):
        a, b = a.convert_to(a.domain.get_ring()), b.convert_to(a.domain.get_ring())
    a.solve_den(b)


def flint_bareiss(rows) -> None:
    """Dense Bareiss with pivot search and fraction-free back substitution (python-flint)."""
    import flint
    import sympy as sp

    gens = sorted(set().union(*(e.free_symbols for r in rows for e in r)), key=str)
    ctx = flint.fmpz_mpoly_ctx.get(tuple(str(g) for g in gens), "lex")

    def convert(e):
        if e == 0:
            return ctx.from_dict({})
        return ctx.from_dict({k: int(v) for k, v in sp.Poly(e, *gens).as_dict().items()})

    a = [[convert(e) for e in r] for r in rows]
    n = len(a)
    prev = ctx.from_dict({(0,) * len(gens): 1})
    for k in range(n):
        p = next((i for i in range(k, n) if a[i][k] != 0), None)
        if p is None:
            raise ArithmeticError("singular")
        a[k], a[p] = a[p], a[k]
        for i in range(k + 1, n):
            for j in range(k + 1, n + 1):
                a[i][j] = (a[k][k] * a[i][j] - a[i][k] * a[k][j]) / prev
            a[i][k] = ctx.from_dict({})
        prev = a[k][k]
    det = prev
    x = [None] * n
    for i in reversed(range(n)):
        acc = det * a[i][n]
        for j in range(i + 1, n):
            acc -= a[i][j] * x[j]
        x[i] = acc / a[i][i]


def budget_values(circuit) -> dict[str, float]:
    """Every component and source a value: 10 kΩ, 20 kΩ for 2R legs, 1 V per source."""
    from opsym.model.elements import OpAmp

    values: dict[str, float] = {}
    for e in circuit.elements:
        if isinstance(e, OpAmp):
            continue
        if e.name.startswith(("R2_", "Rt")):
            values[e.name] = 20e3
        elif e.name.startswith("R"):
            values[e.name] = 10e3
        else:
            values[e.name] = 1.0
    return values


def _run_one(name: str, method: str) -> dict:
    import opsym
    from opsym.equations.mna import build_equations

    circuit, out, domain, _ = circuit_of(name)
    budget = None
    if method == "opsym":
        dict(circuit_of("sum2")[0].analyze("out").terms)  # imports and caches, paid once
        t0 = time.process_time()
        res = circuit.analyze(out, domain=domain)
        dict(res.terms)
        elapsed = time.process_time() - t0
        if domain == "dc":
            sets = {a.name: opsym.opamp_parameters("generic precision bipolar")
                    for a in circuit.opamps}  # fmt: skip
            t1 = time.process_time()
            opsym.error_budget(res, values=budget_values(circuit), opamps=sets)
            budget = time.process_time() - t1
    else:
        eqs = build_equations(circuit, domain=domain)
        t0 = time.process_time()
        rows = polynomial_system(eqs)
        (solve_den if method == "solve_den" else flint_bareiss)(rows)
        elapsed = time.process_time() - t0
    rss_kib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return {"time": elapsed, "budget": budget, "rss_mb": rss_kib / 1024}


def _measure(name: str, method: str, limit: float) -> dict | None:
    cmd = [sys.executable, __file__, "--one", name, method]
    try:
        done = subprocess.run(cmd, capture_output=True, text=True, timeout=limit, check=True)
    except subprocess.TimeoutExpired:
        return None
    return json.loads(done.stdout.strip().splitlines()[-1])


def _has_flint() -> bool:
    try:
        import flint  # noqa: F401
    except ImportError:
        return False
    return True


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--one", nargs=2, metavar=("CASE", "METHOD"), help=argparse.SUPPRESS)
    ap.add_argument("--limit", type=float, default=60.0, help="time limit per case (s)")
    ap.add_argument("--cases", nargs="*", default=CASES)
    ap.add_argument("--quick", action="store_true", help="small cases, 20 s limit")
    args = ap.parse_args()
    if args.one:
        print(json.dumps(_run_one(*args.one)))
        return 0
    if args.quick:
        args.cases, args.limit = QUICK, 20.0
    methods = [m for m in METHODS if m != "flint" or _has_flint()]
    print(
        f"Machine: {platform.machine()}, {os.cpu_count()} cores, Python "
        f"{platform.python_version()}; limit {args.limit:.0f} s per case\n"
    )
    print("| circuit | unknowns | " + " | ".join(methods) + " | opsym budget | opsym peak MB |")
    print("|---|---:|" + "---:|" * len(methods) + "---:|---:|")
    for case in args.cases:
        from opsym.equations.mna import build_equations

        circuit, _, domain, label = circuit_of(case)
        n = len(build_equations(circuit, domain=domain).unknowns)
        cells, peak, budget = [], "–", "–"
        for method in methods:
            got = _measure(case, method, args.limit)
            cells.append(f"> {args.limit:.0f} s" if got is None else f"{got['time']:.2f} s")
            if method == "opsym" and got is not None:
                peak = f"{got['rss_mb']:.0f}"
                budget = "–" if got["budget"] is None else f"{got['budget']:.2f} s"
        row = f"| {label} | {n} | " + " | ".join(cells) + f" | {budget} | {peak} |"
        print(row, flush=True)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
