"""Edge cases found in review: each checked against an independent answer."""

import json

import numpy as np
import pytest
import scipy.linalg

import solver
from solver import Anchor, Damper, Damping, Mass, Model, Spring


def test_planar_junction_between_springs_in_line_does_not_block_the_response():
    """math: springs a-j-m in line along x through a massless junction j act as k/2 in x; the
    junction's y has no stiffness and carries no force. Receptance of m with a dashpot
    c = 4 N s/m to ground: 1 / (k/2 - w^2 m + i w c) at 1 Hz. rtol 1e-12."""
    model = Model(kind="planar", masses=(Mass("j", 1, 0, 0), Mass("m", 2, 0, 2)),
                  anchors=(Anchor("a", 0, 0),),
                  springs=(Spring("s1", "a", "j", 800), Spring("s2", "j", "m", 800)),
                  dampers=(Damper("d", "a", "m", 4),))
    w = 2 * np.pi
    H = solver.harmonic_response(model, [1.0], {("m", "x"): 1.0})
    i = solver.assemble(model).dof_index("m", "x")
    assert H[0, i] == pytest.approx(1 / (400 - w * w * 2 + 1j * w * 4), rel=1e-12)
    T = solver.base_transmissibility(model, [1.0], "x")
    assert np.all(np.isfinite(T))


def test_damping_matrix_includes_the_damping_model():
    """Chopra, Dynamics of Structures, 11.4 (mem): Rayleigh C = alpha M + beta K; one mode with
    modal ratio zeta has c = 2 zeta w m. m = 2 kg, k = 800 N/m (w = 20 rad/s)."""
    base = Model(kind="line", masses=(Mass("m", 1, 0, 2),), anchors=(Anchor("g", 0, 0),),
                 springs=(Spring("s", "g", "m", 800),))
    ray = base.with_changes(damping=Damping("rayleigh", alpha=1.0, beta=1e-3))
    assert solver.assemble(ray).C[0, 0] == pytest.approx(1.0 * 2 + 1e-3 * 800, rel=1e-14)
    modal = base.with_changes(damping=Damping("modal", ratio=0.05))
    assert solver.assemble(modal).C[0, 0] == pytest.approx(2 * 0.05 * 20 * 2, rel=1e-12)
    dash = base.with_changes(dampers=(Damper("c", "g", "m", 4.0),),
                             damping=Damping("modal", ratio=0.05))
    system = solver.assemble(dash)
    assert system.C[0, 0] == pytest.approx(4.0 + 4.0, rel=1e-12)
    assert system.C_dashpots[0, 0] == pytest.approx(4.0)


def test_stiff_link_in_a_planar_model_is_not_a_mechanism():
    """scipy.linalg.eigh(K, M) (REFERENCES.md section 10): two 5 kg masses on soft isolators
    joined by a link a hundred billion times stiffer keep a real, non-zero lowest mode.
    rtol 1e-4 (the stiffness contrast limits double precision)."""
    model = Model(kind="planar", masses=(Mass("a", 0, 0, 5), Mass("b", 1, 0, 5)),
                  anchors=(Anchor("g1", -.5, -.5), Anchor("g2", 1.5, -.5), Anchor("g3", .5, -1)),
                  springs=(Spring("i1", "g1", "a", 2000), Spring("i2", "g2", "b", 2000),
                           Spring("i3", "g3", "a", 2000), Spring("i4", "g3", "b", 2000),
                           Spring("L", "a", "b", 1e14, k_t=1e14)))
    res = solver.modes(model)
    assert res.zero_modes == ()
    system = solver.assemble(model)
    lam = scipy.linalg.eigh(system.K, system.M, eigvals_only=True)
    np.testing.assert_allclose(res.omegas[:2], np.sqrt(lam[:2]), rtol=1e-4)


def test_sparse_path_frequencies_of_a_free_lattice_match_dense():
    """scipy.linalg.eigh (REFERENCES.md section 10): a free planar 12 x 12 lattice with
    diagonals (288 DOF, three rigid-body modes); the shift-invert path's lowest elastic
    frequencies equal the dense ones to rtol 1e-9. Modes 8 and 9 are a repeated pair, so a
    request for 8 returns the whole pair (9 modes)."""
    n = 12
    masses = tuple(Mass(f"n{i}_{j}", float(i), float(j), 1.0) for i in range(n) for j in range(n))
    springs = []
    for i in range(n):
        for j in range(n):
            for di, dj in ((1, 0), (0, 1), (1, 1)):
                if i + di < n and j + dj < n:
                    springs.append(Spring(f"s{i}_{j}_{di}{dj}", f"n{i}_{j}", f"n{i + di}_{j + dj}",
                                          1e4))
    model = Model(kind="planar", masses=masses, springs=tuple(springs))
    sparse = solver.modes(model, count=8, method="sparse")
    dense = solver.modes(model, method="dense")
    assert [z.kind for z in sparse.zero_modes] == ["rigid"] * 3
    assert sparse.n_modes == 9
    np.testing.assert_allclose(sparse.omegas[3:], dense.omegas[3:9], rtol=1e-9)


def test_free_response_of_a_large_model_starts_at_its_initial_condition():
    """math: x(0) = x0 for any model; on 1,100 DOF (above the dense default) the modal free
    response still uses every mode. atol 1e-12 m."""
    n = 1100
    model = Model(kind="line", masses=tuple(Mass(f"m{i}", float(i + 1), 0, 1.0) for i in range(n)),
                  anchors=(Anchor("g", 0, 0),),
                  springs=tuple(Spring(f"s{i}", "g" if i == 0 else f"m{i - 1}", f"m{i}", 1e4)
                                for i in range(n)))
    fr = solver.free_response(model, [0.0], x0={("m0", "x"): 1e-3})
    assert fr.of("m0", "x")[0] == pytest.approx(1e-3, abs=1e-12)
    assert np.abs(fr.displacement[0, 1:]).max() < 1e-12


def test_damping_parameters_default_to_zero_in_the_file(tmp_path):
    """DESIGN.md section 4: everything but format, version, kind and element values has a
    default; a Rayleigh entry may give alpha alone."""
    path = tmp_path / "m.json"
    path.write_text(json.dumps({"format": "springwright-model", "version": 1, "kind": "line",
                                "damping": {"model": "rayleigh", "alpha": 0.1}}))
    model = solver.load_model(path)
    assert (model.damping.alpha, model.damping.beta) == (0.1, 0.0)


def test_values_beyond_double_precision_are_refused_with_the_element():
    """common practice: a mass of 1e-320 kg is a units mistake; the solver says which element
    instead of returning NaN."""
    with pytest.raises(solver.ModelError, match="tiny"):
        Model(kind="line", masses=(Mass("tiny", 1, 0, 1e-320),), anchors=(Anchor("g", 0, 0),),
              springs=(Spring("s", "g", "tiny", 1.0),))
    # within the accepted range but 1e25 apart: the solver still names the problem
    model = Model(kind="line", masses=(Mass("tiny", 1, 0, 1e-20),), anchors=(Anchor("g", 0, 0),),
                  springs=(Spring("s", "g", "tiny", 1e6),))
    try:
        res = solver.modes(model)
    except solver.ModelError as exc:
        assert "tiny" in str(exc) or "range" in str(exc)
    else:
        assert np.all(np.isfinite(res.frequencies_hz))


def test_subnormal_values_are_refused_when_the_model_is_built_and_loaded(tmp_path):
    """common practice: 5e-324 N/m or kg is no physical value; the element, the field and the
    allowed range are named, in the model and in the file (ModelFileError)."""
    with pytest.raises(solver.ModelError, match=r'spring "s".*1e-30 to 1e\+30'):
        Spring("s", "g", "m", 5e-324)
    path = tmp_path / "sub.json"
    path.write_text(json.dumps({
        "format": "springwright-model", "version": 1, "kind": "line",
        "masses": [{"id": "m", "x": 1, "y": 0, "mass": 5e-324}],
        "anchors": [{"id": "g", "x": 0, "y": 0}],
        "springs": [{"id": "s", "a": "g", "b": "m", "k": 1000}]}))
    with pytest.raises(solver.ModelFileError, match=r'mass "m"'):
        solver.load_model(path)


@pytest.mark.parametrize("call", [
    lambda m: solver.harmonic_response(m, ["a"], {("m", "x"): 1.0}),
    lambda m: solver.harmonic_response(m, [1.0], {("m", "x"): "abc"}),
    lambda m: solver.base_transmissibility(m, "fast", "x"),
    lambda m: solver.free_response(m, ["a"]),
    lambda m: solver.free_response(m, [0.1], x0={("zz", "x"): 1.0}),
    lambda m: solver.free_response(m, [0.1], x0={("m", "x"): "five"}),
    lambda m: solver.sweep(m, "s", ["a"]),
    lambda m: solver.retune(m, "s", 1, "abc"),
    lambda m: solver.retune(m, "s", 1, None),
    lambda m: solver.margin_check(m, solver.modes(m), margin_percent="a"),
    lambda m: solver.load_model(None),
    lambda m: solver.save_model("not a model", "x.json"),
], ids=["freqs", "force", "base-freqs", "times", "ic-id", "ic-value", "sweep", "target",
        "target-none", "margin", "load-none", "save-type"])
def test_bad_arguments_raise_model_error_only(call):
    """DESIGN.md: bad input raises solver.ModelError (ModelFileError for files) with a message,
    never another exception type."""
    model = Model(kind="line", masses=(Mass("m", 1, 0, 2.0),), anchors=(Anchor("g", 0, 0),),
                  springs=(Spring("s", "g", "m", 800.0),))
    with pytest.raises(solver.ModelError) as info:
        call(model)
    assert type(info.value) in (solver.ModelError, solver.ModelFileError)
    assert str(info.value)


def test_readme_scripting_example_runs():
    """The README's scripting lines run as written on the example they name, and the retuned
    stiffness puts mode 1 on 7.0 Hz (checked by a fresh solve, rtol 1e-9)."""
    import pathlib
    import re

    root = pathlib.Path(__file__).resolve().parents[2]
    text = (root / "README.md").read_text("utf-8")
    block = re.search(r"```python\n(.*?)```", text, re.S).group(1)
    env = {}
    import os

    cwd = os.getcwd()
    os.chdir(root)
    try:
        exec(compile(block, "README.md", "exec"), env)
    finally:
        os.chdir(cwd)
    k = env["k"]
    model = solver.with_value(env["model"], "post1", k)
    assert solver.modes(model).frequencies_hz[0] == pytest.approx(7.0, rel=1e-9)
    assert env["H"].shape == (2, len(solver.assemble(env["model"]).dofs))


def test_dashpot_between_two_masses_damps_the_free_response():
    """A dashpot joining two free masses (no dashpot to ground) makes damping non-proportional:
    the free response is exp(A t) of the hand-built state matrix [[0, I], [-M^-1 K, -M^-1 C]]
    (scipy.linalg.expm), not the undamped modal sum. atol 1e-12 m."""
    model = Model(kind="line", masses=(Mass("m1", 1, 0, 1.0), Mass("m2", 2, 0, 2.0)),
                  anchors=(Anchor("g", 0, 0),),
                  springs=(Spring("s1", "g", "m1", 400.0), Spring("s2", "m1", "m2", 300.0)),
                  dampers=(Damper("d", "m1", "m2", 3.0),))
    M = np.diag([1.0, 2.0])
    K = np.array([[700.0, -300.0], [-300.0, 300.0]])
    C = np.array([[3.0, -3.0], [-3.0, 3.0]])
    A = np.block([[np.zeros((2, 2)), np.eye(2)],
                  [-np.linalg.solve(M, K), -np.linalg.solve(M, C)]])
    z0 = np.array([0.01, 0.0, 0.0, 0.0])
    t = np.array([0.0, 0.3, 1.0, 2.5])
    res = solver.free_response(model, t, x0={("m1", "x"): 0.01})
    ref = np.array([scipy.linalg.expm(A * ti) @ z0 for ti in t])[:, :2]
    np.testing.assert_allclose(res.displacement, ref, atol=1e-12)
    undamped = solver.free_response(model, t, x0={("m1", "x"): 0.01}, damped=False)
    assert np.abs(undamped.displacement[-1] - ref[-1]).max() > 1e-4   # the test can tell


def test_loose_junction_direction_does_not_spoil_the_direct_solve():
    """A massless junction on one axial spring drawn at 30 degrees carries no load; its sideways
    direction is held by nothing. Direct and modal responses equal those of the model without
    it (force and base input, undamped and Rayleigh), rtol 1e-10 (math: the junction adds no
    stiffness, mass or damping to the masses)."""
    c, s = np.cos(np.pi / 6), np.sin(np.pi / 6)
    anchors = (Anchor("A", -1, 0), Anchor("B", 0, -1))
    with_j = Model(kind="planar", anchors=anchors,
                   masses=(Mass("P", 0, 0, 1.0), Mass("J", c, s, 0.0)),
                   springs=(Spring("s1", "A", "P", 1000.0), Spring("s2", "B", "P", 400.0),
                            Spring("sJ", "P", "J", 500.0)))
    without = with_j.with_changes(remove=["J"])
    f = np.linspace(0.5, 10, 120)
    for d in (Damping(), Damping(model="rayleigh", alpha=0.3, beta=1e-4)):
        a, b = with_j.with_changes(damping=d), without.with_changes(damping=d)
        ref = solver.harmonic_response(b, f, {("P", "x"): 1.0})
        fin = np.isfinite(ref).all(axis=1)
        for method in ("direct", "modal"):
            X = solver.harmonic_response(a, f, {("P", "x"): 1.0}, method=method)
            np.testing.assert_allclose(X[fin], ref[fin], rtol=1e-10,
                                       atol=1e-12 * np.abs(ref[fin]).max())
        T = solver.base_transmissibility(a, f, "x")
        Tr = solver.base_transmissibility(b, f, "x")
        np.testing.assert_allclose(T[fin], Tr[fin], rtol=1e-10, atol=1e-12)


def test_long_junction_chain_is_condensed_exactly():
    """A fixed-free chain of 2 masses joined through 2,100 massless junctions (more than the
    dense condensation handles) has the frequencies of the two masses on the series springs:
    k_eff = k / (n + 1) (springs in series, math); rtol 1e-9."""
    n_j, k, m = 2100, 1e6, 1.0
    nodes = [Mass("m1", 0, 0, m)] + [Mass(f"j{i}", i + 1, 0, 0.0) for i in range(n_j)] + \
        [Mass("m2", n_j + 1, 0, m)]
    ids = ["m1"] + [f"j{i}" for i in range(n_j)] + ["m2"]
    springs = [Spring("g", "A", "m1", k)] + [Spring(f"s{i}", ids[i], ids[i + 1], k)
                                              for i in range(len(ids) - 1)]
    model = Model(kind="line", masses=tuple(nodes), anchors=(Anchor("A", -1, 0),),
                  springs=tuple(springs))
    k2 = k / (n_j + 1)
    K = np.array([[k + k2, -k2], [-k2, k2]])
    expected = np.sqrt(np.linalg.eigvalsh(K / m)) / (2 * np.pi)
    np.testing.assert_allclose(solver.modes(model).frequencies_hz, expected, rtol=1e-9)


def test_find_peaks_counts_an_undamped_resonance_once_and_skips_plateaus():
    """common practice: a resonance hit exactly on the grid (non-finite samples) is one peak of
    infinite amplitude; a curve easing onto its high-frequency level has no peak there; a
    ripple below the prominence ratio is not a peak."""
    f = np.linspace(1.0, 10.0, 91)
    a = 1.0 / np.abs(1.0 - (f / 4.0) ** 2 + 1e-300)
    a[np.argmin(np.abs(f - 4.0))] = np.inf
    (p,) = solver.find_peaks(f, a)
    assert p.frequency_hz == pytest.approx(4.0) and p.amplitude == np.inf
    plateau = 1.0 + 0.002 * np.exp(-((f - 7.0) ** 2))     # a 0.2 % bump on a level
    assert solver.find_peaks(f, plateau) == []
    sdof = 1.0 / np.sqrt((1 - (f / 5) ** 2) ** 2 + (0.1 * f / 5) ** 2)
    (q,) = solver.find_peaks(f, sdof)
    assert q.frequency_hz == pytest.approx(5.0 * np.sqrt(1 - 2 * 0.05 ** 2), rel=2e-3)


def test_undamped_combination_of_damped_junction_directions_is_loose():
    """Two massless junctions joined only by a dashpot: each alone is damped, but moving both
    together is held and damped by nothing; the mass's receptance is the single-DOF
    1/(k - m w^2) (math), finite at every frequency."""
    model = Model(kind="line", masses=(Mass("m", 1, 0, 2.0), Mass("J1", 2, 0, 0.0),
                                       Mass("J2", 3, 0, 0.0)),
                  anchors=(Anchor("g", 0, 0),), springs=(Spring("s", "g", "m", 1000.0),),
                  dampers=(Damper("d", "J1", "J2", 3.0),))
    f = np.linspace(0.5, 8.0, 40)
    w = 2 * np.pi * f
    H = solver.harmonic_response(model, f, {("m", "x"): 1.0})[:, 0]
    np.testing.assert_allclose(H, 1.0 / (1000.0 - 2.0 * w ** 2), rtol=1e-10)


def test_free_planar_pair_with_transverse_stiffness_warns_about_rotation():
    """math (k eeT + k_t nnT per spring): a free planar pair has three rigid modes with k_t = 0
    and two with k_t > 0 (rigid rotation strains k_t); the model says so."""
    def pair(kt):
        return Model(kind="planar", masses=(Mass("a", 0, 0, 1.0), Mass("b", 1, 0, 1.0)),
                     springs=(Spring("s", "a", "b", 1000.0, k_t=kt),))
    assert len(solver.modes(pair(0.0)).zero_modes) == 3
    res = solver.modes(pair(50.0))
    assert len(res.zero_modes) == 2
    assert any("rigid-body modes" in w for w in res.warnings)


def test_loose_junctions_among_thousands_are_found_and_taken_out():
    """Beyond the dense condensation limit (1,010 planar junctions here), a rotated pair of
    junctions whose sideways directions nothing holds is still detected (warned) and taken out:
    the FRF of the mass equals the model without the filler junctions (they are held and
    unconnected to it), rtol 1e-9 (math: they add nothing to the mass's equations)."""
    import math

    def build(n_fill, ang=0.523):
        masses = [Mass("m", 0, 0, 2.0)]
        anchors = [Anchor("g", -1, 0), Anchor("h", 0, -1)]
        springs = [Spring("sg", "g", "m", 1000.0), Spring("sh", "h", "m", 1500.0)]
        c, s = math.cos(ang), math.sin(ang)
        masses.append(Mass("J1", c, s, 0.0))
        springs.append(Spring("s1", "m", "J1", 700.0))
        masses.append(Mass("J2", c - s * 0.7, s + c * 0.7, 0.0))
        springs.append(Spring("s2", "J1", "J2", 300.0))
        for i in range(n_fill):
            x = 10 + i
            masses.append(Mass(f"F{i}", x, 5, 0.0))
            anchors += [Anchor(f"A{i}", x, 4), Anchor(f"B{i}", x + 1, 5)]
            springs += [Spring(f"fa{i}", f"A{i}", f"F{i}", 100.0),
                        Spring(f"fb{i}", f"B{i}", f"F{i}", 100.0)]
        return Model(kind="planar", masses=tuple(masses), anchors=tuple(anchors),
                     springs=tuple(springs))

    big, small = build(1010), build(0)
    assert any("held by no" in w for w in solver.assemble(big).warnings)
    f = [1.0, 2.0, 3.0]
    H = solver.harmonic_response(big, f, {("m", "x"): 1.0})
    Hs = solver.harmonic_response(small, f, {("m", "x"): 1.0})
    ib = solver.assemble(big).dofs.index(("m", "x"))
    i_s = solver.assemble(small).dofs.index(("m", "x"))
    np.testing.assert_allclose(H[:, ib], Hs[:, i_s], rtol=1e-9)


def test_a_model_with_every_mass_locked_is_analysed_with_no_mode(tmp_path, capsys):
    """common practice: a mass locked in its only direction cannot move, so a model whose
    every mass is locked has no degree of freedom and no mode (the eigenproblem is 0 x 0). The
    full analysis (energy shares and sensitivities included) says so instead of failing inside
    (it raised ValueError from the spring stretch of no motion), and the command line prints it
    with exit 0."""
    from app import cli

    model = Model(kind="line", name="locked", masses=(Mass("m1", 0.2, 0.0, 2.0, fixed=("x",)),),
                  anchors=(Anchor("g", 0.0, 0.0),), springs=(Spring("s1", "g", "m1", 1000.0),))
    analysis = solver.analyse(model)
    assert analysis.n_modes == 0
    assert analysis.energy.strain.shape == (0, 1)
    assert analysis.sensitivity.dlambda_dk.shape == (0, 1)
    assert any("locked" in w for w in analysis.warnings)
    path = tmp_path / "locked.json"
    solver.save_model(model, path)
    assert cli.main(["solve", str(path)]) == 0
    out = capsys.readouterr().out
    assert "0 DOF" in out and "nothing can move" in out
