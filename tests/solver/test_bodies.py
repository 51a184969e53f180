"""Planar rigid bodies on mounts: frequencies, coupling, effective mass, responses, file keys.

Sources: the bounce-and-pitch bar (a vibration textbook's two-degree-of-freedom chapter, from
memory: a uniform bar, J = m L^2 / 12, on springs k1, k2 at distances from its centre, whose
frequencies are the roots of the 2x2 determinant, here found by mpmath); the elastic centre of
two parallel springs, x_e = (k1 a + k2 b) / (k1 + k2) (common practice); objectivity of K
(math: a rotated or mirrored layout has the same frequencies); the effective-mass sum rule
(math: sum of Gamma^2 over all modes = r^T M r); scipy.integrate.solve_ivp as an independent
integrator.
"""

from __future__ import annotations

import copy
import json
import math
from pathlib import Path

import mpmath
import numpy as np
import pytest
import scipy.integrate
import scipy.linalg
from hypothesis import given, settings
from hypothesis import strategies as st

import solver
from solver import Anchor, Damper, Initial, Mass, Model, ModelError, ModelFileError, Spring
from solver.bodies import COUPLING_RTOL, body_coupling

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((ROOT / "assets" / "examples").glob("*.json"))


def bar_on_springs(m, L, k1, k2, a=None, b=None, h=0.4, lock_x=True):
    """A bar (mass m, length L, J = m L^2/12) centred at the origin on vertical springs k1 at
    x = a and k2 at x = b (the ends by default), anchored h below."""
    a = -L / 2 if a is None else a
    b = L / 2 if b is None else b
    bar = Mass("bar", 0.0, 0.0, m, inertia=m * L * L / 12, fixed=("x",) if lock_x else ())
    return Model(kind="planar", masses=(bar,),
                 anchors=(Anchor("A", a, -h), Anchor("B", b, -h)),
                 springs=(Spring("s1", "A", "bar", k1, b_offset=(a, 0.0)),
                          Spring("s2", "B", "bar", k2, b_offset=(b, 0.0))))


def mp_bounce_pitch(m, J, k1, k2, a, b):
    """Bounce and pitch frequencies (Hz) as the roots of det(K - w^2 M) = 0 in mpmath (50
    digits): K = [[k1 + k2, k1 a + k2 b], [k1 a + k2 b, k1 a^2 + k2 b^2]], M = diag(m, J)."""
    mpmath.mp.dps = 50
    m, J, k1, k2, a, b = (mpmath.mpf(v) for v in (m, J, k1, k2, a, b))
    kyy, kyt, ktt = k1 + k2, k1 * a + k2 * b, k1 * a * a + k2 * b * b
    # m J L^2 - (m ktt + J kyy) L + (kyy ktt - kyt^2) = 0, L = w^2: the quadratic formula at
    # 50 digits (the cancellation in the smaller root costs far fewer than the 35 to spare)
    A, B, C = m * J, -(m * ktt + J * kyy), kyy * ktt - kyt * kyt
    disc = mpmath.sqrt(B * B - 4 * A * C)
    roots = [(-B - disc) / (2 * A), (-B + disc) / (2 * A)]
    return sorted(float(mpmath.sqrt(r) / (2 * mpmath.pi)) for r in roots)


@pytest.mark.parametrize("k1, k2, a, b", [
    (2000.0, 2000.0, None, None),
    (1500.0, 4200.0, None, None),
    (3000.0, 800.0, -0.35, 0.6),     # springs not at the ends
    (1e3, 1e7, -0.5, 0.1),           # a stiff mount beside a soft one
])
def test_bar_bounce_and_pitch_against_mpmath(k1, k2, a, b):
    """Bounce-pitch bar (textbook 2-DOF chapter, from memory), reference roots by mpmath."""
    m, L = 12.0, 1.2
    model = bar_on_springs(m, L, k1, k2, a, b)
    aa = -L / 2 if a is None else a
    bb = L / 2 if b is None else b
    want = mp_bounce_pitch(m, m * L * L / 12, k1, k2, aa, bb)
    res = solver.modes(model)
    assert res.dofs == (("bar", "y"), ("bar", "theta"))
    np.testing.assert_allclose(res.frequencies_hz, want, rtol=1e-10)


def test_symmetric_mounts_decouple_bounce_and_rock():
    """common practice: mounts symmetric about the centre of mass give a pure bounce mode and a
    pure rock mode, and the elastic centre at the centre of mass."""
    model = bar_on_springs(8.0, 1.0, 2500.0, 2500.0)
    res = solver.modes(model)
    shapes = res.shapes
    # each mode moves in one direction only
    for j in range(2):
        y, th = shapes[:, j]
        assert min(abs(y), abs(th)) <= 1e-12 * max(abs(y), abs(th))
    (c,) = body_coupling(model)
    assert not c.coupled
    assert c.offset_m == pytest.approx((0.0, 0.0), abs=1e-12)
    assert "uncoupled" in c.statement and "at the centre of mass" in c.statement
    # bounce sqrt(2k/m), rock sqrt(2 k (L/2)^2 / J): closed forms of common practice
    f = sorted([math.sqrt(5000 / 8.0), math.sqrt(2 * 2500 * 0.25 / (8.0 / 12))])
    np.testing.assert_allclose(res.omegas, f, rtol=1e-12)


@pytest.mark.parametrize("k1, k2, a, b", [(1000.0, 3000.0, -0.5, 0.5),
                                          (4000.0, 900.0, -0.2, 0.7),
                                          (700.0, 700.0, -0.1, 0.5)])
def test_asymmetric_mounts_elastic_centre_closed_form(k1, k2, a, b):
    """common practice: two parallel springs k1 at a and k2 at b have their elastic centre at
    x_e = (k1 a + k2 b) / (k1 + k2); a force there gives a pure translation (checked on the
    assembled K, a second path)."""
    model = bar_on_springs(5.0, 1.5, k1, k2, a, b, lock_x=False)
    (c,) = body_coupling(model)
    assert c.coupled
    xe = (k1 * a + k2 * b) / (k1 + k2)
    assert c.elastic_centre_m[0] == pytest.approx(xe, rel=1e-12, abs=1e-15)
    assert c.elastic_centre_m[1] == pytest.approx(0.0, abs=1e-12)
    assert "bounce and rock are coupled" in c.statement
    assert f"{abs(xe) * 1000:.3g} mm {'right' if xe > 0 else 'left'} of" in c.statement
    # a vertical force at x_e: solve the y-theta block of the assembled K (x is a mechanism)
    locked = bar_on_springs(5.0, 1.5, k1, k2, a, b)
    K = solver.assemble(locked).dense("K")
    u = np.linalg.solve(K, np.array([1.0, xe * 1.0]))   # (F_y, moment F_y x_e)
    assert abs(u[1]) <= 1e-12 * abs(u[0])


def test_elastic_centre_of_angled_mounts_gives_pure_translation():
    """math (definition of the elastic centre): a force in any direction through the stated
    elastic centre gives no rotation; solved on the assembled K of the model (the solver's
    stiffness, not bodies.py's own 3x3)."""
    body = Mass("skid", 0.1, 0.2, 40.0, inertia=3.0)
    anchors = (Anchor("A", -0.8, -0.5), Anchor("B", 0.9, -0.6), Anchor("C", 0.3, 0.9))
    springs = (Spring("s1", "A", "skid", 2e4, k_t=3e3, b_offset=(-0.5, -0.2)),
               Spring("s2", "B", "skid", 5e4, k_t=1e3, b_offset=(0.6, -0.25)),
               Spring("s3", "C", "skid", 1e4, b_offset=(0.1, 0.3)))
    model = Model(kind="planar", masses=(body,), anchors=anchors, springs=springs)
    (c,) = body_coupling(model)
    K = solver.assemble(model).dense("K")
    np.testing.assert_allclose(K, c.stiffness, rtol=1e-12, atol=1e-9 * np.abs(K).max())
    dx, dy = c.offset_m
    for fx, fy in ((1.0, 0.0), (0.0, 1.0), (0.6, -0.8)):
        u = np.linalg.solve(K, np.array([fx, fy, dx * fy - dy * fx]))
        assert abs(u[2]) <= 1e-12 * np.hypot(u[0], u[1])


def _skid(angles, offsets, ks, kts, m=30.0, J=2.5, cx=0.0, cy=0.0, turn=0.0, mirror=False):
    """A body on mounts, each an anchor 0.5 m out from its attachment point at an angle; the
    whole layout turned by ``turn`` about the origin, or mirrored x -> -x."""
    c, s = math.cos(turn), math.sin(turn)

    def move(x, y):
        if mirror:
            x = -x
        return (c * x - s * y, s * x + c * y)

    ox, oy = move(cx, cy)
    body = Mass("b", ox, oy, m, inertia=J)
    anchors, springs = [], []
    for i, (ang, (dx, dy), k, kt) in enumerate(zip(angles, offsets, ks, kts)):
        px, py = cx + dx + 0.5 * math.cos(ang), cy + dy + 0.5 * math.sin(ang)
        anchors.append(Anchor(f"A{i}", *move(px, py)))
        odx, ody = move(dx, dy)   # linear: an offset turns (or mirrors) with the layout
        springs.append(Spring(f"s{i}", f"A{i}", "b", k, k_t=kt, b_offset=(odx, ody)))
    return Model(kind="planar", masses=(body,), anchors=tuple(anchors), springs=tuple(springs))


mounts = st.lists(st.tuples(st.floats(-math.pi, math.pi), st.floats(-0.6, 0.6),
                            st.floats(-0.4, 0.4), st.floats(1e3, 1e5),
                            st.one_of(st.just(0.0), st.floats(10.0, 2e4))),
                  min_size=2, max_size=4)


def _unpack(ms):
    return ([m[0] for m in ms], [(m[1], m[2]) for m in ms], [m[3] for m in ms],
            [m[4] for m in ms])


@settings(max_examples=40, deadline=None)
@given(mounts, st.floats(-math.pi, math.pi))
def test_rotating_a_body_on_angled_mounts_keeps_its_frequencies(ms, turn):
    """math (objectivity: the turned layout's K is Q^T K Q with Q orthogonal, M unchanged):
    a body on angled mounts turned as a whole has the same natural frequencies."""
    a, o, k, kt = _unpack(ms)
    base = solver.modes(_skid(a, o, k, kt)).frequencies_hz
    turned = solver.modes(_skid(a, o, k, kt, turn=turn)).frequencies_hz
    np.testing.assert_allclose(turned, base, rtol=1e-9, atol=1e-9 * base.max())


@settings(max_examples=30, deadline=None)
@given(mounts)
def test_mirrored_body_keeps_its_frequencies(ms):
    """math (a reflection is orthogonal): the mirror image x -> -x of a body on mounts has the
    same natural frequencies."""
    a, o, k, kt = _unpack(ms)
    base = solver.modes(_skid(a, o, k, kt)).frequencies_hz
    mirrored = solver.modes(_skid(a, o, k, kt, mirror=True)).frequencies_hz
    np.testing.assert_allclose(mirrored, base, rtol=1e-9, atol=1e-9 * base.max())


@settings(max_examples=30, deadline=None)
@given(mounts, st.floats(0.01, 100.0), st.booleans())
def test_scaling_mass_and_inertia_or_stiffness_scales_frequencies(ms, factor, masses):
    """math (w^2 = eigenvalue of M^-1 K): mass and inertia times a divide every frequency by
    sqrt(a); every stiffness times b multiplies them by sqrt(b)."""
    a, o, k, kt = _unpack(ms)
    base = solver.modes(_skid(a, o, k, kt)).frequencies_hz
    if masses:
        other = solver.modes(_skid(a, o, k, kt, m=30.0 * factor, J=2.5 * factor))
        want = base / math.sqrt(factor)
    else:
        other = solver.modes(_skid(a, o, [x * factor for x in k], [x * factor for x in kt]))
        want = base * math.sqrt(factor)
    np.testing.assert_allclose(other.frequencies_hz, want, rtol=1e-9, atol=1e-9 * want.max())


def _two_bodies():
    return Model(
        kind="planar",
        masses=(Mass("b1", 0.0, 0.0, 20.0, inertia=1.5), Mass("b2", 1.5, 0.3, 8.0, inertia=0.4),
                Mass("p", 0.8, 1.0, 3.0)),
        anchors=(Anchor("G1", -0.6, -0.7), Anchor("G2", 0.7, -0.8), Anchor("G3", 2.2, -0.5)),
        springs=(Spring("s1", "G1", "b1", 3e4, k_t=5e3, b_offset=(-0.4, -0.2)),
                 Spring("s2", "G2", "b1", 2e4, k_t=2e3, b_offset=(0.5, -0.2)),
                 Spring("s3", "b1", "b2", 1e4, k_t=1e3, a_offset=(0.5, 0.1),
                        b_offset=(-0.3, 0.0)),
                 Spring("s4", "G3", "b2", 4e4, b_offset=(0.2, -0.1)),
                 Spring("s5", "b2", "p", 5e3, k_t=500.0, a_offset=(0.0, 0.2)),
                 Spring("s6", "b1", "p", 7e3, k_t=700.0, a_offset=(0.3, 0.3))))


def test_effective_mass_and_inertia_sum_to_the_totals():
    """math (sum rule: sum_i Gamma_i^2 = r^T M r over all mass-normalised modes): the
    effective masses in x and y sum to the total mass, the effective inertias (key theta,
    rotation of each body about its own centre) to the total rotary inertia."""
    model = _two_bodies()
    res = solver.modes(model)
    assert set(res.effective_mass) == {"x", "y", "theta"}
    total = 20.0 + 8.0 + 3.0
    assert res.effective_mass["x"].sum() == pytest.approx(total, rel=1e-10)
    assert res.effective_mass["y"].sum() == pytest.approx(total, rel=1e-10)
    assert res.effective_mass["theta"].sum() == pytest.approx(1.5 + 0.4, rel=1e-10)
    # the mass-normalised shapes with the inertias on the theta DOFs (scipy eigh as reference)
    K, M = solver.assemble(model).dense("K"), solver.assemble(model).dense("M")
    lam = scipy.linalg.eigh(K, M, eigvals_only=True)
    np.testing.assert_allclose(res.eigenvalues, lam, rtol=1e-9)


def test_free_body_rotation_is_a_rigid_body_motion():
    """common practice: a body held by one spring through its centre can turn freely; that
    zero-frequency mode is rigid-body motion of the body, said in words."""
    model = Model(kind="planar", masses=(Mass("box", 0.0, 0.0, 4.0, inertia=0.2),),
                  anchors=(Anchor("G", 0.0, -1.0),),
                  springs=(Spring("s", "G", "box", 1e3, k_t=1e3),))
    res = solver.modes(model)
    assert len(res.zero_modes) == 1
    z = res.zero_modes[0]
    assert z.kind == "rigid" and "rotate freely" in z.cause and '"box"' in z.cause
    # the other two modes: the spring's k and k_t on the translations, sqrt(k/m)
    np.testing.assert_allclose(res.omegas[1:], [math.sqrt(1e3 / 4.0)] * 2, rtol=1e-12)


def test_free_response_from_a_rock_initial_condition_against_solve_ivp():
    """scipy.integrate.solve_ivp (an independent integrator, rtol 1e-11) on the bar's hand-built
    2-DOF equations m y'' + K_yy y + K_yt theta = 0, J theta'' + ... = 0, from theta(0) = 0.02
    rad: the modal closed form agrees."""
    m, L, k1, k2 = 12.0, 1.2, 1500.0, 4200.0
    J = m * L * L / 12
    model = bar_on_springs(m, L, k1, k2).with_changes(
        initial=(Initial("bar", displacement=(("theta", 0.02),), velocity=(("y", 0.05),)),))
    a, b = -L / 2, L / 2
    K = np.array([[k1 + k2, k1 * a + k2 * b], [k1 * a + k2 * b, k1 * a * a + k2 * b * b]])
    Minv = np.diag([1 / m, 1 / J])
    t = np.linspace(0.0, 2.0, 201)
    sol = scipy.integrate.solve_ivp(lambda _t, z: np.concatenate([z[2:], -Minv @ K @ z[:2]]),
                                    (0, 2.0), [0.0, 0.02, 0.05, 0.0], t_eval=t, rtol=1e-11,
                                    atol=1e-14, method="DOP853")
    fr = solver.free_response(model, t)
    got = np.column_stack([fr.of("bar", "y"), fr.of("bar", "theta")])
    np.testing.assert_allclose(got, sol.y[:2].T, rtol=0, atol=1e-8)


def test_moment_on_a_body_against_a_hand_solved_receptance():
    """math (receptance (K - w^2 M)^-1 on the hand-built 2x2 of the bar): a harmonic moment on
    theta gives these displacements, by the direct and the modal path."""
    m, L, k1, k2 = 12.0, 1.2, 1500.0, 4200.0
    J = m * L * L / 12
    model = bar_on_springs(m, L, k1, k2)
    a, b = -L / 2, L / 2
    K = np.array([[k1 + k2, k1 * a + k2 * b], [k1 * a + k2 * b, k1 * a * a + k2 * b * b]])
    M = np.diag([m, J])
    f = np.array([0.5, 1.7, 3.3, 9.0])
    for method in ("direct", "modal"):
        X = solver.harmonic_response(model, f, {("bar", "theta"): 2.0}, method=method)
        for i, fi in enumerate(f):
            w = 2 * np.pi * fi
            want = np.linalg.solve(K - w * w * M, np.array([0.0, 2.0]))
            np.testing.assert_allclose(X[i].real, want, rtol=1e-9)


def test_offset_dashpot_damps_the_rock_mode():
    """math (energy: a dashpot with c > 0 only removes energy): a dashpot attached off the
    centre damps both modes of the bar, and the exact state model's roots agree with the
    eigenvalues of the hand-built first-order matrix."""
    model = bar_on_springs(12.0, 1.2, 1500.0, 4200.0).with_changes(
        put=[Damper("c1", "A", "bar", 40.0, b_offset=(-0.6, 0.0))])
    dm = solver.damped_modes(model)
    assert np.all(dm.damping_ratios > 0)
    m, J = 12.0, 12.0 * 1.44 / 12
    a, b = -0.6, 0.6
    K = np.array([[5700.0, 1500 * a + 4200 * b], [1500 * a + 4200 * b, 1500 * a * a + 4200 * b * b]])
    C = 40.0 * np.array([[1.0, a], [a, a * a]])
    Minv = np.diag([1 / m, 1 / J])
    A = np.block([[np.zeros((2, 2)), np.eye(2)], [-Minv @ K, -Minv @ C]])
    s = np.linalg.eigvals(A)
    s = np.sort_complex(s[s.imag > 0])
    np.testing.assert_allclose(np.sort(np.abs(s)) / (2 * np.pi),
                               np.sort(dm.natural_frequencies_hz), rtol=1e-9)


# ------------------------------------------------------------------------------ the file
def test_round_trip_with_body_keys(tmp_path):
    """common practice: a model with an inertia, offsets and a theta initial condition saves
    and loads back equal, and the file holds the keys as DESIGN.md-style JSON (inertia,
    a_offset/b_offset as [dx, dy], theta/vtheta)."""
    model = _two_bodies().with_changes(
        put=[Damper("c1", "b1", "b2", 12.0, a_offset=(0.1, -0.1))],
        initial=(Initial("b1", displacement=(("theta", 0.01),), velocity=(("theta", -0.2),)),))
    path = tmp_path / "m.json"
    solver.save_model(model, path)
    data = json.loads(path.read_text("utf-8"))
    assert data["masses"][0]["inertia"] == 1.5 and "inertia" not in data["masses"][2]
    assert data["springs"][0]["b_offset"] == [-0.4, -0.2] and "a_offset" not in data["springs"][0]
    assert data["dampers"][0]["a_offset"] == [0.1, -0.1]
    assert data["initial"]["b1"] == {"theta": 0.01, "vtheta": -0.2}
    assert solver.load_model(path) == model


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_example_files_keep_their_text(path, tmp_path):
    """common practice: a keys holding its default is not written, so a file without bodies or
    gears gains no new key on saving, and saving what was loaded gives the same bytes again
    (load/save/load/save is stable)."""
    out = tmp_path / path.name
    model = solver.load_model(path)
    solver.save_model(model, out)
    text = out.read_text("utf-8")
    if not model.bodies:
        assert '"a_offset"' not in text and '"b_offset"' not in text
        assert model.kind == "torsion" or '"inertia"' not in text
    if not model.gears:
        assert '"gears"' not in text
    again = tmp_path / ("again-" + path.name)
    solver.save_model(solver.load_model(out), again)
    assert again.read_bytes() == out.read_bytes()
    assert solver.load_model(again) == model


BASE = {"format": "springwright-model", "version": 1, "kind": "planar",
        "masses": [{"id": "m1", "x": 0.0, "y": 0.0, "mass": 5.0, "inertia": 0.3},
                   {"id": "p", "x": 1.0, "y": 0.0, "mass": 1.0}],
        "anchors": [{"id": "G", "x": 0.0, "y": -1.0}],
        "springs": [{"id": "s1", "label": "Mount FL", "a": "G", "b": "m1", "k": 1e4,
                     "b_offset": [0.2, -0.1]},
                    {"id": "s2", "a": "m1", "b": "p", "k": 1e3}]}


@pytest.mark.parametrize("mutate, path, words", [
    (lambda d: d["springs"][1].__setitem__("b_offset", [0.1, 0.0]), "springs[1].b_offset",
     ['spring "s2"', 'mass "p"', "inertia > 0", "point mass"]),
    (lambda d: d["springs"][0].__setitem__("a_offset", [0.1, 0.0]), "springs[0].a_offset",
     ['"Mount FL" (s1)', "anchor", "rigid body"]),
    (lambda d: d["springs"][0].__setitem__("b_offset", [0.1]), "springs[0].b_offset",
     ['"Mount FL" (s1)', "2"]),
    (lambda d: d["springs"][0].__setitem__("b_offset", [0.1, "x"]), "springs[0].b_offset[1]",
     ["number"]),
    (lambda d: d["masses"][0].__setitem__("inertia", -1.0), "masses[0].inertia",
     ['mass "m1"', ">= 0"]),
    (lambda d: d["masses"][0].__setitem__("mass", 0.0), "masses[0].inertia",
     ['mass "m1"', "needs a mass > 0"]),
    (lambda d: d.__setitem__("initial", {"p": {"theta": 0.1}}), 'initial.p.theta',
     ['"p"', "rigid body", "allowed: x, y"]),
    (lambda d: d.__setitem__("kind", "line"), "masses[0]", ['"inertia" is not allowed']),
    (lambda d: d.__setitem__("gears", [{"id": "g", "a": "m1", "b": "p", "ratio": 2}]),
     "gears[0]", ['gear "g"', "torsion"]),
    (lambda d: d["springs"][0].__setitem__("b_offset", [0.0, -1.0]), "springs[0]",
     ['"Mount FL" (s1)', "same point"]),
])
def test_bad_body_keys_refused_with_json_path(mutate, path, words):
    """DESIGN.md section 4: a bad value is refused with one line naming the JSON path, the
    element and what is allowed."""
    data = copy.deepcopy(BASE)
    solver.model_from_dict(copy.deepcopy(data))   # the base is valid
    mutate(data)
    with pytest.raises(ModelFileError) as info:
        solver.model_from_dict(data)
    msg = str(info.value)
    assert msg.startswith(path + ":"), msg
    assert "\n" not in msg
    for w in words:
        assert w in msg, (w, msg)


def test_inertia_on_a_line_model_refused_by_the_api():
    """DESIGN.md section 3: a rotary inertia on a line model is a ModelError naming the
    element and the field."""
    with pytest.raises(ModelError) as info:
        Model(kind="line", masses=(Mass("m1", 0, 0, 1.0, inertia=0.5),))
    assert 'mass "m1"' in str(info.value) and "inertia" in str(info.value)
    assert info.value.path == ("masses", 0, "inertia")


def test_coupling_threshold_is_relative():
    """common practice: the coupling verdict does not depend on units: the same layout at
    1000 times the stiffness gives the same coefficients and verdict."""
    a = body_coupling(bar_on_springs(5.0, 1.0, 1000.0, 1010.0))[0]
    b = body_coupling(bar_on_springs(5.0, 1.0, 1e6, 1.01e6))[0]
    assert a.coefficients == pytest.approx(b.coefficients, rel=1e-12)
    assert a.coefficients["bounce-rock"] < COUPLING_RTOL and not a.coupled


def test_cli_json_states_bodies_and_gears():
    """DESIGN.md section 5 (keys added, none renamed): solve --json of the two new examples
    gives "bodies" with the coupling and "gears_referred" with the equivalent system, shapes
    with the theta components, and the existing keys unchanged."""
    import subprocess
    import sys

    def run(name):
        out = subprocess.run([sys.executable, "-m", "app.cli", "solve", "--json",
                              str(ROOT / "assets" / "examples" / name)],
                             capture_output=True, text=True, cwd=ROOT, timeout=300)
        assert out.returncode == 0, out.stderr
        return json.loads(out.stdout)

    skid = run("pump_skid.json")
    assert skid["dofs"] == [["skid", "x"], ["skid", "y"], ["skid", "theta"]]
    for key in ("model", "dofs", "modes", "warnings"):
        assert key in skid
    (body,) = skid["bodies"]
    assert body["id"] == "skid" and body["coupled"] is True
    assert len(body["elastic_centre_m"]) == 2 and "rock are coupled" in body["statement"]
    assert all(len(m["shape"]) == 3 and "theta" in m["effective_mass_kg"] for m in skid["modes"])
    fan = run("geared_fan_drive.json")
    geared = fan["gears_referred"]
    assert geared["reference"] == "motor"
    assert geared["speed_ratios"]["fan"] == pytest.approx(1 / 3.2)
    assert ["wheel", "theta"] in geared["all_dofs"] and ["wheel", "theta"] not in fan["dofs"]
    # the referred frequencies equal the geared model's (referred_system's model, solved)
    eq = solver.bodies.referred_system(solver.load_model(
        ROOT / "assets" / "examples" / "geared_fan_drive.json"), "motor").model
    np.testing.assert_allclose([m["frequency_hz"] for m in fan["modes"]],
                               solver.modes(eq).frequencies_hz, rtol=1e-10, atol=1e-9)
