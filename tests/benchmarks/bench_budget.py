"""Budget benchmark: solve, error budget, tolerance study and temperature sweep of cascades.

Run ``python tests/benchmarks/bench_budget.py`` (not part of the test run; not a
timed test). Each cascade (``bench_circuits.inverting_cascade``, finite gain,
Vos and Ib± on every op-amp, invented values) is solved once; then the budget
(with 0.1 % resistors, so the gain-tolerance row is in), a tolerance study of the
signal gain (first-order bound and 2000 Monte Carlo draws) and a sweep from −40
to 85 °C in 5 °C steps are timed. Prints a Markdown table.

Options: ``--stages 4 16`` to choose the cascade sizes (default 4 16 20 40 64).
"""

from __future__ import annotations

import argparse
import platform
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))


def _values(stages: int) -> dict[str, float]:
    values = {"Vin": 1e-3}
    for k in range(1, stages + 1):
        values[f"R1_{k}"], values[f"R2_{k}"], values[f"R3_{k}"] = 10e3, 10e3, 5e3
    return values


def measure(stages: int) -> dict[str, float]:
    """Seconds for each phase of one cascade's numeric study."""
    from bench_circuits import inverting_cascade

    from opsym.numeric.params import opamp_parameters, resistor_parameters
    from opsym.study.budget import error_budget
    from opsym.study.temperature import budget_over_temperature
    from opsym.study.tolerance import tolerance_analysis

    circuit = inverting_cascade(stages)
    values = _values(stages)
    amps = {f"U{k}": opamp_parameters("generic precision bipolar") for k in range(1, stages + 1)}
    grade = resistor_parameters("thin film 0.1%")
    out: dict[str, float] = {}
    t0 = time.perf_counter()
    res = circuit.analyze(f"s{stages}")
    out["solve"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    budget = error_budget(res, values, amps, resistors=grade)
    out["budget"] = time.perf_counter() - t0
    out["worst case"] = budget.worst_case
    t0 = time.perf_counter()
    gains = {f"U{k}.A": 1e6 for k in range(1, stages + 1)}  # the study needs every symbol
    tolerance_analysis(res, {**values, **gains}, grade, samples=2000, seed=1)
    out["tolerance"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    budget_over_temperature(res, values, amps, resistors=grade, step=5)
    out["temperature"] = time.perf_counter() - t0
    return out


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--stages", type=int, nargs="+", default=[4, 16, 20, 40, 64])
    args = parser.parse_args(argv)
    import opsym  # noqa: F401  (import cost outside the timings)

    print(f"python {platform.python_version()}, {platform.machine()}\n")
    print("| stages | solve (s) | budget (s) | tolerance study (s) | temperature sweep (s) "
          "| worst case (V) |")  # fmt: skip
    print("|---:|---:|---:|---:|---:|---:|")
    for n in args.stages:
        m = measure(n)
        print(f"| {n} | {m['solve']:.3f} | {m['budget']:.3f} | {m['tolerance']:.3f} | "
              f"{m['temperature']:.3f} | {m['worst case']:.4g} |", flush=True)  # fmt: skip


if __name__ == "__main__":
    main()
