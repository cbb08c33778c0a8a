"""Methods benchmark: coefficient, LaTeX, null, sensitivity, gain error and budget on products.

Run ``python tests/benchmarks/bench_methods.py`` (not part of the test run; not a
timed test). The circuits are Sallen–Key low-pass chains of 1, 2, 4 and 8
unity-gain sections in ``s`` (``bench_circuits.sallen_key_chain``: every
component symbolic, finite-gain op-amps with Vos and Ib±) and the 16-stage
inverting cascade at DC (``bench_circuits.inverting_cascade``). Each method is
timed alone on a fresh derivation, in its own subprocess with a time limit, in
CPU seconds (``time.process_time``: the machine may be shared); a case over
the limit shows ``> limit``. Prints a Markdown table.

Options: ``--sections 1 2 4 8``, ``--cascade 16`` (0 to skip), ``--limit 60``,
``--gain pole`` (single-pole op-amps instead of finite gain).
"""

from __future__ import annotations

import argparse
import platform
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

METHODS = ("analyze", "coefficient", "latex", "null", "sensitivity", "gain_error", "budget")


def _case(kind: str, n: int, gain: str = "finite"):
    """The circuit, its output, domain, signal values and the null/sensitivity targets."""
    from bench_circuits import inverting_cascade, sallen_key_chain

    if kind == "sk":
        values: dict[str, float] = {"Vin": 1.0}
        for k in range(1, n + 1):  # invented: 10 kΩ, 10 nF, 4.7 nF
            values |= {f"R1_{k}": 10e3, f"R2_{k}": 10e3, f"C1_{k}": 10e-9, f"C2_{k}": 4.7e-9}
        null = (["U1.Vos", "U1.Ib+"], "R1_1", {"U1.Vos": "1m", "U1.Ib+": "1u"})
        return sallen_key_chain(n, gain), f"o{n}", "s", values, null, "R1_1"
    values = {"Vin": 1e-3}
    for k in range(1, n + 1):
        values |= {f"R1_{k}": 10e3, f"R2_{k}": 10e3, f"R3_{k}": 5e3}
    null = ("U1.Ib", "R3_1", None)
    return inverting_cascade(n, gain), f"s{n}", "dc", values, null, "R2_1"


def run_one(kind: str, n: int, method: str, gain: str = "finite") -> float:
    """CPU seconds of one method on a fresh derivation (``analyze`` itself for "analyze")."""
    from opsym.numeric.params import opamp_parameters
    from opsym.study.budget import error_budget

    circuit, out, domain, values, (null_src, null_by, null_values), comp = _case(kind, n, gain)
    t0 = time.process_time()
    res = circuit.analyze(out, domain=domain)
    if method == "analyze":
        return time.process_time() - t0
    t0 = time.process_time()
    if method == "coefficient":
        res.coefficient("Vin")
    elif method == "latex":
        res.latex()
    elif method == "null":
        res.null(null_src, by=null_by, values=null_values)
    elif method == "sensitivity":
        res.sensitivity(comp)
    elif method == "gain_error":
        res.gain_error()
    elif method == "budget":
        amps = {a.name: opamp_parameters("generic precision bipolar") for a in circuit.opamps}
        error_budget(res, values, amps)
    return time.process_time() - t0


def measure(kind: str, n: int, method: str, limit: float, gain: str = "finite") -> str:
    """One cell: the CPU seconds, or ``> limit`` (or the error's class name)."""
    paths = f"sys.path.insert(0, {str(HERE)!r}); sys.path.insert(0, {str(HERE.parents[1])!r});"
    code = (
        f"import sys; {paths} import opsym, bench_methods as b;"
        f"print(b.run_one({kind!r}, {n}, {method!r}, {gain!r}))"
    )
    try:
        done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                              timeout=limit)  # fmt: skip
    except subprocess.TimeoutExpired:
        return f"> {limit:g}"
    if done.returncode != 0:
        return done.stderr.strip().splitlines()[-1].split(":")[0]
    return f"{float(done.stdout.split()[-1]):.2f}"


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sections", type=int, nargs="*", default=[1, 2, 4, 8])
    parser.add_argument("--cascade", type=int, default=16)
    parser.add_argument("--limit", type=float, default=60.0)
    parser.add_argument("--methods", nargs="+", default=list(METHODS))
    parser.add_argument("--gain", default="finite", help="op-amp gain model: finite or pole")
    args = parser.parse_args(argv)
    print(f"python {platform.python_version()}, {platform.machine()}; CPU seconds, "
          f"limit {args.limit:g} s of wall time per case; gain={args.gain}\n")  # fmt: skip
    print("| circuit | " + " | ".join(args.methods) + " |")
    print("|---|" + "---:|" * len(args.methods))
    cases = [("sk", n, f"Sallen–Key ×{n} (s)") for n in args.sections]
    if args.cascade:
        cases.append(("cascade", args.cascade, f"{args.cascade}-stage inverting cascade (DC)"))
    for kind, n, label in cases:
        cells = [measure(kind, n, m, args.limit, args.gain) for m in args.methods]
        print(f"| {label} | " + " | ".join(cells) + " |", flush=True)


if __name__ == "__main__":
    main()
