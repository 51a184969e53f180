"""Frequency-response benchmark: direct dynamic-stiffness solve against modal superposition.

Run:  .venv/bin/python bench/response_bench.py

2,000 frequency points on a 200-DOF chain. The modal path applies only to proportional damping,
so both paths are timed on the same model with Rayleigh damping (their results must agree), and the
direct path alone on the same model with discrete dashpots (non-proportional). Medians over repeats
and ratios from this one run.

Free response: 2,000 time points on the same chain with dashpots on masses (the state-space path),
and with Maxwell elements instead (a spring from every tenth mass to a junction, a dashpot from the
junction to ground: 20 junction directions become first-order states).
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


def maxwell_chain(n: int) -> Model:
    """The dashpot chain with each dashpot moved behind a spring to a massless junction."""
    base = chain_model(n, dashpots=True)
    junctions = tuple(Mass(f"J{i}", float(i + 1), 1.0, 0.0) for i in range(0, n, 10))
    springs = tuple(Spring(f"sJ{i}", f"m{i}", f"J{i}", 3e4) for i in range(0, n, 10))
    dampers = tuple(Damper(f"c{i}", f"J{i}", "g", 15.0) for i in range(0, n, 10))
    return base.with_changes(put=junctions + springs + dampers)


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
    times = np.linspace(0.0, 2.0, 2000)
    start = {("m199", "x"): 1e-3}
    free_dash = median_time(lambda: solver.free_response(dash, times, x0=start))
    maxw = maxwell_chain(n)
    free_maxw = median_time(lambda: solver.free_response(maxw, times, x0=start))
    print(f"{len(times)} time points, free response (median of 5)")
    print(f"  dashpots on masses             : {free_dash:.3f} s")
    print(f"  Maxwell elements (20 junctions): {free_maxw:.3f} s   ratio to dashpots on masses"
          f" {free_maxw / free_dash:.2f}")


if __name__ == "__main__":
    main()
