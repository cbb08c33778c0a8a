"""Dominant-terms benchmark: kept and dropped monomials, the bound and the time.

Run ``python tests/benchmarks/bench_dominant.py`` (not part of the test run). The
R-2R DAC and the k×k resistor mesh of ``bench_circuits.py`` (finite gain, every
component symbolic) are derived once; then each chosen coefficient is reduced to
its dominant terms at invented nominal values (R = 10 kΩ, 2R = 20 kΩ, A = 10⁵)
within ``--error`` (default 1 %). Prints a Markdown table: monomials of the exact
numerator and denominator, monomials kept and dropped, the stated bound, the exact
relative error at the nominal point, the size of the printed form and the time.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import sympy as sp

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_circuits import r2r_dac, resistor_mesh  # the shared circuits

from opsym.analyses.dominant import dominant_form, part_sizes

CASES = {
    "dac6": (lambda: r2r_dac(6), ("U1.Ib-", "B5", "B0")),
    "dac8": (lambda: r2r_dac(8), ("U1.Ib-", "B7", "B0")),
    "mesh3": (lambda: resistor_mesh(3), ("Vin", "U1.Vos", "U1.Ib-")),
}


def _nominal(symbols) -> dict:
    out = {}
    for x in symbols:
        name = str(x)
        if name.endswith(".A"):
            out[x] = 100_000
        elif name.startswith("R2_") or name == "Rt":
            out[x] = 20_000
        else:
            out[x] = 10_000
    return out


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--error", type=float, default=0.01)
    parser.add_argument("--cases", nargs="*", default=list(CASES))
    args = parser.parse_args()
    print("| case | source | exact (num/den) | kept | dropped | bound | at nominal | "
          "shown (ops) | derive s | dominant s |")
    print("| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |")
    for case in args.cases:
        build, sources = CASES[case]
        c = build()
        t0 = time.perf_counter()
        res = c.analyze("out")
        derive = time.perf_counter() - t0
        for name in sources:
            coeff = res.compact_coefficient(name)
            n, m = part_sizes(coeff)
            t0 = time.perf_counter()
            d = dominant_form(coeff, _nominal(coeff.free_symbols), args.error)
            took = time.perf_counter() - t0
            actual = "—" if d.actual is None else f"{100 * d.actual:.3g} %"
            print(f"| {case} | {name} | {n}/{m} | {d.kept} | {d.dropped} | {d.percent} | "
                  f"{actual} | {sp.count_ops(d.expression)} | {derive:.1f} | {took:.1f} |")


if __name__ == "__main__":
    main()
