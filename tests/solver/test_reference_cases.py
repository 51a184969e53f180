"""The solver against the published and analytic cases of /work/shared/REFERENCES.md.

Each test names its source as REFERENCES.md gives it; "(mem)" marks a detail recalled from memory.
Defaults: m = 2 kg, k = 800 N/m, w0 = sqrt(k/m) = 20 rad/s.

RB-BP (bounce-pitch bar) is not tested: it needs a rigid bar with rotary inertia J_G, and Springwright
has point masses only (no rotational DOF in a planar model, no rigid links). Point masses joined by
stiff springs only approximate a rigid bar, so the exact K = [[1600, 160], [160, 416]] cannot be
reproduced honestly; it waits for a rigid-body element.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.linalg

import solver
from solver import Anchor, Damper, Damping, Mass, Model, Spring
from sw_builders import chain, mac, state_matrix, uniform

M0, K0 = 2.0, 800.0
W0 = math.sqrt(K0 / M0)
N5 = 5


def _shapes_match(result, expected_columns, start=0, tol=1e-10):
    for j, phi in enumerate(expected_columns):
        assert mac(result.shapes[:, start + j], phi) > 1 - tol, f"mode {start + j + 1}"


# ---------------------------------------------------------------- section 1: uniform chains
def test_ch_ff_fixed_fixed_chain():
    """CH-FF. Source: Noschese, Pasquini and Reichel, "Tridiagonal Toeplitz matrices", Numer. Linear
    Algebra Appl. 20 (2013) 302. w_j = 2 w0 sin(j pi / (2(n+1))), phi_j(i) = sin(i j pi/(n+1))."""
    r = solver.modes(uniform(N5, M0, K0, "FF"))
    j = np.arange(1, N5 + 1)
    expected = 2 * W0 * np.sin(j * np.pi / (2 * (N5 + 1)))
    np.testing.assert_allclose(r.omegas, expected, rtol=1e-10, atol=0)
    np.testing.assert_allclose(r.omegas, [10.35276, 20, 28.28427, 34.64102, 38.63703], rtol=1e-6)
    i = np.arange(1, N5 + 1)
    _shapes_match(r, [np.sin(i * jj * np.pi / (N5 + 1)) for jj in j])
    assert r.zero_modes == ()


def test_ch_fr_fixed_free_chain():
    """CH-FR. Source: Noschese, Pasquini and Reichel, "Tridiagonal Toeplitz matrices", Numer. Linear
    Algebra Appl. 20 (2013) 302. w_j = 2 w0 sin((2j-1) pi / (2(2n+1)))."""
    r = solver.modes(uniform(N5, M0, K0, "FR"))
    j = np.arange(1, N5 + 1)
    expected = 2 * W0 * np.sin((2 * j - 1) * np.pi / (2 * (2 * N5 + 1)))
    np.testing.assert_allclose(r.omegas, expected, rtol=1e-10, atol=0)
    np.testing.assert_allclose(r.omegas, [5.692594, 16.61660, 26.19443, 33.65014, 38.37972],
                               rtol=1e-6)
    i = np.arange(1, N5 + 1)
    _shapes_match(r, [np.sin(i * (2 * jj - 1) * np.pi / (2 * N5 + 1)) for jj in j])


def test_ch_xx_free_free_chain():
    """CH-XX. Source: free ends: Strang and MacNamara, SIAM Review 2014 (mem).
    w_j = 2 w0 sin((j-1) pi / (2n)), phi_j(i) = cos((2i-1)(j-1) pi/(2n)); mode 1 is rigid."""
    r = solver.modes(uniform(N5, M0, K0, "XX"))
    j = np.arange(1, N5 + 1)
    expected = 2 * W0 * np.sin((j - 1) * np.pi / (2 * N5))
    assert r.omegas[0] == 0.0
    np.testing.assert_allclose(r.omegas[1:], expected[1:], rtol=1e-10, atol=0)
    np.testing.assert_allclose(r.omegas, [0, 12.36068, 23.51141, 32.36068, 38.04226],
                               rtol=1e-6, atol=1e-12)
    i = np.arange(1, N5 + 1)
    _shapes_match(r, [np.cos((2 * i - 1) * (jj - 1) * np.pi / (2 * N5)) for jj in j])
    assert len(r.zero_modes) == 1 and r.zero_modes[0].kind == "rigid"


def test_uniform_rod_converges_to_wave_equation():
    """Uniform rod lumped as N masses (math; any vibration text): fixed-fixed rod frequencies
    f_j = j c / (2L), c = sqrt(E/rho). The rod is cut into N + 1 equal segments h = L/(N+1): N masses
    rho A h joined by N + 1 springs E A / h. The error of the lowest three frequencies must fall as N
    grows, and be small at the finest N."""
    L, A, E, rho = 1.0, 1e-4, 200e9, 7850.0
    c = math.sqrt(E / rho)
    exact = np.arange(1, 4) * c / (2 * L)
    errors = []
    for n in (10, 20, 40, 80):
        h = L / (n + 1)
        r = solver.modes(chain([rho * A * h] * n, [E * A / h] * (n + 1), left=True, right=True))
        errors.append(np.abs(r.frequencies_hz[:3] - exact) / exact)
    errors = np.array(errors)
    assert np.all(np.diff(errors, axis=0) < 0), errors
    # second-order convergence: halving h roughly quarters the error
    assert np.all(errors[-2] / errors[-1] > 3.5)
    assert errors[-1, 0] < 1e-4


# ---------------------------------------------------------------- section 2: two-DOF systems
def _td_sb():
    return chain([2 * M0, M0], [2 * K0, K0], left=True, right=False)


def test_td_sb_shear_building():
    """TD-SB. Source: Chopra, Dynamics of Structures, ch. 10 (mem). M = diag(2m, m),
    K = [[3k, -k], [-k, k]]: w = 14.14214, 28.28427 rad/s, shapes [1/2, 1] and [-1, 1]."""
    model = _td_sb()
    sysm = solver.assemble(model)
    np.testing.assert_allclose(sysm.dense("K"), [[3 * K0, -K0], [-K0, K0]], rtol=0, atol=1e-12)
    np.testing.assert_allclose(sysm.dense("M"), np.diag([2 * M0, M0]), rtol=0, atol=0)
    r = solver.modes(model)
    np.testing.assert_allclose(r.eigenvalues, [K0 / (2 * M0), 2 * K0 / M0], rtol=1e-12)
    np.testing.assert_allclose(r.omegas, [14.14214, 28.28427], rtol=1e-6)
    _shapes_match(r, [[0.5, 1.0], [-1.0, 1.0]])


def _td_3s():
    return chain([M0, M0], [K0, K0, K0], left=True, right=True)


def test_td_3s_frequencies_shapes_and_free_response():
    """TD-3S. Source: Rao, Mechanical Vibrations, ch. 5 (mem). w = 20 and 34.64102 rad/s, shapes
    [1, 1] and [1, -1]; from x0 = [0.01, 0]: x1,2 = 0.005 (cos w1 t +- cos w2 t), at t = 0.1 s
    (-6.822950e-3, 2.661482e-3)."""
    r = solver.modes(_td_3s())
    w1, w2 = math.sqrt(K0 / M0), math.sqrt(3 * K0 / M0)
    np.testing.assert_allclose(r.omegas, [w1, w2], rtol=1e-12)
    np.testing.assert_allclose(r.omegas, [20.0, 34.64102], rtol=1e-6)
    _shapes_match(r, [[1.0, 1.0], [1.0, -1.0]])
    t = np.array([0.0, 0.05, 0.1, 0.37])
    fr = solver.free_response(_td_3s(), t, x0={("m1", "x"): 0.01})
    assert fr.method == "modal"
    exact1 = 0.005 * (np.cos(w1 * t) + np.cos(w2 * t))
    exact2 = 0.005 * (np.cos(w1 * t) - np.cos(w2 * t))
    np.testing.assert_allclose(fr.of("m1", "x"), exact1, rtol=0, atol=1e-14)
    np.testing.assert_allclose(fr.of("m2", "x"), exact2, rtol=0, atol=1e-14)
    np.testing.assert_allclose([fr.of("m1", "x")[2], fr.of("m2", "x")[2]],
                               [-6.822950e-3, 2.661482e-3], rtol=1e-6)


def test_td_free_rigid_mode_and_free_response():
    """TD-FREE (math): two masses, one spring, no anchor: w = 0 and sqrt(k (m1+m2)/(m1 m2)) =
    28.28427; from v0 = [0.1, 0]: x1,2 = 0.05 t +- (0.05/w) sin w t, at 0.5 s 0.02676775 and
    0.02323225; the rigid-body coordinate grows as q0 + q0' t."""
    model = chain([M0, M0], [K0], left=False, right=False)
    r = solver.modes(model)
    w = math.sqrt(K0 * (2 * M0) / (M0 * M0))
    assert r.omegas[0] == 0.0
    np.testing.assert_allclose(r.omegas[1], w, rtol=1e-12)
    np.testing.assert_allclose(r.omegas[1], 28.28427, rtol=1e-6)
    assert [z.kind for z in r.zero_modes] == ["rigid"]
    t = np.linspace(0.0, 0.5, 11)
    fr = solver.free_response(model, t, v0={("m1", "x"): 0.1})
    x1, x2 = fr.of("m1", "x"), fr.of("m2", "x")
    np.testing.assert_allclose(x1, 0.05 * t + 0.05 / w * np.sin(w * t), rtol=0, atol=1e-14)
    np.testing.assert_allclose(x2, 0.05 * t - 0.05 / w * np.sin(w * t), rtol=0, atol=1e-14)
    np.testing.assert_allclose([x1[-1], x2[-1]], [0.02676775, 0.02323225], rtol=0, atol=5e-9)
    # rigid coordinate (centre of mass) is linear in t: constant first difference on a uniform grid
    centre = 0.5 * (x1 + x2)
    np.testing.assert_allclose(centre, 0.05 * t, rtol=0, atol=1e-15)
    np.testing.assert_allclose(np.diff(centre, 2), 0.0, atol=1e-15)


# ---------------------------------------------------------------- section 3: effective modal mass
def test_em_sb_effective_mass():
    """EM-SB. Source: Chopra, ch. 13 (mem); sum rule: ECSS glossary, "effective modal mass", note 2.
    TD-SB with r = [1, 1]: M_eff = 8m/3 = 5.33333 kg and m/3 = 0.666667 kg (88.89 %, 11.11 %)."""
    r = solver.modes(_td_sb())
    np.testing.assert_allclose(r.effective_mass["x"], [8 * M0 / 3, M0 / 3], rtol=1e-12)
    np.testing.assert_allclose(r.effective_mass_percent["x"], [88.89, 11.11], atol=5e-3)
    np.testing.assert_allclose(r.effective_mass["x"].sum(), 3 * M0, rtol=1e-12)


def test_em_fr_effective_mass_percent():
    """EM-FR. Source: Chopra, ch. 13 (mem). CH-FR: 87.953, 8.7178, 2.4216, 0.7509, 0.1568 %; the sum
    over all modes is r^T M r (math; ECSS glossary, "effective modal mass", note 2)."""
    r = solver.modes(uniform(N5, M0, K0, "FR"))
    np.testing.assert_allclose(r.effective_mass_percent["x"],
                               [87.953, 8.7178, 2.4216, 0.7509, 0.1568], rtol=0, atol=6e-4)
    np.testing.assert_allclose(r.effective_mass["x"].sum(), N5 * M0, rtol=1e-12)
    np.testing.assert_allclose(r.total_mass["x"], N5 * M0, rtol=1e-15)


def test_em_ff_effective_mass():
    """EM-FF. Source: Chopra, ch. 13 (mem). CH-FF: m(7 + 4 sqrt 3)/3 = 9.285469, 0, m/3 = 0.666667, 0,
    m(7 - 4 sqrt 3)/3 = 0.047865 kg; sum = total mass (math)."""
    r = solver.modes(uniform(N5, M0, K0, "FF"))
    s3 = math.sqrt(3)
    expected = [M0 * (7 + 4 * s3) / 3, 0.0, M0 / 3, 0.0, M0 * (7 - 4 * s3) / 3]
    np.testing.assert_allclose(r.effective_mass["x"], expected, rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(r.effective_mass["x"], [9.285469, 0, 0.666667, 0, 0.047865],
                               rtol=0, atol=5e-7)  # published to 6 decimals
    np.testing.assert_allclose(r.effective_mass["x"].sum(), N5 * M0, rtol=1e-12)


def test_em_xx_rigid_mode_carries_all_mass():
    """EM-XX. Source: Chopra, ch. 13 (mem). CH-XX: the rigid mode carries 100 % of the mass."""
    r = solver.modes(uniform(N5, M0, K0, "XX"))
    np.testing.assert_allclose(r.effective_mass["x"][0], N5 * M0, rtol=1e-12)
    np.testing.assert_allclose(r.effective_mass["x"][1:], 0.0, atol=1e-12)
    np.testing.assert_allclose(r.effective_mass_percent["x"][0], 100.0, rtol=1e-12)


def test_mode_count_rules_on_em_ff():
    """Mode-count rules on EM-FF: include modes until 90 % of the mass participates (ASCE 7-16
    section 12.9.1.1) and every mode above 5 % (EN 1998-1 section 4.3.3.3.1(3)). One mode meets the
    first; mode 3 (6.67 %) is needed for the second."""
    r = solver.modes(uniform(N5, M0, K0, "FF"))
    pct = r.effective_mass_percent["x"]
    cum = r.cumulative_percent["x"]
    asce_count = int(np.argmax(cum >= 90.0)) + 1
    assert asce_count == 1
    en_modes = [i + 1 for i, p in enumerate(pct) if p > 5.0]
    assert en_modes == [1, 3]
    np.testing.assert_allclose(pct[2], 100 / 15, rtol=1e-10)  # 6.67 %


# ---------------------------------------------------------------- section 4: single DOF
def _sdof(**extra):
    return Model(kind="line", masses=(Mass("m", 1.0, 0.0, M0),), anchors=(Anchor("A", 0.0, 0.0),),
                 springs=(Spring("s", "A", "m", K0),), **extra)


def _sd1_exact(t, x0=0.01, zeta=0.05):
    wd = W0 * math.sqrt(1 - zeta ** 2)
    return x0 * np.exp(-zeta * W0 * t) * (np.cos(wd * t) + zeta * W0 / wd * np.sin(wd * t))


def test_sd1_natural_frequency():
    """SD-1. Source: Rao, ch. 2-3 (mem). wn = 20 rad/s = 3.183099 Hz."""
    r = solver.modes(_sdof())
    np.testing.assert_allclose(r.omegas, [20.0], rtol=1e-14)
    np.testing.assert_allclose(r.frequencies_hz, [3.183099], rtol=1e-6)


def test_sd1_free_response_modal_damping_ratio():
    """SD-1. Source: Rao, ch. 2-3 (mem). zeta = 0.05 as a modal damping ratio: from x0 = 0.01 m,
    v0 = 0: x(0.5 s) = -5.292088e-3 m."""
    model = _sdof(damping=Damping("modal", ratio=0.05))
    t = np.array([0.0, 0.1, 0.25, 0.5])
    fr = solver.free_response(model, t, x0={("m", "x"): 0.01})
    assert fr.method == "modal"
    np.testing.assert_allclose(fr.of("m", "x"), _sd1_exact(t), rtol=0, atol=1e-15)
    np.testing.assert_allclose(fr.of("m", "x")[-1], -5.292088e-3, rtol=1e-6)


def test_sd1_free_response_dashpot_state_space():
    """SD-1. Source: Rao, ch. 2-3 (mem). The same zeta = 0.05 as a dashpot c = 4 N s/m
    (c_cr = 2 sqrt(k m) = 80 N s/m); state eigenvalues -1 +- 19.97498 i; x(0.5 s) = -5.292088e-3 m.
    A dashpot takes the state-space (matrix exponential) path."""
    model = _sdof(dampers=(Damper("c", "A", "m", 4.0),))
    sysm = solver.assemble(model)
    np.testing.assert_allclose(sysm.dense("C"), [[4.0]], rtol=0, atol=0)
    assert math.isclose(4.0 / (2 * math.sqrt(K0 * M0)), 0.05)
    ev = np.linalg.eigvals(state_matrix(sysm.dense("M"), sysm.dense("K"), sysm.dense("C")))
    ev = ev[np.argsort(ev.imag)]
    np.testing.assert_allclose(ev, [-1 - 19.97498j, -1 + 19.97498j], rtol=1e-6)
    t = np.array([0.0, 0.1, 0.25, 0.5])
    fr = solver.free_response(model, t, x0={("m", "x"): 0.01})
    assert fr.method == "state-space"
    np.testing.assert_allclose(fr.of("m", "x"), _sd1_exact(t), rtol=0, atol=1e-13)
    np.testing.assert_allclose(fr.of("m", "x")[-1], -5.292088e-3, rtol=1e-6)


@pytest.mark.parametrize("delta_mm, f_hz", [(25.0, 3.152176), (1.0, 15.76088)])
def test_sd_d_static_deflection(delta_mm, f_hz):
    """SD-D. Common practice and any vibration text: f = (1/2 pi) sqrt(g/delta), g = 9.80665 m/s^2:
    25 mm -> 3.152176 Hz, 1 mm -> 15.76088 Hz. The spring is chosen so that m g / k = delta."""
    g = 9.80665
    m = 12.5
    k = m * g / (delta_mm * 1e-3)
    model = Model(kind="line", axis="y", masses=(Mass("m", 0.0, -1.0, m),),
                  anchors=(Anchor("A", 0.0, 0.0),), springs=(Spring("s", "A", "m", k),))
    r = solver.modes(model)
    np.testing.assert_allclose(r.frequencies_hz, [f_hz], rtol=1e-6)
    assert r.dofs == (("m", "y"),)


# ---------------------------------------------------------------- section 6: bounds
def test_rd3_rayleigh_bounds_and_trace():
    """RD-3. Source: Courant-Fischer (math); de Silva, Vibration and Shock Handbook, section 6.6.
    Three equal masses fixed at one end: lambda1 = 79.22491 (w1 = 8.900837); Rayleigh quotients of
    [3, 5, 6], [1, 2, 3], [1, 1, 1] are 80, 85.71429, 133.3333 (all >= lambda1); Dunkerley
    w_D = 8.164966 is a lower bound; trace(K^-1 M) = sum 1/w_j^2 = 6m/k = 0.015."""
    model = uniform(3, M0, K0, "FR")
    sysm = solver.assemble(model)
    K, M = sysm.dense("K"), sysm.dense("M")
    r = solver.modes(model)
    lam1 = r.eigenvalues[0]
    np.testing.assert_allclose(lam1, (2 * W0 * math.sin(math.pi / 14)) ** 2, rtol=1e-12)
    np.testing.assert_allclose([lam1, r.omegas[0]], [79.22491, 8.900837], rtol=1e-6)
    for v, rq in (([3, 5, 6], 80.0), ([1, 2, 3], 85.71429), ([1, 1, 1], 133.3333)):
        v = np.array(v, float)
        q = (v @ K @ v) / (v @ M @ v)
        np.testing.assert_allclose(q, rq, rtol=1e-6)
        assert q >= lam1
    w_d = 1 / math.sqrt(np.trace(np.linalg.inv(K)) * M0)  # sum a_ii m_i, equal masses
    np.testing.assert_allclose(w_d, 8.164966, rtol=1e-6)
    assert w_d <= r.omegas[0]
    np.testing.assert_allclose(np.trace(np.linalg.solve(K, M)), 0.015, rtol=1e-12)
    np.testing.assert_allclose(np.sum(1 / r.eigenvalues), 0.015, rtol=1e-12)


# ---------------------------------------------------------------- section 7: torsion, planar
def _ts2(kt=3000.0):
    return Model(kind="torsion", masses=(Mass("d1", 0.0, 0.0, 0.5), Mass("d2", 1.0, 0.0, 1.5)),
                 springs=(Spring("shaft", "d1", "d2", kt),))


def test_ts2_two_disc_shaft():
    """TS-2. Source: Rao, ch. 5 (mem). J1 = 0.5, J2 = 1.5 kg m^2, kt = 3000 N m/rad:
    w = sqrt(kt (J1 + J2)/(J1 J2)) = 89.44272 rad/s (14.23525 Hz) plus a zero mode;
    theta2/theta1 = -1/3; node at 0.75 L from disc 1."""
    r = solver.modes(_ts2())
    assert r.dofs == (("d1", "theta"), ("d2", "theta"))
    assert r.omegas[0] == 0.0 and r.zero_modes[0].kind == "rigid"
    np.testing.assert_allclose(r.omegas[1], math.sqrt(3000 * 2.0 / 0.75), rtol=1e-12)
    np.testing.assert_allclose([r.omegas[1], r.frequencies_hz[1]], [89.44272, 14.23525],
                               rtol=1e-6)
    th1, th2 = r.shapes[:, 1]
    np.testing.assert_allclose(th2 / th1, -1 / 3, rtol=1e-12)
    node = th1 / (th1 - th2)  # zero of the linear twist along the shaft, as a fraction of L
    np.testing.assert_allclose(node, 0.75, rtol=1e-12)
    # rigid spin carries all the polar inertia
    np.testing.assert_allclose(r.effective_mass["theta"], [2.0, 0.0], atol=1e-12)


def test_ts2_shaft_stiffness_from_geometry():
    """TS-2. Source: Rao, ch. 5 (mem). Shaft stiffness kt = G J_p / L with J_p = pi d^4/32:
    G = 80 GPa, d = 20 mm, L = 0.5 m -> 2513.274 N m/rad; the two-disc frequency follows it."""
    G, d, L = 80e9, 0.020, 0.5
    kt = G * (math.pi * d ** 4 / 32) / L
    np.testing.assert_allclose(kt, 2513.274, rtol=1e-6)
    r = solver.modes(_ts2(kt))
    np.testing.assert_allclose(r.omegas[1], math.sqrt(kt * 2.0 / 0.75), rtol=1e-12)


def test_ts3_three_discs():
    """TS-3. Source: Rao, ch. 5 (mem). J = 1, 2, 1 and kt = 1000 between neighbours:
    w = 0, 31.62278, 44.72136."""
    model = Model(kind="torsion",
                  masses=tuple(Mass(f"d{i}", float(i), 0.0, J) for i, J in enumerate((1, 2, 1))),
                  springs=(Spring("k1", "d0", "d1", 1000.0), Spring("k2", "d1", "d2", 1000.0)))
    r = solver.modes(model)
    np.testing.assert_allclose(r.omegas, [0.0, math.sqrt(1000.0), math.sqrt(2000.0)],
                               rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(r.omegas, [0, 31.62278, 44.72136], rtol=1e-6, atol=1e-12)


def _pl120():
    anchors = tuple(Anchor(f"A{i}", math.cos(math.radians(a)), math.sin(math.radians(a)))
                    for i, a in enumerate((0, 120, 240)))
    return Model(kind="planar", masses=(Mass("m", 0.0, 0.0, M0),), anchors=anchors,
                 springs=tuple(Spring(f"s{i}", f"A{i}", "m", K0) for i in range(3)))


def test_pl120_three_springs_repeated_mode():
    """PL-120 (math): a mass held by three equal springs at 0, 120 and 240 degrees: K = 1.5 k I,
    repeated w = sqrt(1.5 k/m) = 24.49490 rad/s; the pair is flagged as repeated."""
    sysm = solver.assemble(_pl120())
    np.testing.assert_allclose(sysm.dense("K"), 1.5 * K0 * np.eye(2), rtol=0, atol=1e-9)
    r = solver.modes(_pl120())
    np.testing.assert_allclose(r.omegas, [math.sqrt(1.5 * K0 / M0)] * 2, rtol=1e-12)
    np.testing.assert_allclose(r.omegas, [24.49490] * 2, rtol=1e-6)
    assert (1, 2) in r.repeated
    assert r.zero_modes == ()
    # effective masses of the repeated pair: only the group sums are meaningful
    np.testing.assert_allclose(r.effective_mass["x"].sum(), M0, rtol=1e-12)
    np.testing.assert_allclose(r.effective_mass["y"].sum(), M0, rtol=1e-12)


def test_pl1_single_inclined_spring_mechanism():
    """PL-1 (math): a mass on one spring at 30 degrees: lambda = {0, k/m}; the zero mode is a
    mechanism (motion at right angles to the spring)."""
    a = math.radians(30)
    model = Model(kind="planar", masses=(Mass("m", math.cos(a), math.sin(a), M0),),
                  anchors=(Anchor("A", 0.0, 0.0),), springs=(Spring("s", "A", "m", K0),))
    r = solver.modes(model)
    np.testing.assert_allclose(r.eigenvalues, [0.0, K0 / M0], rtol=1e-12, atol=1e-9)
    assert [z.kind for z in r.zero_modes] == ["mechanism"]
    e = np.array([math.cos(a), math.sin(a)])
    z = r.shapes[:, 0]
    assert abs(z @ e) < 1e-10 * np.linalg.norm(z)  # swings sideways
    assert mac(r.shapes[:, 1], e) > 1 - 1e-12


def test_em_2d_free_dumbbell():
    """EM-2D (math): a free planar dumbbell (masses at (0, 0) and (1, 0), spring along x): three zero
    modes; effective-mass sums x 4 kg, y 4 kg; the elastic mode is sqrt(2k/m)."""
    model = Model(kind="planar", masses=(Mass("a", 0.0, 0.0, M0), Mass("b", 1.0, 0.0, M0)),
                  springs=(Spring("s", "a", "b", K0),))
    r = solver.modes(model)
    assert len(r.zero_modes) == 3
    assert {z.kind for z in r.zero_modes} == {"rigid"}
    np.testing.assert_allclose(r.eigenvalues[:3], 0.0, atol=0)
    np.testing.assert_allclose(r.omegas[3], math.sqrt(2 * K0 / M0), rtol=1e-12)
    np.testing.assert_allclose(r.effective_mass["x"].sum(), 4.0, rtol=1e-12)
    np.testing.assert_allclose(r.effective_mass["y"].sum(), 4.0, rtol=1e-12)
    # all of that sits in the zero-frequency group (repeated group: test the group sum only)
    np.testing.assert_allclose(r.effective_mass["x"][:3].sum(), 4.0, rtol=1e-12)
    np.testing.assert_allclose(r.effective_mass["y"][:3].sum(), 4.0, rtol=1e-12)


# ---------------------------------------------------------------- section 8: sensitivities, damping
def test_td3s_sensitivities_and_strain_energy():
    """Section 8 on TD-3S. Source: Fox and Kapoor, AIAA J. 6(12), 1968 (mem). Mode 1
    d lambda/d(k1, k2, k3) = 0.25, 0, 0.25; mode 2: 0.25, 1, 0.25; strain energy in mode 2
    16.67 / 66.67 / 16.67 %; d lambda/dm = -100 (mode 1) and -300 (mode 2) for each mass."""
    a = solver.analyse(_td_3s())
    s = a.sensitivity
    assert s.spring_ids == ("s1", "s2", "s3")
    np.testing.assert_allclose(s.dlambda_dk, [[0.25, 0, 0.25], [0.25, 1, 0.25]],
                               rtol=1e-12, atol=1e-14)
    np.testing.assert_allclose(s.dlambda_dm, [[-100, -100], [-300, -300]], rtol=1e-12)
    np.testing.assert_allclose(a.energy.strain[1], [1 / 6, 2 / 3, 1 / 6], rtol=1e-12)
    np.testing.assert_allclose(100 * a.energy.strain[1], [16.67, 66.67, 16.67], atol=5e-3)
    assert s.valid.all()


def test_sensitivity_sum_identities():
    """Section 8 identities (math): sum_e k_e d lambda/dk_e = lambda and
    sum_j m_j d lambda/dm_j = -lambda, on TD-3S and on CH-FR."""
    for model in (_td_3s(), uniform(N5, M0, K0, "FR")):
        a = solver.analyse(model)
        lam = a.modal.eigenvalues
        k = np.array([sp.k for sp in model.springs])
        m = np.array([mm.mass for mm in model.masses])
        np.testing.assert_allclose(a.sensitivity.dlambda_dk @ k, lam, rtol=1e-12)
        np.testing.assert_allclose(a.sensitivity.dlambda_dm @ m, -lam, rtol=1e-12)


def test_td3s_rayleigh_damping_free_response_vs_expm():
    """Section 8, Rayleigh damping. Source: Chopra, section 11.4 (mem). zeta = 0.05 in both modes of
    TD-3S: alpha = 1.267949 1/s, beta = 1.830127e-3 s. The modal free response equals the exact
    expm(A t) z0 with C = alpha M + beta K (math)."""
    w = np.array([20.0, math.sqrt(3) * 20.0])
    # solve alpha/(2 w) + beta w/2 = 0.05 for both modes
    alpha, beta = np.linalg.solve(np.column_stack([1 / (2 * w), w / 2]), [0.05, 0.05])
    np.testing.assert_allclose([alpha, beta], [1.267949, 1.830127e-3], rtol=1e-6)
    model = _td_3s().with_changes(damping=Damping("rayleigh", alpha=alpha, beta=beta))
    sysm = solver.assemble(model)
    M, K = sysm.dense("M"), sysm.dense("K")
    A = state_matrix(M, K, alpha * M + beta * K)
    z0 = np.array([0.01, -0.004, 0.0, 0.3])
    t = np.array([0.0, 0.1, 0.5, 1.3])
    fr = solver.free_response(model, t, x0={("m1", "x"): 0.01, ("m2", "x"): -0.004},
                              v0={("m2", "x"): 0.3})
    assert fr.method == "modal"
    exact = np.array([scipy.linalg.expm(A * ti) @ z0 for ti in t])
    np.testing.assert_allclose(fr.displacement, exact[:, :2], rtol=0, atol=1e-13)
    np.testing.assert_allclose(fr.velocity, exact[:, 2:], rtol=0, atol=1e-12)
