"""Retune search (solver.tuning): exact reachable ranges, crossings, plateaus, verification.
(The property tests on random models are in test_tuning.py, which ``make fuzz`` runs.)

"Mode N" is the N-th natural frequency in ascending order. References: closed forms for uncoupled
and 2-DOF models (math), REFERENCES.md cases named in each test, and mpmath eigenvalues of the
model's own data with the value taken 24 decades away (tests/solver/sw_mp.py: matrices built there
from spring positions and values, condensed and solved at 60 digits), whose distance from the
limit is ~1e-24 relative.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import solver
import sw_mp
from solver import Anchor, Mass, Model, ModelError, Spring
from solver.tuning import (eigenvalues_below, limit_spectrum, reachable_range, retune_result,
                           value_of, with_value)
from sw_builders import chain


TWO_PI = 2 * math.pi
FAR = sw_mp.FAR
stated = sw_mp.stated


def two_oscillators(kA=394784.0, kB=15791.0, mA=1.0, mB=1.0):
    """Issue 9 item 2: two 1 kg masses on separate ground springs: f = sqrt(k/m)/(2 pi) each
    (math): 99.99998 Hz and 19.99977 Hz."""
    return Model(masses=(Mass(id="A", x=0, y=1, mass=mA), Mass(id="B", x=1, y=1, mass=mB)),
                 anchors=(Anchor(id="GA", x=0, y=0), Anchor(id="GB", x=1, y=0)),
                 springs=(Spring(id="sA", a="GA", b="A", k=kA), Spring(id="sB", a="GB", b="B", k=kB)))


def junction_link(k_link=1000.0):
    """A planar junction J at the origin held by three 1000 N/m springs to anchors at 90, 210 and
    330 degrees (stiffness 1.5 k I, REFERENCES.md PL-120); a 1 kg mass at 30 degrees joined to J
    by a link along (cos 30, sin 30) (k only), and held at right angles to it by a 1000 N/m mount.
    Closed form (math): the mass moves along the link with the link in series with 1500 N/m,
    w^2 = 1500 k / (1500 + k), and across it on the mount alone, w^2 = 1000."""
    c, s = math.cos(math.radians(30)), math.sin(math.radians(30))
    anchors = [Anchor(id=f"G{i}", x=math.cos(math.radians(a)), y=math.sin(math.radians(a)))
               for i, a in enumerate((90, 210, 330))]
    anchors.append(Anchor(id="G3", x=c + s, y=s - c))
    springs = [Spring(id=f"s{i}", a=f"G{i}", b="J", k=1000.0) for i in range(3)]
    springs += [Spring(id="link", a="J", b="m", k=k_link), Spring(id="mount", a="m", b="G3", k=1000.0)]
    return Model(kind="planar", masses=(Mass(id="J", x=0, y=0, mass=0.0), Mass(id="m", x=c, y=s, mass=1.0)),
                 anchors=tuple(anchors), springs=tuple(springs))


# --------------------------------------------------------------------------------------------
# closed forms


def test_crossing_issue_case():
    """Issue 9 item 2: retune(model, "sB", 2, 300) reaches 300 Hz at k_sB = m (2 pi 300)^2 =
    3.553058e6 N/m (math: mode 2 is max(f_A, f_B), so the modes swap at k_sB = k_A). rtol 1e-9."""
    model = two_oscillators()
    k = solver.retune(model, "sB", 2, 300.0)
    assert isinstance(k, float)
    assert k == pytest.approx((TWO_PI * 300.0) ** 2, rel=1e-9)
    assert solver.modes(with_value(model, "sB", k)).frequencies_hz[1] == pytest.approx(300.0, rel=1e-9)
    # mass B instead: m_B = k_B / (2 pi f)^2 for mode 2 above f_A, for mode 1 below it (math)
    assert solver.retune(model, "B", 2, 300.0) == pytest.approx(15791.0 / (TWO_PI * 300) ** 2, rel=1e-9)
    assert solver.retune(model, "B", 1, 50.0) == pytest.approx(15791.0 / (TWO_PI * 50) ** 2, rel=1e-9)
    assert solver.retune(model, "sB", 1, 50.0) == pytest.approx((TWO_PI * 50) ** 2, rel=1e-9)


def test_crossing_ranges_are_exact():
    """Two uncoupled oscillators (math): as k_sB runs over (0, inf), mode 1 = min(f_A, f_B) spans
    (0, f_A) and mode 2 = max(f_A, f_B) spans (f_A, inf), f_A = sqrt(394784)/(2 pi) = 99.99998 Hz.
    Refusals state those limits (7 digits); "does not depend" is never said (both modes move)."""
    model = two_oscillators()
    fA = math.sqrt(394784.0) / TWO_PI
    assert reachable_range(model, "sB", 1) == pytest.approx((0.0, fA), rel=1e-12, abs=1e-12)
    lo, hi = reachable_range(model, "sB", 2)
    assert lo == pytest.approx(fA, rel=1e-12) and hi == math.inf
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "sB", 1, 150.0)
    assert stated(str(err.value), fA) and stated(str(err.value), 0.0)
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "sB", 2, 50.0)
    assert stated(str(err.value), fA) and "without bound" in str(err.value)
    # the mass of A: mode 2 = max(f_A, f_B) >= f_B = 19.99977 Hz as m_A -> inf (math)
    fB = math.sqrt(15791.0) / TWO_PI
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "A", 2, 10.0)
    assert stated(str(err.value), fB)


def test_does_not_depend_only_when_limits_agree():
    """TD-3S mode 1 [1, 1] never stretches the middle spring (REFERENCES.md 2, Rao ch. 5 (mem)):
    both limits are sqrt(k/m)/(2 pi) = 3.183099 Hz, so "does not depend"; mode 2 of the crossing
    model is flat (100 Hz) over k_sB < k_A yet depends on it (math)."""
    td3s = chain([2.0, 2.0], [800.0, 800.0, 800.0], left=True, right=True)
    with pytest.raises(ModelError, match="does not depend") as err:
        solver.retune(td3s, "s2", 1, 5.0)
    assert stated(str(err.value), 20 / TWO_PI)
    lo, hi = reachable_range(td3s, "s2", 1)
    assert lo == pytest.approx(20 / TWO_PI, rel=1e-12) and hi == pytest.approx(lo, rel=1e-12)
    lo, hi = reachable_range(two_oscillators(), "sB", 2)
    assert hi > lo


def test_two_dof_chain_limits_closed_form():
    """m1 = 1 on k1 = 1000 to ground, m2 = 3 on s2 to m1 (math): s2 -> 0 frees m2 (0 Hz) and
    leaves sqrt(k1/m1); s2 -> inf makes one body, sqrt(k1/(m1 + m2)), and the other mode rises
    without bound. Mass m2 -> inf holds m2 still: 0 and sqrt((k1 + k2)/m1); m2 -> 0: m2's mode
    rises without bound and s2, ending on a massless free node, carries no force, leaving
    sqrt(k1/m1) (math). k2 = 500. rtol 1e-11."""
    model = chain([1.0, 3.0], [1000.0, 500.0], left=True)
    def f(lam):
        return math.sqrt(lam) / TWO_PI

    np.testing.assert_allclose(limit_spectrum(model, "s2", "k", "zero"), [0.0, 1000.0], rtol=1e-11)
    np.testing.assert_allclose(limit_spectrum(model, "s2", "k", "infinity"), [250.0, np.inf], rtol=1e-11)
    np.testing.assert_allclose(limit_spectrum(model, "m2", "mass", "infinity"), [0.0, 1500.0], rtol=1e-11)
    np.testing.assert_allclose(limit_spectrum(model, "m2", "mass", "zero"),
                               [1000.0, np.inf], rtol=1e-11)
    assert reachable_range(model, "s2", 1) == pytest.approx((0.0, f(250.0)), rel=1e-11)
    assert reachable_range(model, "m2", 2) == pytest.approx((f(1500.0), math.inf), rel=1e-11)


def test_planar_junction_link_crossing_closed_form():
    """junction_link(): along the link w^2 = 1500 k/(1500 + k), across it w^2 = 1000 (math; PL-120
    for the junction's springs). From k = 1000 N/m, mode 2 sits on the 1000 plateau (5.032921 Hz)
    and must cross it: for 6 Hz, k = 1500 w^2/(1500 - w^2). Limits: mode 2 in (5.032921,
    6.164044) Hz, mode 1 in (0, 5.032921) Hz; beyond them a refusal that states them. rtol 1e-9."""
    model = junction_link()
    w2 = (TWO_PI * 6.0) ** 2
    k = solver.retune(model, "link", 2, 6.0)
    assert k == pytest.approx(1500 * w2 / (1500 - w2), rel=1e-9)
    w2 = (TWO_PI * 3.0) ** 2
    assert solver.retune(model, "link", 1, 3.0) == pytest.approx(1500 * w2 / (1500 - w2), rel=1e-9)
    up, across = math.sqrt(1500) / TWO_PI, math.sqrt(1000) / TWO_PI
    assert reachable_range(model, "link", 2) == pytest.approx((across, up), rel=1e-11)
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "link", 2, 7.0)   # issue 9 item 3: above the true upper limit
    assert stated(str(err.value), up) and stated(str(err.value), across)
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "link", 1, 5.04)
    assert stated(str(err.value), across)


def test_zero_mode_retuned_by_transverse_stiffness():
    """PL-1 (REFERENCES.md 7): a mass on one spring at 30 degrees has a mechanism (0 Hz) with
    k_t = 0; k_t gives it w^2 = k_t/m (math), up to the axial sqrt(k/m) = 3.183099 Hz (m = 2,
    k = 800). Retuning k_t puts mode 1 anywhere below that; k itself cannot (zero for every k)."""
    c, s = math.cos(math.radians(30)), math.sin(math.radians(30))
    model = Model(kind="planar", masses=(Mass(id="m", x=c, y=s, mass=2.0),),
                  anchors=(Anchor(id="A", x=0, y=0),), springs=(Spring(id="s", a="A", b="m", k=800.0),))
    assert solver.modes(model).is_zero[0]
    kt = solver.retune(model, "s", 1, 2.0, field="k_t")
    assert kt == pytest.approx(2.0 * (TWO_PI * 2.0) ** 2, rel=1e-9)
    with pytest.raises(ModelError, match="zero-frequency"):
        solver.retune(model, "s", 1, 2.0)
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "s", 1, 4.0, field="k_t")
    assert stated(str(err.value), 20 / TWO_PI)


def test_ts2_inertia_limit_stated():
    """TS-2 (REFERENCES.md 7, Rao ch. 5 (mem)): J1 -> inf holds disc 1, leaving sqrt(kt/J2) =
    44.72136 rad/s = 7.117625 Hz; J1 -> 0 sends mode 2 to infinity. A target below: refused with
    that limit; above: J1 = 1/(w^2/kt - 1/J2) (math). rtol 1e-9."""
    model = Model(kind="torsion", masses=(Mass(id="d1", x=0, y=0, mass=0.5), Mass(id="d2", x=1, y=0, mass=1.5)),
                  springs=(Spring(id="shaft", a="d1", b="d2", k=3000.0),))
    lim = math.sqrt(3000 / 1.5) / TWO_PI
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "d1", 2, 7.0)
    assert stated(str(err.value), lim) and "without bound" in str(err.value)
    w2 = (TWO_PI * 30.0) ** 2
    assert solver.retune(model, "d1", 2, 30.0) == pytest.approx(1 / (w2 / 3000 - 1 / 1.5), rel=1e-9)


# --------------------------------------------------------------------------------------------
# limits against mpmath


def test_limits_against_mpmath_fixed_models():
    """Every element of three hand-made models (a planar junction with a link and k_t springs, a
    line chain with a junction, a free torsion shaft) against the mpmath reference (sw_mp)."""
    planar = junction_link().with_changes(put=[Spring(id="s0", a="G0", b="J", k=1000.0, k_t=300.0),
                                               Spring(id="mount", a="m", b="G3", k=1000.0, k_t=50.0)])
    line = Model(masses=(Mass(id="m1", x=1, y=0, mass=2.0), Mass(id="j", x=2, y=0, mass=0.0),
                         Mass(id="m2", x=3, y=0, mass=0.5)), anchors=(Anchor(id="A", x=0, y=0),),
                 springs=(Spring(id="a", a="A", b="m1", k=800.0), Spring(id="b", a="m1", b="j", k=300.0),
                          Spring(id="c", a="j", b="m2", k=2000.0)))
    torsion = Model(kind="torsion", masses=tuple(Mass(id=f"d{i}", x=i, y=0, mass=J) for i, J in
                                                 enumerate((1.0, 2.0, 1.0))),
                    springs=(Spring(id="k1", a="d0", b="d1", k=1000.0), Spring(id="k2", a="d1", b="d2", k=1000.0)))
    for model in (planar, line, torsion):
        for s in model.springs:
            sw_mp.check_limits(model, s.id, "k")
            if model.kind == "planar" and s.k_t > 0:
                sw_mp.check_limits(model, s.id, "k_t")
        for m in model.masses:
            if m.mass > 0:
                sw_mp.check_limits(model, m.id, "mass")


# --------------------------------------------------------------------------------------------
# verification


def test_inertia_count_closed_form():
    """TD-3S (REFERENCES.md 2): w = 20 and 34.64102 rad/s; the count of eigenvalues below
    w^2 = 300, 500, 1500 is 0, 1, 2 (Sylvester's law of inertia, math), and the junction chain's
    count equals the mpmath eigenvalues' (sw_mp)."""
    td3s = chain([2.0, 2.0], [800.0, 800.0, 800.0], left=True, right=True)
    assert [eigenvalues_below(td3s, w2) for w2 in (300.0, 500.0, 1500.0)] == [0, 1, 2]
    model = junction_link(1e9)
    ref = [float(x) for x in sw_mp.eigenvalues(model)]
    for w2 in (500.0, 999.0, 1001.0, 1499.0, 1501.0):
        assert eigenvalues_below(model, w2) == sum(r < w2 for r in ref)


class _Shifted:
    """A ModalResult stand-in whose frequencies are scaled (everything else delegated)."""

    def __init__(self, res, factor):
        self._res, self._factor = res, factor

    def __getattr__(self, name):
        return getattr(self._res, name)

    @property
    def frequencies_hz(self):
        return self._res.frequencies_hz * self._factor


def test_value_not_on_target_is_refused_with_what_was_reached(monkeypatch):
    """A solver whose frequency jumps across the target (as round-off at extreme values can make
    it): f reported 1e-6 low below the true root k = m (2 pi f)^2 and 1e-6 high above it (math).
    The search ends at the jump; re-solved, the mode is 1e-6 off, beyond VERIFY_RTOL: ModelError
    stating the frequency reached, no value returned."""
    model = Model(masses=(Mass(id="m", x=1, y=0, mass=2.0),), anchors=(Anchor(id="A", x=0, y=0),),
                  springs=(Spring(id="s", a="A", b="m", k=800.0),))
    root = 2.0 * (TWO_PI * 10.0) ** 2
    real = solver.tuning.modes

    def jumpy(m, *args, **kwargs):
        res = real(m, *args, **kwargs)
        return _Shifted(res, 1 - 1e-6 if m.springs[0].k < root else 1 + 1e-6)

    monkeypatch.setattr(solver.tuning, "modes", jumpy)
    with pytest.raises(ModelError, match="re-solved") as err:
        solver.retune(model, "s", 1, 10.0)
    assert stated(str(err.value), 10.0 * (1 + 1e-6), rtol=1e-9) or stated(
        str(err.value), 10.0 * (1 - 1e-6), rtol=1e-9)


class _Unsure(_Shifted):
    """A shifted result that also says its frequencies are only good to 1e-6."""

    @property
    def frequency_rtol(self):
        return np.full(self._res.n_modes, 1e-6)


def test_biased_solver_is_caught_by_the_count(monkeypatch):
    """A solver that reports every frequency 1e-5 too high, consistently (search and re-solve
    agree, so re-solving alone cannot see it): retune of TD-3S mode 2 (REFERENCES.md 2) to 6 Hz by
    the middle spring lands where the true mode 2 is 1e-5 low. The inertia count (independent
    of the eigen-solver) finds 2 eigenvalues below 6 (1 - 1e-6) Hz. Where the solver claims
    its digits (complete dense solve, error estimate far inside the count's window) two
    methods contradict each other: the value is kept with a warning stating the count and the
    mode number is not confirmed; where the solver itself is unsure (error estimate 1e-6),
    the value is refused stating the count. Unbiased, the same retune returns
    k2 = (m w^2 - k)/2 (math), confirmed."""
    td3s = chain([2.0, 2.0], [800.0, 800.0, 800.0], left=True, right=True)
    exact = (2.0 * (TWO_PI * 6) ** 2 - 800) / 2
    plain = retune_result(td3s, "s2", 2, 6.0)
    assert plain.value == pytest.approx(exact, rel=1e-9)
    assert plain.count_checked and plain.warnings == ()
    real = solver.tuning.modes
    monkeypatch.setattr(solver.tuning, "modes", lambda m, *a, **k: _Shifted(real(m, *a, **k), 1 + 1e-5))
    biased = retune_result(td3s, "s2", 2, 6.0)
    assert not biased.count_checked
    assert len(biased.warnings) == 1 and "finds 2 below" in biased.warnings[0]
    assert "not confirmed" in biased.warnings[0]
    monkeypatch.setattr(solver.tuning, "modes", lambda m, *a, **k: _Unsure(real(m, *a, **k), 1 + 1e-5))
    with pytest.raises(ModelError, match="count of the eigenvalues") as err:
        solver.retune(td3s, "s2", 2, 6.0)
    assert "finds 2 below" in str(err.value)


def test_result_details():
    """retune_result: value, re-solved frequency on target (VERIFY_RTOL), exact range, inertia
    count confirmed; retune returns the same value as a float (closed form: issue 9 item 2)."""
    r = retune_result(two_oscillators(), "sB", 2, 300.0)
    assert r.value == solver.retune(two_oscillators(), "sB", 2, 300.0)
    assert abs(r.frequency_hz / 300.0 - 1) <= solver.tuning.VERIFY_RTOL
    assert r.range_exact and r.count_checked and r.range_hz[1] == math.inf
    assert r.range_hz[0] == pytest.approx(math.sqrt(394784.0) / TWO_PI, rel=1e-12)
