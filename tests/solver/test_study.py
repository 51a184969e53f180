"""Tolerance study (issue 15): sampled frequencies against closed forms, independent eigensolvers
and the statistics of the distributions; reproducibility; the Dask run equal to the local one."""

from __future__ import annotations

import math
import threading

import numpy as np
import pytest
import scipy.linalg
import scipy.stats

import solver
from solver import ModelError
from solver.model import Anchor, Excitation, Gear, Mass, Model, Spring, Tolerance
from solver.study import (StudyCancelled, sample_factors, tolerance_parameters,
                          tolerance_study)

K, M = 4000.0, 1.0
F0 = math.sqrt(K / M) / (2 * math.pi)


def sdof(tol=10.0, dist="uniform", mass_tol=None, excitations=()):
    return Model(kind="line", masses=(Mass("m", 1.0, 0.0, M, tolerance=mass_tol),),
                 anchors=(Anchor("g", 0.0, 0.0),),
                 springs=(Spring("s", "g", "m", K, tolerance=Tolerance(tol, dist)),),
                 excitations=tuple(excitations))


def chain(n, tol=10.0, junction=False):
    """A fixed-free chain of n masses; with ``junction`` a massless node between masses 1 and 2
    joined by two springs in series."""
    masses = [Mass(f"m{i}", float(i + 1), 0.0, 1.0 + 0.1 * i, tolerance=Tolerance(5, "triangular"))
              for i in range(n)]
    springs = [Spring(f"s{i}", "g" if i == 0 else f"m{i - 1}", f"m{i}", 1000.0 * (1 + 0.05 * i),
                      tolerance=Tolerance(tol, "normal")) for i in range(n)]
    if junction:
        masses.append(Mass("j", 1.5, 0.5, 0.0))
        springs[1] = Spring("s1", "m0", "j", 2000.0, tolerance=Tolerance(tol))
        springs.append(Spring("s1b", "j", "m1", 3000.0))
    return Model(kind="line", masses=tuple(masses), anchors=(Anchor("g", 0.0, 0.0),),
                 springs=tuple(springs))


def test_sdof_uniform_k_percentiles_follow_sqrt_k():
    """math: f = f0 sqrt(k / k0) is monotone in k, so its q-quantile is f0 sqrt(1 + 0.1 (2q - 1))
    for k uniform within +-10 %; 100,000 samples put the sample quantiles within ~4 standard
    errors (sqrt(q (1 - q) / N) / density), taken as rtol 5e-4."""
    res = tolerance_study(sdof(), 100_000, seed=3)
    p5, p50, p95 = res.mode(1).percentiles_hz
    for q, got in ((0.05, p5), (0.50, p50), (0.95, p95)):
        assert got == pytest.approx(F0 * math.sqrt(1 + 0.1 * (2 * q - 1)), rel=5e-4)
    # the exact bounds (Courant-Fischer corners): f0 sqrt(0.9) and f0 sqrt(1.1)
    ms = res.mode(1)
    assert ms.corner_low_hz == pytest.approx(F0 * math.sqrt(0.9), rel=1e-12)
    assert ms.corner_high_hz == pytest.approx(F0 * math.sqrt(1.1), rel=1e-12)
    assert F0 * math.sqrt(0.9) <= ms.min_hz < ms.max_hz <= F0 * math.sqrt(1.1) * (1 + 1e-12)
    assert ms.corner_high == {"s": 1} and ms.corner_low == {"s": -1}


def test_mean_error_shrinks_as_one_over_sqrt_n():
    """Monte Carlo (common practice; the central limit theorem, math): the RMS error of the
    sample mean over 40 seeds falls by sqrt(16) = 4 from N = 100 to N = 1,600. The exact mean
    of f = f0 sqrt(1 + 0.1 u), u uniform on [-1, 1], is f0 (1.1^1.5 - 0.9^1.5) / 0.3 (math).
    The ratio of two RMS errors from 40 seeds each scatters by ~ +-25 %: accepted 2.8 to 5.7."""
    exact = F0 * (1.1 ** 1.5 - 0.9 ** 1.5) / 0.3
    model = sdof()

    def rms(n):
        errs = [tolerance_study(model, n, seed=s, track_modes=False).mode(1).mean_hz - exact
                for s in range(40)]
        return math.sqrt(np.mean(np.square(errs)))

    ratio = rms(100) / rms(1600)
    assert 2.8 < ratio < 5.7
    # and the size: sigma_f / sqrt(N), sigma_f ~ f0 0.05 / sqrt(3) (delta method)
    assert rms(1600) == pytest.approx(F0 * 0.05 / math.sqrt(3) / 40, rel=0.4)


@pytest.mark.parametrize("dist, scipy_dist", [
    ("uniform", scipy.stats.uniform(-1, 2)),
    ("triangular", scipy.stats.triang(0.5, loc=-1, scale=2)),
    ("normal", scipy.stats.truncnorm(-3, 3, scale=1 / 3)),
])
def test_factors_follow_the_named_distribution(dist, scipy_dist):
    """scipy.stats (an independent implementation): the drawn u = (factor - 1) / 0.2 passes a
    Kolmogorov-Smirnov test against the distribution the file names (normal: sigma = bound / 3,
    truncated at the bound), p > 1e-3, and never leaves the bound."""
    f = sample_factors(sdof(20.0, dist), 20_000, seed=11)[:, 0]
    u = (f - 1.0) / 0.2
    assert np.all(np.abs(u) <= 1.0)
    assert scipy.stats.kstest(u, scipy_dist.cdf).pvalue > 1e-3


def test_first_order_estimate_matches_sampling_for_small_tolerances():
    """Delta method (first-order propagation of variance, common practice): for 1 % tolerances
    the sensitivities' linear estimate of each mode's standard deviation agrees with 20,000
    samples to 3 % (sampling error ~ 1 / sqrt(2 N) = 0.5 %, curvature ~ 1 %)."""
    res = tolerance_study(chain(6, tol=1.0), 20_000, seed=5)
    for ms in res.modes:
        assert ms.first_order_std_hz == pytest.approx(ms.std_hz, rel=0.03)
        assert ms.first_order_mean_hz == ms.nominal_hz


def test_samples_equal_an_independent_generalized_eigh_per_sample():
    """scipy.linalg.eigh(K, M) (generalized, independent of the batched path): each sample's
    frequencies, rebuilt from the drawn factors and the chain's textbook tridiagonal K."""
    model = chain(5)
    res = tolerance_study(model, 300, seed=2, chunk=64, keep_samples=True)
    X = sample_factors(model, 300, seed=2, chunk=64)
    params = tolerance_parameters(model)
    for row, got in zip(X[::37], res.frequencies_hz[::37]):
        k = np.array([s.k for s in model.springs]) * row[:5]
        m = np.array([ms.mass for ms in model.masses]) * row[5:]
        Kt = np.diag(k + np.append(k[1:], 0.0)) - np.diag(k[1:], 1) - np.diag(k[1:], -1)
        lam = scipy.linalg.eigh(Kt, np.diag(m), eigvals_only=True)
        np.testing.assert_allclose(got, np.sqrt(lam) / (2 * np.pi), rtol=1e-11)
    assert [p.kind for p in params] == ["spring"] * 5 + ["mass"] * 5


def test_junction_condensation_per_sample_equals_modes():
    """The batched path condenses a massless junction per sample (Schur complement); each
    sample equals solver.modes on the scaled model (the full solver, its own condensation by
    projection: DEVELOPERS.md), to 1e-9."""
    from solver.study import scaled_model
    model = chain(4, junction=True)
    res = tolerance_study(model, 50, seed=9, chunk=16, keep_samples=True)
    assert res.method == "batched eigh"
    X = sample_factors(model, 50, seed=9, chunk=16)
    params = tolerance_parameters(model)
    for row, got in zip(X[::7], res.frequencies_hz[::7]):
        want = solver.modes(scaled_model(model, params, row)).frequencies_hz
        np.testing.assert_allclose(got, want, rtol=1e-9)


def test_gear_model_falls_back_to_modes_per_sample():
    """A geared shaft is solved sample by sample by solver.modes; checked against the referred
    two-disc closed form (math): f = sqrt(k (1/J1 + n^2/J2)) / 2 pi with the disc on shaft b
    referred (J2 / n^2, k on a: here the spring sits on shaft a)."""
    n = 2.0
    model = Model(kind="torsion",
                  masses=(Mass("d1", 0.0, 0.0, 0.5), Mass("d2", 1.0, 0.0, 0.2),
                          Mass("d3", 2.0, 0.0, 0.8)),
                  springs=(Spring("s", "d1", "d2", 500.0, tolerance=Tolerance(10)),),
                  gears=(Gear("g", "d2", "d3", n),))
    res = tolerance_study(model, 40, seed=1, chunk=8, keep_samples=True)
    assert res.method == "modes() per sample"
    X = sample_factors(model, 40, seed=1, chunk=8)[:, 0]
    J1, J2eq = 0.5, 0.2 + 0.8 / n ** 2
    want = np.sqrt(500.0 * X * (1 / J1 + 1 / J2eq)) / (2 * np.pi)
    np.testing.assert_allclose(res.frequencies_hz[:, 1], want, rtol=1e-9)
    assert np.all(res.frequencies_hz[:, 0] == 0.0)


def test_free_free_rigid_mode_stays_zero():
    """math: two masses on one spring, no ground: w^2 = k (1/m1 + 1/m2) and a rigid-body mode
    at exactly 0 Hz in every sample."""
    model = Model(kind="line", masses=(Mass("a", 0.0, 0.0, 2.0, tolerance=Tolerance(10)),
                                       Mass("b", 1.0, 0.0, 3.0)),
                  springs=(Spring("s", "a", "b", 600.0, tolerance=Tolerance(20)),))
    res = tolerance_study(model, 500, seed=4, chunk=100, keep_samples=True)
    X = sample_factors(model, 500, seed=4, chunk=100)
    want = np.sqrt(600.0 * X[:, 0] * (1 / (2.0 * X[:, 1]) + 1 / 3.0)) / (2 * np.pi)
    assert np.all(res.frequencies_hz[:, 0] == 0.0)
    np.testing.assert_allclose(res.frequencies_hz[:, 1], want, rtol=1e-10)
    assert res.mode(1).zero and res.mode(1).clear_all_probability is None


def test_probability_of_clearing_a_band():
    """math + margins.py's rule: a band 9.5-10.5 Hz widened by 15 % keeps out (8.075, 12.075) Hz;
    f = f0 sqrt(1 + 0.1 u) lies below 8.075 Hz when u < ((8.075 / f0)^2 - 1) / 0.1, so the
    probability of clearing is that fraction of the uniform u (f0 = 10.07 Hz: ~ 0 above, and
    here f never exceeds f0 sqrt(1.1) < 12.075). Within 4 binomial standard errors."""
    band = Excitation("e", "band", f_min_hz=9.5, f_max_hz=10.5)
    model = Model(kind="line", masses=(Mass("m", 1.0, 0.0, 1.0),), anchors=(Anchor("g", 0, 0),),
                  springs=(Spring("s", "g", "m", (2 * math.pi * 8.2) ** 2,
                                  tolerance=Tolerance(10)),),
                  excitations=(band,))
    f0 = 8.2
    u_edge = ((8.075 / f0) ** 2 - 1) / 0.1
    p = (u_edge + 1) / 2
    res = tolerance_study(model, 40_000, seed=8)
    got = res.mode(1).clear_probability["e"]
    assert got == pytest.approx(p, abs=4 * res.probability_error(p))
    assert res.mode(1).clear_all_probability == got


def test_same_seed_same_result_and_chunking_changes_only_the_stream():
    """Reproducibility (common practice for seeded Monte Carlo): the same seed and chunk give
    identical results; a different seed gives different draws."""
    a = tolerance_study(chain(4), 2000, seed=7, chunk=300, keep_samples=True)
    b = tolerance_study(chain(4), 2000, seed=7, chunk=300, keep_samples=True)
    c = tolerance_study(chain(4), 2000, seed=8, chunk=300, keep_samples=True)
    assert np.array_equal(a.frequencies_hz, b.frequencies_hz)
    assert a.modes == b.modes
    assert not np.array_equal(a.frequencies_hz, c.frequencies_hz)


def test_progress_and_cancel():
    """The progress callback sees every chunk; a cancel between chunks keeps what was done."""
    seen = []
    stop = threading.Event()

    def progress(done, total):
        seen.append((done, total))
        if done >= 200:
            stop.set()

    res = tolerance_study(chain(3), 1000, seed=1, chunk=100, progress=progress, cancel=stop)
    assert seen[:2] == [(100, 1000), (200, 1000)]
    assert res.n_samples == 200 and not res.complete
    with pytest.raises(StudyCancelled):
        tolerance_study(chain(3), 1000, cancel=lambda: True)


@pytest.mark.parametrize("kwargs, words", [
    ({"n": 0}, "n \\(samples\\) must be a whole number from 1"),
    ({"n": 2.5}, "n \\(samples\\)"),
    ({"n": 10, "seed": -1}, "seed must be"),
    ({"n": 10, "chunk": 0}, "chunk must be"),
])
def test_bad_arguments_refused(kwargs, words):
    """Common practice: bad arguments give a one-line ModelError naming them."""
    with pytest.raises(ModelError, match=words):
        tolerance_study(sdof(), **kwargs)


def test_model_without_tolerances_refused():
    """A study needs at least one tolerance; the message says what to do."""
    model = Model(kind="line", masses=(Mass("m", 1.0, 0.0, 1.0),), anchors=(Anchor("g", 0, 0),),
                  springs=(Spring("s", "g", "m", 100.0),))
    with pytest.raises(ModelError, match="no spring, dashpot or mass has a tolerance"):
        tolerance_study(model, 10)


def test_histogram_percentiles_when_samples_are_not_kept():
    """With the samples dropped the percentiles come from the fixed histogram: within two bins
    of the sample percentiles of the same draws (one for the bin, one for the different
    interpolation rule between order statistics, math), with the same counts."""
    kept = tolerance_study(chain(3), 50_000, seed=2, keep_samples=True)
    binned = tolerance_study(chain(3), 50_000, seed=2, keep_samples=False)
    assert binned.frequencies_hz is None and binned.percentiles_from == "histogram"
    for a, b in zip(kept.modes, binned.modes):
        width = (b.histogram[1][-1] - b.histogram[1][0]) / (len(b.histogram[1]) - 1)
        for x, y in zip(a.percentiles_hz, b.percentiles_hz):
            assert abs(x - y) <= 2 * width
        assert np.array_equal(a.histogram[0], b.histogram[0])


def test_dask_result_equals_the_local_one():
    """Issue 15: the same study on a local Dask cluster (2 workers) equals the local run bit for
    bit with the same seed and chunk size."""
    distributed = pytest.importorskip("distributed")
    model = chain(6)
    local = tolerance_study(model, 3000, seed=21, chunk=250, keep_samples=True)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        remote = tolerance_study(model, 3000, seed=21, chunk=250, keep_samples=True,
                                 scheduler=client)
        by_address = tolerance_study(model, 1000, seed=21, chunk=250, keep_samples=True,
                                     scheduler=cluster.scheduler_address)
    assert np.array_equal(local.frequencies_hz, remote.frequencies_hz)
    assert local.modes == remote.modes
    for a, b in zip(local.modes, remote.modes):
        assert np.array_equal(a.histogram[0], b.histogram[0])
    assert np.array_equal(by_address.frequencies_hz, local.frequencies_hz[:1000])


def test_crossing_modes_are_flagged_by_mac():
    """Two uncoupled masses on their own springs (math: f_i = sqrt(k_i / m_i) / 2 pi) with
    nominal frequencies 2 % apart and a 20 % tolerance on each spring: the order swaps exactly
    when sqrt(k_a x_a / m_a) > sqrt(k_b x_b / m_b); the flagged fraction equals that fraction of
    the drawn factors, and the tracked frequencies are still the sorted ones."""
    model = Model(kind="line", masses=(Mass("a", 1.0, 0.0, 1.0), Mass("b", 2.0, 1.0, 1.0)),
                  anchors=(Anchor("g", 0.0, 0.0),),
                  springs=(Spring("sa", "g", "a", 1000.0, tolerance=Tolerance(20)),
                           Spring("sb", "g", "b", 1000.0 * 1.02 ** 2, tolerance=Tolerance(20))))
    res = tolerance_study(model, 4000, seed=6, chunk=1000, keep_samples=True)
    X = sample_factors(model, 4000, seed=6, chunk=1000)
    swapped = np.mean(1000.0 * X[:, 0] > 1000.0 * 1.02 ** 2 * X[:, 1])
    assert 0.2 < swapped < 0.5
    assert res.mode(1).crossed_fraction == pytest.approx(swapped, abs=1e-12)
    fa = np.sqrt(1000.0 * X[:, 0]) / (2 * np.pi)
    fb = np.sqrt(1000.0 * 1.02 ** 2 * X[:, 1]) / (2 * np.pi)
    np.testing.assert_allclose(res.frequencies_hz, np.sort(np.c_[fa, fb], axis=1), rtol=1e-12)


def test_dask_worker_processes_give_the_same_result():
    """Issue 15: with chunks solved in separate worker processes (the plan pickled to them),
    the result still equals the local run bit for bit (same seed and chunk)."""
    distributed = pytest.importorskip("distributed")
    model = chain(4, junction=True)
    local = tolerance_study(model, 1200, seed=5, chunk=200, keep_samples=True)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        remote = tolerance_study(model, 1200, seed=5, chunk=200, keep_samples=True,
                                 scheduler=client)
    assert np.array_equal(local.frequencies_hz, remote.frequencies_hz)
    assert local.modes == remote.modes


def test_planar_rigid_body_samples_equal_modes():
    """A planar rigid body on two mounts at attachment points (k and k_t scaled together,
    mass and inertia scaled together) plus a point mass: each sample of the batched path
    equals solver.modes on the scaled model (the general solver, its own assembly), to 1e-9;
    the first-order estimate there uses the body's rotary inertia too (delta method, common
    practice: within 3 % of the sampled standard deviation for 1 % tolerances)."""
    from solver.study import scaled_model
    body = Mass("b", 0.0, 0.0, 20.0, inertia=1.5, tolerance=Tolerance(1))
    model = Model(kind="planar",
                  masses=(body, Mass("p", 1.0, 0.6, 2.0)),
                  anchors=(Anchor("g1", -0.5, -1.0), Anchor("g2", 0.6, -1.0)),
                  springs=(Spring("s1", "g1", "b", 8e4, k_t=2e4, b_offset=(-0.4, -0.2),
                                  tolerance=Tolerance(1)),
                           Spring("s2", "g2", "b", 6e4, k_t=1e4, b_offset=(0.5, -0.2),
                                  tolerance=Tolerance(1, "triangular")),
                           Spring("s3", "b", "p", 3e4, k_t=3e4, a_offset=(0.3, 0.1))))
    res = tolerance_study(model, 20_000, seed=3, keep_samples=True)
    assert res.method == "batched eigh"
    X = sample_factors(model, 20_000, seed=3)
    params = tolerance_parameters(model)
    assert [p.field for p in params] == ["k, k_t", "k, k_t", "mass, inertia"]
    for row, got in zip(X[::4001], res.frequencies_hz[::4001]):
        want = solver.modes(scaled_model(model, params, row)).frequencies_hz
        np.testing.assert_allclose(got, want, rtol=1e-9)
    for ms in res.modes:
        assert ms.first_order_std_hz == pytest.approx(ms.std_hz, rel=0.03)
