"""Damped responses: transmissibility, FRFs, free response with damping, the tuned absorber.

Defaults as in REFERENCES.md: m = 2 kg, k = 800 N/m, wn = 20 rad/s. Reference matrices are built by
hand from the model data (not from solver.assemble) wherever that is simple.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.integrate
import scipy.linalg
import scipy.signal

import solver
from solver import Anchor, Damper, Damping, Mass, Model, ModelError, Spring
from sw_builders import chain, state_matrix

TWO_PI = 2 * math.pi
m0, k0 = 2.0, 800.0
WN = math.sqrt(k0 / m0)  # 20 rad/s
FN = WN / TWO_PI
IVP = dict(method="DOP853", rtol=1e-10, atol=1e-13)


def sdof(zeta=None, c=None, m=m0, k=k0):
    """One mass on a spring to ground, damped by a modal ratio zeta or by a dashpot c (N s/m)."""
    dampers = (Damper(id="d", a="A", b="m", c=c),) if c is not None else ()
    damping = Damping(model="modal", ratio=zeta) if zeta is not None else Damping()
    return Model(masses=(Mass(id="m", x=1, y=0, mass=m),), anchors=(Anchor(id="A", x=0, y=0),),
                 springs=(Spring(id="s", a="A", b="m", k=k),), dampers=dampers, damping=damping)


def T_closed(r, zeta):
    """SD-T: T = sqrt((1 + (2 zeta r)^2) / ((1 - r^2)^2 + (2 zeta r)^2))."""
    r = np.asarray(r, float)
    return np.sqrt((1 + (2 * zeta * r) ** 2) / ((1 - r ** 2) ** 2 + (2 * zeta * r) ** 2))


def td3s(damping=Damping(), dampers=()):
    model = chain([m0, m0], [k0, k0, k0], left=True, right=True)
    return model.with_changes(put=dampers, damping=damping)


TD3S_M = np.diag([m0, m0])
TD3S_K = np.array([[2 * k0, -k0], [-k0, 2 * k0]])
ALPHA, BETA = 1.267949, 1.830127e-3


# --------------------------------------------------------------------------------------------
# SD-T base transmissibility


@pytest.mark.parametrize("how", ["modal", "dashpot"])
def test_sdt_reference_values(how):
    """SD-T at zeta = 0.05: T(1) = 10.04988, T(2) = 0.3391817, T(3) = 0.1304122 (Harris' Shock and
    Vibration Handbook, ch. 30; Rao, section 3.6 (mem)); by a modal ratio and by a dashpot
    c = 2 zeta sqrt(k m) = 4 N s/m. rtol 1e-6 (the digits given)."""
    zeta = 0.05
    model = sdof(zeta=zeta) if how == "modal" else sdof(c=2 * zeta * math.sqrt(k0 * m0))
    T = solver.base_transmissibility(model, FN * np.array([1.0, 2.0, 3.0]), "x")
    assert T.shape == (3, 1)
    np.testing.assert_allclose(np.abs(T[:, 0]), [10.04988, 0.3391817, 0.1304122], rtol=1e-6)


@pytest.mark.parametrize("how", ["modal", "dashpot"])
@pytest.mark.parametrize("zeta", [0.01, 0.05, 0.2, 0.5, 1.0, 2.0])
def test_sdt_crossover_and_isolation_region(how, zeta):
    """SD-T: T(sqrt 2) = 1 for every zeta, |T| < 1 exactly when r > sqrt 2 (Harris' Shock and
    Vibration Handbook, ch. 30; Rao, section 3.6 (mem)); the whole curve against the formula
    (rtol 1e-10) and the relative motion r^2/sqrt((1 - r^2)^2 + (2 zeta r)^2) (math)."""
    model = sdof(zeta=zeta) if how == "modal" else sdof(c=2 * zeta * math.sqrt(k0 * m0))
    s2 = math.sqrt(2.0)
    T = solver.base_transmissibility(model, [FN * s2], "x")
    assert abs(T[0, 0]) == pytest.approx(1.0, abs=1e-10)
    above = s2 * (1 + np.geomspace(1e-6, 10.0, 60))
    below = s2 * (1 - np.geomspace(1e-6, 0.99, 60))
    Ta = np.abs(solver.base_transmissibility(model, FN * above, "x")[:, 0])
    Tb = np.abs(solver.base_transmissibility(model, FN * below, "x")[:, 0])
    assert np.all(Ta < 1.0) and np.all(Tb > 1.0)
    r = np.concatenate([below, above])
    T = solver.base_transmissibility(model, FN * r, "x")[:, 0]
    np.testing.assert_allclose(np.abs(T), T_closed(r, zeta), rtol=1e-10)
    Y = solver.base_transmissibility(model, FN * r, "x", relative=True)[:, 0]
    np.testing.assert_allclose(np.abs(Y), r ** 2 / np.sqrt((1 - r ** 2) ** 2 + (2 * zeta * r) ** 2),
                               rtol=1e-10)


def test_base_direction_refused():
    """Base excitation in a direction the model lacks is a ModelError (DESIGN.md 3)."""
    with pytest.raises(ModelError, match="direction"):
        solver.base_transmissibility(sdof(zeta=0.05), [1.0], "y")


# --------------------------------------------------------------------------------------------
# SD-1 receptance peak


@pytest.mark.parametrize("how", ["modal", "dashpot"])
def test_sd1_receptance_peak_and_half_power(how):
    """SD-1, zeta = 0.05 (Rao, ch. 2-3 (mem)): receptance peak at wn sqrt(1 - 2 zeta^2) =
    19.94994 rad/s with amplification k |H| = 1/(2 zeta sqrt(1 - zeta^2)) = 10.01252 (rtol 1e-6,
    grid step 1e-4 Hz). Half-power estimate bandwidth/(2 f_peak): within 1 % of zeta (common
    practice, light damping) and 1e-4 of its exact value (r2 - r1)/(2 sqrt(1 - 2 zeta^2)) with
    r^2 = 1 - 2 zeta^2 +- 2 zeta sqrt(1 - zeta^2) (math)."""
    zeta = 0.05
    model = sdof(zeta=zeta) if how == "modal" else sdof(c=4.0)
    f = np.linspace(2.0, 4.5, 25001)
    H = solver.harmonic_response(model, f, {("m", "x"): 1.0})[:, 0]
    peaks = solver.find_peaks(f, H)
    assert len(peaks) == 1
    p = peaks[0]
    assert p.frequency_hz * TWO_PI == pytest.approx(19.94994, rel=1e-6)
    assert p.amplitude * k0 == pytest.approx(10.01252, rel=1e-6)
    assert p.damping_ratio == pytest.approx(zeta, rel=1e-2)
    r1 = math.sqrt(1 - 2 * zeta ** 2 - 2 * zeta * math.sqrt(1 - zeta ** 2))
    r2 = math.sqrt(1 - 2 * zeta ** 2 + 2 * zeta * math.sqrt(1 - zeta ** 2))
    assert p.bandwidth_hz == pytest.approx((r2 - r1) * FN, rel=1e-4)
    assert p.damping_ratio == pytest.approx((r2 - r1) / (2 * math.sqrt(1 - 2 * zeta ** 2)), rel=1e-4)


def test_find_peaks_open_sides_give_nan_bandwidth():
    """A peak whose curve does not fall to peak/sqrt(2) inside the data has no half-power width
    (common practice: the estimate needs both sides)."""
    f = np.linspace(3.0, 3.3, 301)  # only the top of the SD-1 peak
    H = solver.harmonic_response(sdof(zeta=0.05), f, {("m", "x"): 1.0})[:, 0]
    (p,) = solver.find_peaks(f, H)
    assert math.isnan(p.bandwidth_hz) and math.isnan(p.damping_ratio)


# --------------------------------------------------------------------------------------------
# TD-3S: receptance, Rayleigh damping, direct == modal


def test_td3s_undamped_receptance_and_antiresonance():
    """TD-3S (Rao, ch. 5 (mem)): H11 = (2k - m w^2)/((2k - m w^2)^2 - k^2), H21 = k/(same) (math),
    rtol 1e-10 away from the resonances; antiresonance of H11 at sqrt(2k/m) = 28.28427 rad/s where
    H21 = -1/k."""
    w = np.linspace(1.0, 60.0, 400)
    w = w[(np.abs(w - 20.0) > 0.2) & (np.abs(w - math.sqrt(3) * 20.0) > 0.2)]
    H = solver.harmonic_response(td3s(), w / TWO_PI, {("m1", "x"): 1.0})
    den = (2 * k0 - m0 * w ** 2) ** 2 - k0 ** 2
    np.testing.assert_allclose(H[:, 0].real, (2 * k0 - m0 * w ** 2) / den, rtol=1e-10)
    np.testing.assert_allclose(H[:, 1].real, k0 / den, rtol=1e-10)
    assert np.all(H.imag == 0)
    wa = math.sqrt(2 * k0 / m0)
    assert wa == pytest.approx(28.28427, rel=1e-6)
    Ha = solver.harmonic_response(td3s(), [wa / TWO_PI], {("m1", "x"): 1.0})[0]
    assert abs(Ha[0]) < 1e-12 / k0
    assert Ha[1].real == pytest.approx(-1.0 / k0, rel=1e-10)
    # mobility and accelerance are i w and -w^2 times the receptance (math)
    f = w / TWO_PI
    V = solver.harmonic_response(td3s(), f, {("m1", "x"): 1.0}, output="velocity")
    A = solver.harmonic_response(td3s(), f, {("m1", "x"): 1.0}, output="acceleration")
    np.testing.assert_allclose(V, 1j * w[:, None] * H, rtol=1e-12)
    np.testing.assert_allclose(A, -(w ** 2)[:, None] * H, rtol=1e-12)
    with pytest.raises(ModelError):
        solver.harmonic_response(td3s(), f, {("m1", "x"): 1.0}, output="jerk")


def test_td3s_rayleigh_reference_value():
    """TD-3S Rayleigh damping alpha = 1.267949 1/s, beta = 1.830127e-3 s (zeta = 0.05 in both
    modes): H11(20 rad/s) = 3.101737e-4 - 6.276862e-3 i m/N (Chopra, section 11.4 (mem); Ewins,
    Modal Testing, ch. 2 (mem)). rtol 1e-6 (the digits given)."""
    model = td3s(Damping(model="rayleigh", alpha=ALPHA, beta=BETA))
    for method in ("direct", "modal"):
        H = solver.harmonic_response(model, [20.0 / TWO_PI], {("m1", "x"): 1.0}, method=method)
        assert H[0, 0].real == pytest.approx(3.101737e-4, rel=1e-6)
        assert H[0, 0].imag == pytest.approx(-6.276862e-3, rel=1e-6)


@pytest.mark.parametrize("damping", [Damping(model="rayleigh", alpha=ALPHA, beta=BETA),
                                     Damping(model="modal", ratio=0.05),
                                     Damping(model="modal", ratio=0.02, mode_ratios=((2, 0.1),)),
                                     Damping()])
def test_direct_equals_modal(damping):
    """Modal sum equals the direct inverse (K - w^2 M + i w C)^-1 for proportional damping
    (REFERENCES.md 8: Chopra, section 11.4 (mem); Ewins, Modal Testing, ch. 2 (mem)); both against
    the inverse of hand-built matrices, C = alpha M + beta K or M Phi diag(2 zeta w) Phi^T M with
    Phi from scipy.linalg.eigh(K, M). rtol 1e-12 (1e-10 against the hand-built inverse)."""
    model = td3s(damping)
    w = np.linspace(0.5, 60.0, 300)
    if damping.model == "none":
        w = w[(np.abs(w - 20.0) > 0.2) & (np.abs(w - math.sqrt(3) * 20.0) > 0.2)]
    f = w / TWO_PI
    lam, phi = scipy.linalg.eigh(TD3S_K, TD3S_M)
    if damping.model == "rayleigh":
        C = ALPHA * TD3S_M + BETA * TD3S_K
    elif damping.model == "modal":
        zeta = np.full(2, damping.ratio)
        for mode, ratio in damping.mode_ratios:
            zeta[mode - 1] = ratio
        Mphi = TD3S_M @ phi
        C = Mphi @ np.diag(2 * zeta * np.sqrt(lam)) @ Mphi.T
    else:
        C = np.zeros((2, 2))
    for j in ("m1", "m2"):
        Hd = solver.harmonic_response(model, f, {(j, "x"): 1.0}, method="direct")
        Hm = solver.harmonic_response(model, f, {(j, "x"): 1.0}, method="modal")
        np.testing.assert_allclose(Hm, Hd, rtol=1e-12, atol=1e-12 * np.abs(Hd).max())
        col = 0 if j == "m1" else 1
        ref = np.array([np.linalg.inv(TD3S_K - wi ** 2 * TD3S_M + 1j * wi * C)[:, col] for wi in w])
        np.testing.assert_allclose(Hd, ref, rtol=1e-10, atol=1e-12 * np.abs(ref).max())


@pytest.mark.parametrize("damping", [Damping(model="rayleigh", alpha=ALPHA, beta=BETA),
                                     Damping(model="modal", ratio=0.05),
                                     Damping(model="modal", ratio=0.02, mode_ratios=((2, 0.1),))])
@pytest.mark.parametrize("relative", [False, True])
def test_base_transmissibility_modal_equals_direct(damping, relative):
    """Base motion by modal superposition equals the direct solve of
    (K - w^2 M + i w C) y = w^2 M r for proportional damping (Chopra, Dynamics of Structures,
    13.1, earthquake-type excitation in relative coordinates (mem)); both against the hand-built
    inverse. A ModalResult handed in is reused and gives the same numbers. rtol 1e-12."""
    model = td3s(damping)
    f = np.linspace(0.2, 12.0, 250)
    w = TWO_PI * f
    Yd = solver.base_transmissibility(model, f, "x", relative=relative)
    Ym = solver.base_transmissibility(model, f, "x", relative=relative, method="modal")
    Yr = solver.base_transmissibility(model, f, "x", relative=relative, method="modal",
                                      result=solver.modes(model))
    np.testing.assert_allclose(Ym, Yd, rtol=1e-12, atol=1e-12 * np.abs(Yd).max())
    np.testing.assert_array_equal(Yr, Ym)
    lam, phi = scipy.linalg.eigh(TD3S_K, TD3S_M)
    if damping.model == "rayleigh":
        C = ALPHA * TD3S_M + BETA * TD3S_K
    else:
        zeta = np.full(2, damping.ratio)
        for mode, ratio in damping.mode_ratios:
            zeta[mode - 1] = ratio
        Mphi = TD3S_M @ phi
        C = Mphi @ np.diag(2 * zeta * np.sqrt(lam)) @ Mphi.T
    r = np.ones(2)
    ref = np.array([np.linalg.solve(TD3S_K - wi ** 2 * TD3S_M + 1j * wi * C, wi ** 2 * TD3S_M @ r)
                    for wi in w])
    if not relative:
        ref = ref + 1.0
    np.testing.assert_allclose(Yd, ref, rtol=1e-10, atol=1e-12 * np.abs(ref).max())
    with pytest.raises(ModelError, match="method"):
        solver.base_transmissibility(model, f, "x", method="fast")


def test_modal_path_refuses_dashpots_and_bad_method():
    """The modal path needs proportional damping (DESIGN.md 2: dashpots solved directly)."""
    model = td3s(dampers=(Damper(id="d", a="A", b="m1", c=5.0),))
    with pytest.raises(ModelError, match="direct"):
        solver.harmonic_response(model, [1.0], {("m1", "x"): 1.0}, method="modal")
    with pytest.raises(ModelError):
        solver.harmonic_response(model, [1.0], {("m1", "x"): 1.0}, method="fast")


# --------------------------------------------------------------------------------------------
# non-proportional dashpots against scipy.signal


def _three_chain():
    """Masses 1, 2, 1.5 kg; springs 1000, 800, 1200, 600 N/m fixed-fixed; a dashpot of 15 N s/m
    from m2 to the left anchor (non-proportional) and one of 3 N s/m between m1 and m3."""
    masses, ks = [1.0, 2.0, 1.5], [1000.0, 800.0, 1200.0, 600.0]
    model = chain(masses, ks, left=True, right=True)
    model = model.with_changes(put=[Damper(id="d2", a="A", b="m2", c=15.0),
                                    Damper(id="d13", a="m1", b="m3", c=3.0)])
    M = np.diag(masses)
    K = np.array([[ks[0] + ks[1], -ks[1], 0], [-ks[1], ks[1] + ks[2], -ks[2]],
                  [0, -ks[2], ks[2] + ks[3]]])
    C = np.array([[3.0, 0, -3.0], [0, 15.0, 0], [-3.0, 0, 3.0]])
    return model, M, K, C


def test_nonproportional_dashpots_against_scipy_signal():
    """Direct solve with non-proportional dashpots against scipy.signal.ss2tf(A, B, C, D, input=j)
    then scipy.signal.freqs (REFERENCES.md section 10: freqresp is SISO), A = [[0, I], [-M^-1 K,
    -M^-1 C]], B = [0; M^-1], output the displacements. rtol 1e-7 (polynomial conversion)."""
    model, M, K, C = _three_chain()
    # the damping really is non-proportional: C does not commute with M^-1 K
    Minv = np.linalg.inv(M)
    assert np.abs(Minv @ K @ Minv @ C - Minv @ C @ Minv @ K).max() > 1.0
    A = state_matrix(M, K, C)
    B = np.vstack([np.zeros((3, 3)), Minv])
    Cout = np.hstack([np.eye(3), np.zeros((3, 3))])
    D = np.zeros((3, 3))
    w = np.linspace(0.5, 80.0, 500)
    for j, mid in enumerate(("m1", "m2", "m3")):
        num, den = scipy.signal.ss2tf(A, B, Cout, D, input=j)
        ref = np.array([scipy.signal.freqs(num[i], den, worN=w)[1] for i in range(3)]).T
        H = solver.harmonic_response(model, w / TWO_PI, {(mid, "x"): 1.0})
        np.testing.assert_allclose(H, ref, rtol=1e-7, atol=1e-9 * np.abs(ref).max())


# --------------------------------------------------------------------------------------------
# damped free response


def _reference_free(M, K, C, x0, v0, t):
    """expm(A t) z0 (REFERENCES.md section 10) and solve_ivp DOP853 rtol 1e-10 atol 1e-13."""
    A = state_matrix(M, K, C)
    z0 = np.concatenate([x0, v0])
    Z = np.array([scipy.linalg.expm(A * ti) @ z0 for ti in t])
    sol = scipy.integrate.solve_ivp(lambda _, z: A @ z, (0.0, t[-1]), z0, t_eval=t,
                                    dense_output=False, **IVP)
    return Z, sol.y.T


def _modal_C(M, K, zeta):
    lam, phi = scipy.linalg.eigh(K, M)
    Mphi = M @ phi
    return Mphi @ np.diag(2 * np.asarray(zeta) * np.sqrt(np.maximum(lam, 0))) @ Mphi.T


def _td3s_cases():
    d12 = Damper(id="d12", a="m1", b="m2", c=6.0)
    d1 = Damper(id="d1", a="A", b="m1", c=10.0)
    Cd = np.array([[16.0, -6.0], [-6.0, 6.0]])
    ray = ALPHA * TD3S_M + BETA * TD3S_K
    return {
        "modal": (Damping(model="modal", ratio=0.05), (), _modal_C(TD3S_M, TD3S_K, [0.05, 0.05])),
        "modal-overrides": (Damping(model="modal", ratio=0.05, mode_ratios=((2, 1.5),)), (),
                            _modal_C(TD3S_M, TD3S_K, [0.05, 1.5])),
        "rayleigh": (Damping(model="rayleigh", alpha=ALPHA, beta=BETA), (), ray),
        "dashpots": (Damping(), (d12, d1), Cd),
        "dashpots+rayleigh": (Damping(model="rayleigh", alpha=ALPHA, beta=BETA), (d12, d1),
                              Cd + ray),
        "dashpots+modal": (Damping(model="modal", ratio=0.05), (d12, d1),
                           Cd + _modal_C(TD3S_M, TD3S_K, [0.05, 0.05])),
    }


@pytest.mark.parametrize("case", list(_td3s_cases()))
def test_td3s_damped_free_response(case):
    """TD-3S damped free response from x0 = [0.01, 0], v0 = [0, 0.05] (modal ratios, Rayleigh,
    dashpots by state space, and mixes) against scipy.linalg.expm (atol 1e-11 m) and
    scipy.integrate.solve_ivp DOP853 rtol 1e-10 atol 1e-13 (atol 1e-9 m) (REFERENCES.md section
    10); hand-built C = alpha M + beta K, M Phi diag(2 zeta w) Phi^T M, dashpot stamps."""
    damping, dampers, C = _td3s_cases()[case]
    model = td3s(damping, dampers)
    x0, v0 = np.array([0.01, 0.0]), np.array([0.0, 0.05])
    t = np.linspace(0.0, 2.0, 201)
    res = solver.free_response(model, t, x0={("m1", "x"): 0.01}, v0={("m2", "x"): 0.05})
    assert res.method == ("state-space" if dampers else "modal")
    Z, Y = _reference_free(TD3S_M, TD3S_K, C, x0, v0, t)
    np.testing.assert_allclose(res.displacement, Z[:, :2], rtol=0, atol=1e-11)
    np.testing.assert_allclose(res.velocity, Z[:, 2:], rtol=0, atol=1e-9)
    np.testing.assert_allclose(res.displacement, Y[:, :2], rtol=0, atol=1e-9)
    np.testing.assert_allclose(res.velocity, Y[:, 2:], rtol=0, atol=1e-8)
    # the motion does decay
    assert np.abs(res.displacement[-20:]).max() < 0.5 * np.abs(res.displacement[:20]).max()
    # undamped on request: the TD-3S closed form 0.005 (cos w1 t +- cos w2 t) (Rao, ch. 5 (mem))
    und = solver.free_response(model, [0.1], x0=x0, v0=np.zeros(2), damped=False)
    np.testing.assert_allclose(und.displacement[0], [-6.822950e-3, 2.661482e-3], rtol=1e-6)


def test_free_free_rayleigh_rigid_mode():
    """TD-FREE with Rayleigh damping: the rigid coordinate obeys q'' + alpha q' = 0 (math: C =
    alpha M + beta K on the rigid mode), so it creeps to q0 + q0'/alpha; against expm and
    solve_ivp (REFERENCES.md section 10), atol 1e-11 / 1e-9 m."""
    alpha, beta = 0.8, 2e-3
    model = Model(masses=(Mass(id="m1", x=0, y=0, mass=m0), Mass(id="m2", x=1, y=0, mass=m0)),
                  springs=(Spring(id="s", a="m1", b="m2", k=k0),),
                  damping=Damping(model="rayleigh", alpha=alpha, beta=beta))
    M = np.diag([m0, m0])
    K = np.array([[k0, -k0], [-k0, k0]])
    x0, v0 = np.array([0.01, 0.0]), np.array([0.1, 0.0])
    t = np.linspace(0.0, 3.0, 151)
    res = solver.free_response(model, t, x0=x0, v0=v0)
    Z, Y = _reference_free(M, K, alpha * M + beta * K, x0, v0, t)
    np.testing.assert_allclose(res.displacement, Z[:, :2], atol=1e-11)
    np.testing.assert_allclose(res.displacement, Y[:, :2], atol=1e-9)
    centre = res.displacement.mean(axis=1)
    np.testing.assert_allclose(centre, 0.005 + 0.05 * (1 - np.exp(-alpha * t)) / alpha, atol=1e-12)


@pytest.mark.parametrize("how", ["modal", "dashpot"])
@pytest.mark.parametrize("zeta", [1.0, 2.0, 0.05])
def test_sdof_free_response_closed_forms(how, zeta):
    """Single DOF from x0 = 0.01 m, v0 = -0.3 m/s (math, any vibration text; Rao, ch. 2 (mem)):
    critical x = (x0 + (v0 + wn x0) t) e^{-wn t}; overdamped x = A e^{s1 t} + B e^{s2 t},
    s = wn (-zeta +- sqrt(zeta^2 - 1)); underdamped e^{-zeta wn t} (x0 cos wd t + (v0 + zeta wn x0)
    sin wd t / wd). atol 1e-12 m (modal, closed form) / 1e-11 m (dashpot, state space)."""
    x0, v0 = 0.01, -0.3
    model = sdof(zeta=zeta) if how == "modal" else sdof(c=2 * zeta * math.sqrt(k0 * m0))
    t = np.linspace(0.0, 1.5, 301)
    res = solver.free_response(model, t, x0=[x0], v0=[v0])
    if zeta == 1.0:
        x = (x0 + (v0 + WN * x0) * t) * np.exp(-WN * t)
        v = (v0 - WN * (v0 + WN * x0) * t) * np.exp(-WN * t)
    elif zeta > 1.0:
        s1 = WN * (-zeta + math.sqrt(zeta ** 2 - 1))
        s2 = WN * (-zeta - math.sqrt(zeta ** 2 - 1))
        B = (v0 - s1 * x0) / (s2 - s1)
        A = x0 - B
        x = A * np.exp(s1 * t) + B * np.exp(s2 * t)
        v = A * s1 * np.exp(s1 * t) + B * s2 * np.exp(s2 * t)
    else:
        wd = WN * math.sqrt(1 - zeta ** 2)
        a = zeta * WN
        e = np.exp(-a * t)
        x = e * (x0 * np.cos(wd * t) + (v0 + a * x0) * np.sin(wd * t) / wd)
        v = e * (v0 * np.cos(wd * t) - (a * v0 + WN ** 2 * x0) * np.sin(wd * t) / wd)
    atol = 1e-12 if how == "modal" else 1e-11
    np.testing.assert_allclose(res.displacement[:, 0], x, rtol=0, atol=atol)
    np.testing.assert_allclose(res.velocity[:, 0], v, rtol=0, atol=atol * WN * 10)


def test_sd1_free_response_reference():
    """SD-1 free response from x0 = 0.01, v0 = 0: x(0.5 s) = -5.292088e-3 m (Rao, ch. 2-3 (mem)),
    zeta = 0.05 by ratio and by c = 4 N s/m; state eigenvalues -1 +- 19.97498 i. rtol 1e-6."""
    for model in (sdof(zeta=0.05), sdof(c=4.0)):
        res = solver.free_response(model, [0.0, 0.5], x0=[0.01], v0=[0.0])
        assert res.displacement[1, 0] == pytest.approx(-5.292088e-3, rel=1e-6)
    ev = np.linalg.eigvals(state_matrix([[m0]], [[k0]], [[4.0]]))
    np.testing.assert_allclose(sorted(ev.imag), [-19.97498, 19.97498], rtol=1e-6)


# --------------------------------------------------------------------------------------------
# Den Hartog's absorber


def absorber(M=20.0, K=8000.0, m_a=1.0, k_a=400.0, c=0.0):
    """Primary p (M on K to ground) with absorber a (m_a on k_a to p) and a dashpot c between them."""
    dampers = (Damper(id="c", a="p", b="a", c=c),) if c > 0 else ()
    return Model(masses=(Mass(id="p", x=1, y=0, mass=M), Mass(id="a", x=2, y=0, mass=m_a)),
                 anchors=(Anchor(id="G", x=0, y=0),),
                 springs=(Spring(id="K", a="G", b="p", k=K), Spring(id="ka", a="p", b="a", k=k_a)),
                 dampers=dampers)


def _optimum(mu, M=20.0, K=8000.0):
    omega = math.sqrt(K / M)
    m_a = mu * M
    f = 1 / (1 + mu)
    zeta = math.sqrt(3 * mu / (8 * (1 + mu) ** 3))
    return omega, m_a, m_a * (f * omega) ** 2, 2 * zeta * m_a * omega


@pytest.mark.parametrize("mu, height, g_fixed, true_peak",
                         [(0.05, 6.403124, (0.896462, 1.049342), 6.408443),
                          (0.10, 4.582576, (0.843037, 1.052364), 4.590220)])
def test_den_hartog_fixed_points_and_peaks(mu, height, g_fixed, true_peak):
    """Den Hartog's optimum absorber (Den Hartog, Mechanical Vibrations, 4th ed., sections 3.2-3.3
    (mem); Ormondroyd and Den Hartog, Trans. ASME 50 (1928)): f = 1/(1 + mu), zeta = sqrt(3 mu /
    (8 (1 + mu)^3)) referred to Omega, c = 2 zeta m_a Omega between the masses. |X1| K/F at the
    fixed points g^2 = (1 -+ sqrt(mu/(2 + mu)))/(1 + mu) is sqrt(1 + 2/mu) whatever c (rtol 1e-9
    against the formula; table digits 1e-6); the two peaks are equal within 1 % and within 1 % of
    that height; the true peak within 0.5 % of the table and never below the fixed-point height."""
    M, K, F = 20.0, 8000.0, 1.0
    omega, m_a, k_a, c_opt = _optimum(mu, M, K)
    h = math.sqrt(1 + 2 / mu)
    assert h == pytest.approx(height, rel=1e-6)
    gs = [math.sqrt((1 - s * math.sqrt(mu / (2 + mu))) / (1 + mu)) for s in (1, -1)]
    np.testing.assert_allclose(gs, g_fixed, rtol=1e-6)
    for c in (0.3 * c_opt, c_opt, 3 * c_opt, 1e3 * c_opt):
        X = solver.harmonic_response(absorber(M, K, m_a, k_a, c), np.array(gs) * omega / TWO_PI,
                                     {("p", "x"): F})
        np.testing.assert_allclose(np.abs(X[:, 0]) * K / F, h, rtol=1e-9)
    g = np.linspace(0.7, 1.3, 12001)
    X = solver.harmonic_response(absorber(M, K, m_a, k_a, c_opt), g * omega / TWO_PI,
                                 {("p", "x"): F})
    amp = np.abs(X[:, 0]) * K / F
    peaks = solver.find_peaks(g, amp)
    assert len(peaks) == 2
    p1, p2 = (p.amplitude for p in peaks)
    assert abs(p1 - p2) <= 0.01 * max(p1, p2)
    assert p1 == pytest.approx(h, rel=0.01) and p2 == pytest.approx(h, rel=0.01)
    assert peaks[0].frequency_hz < gs[1] < peaks[1].frequency_hz or \
        peaks[0].frequency_hz < 1.0 < peaks[1].frequency_hz
    top = max(p1, p2)
    assert top == pytest.approx(true_peak, rel=0.005)
    assert top >= h * (1 - 1e-9)


def test_undamped_absorber_holds_main_mass_still():
    """Undamped absorber with k_a/m_a = w^2: the main mass stands still and X2 = -F/k_a (Den
    Hartog, Mechanical Vibrations, 4th ed., sections 3.2-3.3 (mem)): M = 20, K = 8000, m_a = 1,
    k_a = 400, F = 10 N at 20 rad/s -> X2 = -0.025 m (rtol 1e-10; |X1| < 1e-12 F/K)."""
    model = absorber()
    X = solver.harmonic_response(model, [20.0 / TWO_PI], {("p", "x"): 10.0})[0]
    assert abs(X[0]) < 1e-12 * 10.0 / 8000.0
    assert X[1].real == pytest.approx(-0.025, rel=1e-10)
    assert abs(X[1].imag) < 1e-15


# --------------------------------------------------------------------------------------------
# isolation efficiency and RMS over a band


def test_isolation_efficiency():
    """Isolation efficiency (1 - |T|) 100 % (common practice): T(3) = 0.1304122 at zeta = 0.05
    (Harris' Shock and Vibration Handbook, ch. 30; Rao, section 3.6 (mem)) -> 86.95878 %; an
    amplifying mount is negative. atol 1e-4 % / exact for plain numbers."""
    np.testing.assert_allclose(solver.isolation_efficiency([0.25, 1.0, 2.0 + 0j, -0.5, 0.6j]),
                               [75.0, 0.0, -100.0, 50.0, 40.0], rtol=0, atol=1e-12)
    T = solver.base_transmissibility(sdof(zeta=0.05), [3 * FN, FN], "x")[:, 0]
    eff = solver.isolation_efficiency(T)
    assert eff[0] == pytest.approx(86.95878, abs=1e-4)
    assert eff[1] == pytest.approx(-904.988, abs=1e-3)


def test_rms_over_band_against_quad():
    """RMS of the absolute response of a single DOF (zeta = 0.05) to a flat base ASD of
    0.04 (m/s^2)^2/Hz over 1 to 10 Hz: sqrt(ASD * integral |T|^2 df) with T from the SD-T formula
    (Harris' Shock and Vibration Handbook, ch. 30; Rao, section 3.6 (mem)) integrated by
    scipy.integrate.quad (points at fn). rtol 1e-5 (trapezoid on 0.25 mHz steps)."""
    zeta, asd = 0.05, 0.04
    f = np.linspace(0.5, 12.0, 46001)
    T = solver.base_transmissibility(sdof(zeta=zeta), f, "x")
    val, err = scipy.integrate.quad(lambda x: T_closed(x / FN, zeta) ** 2, 1.0, 10.0,
                                    points=[FN], limit=400, epsabs=0, epsrel=1e-12)
    ref = math.sqrt(asd * val)
    rms = solver.rms_over_band(f, T[:, 0], asd, 1.0, 10.0)
    assert float(rms) == pytest.approx(ref, rel=1e-5)
    both = solver.rms_over_band(f, T, asd, 1.0, 10.0)  # (n_freq, n_dof) in, (n_dof,) out
    assert both.shape == (1,) and both[0] == pytest.approx(ref, rel=1e-5)
    with pytest.raises(ModelError):
        solver.rms_over_band(f, T[:, 0], asd, 20.0, 30.0)
