"""Solver benchmark: modes() against bare LAPACK, and the sparse path against a dense solve.

Run:  .venv/bin/python bench/solver_bench.py  (or `make bench`)

Prints medians over repeats and ratios measured in this one run, so a busy shared machine moves
both sides of each ratio together. Targets (issue 2):
  - modes() overhead at most 1.5x bare scipy.linalg.eigh(K, M) at 200 DOF;
  - lowest 20 modes of a 20,000-DOF chain faster than one dense 2,000-DOF eigh;
  - 100,000 DOF within a few seconds and within 1 GiB of memory.
"""

from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import scipy.linalg

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import solver  # noqa: E402

# `solver.modes` is the function; the module of the same name is reached through sys.modules
_modes_module = sys.modules["solver.modes"]
from solver import Anchor, Mass, Model, Spring  # noqa: E402


def random_line_model(n: int, seed: int = 1) -> Model:
    """A grounded chain with random masses and extra cross springs (a dense-ish K)."""
    rng = np.random.default_rng(seed)
    masses = tuple(Mass(f"m{i}", float(i), 0.0, float(rng.uniform(0.5, 5.0))) for i in range(n))
    springs = [Spring("s0", "g", "m0", float(rng.uniform(1e3, 1e4)))]
    for i in range(1, n):
        springs.append(Spring(f"s{i}", f"m{i - 1}", f"m{i}", float(rng.uniform(1e3, 1e4))))
    for j in range(n // 2):
        a, b = rng.choice(n, 2, replace=False)
        springs.append(Spring(f"x{j}", f"m{a}", f"m{b}", float(rng.uniform(1e2, 1e3))))
    return Model(kind="line", masses=masses, anchors=(Anchor("g", -1.0, 0.0),),
                 springs=tuple(springs))


def chain(n: int, grounded: bool = True) -> Model:
    masses = tuple(Mass(f"m{i}", float(i), 0.0, 2.0) for i in range(n))
    springs = [Spring(f"s{i}", f"m{i - 1}", f"m{i}", 800.0) for i in range(1, n)]
    anchors = ()
    if grounded:
        springs.insert(0, Spring("s0", "g", "m0", 800.0))
        anchors = (Anchor("g", -1.0, 0.0),)
    return Model(kind="line", masses=masses, anchors=anchors, springs=tuple(springs))


def median_time(fn, repeats: int) -> float:
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def dense_section():
    print("modes() against bare scipy.linalg.eigh(K, M) on the same matrices (median of repeats)")
    print(f"{'DOF':>6} {'bare eigh ms':>13} {'modes() ms':>11} {'ratio':>7}   (solve only;"
          " assemble+solve ratio in brackets)")
    results = {}
    for n, reps in ((50, 41), (200, 21), (1000, 5)):
        model = random_line_model(n)
        system = solver.assemble(model)
        K, M = system.dense("K"), system.dense("M")
        bare = median_time(lambda: scipy.linalg.eigh(K, M), reps)
        ours = median_time(lambda: solver.modes(system), reps)
        full = median_time(lambda: solver.modes(model), reps)
        results[n] = ours / bare
        print(f"{n:>6} {bare * 1e3:>13.2f} {ours * 1e3:>11.2f} {ours / bare:>7.2f}   [{full / bare:.2f}]")
    verdict = "meets" if results[200] <= 1.5 else "MISSES"
    print(f"target at 200 DOF: ratio <= 1.5 -> {results[200]:.2f}, {verdict} the target")
    return results


def stiff_line_model(n: int, seed: int = 1) -> Model:
    """The random chain of random_line_model with one link 1e12 times stiffer than the rest (a
    rigid joint modelled as a spring): eigh on the formed K would lose the lowest digits, so
    solver.modes takes the factored SVD (solver/factor.py)."""
    base = random_line_model(n, seed)
    springs = list(base.springs)
    springs[n // 2] = Spring(springs[n // 2].id, springs[n // 2].a, springs[n // 2].b, 1e15)
    return base.with_changes(springs=tuple(springs))


def accurate_section():
    print()
    print("accurate path: stiff link (1e15 N/m among 1e3..1e4), modes() by the factored SVD"
          " against bare eigh(K, M)")
    print(f"{'DOF':>6} {'bare eigh ms':>13} {'modes() ms':>11} {'ratio':>7}  method")
    for n, reps in ((50, 21), (200, 9)):
        model = stiff_line_model(n)
        system = solver.assemble(model)
        K, M = system.dense("K"), system.dense("M")
        bare = median_time(lambda: scipy.linalg.eigh(K, M), reps)
        ours = median_time(lambda: solver.modes(system), reps)
        method = solver.modes(system).method
        print(f"{n:>6} {bare * 1e3:>13.2f} {ours * 1e3:>11.2f} {ours / bare:>7.2f}  {method}")


def switch_section():
    print()
    print("switch point: lowest 20 modes by dense LAPACK against shift-invert Lanczos")
    print(f"{'DOF':>6} {'dense ms':>9} {'sparse ms':>10} {'sparse/dense':>13}")
    for n in (100, 200, 300, 500, 1000):
        model = random_line_model(n)
        system = solver.assemble(model)
        reps = 9 if n <= 500 else 3
        dense = median_time(lambda: solver.modes(system, count=20, method="dense"), reps)
        sparse = median_time(lambda: solver.modes(system, count=20, method="sparse"), reps)
        print(f"{n:>6} {dense * 1e3:>9.2f} {sparse * 1e3:>10.2f} {sparse / dense:>13.2f}")
    print(f"  solver.modes switches at SWITCH_DOF = {_modes_module.SWITCH_DOF} DOF")


def sparse_child(n: int) -> None:
    """Run in a fresh process: time the lowest 20 modes of an n-DOF chain, report peak memory."""
    model = chain(n, grounded=False)
    t0 = time.perf_counter()
    res = solver.modes(model, count=20)
    dt = time.perf_counter() - t0
    # check against the closed form for a free-free chain (REFERENCES.md CH-XX)
    j = np.arange(20)
    exact = 2 * 20.0 * np.sin(j * np.pi / (2 * n))
    err = float(np.max(np.abs(res.omegas - exact)[1:] / exact[1:]))
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # MiB (Linux: KiB)
    print(f"{dt:.4f} {peak:.1f} {err:.2e} {res.method}")


def sparse_section():
    print()
    print("sparse path: lowest 20 modes of free-free chains, against one dense 2,000-DOF eigh")
    model = random_line_model(2000)
    system = solver.assemble(model, sparse=False)
    K, M = system.dense("K"), system.dense("M")
    dense = median_time(lambda: scipy.linalg.eigh(K, M), 3)
    print(f"  dense 2,000-DOF eigh: {dense:.3f} s (median of 3)")
    for n in (20_000, 100_000):
        runs = []
        for _ in range(3):
            out = subprocess.run([sys.executable, __file__, "--child", str(n)], check=True,
                                 capture_output=True, text=True).stdout.split()
            runs.append(out)
        t = statistics.median(float(r[0]) for r in runs)
        mem = max(float(r[1]) for r in runs)
        err = max(float(r[2]) for r in runs)
        print(f"  {n:>7,} DOF: {t:.3f} s (median of 3), ratio to dense 2,000 eigh {t / dense:.2f},"
              f" peak memory {mem:.0f} MiB (whole process), max rel. error vs closed form {err:.1e},"
              f" method: {runs[0][3]} {' '.join(runs[0][4:])}")


def junction_chain(n: int, stiff: float = 1.0) -> Model:
    """A planar chain of n masses, each reached through a massless junction (first link
    ``stiff`` times the second) that is also tied to an anchor: 2n DOFs after condensation."""
    masses, springs, prev = [], [], "g"
    for i in range(n):
        masses.append(Mass(f"m{i}", float(i + 1), 0.1 * np.sin(i), 1.0 + 0.1 * i))
        masses.append(Mass(f"j{i}", float(i + 1) + 0.5, 0.3, 0.0))
        springs += [Spring(f"a{i}", prev, f"j{i}", 1e4 * stiff), Spring(f"b{i}", f"j{i}", f"m{i}", 1e4),
                    Spring(f"t{i}", "h", f"j{i}", 1e3), Spring(f"v{i}", "h", f"m{i}", 2e3)]
        prev = f"m{i}"
    return Model(kind="planar", masses=tuple(masses),
                 anchors=(Anchor("g", 0, 0), Anchor("h", 3.3, -5)), springs=tuple(springs))


def junction_section():
    print()
    print("junctions: modes() with massless junctions (condensed in factored form) against bare"
          " eigh(K, M) of the condensed matrices; retune against one modes()")
    print(f"{'case':>34} {'bare eigh ms':>13} {'ours ms':>9} {'ratio':>7}")
    for name, model in (("modes, 200 DOF + 100 junctions", junction_chain(100)),
                        ("modes, same with links 1e9 stiffer", junction_chain(100, 1e9))):
        system = solver.assemble(model)
        K, M = system.dense("K"), system.dense("M")
        bare = median_time(lambda K=K, M=M: scipy.linalg.eigh(K, M), 9)
        ours = median_time(lambda model=model: solver.modes(model), 9)
        print(f"{name:>34} {bare * 1e3:>13.2f} {ours * 1e3:>9.2f} {ours / bare:>7.2f}")
    for n, sid, mode, stiff in ((10, "v3", 2, 1.0), (25, "v5", 3, 1.0), (25, "v5", 3, 1e8)):
        model = junction_chain(n, stiff)
        target = solver.modes(solver.with_value(model, sid, 6e3)).frequencies_hz[mode - 1]
        one = median_time(lambda model=model: solver.modes(model), 5)
        ours = median_time(lambda model=model, sid=sid, mode=mode, target=target:
                           solver.retune(model, sid, mode, target), 5)
        name = f"retune, {n} masses + junctions" + (f" (x{stiff:g})" if stiff != 1 else "")
        print(f"{name:>34} {'(modes) ' + format(one * 1e3, '.2f'):>13} {ours * 1e3:>9.2f}"
              f" {ours / one:>7.1f}")


def main():
    if len(sys.argv) == 3 and sys.argv[1] == "--child":
        sparse_child(int(sys.argv[2]))
        return
    try:
        from threadpoolctl import threadpool_info  # optional

        blas = ", ".join(f"{i['internal_api']} {i.get('num_threads')} threads"
                         for i in threadpool_info())
    except Exception:  # noqa: BLE001 - purely informational
        blas = "unknown"
    print(f"numpy {np.__version__}, scipy {scipy.__version__}, BLAS: {blas},"
          f" cores: {os.cpu_count()}")
    dense_section()
    accurate_section()
    junction_section()
    switch_section()
    sparse_section()


if __name__ == "__main__":
    main()
