"""Loads: random base vibration, shock, shock response spectra and design response spectra, each
against a published formula, a closed form or an independent general-purpose solver (scipy's
quad and solve_ivp) working from matrices written out here by hand from the model data.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.integrate
import scipy.linalg

import solver
from solver import (Anchor, Damper, Damping, DesignSpectrum, Loads, Mass, Model, ModelError,
                    RandomVibration, ShockPulse, Spring)
from solver.load_cases import G0
from solver.loads import asd_at, asd_grms, cqc_correlation, frequency_grid

from sw_builders import chain


def sdof(f_hz=100.0, m=2.0, zeta=0.01, kind="modal"):
    k = m * (2 * math.pi * f_hz) ** 2
    model = chain([m], [k], name="sdof")
    return model.with_changes(damping=Damping(model="modal", ratio=zeta)) if kind else model


# -- random vibration -----------------------------------------------------------------------

def test_miles_equation_against_the_exact_flat_spectrum_integral():
    """Miles (1954) (mem): a single-DOF system on a base shaken by a flat ASD W has
    g RMS ~= sqrt(pi/2 f_n Q W) for light damping. The exact integral of the absolute
    transmissibility squared is pi f_n (1 + 4 zeta^2) / (4 zeta) (Crandall and Mark, Random
    Vibration in Mechanical Systems (mem); checked here also by scipy's quad). Zeta = 0.01, a band
    five decades wide around f_n: the response equals the exact value to 2e-4 and Miles' value
    to 4 zeta^2 = 4e-4 (relative, in the square)."""
    fn, zeta, W = 100.0, 0.01, 0.04
    r = solver.random_response(sdof(fn, zeta=zeta), RandomVibration(((1.0, W), (1e5, W))))
    exact = math.sqrt(W * math.pi * fn * (1 + 4 * zeta ** 2) / (4 * zeta))
    miles = math.sqrt(math.pi / 2 * fn * (1 / (2 * zeta)) * W)
    assert r.acceleration_grms[0] == pytest.approx(exact, rel=2e-4)
    assert r.acceleration_grms[0] == pytest.approx(miles, rel=5e-4)

    def T2(f):
        rho = f / fn
        return (1 + (2 * zeta * rho) ** 2) / ((1 - rho ** 2) ** 2 + (2 * zeta * rho) ** 2)

    quad = sum(scipy.integrate.quad(T2, a, b, limit=400, points=[fn] if a < fn < b else None)[0]
               for a, b in ((1, 90), (90, 110), (110, 1e3), (1e3, 1e5)))
    assert r.acceleration_grms[0] == pytest.approx(math.sqrt(W * quad), rel=2e-5)
    check, = r.miles
    assert check.mode == 1 and check.q == pytest.approx(50)
    assert check.miles_grms == pytest.approx(miles, rel=1e-12)
    assert check.exact_grms == pytest.approx(exact, rel=2e-4)


def test_relative_displacement_rms_of_a_sdof_under_white_noise():
    """Crandall and Mark (mem), math: for y'' + 2 zeta w y' + w^2 y = -a with a one-sided
    white ASD W (in (m/s^2)^2/Hz), sigma_y^2 = W / (8 zeta w^3) (the integral of |H|^2 over
    0..inf in Hz). The spring's deflection is y and its force k y."""
    fn, zeta, W = 40.0, 0.02, 0.01
    model = sdof(fn, m=3.0, zeta=zeta)
    r = solver.random_response(model, RandomVibration(((0.1, W), (1e4, W))))
    w = 2 * math.pi * fn
    sigma = math.sqrt(W * G0 ** 2 / (8 * zeta * w ** 3))
    assert r.displacement_rms_m[0] == pytest.approx(sigma, rel=1e-3)
    assert r.deflection_rms_m[0] == pytest.approx(sigma, rel=1e-3)
    assert r.force_rms_n[0] == pytest.approx(model.springs[0].k * sigma, rel=1e-3)
    assert r.three_sigma("displacement_rms_m")[0] == pytest.approx(3 * r.displacement_rms_m[0])


def _two_dof():
    """m1 = 4 kg on k1 = 4e5 N/m to the base, m2 = 1.5 kg on k2 = 6e4 N/m to m1."""
    return chain([4.0, 1.5], [4e5, 6e4], name="two")


def _two_dof_matrices(model, c_dash=0.0):
    m1, m2 = (m.mass for m in model.masses)
    k1, k2 = (s.k for s in model.springs)
    M = np.diag([m1, m2])
    K = np.array([[k1 + k2, -k2], [-k2, k2]])
    C = np.array([[c_dash, -c_dash], [-c_dash, c_dash]]) if c_dash else np.zeros((2, 2))
    return M, K, C


TABLE = ((10.0, 0.002), (50.0, 0.03), (400.0, 0.03), (2000.0, 0.004))


def _loglog_asd(f):
    """The ASD written out independently: a1 (f / f1)^b between breakpoints."""
    for (f1, a1), (f2, a2) in zip(TABLE, TABLE[1:]):
        if f1 <= f <= f2:
            b = math.log(a2 / a1) / math.log(f2 / f1)
            return a1 * (f / f1) ** b
    return 0.0


@pytest.mark.parametrize("damping", ["rayleigh", "dashpot"])
def test_two_dof_rms_against_quad_of_h_squared_times_the_asd(damping):
    """Common practice (Harris' Shock and Vibration Handbook, random vibration (mem)): the RMS of
    an output is sqrt(integral |H(f)|^2 ASD(f) df). Here H comes from M, K, C written out by hand
    (Rayleigh alpha M + beta K, or a dashpot between the masses: the direct solve path) and the
    integral from scipy's adaptive quad with the natural frequencies as break points;
    agreement 1e-4 for each mass's absolute acceleration and each spring's force."""
    model = _two_dof()
    if damping == "rayleigh":
        alpha, beta = 2.0, 4e-5
        model = model.with_changes(damping=Damping(model="rayleigh", alpha=alpha, beta=beta))
        M, K, _ = _two_dof_matrices(model)
        C = alpha * M + beta * K
    else:
        c = 60.0
        model = model.with_changes(put=[Damper(id="d", a="m1", b="m2", c=c)])
        M, K, C = _two_dof_matrices(model, c)
    r = solver.random_response(model, RandomVibration(TABLE))
    w2, _ = scipy.linalg.eigh(K, M)
    fn = np.sqrt(w2) / (2 * math.pi)
    ones = np.ones(2)
    k = np.array([s.k for s in model.springs])

    def outputs(f):
        w = 2 * math.pi * f
        y = np.linalg.solve(K - w * w * M + 1j * w * C, -M @ ones) * G0   # m per g
        acc = 1 + (-(w * w) * y / G0)                                        # g per g
        force = k * np.array([y[0], y[1] - y[0]])
        return np.concatenate([np.abs(acc) ** 2, np.abs(force) ** 2]) * _loglog_asd(f)

    pts = sorted([p for p in list(fn) + [50.0, 400.0] if 10 < p < 2000])
    edges = [10.0] + pts + [2000.0]
    total = np.zeros(4)
    for a, b in zip(edges, edges[1:]):
        for i in range(4):
            total[i] += scipy.integrate.quad(lambda f: outputs(f)[i], a, b, limit=500,
                                             epsabs=0, epsrel=1e-10)[0]
    ref = np.sqrt(total)
    np.testing.assert_allclose(r.acceleration_grms, ref[:2], rtol=1e-4)
    np.testing.assert_allclose(r.force_rms_n, ref[2:], rtol=1e-4)


def test_overall_grms_of_a_breakpoint_table():
    """Math: the area under log-log straight lines (closed form per segment) equals scipy's quad
    of the same table written out independently; a flat table gives sqrt(W (f2 - f1))."""
    area = sum(scipy.integrate.quad(_loglog_asd, a, b, epsrel=1e-12)[0]
               for (a, _), (b, _) in zip(TABLE, TABLE[1:]))
    assert asd_grms(RandomVibration(TABLE)) == pytest.approx(math.sqrt(area), rel=1e-10)
    assert asd_grms(RandomVibration(((20, 0.04), (2000, 0.04)))) == pytest.approx(
        math.sqrt(0.04 * 1980), rel=1e-14)
    # a -1 slope (the closed form's logarithm branch): W1 f1 ln(f2 / f1)
    assert asd_grms(RandomVibration(((10, 1.0), (100, 0.1)))) == pytest.approx(
        math.sqrt(10 * math.log(10)), rel=1e-12)
    f = np.array([5.0, 10.0, 30.0, 2000.0, 2500.0])
    np.testing.assert_allclose(asd_at(RandomVibration(TABLE), f),
                               [_loglog_asd(v) for v in f], rtol=1e-12)


def test_default_grid_resolves_a_lightly_damped_mode():
    """Math (numerical quadrature of a resonance): the default grid (18 points a half-power
    bandwidth at every mode, graded on its flanks) gives the same RMS as a uniform grid 50 times
    finer than the bandwidth, zeta = 0.002, to 1e-5."""
    model = sdof(123.4, zeta=0.002)
    asd = RandomVibration(((20, 0.01), (2000, 0.01)))
    r = solver.random_response(model, asd)
    fine = np.arange(20.0, 2000.0, 2 * 0.002 * 123.4 / 50)
    ref = solver.random_response(model, asd, freqs_hz=fine)
    assert r.acceleration_grms[0] == pytest.approx(ref.acceleration_grms[0], rel=1e-5)
    assert len(r.frequencies_hz) < len(fine) / 20
    grid = frequency_grid(asd, [123.4], [0.002])
    near = grid[np.abs(grid - 123.4) < 0.002 * 123.4]
    assert len(near) >= 16


def test_undamped_model_gets_the_stated_default_damping():
    """Common practice: Q = 10 (5 % of critical) when nothing is known; the result says so."""
    r = solver.random_response(sdof(50.0, kind=None), RandomVibration(((10, 0.01), (500, 0.01))))
    assert any("5%" in a and "Q = 10" in a for a in r.assumptions)
    assert r.miles[0].q == pytest.approx(10.0)


# -- shock -------------------------------------------------------------------------------------

def _halfsine_undamped(t, A, T, wn):
    """Relative displacement of y'' + wn^2 y = -A sin(pi t / T) (0 <= t <= T), y(0) = y'(0) = 0,
    in closed form (Harris' Shock and Vibration Handbook, response to a half-sine pulse (mem)):
    y = -A / (wn^2 - W^2) (sin W t - (W / wn) sin wn t) during the pulse, free vibration after."""
    W = math.pi / T
    c = -A / (wn ** 2 - W ** 2)
    during = c * (np.sin(W * t) - W / wn * np.sin(wn * t))
    yT = c * (math.sin(W * T) - W / wn * math.sin(wn * T))
    vT = c * (W * math.cos(W * T) - W * math.cos(wn * T))
    tau = t - T
    after = yT * np.cos(wn * tau) + vT / wn * np.sin(wn * tau)
    return np.where(t <= T, during, after)


@pytest.mark.parametrize("fn_T", [0.3, 0.8, 2.5])
def test_sdof_half_sine_against_the_closed_form(fn_T):
    """Harris' Shock and Vibration Handbook (mem): the undamped single-DOF response to a
    half-sine base pulse in closed form, during the pulse and in the residual vibration. The
    solver's samples are exact (matrix exponential), so they agree to 1e-9 of the peak; the
    peak absolute acceleration (w^2 |y|) to 1e-4 after the parabolic refinement."""
    T, peak = 0.011, 30.0
    fn = fn_T / T
    model = sdof(fn, zeta=0.0)
    s = solver.shock_response(model, ShockPulse("half-sine", peak, T), n_steps=4000,
                              duration_s=T + 3 / fn)
    wn = 2 * math.pi * fn
    y = _halfsine_undamped(s.times, peak * G0, T, wn)
    scale = np.abs(y).max()
    np.testing.assert_allclose(s.displacement_m[:, 0], y, atol=1e-9 * scale)
    np.testing.assert_allclose(s.acceleration_g[:, 0], -(wn ** 2) * y / G0,
                               atol=1e-8 * wn ** 2 * scale / G0)
    dense = np.linspace(0, s.times[-1], 400001)
    ref_peak = wn ** 2 * np.abs(_halfsine_undamped(dense, peak * G0, T, wn)).max() / G0
    assert abs(s.peaks["acceleration_g"][0][0]) == pytest.approx(ref_peak, rel=1e-4)
    assert s.method == "modal"


def test_two_dof_shock_with_a_dashpot_against_solve_ivp():
    """scipy's solve_ivp (RK45 at rtol 1e-10) on M y'' + C y' + K y = -M 1 a(t), the matrices
    written out here: the exact state-space response (a dashpot between the masses makes damping
    non-proportional) to a trapezoidal pulse agrees to 1e-6 of the peak at every sample."""
    model = _two_dof().with_changes(put=[Damper(id="d", a="m1", b="m2", c=40.0)])
    M, K, C = _two_dof_matrices(model, 40.0)
    pulse = ShockPulse("trapezoid", 20.0, 0.01, rise_s=0.002, fall_s=0.003)
    s = solver.shock_response(model, pulse, duration_s=0.05, n_steps=2000)
    assert s.method == "state-space"
    Minv = np.linalg.inv(M)

    def rhs(t, z):
        a = pulse.acceleration_g(t) * G0
        return np.concatenate([z[2:], Minv @ (-K @ z[:2] - C @ z[2:]) - a])

    sol = scipy.integrate.solve_ivp(rhs, (0, 0.05), np.zeros(4), t_eval=s.times, rtol=1e-10,
                                    atol=1e-14, max_step=2e-4)
    scale = np.abs(sol.y[:2]).max()
    np.testing.assert_allclose(s.displacement_m, sol.y[:2].T, atol=1e-6 * scale)
    rel_acc = np.array([rhs(t, z)[2:] for t, z in zip(sol.t, sol.y.T)])
    abs_acc = rel_acc / G0 + pulse.acceleration_g(sol.t)[:, None]
    np.testing.assert_allclose(s.acceleration_g, abs_acc,
                               atol=1e-5 * np.abs(abs_acc).max())
    k2 = model.springs[1].k
    np.testing.assert_allclose(s.force_n[:, 1], k2 * (sol.y[1] - sol.y[0]),
                               atol=1e-6 * k2 * scale)


@pytest.mark.parametrize("shape, edges", [("half-sine", ()), ("sawtooth", ()),
                                          ("trapezoid", (0.002, 0.002))])
def test_srs_against_solve_ivp(shape, edges):
    """The maximax shock response spectrum (Harris, shock response spectra (mem)) against scipy's
    solve_ivp of each single-DOF system, sampled 200 times a cycle and over the pulse and two
    cycles after it: agreement 0.2 %, Q = 10."""
    pulse = ShockPulse(shape, 50.0, 0.011, *edges)
    freqs = np.array([10.0, 60.0, 150.0, 900.0])
    srs = solver.shock_response_spectrum(pulse, freqs, q=10)
    zeta = 0.05
    for f, got in zip(freqs, srs.maximax_g):
        w = 2 * math.pi * f

        def rhs(t, z):
            return [z[1], -2 * zeta * w * z[1] - w * w * z[0] - pulse.acceleration_g(t)]

        end = 0.011 + 2 / f
        t = np.linspace(0, end, int(200 * f * end) + 2000)
        sol = scipy.integrate.solve_ivp(rhs, (0, end), [0, 0], t_eval=t, rtol=1e-10,
                                        atol=1e-12, max_step=min(1e-4, 0.02 / f))
        ref = np.abs(2 * zeta * w * sol.y[1] + w * w * sol.y[0]).max()
        assert got == pytest.approx(ref, rel=2e-3), f


def test_srs_of_a_half_sine_tends_to_the_peak_at_high_frequency():
    """Harris (mem): a stiff system follows the base, so the SRS tends to the pulse's peak far
    above 1 / duration, exceeding it by at most the undamped transient's share W / w = 1 / (2 f
    T) (the closed form of test_sdof_half_sine_against_the_closed_form); far below, it tends to
    the velocity change's impulse value w * (2 A T / pi) (a short pulse as an impulse; math)."""
    pulse = ShockPulse("half-sine", 100.0, 0.001)
    srs = solver.shock_response_spectrum(pulse, [1.0, 50000.0], q=1000)
    w = 2 * math.pi
    assert srs.maximax_g[0] == pytest.approx(w * 2 * 100.0 * 0.001 / math.pi, rel=1e-3)
    assert 100.0 < srs.maximax_g[1] <= 100.0 * (1 + 1 / (2 * 50000 * 0.001)) * (1 + 1e-9)


# -- design response spectrum ----------------------------------------------------------------

def test_cqc_rho_of_der_kiureghian():
    """Der Kiureghian (1981) (mem): for equal damping rho = 8 zeta^2 (1 + b) b^1.5 /
    ((1 - b^2)^2 + 4 zeta^2 b (1 + b)^2); rho = 1 at b = 1; rho small for well separated modes.
    The unequal-damping form is checked against this equal-damping form and symmetry."""
    z = 0.05
    for b in (0.5, 0.8, 0.9, 0.95, 1.0):
        rho = cqc_correlation([1.0, b], [z, z])[0, 1]
        ref = 8 * z * z * (1 + b) * b ** 1.5 / ((1 - b * b) ** 2 + 4 * z * z * b * (1 + b) ** 2)
        assert rho == pytest.approx(ref, rel=1e-12)
    r = cqc_correlation([3.0, 5.0, 5.2], [0.02, 0.05, 0.03])
    np.testing.assert_allclose(r, r.T, rtol=1e-12)
    assert cqc_correlation([1.0, 3.0], [z, z])[0, 1] < 0.01


def _shear_building(n=5, m=1e5, k=3e7, zeta=0.05):
    """A uniform n-storey shear frame: storey masses m, storey stiffnesses k, fixed base."""
    return chain([m] * n, [k] * n, name="frame").with_changes(
        damping=Damping(model="modal", ratio=zeta))


def test_uniform_five_storey_frame_by_srss_and_cqc():
    """Chopra, Dynamics of Structures, the uniform five-storey shear frame (mem): modes
    phi_jn = sin((2n - 1) j pi / 11), w_n = 2 sqrt(k/m) sin((2n - 1) pi / 22) (math, the fixed-free
    chain); effective modal masses 87.95, 8.72, 2.42, 0.75, 0.16 % of the total, so two modes
    reach 90 %. Under a flat spectrum S_a the peak modal roof displacement is
    Gamma_n phi_5n S_a / w_n^2 and the base shear Gamma_n^2 M_n S_a; SRSS is the root sum of
    squares; CQC equals it within 0.5 % here (modes well separated)."""
    n, m, k = 5, 1e5, 3e7
    model = _shear_building(n, m, k)
    sa_g = 0.4
    res = solver.spectrum_response(model, DesignSpectrum("period", ((0.01, sa_g), (10.0, sa_g))))
    j = np.arange(1, n + 1)
    w = np.array([2 * math.sqrt(k / m) * math.sin((2 * i - 1) * math.pi / 22) for i in j])
    phi = np.array([np.sin((2 * i - 1) * j * math.pi / 11) for i in j]).T   # (storey, mode)
    Mn = m * (phi ** 2).sum(axis=0)
    Ln = m * phi.sum(axis=0)
    gamma = Ln / Mn
    np.testing.assert_allclose(res.effective_mass_fraction, Ln ** 2 / Mn / (n * m), rtol=1e-9)
    np.testing.assert_allclose(100 * res.effective_mass_fraction,
                               [87.95, 8.72, 2.42, 0.75, 0.16], atol=0.006)
    assert res.modes_for_90_percent == {"x": 2}
    Sa = sa_g * G0
    roof = gamma * phi[-1] * Sa / w ** 2
    assert res.srss["displacement_m"][-1] == pytest.approx(np.sqrt((roof ** 2).sum()), rel=1e-9)
    shear = Ln ** 2 / Mn * Sa
    assert res.srss["force_n"][0] == pytest.approx(np.sqrt((shear ** 2).sum()), rel=1e-9)
    assert res.cqc["force_n"][0] == pytest.approx(res.srss["force_n"][0], rel=5e-3)
    np.testing.assert_allclose(np.abs(res.modal["acceleration_g"][:, -1]),
                               np.abs(gamma * phi[-1]) * sa_g, rtol=1e-9)


def test_cqc_with_close_modes_uses_the_correlation():
    """Der Kiureghian (1981) (mem): for two close modes, CQC = sqrt(r1^2 + r2^2 + 2 rho r1 r2),
    which differs from SRSS. A symmetric pair of equal masses on slightly different springs,
    joined by a soft spring, gives two close modes; the combination is checked against that
    formula with rho from the equal-damping expression typed here."""
    model = Model(kind="line", masses=(Mass("a", 1, 0, 10.0), Mass("b", 3, 0, 10.0)),
                  anchors=(Anchor("g", 0, 0), Anchor("h", 4, 0)),
                  springs=(Spring("s1", "g", "a", 1.0e5), Spring("s2", "b", "h", 1.04e5),
                           Spring("c", "a", "b", 2e3)),
                  damping=Damping(model="modal", ratio=0.05))
    res = solver.spectrum_response(model, DesignSpectrum("frequency", ((1, 0.5), (100, 0.5))))
    b = res.frequencies_hz[0] / res.frequencies_hz[1]
    z = 0.05
    rho = 8 * z * z * (1 + b) * b ** 1.5 / ((1 - b * b) ** 2 + 4 * z * z * b * (1 + b) ** 2)
    assert rho > 0.3
    r1, r2 = res.modal["displacement_m"][:, 0]
    assert res.cqc["displacement_m"][0] == pytest.approx(
        math.sqrt(r1 * r1 + r2 * r2 + 2 * rho * r1 * r2), rel=1e-9)
    assert abs(res.cqc["displacement_m"][0] - res.srss["displacement_m"][0]) > 0.05 * \
        res.srss["displacement_m"][0]


# -- bad input ---------------------------------------------------------------------------------

@pytest.mark.parametrize("make, words", [
    (lambda: RandomVibration(((10, 0.01), (5, 0.01))), ["row 2", "frequency", "above", "10 Hz"]),
    (lambda: RandomVibration(((10, 0.01), (20, -1))), ["row 2", "ASD", "positive"]),
    (lambda: RandomVibration(((10, 0.01),)), ["at least two rows"]),
    (lambda: RandomVibration(((10, "a"), (20, 1))), ["row 1", "ASD", "number"]),
    (lambda: RandomVibration(((10, 1, 2), (20, 1))), ["row 1", "two numbers"]),
    (lambda: RandomVibration("10 0.01"), ["list of"]),
    (lambda: RandomVibration(((10, float("nan")), (20, 1))), ["row 1", "ASD", "positive"]),
    (lambda: ShockPulse("square", 10, 0.01), ["shape", "half-sine, sawtooth, trapezoid"]),
    (lambda: ShockPulse("half-sine", 0, 0.01), ["peak", "positive"]),
    (lambda: ShockPulse("half-sine", 10, -1), ["duration", "positive"]),
    (lambda: ShockPulse("trapezoid", 10, 0.01, 0.006, 0.005), ["rise time + fall time"]),
    (lambda: ShockPulse("trapezoid", 10, 0.01), ["rise time", "positive"]),
    (lambda: DesignSpectrum("time", ((1, 1), (2, 1))), ["abscissa", "frequency, period"]),
    (lambda: DesignSpectrum("period", ((1, 1), (1, 2))), ["row 2", "period", "above"]),
    (lambda: Loads(direction="z"), ["direction", "x, y"]),
    (lambda: Loads(srs_q=0.1), ["srs_q", "between"]),
    (lambda: Loads(random=((1, 1), (2, 1))), ["random", "RandomVibration"]),
])
def test_bad_definitions_are_refused_in_one_line(make, words):
    """DESIGN.md section 4 and the brief: a bad table or pulse is refused with one line naming
    the table, the row and the field, and what is allowed."""
    with pytest.raises(ModelError) as info:
        make()
    msg = str(info.value)
    assert "\n" not in msg and len(msg) < 300
    for w in words:
        assert w in msg, (w, msg)


def test_models_the_base_cannot_drive_are_refused():
    """Common practice: base motion needs the model held by the base. A free-floating chain (a
    rigid-body mode in the direction), a torsion model and a direction the model lacks are
    refused with one line each."""
    free = chain([1.0, 1.0], [100.0], left=False)
    asd = RandomVibration(((10, 0.01), (100, 0.01)))
    with pytest.raises(ModelError, match="rigid body.*anchor it"):
        solver.random_response(free, asd)
    tors = Model(kind="torsion", masses=(Mass("d", 1, 0, 0.1),), anchors=(Anchor("g", 0, 0),),
                 springs=(Spring("s", "g", "d", 100.0),))
    with pytest.raises(ModelError, match="torsion"):
        solver.shock_response(tors, ShockPulse("half-sine", 10, 0.01))
    with pytest.raises(ModelError, match='direction must be one of x.*"y"'):
        solver.spectrum_response(sdof(), DesignSpectrum("period", ((1, 1), (2, 1))), "y")
    with pytest.raises(ModelError, match="ShockPulse"):
        solver.shock_response(sdof(), "half-sine")
    with pytest.raises(ModelError, match="strictly increasing"):
        solver.random_response(sdof(), asd, freqs_hz=[20, 10])


def test_planar_model_in_y_reports_both_directions_and_only_y_moves_a_symmetric_mount():
    """Math (symmetry): a mass on two equal springs at +-45 degrees below it, shaken in y,
    moves in y only; the x outputs are zero and each spring carries half the load."""
    model = Model(kind="planar", masses=(Mass("m", 0, 1, 5.0),),
                  anchors=(Anchor("a", -1, 0), Anchor("b", 1, 0)),
                  springs=(Spring("s1", "a", "m", 1e5), Spring("s2", "b", "m", 1e5)),
                  damping=Damping(model="modal", ratio=0.03))
    r = solver.random_response(model, RandomVibration(((5, 0.01), (500, 0.01))), "y")
    assert r.mass_outputs == (("m", "x"), ("m", "y"))
    assert r.acceleration_grms[0] < 1e-9 * r.acceleration_grms[1]
    assert r.force_rms_n[0] == pytest.approx(r.force_rms_n[1], rel=1e-9)


def test_load_results_of_the_example_rack():
    """The shipped rack defines all three loads; each result is there with the caution."""
    from pathlib import Path

    path = Path(__file__).resolve().parents[2] / "assets" / "examples" / "equipment_rack.json"
    model = solver.load_model(path)
    out = solver.load_results(model)
    assert out.random is not None and out.shock is not None and out.spectrum is not None
    assert "licensed engineering practice" in out.caution
    assert out.srs.maximax_g.shape == out.srs.frequencies_hz.shape
    with pytest.raises(ModelError, match="defines no loads"):
        solver.load_results(model.with_changes(loads=None))


def test_shock_with_a_maxwell_element_against_solve_ivp():
    """scipy's solve_ivp on the equations written out here: a mass m on a spring k to the base and
    on a spring k_j to a massless junction, the junction on a dashpot c to the base (a Maxwell
    element: the junction creeps, a first-order state). In motion relative to the base,
    m y'' + k y + k_j (y - u) = -m a(t) and c u' = k_j (y - u). The exact state-space response
    agrees to 1e-6 of the peak, the junction spring's force k_j (u - y) too."""
    from solver import Mass, Model, Anchor, Spring

    m, k, kj, c = 2.0, 1e5, 5e4, 30.0
    model = Model(kind="line", masses=(Mass("m", 1, 0, m), Mass("j", 2, 0, 0.0)),
                  anchors=(Anchor("g", 0, 0),),
                  springs=(Spring("s", "g", "m", k), Spring("sj", "m", "j", kj)),
                  dampers=(Damper("d", "j", "g", c),))
    pulse = ShockPulse("sawtooth", 25.0, 0.008)
    s = solver.shock_response(model, pulse, duration_s=0.06, n_steps=3000)
    assert s.method == "state-space"

    def rhs(t, z):
        y, v, u = z
        a = pulse.acceleration_g(t) * G0
        return [v, (-k * y - kj * (y - u)) / m - a, kj * (y - u) / c]

    sol = scipy.integrate.solve_ivp(rhs, (0, 0.06), [0, 0, 0], t_eval=s.times, rtol=1e-11,
                                    atol=1e-15, max_step=2e-5)
    y, u = sol.y[0], sol.y[2]
    np.testing.assert_allclose(s.displacement_m[:, 0], y, atol=1e-6 * np.abs(y).max())
    f = kj * (u - y)
    np.testing.assert_allclose(s.force_n[:, 1], f, atol=1e-6 * np.abs(f).max())
