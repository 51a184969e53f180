"""Eigenvalue sensitivities with massless junctions, unheld junction directions, k_t and repeated
frequencies (solver.metrics.sensitivities), against closed forms (math: springs in series through
a massless junction act as k_a k_b / (k_a + k_b)) and finite differences of re-solved models.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import solver
from solver import Anchor, Mass, Model, Spring
from solver.tuning import with_value


def x_y_mass(kt_s=0.0, kt_t=0.0, ks=500.0, kt=400.0):
    """A 2 kg mass at the origin held along x by sx (800 N/m) and along y by sy (300 N/m); along
    x also through spring s (ks) to a massless junction J at (1, 0), and J through t (kt) to an
    anchor at (2, 0). With k_t = 0 on s and t nothing holds J in y (an unheld direction).
    Closed form (math): w_y^2 = (300 + kt_s kt_t/(kt_s + kt_t))/2 (series through J; 300/2 when
    either k_t is 0), w_x^2 = (800 + ks kt/(ks + kt))/2."""
    return Model(kind="planar",
                 masses=(Mass(id="m", x=0, y=0, mass=2.0), Mass(id="J", x=1, y=0, mass=0.0)),
                 anchors=(Anchor(id="Ax", x=-1, y=0), Anchor(id="Ay", x=0, y=-1), Anchor(id="B", x=2, y=0)),
                 springs=(Spring(id="sx", a="Ax", b="m", k=800.0), Spring(id="sy", a="Ay", b="m", k=300.0),
                          Spring(id="s", a="m", b="J", k=ks, k_t=kt_s),
                          Spring(id="t", a="J", b="B", k=kt, k_t=kt_t)))


def series(a, b):
    return a * b / (a + b) if a + b > 0 else 0.0


def test_unheld_junction_direction_has_zero_kt_sensitivity():
    """Issue 9 item 7: J's y direction is held by nothing, so a small k_t on s (or on t) only
    makes J follow the mass (or stay put): no eigenvalue moves (closed form in x_y_mass: w_y^2 =
    300/2 whatever the k_t of s alone). Reported d lambda/dk_t of s and t: 0 in every mode
    (exactly); forward differences of re-solved models with k_t = 1e-3 and 10: 0 (atol 1e-9)."""
    model = x_y_mass()
    a = solver.analyse(model)
    np.testing.assert_allclose(a.modal.eigenvalues, [150.0, (800 + series(500, 400)) / 2], rtol=1e-12)
    sens = a.sensitivity
    j_s, j_t = sens.spring_ids.index("s"), sens.spring_ids.index("t")
    assert np.all(sens.dlambda_dkt[:, [j_s, j_t]] == 0.0)
    for h in (1e-3, 10.0):
        for eid in ("s", "t"):
            lam = solver.modes(with_value(model, eid, h, "k_t")).eigenvalues
            np.testing.assert_allclose((lam - a.modal.eigenvalues) / h, 0.0, atol=1e-9)


def test_held_junction_direction_keeps_its_sensitivity():
    """The same with t's k_t = 200 holding J in y: w_y^2 = (300 + series(kt_s, 200))/2, so at
    kt_s = 0, d lambda_y/dk_t(s) = (200/(0 + 200))^2 / 2 = 0.5 (math); forward difference agrees
    (rtol 1e-5). Along x: d lambda_x/dk(s) = (kt/(ks + kt))^2 / m = (400/900)^2/2 (math, series)."""
    model = x_y_mass(kt_t=200.0)
    a = solver.analyse(model)
    sens = a.sensitivity
    j_s = sens.spring_ids.index("s")
    assert sens.dlambda_dkt[0, j_s] == pytest.approx(0.5, rel=1e-10)
    h = 1e-3
    fd = (solver.modes(with_value(model, "s", h, "k_t")).eigenvalues[0] - 150.0) / h
    assert fd == pytest.approx(0.5, rel=1e-5)
    assert sens.dlambda_dk[1, j_s] == pytest.approx((400 / 900) ** 2 / 2, rel=1e-10)


def test_junction_mass_sensitivity_forward_difference():
    """d lambda/dm of the junction J (mass 0) is -lambda |phi_J|^2 with J's recovered motion
    (Fox and Kapoor, AIAA J. 6(12), 1968 (mem)); in the x mode J moves ks/(ks + kt) of the mass
    (series, math), so d lambda_x/dm_J = -lambda_x (5/9)^2 phi_x^2 with phi_x^2 = 1/2. Against a
    forward difference with m_J = 1e-7 kg added (the new mode goes to the top): rtol 1e-5."""
    model = x_y_mass(kt_t=200.0, kt_s=100.0)
    a = solver.analyse(model)
    j = a.sensitivity.mass_ids.index("J")
    lam_x = a.modal.eigenvalues[1]
    assert a.sensitivity.dlambda_dm[1, j] == pytest.approx(-lam_x * (5 / 9) ** 2 / 2, rel=1e-10)
    eps = 1e-7
    lam = solver.modes(with_value(model, "J", eps)).eigenvalues[:2]
    np.testing.assert_allclose((lam - a.modal.eigenvalues) / eps, a.sensitivity.dlambda_dm[:, j],
                               rtol=1e-5)


def star(k_in=(800.0, 800.0, 800.0), k_out=1200.0, m=2.0):
    """A mass at the centre joined by three springs at 90, 210 and 330 degrees to junctions J_i,
    each joined on along the same ray to an anchor (k_out): springs in series, k_i = k_in,i k_out /
    (k_in,i + k_out) along each ray (math); the junctions' sideways directions are held by nothing.
    Equal springs: K = 1.5 k_i I, a repeated pair (REFERENCES.md PL-120 generalised)."""
    angles = (90, 210, 330)
    masses = [Mass(id="c", x=0, y=0, mass=m)]
    anchors, springs = [], []
    for i, a in enumerate(angles):
        ux, uy = math.cos(math.radians(a)), math.sin(math.radians(a))
        masses.append(Mass(id=f"J{i}", x=ux, y=uy, mass=0.0))
        anchors.append(Anchor(id=f"A{i}", x=2 * ux, y=2 * uy))
        springs += [Spring(id=f"in{i}", a="c", b=f"J{i}", k=k_in[i]),
                    Spring(id=f"out{i}", a=f"J{i}", b=f"A{i}", k=k_out)]
    return Model(kind="planar", masses=tuple(masses), anchors=tuple(anchors), springs=tuple(springs))


def test_repeated_group_only_the_sum_is_defined():
    """star(): a repeated pair w^2 = 1.5 k_s / m, k_s = 800 * 1200 / 2000 = 480 (math). Within
    the pair single derivatives depend on the basis (marked not valid); their sum is the trace
    d(lambda_1 + lambda_2)/dk = d(sum_i k_s,i)/dk / m = (k_out/(k_in + k_out))^2 / m for each
    inner spring (math), and equals a central difference of lambda_1 + lambda_2 of re-solved
    models (step 1e-4 on log k, rtol 1e-7). The k_t of every spring (0, each next to an unheld
    junction direction) has zero sensitivity."""
    model = star()
    a = solver.analyse(model)
    assert a.modal.repeated == ((1, 2),)
    np.testing.assert_allclose(a.modal.eigenvalues, [1.5 * 480 / 2] * 2, rtol=1e-12)
    sens = a.sensitivity
    assert not sens.valid.any()
    total = sens.group_sum(1, "k")
    np.testing.assert_allclose(total, sens.group_sum(2, "k"), rtol=0, atol=0)
    h = 1e-4
    for j, sid in enumerate(sens.spring_ids):
        k = model.element(sid).k
        up = solver.modes(with_value(model, sid, k * math.exp(h))).eigenvalues[:2].sum()
        dn = solver.modes(with_value(model, sid, k * math.exp(-h))).eigenvalues[:2].sum()
        fd = (up - dn) / (k * (math.exp(h) - math.exp(-h)))
        assert total[j] == pytest.approx(fd, rel=1e-7)
        if sid.startswith("in"):
            assert total[j] == pytest.approx((1200 / 2000) ** 2 / 2, rel=1e-10)
    assert np.all(sens.dlambda_dkt == 0.0)
    # masses: the sum over the pair is -(lambda_1 + lambda_2)/m for the centre mass (math)
    assert sens.group_sum(1, "mass")[0] == pytest.approx(-2 * 1.5 * 480 / 2 / 2.0, rel=1e-10)
