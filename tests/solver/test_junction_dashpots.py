"""Dashpots on massless junctions: free response, damped modes and FRF of the exact descriptor system.

A massless junction carrying a dashpot obeys a first-order equation (no inertia, a damping force):
``M x'' + C x' + K x = f`` on the masses coupled to ``C_s x_s' + K_s x_s + ... = 0`` on the
junctions. The references here are built from the element lists by hand (own stamps, not
solver.assemble):

- characteristic polynomials worked by hand, rooted by numpy.roots;
- the roots of det(s^2 M + s C + K) by scipy.linalg.eig on the full descriptor pencil (QZ, every
  DOF kept, infinite eigenvalues dropped): an independent algorithm;
- mpmath's matrix exponential at 40 digits on the hand-written Maxwell mount;
- scipy.integrate.solve_ivp (Radau, rtol 1e-11) on the equations written from the stamps, the
  junction velocities found from the junction force balance (differentiated once along directions
  no dashpot damps);
- the three-element (relaxation) isolator of Ruzicka and Derby (Harris' Shock and Vibration
  Handbook, ch. 30 (from memory)).

Initial state convention (the solver's, stated in damping.StateSpace.initial_state): junctions start
where the springs alone put them for the masses' initial displacements, so every junction dashpot is
unloaded at t = 0.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.integrate
import scipy.linalg
from hypothesis import given, settings
from hypothesis import strategies as st

import solver
from solver import Anchor, Damper, Damping, Mass, Model, Spring
from solver.damping import state_space

TWO_PI = 2 * math.pi
RADAU = dict(method="Radau", rtol=1e-11, atol=1e-15)


# --------------------------------------------------------------------------------------------
# independent references, from the element lists


def stamps(model: Model, extra_damping: str = "model"):
    """Full M, K, C on every free DOF (junctions included), stamped from the elements.

    Returns (dofs, M, K, C): dofs as (mass_id, direction) in model order. A planar element acts
    along its drawn line e with k e e^T + k_t n n^T (n at right angles to e). C holds the dashpots,
    plus Rayleigh alpha M + beta K when the model has Rayleigh damping.
    """
    dirs = ("x", "y") if model.kind == "planar" else (model.directions[0],)
    dofs = [(m.id, d) for m in model.masses for d in dirs if d not in m.fixed]
    index = {d: i for i, d in enumerate(dofs)}
    pos = {n.id: np.array([n.x, n.y], float) for n in model.masses + model.anchors}
    n = len(dofs)
    M, K, C = np.zeros((n, n)), np.zeros((n, n)), np.zeros((n, n))
    for m in model.masses:
        for d in dirs:
            if (m.id, d) in index:
                M[index[m.id, d], index[m.id, d]] = m.mass

    def stamp(mat, a, b, along, across=0.0):
        if len(dirs) == 1:
            S = np.array([[along]])
        else:
            e = (pos[b] - pos[a]) / np.linalg.norm(pos[b] - pos[a])
            nv = np.array([-e[1], e[0]])
            S = along * np.outer(e, e) + across * np.outer(nv, nv)
        for sa, na in ((1, a), (-1, b)):
            for sb, nb in ((1, a), (-1, b)):
                for i, di in enumerate(dirs):
                    for j, dj in enumerate(dirs):
                        if (na, di) in index and (nb, dj) in index:
                            mat[index[na, di], index[nb, dj]] += sa * sb * S[i, j]

    for s in model.springs:
        stamp(K, s.a, s.b, s.k, s.k_t if model.kind == "planar" else 0.0)
    for d in model.dampers:
        stamp(C, d.a, d.b, d.c)
    if model.damping.model == "rayleigh":
        C = C + model.damping.alpha * M + model.damping.beta * K
    return dofs, M, K, C


def modal_damping_matrix(M, K, mass_rows, ratio):
    """M Phi diag(2 zeta w) Phi^T M on the full DOFs, Phi the undamped modes with the junctions
    condensed statically (Chopra, Dynamics of Structures, 11.4 (mem); the model's definition of
    modal ratios)."""
    m, s = mass_rows, ~mass_rows
    Kc = K[np.ix_(m, m)] - K[np.ix_(m, s)] @ np.linalg.solve(K[np.ix_(s, s)], K[np.ix_(s, m)])
    lam, phi = scipy.linalg.eigh(Kc, M[np.ix_(m, m)])
    Mphi = M[np.ix_(m, m)] @ phi
    out = np.zeros_like(K)
    out[np.ix_(m, m)] = Mphi @ np.diag(2 * ratio * np.sqrt(np.maximum(lam, 0))) @ Mphi.T
    return out


def reference_state_matrix(M, K, C):
    """First-order matrix of the descriptor system in the state [x_m, v_m, x_s] (all junction DOFs).

    Junction velocities from the junction force balance C_s. v + K_s. x = 0, stacked with its time
    derivative along N = null_space(C_ss) (there the balance is a constraint on positions, so
    N^T K_s. v = 0), solved by least squares (consistent: exact). Mass accelerations from Newton.
    """
    mrow = np.diag(M) > 0
    mi, si = np.flatnonzero(mrow), np.flatnonzero(~mrow)
    nm, ns = len(mi), len(si)
    N = scipy.linalg.null_space(C[np.ix_(si, si)]) if ns else np.zeros((0, 0))
    nz = 2 * nm + ns
    A = np.zeros((nz, nz))
    for col in range(nz):
        z = np.zeros(nz)
        z[col] = 1.0
        x = np.zeros(len(M))
        x[mi], x[si] = z[:nm], z[2 * nm:]
        vm = z[nm:2 * nm]
        rhs_top = -(K[si] @ x + C[np.ix_(si, mi)] @ vm)
        lhs = C[np.ix_(si, si)]
        if N.shape[1]:
            lhs = np.vstack([lhs, N.T @ K[np.ix_(si, si)]])
            rhs_top = np.concatenate([rhs_top, -N.T @ K[np.ix_(si, mi)] @ vm])
        vs = np.linalg.lstsq(lhs, rhs_top, rcond=None)[0] if ns else np.zeros(0)
        v = np.zeros(len(M))
        v[mi], v[si] = vm, vs
        acc = -(K[mi] @ x + C[mi] @ v) / np.diag(M)[mi]
        A[:nm, col] = vm
        A[nm:2 * nm, col] = acc
        A[2 * nm:, col] = vs
    return A, mi, si


def reference_free(model, x0: dict, v0: dict, t, damping_matrix=None):
    """solve_ivp (Radau, rtol 1e-11, atol 1e-15) from the stamps; junctions start at static
    equilibrium with the masses (lstsq of K_ss x_s = -K_sm x_m). Returns dofs, x(t), v(t) on all
    DOFs, (n_t, n)."""
    dofs, M, K, C = stamps(model)
    if damping_matrix is not None:
        C = C + damping_matrix
    A, mi, si = reference_state_matrix(M, K, C)
    nm = len(mi)
    xm = np.array([x0.get(dofs[i], 0.0) for i in mi])
    vm = np.array([v0.get(dofs[i], 0.0) for i in mi])
    xs = np.linalg.lstsq(K[np.ix_(si, si)], -K[np.ix_(si, mi)] @ xm, rcond=None)[0]
    z0 = np.concatenate([xm, vm, xs])
    sol = scipy.integrate.solve_ivp(lambda _t, z: A @ z, (float(t[0]), float(t[-1])), z0,
                                    t_eval=t, jac=A, **RADAU)
    assert sol.success
    Z = sol.y.T
    X, V = np.zeros((len(t), len(dofs))), np.zeros((len(t), len(dofs)))
    X[:, mi], X[:, si] = Z[:, :nm], Z[:, 2 * nm:]
    V[:, mi] = Z[:, nm:2 * nm]
    V[:, si] = (Z @ A.T)[:, 2 * nm:]
    return dofs, X, V


def pencil_roots(M, K, C):
    """Finite roots of det(s^2 M + s C + K) = 0 by QZ (scipy.linalg.eig(A, E)) on
    E = diag(I, M), A = [[0, I], [-K, -C]] over every DOF; the massless rows give infinite
    eigenvalues, dropped."""
    n = len(M)
    E = scipy.linalg.block_diag(np.eye(n), M)
    A = np.block([[np.zeros((n, n)), np.eye(n)], [-K, -C]])
    ab = scipy.linalg.eig(A, E, right=False, homogeneous_eigvals=True)
    alpha, beta = ab
    finite = np.abs(beta) > 1e-9 * np.maximum(np.abs(alpha), np.abs(beta))
    return alpha[finite] / beta[finite]


def all_roots(dm) -> np.ndarray:
    """Every root of a DampedModes: both members of each oscillating pair and the real roots."""
    s = dm.eigenvalues
    return np.concatenate([s, s.conj(), dm.real_roots.astype(complex)])


def assert_same_roots(got, ref, rtol, atol):
    """Multisets of complex roots equal within tolerance (greedy nearest matching)."""
    got, ref = list(np.asarray(got, complex)), list(np.asarray(ref, complex))
    assert len(got) == len(ref), (np.sort_complex(np.array(got)), np.sort_complex(np.array(ref)))
    for r in sorted(ref, key=abs):
        j = int(np.argmin([abs(g - r) for g in got]))
        assert abs(got[j] - r) <= atol + rtol * abs(r), (got[j], r)
        got.pop(j)


def transfer(ss, w, out_rows, inp):
    """H(i w) = D (i w I - A)^-1 B[:, inp] of the solver's state model, (n_w, n_out)."""
    n = ss.A.shape[0]
    return np.array([ss.displacement[out_rows] @ np.linalg.solve(1j * wi * np.eye(n) - ss.A,
                                                                 ss.B[:, inp]) for wi in w])


# --------------------------------------------------------------------------------------------
# the Maxwell element (standard linear solid mount)


def maxwell(m=1.0, k1=1000.0, k2=2000.0, c=20.0):
    """Mass m on k1 to ground; k2 from m to a junction J; dashpot c from J to ground."""
    return Model(kind="line", masses=(Mass("m", 1, 0, m), Mass("J", 2, 0, 0.0)),
                 anchors=(Anchor("g", 0, 0), Anchor("h", 3, 0)),
                 springs=(Spring("k1", "g", "m", k1), Spring("k2", "m", "J", k2)),
                 dampers=(Damper("c", "J", "h", c),))


@pytest.mark.parametrize("c", [0.5, 20.0, 60.0, 2000.0, 1e5])
def test_maxwell_roots_against_characteristic_polynomial(c):
    """Worked by hand (math): m x'' + k1 x + k2 (x - y) = 0 and c y' = k2 (x - y). In Laplace,
    Y = k2 X / (c s + k2), so (m s^2 + k1 + k2)(c s + k2) - k2^2 = 0:

        m c s^3 + m k2 s^2 + c (k1 + k2) s + k1 k2 = 0,

    three roots (numpy.roots): an oscillating pair and a real relaxation root (or three real
    roots). damped_modes must give them all, rtol 1e-10; the statically condensed approximation
    m s^2 + c s + k1 = 0 is far off for moderate c (the test can tell)."""
    m, k1, k2 = 1.0, 1000.0, 2000.0
    dm = solver.damped_modes(maxwell(m, k1, k2, c))
    ref = np.roots([m * c, m * k2, c * (k1 + k2), k1 * k2])
    assert_same_roots(all_roots(dm), ref, rtol=1e-10, atol=1e-12)
    n_real = int(np.sum(np.abs(ref.imag) < 1e-9 * np.abs(ref)))
    assert len(dm.real_roots) == n_real and len(dm.eigenvalues) == (3 - n_real) // 2
    assert np.all(dm.real_roots < 0)
    np.testing.assert_allclose(dm.time_constants_s, -1.0 / dm.real_roots, rtol=1e-15)
    if dm.eigenvalues.size:
        s = dm.eigenvalues[0]
        assert dm.natural_frequencies_hz[0] == pytest.approx(abs(s) / TWO_PI, rel=1e-14)
        assert dm.damping_ratios[0] == pytest.approx(-s.real / abs(s), rel=1e-14)
    if c == 20.0:
        approx = np.roots([m, c, k1])
        assert abs(dm.eigenvalues[0] - approx[approx.imag > 0][0]) > 0.1 * abs(approx[0])


@pytest.mark.parametrize("grid", ["uniform", "few-steps", "many-steps"])
def test_maxwell_free_response_against_solve_ivp(grid):
    """solve_ivp (Radau, rtol 1e-11, atol 1e-15) on the hand-written 3-state equations
    x' = v, m v' = -k1 x - k2 (x - y), c y' = k2 (x - y) with y(0) = x(0) (spring k2 unloaded,
    the dashpot at rest), from x0 = 0.01 m, v0 = -0.2 m/s; the mass and the junction, displacement
    and velocity: relative error (to the peak) below 1e-9. Uniform, few and many distinct time
    steps (exponential stepping and eigen-decomposition)."""
    m, k1, k2, c = 1.0, 1000.0, 2000.0, 20.0
    if grid == "uniform":
        t = np.linspace(0.0, 1.5, 301)
    elif grid == "few-steps":
        t = np.array([0.0, 0.013, 0.4, 0.41, 1.5, 0.2])
    else:
        t = np.concatenate([[0.0], np.geomspace(1e-4, 1.5, 200)])
    x0, v0 = 0.01, -0.2

    def rhs(_t, z):
        x, v, y = z
        return [v, (-k1 * x - k2 * (x - y)) / m, k2 * (x - y) / c]

    jac = [[0, 1, 0], [-(k1 + k2) / m, 0, k2 / m], [k2 / c, 0, -k2 / c]]
    order = np.argsort(t)
    ts = t[order]
    sol = scipy.integrate.solve_ivp(rhs, (0.0, ts[-1]), [x0, v0, x0], t_eval=ts, jac=jac,
                                    **RADAU)
    ref = {}
    for i, name in enumerate(("x", "v", "y")):
        ref[name] = np.empty(len(t))
        ref[name][order] = sol.y[i]
    ref["yd"] = k2 * (ref["x"] - ref["y"]) / c
    fr = solver.free_response(maxwell(m, k1, k2, c), t, x0={("m", "x"): x0},
                              v0={("m", "x"): v0})
    assert fr.method == "state-space"
    got = {"x": fr.of("m", "x"), "y": fr.of("J", "x"),
           "v": fr.velocity[:, fr.dofs.index(("m", "x"))],
           "yd": fr.velocity[:, fr.dofs.index(("J", "x"))]}
    for key, value in ref.items():
        err = np.abs(got[key] - value).max() / np.abs(value).max()
        assert err < 1e-9, (key, err)
    # the static condensation the solver used before (x_J = x, c on the mass) is far off: the
    # reference can tell
    wd = math.sqrt(k1 / m - (c / (2 * m)) ** 2)
    approx = np.exp(-c / (2 * m) * ts) * (x0 * np.cos(wd * ts)
                                          + (v0 + c / (2 * m) * x0) * np.sin(wd * ts) / wd)
    assert np.abs(approx - sol.y[0]).max() > 0.05 * np.abs(sol.y[0]).max()


def test_maxwell_free_response_against_mpmath():
    """mpmath (40 digits): z(t) = expm(A t) z0 for the hand-written state [x, v, y] of the Maxwell
    mount, A = [[0, 1, 0], [-(k1 + k2)/m, 0, k2/m], [k2/c, 0, -k2/c]], y(0) = x(0); the solver
    agrees to 1e-13 of the peak (mass and junction) over 2,000 uniform steps."""
    mpmath = pytest.importorskip("mpmath")
    m, k1, k2, c = 1.0, 1000.0, 2000.0, 20.0
    x0, v0 = 0.01, -0.2
    t = np.linspace(0.0, 2.0, 2001)
    fr = solver.free_response(maxwell(m, k1, k2, c), t, x0={("m", "x"): x0}, v0={("m", "x"): v0})
    with mpmath.workdps(40):
        A = mpmath.matrix([[0, 1, 0], [-(k1 + k2) / m, 0, k2 / m], [k2 / c, 0, -k2 / c]])
        z0 = mpmath.matrix([x0, v0, x0])
        picks = range(0, len(t), 100)
        ref = np.array([[float(v) for v in mpmath.expm(A * mpmath.mpf(float(t[i]))) * z0]
                        for i in picks])
    idx = list(picks)
    assert np.abs(fr.of("m", "x")[idx] - ref[:, 0]).max() < 1e-13 * abs(x0)
    assert np.abs(fr.of("J", "x")[idx] - ref[:, 2]).max() < 1e-13 * abs(x0)
    v = fr.velocity[idx, fr.dofs.index(("m", "x"))]
    assert np.abs(v - ref[:, 1]).max() < 1e-13 * np.abs(ref[:, 1]).max()


def test_maxwell_frf_against_transfer_functions():
    """Receptance of the mass, X/F = (c s + k2) / ((m s^2 + k1 + k2)(c s + k2) - k2^2) (worked by
    hand, as above), at a few frequencies: harmonic_response (direct solve of the full model) and
    the transfer function D (i w I - A)^-1 B of the solver's state model agree with it, rtol 1e-11."""
    m, k1, k2, c = 1.0, 1000.0, 2000.0, 20.0
    model = maxwell(m, k1, k2, c)
    f = np.array([0.3, 3.0, 5.0, 5.7, 9.0, 40.0])
    s = 2j * np.pi * f
    ref = (c * s + k2) / ((m * s ** 2 + k1 + k2) * (c * s + k2) - k2 ** 2)
    H = solver.harmonic_response(model, f, {("m", "x"): 1.0})[:, 0]
    np.testing.assert_allclose(H, ref, rtol=1e-11)
    ss = state_space(model)
    row = ss.system.all_dofs.index(("m", "x"))
    np.testing.assert_allclose(transfer(ss, TWO_PI * f, [row], 0)[:, 0], ref, rtol=1e-11)


# --------------------------------------------------------------------------------------------
# the three-element (relaxation) isolator


def isolator(N, zeta, m=2.0, k=800.0):
    """Mass m on a spring k to the base, and a dashpot c in series with a spring N k to the base
    (the dashpot on the mass, the spring on the base: a junction between them)."""
    c = zeta * 2 * math.sqrt(k * m)
    return Model(kind="line", masses=(Mass("m", 1, 0, m), Mass("J", 0.5, 0, 0.0)),
                 anchors=(Anchor("g", 0, 0),),
                 springs=(Spring("k", "g", "m", k), Spring("kN", "g", "J", N * k)),
                 dampers=(Damper("c", "J", "m", c),))


def T_relaxation(r, zeta, N):
    """Three-element isolator, absolute transmissibility (Ruzicka and Derby, in Harris' Shock and
    Vibration Handbook, ch. 30 (from memory)); r = w / sqrt(k/m), zeta = c / (2 sqrt(k m)):
    T^2 = (1 + 4 (N+1)^2 zeta^2 r^2 / N^2) / ((1 - r^2)^2 + 4 zeta^2 r^2 (N + 1 - r^2)^2 / N^2)."""
    return np.sqrt((1 + 4 * (N + 1) ** 2 * zeta ** 2 * r ** 2 / N ** 2)
                   / ((1 - r ** 2) ** 2 + 4 * zeta ** 2 * r ** 2 * (N + 1 - r ** 2) ** 2 / N ** 2))


@pytest.mark.parametrize("N", [1.0, 3.0, 10.0])
def test_three_element_isolator_transmissibility(N):
    """Ruzicka and Derby's relaxation isolator (Harris' Shock and Vibration Handbook, ch. 30 (from
    memory)): T(r) from the closed form; every curve passes through T = 1 + 2/N at
    r^2 = 2 (N + 1)/(N + 2) whatever the damping, and the optimum zeta = N sqrt(2 (N + 2)) /
    (4 (N + 1)) makes that the peak (from memory). Checked: base_transmissibility and the state
    model's T = 1 + w^2 m H(i w) (relative motion driven by -m u'', Harris ch. 30 (mem)) against
    the closed form, rtol 1e-10; the fixed point, rtol 1e-10; the optimum's peak 1 + 2/N on a
    grid of step 1e-5 in r, rtol 1e-6."""
    m, k = 2.0, 800.0
    wn = math.sqrt(k / m)
    r = np.linspace(0.05, 4.0, 80)
    rs = math.sqrt(2 * (N + 1) / (N + 2))
    for zeta in (0.05, 0.3, 1.0, 4.0):
        model = isolator(N, zeta, m, k)
        T = solver.base_transmissibility(model, r * wn / TWO_PI, "x")[:, 0]
        np.testing.assert_allclose(np.abs(T), T_relaxation(r, zeta, N), rtol=1e-10)
        ss = state_space(model)
        row = ss.system.all_dofs.index(("m", "x"))
        w = np.append(r, rs) * wn
        Tss = 1 + w ** 2 * m * transfer(ss, w, [row], 0)[:, 0]
        np.testing.assert_allclose(np.abs(Tss[:-1]), T_relaxation(r, zeta, N), rtol=1e-10)
        assert abs(Tss[-1]) == pytest.approx(1 + 2 / N, rel=1e-10)
    zeta_opt = N * math.sqrt(2 * (N + 2)) / (4 * (N + 1))
    ss = state_space(isolator(N, zeta_opt, m, k))
    rr = np.arange(0.5, 2.0, 1e-5)
    # the peak from the state model's eigen-decomposition (cheap on a fine grid)
    s, V = np.linalg.eig(ss.A)
    row = ss.system.all_dofs.index(("m", "x"))
    left = ss.displacement[row] @ V
    right = np.linalg.solve(V, ss.B[:, 0])
    H = (left * right) @ (1.0 / (1j * rr[None, :] * wn - s[:, None]))
    assert np.abs(1 + (rr * wn) ** 2 * m * H).max() == pytest.approx(1 + 2 / N, rel=1e-6)


# --------------------------------------------------------------------------------------------
# planar and two-junction models


def planar_junction(damping=None):
    """Mass P (2 kg) held by two inclined springs; a junction J joined to P by a spring along
    (0.8, 0.6) with k_t, and a dashpot from J to an anchor along x: J's x is damped, its y is
    held by the spring alone."""
    return Model(kind="planar",
                 masses=(Mass("P", 0, 0, 2.0), Mass("J", 0.8, 0.6, 0.0)),
                 anchors=(Anchor("A", -1, 0.2), Anchor("B", 0.1, -1), Anchor("C", 1.8, 0.6)),
                 springs=(Spring("sA", "A", "P", 1000.0), Spring("sB", "B", "P", 1500.0),
                          Spring("sJ", "P", "J", 2000.0, k_t=300.0)),
                 dampers=(Damper("cJ", "J", "C", 15.0),), damping=damping or Damping())


def two_junctions(damping=None):
    """Line: g -k1- m1 -k2- J1 -c1- g; J1 -k3- J2 -c12- m2 (a dashpot from a junction to a
    mass); J1 -c3- J2 (a dashpot between two junctions); m2 -k4- g."""
    nodes = (Mass("m1", 1, 0, 1.5), Mass("J1", 2, 0, 0.0), Mass("J2", 3, 0, 0.0),
             Mass("m2", 4, 0, 0.8))
    return Model(kind="line", masses=nodes, anchors=(Anchor("g", 0, 0), Anchor("h", 5, 0)),
                 springs=(Spring("k1", "g", "m1", 900.0), Spring("k2", "m1", "J1", 1500.0),
                          Spring("k3", "J1", "J2", 2500.0), Spring("k4", "m2", "h", 600.0)),
                 dampers=(Damper("c1", "J1", "g", 12.0), Damper("c12", "J2", "m2", 4.0),
                          Damper("c3", "J1", "J2", 7.0)),
                 damping=damping or Damping())


RAYLEIGH = Damping(model="rayleigh", alpha=0.4, beta=2e-4)
MODAL = Damping(model="modal", ratio=0.03)


def _extra_damping(model):
    """The modal-ratio matrix built by hand (None for other damping models)."""
    if model.damping.model != "modal":
        return None
    _dofs, M, K, _C = stamps(model)
    return modal_damping_matrix(M, K, np.diag(M) > 0, model.damping.ratio)


@pytest.mark.parametrize("build, damping", [(planar_junction, Damping()),
                                            (planar_junction, RAYLEIGH),
                                            (two_junctions, Damping()),
                                            (two_junctions, RAYLEIGH),
                                            (two_junctions, MODAL)])
def test_junction_dashpot_models_against_independent_references(build, damping):
    """A planar model whose junction dashpot damps one direction of the junction (the other is
    held by the spring alone) and a line model with two junctions (dashpots junction-ground,
    junction-mass and junction-junction), undamped otherwise, Rayleigh (alpha M + beta K on every
    DOF) or modal ratios:

    - damped_modes against the finite roots of det(s^2 M + s C + K) by QZ on the full descriptor
      pencil (scipy.linalg.eig), rtol 1e-9;
    - free_response on every DOF (junctions included), displacement and velocity, against
      solve_ivp (Radau, rtol 1e-11) on the equations from the stamps: error below 1e-9 of the
      peak;
    - harmonic_response against the transfer function of the solver's state model, rtol 1e-10.
    """
    model = build(damping)
    extra = _extra_damping(model)
    _dofs, M, K, C = stamps(model)
    if extra is not None:
        C = C + extra
    dm = solver.damped_modes(model)
    ref = pencil_roots(M, K, C)
    if damping.model == "rayleigh":
        # beta K along the junction direction no dashpot damps (planar: J's y) multiplies its
        # equilibrium by (1 + beta s): a root -1/beta that only a force on J excites, left out
        # by the solver (its docstring)
        at = np.abs(ref + 1 / damping.beta) <= 1e-9 / damping.beta
        assert at.sum() == (1 if build is planar_junction else 0)
        ref = ref[~at]
    assert_same_roots(all_roots(dm), ref, rtol=1e-9, atol=1e-9)
    assert len(dm.real_roots) >= 1          # the junction creep does not oscillate
    first = model.masses[0].id
    x0 = {(first, "x"): 0.01}
    v0 = {(model.masses[-1].id, "x"): -0.15}
    t = np.linspace(0.0, 1.0, 201)
    rdofs, X, V = reference_free(model, x0, v0, t, extra)
    fr = solver.free_response(model, t, x0=x0, v0=v0)
    cols = [fr.dofs.index(d) for d in rdofs]
    for got, ref in ((fr.displacement[:, cols], X), (fr.velocity[:, cols], V)):
        err = np.abs(got - ref).max() / np.abs(ref).max()
        assert err < 1e-9, err
    ss = state_space(model)
    f = np.array([0.7, 2.5, 4.0, 6.5, 11.0])
    rows = [ss.system.all_dofs.index(d) for d in ss.system.dofs]
    for j, d in enumerate(ss.system.dofs):
        H = solver.harmonic_response(model, f, {d: 1.0})
        np.testing.assert_allclose(transfer(ss, TWO_PI * f, rows, j), H, rtol=1e-10,
                                   atol=1e-12 * np.abs(H).max())


def test_planar_junction_dashpot_keeps_one_first_order_direction():
    """math: one dashpot on a planar junction damps one direction (its axis, x here); the other
    carries neither inertia nor damping and is condensed statically, so the state has
    2 x 2 + 1 = 5 coordinates, and det(s^2 M + s C + K) has degree 5 (QZ count)."""
    model = planar_junction()
    ss = state_space(model)
    assert ss.A.shape == (5, 5) and ss.n_junction == 1
    np.testing.assert_allclose(np.abs(ss.junction_basis[:, 0]), [1.0, 0.0], atol=1e-14)
    _dofs, M, K, C = stamps(model)
    assert len(pencil_roots(M, K, C)) == 5


# --------------------------------------------------------------------------------------------
# free-floating: rigid drift and neutral creep


def floating(c=5.0, k=1000.0, ma=1.0, mb=2.0):
    """No anchors: a -k- J -c- b."""
    return Model(kind="line", masses=(Mass("a", 0, 0, ma), Mass("J", 1, 0, 0.0),
                                      Mass("b", 2, 0, mb)),
                 springs=(Spring("s", "a", "J", k),), dampers=(Damper("d", "J", "b", c),))


def test_free_floating_maxwell_drifts_exactly():
    """math: internal forces keep the momentum, so the centre of mass moves as
    x_cm(0) + (p / m_total) t exactly, however long (atol 1e-13 m over 100 s); a common velocity
    is a rigid drift v t of every DOF, junction included (atol 1e-13 m; velocities 1e-11 m/s,
    see below). Relative motion against
    solve_ivp (Radau, rtol 1e-11), below 1e-9 of the peak."""
    ma, mb = 1.0, 2.0
    model = floating(ma=ma, mb=mb)
    t = np.linspace(0.0, 100.0, 2001)
    fr = solver.free_response(model, t, x0={("a", "x"): 0.01}, v0={("a", "x"): 0.3,
                                                                   ("b", "x"): -0.05})
    com = (ma * fr.of("a", "x") + mb * fr.of("b", "x")) / (ma + mb)
    p = ma * 0.3 + mb * -0.05
    np.testing.assert_allclose(com, ma * 0.01 / (ma + mb) + p / (ma + mb) * t, rtol=0, atol=1e-13)
    drift = solver.free_response(model, t, v0={("a", "x"): 0.2, ("b", "x"): 0.2})
    np.testing.assert_allclose(drift.displacement, 0.2 * t[:, None] * np.ones((1, 3)),
                               rtol=0, atol=1e-13)
    # the junction's velocity is (k/c) times a difference of displacements of size v t: its
    # rounding is eps k/c v t ~ 1e-12 m/s at 100 s
    np.testing.assert_allclose(drift.velocity, 0.2, rtol=0, atol=1e-11)
    ts = t[:101]
    rdofs, X, _V = reference_free(model, {("a", "x"): 0.01}, {("a", "x"): 0.3, ("b", "x"): -0.05},
                                  ts)
    cols = [fr.dofs.index(d) for d in rdofs]
    assert np.abs(fr.displacement[:101, cols] - X).max() < 1e-9 * np.abs(X).max()


def test_free_floating_maxwell_roots():
    """Worked by hand (math): with mu = ma mb / (ma + mb) and the relative coordinate d = xb - xa,
    the Maxwell element's force is k c s / (k + c s) d, so s^2 (mu s^2 (k + c s) + k c s) = 0:
    roots 0, 0 (rigid drift), 0 (a relative offset with the spring unloaded is neutral: the
    dashpot creeps) and those of mu c s^2 + mu k s + k c (numpy.roots), rtol 1e-10. damped_modes
    reports the zeros exactly (deflated rigid motion), not as tiny oscillations."""
    ma, mb, k, c = 1.0, 2.0, 1000.0, 5.0
    dm = solver.damped_modes(floating(c, k, ma, mb))
    mu = ma * mb / (ma + mb)
    ref = np.roots([mu * c, mu * k, k * c])
    assert dm.eigenvalues.size == 0
    np.testing.assert_array_equal(dm.real_roots[:3], 0.0)
    assert np.all(np.isinf(dm.time_constants_s[:3]))
    np.testing.assert_allclose(np.sort(dm.real_roots[3:]), np.sort(ref.real), rtol=1e-10)


def test_junctions_joined_only_by_a_dashpot_stay_still():
    """Two junctions joined only by a dashpot, the mass on its own spring: the junctions carry no
    force, so the mass moves as the undamped single DOF x0 cos(w t) (math), atol 1e-14 m, and
    the junctions stay at zero."""
    model = Model(kind="line", masses=(Mass("m", 1, 0, 2.0), Mass("J1", 2, 0, 0.0),
                                       Mass("J2", 3, 0, 0.0)),
                  anchors=(Anchor("g", 0, 0),), springs=(Spring("s", "g", "m", 1000.0),),
                  dampers=(Damper("d", "J1", "J2", 3.0),))
    t = np.linspace(0, 1, 51)
    fr = solver.free_response(model, t, x0={("m", "x"): 0.01})
    np.testing.assert_allclose(fr.of("m", "x"), 0.01 * np.cos(math.sqrt(500.0) * t), atol=1e-14)
    np.testing.assert_array_equal(fr.of("J1", "x"), 0.0)
    np.testing.assert_array_equal(fr.of("J2", "x"), 0.0)


# --------------------------------------------------------------------------------------------
# ordinary damped modes


def test_damped_modes_of_a_single_dof():
    """SD-1 (Rao, ch. 2-3 (mem)): m = 2, k = 800, c = 4: s = -1 +- 19.97498 i, zeta 0.05,
    natural frequency 20 rad/s (rtol 1e-6, the digits given); overdamped zeta = 2 (math):
    two real roots wn (-zeta +- sqrt(zeta^2 - 1)), rtol 1e-12, and no oscillating mode."""
    def sdof(c):
        return Model(masses=(Mass("m", 1, 0, 2.0),), anchors=(Anchor("A", 0, 0),),
                     springs=(Spring("s", "A", "m", 800.0),), dampers=(Damper("d", "A", "m", c),))
    dm = solver.damped_modes(sdof(4.0))
    assert dm.eigenvalues[0].real == pytest.approx(-1.0, rel=1e-12)
    assert dm.eigenvalues[0].imag == pytest.approx(19.97498, rel=1e-6)
    assert dm.damping_ratios[0] == pytest.approx(0.05, rel=1e-12)
    assert dm.natural_frequencies_hz[0] * TWO_PI == pytest.approx(20.0, rel=1e-12)
    assert dm.real_roots.size == 0
    zeta, wn = 2.0, 20.0
    dm = solver.damped_modes(sdof(zeta * 2 * math.sqrt(800.0 * 2.0)))
    assert dm.eigenvalues.size == 0
    np.testing.assert_allclose(np.sort(dm.real_roots),
                               np.sort(wn * (-zeta + np.array([1, -1]) * math.sqrt(zeta ** 2 - 1))),
                               rtol=1e-12)


# --------------------------------------------------------------------------------------------
# random models


@st.composite
def junction_models(draw):
    """Random line chains of masses and junctions (each junction on at least one spring), with
    dashpots to ground and between nodes, some on junctions; optional Rayleigh damping."""
    n = draw(st.integers(3, 7))
    is_j = [draw(st.booleans()) for _ in range(n)]
    if all(is_j):
        is_j[0] = False
    if not any(is_j):
        is_j[-1] = True
    masses = tuple(Mass(f"n{i}", float(i + 1), 0.0,
                        0.0 if is_j[i] else draw(st.floats(0.2, 5.0))) for i in range(n))
    ids = ["g"] + [m.id for m in masses]
    springs = tuple(Spring(f"s{i}", ids[i], ids[i + 1], draw(st.floats(100.0, 1e5)))
                    for i in range(n))
    dampers = []
    for i in range(n):
        if is_j[i] or draw(st.booleans()):
            other = draw(st.sampled_from(["g"] + [m.id for m in masses if m.id != f"n{i}"]))
            dampers.append(Damper(f"d{i}", f"n{i}", other, draw(st.floats(0.1, 200.0))))
    damping = draw(st.sampled_from([Damping(), RAYLEIGH]))
    return Model(kind="line", masses=masses, anchors=(Anchor("g", 0.0, 0.0),), springs=springs,
                 dampers=tuple(dampers), damping=damping)


@settings(max_examples=40, deadline=None)
@given(junction_models())
def test_random_junction_models_roots_and_frf(model):
    """Random line models with junction dashpots: damped_modes equals the finite roots of the full
    descriptor pencil by QZ (scipy.linalg.eig), rtol 1e-8 (less -1/beta with Rayleigh); the state model's transfer function
    equals harmonic_response at two frequencies, rtol 1e-9."""
    _dofs, M, K, C = stamps(model)
    dm = solver.damped_modes(model)
    scale = np.abs(all_roots(dm)).max()
    ref = pencil_roots(M, K, C)
    if model.damping.model == "rayleigh":   # see the test above: -1/beta is left out
        ref = ref[np.abs(ref + 1 / model.damping.beta) > 1e-9 / model.damping.beta]
    assert_same_roots(all_roots(dm), ref, rtol=1e-8, atol=1e-10 * scale)
    ss = state_space(model)
    rows = [ss.system.all_dofs.index(d) for d in ss.system.dofs]
    f = np.array([1.3, 17.0])
    d = ss.system.dofs[0]
    H = solver.harmonic_response(model, f, {d: 1.0})
    np.testing.assert_allclose(transfer(ss, TWO_PI * f, rows, 0), H, rtol=1e-9,
                               atol=1e-12 * np.abs(H).max())
