"""Gear stages in torsion models: rigid meshes as constraints, mesh stiffness as a spring.

Sources: the equivalent system referred to one shaft (a standard textbook method, from
memory): for a speed ratio n = speed a / speed b, inertias and stiffnesses on shaft b seen from
shaft a are J/n^2 and k/n^2; scipy.linalg.eigh on the hand-built referred matrices as an
independent eigensolver; a penalty argument (math: a mesh stiffness tending to infinity tends
to the rigid constraint, the error falling as 1/k_mesh).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.linalg

import solver
from solver import Anchor, Gear, Mass, Model, ModelError, Spring
from solver.bodies import referred_system


def two_shafts(n=3.0, J1=2.0, J2=0.5, J3=4.0, k1=8000.0, k2=1500.0, k_mesh=None):
    """Motor J1 on a grounded shaft k1; a gear stage (speed J1 / speed J2 = n) to J2, which
    drives the load J3 through a shaft k2."""
    return Model(kind="torsion",
                 masses=(Mass("motor", 0, 0, J1), Mass("wheel", 1, 0, J2), Mass("load", 2, 0, J3)),
                 anchors=(Anchor("G", -1, 0),),
                 springs=(Spring("k1", "G", "motor", k1), Spring("k2", "wheel", "load", k2)),
                 gears=(Gear("g1", "motor", "wheel", n, k_mesh=k_mesh),))


@pytest.mark.parametrize("n", [3.0, 0.4, 1.0, 12.5])
def test_two_shafts_against_the_system_referred_to_the_motor(n):
    """textbook method (from memory): referred to the motor shaft the model is the 2-DOF chain
    J1 + J2/n^2 on k1, J3/n^2 on k2/n^2; its frequencies by scipy.linalg.eigh on the hand-built
    pair, and those of referred_system's equivalent, equal the geared model's."""
    J1, J2, J3, k1, k2 = 2.0, 0.5, 4.0, 8000.0, 1500.0
    model = two_shafts(n)
    res = solver.modes(model)
    K = np.array([[k1 + k2 / n ** 2, -k2 / n ** 2], [-k2 / n ** 2, k2 / n ** 2]])
    M = np.diag([J1 + J2 / n ** 2, J3 / n ** 2])
    want = np.sqrt(scipy.linalg.eigh(K, M, eigvals_only=True)) / (2 * np.pi)
    np.testing.assert_allclose(res.frequencies_hz, want, rtol=1e-11)
    eq = referred_system(model, "motor")
    np.testing.assert_allclose(solver.modes(eq.model).frequencies_hz, want, rtol=1e-11)
    assert eq.speed_ratios["wheel"] == pytest.approx(1 / n) and eq.merged["motor"] == (
        "motor", "wheel")
    assert any(f"{1 / n ** 2:.4g}" in line for line in eq.statements)
    # referred to the load shaft instead: the same frequencies (n^2 J1, n^2 k1)
    eq_load = referred_system(model, "load")
    np.testing.assert_allclose(solver.modes(eq_load.model).frequencies_hz, want, rtol=1e-11)


def test_each_disc_turns_at_its_own_shaft_speed_in_every_mode():
    """textbook method: with a rigid mesh theta_motor = n theta_wheel in every mode; the
    wheel's motion is recovered on all_dofs, as a junction's is, with the kinetic energy of
    every disc counted (the shapes stay M-orthonormal on the reduced coordinates)."""
    n = 4.0
    res = solver.modes(two_shafts(n))
    assert ("wheel", "theta") in res.all_dofs and ("wheel", "theta") not in res.dofs
    for mode in (1, 2):
        d = res.node_displacement(mode)
        assert d["motor"]["theta"] == pytest.approx(n * d["wheel"]["theta"], rel=1e-12)
    J = np.array([2.0, 0.5, 4.0])
    # kinetic energy with every disc: sum J theta^2 = 1 for a mass-normalised shape
    for mode in (1, 2):
        d = res.node_displacement(mode)
        th = np.array([d["motor"]["theta"], d["wheel"]["theta"], d["load"]["theta"]])
        assert float(J @ th ** 2) == pytest.approx(1.0, rel=1e-12)


def test_large_mesh_stiffness_converges_to_the_rigid_mesh():
    """math (penalty): as k_mesh grows the two lowest frequencies tend to the rigid mesh's,
    the gap falling about tenfold per decade of k_mesh; a third, mesh mode rises without
    bound."""
    rigid = solver.modes(two_shafts(3.0)).frequencies_hz
    gaps = []
    for k_mesh in (1e6, 1e7, 1e8):
        f = solver.modes(two_shafts(3.0, k_mesh=k_mesh)).frequencies_hz
        assert len(f) == 3
        gaps.append(np.max(np.abs(f[:2] - rigid) / rigid))
    assert gaps[2] < 1e-4
    assert gaps[1] / gaps[0] == pytest.approx(0.1, rel=0.05)
    assert gaps[2] / gaps[1] == pytest.approx(0.1, rel=0.05)


def test_mesh_stiffness_against_the_hand_built_three_dof_matrices():
    """textbook method: with a mesh stiffness k_m on shaft a (energy k_m (theta_a -
    n theta_b)^2 / 2) the model is the 3-DOF pair below; scipy.linalg.eigh as reference."""
    n, km = 2.5, 3e4
    J1, J2, J3, k1, k2 = 2.0, 0.5, 4.0, 8000.0, 1500.0
    K = np.array([[k1 + km, -n * km, 0.0],
                  [-n * km, n * n * km + k2, -k2],
                  [0.0, -k2, k2]])
    want = np.sqrt(scipy.linalg.eigh(K, np.diag([J1, J2, J3]), eigvals_only=True)) / (2 * np.pi)
    model = two_shafts(n, k_mesh=km)
    np.testing.assert_allclose(solver.modes(model).frequencies_hz, want, rtol=1e-11)
    eq = referred_system(model, "motor")
    np.testing.assert_allclose(solver.modes(eq.model).frequencies_hz, want, rtol=1e-11)


def test_three_shaft_chain_of_two_stages():
    """textbook method: two stages in a chain (n1 then n2) refer the third shaft to the first
    by (n1 n2)^2; a branch (two wheels on one pinion) likewise per branch. scipy.linalg.eigh on
    the hand-built referred pair."""
    n1, n2 = 3.0, 2.0
    model = Model(kind="torsion",
                  masses=(Mass("m", 0, 0, 1.0), Mass("p1", 1, 0, 0.2), Mass("w1", 2, 0, 0.6),
                          Mass("p2", 3, 0, 0.1), Mass("w2", 4, 0, 0.9), Mass("fan", 5, 0, 3.0)),
                  anchors=(Anchor("G", -1, 0),),
                  springs=(Spring("s0", "G", "m", 5e4), Spring("s1", "m", "p1", 2e4),
                           Spring("s2", "w1", "p2", 6e3), Spring("s3", "w2", "fan", 900.0)),
                  gears=(Gear("g1", "p1", "w1", n1), Gear("g2", "p2", "w2", n2)))
    res = solver.modes(model)
    r1, r2 = 1 / n1, 1 / (n1 * n2)    # shaft speeds over the motor's
    J = [1.0, 0.2 + 0.6 * r1 ** 2, 0.1 * r1 ** 2 + 0.9 * r2 ** 2, 3.0 * r2 ** 2]
    ks = [2e4, 6e3 * r1 ** 2, 900.0 * r2 ** 2]
    K = np.zeros((4, 4))
    K[0, 0] += 5e4
    for i, k in enumerate(ks):
        K[i:i + 2, i:i + 2] += k * np.array([[1, -1], [-1, 1]])
    want = np.sqrt(scipy.linalg.eigh(K, np.diag(J), eigvals_only=True)) / (2 * np.pi)
    np.testing.assert_allclose(res.frequencies_hz, want, rtol=1e-10)
    eq = referred_system(model, "m")
    assert eq.speed_ratios["fan"] == pytest.approx(r2)
    np.testing.assert_allclose(solver.modes(eq.model).frequencies_hz, want, rtol=1e-10)


def test_free_geared_train_spins_as_a_rigid_body():
    """common practice: a drive train held by no anchor turns freely, each disc at its gear's
    speed: one zero-frequency rigid mode whose shape keeps the ratio."""
    model = Model(kind="torsion", masses=(Mass("a", 0, 0, 1.0), Mass("b", 1, 0, 2.0),
                                          Mass("c", 2, 0, 0.5)),
                  springs=(Spring("s", "b", "c", 100.0),), gears=(Gear("g", "a", "b", 2.0),))
    res = solver.modes(model)
    assert len(res.zero_modes) == 1 and res.zero_modes[0].kind == "rigid"
    assert "gear" in res.zero_modes[0].cause
    d = res.node_displacement(1)
    assert d["a"]["theta"] == pytest.approx(2 * d["b"]["theta"], rel=1e-10)
    assert d["c"]["theta"] == pytest.approx(d["b"]["theta"], rel=1e-10)
    # the elastic mode: b (with a referred, J = 2 + 4 x 1) against c on k = 100
    Jb, Jc = 2.0 + 1.0 * 4.0, 0.5
    assert res.omegas[1] == pytest.approx(math.sqrt(100 * (Jb + Jc) / (Jb * Jc)), rel=1e-12)


def test_direct_and_modal_harmonic_response_agree_on_a_geared_model():
    """two algorithms (dynamic-stiffness solve on the reduced coordinates; modal superposition):
    the receptance of every disc to a moment on the load, including the geared wheel."""
    model = two_shafts(3.0).with_changes(damping=solver.Damping("rayleigh", alpha=0.5,
                                                                beta=1e-4))
    f = np.linspace(0.5, 40.0, 25)
    direct = solver.harmonic_response(model, f, {("load", "theta"): 1.0}, method="direct")
    modal = solver.harmonic_response(model, f, {("load", "theta"): 1.0}, method="modal")
    np.testing.assert_allclose(direct, modal, rtol=1e-8, atol=1e-14)
    # a moment on the geared wheel reaches the motor through the mesh (T^T F)
    on_wheel = solver.harmonic_response(model, f, {("wheel", "theta"): 1.0})
    on_motor = solver.harmonic_response(model, f, {("motor", "theta"): 1.0 / 3.0})
    np.testing.assert_allclose(on_wheel, on_motor, rtol=1e-10)


def test_loop_with_disagreeing_ratios_is_warned_and_locked():
    """math: two rigid stages between the same discs with different ratios admit only
    theta = 0 for both; the solver says so rather than inventing a motion."""
    model = Model(kind="torsion", masses=(Mass("a", 0, 0, 1.0), Mass("b", 1, 0, 1.0),
                                          Mass("c", 2, 0, 1.0)),
                  anchors=(Anchor("G", -1, 0),),
                  springs=(Spring("s", "G", "c", 100.0), Spring("t", "b", "c", 50.0)),
                  gears=(Gear("g1", "a", "b", 2.0), Gear("g2", "a", "b", 3.0)))
    res = solver.modes(model)
    assert any("do not multiply to 1" in w for w in res.warnings)
    assert res.dofs == (("c", "theta"),)
    assert res.omegas[0] == pytest.approx(math.sqrt(150.0), rel=1e-12)
    with pytest.raises(ModelError, match="disagree"):
        referred_system(model, "a")


def test_gear_refusals():
    """DESIGN.md section 3: a gear on an anchor, on one disc twice, or with a bad ratio is
    refused naming the gear and the field."""
    base = two_shafts()
    for gear, words in ((Gear("g1", "motor", "G", 2.0), ["disc b", "anchor", "G"]),
                        (Gear("g1", "motor", "motor", 2.0), ["two different discs"]),
                        (Gear("g1", "motor", "nowhere", 2.0), ['"nowhere"', "not a disc"])):
        with pytest.raises(ModelError) as info:
            base.with_changes(put=[gear])
        for w in words:
            assert w in str(info.value)
    with pytest.raises(ModelError, match="ratio"):
        Gear("g", "a", "b", -2.0)
    with pytest.raises(ModelError, match="k_mesh"):
        Gear("g", "a", "b", 2.0, k_mesh=0.0)
    # removing a disc removes its gear stages
    assert base.with_changes(remove=["wheel"]).gears == ()


def test_round_trip_of_gears(tmp_path):
    """common practice: a geared model saves and loads back equal; the file holds "gears" with
    k_mesh only where one is given."""
    model = two_shafts(2.5).with_changes(put=[Gear("g2", "wheel", "load", 1.5, k_mesh=4e4,
                                                   label="Final drive")])
    path = tmp_path / "g.json"
    solver.save_model(model, path)
    text = path.read_text("utf-8")
    assert '"gears"' in text and text.count('"k_mesh"') == 1
    assert solver.load_model(path) == model
