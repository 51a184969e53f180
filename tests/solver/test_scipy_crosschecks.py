"""The solver against independent scipy references (REFERENCES.md section 10).

Matrices for the references are built by hand from the model data where that is simple (chains), or
taken from ``solver.assemble`` when the check is of the eigen/response solvers rather than assembly.
"""

from __future__ import annotations


import numpy as np
import pytest
import scipy.integrate
import scipy.linalg

import solver
from solver import Anchor, Damper, Mass, Model, Spring
from sw_builders import chain, dense, mac, state_matrix

RNG_SEED = 20240611
IVP = dict(method="DOP853", rtol=1e-10, atol=1e-13)


def _chain_tridiagonal(masses, ks, left, right):
    """d_i = K_ii/m_i, e_i = K_i,i+1/sqrt(m_i m_i+1) of a chain, built by hand from its springs."""
    m = np.asarray(masses, float)
    ks = list(ks)
    n = len(m)
    kl = ks[0] if left else 0.0
    inner = np.array(ks[1:] if left else ks[:])[: n - 1]
    kr = ks[-1] if right else 0.0
    diag = np.zeros(n)
    diag[:-1] += inner
    diag[1:] += inner
    diag[0] += kl
    diag[-1] += kr
    return diag / m, -inner / np.sqrt(m[:-1] * m[1:])


@pytest.mark.parametrize("left, right", [(True, True), (True, False), (False, False)])
def test_random_chains_vs_eigh_tridiagonal(left, right):
    """scipy.linalg.eigh_tridiagonal(d, e) for chains: d_i = K_ii/m_i, e_i = K_i,i+1/sqrt(m_i m_i+1)
    (REFERENCES.md section 10); eigenvalues rtol 1e-10 of the largest, shapes by MAC."""
    rng = np.random.default_rng(RNG_SEED + left + 2 * right)
    for n in (2, 7, 30):
        masses = rng.uniform(0.2, 5.0, n)
        ks = rng.uniform(100.0, 5000.0, n - 1 + left + right)
        r = solver.modes(chain(masses, ks, left=left, right=right))
        d, e = _chain_tridiagonal(masses, ks, left, right)
        lam, u = scipy.linalg.eigh_tridiagonal(d, e)
        np.testing.assert_allclose(r.eigenvalues, lam, rtol=1e-10, atol=1e-10 * lam.max())
        phi = u / np.sqrt(masses)[:, None]
        start = 0 if left or right else 1  # the free-free rigid mode is checked by its sum below
        for j in range(start, n):
            assert mac(r.shapes[:, j], phi[:, j]) > 1 - 1e-9
        if not (left or right):
            assert mac(r.shapes[:, 0], np.ones(n)) > 1 - 1e-12


def _random_planar(rng, n=6):
    masses = tuple(Mass(f"m{i}", float(rng.uniform(-1, 1)), float(rng.uniform(-1, 1)),
                        float(rng.uniform(0.5, 3.0))) for i in range(n))
    anchors = (Anchor("A", -2.0, 0.0), Anchor("B", 2.0, 0.3))
    springs = []
    for i in range(n - 1):
        springs.append(Spring(f"s{i}", f"m{i}", f"m{i + 1}", float(rng.uniform(200, 2000)),
                              k_t=float(rng.uniform(0, 300))))
    springs += [Spring("sa", "A", "m0", 1500.0, k_t=100.0), Spring("sb", f"m{n - 1}", "B", 900.0),
                Spring("sx", "m0", f"m{n - 1}", 700.0)]
    return Model(kind="planar", masses=masses, anchors=anchors, springs=tuple(springs))


@pytest.mark.parametrize("which", ["planar", "torsion", "line-y"])
def test_dense_path_vs_scipy_eigh(which):
    """scipy.linalg.eigh(K, M): ascending lambda and M-orthonormal vectors (REFERENCES.md section 10),
    on the solver's assembled matrices."""
    rng = np.random.default_rng(RNG_SEED)
    if which == "planar":
        model = _random_planar(rng)
    else:
        n = 8
        model = chain(rng.uniform(0.5, 2.0, n), rng.uniform(300, 900, n), left=True, right=False)
        if which == "torsion":
            model = model.with_changes(kind="torsion")
        else:
            model = model.with_changes(axis="y")
    sysm = solver.assemble(model)
    K, M = dense(sysm.K), dense(sysm.M)
    lam, v = scipy.linalg.eigh(K, M)
    r = solver.modes(model)
    assert r.method == "dense"
    np.testing.assert_allclose(r.eigenvalues, lam, rtol=1e-10, atol=1e-10 * lam.max())
    for j in range(len(lam)):
        assert mac(r.shapes[:, j], v[:, j]) > 1 - 1e-9
    np.testing.assert_allclose(r.shapes.T @ M @ r.shapes, np.eye(len(lam)), atol=1e-12)


@pytest.mark.parametrize("boundary", ["FR", "XX"])
def test_sparse_path_5000_dof_chain_vs_eigh_tridiagonal(boundary):
    """scipy.linalg.eigh_tridiagonal(d, e) for chains (REFERENCES.md section 10), select='i', on a
    5,000-DOF chain:
    the sparse shift-invert path's 20 lowest modes, fixed-free and free-free (a rigid mode)."""
    rng = np.random.default_rng(RNG_SEED + 5)
    n = 5000
    left = boundary == "FR"
    masses = rng.uniform(0.5, 1.5, n)
    ks = rng.uniform(5e5, 1.5e6, n - 1 + left)
    model = chain(masses, ks, left=left, right=False)
    r = solver.modes(model, count=20)
    assert r.system.sparse and r.method != "dense" and not r.complete
    d, e = _chain_tridiagonal(masses, ks, left, False)
    _, u = scipy.linalg.eigh_tridiagonal(d, e, select="i", select_range=(0, 19))
    # The default driver is accurate to eps ||A|| ~ 3e-9 absolutely, which is 1e-8 relative on the
    # lowest lambda here; bisection (stebz) with a tiny tolerance resolves the small eigenvalues to
    # near relative precision, so it is the reference for lambda.
    lam = scipy.linalg.eigh_tridiagonal(d, e, eigvals_only=True, select="i", select_range=(0, 19),
                                        lapack_driver="stebz", tol=1e-300)
    if boundary == "XX":
        assert r.eigenvalues[0] == 0.0 and abs(lam[0]) < 1e-6 * lam[1]
        assert [z.kind for z in r.zero_modes] == ["rigid"]
        np.testing.assert_allclose(r.eigenvalues[1:], lam[1:], rtol=1e-9)
    else:
        np.testing.assert_allclose(r.eigenvalues, lam, rtol=1e-9)
    phi = u / np.sqrt(masses)[:, None]
    for j in range(20):
        assert mac(r.shapes[:, j], phi[:, j]) > 1 - 1e-8, j
    np.testing.assert_allclose(np.einsum("ij,i,ik->jk", r.shapes, masses, r.shapes), np.eye(20),
                               atol=1e-9)


def _ivp_reference(M, K, C, x0, v0, t):
    A = state_matrix(M, K, C)
    sol = scipy.integrate.solve_ivp(lambda _t, z: A @ z, (0.0, float(t[-1])),
                                    np.concatenate([x0, v0]), t_eval=t, **IVP)
    assert sol.success
    n = len(x0)
    return sol.y[:n].T, sol.y[n:].T


def _compare_with_ivp(model, t, x0_map, v0_map, atol):
    sysm = solver.assemble(model)
    M, K = dense(sysm.M), dense(sysm.K)
    C = dense(sysm.C)
    if model.damping.model == "rayleigh":
        C = C + model.damping.alpha * M + model.damping.beta * K
    idx = {d: i for i, d in enumerate(sysm.dofs)}
    x0 = np.zeros(len(idx))
    v0 = np.zeros(len(idx))
    for key, val in x0_map.items():
        x0[idx[key]] = val
    for key, val in v0_map.items():
        v0[idx[key]] = val
    xr, vr = _ivp_reference(M, K, C, x0, v0, t)
    fr = solver.free_response(model, t, x0=x0_map, v0=v0_map)
    cols = [fr.dofs.index(d) for d in sysm.dofs]
    np.testing.assert_allclose(fr.displacement[:, cols], xr, rtol=0, atol=atol)
    return fr


def test_free_response_vs_solve_ivp_fixed_chain():
    """scipy.integrate.solve_ivp(DOP853, rtol=1e-10, atol=1e-13): time responses to ~1e-8
    (REFERENCES.md section 10). A fixed-free chain of unequal masses, modal superposition."""
    rng = np.random.default_rng(RNG_SEED + 1)
    model = chain(rng.uniform(0.5, 2, 4), rng.uniform(200, 800, 4), left=True, right=False)
    fr = _compare_with_ivp(model, np.linspace(0, 1.0, 41), {("m1", "x"): 0.01, ("m3", "x"): -0.02},
                           {("m4", "x"): 0.1}, atol=1e-9)
    assert fr.method == "modal"


def test_free_response_vs_solve_ivp_rigid_body():
    """solve_ivp(DOP853, rtol=1e-10, atol=1e-13) (REFERENCES.md section 10) on a free-free chain with
    a net momentum: the rigid-body term v (a + b t) must be included."""
    model = chain([1.0, 2.0, 0.5], [400.0, 900.0], left=False, right=False)
    t = np.linspace(0, 2.0, 51)
    fr = _compare_with_ivp(model, t, {("m1", "x"): 0.02}, {("m2", "x"): 0.3, ("m3", "x"): 0.1},
                           atol=1e-9)
    # momentum 0.65 kg m/s over 3.5 kg: the centre of mass drifts linearly
    com = fr.displacement @ np.array([1.0, 2.0, 0.5]) / 3.5
    np.testing.assert_allclose(com, (0.02 * 1.0) / 3.5 + 0.65 / 3.5 * t, atol=1e-12)


def test_free_response_vs_solve_ivp_planar():
    """solve_ivp(DOP853, rtol=1e-10, atol=1e-13) (REFERENCES.md section 10) on a planar layout with
    inclined springs and transverse stiffness."""
    model = _random_planar(np.random.default_rng(RNG_SEED + 2), n=3)
    _compare_with_ivp(model, np.linspace(0, 0.5, 26), {("m0", "x"): 0.01, ("m2", "y"): -0.01},
                      {("m1", "y"): 0.2}, atol=1e-9)


def test_dashpot_state_space_vs_solve_ivp():
    """solve_ivp(DOP853, rtol=1e-10, atol=1e-13) (REFERENCES.md section 10) on a chain with a
    non-proportional dashpot: the solver's matrix-exponential path, both on a uniform and a
    non-uniform time grid."""
    base = chain([1.0, 2.0, 1.5], [500.0, 800.0, 300.0], left=True, right=False)
    model = base.with_changes(put=[Damper("c1", "m1", "m2", 6.0), Damper("c2", "A", "m3", 2.5)])
    for t in (np.linspace(0, 1.5, 31), np.array([0.0, 0.013, 0.4, 0.41, 1.5])):
        fr = _compare_with_ivp(model, t, {("m1", "x"): 0.01}, {("m3", "x"): -0.2}, atol=1e-9)
        assert fr.method == "state-space"


def test_massless_junction_equals_series_springs():
    """Springs in series (math): k1, k2 through a massless junction act as k1 k2/(k1 + k2). The
    junction's recovered motion is the static divider x_j = k2 x_b/(k1 + k2) for ends a = ground."""
    k1, k2, k3 = 600.0, 1400.0, 900.0
    with_junction = Model(kind="line", masses=(Mass("j", 1.0, 0, 0.0), Mass("m1", 2.0, 0, 2.0),
                                               Mass("m2", 3.0, 0, 1.0)),
                          anchors=(Anchor("A", 0.0, 0.0),),
                          springs=(Spring("s1", "A", "j", k1), Spring("s2", "j", "m1", k2),
                                   Spring("s3", "m1", "m2", k3)))
    by_hand = chain([2.0, 1.0], [k1 * k2 / (k1 + k2), k3], left=True, right=False)
    r1, r2 = solver.modes(with_junction), solver.modes(by_hand)
    assert r1.dofs == (("m1", "x"), ("m2", "x"))
    np.testing.assert_allclose(r1.eigenvalues, r2.eigenvalues, rtol=1e-12)
    for j in range(2):
        assert mac(r1.shapes[:, j], r2.shapes[:, j]) > 1 - 1e-12
    ij, i1 = r1.all_dofs.index(("j", "x")), r1.all_dofs.index(("m1", "x"))
    np.testing.assert_allclose(r1.all_shapes[ij], k2 / (k1 + k2) * r1.all_shapes[i1], rtol=1e-12)
    np.testing.assert_allclose(dense(solver.assemble(with_junction).K),
                               dense(solver.assemble(by_hand).K), rtol=1e-12)


@pytest.mark.parametrize("case", ["free-line", "two-groups", "planar-free", "planar-mech",
                                  "torsion-free", "anchored"])
def test_zero_mode_count_vs_null_space(case):
    """scipy.linalg.null_space(K): number of zero modes (REFERENCES.md section 10)."""
    if case == "free-line":
        model = chain([1, 2, 3], [100, 200], left=False, right=False)
    elif case == "two-groups":
        model = Model(kind="line", masses=tuple(Mass(f"m{i}", i, 0, 1.0) for i in range(4)),
                      springs=(Spring("s1", "m0", "m1", 100.0), Spring("s2", "m2", "m3", 100.0)))
    elif case == "planar-free":
        model = Model(kind="planar", masses=(Mass("a", 0, 0, 1), Mass("b", 1, 0, 1),
                                             Mass("c", 0, 1, 2)),
                      springs=(Spring("s1", "a", "b", 100.0), Spring("s2", "b", "c", 100.0),
                               Spring("s3", "c", "a", 100.0)))
    elif case == "planar-mech":
        model = Model(kind="planar", masses=(Mass("a", 1, 0, 1), Mass("b", 2, 0, 1)),
                      anchors=(Anchor("A", 0, 0),),
                      springs=(Spring("s1", "A", "a", 100.0), Spring("s2", "a", "b", 100.0)))
    elif case == "torsion-free":
        model = chain([0.1, 0.3, 0.2], [50, 80], left=False, right=False).with_changes(
            kind="torsion")
    else:
        model = chain([1, 2], [100, 200, 300], left=True, right=True)
    K = dense(solver.assemble(model).K)
    expected = scipy.linalg.null_space(K, rcond=1e-10).shape[1]
    r = solver.modes(model)
    assert len(r.zero_modes) == expected
    assert np.count_nonzero(r.eigenvalues == 0.0) == expected


def test_junction_that_frees_its_masses_gives_zero_modes():
    """math: a massless junction held by two non-parallel springs can always sit where neither is
    stretched, so the masses behind it move with no stiffness: here every one of the 5 mass DOFs
    (m1 alone in y; m0 and m3 behind junction j in x and y) is a zero mode, as
    scipy.linalg.null_space of the uncondensed K (junction DOFs included) confirms. The condensed K
    is pure rounding (~1e-13); no mode may come out 'elastic' at ~1e-13 (rad/s)^2, and the shapes
    must stay M-orthonormal (found by hypothesis; regression)."""
    model = Model(kind="planar",
                  masses=(Mass("m0", 0.9602948566449299, 3.0, 2.3243865982285663),
                          Mass("m1", 0.0, 3.171906476854944, 4.802350463203438, fixed=("x",)),
                          Mass("j", 1.916862229871883, 3.8536476226096132, 0.0),
                          Mass("m3", 0.2040915340717177, 2.1362499629606, 1.4216750453784006)),
                  springs=(Spring("s0", "m3", "j", 10.0), Spring("s1", "j", "m0", 10.0)))
    sysm = solver.assemble(model)
    expected = scipy.linalg.null_space(dense(sysm.K_full), rcond=1e-10).shape[1]
    assert len(sysm.all_dofs) == 7 and expected == 7 - 2  # 7 DOFs less the 2 springs' stretches
    r = solver.modes(model)
    assert r.n_modes == 5 and len(r.zero_modes) == 5
    assert np.all(r.eigenvalues == 0.0)
    np.testing.assert_allclose(r.shapes.T @ dense(sysm.M) @ r.shapes, np.eye(5), atol=1e-12)
    assert not solver.analyse(model).sensitivity.valid.any()
