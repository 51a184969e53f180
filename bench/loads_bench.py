"""Load-case benchmark: random response and shock response against bare numpy baselines.

Run:  .venv/bin/python bench/loads_bench.py

- Random: 5,000 frequencies on a 200-DOF chain (modal damping 3 %), every mass's absolute
  acceleration and relative displacement and every spring's deflection, their response spectral
  densities and RMS (``solver.random_response``), against the same outputs by bare numpy: one
  ``numpy.linalg.eigh`` of the mass-scaled stiffness, modal superposition on the grid, the PSDs
  and ``numpy.trapezoid``.
- Shock: a half-sine on the same chain, 10,000 time steps (``solver.shock_response``), against
  bare numpy stepping the modal coordinates (one exact 2x2 step matrix per mode, the input held
  over each step) and forming the same outputs; and the same chain with dashpots (the exact
  state-space path) against that baseline.

Medians over repeats; ratios from this one run (the machine is shared and noisy).
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import solver  # noqa: E402
from solver import (Anchor, Damper, Damping, Mass, Model, RandomVibration,  # noqa: E402
                    ShockPulse, Spring)
from solver.load_cases import G0  # noqa: E402


def chain_model(n: int, dashpots: bool = False) -> Model:
    rng = np.random.default_rng(7)
    masses = tuple(Mass(f"m{i}", float(i + 1), 0.0, float(rng.uniform(0.5, 3.0)))
                   for i in range(n))
    springs = [Spring("s0", "g", "m0", 5e6)]
    springs += [Spring(f"s{i}", f"m{i - 1}", f"m{i}", float(rng.uniform(2e6, 8e6)))
                for i in range(1, n)]
    dampers = tuple(Damper(f"c{i}", f"m{i}", "g", 40.0) for i in range(0, n, 10)) \
        if dashpots else ()
    return Model(kind="line", masses=masses, anchors=(Anchor("g", 0.0, 0.0),),
                 springs=tuple(springs), dampers=dampers,
                 damping=Damping() if dashpots else Damping("modal", ratio=0.03))


def matrices(model):
    """M (diagonal) and K of the chain written out from the model data."""
    n = len(model.masses)
    m = np.array([x.mass for x in model.masses])
    k = np.array([s.k for s in model.springs])
    K = np.zeros((n, n))
    K[0, 0] += k[0]
    for i in range(1, n):
        K[i - 1, i - 1] += k[i]
        K[i, i] += k[i]
        K[i - 1, i] -= k[i]
        K[i, i - 1] -= k[i]
    return m, K, k


def modal(m, K):
    s = 1 / np.sqrt(m)
    lam, V = np.linalg.eigh(K * s[:, None] * s[None, :])
    phi = V * s[:, None]
    gamma = phi.T @ m
    return lam, phi, gamma


def stretch(Y, k_count):
    """Spring deflections of a chain (first spring to ground), Y (..., n)."""
    D = np.empty(Y.shape[:-1] + (k_count,), Y.dtype)
    D[..., 0] = Y[..., 0]
    D[..., 1:] = Y[..., 1:] - Y[..., :-1]
    return D


def bare_random(model, f, asd_vals, zeta=0.03):
    m, K, k = matrices(model)
    lam, phi, gamma = modal(m, K)
    w = 2 * np.pi * f
    denom = lam[None, :] - (w ** 2)[:, None] + 2j * zeta * np.sqrt(lam)[None, :] * w[:, None]
    q = -gamma[None, :] / denom                    # per unit base acceleration
    Y = q @ phi.T                                  # (n_f, n)
    A = 1 - (w ** 2)[:, None] * Y
    acc = np.abs(A) ** 2 * asd_vals[:, None]
    disp = np.abs(Y * G0) ** 2 * asd_vals[:, None]
    defl = np.abs(stretch(Y * G0, len(k))) ** 2 * asd_vals[:, None]
    return (np.sqrt(np.trapezoid(acc, f, axis=0)), np.sqrt(np.trapezoid(disp, f, axis=0)),
            np.sqrt(np.trapezoid(defl, f, axis=0)))


def bare_shock(model, pulse, t, zeta=0.03):
    m, K, k = matrices(model)
    lam, phi, gamma = modal(m, K)
    wn = np.sqrt(lam)
    wd = wn * np.sqrt(1 - zeta ** 2)
    h = t[1] - t[0]
    e = np.exp(-zeta * wn * h)
    c, s = np.cos(wd * h), np.sin(wd * h)
    # exact free step of each mode, and the step of a constant unit force held over h
    a11 = e * (c + zeta * wn / wd * s)
    a12 = e * s / wd
    a21 = -wn ** 2 * e * s / wd
    a22 = e * (c - zeta * wn / wd * s)
    b1 = (1 - a11) / lam
    b2 = -a21 / lam
    a = pulse.acceleration_g(t) * G0
    q = np.zeros((len(t), len(lam)))
    qd = np.zeros(len(lam))
    x = np.zeros(len(lam))
    for i in range(1, len(t)):
        f = -gamma * a[i - 1]
        x, qd = a11 * x + a12 * qd + b1 * f, a21 * x + a22 * qd + b2 * f
        q[i] = x
    Y = q @ phi.T
    qdd_abs = -(lam * q)                            # + damping term, as in the solver's output
    acc = qdd_abs @ phi.T / G0
    defl = stretch(Y, len(k))
    return Y, acc, defl


def median_time(fn, repeats=5):
    out = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return statistics.median(out)


def main():
    n = 200
    model = chain_model(n)
    f = np.geomspace(5.0, 5000.0, 5000)
    asd = RandomVibration(((5.0, 0.01), (50.0, 0.04), (1000.0, 0.04), (5000.0, 0.005)))
    from solver.loads import asd_at

    vals = asd_at(asd, f)
    ours = median_time(lambda: solver.random_response(model, asd, freqs_hz=f))
    bare = median_time(lambda: bare_random(model, f, vals))
    r = solver.random_response(model, asd, freqs_hz=f)
    acc, disp, defl = bare_random(model, f, vals)
    agree = max(float(np.max(np.abs(r.displacement_rms_m / disp - 1))),
                float(np.max(np.abs(r.deflection_rms_m / defl - 1))))
    print(f"Random response: 5,000 frequencies, {n}-DOF chain, modal damping 3 % (median of 5)")
    print(f"  solver.random_response : {ours:.3f} s")
    print(f"  bare numpy             : {bare:.3f} s   ratio {ours / bare:.2f}"
          f"   (RMS agree to {agree:.1e}; on the same grid, trapezoid against Simpson)")
    default = median_time(lambda: solver.random_response(model, asd), repeats=3)
    n_default = len(solver.random_response(model, asd).frequencies_hz)
    print(f"  default grid ({n_default:,} points): {default:.3f} s   ratio {default / bare:.2f}")

    pulse = ShockPulse("half-sine", 20.0, 0.005)
    steps = 10_000
    duration = 0.05
    t = np.linspace(0, duration, steps + 1)
    ours = median_time(lambda: solver.shock_response(model, pulse, duration_s=duration,
                                                     n_steps=steps), repeats=3)
    bare = median_time(lambda: bare_shock(model, pulse, t), repeats=3)
    s = solver.shock_response(model, pulse, duration_s=duration, n_steps=steps)
    Y, _, _ = bare_shock(model, pulse, t)
    diff = float(np.abs(s.displacement_m - Y).max() / np.abs(Y).max())
    print(f"Shock response: half-sine, {steps:,} steps, {n}-DOF chain (median of 3)")
    print(f"  solver.shock_response (modal, exact) : {ours:.3f} s")
    print(f"  bare numpy modal stepping (input held): {bare:.3f} s   ratio {ours / bare:.2f}"
          f"   (displacements differ by {diff:.1e} of the peak: the held input's error)")
    dash = chain_model(n, dashpots=True)
    ss = median_time(lambda: solver.shock_response(dash, pulse, duration_s=duration,
                                                   n_steps=steps), repeats=3)
    print(f"  with dashpots (exact state space)     : {ss:.3f} s   ratio {ss / bare:.2f}")


if __name__ == "__main__":
    main()
