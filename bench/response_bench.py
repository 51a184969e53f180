"""Frequency-response benchmark: direct dynamic-stiffness solve against modal superposition.

Run:  .venv/bin/python bench/response_bench.py

2,000 frequency points on a 200-DOF chain. The modal path applies only to proportional damping,
so both paths are timed on the same model with Rayleigh damping (their results must agree), and the
direct path alone on the same model with discrete dashpots (non-proportional). Medians over repeats
and ratios from this one run.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import solver  # noqa: E402
from solver import Anchor, Damper, Damping, Mass, Model, Spring  # noqa: E402


def chain_model(n: int, dashpots: bool) -> Model:
    rng = np.random.default_rng(7)
    masses = tuple(Mass(f"m{i}", float(i + 1), 0.0, float(rng.uniform(0.5, 3.0))) for i in range(n))
    springs = [Spring("s0", "g", "m0", 5e4)]
    springs += [Spring(f"s{i}", f"m{i - 1}", f"m{i}", float(rng.uniform(2e4, 8e4)))
                for i in range(1, n)]
    dampers = ()
    damping = Damping("rayleigh", alpha=0.5, beta=2e-5)
    if dashpots:
        dampers = tuple(Damper(f"c{i}", f"m{i}", "g", 15.0) for i in range(0, n, 10))
        damping = Damping()
    return Model(kind="line", masses=masses, anchors=(Anchor("g", 0.0, 0.0),),
                 springs=tuple(springs), dampers=dampers, damping=damping)


def median_time(fn, repeats=5):
    out = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return statistics.median(out)


def main():
    n, n_freq = 200, 2000
    freqs = np.linspace(0.1, 80.0, n_freq)
    force = {("m199", "x"): 1.0}
    prop = chain_model(n, dashpots=False)
    direct = median_time(lambda: solver.harmonic_response(prop, freqs, force, method="direct"))
    modal = median_time(lambda: solver.harmonic_response(prop, freqs, force, method="modal"))
    A = solver.harmonic_response(prop, freqs, force, method="direct")
    B = solver.harmonic_response(prop, freqs, force, method="modal")
    agree = float(np.max(np.abs(A - B)) / np.max(np.abs(A)))
    dash = chain_model(n, dashpots=True)
    dashed = median_time(lambda: solver.harmonic_response(dash, freqs, force))
    base = median_time(lambda: solver.base_transmissibility(dash, freqs, "x"))
    print(f"{n_freq} frequency points, {n}-DOF chain (median of 5)")
    print(f"  Rayleigh damping, direct solve : {direct:.3f} s")
    print(f"  Rayleigh damping, modal path   : {modal:.3f} s   direct/modal = {direct / modal:.1f}"
          f"   (max relative difference {agree:.1e})")
    print(f"  dashpots, direct solve         : {dashed:.3f} s   ratio to modal path {dashed / modal:.1f}")
    print(f"  dashpots, base transmissibility: {base:.3f} s")


if __name__ == "__main__":
    main()
