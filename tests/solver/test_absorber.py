"""Tuned absorber sizing (issue 15) against Den Hartog's optimum (REFERENCES.md section 5) and
an independent complex solve of the equations of motion."""

from __future__ import annotations

import math

import numpy as np
import pytest

import solver
from solver import ModelError
from solver.absorber import size_absorber
from solver.model import Anchor, Damper, Damping, Mass, Model, Spring

M1, K1 = 20.0, 8000.0
OMEGA = math.sqrt(K1 / M1)


def primary(extra=()):
    return Model(kind="line", masses=(Mass("m", 1.0, 0.0, M1),), anchors=(Anchor("g", 0, 0),),
                 springs=(Spring("k", "g", "m", K1),) + tuple(extra))


def two_dof_x1(design, w):
    """|X1| of the primary under a unit force, from the 2x2 dynamic stiffness (numpy, written
    out from the equations of motion: math)."""
    ka, ca, ma = design.stiffness, design.damping, design.absorber_mass
    out = []
    for wi in np.atleast_1d(w):
        D = np.array([[K1 + ka - wi ** 2 * M1 + 1j * wi * ca, -ka - 1j * wi * ca],
                      [-ka - 1j * wi * ca, ka - wi ** 2 * ma + 1j * wi * ca]])
        out.append(abs(np.linalg.solve(D, [1.0, 0.0])[0]))
    return np.array(out)


@pytest.mark.parametrize("mu, f_opt, zeta_opt, height, g_fixed, peak", [
    (0.05, 0.952381, 0.127267, 6.403124, (0.896462, 1.049342), 6.408443),
    (0.10, 0.909091, 0.167852, 4.582576, (0.843037, 1.052364), 4.590220),
])
def test_den_hartog_optimum(mu, f_opt, zeta_opt, height, g_fixed, peak):
    """REFERENCES.md section 5 (Den Hartog, Mechanical Vibrations, 4th ed., 3.2-3.3 (mem)):
    f_opt = 1/(1 + mu), zeta_opt = sqrt(3 mu / (8 (1 + mu)^3)) referred to Omega; the two fixed
    points of |X1| K / F at g^2 = (1 -+ sqrt(mu/(2 + mu)))/(1 + mu) both at sqrt(1 + 2/mu);
    the true peak within 0.5 % above that height, never below (table values to 6 digits)."""
    d = size_absorber(primary(), 1, "m", mu)
    assert d.primary_mass == pytest.approx(M1, rel=1e-12)   # an SDOF's modal mass is M
    assert d.absorber_mass == pytest.approx(mu * M1, rel=1e-12)
    assert d.tuning_ratio == pytest.approx(f_opt, abs=1e-6)
    assert d.damping_ratio == pytest.approx(zeta_opt, abs=1e-6)
    assert d.stiffness == pytest.approx(mu * M1 * (f_opt * OMEGA) ** 2, rel=1e-5)
    assert d.damping == pytest.approx(2 * mu * M1 * zeta_opt * OMEGA, rel=1e-5)
    for g in g_fixed:
        assert two_dof_x1(d, g * OMEGA)[0] * K1 == pytest.approx(height, rel=2e-6)
    g = np.linspace(0.7, 1.3, 60001)
    top = two_dof_x1(d, g * OMEGA).max() * K1
    assert top == pytest.approx(peak, rel=2e-6)
    assert height <= top <= 1.005 * height
    # the design's own curve (solver.harmonic_response on the new model) agrees with the
    # 2x2 solve on its grid
    np.testing.assert_allclose(d.after, two_dof_x1(d, 2 * np.pi * d.freqs_hz), rtol=1e-9)


def test_undamped_absorber_holds_the_main_mass_still():
    """REFERENCES.md section 5 (Den Hartog (mem)): with k_a/m_a = w^2 the main mass stands still
    and X2 = -F/k_a: M = 20 kg, K = 8000 N/m, m_a = 1 kg, k_a = 400 N/m, F = 10 N at 20 rad/s
    gives X2 = -0.025 m (the machinery the before/after curves use)."""
    model = Model(kind="line", masses=(Mass("m", 1.0, 0.0, M1), Mass("a", 1.0, -1.0, 1.0)),
                  anchors=(Anchor("g", 0, 0),),
                  springs=(Spring("k", "g", "m", K1), Spring("ka", "m", "a", 400.0)))
    X = solver.harmonic_response(model, [20 / (2 * math.pi)], {("m", "x"): 10.0})[0]
    assert abs(X[0]) < 1e-15
    assert X[1].real == pytest.approx(-0.025, rel=1e-12)


def test_before_and_after_equal_a_direct_complex_solve_on_a_two_mass_chain():
    """math: the response at the protected mass before and after, and with the absorber 5 %
    mistuned, equals numpy's solve of (K - w^2 M + i w C) x = f assembled by hand from the
    element values (three masses, the absorber's spring and dashpot on mass 2), to 1e-9. The
    modal mass is 1/phi^2 with phi from scipy.linalg.eigh(K, M) (independent eigensolver)."""
    import scipy.linalg
    model = Model(kind="line",
                  masses=(Mass("a", 1.0, 0.0, 3.0), Mass("b", 2.0, 0.0, 1.5)),
                  anchors=(Anchor("g", 0, 0),),
                  springs=(Spring("s1", "g", "a", 5000.0), Spring("s2", "a", "b", 2000.0)),
                  dampers=(Damper("c1", "g", "a", 4.0),))
    d = size_absorber(model, 1, "b", 0.1)
    Km = np.array([[7000.0, -2000.0], [-2000.0, 2000.0]])
    Mm = np.diag([3.0, 1.5])
    lam, V = scipy.linalg.eigh(Km, Mm)
    assert d.primary_mass == pytest.approx(1 / V[1, 0] ** 2, rel=1e-10)
    assert d.primary_hz == pytest.approx(math.sqrt(lam[0]) / (2 * math.pi), rel=1e-12)

    def response(ka, ca, with_absorber=True):
        out = []
        for f in d.freqs_hz:
            w = 2 * math.pi * f
            K = np.zeros((3, 3)); M = np.diag([3.0, 1.5, d.absorber_mass]); C = np.zeros((3, 3))
            K[:2, :2] = Km
            C[0, 0] = 4.0
            for mat, v in ((K, ka), (C, ca)):
                mat[1, 1] += v; mat[2, 2] += v; mat[1, 2] -= v; mat[2, 1] -= v
            n = 3 if with_absorber else 2
            D = (K - w * w * M + 1j * w * C)[:n, :n]
            out.append(abs(np.linalg.solve(D, np.eye(n)[1])[1]))
        return np.array(out)

    np.testing.assert_allclose(d.before, response(0, 0, False), rtol=1e-9)
    np.testing.assert_allclose(d.after, response(d.stiffness, d.damping), rtol=1e-9)
    np.testing.assert_allclose(d.after_low, response(d.stiffness * 0.95 ** 2, d.damping),
                               rtol=1e-9)
    np.testing.assert_allclose(d.after_high, response(d.stiffness * 1.05 ** 2, d.damping),
                               rtol=1e-9)
    # the optimum beats both mistuned absorbers and the bare structure (Den Hartog)
    assert d.after.max() < min(d.after_low.max(), d.after_high.max()) < d.before.max()
    assert len(d.model.masses) == 3 and d.model.find(d.spring.id).k == d.stiffness


def test_model_damping_kept_in_the_curves():
    """The model's own (modal) damping is in the curves but not in the sizing: the sizing is
    the same as without it (Den Hartog's undamped primary)."""
    bare = size_absorber(primary(), 1, "m", 0.05)
    damped_model = primary().with_changes(damping=Damping("modal", ratio=0.02))
    damped = size_absorber(damped_model, 1, "m", 0.05)
    assert damped.stiffness == bare.stiffness and damped.damping == bare.damping
    assert damped.before.max() < bare.before.max()


@pytest.mark.parametrize("args, words", [
    ((1, "m", 0.0), "mass_ratio must be above 0"),
    ((1, "m", 2.0), "mass_ratio must be above 0"),
    ((3, "m", 0.1), "mode must be a mode number from 1 to 1"),
    ((1, "zz", 0.1), "is not a mass"),
    ((1, "g", 0.1), "is not a mass"),
])
def test_bad_requests_refused(args, words):
    """Common practice: a one-line ModelError naming the argument and what is allowed."""
    with pytest.raises(ModelError, match=words):
        size_absorber(primary(), *args)


def test_zero_frequency_mode_refused():
    """An absorber is tuned to an elastic mode; a rigid-body mode is refused."""
    model = Model(kind="line", masses=(Mass("a", 0.0, 0.0, 1.0), Mass("b", 1.0, 0.0, 1.0)),
                  springs=(Spring("s", "a", "b", 100.0),))
    with pytest.raises(ModelError, match="0 Hz"):
        size_absorber(model, 1, "a", 0.05)
