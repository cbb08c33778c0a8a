"""Frequency and noise benchmark: s-domain solves, noise solves and their numbers.

Run ``python tests/benchmarks/bench_frequency.py`` (not part of the test run). For
cascades of inverting low-pass stages (R1, R2 ∥ C2, R3 to the + pin, single-pole
op-amps), it times the symbolic s-domain solve, the symbolic noise solve, and with
every value fixed the response on 701 frequencies and a noise RMS over 1 Hz–1 MHz.
Prints a Markdown table. ``--stages 1 4 16 64`` chooses the sizes.
"""

from __future__ import annotations

import argparse
import platform
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import opsym


def low_pass_cascade(stages: int) -> opsym.Circuit:
    """``stages`` inverting low-pass stages in a row (invented topology and values)."""
    c = opsym.Circuit(f"{stages}-stage low-pass cascade")
    c.voltage_source("Vin", "s0", "0")
    for k in range(1, stages + 1):
        c.resistor(f"R1_{k}", f"s{k - 1}", f"n{k}")
        c.resistor(f"R2_{k}", f"n{k}", f"s{k}")
        c.capacitor(f"C2_{k}", f"n{k}", f"s{k}")
        c.resistor(f"R3_{k}", f"p{k}", "0")
        c.opamp(f"U{k}", plus=f"p{k}", minus=f"n{k}", out=f"s{k}", gain="pole")
    return c


def values_for(stages: int) -> dict:
    values: dict = {}
    for k in range(1, stages + 1):
        values.update(
            {
                f"R1_{k}": "10k", f"R2_{k}": "10k", f"C2_{k}": "1n", f"R3_{k}": "5k",
                f"U{k}.A0": "100k", f"U{k}.GBW": "1M", f"U{k}.en": "10n", f"U{k}.in": "1p",
            }
        )  # fmt: skip
    return values


def _timed(fn, *args, **kwargs) -> float:
    start = time.perf_counter()
    fn(*args, **kwargs)
    return time.perf_counter() - start


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--stages", type=int, nargs="*", default=[1, 4, 16, 64])
    args = ap.parse_args()
    low_pass_cascade(1).analyze("s1", domain="s")  # warm-up: imports and caches
    f = np.logspace(0, 7, 701)
    print(f"Python {platform.python_version()}, {platform.machine()}\n")
    print(
        "| stages | s-domain solve | noise solve | response, 701 points "
        "| noise RMS, 1 Hz–1 MHz |"
    )
    print("|---:|---:|---:|---:|---:|")
    for n in args.stages:
        c, out = low_pass_cascade(n), f"s{n}"
        t_solve = _timed(c.analyze, out, domain="s")
        t_noise = _timed(c.noise, out)
        vals = values_for(n)
        res = c.analyze(out, domain="s", values=vals)
        t_resp = _timed(res.response, f)
        noise = c.noise(out, values=vals)
        t_rms = _timed(noise.rms, 1, 1e6)
        print(f"| {n} | {t_solve:.2f} s | {t_noise:.2f} s | {t_resp:.2f} s | {t_rms:.2f} s |")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
