"""Solver benchmark: opsym against plain ``sympy.solve`` on the same nodal equations.

Run ``python tests/benchmarks/bench_solver.py`` (not part of the test run). Every
measurement runs in a fresh subprocess so that its peak memory (max RSS) is its
own; ``sympy.solve`` gets a time limit. Prints a Markdown table.

Options: ``--limit SECONDS`` (default 120) for the plain solve, ``--quick`` for a
short run, ``--stages 16 64`` to choose the cascade sizes.
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


def _circuit(name: str):
    from bench_circuits import instrumentation_amplifier, inverting_cascade

    if name == "inamp":
        return instrumentation_amplifier(), "out"
    stages = int(name.removeprefix("cascade"))
    return inverting_cascade(stages), f"s{stages}"


def _run_one(name: str, method: str) -> dict:
    import sympy as sp

    circuit, out = _circuit(name)
    _warm_up(method)  # one-time import and cache costs, paid by both methods alike
    t0 = time.perf_counter()
    if method == "opsym":
        res = circuit.analyze(out)
        terms = dict(res.terms)
        count = len(terms)
    else:
        from opsym.equations.mna import build_equations

        eqs = build_equations(circuit)
        x = sp.symbols(f"x0:{len(eqs.unknowns)}")
        m, b = eqs.matrix(), eqs.rhs()
        equations = [sp.Eq((m.row(i) * sp.Matrix(x))[0], b[i]) for i in range(len(x))]
        sol = sp.solve(equations, x, dict=True)
        count = len(sol)
    elapsed = time.perf_counter() - t0
    rss_kib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    unknowns = len(_unknowns(circuit))
    return {"time": elapsed, "rss_mb": rss_kib / 1024, "unknowns": unknowns, "count": count}


def _warm_up(method: str) -> None:
    import sympy as sp
    from bench_circuits import inverting_cascade

    from opsym.equations.mna import build_equations

    tiny = inverting_cascade(1)
    if method == "opsym":
        dict(tiny.analyze("s1").terms)
    else:
        eqs = build_equations(tiny)
        x = sp.symbols(f"x0:{len(eqs.unknowns)}")
        m, b = eqs.matrix(), eqs.rhs()
        sp.solve([sp.Eq((m.row(i) * sp.Matrix(x))[0], b[i]) for i in range(len(x))], x)


def _unknowns(circuit):
    from opsym.equations.mna import build_equations

    return build_equations(circuit).unknowns


def _measure(name: str, method: str, limit: float) -> dict | None:
    cmd = [sys.executable, __file__, "--one", name, method]
    try:
        done = subprocess.run(cmd, capture_output=True, text=True, timeout=limit, check=True)
    except subprocess.TimeoutExpired:
        return None
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--one", nargs=2, metavar=("CASE", "METHOD"), help=argparse.SUPPRESS)
    ap.add_argument("--limit", type=float, default=120.0, help="time limit of sympy.solve (s)")
    ap.add_argument("--stages", type=int, nargs="*", default=[4, 6, 16, 32, 64])
    ap.add_argument("--quick", action="store_true", help="few cases, 20 s limit")
    args = ap.parse_args()
    if args.one:
        print(json.dumps(_run_one(*args.one)))
        return 0
    if args.quick:
        args.stages, args.limit = [4, 16], 20.0
    cases = [f"cascade{n}" for n in args.stages] + ["inamp"]
    print(
        f"Machine: {platform.machine()}, {os.cpu_count()} cores, Python "
        f"{platform.python_version()}; sympy.solve limit {args.limit:.0f} s\n"
    )
    print(
        "| circuit | unknowns | opsym time | sympy.solve time | ratio | opsym peak MB | "
        "sympy.solve peak MB |"
    )
    print("|---|---:|---:|---:|---:|---:|---:|")
    for case in cases:
        ours = _measure(case, "opsym", 600)
        plain = _measure(case, "solve", args.limit) if ours else None
        label = (
            "3-op-amp in-amp, finite A"
            if case == "inamp"
            else f"inverting cascade, {case.removeprefix('cascade')} stages, finite A"
        )
        if ours is None:
            print(f"| {label} | | > 600 s | | | | |")
            continue
        if plain is None:
            ptime, pmem = f"> {args.limit:.0f} s", "–"
            ratio = f"> {args.limit / ours['time']:.0f}×"
        else:
            ptime = f"{plain['time']:.2f} s"
            ratio = f"{plain['time'] / ours['time']:.0f}×"
            pmem = f"{plain['rss_mb']:.0f}"
        print(
            f"| {label} | {ours['unknowns']} | {ours['time']:.2f} s | {ptime} | {ratio} | "
            f"{ours['rss_mb']:.0f} | {pmem} |",
            flush=True,
        )
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
