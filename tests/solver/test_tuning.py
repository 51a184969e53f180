"""Retune, sweep and rank (solver.tuning) against closed forms and identities.

Defaults as in REFERENCES.md: m = 2 kg, k = 800 N/m, w0 = 20 rad/s.
"""

from __future__ import annotations

import math
import os
import re

import mpmath
import numpy as np
import pytest
import scipy.linalg
from hypothesis import HealthCheck, Phase, assume, given, settings
from hypothesis import strategies as st

import solver
import sw_mp
from solver import Anchor, Mass, Model, ModelError, Spring
from solver.tuning import value_of, with_value
from sw_builders import chain

TWO_PI = 2 * math.pi
m0, k0 = 2.0, 800.0


def single(m=m0, k=k0):
    return Model(masses=(Mass(id="m", x=1, y=0, mass=m),), anchors=(Anchor(id="A", x=0, y=0),),
                 springs=(Spring(id="s", a="A", b="m", k=k),))


def between(m=m0, k1=k0, k2=k0):
    """A mass between spring k1 (to anchor A) and spring k2 (to anchor B)."""
    return Model(masses=(Mass(id="m", x=1, y=0, mass=m),),
                 anchors=(Anchor(id="A", x=0, y=0), Anchor(id="B", x=2, y=0)),
                 springs=(Spring(id="k1", a="A", b="m", k=k1), Spring(id="k2", a="m", b="B", k=k2)))


def ts2(kt=3000.0, J1=0.5, J2=1.5):
    """TS-2: two discs on a shaft, no anchor (REFERENCES.md 7)."""
    return Model(kind="torsion", masses=(Mass(id="d1", x=0, y=0, mass=J1),
                                         Mass(id="d2", x=1, y=0, mass=J2)),
                 springs=(Spring(id="shaft", a="d1", b="d2", k=kt),))


def td3s(m=m0, k=k0, k2=None):
    """TD-3S: two masses, three springs, walls both sides (REFERENCES.md 2)."""
    return chain([m, m], [k, k if k2 is None else k2, k], left=True, right=True)


def numbers_in(message):
    return [float(x) for x in re.findall(r"[-+]?\d+(?:\.\d+)?(?:e[-+]?\d+)?", message)]


# --------------------------------------------------------------------------------------------
# retune against closed forms


@pytest.mark.parametrize("f", [0.5, 3.0, 3.183098861837907, 17.0, 250.0])
def test_single_mass_spring_and_mass(f):
    """Single DOF: k = m (2 pi f)^2 and m = k / (2 pi f)^2 (math). rtol 1e-9."""
    model = single()
    k = solver.retune(model, "s", 1, f)
    assert k == pytest.approx(m0 * (TWO_PI * f) ** 2, rel=1e-9)
    m = solver.retune(model, "m", 1, f)
    assert m == pytest.approx(k0 / (TWO_PI * f) ** 2, rel=1e-9)
    # field names given explicitly mean the same
    assert solver.retune(model, "s", 1, f, field="k") == pytest.approx(k, rel=1e-12)
    assert solver.retune(model, "m", 1, f, field="mass") == pytest.approx(m, rel=1e-12)
    assert solver.modes(solver.with_value(model, "s", k)).frequencies_hz[0] == pytest.approx(
        f, rel=1e-9)


@pytest.mark.parametrize("f", [5.0, 14.23525, 40.0])
def test_ts2_torsion_shaft_and_disc(f):
    """TS-2 (Rao, ch. 5 (mem)): w^2 = kt (J1 + J2)/(J1 J2), so kt = w^2 J1 J2/(J1 + J2) and
    J1 = 1/(w^2/kt - 1/J2) (math); mode 1 is the zero mode. rtol 1e-9."""
    J1, J2, kt = 0.5, 1.5, 3000.0
    model = ts2(kt, J1, J2)
    w2 = (TWO_PI * f) ** 2
    assert solver.retune(model, "shaft", 2, f) == pytest.approx(w2 * J1 * J2 / (J1 + J2), rel=1e-9)
    if w2 > kt / J2:  # reachable by the inertia of disc 1 (J1 -> 0 gives w -> inf)
        J = solver.retune(model, "d1", 2, f, field="inertia")
        assert J == pytest.approx(1.0 / (w2 / kt - 1.0 / J2), rel=1e-9)
    assert solver.tuning.unit_of(model, "shaft") == "N m/rad"
    assert solver.tuning.unit_of(model, "d1") == "kg m^2"


def test_ts2_reference_frequency_returns_present_value():
    """TS-2 at its own 14.23525 Hz (REFERENCES.md 7, Rao ch. 5 (mem)): kt = 3000 N m/rad, 1e-6."""
    assert solver.retune(ts2(), "shaft", 2, 14.23525) == pytest.approx(3000.0, rel=1e-6)


def test_zero_frequency_mode_refused():
    """TS-2 mode 1 is the rigid rotation (w = 0, REFERENCES.md 7): no value gives it a frequency."""
    with pytest.raises(ModelError, match="zero-frequency"):
        solver.retune(ts2(), "shaft", 1, 5.0)
    with pytest.raises(ModelError, match="zero-frequency"):
        solver.retune(ts2(), "d1", 1, 5.0)


@pytest.mark.parametrize("f", [3.5, 5.5, 8.0, 30.0])
def test_td3s_middle_spring_mode2(f):
    """TD-3S (Rao, ch. 5 (mem)): mode 2 w^2 = (k + 2 k2)/m, so k2 = (m w^2 - k)/2 (math). 1e-9."""
    k2 = solver.retune(td3s(), "s2", 2, f)
    assert k2 == pytest.approx((m0 * (TWO_PI * f) ** 2 - k0) / 2, rel=1e-9)


def test_td3s_mode1_does_not_depend_on_middle_spring():
    """TD-3S mode 1 [1, 1] does not stretch k2 (Rao, ch. 5 (mem)): the error says so and gives
    sqrt(k/m)/(2 pi) = 3.183099 Hz."""
    with pytest.raises(ModelError, match="does not depend") as err:
        solver.retune(td3s(), "s2", 1, 5.0)
    msg = str(err.value)
    assert '"s2"' in msg and "Hz" in msg
    assert any(abs(v - 20 / TWO_PI) < 1e-4 for v in numbers_in(msg)), msg


def test_unreachable_below_lower_limit():
    """A mass between k1 and k2 (to ground): f = sqrt((k1 + k2)/m)/(2 pi) in (sqrt(k1/m)/(2 pi), inf)
    as k2 runs over (0, inf) (math). A target below the limit: ModelError with the limit
    (3.183099 Hz, to 1e-5) and the present frequency (4.501582 Hz)."""
    model = between()
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "k2", 1, 2.0)
    nums = numbers_in(str(err.value))
    lim, now = math.sqrt(k0 / m0) / TWO_PI, math.sqrt(2 * k0 / m0) / TWO_PI
    assert any(abs(v - lim) <= 1e-5 * lim for v in nums), str(err.value)
    assert any(abs(v - now) <= 1e-5 * now for v in nums), str(err.value)
    # just above the limit is reachable: k2 = m w^2 - k1
    f = lim * 1.01
    assert solver.retune(model, "k2", 1, f) == pytest.approx(m0 * (TWO_PI * f) ** 2 - k0, rel=1e-8)
    # high targets are reachable (within the ten decades retune searches)
    assert solver.retune(model, "k2", 1, 100.0) == pytest.approx(
        m0 * (TWO_PI * 100.0) ** 2 - k0, rel=1e-9)


def test_unreachable_above_upper_limit_and_second_mode():
    """m1 = 1 on k1 = 1000 to ground, m2 = 3 on k2 to m1 (math): as k2 -> inf mode 1 -> the rigid
    pair sqrt(k1/(m1 + m2))/(2 pi) = 2.516461 Hz from below; as k2 -> 0 mode 2 -> sqrt(k1/m1)/(2 pi)
    = 5.032921 Hz from above. Targets beyond: ModelError naming each limit (1e-5)."""
    model = chain([1.0, 3.0], [1000.0, 500.0], left=True)
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "s2", 1, 10.0)
    up = math.sqrt(1000.0 / 4.0) / TWO_PI
    assert any(abs(v - up) <= 1e-5 * up for v in numbers_in(str(err.value))), str(err.value)
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "s2", 2, 1.0)
    lo = math.sqrt(1000.0) / TWO_PI
    assert any(abs(v - lo) <= 1e-5 * lo for v in numbers_in(str(err.value))), str(err.value)


def _two_dof_freqs(m1, m2, k1, k2):
    K = np.array([[k1 + k2, -k2], [-k2, k2]])
    return np.sqrt(scipy.linalg.eigh(K, np.diag([m1, m2]), eigvals_only=True)) / TWO_PI


def test_retune_two_dof_against_eigh():
    """Retuned k2 of the 2-DOF chain, checked by scipy.linalg.eigh(K, M) of the hand-built
    matrices (REFERENCES.md section 10): the mode lands on the target to 1e-9."""
    model = chain([1.0, 3.0], [1000.0, 500.0], left=True)
    for mode, f in ((1, 1.0), (1, 2.5), (2, 6.0), (2, 40.0)):
        k2 = solver.retune(model, "s2", mode, f)
        assert _two_dof_freqs(1.0, 3.0, 1000.0, k2)[mode - 1] == pytest.approx(f, rel=1e-9)
    # m2 -> inf holds m2 still: mode 2 -> sqrt((k1 + k2)/m1)/(2 pi) = 6.164 Hz from above (math)
    for mode, f in ((1, 1.0), (1, 2.5), (2, 7.0), (2, 40.0)):
        m2 = solver.retune(model, "m2", mode, f)
        assert _two_dof_freqs(1.0, m2, 1000.0, 500.0)[mode - 1] == pytest.approx(f, rel=1e-9)
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "m2", 2, 6.0)
    lim = math.sqrt(1500.0) / TWO_PI
    assert any(abs(v - lim) <= 1e-5 * lim for v in numbers_in(str(err.value))), str(err.value)


def test_planar_transverse_stiffness():
    """A planar mass on one spring along x (k = 800) with transverse k_t: modes sqrt(k_t/m) (y) and
    sqrt(k/m) (x) (math, REFERENCES.md PL-1 generalised). Mode 1 = min of the two, so retuning k_t
    reaches (0, sqrt(k/m)/(2 pi) = 3.183099 Hz); beyond: ModelError with that limit."""
    model = Model(kind="planar", masses=(Mass(id="m", x=1, y=0, mass=m0),),
                  anchors=(Anchor(id="A", x=0, y=0),),
                  springs=(Spring(id="s", a="A", b="m", k=k0, k_t=200.0),))
    kt = solver.retune(model, "s", 1, 2.0, field="k_t")
    assert kt == pytest.approx(m0 * (TWO_PI * 2.0) ** 2, rel=1e-9)
    k = solver.retune(model, "s", 2, 5.0)  # mode 2 is the axial one
    assert k == pytest.approx(m0 * (TWO_PI * 5.0) ** 2, rel=1e-9)
    with pytest.raises(ModelError, match="cannot reach") as err:
        solver.retune(model, "s", 1, 4.0, field="k_t")
    lim = 20 / TWO_PI
    assert any(abs(v - lim) <= 1e-5 * lim for v in numbers_in(str(err.value))), str(err.value)


@pytest.mark.parametrize("args, match", [
    (("nope", 1, 3.0), "nope"),
    (("A", 1, 3.0), "not a spring or a mass"),
    (("s", 1, 3.0, "c"), "field"),
    (("s", 1, 3.0, "k_t"), "planar"),
    (("m", 1, 3.0, "k"), "field"),
    (("s", 0, 3.0), "mode"),
    (("s", 2, 3.0), "mode 2"),
    (("s", 1.5, 3.0), "mode"),
    (("s", True, 3.0), "mode"),
    (("s", 1, 0.0), "positive"),
    (("s", 1, -3.0), "positive"),
    (("s", 1, float("nan")), "positive"),
    (("s", 1, float("inf")), "positive"),
])
def test_bad_requests_refused(args, match):
    """Bad ids, fields, modes and targets raise ModelError naming the problem (DESIGN.md 3)."""
    with pytest.raises(ModelError, match=match):
        solver.retune(single(), *args)


def test_bad_with_value_and_sweep_refused():
    """with_value and sweep share the checks; sweep values must be positive and finite
    (DESIGN.md 3: errors a user can act on)."""
    with pytest.raises(ModelError):
        solver.with_value(single(), "A", 5.0)
    with pytest.raises(ModelError):
        solver.with_value(single(), "s", -5.0)  # the Model refuses a negative stiffness
    for bad in ([100.0, -1.0], [0.0, 1.0], [float("nan")], [[1.0, 2.0]]):
        with pytest.raises(ModelError):
            solver.sweep(single(), "s", bad)


# --------------------------------------------------------------------------------------------
# sweep


def test_sweep_td3s_closed_form():
    """Sweep of k2 in TD-3S: f1 = sqrt(k/m)/(2 pi), f2 = sqrt((k + 2 k2)/m)/(2 pi) (math); the
    modes swap order below k2 = 0 only, so over k2 > 0 the columns follow the formulas. 1e-10."""
    values = np.geomspace(1.0, 1e5, 13)
    res = solver.sweep(td3s(), "s2", values)
    assert res.frequencies_hz.shape == (13, 2) and res.field == "k"
    np.testing.assert_allclose(res.values, values)
    np.testing.assert_allclose(res.frequencies_hz[:, 0], math.sqrt(k0 / m0) / TWO_PI, rtol=1e-10)
    np.testing.assert_allclose(res.frequencies_hz[:, 1], np.sqrt((k0 + 2 * values) / m0) / TWO_PI,
                               rtol=1e-10)


def test_sweep_against_direct_eigh():
    """Sweep of one spring and of one mass of a random 4-mass chain against scipy.linalg.eigh(K, M)
    of hand-built matrices at the same values (REFERENCES.md section 10). rtol 1e-10."""
    rng = np.random.default_rng(7)
    masses = rng.uniform(0.5, 3.0, 4)
    ks = rng.uniform(200.0, 3000.0, 5)
    model = chain(masses, ks, left=True, right=True)

    def direct(ms, kk):
        K = np.zeros((4, 4))
        for i in range(5):  # spring i joins node i-1 and i (node -1 = A, node 4 = B)
            a, b = i - 1, i
            if a >= 0:
                K[a, a] += kk[i]
            if b <= 3:
                K[b, b] += kk[i]
            if a >= 0 and b <= 3:
                K[a, b] -= kk[i]
                K[b, a] -= kk[i]
        return np.sqrt(scipy.linalg.eigh(K, np.diag(ms), eigvals_only=True)) / TWO_PI

    kvals = np.array([50.0, 400.0, 2500.0, 2e4])
    res = solver.sweep(model, "s3", kvals)
    for row, v in zip(res.frequencies_hz, kvals):
        kk = ks.copy()
        kk[2] = v
        np.testing.assert_allclose(row, direct(masses, kk), rtol=1e-10)
    mvals = np.array([0.1, 1.0, 7.5])
    res = solver.sweep(model, "m2", mvals)
    assert res.field == "mass"
    for row, v in zip(res.frequencies_hz, mvals):
        ms = masses.copy()
        ms[1] = v
        np.testing.assert_allclose(row, direct(ms, ks), rtol=1e-10)
    # count limits the modes reported
    assert solver.sweep(model, "s3", kvals, count=2).frequencies_hz.shape == (4, 2)


# --------------------------------------------------------------------------------------------
# monotonicity (Rayleigh's theorem; Courant-Fischer, math)


def _random_model(seed, kind):
    rng = np.random.default_rng(seed)
    n = int(rng.integers(1, 5))
    masses = [Mass(id=f"m{i}", x=float(rng.uniform(-2, 2)), y=float(rng.uniform(-2, 2)),
                   mass=float(rng.uniform(0.2, 5.0))) for i in range(n)]
    anchors = [Anchor(id=f"A{i}", x=float(rng.uniform(-3, 3)), y=float(rng.uniform(-3, 3)))
               for i in range(2)]
    nodes = [m.id for m in masses] + [a.id for a in anchors]
    springs = []
    # every mass tied to something, plus a few random extra springs
    pairs = [(masses[i].id, nodes[int(rng.integers(0, len(nodes)))]) for i in range(n)]
    for _ in range(int(rng.integers(0, 4))):
        a, b = rng.choice(len(nodes), 2, replace=False)
        pairs.append((nodes[a], nodes[b]))
    for j, (a, b) in enumerate(pairs):
        if a == b or (a.startswith("A") and b.startswith("A")):
            continue
        kt = float(rng.uniform(0, 2000.0)) if (kind == "planar" and rng.random() < 0.6) else 0.0
        springs.append(Spring(id=f"s{j}", a=a, b=b, k=float(rng.uniform(50.0, 5000.0)), k_t=kt))
    return Model(kind=kind, masses=tuple(masses), anchors=tuple(anchors), springs=tuple(springs))


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 2 ** 32 - 1), kind=st.sampled_from(["line", "planar", "torsion"]),
       factor=st.floats(1.01, 20.0))
def test_monotone_in_every_stiffness_and_mass(seed, kind, factor):
    """Raising any k (or k_t in planar) never lowers any mode's frequency; raising any mass never
    raises one (Rayleigh's theorem of constraint / stiffness monotonicity; Courant-Fischer, math).
    Tolerance 1e-9 of the largest eigenvalue (round-off of the eigen-solver)."""
    model = _random_model(seed, kind)
    lam0 = solver.modes(model).eigenvalues
    tol = 1e-9 * max(lam0.max(), 1.0)
    for s in model.springs:
        fields = ["k"] + (["k_t"] if kind == "planar" and s.k_t > 0 else [])
        for f in fields:
            lam = solver.modes(solver.with_value(model, s.id, getattr(s, f) * factor, f)).eigenvalues
            assert np.all(lam >= lam0 - tol), (s.id, f, lam0, lam)
    for m in model.masses:
        lam = solver.modes(solver.with_value(model, m.id, m.mass * factor)).eigenvalues
        assert np.all(lam <= lam0 + tol), (m.id, lam0, lam)


# --------------------------------------------------------------------------------------------
# rank_elements


def test_rank_td3s_closed_form():
    """TD-3S strain energy in mode 2: 16.67 / 66.67 / 16.67 % and d lambda/dk = 0.25, 1, 0.25
    (REFERENCES.md 8; Fox and Kapoor, AIAA J. 6(12), 1968 (mem)): (k/f)(df/dk) = k dlambda/dk /
    (2 lambda) = 1/12, 1/3, 1/12; mode 1: 1/4, 0, 1/4; every mass -1/4 in both modes (math). 1e-10."""
    for mode, springs in ((1, {"s1": 0.25, "s2": 0.0, "s3": 0.25}),
                          (2, {"s1": 1 / 12, "s2": 1 / 3, "s3": 1 / 12})):
        ranked = solver.rank_elements(td3s(), mode)
        got = {(eid, f): s for eid, f, s in ranked}
        want = {(k, "k"): v for k, v in springs.items()} | {("m1", "mass"): -0.25,
                                                            ("m2", "mass"): -0.25}
        assert set(got) == set(want)
        for key, v in want.items():
            assert got[key] == pytest.approx(v, abs=1e-10)
        mags = [abs(s) for _, _, s in ranked]
        assert mags == sorted(mags, reverse=True)
    assert solver.rank_elements(td3s(), 2)[0][:2] == ("s2", "k")
    with pytest.raises(ModelError):
        solver.rank_elements(td3s(), 3)
    with pytest.raises(ModelError):
        solver.rank_elements(td3s(), 0)


@pytest.mark.parametrize("kind", ["line", "planar", "torsion"])
def test_rank_equals_half_energy_fractions(kind):
    """(k/f)(df/dk) = k (phi_a - phi_b)^2 / (2 lambda) = half the spring's strain-energy fraction and
    (m/f)(df/dm) = -half the mass's kinetic-energy fraction, for mass-normalised modes; the spring
    terms sum to 1/2 and the mass terms to -1/2 (Euler's theorem on homogeneous functions) (math).
    Distinct elastic modes only. atol 1e-10."""
    for seed in range(12):
        model = _random_model(1000 + seed, kind)
        res = solver.modes(model)
        energy = solver.energy_fractions(res)
        for mode in range(1, res.n_modes + 1):
            if res.is_zero[mode - 1] or res.repeated_group(mode):
                continue
            ranked = solver.rank_elements(model, mode)
            got = {(eid, f): s for eid, f, s in ranked}
            strain = energy.strain_energy_fraction(mode)
            kinetic = energy.kinetic_energy_fraction(mode)
            for s in model.springs:
                half = 0.5 * strain[s.id]
                if kind == "planar":
                    # the fraction covers k and k_t together
                    total = got[(s.id, "k")] + got.get((s.id, "k_t"), 0.0)
                    assert total == pytest.approx(half, abs=1e-10)
                else:
                    assert got[(s.id, "k")] == pytest.approx(half, abs=1e-10)
            for m in model.masses:
                assert got[(m.id, "mass")] == pytest.approx(-0.5 * kinetic[m.id], abs=1e-10)
            assert sum(v for (_, f), v in got.items() if f != "mass") == pytest.approx(0.5, abs=1e-9)
            assert sum(v for (_, f), v in got.items() if f == "mass") == pytest.approx(-0.5, abs=1e-9)


@pytest.mark.parametrize("kind", ["line", "planar", "torsion"])
def test_rank_against_finite_differences(kind):
    """Normalised sensitivities against central differences of log f in log p (math), step
    h = 1e-4 (truncation ~h^2): atol 1e-6."""
    h = 1e-4
    checked = 0
    for seed in range(6):
        model = _random_model(2000 + seed, kind)
        res = solver.modes(model)
        lam = res.eigenvalues
        for mode in range(1, res.n_modes + 1):
            i = mode - 1
            if res.is_zero[i] or res.repeated_group(mode):
                continue
            # keep to well separated modes so the difference does not cross a neighbour
            gaps = np.abs(np.delete(lam, i) - lam[i]) / lam[i]
            if gaps.size and gaps.min() < 1e-3:
                continue
            for eid, field, s in solver.rank_elements(model, mode):
                v = solver.tuning.value_of(model, eid, field)
                up = solver.modes(solver.with_value(model, eid, v * (1 + h), field)).omegas[i]
                dn = solver.modes(solver.with_value(model, eid, v * (1 - h), field)).omegas[i]
                fd = (math.log(up) - math.log(dn)) / (math.log1p(h) - math.log1p(-h))
                assert s == pytest.approx(fd, abs=1e-6), (seed, mode, eid, field)
                checked += 1
    assert checked > 10


# --------------------------------------------------------------------------------------------
# retune and limits on random models (hypothesis; mpmath references in sw_mp)

#: examples per property test: 20 in make test, SW_EXAMPLES / 2 in make fuzz
EXAMPLES = max(1, int(os.environ.get("SW_EXAMPLES", "40")) // 2)
PROPERTY = settings(max_examples=EXAMPLES, deadline=None,
                    phases=[Phase.explicit, Phase.reuse, Phase.generate],
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])


@st.composite
def small_models(draw):
    """1-4 nodes with mass (some massless junctions), 0-2 anchors, 1-6 springs; planar layouts
    with k_t (often 0: unheld junction directions, mechanisms) and locked directions."""
    kind = draw(st.sampled_from(["line", "planar", "torsion"]))
    n_mass = draw(st.integers(1, 4))
    n_anchor = draw(st.integers(0, 2))
    cells = draw(st.lists(st.tuples(st.integers(0, 3), st.integers(0, 3)),
                          min_size=n_mass + n_anchor, max_size=n_mass + n_anchor, unique=True))
    jit = draw(st.lists(st.floats(-0.3, 0.3), min_size=2 * len(cells), max_size=2 * len(cells)))
    pos = [(cx + jit[2 * i], cy + jit[2 * i + 1]) for i, (cx, cy) in enumerate(cells)]
    masses = []
    for i in range(n_mass):
        mass = draw(st.one_of(st.just(0.0), st.floats(0.1, 10.0))) if i else draw(st.floats(0.1, 10.0))
        fixed = (draw(st.sampled_from(["x", "y"])),) if kind == "planar" and draw(
            st.integers(0, 6)) == 0 else ()
        masses.append(Mass(id=f"m{i}", x=pos[i][0], y=pos[i][1], mass=mass, fixed=fixed))
    anchors = [Anchor(id=f"A{j}", x=pos[n_mass + j][0], y=pos[n_mass + j][1]) for j in range(n_anchor)]
    nodes = [m.id for m in masses] + [a.id for a in anchors]
    springs = []
    if len(nodes) > 1:
        pairs = draw(st.lists(st.tuples(st.integers(0, len(nodes) - 1), st.integers(0, len(nodes) - 1))
                              .filter(lambda p: p[0] != p[1]), min_size=1, max_size=6))
        for j, (a, b) in enumerate(pairs):
            if a >= n_mass and b >= n_mass:
                continue
            kt = draw(st.one_of(st.just(0.0), st.floats(1.0, 1e3))) if kind == "planar" else 0.0
            springs.append(Spring(id=f"s{j}", a=nodes[a], b=nodes[b], k=draw(st.floats(10.0, 1e4)), k_t=kt))
    return Model(kind=kind, masses=tuple(masses), anchors=tuple(anchors), springs=tuple(springs))


def _elements(model):
    out = [(s.id, "k") for s in model.springs]
    if model.kind == "planar":
        out += [(s.id, "k_t") for s in model.springs]
    out += [(m.id, "mass") for m in model.masses if m.mass > 0]
    return out


def _positive(model, eid, field):
    """The model with the element's value positive (k_t = 0 is set to the spring's k)."""
    if value_of(model, eid, field) > 0:
        return model
    return with_value(model, eid, model.element(eid).k, field)


@PROPERTY
@given(small_models(), st.data())
def test_limits_match_mpmath(model, data):
    """Random models: limit_spectrum of a random element, both ways, against the mpmath reference
    with the value 1e24 away (sw_mp.check_limits; tolerances there)."""
    assume(solver.modes(model).n_modes > 0 and _elements(model))
    eid, field = data.draw(st.sampled_from(_elements(model)))
    sw_mp.check_limits(_positive(model, eid, field), eid, field)


@PROPERTY
@given(small_models(), st.data())
def test_retune_inside_and_outside_the_exact_range(model, data):
    """Random models, element and mode; the range [lo, hi] from the mpmath reference at values 1e24
    away (sw_mp). A target inside (5 to 95 % of it): retune succeeds and the mpmath frequencies of
    the model with the returned value put mode N on it (rtol 1e-7). A target outside: ModelError
    "cannot reach" stating lo and hi (7 digits), or "does not depend" when lo = hi."""
    res = solver.modes(model)
    assume(res.n_modes > 0 and _elements(model))
    eid, field = data.draw(st.sampled_from(_elements(model)))
    mode = data.draw(st.integers(1, res.n_modes))
    work = _positive(model, eid, field)
    assume(not solver.modes(work).is_zero[mode - 1])
    v = value_of(work, eid, field)
    ends = [sw_mp.frequencies_hz(with_value(work, eid, v * f, field))[mode - 1] for f in (1 / sw_mp.FAR, sw_mp.FAR)]
    lo, hi = sorted(ends)
    top = max(sw_mp.frequencies_hz(work))
    unbounded = hi > 1e6 * top
    if hi - lo <= 1e-9 * hi:
        now = sw_mp.frequencies_hz(model)[mode - 1] if value_of(model, eid, field) > 0 else lo
        target = now * data.draw(st.sampled_from([0.5, 2.0]))
        with pytest.raises(ModelError, match="does not depend"):
            solver.retune(model, eid, mode, target, field=field)
        return
    can_go_below = lo > 1e-6 * top
    if data.draw(st.booleans()) or (unbounded and not can_go_below):
        t = data.draw(st.floats(0.05, 0.95))
        target = lo + t * ((10 * max(lo, top)) if unbounded else (hi - lo))
        assume(target > 0 and (unbounded or hi - lo > 1e-4 * hi))
        value = solver.retune(model, eid, mode, target, field=field)
        got = sw_mp.frequencies_hz(with_value(model, eid, value, field))[mode - 1]
        assert got == pytest.approx(target, rel=1e-7)
    else:
        below = can_go_below and (unbounded or data.draw(st.booleans()))
        target = lo * data.draw(st.floats(0.1, 0.999)) if below else hi * data.draw(st.floats(1.001, 3.0))
        assume(target > 0 and math.isfinite(target))
        with pytest.raises(ModelError, match="cannot reach") as err:
            solver.retune(model, eid, mode, target, field=field)
        msg = str(err.value)
        assert sw_mp.stated(msg, lo, atol=1e-9 * top), (msg, lo, hi)
        if unbounded:
            assert "without bound" in msg
        else:
            assert sw_mp.stated(msg, hi), (msg, lo, hi)


def _fd_groups(lam, rtol=1e-6, gap=5e-2):
    """Groups of equal eigenvalues (within rtol) set apart from their neighbours by more than
    ``gap`` (relative, or absolute 1e-6 of the largest for zeros): index lists."""
    top = max(float(lam.max(initial=0.0)), 1e-12)
    groups, i = [], 0
    while i < len(lam):
        j = i
        while j + 1 < len(lam) and lam[j + 1] - lam[j] <= rtol * lam[j + 1] + 1e-9 * top:
            j += 1
        lo_ok = i == 0 or lam[i] - lam[i - 1] > gap * lam[i] + 1e-6 * top
        hi_ok = j + 1 == len(lam) or lam[j + 1] - lam[j] > gap * lam[j + 1] + 1e-6 * top
        if lo_ok and hi_ok:
            groups.append(list(range(i, j + 1)))
        i = j + 1
    return groups


@PROPERTY
@given(small_models(), st.data())
def test_sensitivities_equal_finite_differences_everywhere(model, data):
    """Issue 9 item 7, every element of random models with junctions and unheld directions:
    d lambda/dp (solver.sensitivities) against differences of the eigenvalues of re-solved
    models, the independent check, solved in mpmath at 40 digits (sw_mp: no round-off in the
    difference): central on log p (step 1e-5, error ~1e-10) for positive k, k_t and masses;
    forward from 0 (steps 1e-5 and 5e-6 of the softest stiffness, Richardson: error ~1e-10) for
    k_t = 0; steps far above the 1e-16 by which float positions make "collinear" springs not
    quite collinear. Separated single
    modes compare one by one, a group of equal eigenvalues by its sum (the only defined
    quantity, math), zero groups included. rtol 1e-6, atol 1e-7 per kg of the lightest mass
    (the analytic values come from double-precision shapes)."""
    unheld = []
    if model.kind == "planar" and data.draw(st.booleans()):
        # a junction J on a ray from a mass, held along the ray only (both springs k_t = 0):
        # J's sideways direction is unheld, the case of issue 9 item 7
        heavy = [m for m in model.masses if m.mass > 0]
        m = data.draw(st.sampled_from(heavy))
        ang = data.draw(st.floats(0, 2 * math.pi))
        ux, uy = math.cos(ang), math.sin(ang)
        model = model.with_changes(put=[
            Mass(id="J", x=m.x + 0.5 * ux, y=m.y + 0.5 * uy, mass=0.0),
            Anchor(id="AJ", x=m.x + ux, y=m.y + uy),
            Spring(id="u1", a=m.id, b="J", k=data.draw(st.floats(10.0, 1e4))),
            Spring(id="u2", a="J", b="AJ", k=data.draw(st.floats(10.0, 1e4)))])
        unheld = [("u1", "k_t"), ("u2", "k_t")]
    assume(model.springs)
    a = solver.analyse(model)
    assume(a.modal.n_modes > 0)
    sens = a.sensitivity

    def lam_at(value):   # mpf: the difference is taken before rounding to double
        return sw_mp.eigenvalues(with_value(model, eid, value, field), 40)

    elements = _elements(model)
    eid, field = data.draw(st.sampled_from(unheld or elements))
    v = value_of(model, eid, field)
    lam0 = sw_mp.eigenvalues(model, 40)
    lam = np.array([float(x) for x in lam0])
    if field == "mass":
        analytic = sens.dlambda_dm[:, sens.mass_ids.index(eid)]
    else:
        j = sens.spring_ids.index(eid)
        analytic = (sens.dlambda_dk if field == "k" else sens.dlambda_dkt)[:, j]
    with mpmath.workdps(40):   # differences at the references' precision
        if v > 0:
            h = mpmath.mpf("1e-5")
            up, dn = lam_at(v * mpmath.exp(h)), lam_at(v * mpmath.exp(-h))
            fd = [float((u - d) / (v * (mpmath.exp(h) - mpmath.exp(-h)))) for u, d in zip(up, dn)]
        else:
            step = 1e-5 * min(x for s in model.springs for x in (s.k, s.k_t) if x > 0)
            full, half = lam_at(step), lam_at(step / 2)
            fd = [float(2 * (b - a0) / (step / 2) - (f - a0) / step)
                  for f, b, a0 in zip(full, half, lam0)]
    fd = np.array(fd)
    light = min(m.mass for m in model.masses if m.mass > 0)
    for g in _fd_groups(lam):
        want, got = fd[g].sum(), analytic[g].sum()
        assert abs(got - want) <= 1e-6 * abs(want) + 1e-7 * len(g) / light, (eid, field, g, got, want)


# --------------------------------------------------------------------------------------------
# stiffness spreads up to 1e12 (stiff links as springs): limits and retune against mpmath

@st.composite
def spread_models(draw):
    """small_models with some springs made 10^e stiffer, e up to 12 (a rigid joint modelled as
    a very stiff spring, common practice)."""
    model = draw(small_models())
    springs = []
    for s in model.springs:
        e = draw(st.sampled_from([0.0, 0.0, 3.0, 6.0, 9.0, 12.0])) if len(springs) % 2 == 0 else 0.0
        springs.append(Spring(id=s.id, a=s.a, b=s.b, k=s.k * 10 ** e, k_t=s.k_t))
    return model.with_changes(springs=tuple(springs))


def _mp_limits(model, eid, field, mode, dps=120):
    """Mode ``mode`` of the mpmath reference (sw_mp) as the value goes to 1e-30 and to 1e30, the
    extremes a model holds (18 decades beyond a 1e12 spread), in Hz, and at the value itself.
    An end where the frequency still moves as sqrt(value) (x10 over the last two decades) is
    the limit 0 or infinity (its finite value there only reflects where the scan stopped)."""
    def at(x):
        return sw_mp.frequencies_hz(with_value(model, eid, x, field), dps)[mode - 1]

    ends = []
    for x, x_in in ((1e-30, 1e-28), (1e30, 1e28)):
        f, f_in = at(x), at(x_in)
        if f > 5 * f_in:
            f = math.inf
        elif f_in > 5 * f or f == 0.0:
            f = 0.0
        ends.append(f)
    return ends, sw_mp.frequencies_hz(model, dps)[mode - 1]


@PROPERTY
@given(spread_models(), st.data())
def test_reachable_range_with_stiffness_spread(model, data):
    """Random models with stiffness spreads up to 1e12: reachable_range of a random element and
    mode against the mpmath limits (rtol 1e-6, the review's scan; :func:`_mp_limits`)."""
    res = solver.modes(model)
    assume(res.n_modes > 0 and _elements(model))
    eid, field = data.draw(st.sampled_from(_elements(model)))
    mode = data.draw(st.integers(1, res.n_modes))
    work = _positive(model, eid, field)
    assume(not solver.modes(work).is_zero[mode - 1])
    (a, b), now = _mp_limits(work, eid, field, mode)
    assume(now > 0)
    ref = sorted((a, b))
    got = solver.reachable_range(work, eid, mode, field=field)
    for g, r in zip(got, ref):
        if r == 0.0 or math.isinf(r):
            assert g == r or (r == 0.0 and g <= 1e-9 * now), (got, ref, now)
        else:
            assert g == pytest.approx(r, rel=1e-6), (got, ref, now)


@PROPERTY
@given(spread_models(), st.data())
def test_retune_with_stiffness_spread(model, data):
    """Random models with stiffness spreads up to 1e12: a target strictly inside the mpmath range
    (5 to 95 % of it) is reached, and mpmath at the returned value puts the mode on it (rtol
    1e-7); a target outside is refused, and a refusal that states a range states one that holds
    the present frequency (the review found 'stays between 7.130495 and 12.32773 Hz (now
    6.164067 Hz)')."""
    res = solver.modes(model)
    assume(res.n_modes > 0 and _elements(model))
    eid, field = data.draw(st.sampled_from(_elements(model)))
    mode = data.draw(st.integers(1, res.n_modes))
    work = _positive(model, eid, field)
    assume(not solver.modes(work).is_zero[mode - 1])
    (a, b), now = _mp_limits(work, eid, field, mode)
    lo, hi = sorted((a, b))
    unbounded = math.isinf(hi)
    assume(now > 0 and (unbounded or hi - lo > 1e-4 * hi))
    t = data.draw(st.floats(0.05, 0.95))
    target = lo + t * ((10 * max(lo, now)) if unbounded else (hi - lo))
    try:
        value = solver.retune(work, eid, mode, target, field=field)
    except ModelError as err:
        raise AssertionError(f"reachable target refused: {err}") from None
    got = sw_mp.frequencies_hz(with_value(work, eid, value, field), 120)[mode - 1]
    assert got == pytest.approx(target, rel=1e-7)
    outside = hi * data.draw(st.floats(1.01, 3.0)) if not unbounded else lo * 0.5
    assume(outside > 0 and (not unbounded or lo > 1e-6 * now))
    with pytest.raises(ModelError) as err:
        solver.retune(work, eid, mode, outside, field=field)
    msg = str(err.value)
    rng = re.search(r"between ([-+.\de]+) Hz \(.*?\) and ([-+.\de]+) Hz", msg)
    if rng:
        x, y = float(rng.group(1)), float(rng.group(2))
        assert x <= now * (1 + 1e-6) and now * (1 - 1e-6) <= y, msg
