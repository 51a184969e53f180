"""Large clusters of massless junctions: condensed on the sparse rows of the stiffness factor,
as accurate as the small ones whatever the stiffness contrast.

References: springs in series (compliances add, 1/k = sum 1/k_i: math), computed in exact
rational arithmetic (fractions); and mpmath eigenvalues built from the model data alone
(tests/solver/sw_mp.py, 60 digits).
"""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
from sw_mp import frequencies_hz as mp_frequencies

import solver
from solver import Anchor, Mass, Model, Spring, factor


def junction_chain(n, ks, kind="line"):
    """Anchor g - junctions j0 .. j{n-1} - a 1 kg mass A, springs ks (n + 1 of them)."""
    nodes = ["g"] + [f"j{i}" for i in range(n)] + ["A"]
    masses = tuple(Mass(f"j{i}", i + 1.0, 0.0, 0.0) for i in range(n)) + (
        Mass("A", n + 1.0, 0.0, 1.0),)
    return Model(kind=kind, masses=masses, anchors=(Anchor("g", 0.0, 0.0),),
                 springs=tuple(Spring(f"s{i}", nodes[i], nodes[i + 1], ks[i])
                               for i in range(n + 1)))


def series_hz(ks, mass=1.0):
    """sqrt(k_eff / m) / 2 pi with 1/k_eff = sum 1/k_i in exact rational arithmetic."""
    k_eff = 1 / sum(1 / Fraction(k) for k in ks)
    return math.sqrt(float(k_eff) / mass) / (2 * math.pi)


@pytest.mark.parametrize("n", [1400, 1600])
def test_long_junction_chain_is_springs_in_series(n):
    """A single cluster of 1600 junction DOFs with springs alternating 1e3 and 1e9 N/m (the
    review's case, shown as 0.308 Hz with a false 'held by no spring' warning before): springs
    in series (math), exact rationals. rtol 1e-12; the estimated error is honest (no larger
    than 1e-12 and no smaller than the true one needs); no warning."""
    ks = [1e3 if i % 2 == 0 else 1e9 for i in range(n)] + [1e3]
    res = solver.modes(junction_chain(n, ks))
    expected = series_hz(ks)
    assert res.frequencies_hz.shape == (1,)
    np.testing.assert_allclose(res.frequencies_hz, [expected], rtol=1e-12)
    assert res.frequency_rtol[0] <= 1e-12
    assert res.warnings == ()
    assert res.zero_modes == ()


def test_long_torsion_chain_with_contrast_1e12():
    """Torsion works the same: 2000 shaft segments through massless hubs, stiffness 1 to 1e12
    N m/rad in a random order, on a 2 kg m^2 disc. Springs in series (math), exact rationals,
    rtol 1e-12."""
    rng = np.random.default_rng(7)
    n = 2000
    ks = list(10.0 ** rng.uniform(0, 12, n + 1))
    model = junction_chain(n, ks, kind="torsion")
    model = model.with_changes(put=[Mass("A", n + 1.0, 0.0, 2.0)])
    res = solver.modes(model)
    np.testing.assert_allclose(res.frequencies_hz, [series_hz(ks, 2.0)], rtol=1e-12)
    assert res.warnings == ()


def zigzag_mesh(stiff, seed):
    """A planar web of 10 junctions in a zig-zag (two rows, diagonals between them) carrying
    two masses, with some links `stiff` times the rest, transverse stiffness in the web (so it
    is no mechanism) and one pair of springs in line through a junction of their own (a
    junction direction nothing holds)."""
    rng = np.random.default_rng(seed)
    top = [Mass(f"t{i}", float(i), 1.0 + 0.2 * rng.random(), 0.0) for i in range(5)]
    bot = [Mass(f"b{i}", float(i) + 0.5, 0.0, 0.0) for i in range(5)]
    heavy = (Mass("m1", -1.0, 0.5, 1.5), Mass("m2", 6.0, 0.5, 0.7))
    springs = []
    for i in range(5):
        springs.append(Spring(f"d{i}", f"t{i}", f"b{i}", 1e3 * (stiff if i % 2 else 1.0),
                              k_t=100.0 * (i + 1)))
        if i:
            springs.append(Spring(f"u{i}", f"t{i - 1}", f"t{i}",
                                  1e3 * (stiff if i == 2 else 1.0),
                                  k_t=float(rng.uniform(50.0, 300.0))))
            springs.append(Spring(f"w{i}", f"b{i - 1}", f"t{i}", 800.0, k_t=30.0))
    springs += [Spring("in", "m1", "t0", 2e3), Spring("out", "b4", "m2", 1.5e3 * stiff),
                Spring("g1", "G", "m1", 500.0, k_t=80.0), Spring("h", "G", "b0", 900.0), Spring("g2", "H", "m2", 700.0, k_t=50.0),
                # in line through a junction of its own: its y direction is held by nothing
                Spring("l1", "m2", "free", 1e3),
                Spring("l2", "free", "K", 1e3 * stiff)]
    return Model(kind="planar", masses=tuple(top + bot) + heavy + (Mass("free", 7.0, 0.5, 0.0),),
                 anchors=(Anchor("G", -2.0, 0.5), Anchor("H", 6.0, -1.0), Anchor("K", 8.0, 0.5)),
                 springs=tuple(springs))


@pytest.mark.parametrize("stiff", [1.0, 1e6, 1e10])
@pytest.mark.parametrize("seed", [0, 1])
def test_sparse_elimination_matches_mpmath_on_a_planar_web(monkeypatch, stiff, seed):
    """The junction-by-junction elimination used for large clusters, forced on a small planar
    web (CLUSTER_DENSE_LIMIT = 0) so that a 60-digit mpmath reference (sw_mp, model data only)
    is affordable: every frequency to rtol 1e-9 (and within 10x its own error estimate), the
    loose junction direction found (one warning), no zero mode invented."""
    model = zigzag_mesh(stiff, seed)
    ref = np.array(mp_frequencies(model, 60))
    monkeypatch.setattr(factor, "CLUSTER_DENSE_LIMIT", 0)
    res = solver.modes(model)
    got = res.frequencies_hz
    assert got.shape == ref.shape
    err = np.abs(got - ref) / ref
    assert np.all(err <= 1e-9), (got, ref)
    assert np.all(err <= np.maximum(10 * res.frequency_rtol, 1e-13))
    assert res.zero_modes == ()
    loose = [w for w in res.warnings if "held by no spring" in w]
    assert len(loose) == 1 and '"free"' in loose[0]


def test_sparse_and_dense_cluster_paths_agree_on_junction_motion(monkeypatch):
    """The recovered junction motion (all_shapes) is the same least-motion solution by both
    condensations (independent algorithms: one pivoted QR of the cluster, against elimination
    junction by junction), to 1e-8 of the largest amplitude, mode by mode."""
    model = zigzag_mesh(1e6, 3)
    dense = solver.modes(model)
    monkeypatch.setattr(factor, "CLUSTER_DENSE_LIMIT", 0)
    sparse = solver.modes(model)
    for j in range(dense.n_modes):
        a, b = dense.all_shapes[:, j], sparse.all_shapes[:, j]
        b = b * np.sign(a @ b)
        assert np.max(np.abs(a - b)) <= 1e-8 * np.max(np.abs(a))
