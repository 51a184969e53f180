"""Tolerance-study benchmark: samples per second against a loop of bare eigh calls.

Run:  OPENBLAS_NUM_THREADS=1 .venv/bin/python bench/study_bench.py [--dask]

10,000 samples of a 20-DOF chain (every spring and mass toleranced) through
``solver.tolerance_study``, with mode tracking (shapes and MAC) and without, against the same
number of bare ``numpy.linalg.eigh`` and ``scipy.linalg.eigh(K, M)`` calls in a Python loop on
pre-built matrices (the floor of "solve every sample one at a time", assembly not counted). Then
2,000 samples of a 200-DOF chain the same way (the loop timed on 200 calls and scaled). Medians
over repeats, ratios from this one run. One BLAS thread (set before numpy loads).

``--dask``: the 20-DOF study again on a local Dask cluster (2 worker processes) against the
local run, and a check that both give the same numbers.
"""

from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import statistics  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402
import scipy.linalg  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from solver import Anchor, Mass, Model, Spring, Tolerance  # noqa: E402
from solver.study import tolerance_study  # noqa: E402


def chain(n: int) -> Model:
    rng = np.random.default_rng(3)
    masses = tuple(Mass(f"m{i}", float(i + 1), 0.0, float(rng.uniform(0.5, 3.0)),
                        tolerance=Tolerance(5, "triangular")) for i in range(n))
    springs = tuple(Spring(f"s{i}", "g" if i == 0 else f"m{i - 1}", f"m{i}",
                           float(rng.uniform(2e4, 8e4)), tolerance=Tolerance(20, "normal"))
                    for i in range(n))
    return Model(kind="line", masses=masses, anchors=(Anchor("g", 0.0, 0.0),), springs=springs)


def median_time(fn, repeats):
    out = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return statistics.median(out)


def bare_matrices(n_dof: int, count: int):
    rng = np.random.default_rng(1)
    out = []
    for _ in range(count):
        k = rng.uniform(2e4, 8e4, n_dof)
        K = np.diag(k + np.append(k[1:], 0.0)) - np.diag(k[1:], 1) - np.diag(k[1:], -1)
        m = rng.uniform(0.5, 3.0, n_dof)
        d = 1 / np.sqrt(m)
        out.append((K, np.diag(m), K * d[:, None] * d[None, :]))
    return out


def run(n_dof: int, samples: int, loop_count: int, repeats: int):
    model = chain(n_dof)
    mats = bare_matrices(n_dof, loop_count)
    scale = samples / loop_count
    t_np = median_time(lambda: [np.linalg.eigh(A) for _, _, A in mats], repeats) * scale
    t_np_vals = median_time(lambda: [np.linalg.eigvalsh(A) for _, _, A in mats], repeats) * scale
    t_sp = median_time(lambda: [scipy.linalg.eigh(K, M) for K, M, _ in mats], repeats) * scale
    t_track = median_time(lambda: tolerance_study(model, samples, seed=1), repeats)
    t_plain = median_time(lambda: tolerance_study(model, samples, seed=1, track_modes=False),
                          repeats)
    print(f"\n{samples:,} samples of a {n_dof}-DOF chain ({len(model.springs)} springs and"
          f" {len(model.masses)} masses toleranced); medians of {repeats}")
    print(f"  tolerance_study, modes tracked (shapes + MAC): {t_track:8.3f} s"
          f"  {samples / t_track:10,.0f} samples/s")
    print(f"  tolerance_study, frequencies only:              {t_plain:8.3f} s"
          f"  {samples / t_plain:10,.0f} samples/s")
    print(f"  loop of bare numpy.linalg.eigh (vectors):       {t_np:8.3f} s"
          f"  {samples / t_np:10,.0f} samples/s")
    print(f"  loop of bare numpy.linalg.eigvalsh:             {t_np_vals:8.3f} s"
          f"  {samples / t_np_vals:10,.0f} samples/s")
    print(f"  loop of bare scipy.linalg.eigh(K, M):           {t_sp:8.3f} s"
          f"  {samples / t_sp:10,.0f} samples/s")
    print(f"  ratio study (tracked) / bare numpy eigh loop:   {t_track / t_np:6.2f}")
    print(f"  ratio study (freq. only) / bare eigvalsh loop:  {t_plain / t_np_vals:6.2f}")
    print(f"  ratio study (tracked) / bare scipy eigh loop:   {t_track / t_sp:6.2f}")


def run_dask():
    import distributed

    model = chain(20)
    t0 = time.perf_counter()
    local = tolerance_study(model, 100_000, seed=5, chunk=10_000, keep_samples=True)
    t_local = time.perf_counter() - t0
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        tolerance_study(model, 10_000, seed=5, chunk=10_000, scheduler=client)   # warm up
        t0 = time.perf_counter()
        remote = tolerance_study(model, 100_000, seed=5, chunk=10_000, keep_samples=True,
                                 scheduler=client)
        t_remote = time.perf_counter() - t0
    same = np.array_equal(local.frequencies_hz, remote.frequencies_hz)
    print(f"\n100,000 samples, 20 DOF: local {t_local:.2f} s, local Dask cluster (2 processes)"
          f" {t_remote:.2f} s, ratio {t_remote / t_local:.2f}; results identical: {same}")


if __name__ == "__main__":
    run(20, 10_000, 2_000, 5)
    run(200, 2_000, 200, 3)
    if "--dask" in sys.argv:
        run_dask()
