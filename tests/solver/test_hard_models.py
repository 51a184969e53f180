"""Hard models: stiff links through massless junctions, stiffness contrast, repeated groups on the
sparse path, honest zero flags and mechanism causes. Each case against a reference outside the
solver: mpmath at 50 digits on matrices built here from the element list (tests/solver/
sw_builders.mp_reference), closed forms, or scipy on a differently formed problem."""

from __future__ import annotations

import math
import re
import sys

import numpy as np
import pytest
import scipy.linalg

import solver
from solver import Anchor, Mass, Model, Spring
from sw_mp import frequencies_hz as mp_frequencies
from sw_builders import (chain, dense, lattice_eigenvalues, mp_rayleigh, mp_reference,
                         square_lattice)

_modes_module = sys.modules["solver.modes"]

E_L = (math.cos(math.radians(30)), math.sin(math.radians(30)))   # (0.866, 0.5)
N_L = (-E_L[1], E_L[0])


def _cautions(res):
    """Warnings other than the note that a group of frequencies is repeated."""
    return [w for w in res.warnings if "share one frequency" not in w]


def junction_link(k_link, k=1000.0, k_mount=1000.0):
    """Three anchors on springs k to a junction J at the origin (one behind J along the link,
    two across it), J joined by a link k_link to a 1 kg mass at (0.866, 0.5), that mass on a
    mount k_mount to an anchor at (1.366, -0.366) (at right angles to the link)."""
    anchors = (Anchor("A1", -E_L[0], -E_L[1]), Anchor("A2", N_L[0], N_L[1]),
               Anchor("A3", -N_L[0], -N_L[1]), Anchor("B", E_L[0] - N_L[0], E_L[1] - N_L[1]))
    return Model(kind="planar", anchors=anchors,
                 masses=(Mass("J", 0.0, 0.0, 0.0), Mass("m", E_L[0], E_L[1], 1.0)),
                 springs=(Spring("s1", "A1", "J", k), Spring("s2", "A2", "J", k),
                          Spring("s3", "A3", "J", k), Spring("link", "J", "m", k_link),
                          Spring("mount", "B", "m", k_mount)))


def junction_link_120(k_link):
    """As in issue 9, item 1, with the three anchors at 0, 120 and 240 degrees around J."""
    anchors = tuple(Anchor(f"A{i}", math.cos(math.radians(a)), math.sin(math.radians(a)))
                    for i, a in enumerate((180, 300, 60))) + (Anchor("B", 1.366, -0.366),)
    return Model(kind="planar", anchors=anchors,
                 masses=(Mass("J", 0.0, 0.0, 0.0), Mass("m", 0.866, 0.5, 1.0)),
                 springs=(Spring("s0", "A0", "J", 1000.0), Spring("s1", "A1", "J", 1000.0),
                          Spring("s2", "A2", "J", 1000.0), Spring("link", "J", "m", k_link),
                          Spring("mount", "B", "m", 1000.0)))


def test_stiff_link_through_a_junction_gives_the_mount_frequency_twice():
    """Issue 9, item 1 (closed form, math): along the link the mass sees k (the anchor spring
    behind J; the two across J do not act along it) in series with the link,
    k k_L / (k + k_L); across it the mount k. With k = 1000 N/m, k_L = 1e12, 1 kg:
    5.0329 Hz twice, no zero mode, no warning but the repeated pair's. rtol 1e-12 against the
    closed form."""
    res = solver.modes(junction_link(1e12))
    k_series = 1000.0 * 1e12 / (1000.0 + 1e12)
    expected = np.sort(np.sqrt([k_series, 1000.0]) / (2 * np.pi))
    np.testing.assert_allclose(res.frequencies_hz, expected, rtol=1e-12)
    np.testing.assert_allclose(res.frequencies_hz, [5.0329, 5.0329], rtol=1e-5)
    assert res.zero_modes == () and _cautions(res) == []


@pytest.mark.parametrize("ratio", [1e6, 1e8, 1e9, 1e10, 1e11, 1e12])
@pytest.mark.parametrize("build", [junction_link, junction_link_120], ids=["axes", "120deg"])
def test_stiff_link_ratios_against_mpmath(build, ratio):
    """mpmath, 50 digits (sw_builders.mp_reference: K assembled and condensed in mpmath from
    the element list): link ratios 1e6..1e12 over k = 1000 N/m; every frequency to rtol 1e-10,
    no zero flag, no caution, and the condensed K semi-definite."""
    model = build(1000.0 * ratio)
    res = solver.modes(model)
    ref = mp_reference(model, dps=50)
    assert ref["n_zero"] == 0
    np.testing.assert_allclose(res.frequencies_hz, ref["hz"], rtol=1e-10)
    assert res.zero_modes == () and _cautions(res) == []
    assert np.all(np.linalg.eigvalsh(dense(res.system.K)) >= -1e-12 * 1000.0)


def two_dof_line(k1, k2):
    """ground - k1 - m1 - k2 - m2, 1 kg masses (issue 9, item 5)."""
    return chain([1.0, 1.0], [k1, k2], left=True, right=False)


@pytest.mark.parametrize("k2", [1e12, 1e15, 1e16])
def test_line_stiffness_contrast_keeps_the_soft_mode(k2):
    """Issue 9, item 5. Closed form (math) for two unit masses, springs k1 = 1 and k2:
    lambda = (k1 + 2 k2 -+ sqrt(k1^2 + 4 k2^2)) / 2, the lower one written without
    cancellation as 2 k1 k2 / (k1 + 2 k2 + sqrt(k1^2 + 4 k2^2)), and mpmath at 50 digits:
    0.1125 Hz for the soft mode (k2 = 1e16: 1 + 1e16 is not a double, so this must come from the
    factored stiffness), never 0 Hz; no zero flag; the stated error estimate within what is
    shown (no accuracy warning). rtol 1e-9."""
    k1 = 1.0
    root = math.sqrt(k1 * k1 + 4 * k2 * k2)
    lam = [2 * k1 * k2 / (k1 + 2 * k2 + root), (k1 + 2 * k2 + root) / 2]
    expected = np.sqrt(lam) / (2 * np.pi)
    res = solver.modes(two_dof_line(k1, k2))
    np.testing.assert_allclose(res.frequencies_hz, expected, rtol=1e-9)
    np.testing.assert_allclose(res.frequencies_hz,
                               mp_reference(two_dof_line(k1, k2), dps=50)["hz"], rtol=1e-9)
    assert round(res.frequencies_hz[0], 4) == 0.1125
    assert res.zero_modes == () and not res.is_zero.any()
    assert np.all(res.frequency_rtol <= _modes_module.DISPLAY_RTOL)
    assert not any("accurate to about" in w for w in res.warnings)


def test_json_output_flags_no_zero_frequency_for_the_contrast_model(tmp_path):
    """Issue 9, item 5 through the command line (DESIGN.md section 5): the 1 / 1e16 model's
    first mode is 0.1125 Hz with zero_frequency false (closed form above)."""
    import json
    import subprocess

    path = tmp_path / "contrast.json"
    solver.save_model(two_dof_line(1.0, 1e16), path)
    out = subprocess.run([sys.executable, "-m", "app.cli", "solve", str(path), "--json"],
                         capture_output=True, text=True, check=True).stdout
    first = json.loads(out)["modes"][0]
    assert first["zero_frequency"] is False
    assert first["frequency_hz"] == pytest.approx(0.11254, rel=1e-4)


def test_sparse_path_warns_when_the_contrast_exceeds_what_is_shown():
    """Shift-invert Lanczos works on the formed K, which holds a 1e14 spring among 1e3 ones
    only to eps x 1e14: its error bound (eps x spectral bound / lambda) exceeds the 6 shown
    digits, so a warning must say so; and whatever the sparse path shows, a frequency whose
    stated error is within the display agrees with the dense factored solve of the same
    model (solver/factor.py: SVD of the stiffness factor, never formed) to that error."""
    n = 620
    ks = [1000.0] * n
    ks[310] = 1e14
    model = chain([1.0] * n, ks, left=True)
    res = solver.modes(model, count=6)
    assert res.method == "shift-invert Lanczos"
    assert any("accurate to about" in w for w in res.warnings)
    ref = solver.modes(model, method="dense")
    assert ref.method == "dense (factored SVD)"
    err = np.abs(res.frequencies_hz - ref.frequencies_hz[:res.n_modes]) / ref.frequencies_hz[
        :res.n_modes]
    assert np.all(err <= np.maximum(res.frequency_rtol, 1e-9))


def test_negative_or_unresolved_eigenvalue_is_never_an_unflagged_zero():
    """Issue 9, items 1 and 5 (math: an eigenvalue that is not positive for a motion that
    strains a spring is rounding, not a result). A model past double precision (springs 1 and
    1e30 N/m on the sparse path, which forms K): every 0 Hz shown is flagged with a cause,
    and a warning says the numbers are not to be trusted."""
    n = 650
    ks = [1.0] * n
    ks[1] = 1e30
    res = solver.modes(chain([1.0] * n, ks, left=True), count=4)
    shown_zero = res.frequencies_hz == 0.0
    assert np.all(res.is_zero[shown_zero])
    for z in res.zero_modes:
        assert z.cause
    assert any("accurate to about" in w or "not positive" in w or "resolved" in w
               for w in res.warnings)


def test_sparse_lattice_returns_the_four_fold_group_whole():
    """Issue 9, item 4: a symmetric 33 x 33 planar lattice (2,178 DOF), k_t = k, lowest 20
    modes on the sparse path. Closed form (sw_builders.square_lattice, math): modes 17-20 are
    one four-fold group ((1, 4) and (4, 1), x and y); also scipy.linalg.eigh (LAPACK,
    independent of Lanczos) on the dense matrices of the same model, solved as its x and y
    blocks (isotropic springs couple no x to y: checked). rtol 1e-9; the group is flagged
    whole and no copy is dropped."""
    n = 33
    model = square_lattice(n, k=1000.0)
    res = solver.modes(model, count=20)
    assert res.method == "shift-invert Lanczos" and len(res.dofs) == 2178
    exact = lattice_eigenvalues(n, k=1000.0)
    assert res.n_modes >= 20
    np.testing.assert_allclose(res.eigenvalues, exact[:res.n_modes], rtol=1e-9)
    assert (17, 18, 19, 20) in res.repeated
    sysm = solver.assemble(model, sparse=False)
    K, M = dense(sysm.K), dense(sysm.M)
    ix = [i for i, (_, d) in enumerate(sysm.dofs) if d == "x"]
    iy = [i for i, (_, d) in enumerate(sysm.dofs) if d == "y"]
    assert np.abs(K[np.ix_(ix, iy)]).max() == 0.0
    lam = np.sort(np.concatenate([
        scipy.linalg.eigh(K[np.ix_(b, b)], M[np.ix_(b, b)], eigvals_only=True,
                          subset_by_index=(0, res.n_modes)) for b in (ix, iy)]))
    np.testing.assert_allclose(res.eigenvalues, lam[:res.n_modes], rtol=1e-9)
    # the cut is at a gap: the next eigenvalue is not a copy of the last one returned
    assert lam[res.n_modes] > lam[res.n_modes - 1] * (1 + 1e-6)


def test_request_ending_inside_a_group_returns_the_whole_group():
    """Closed form of the lattice (sw_builders.lattice_eigenvalues, math): 11 x 11 lattice with
    k_t = k, forced sparse path, a request for 5 modes ends inside the four-fold group 3-6: all
    four come back, and each frequency matches the closed form to rtol 1e-9."""
    model = square_lattice(11, k=500.0)
    res = solver.modes(model, count=5, method="sparse")
    exact = lattice_eigenvalues(11, k=500.0)
    assert res.n_modes == 6
    np.testing.assert_allclose(res.eigenvalues, exact[:6], rtol=1e-9)
    assert (3, 4, 5, 6) in res.repeated


@pytest.mark.parametrize("shift_hz", [0.5, 1.2, 1.7, 2.3])
def test_inertia_count_matches_dense_eigenvalues(shift_hz):
    """Sylvester's law of inertia (math): the count of negative pivots of K - s M that the
    sparse path uses to check itself equals the count of eigenvalues below s from
    scipy.linalg.eigh on the dense matrices (12 x 12 lattice, k_t = 0.3 k)."""
    model = square_lattice(12, k=800.0, k_t=240.0)
    sysm = solver.assemble(model)
    lam = scipy.linalg.eigh(dense(sysm.K), dense(sysm.M), eigvals_only=True)
    s = (2 * np.pi * shift_hz) ** 2
    import scipy.sparse as sp

    count = _modes_module._count_below(sp.csc_matrix(sysm.K), sp.csc_matrix(sysm.M), s)
    assert count == int(np.sum(lam < s))


def _mechanism_models():
    c, s = math.cos(math.radians(30)), math.sin(math.radians(30))
    yield "pendulum", Model(kind="planar", masses=(Mass("m", c, s, 2.0),),
                            anchors=(Anchor("A", 0, 0),), springs=(Spring("s", "A", "m", 800.0),))
    # two masses in line on axial springs: both swing sideways, together or apart
    yield "in-line pair", Model(kind="planar", masses=(Mass("a", 1, 0, 1.0), Mass("b", 2, 0, 3.0)),
                                anchors=(Anchor("A", 0, 0),),
                                springs=(Spring("s1", "A", "a", 100.0),
                                         Spring("s2", "a", "b", 300.0)))
    # a four-bar linkage: a coupler between two rockers moves with no stretch
    yield "four-bar", Model(kind="planar",
                            masses=(Mass("p", 0.0, 1.0, 1.0), Mass("q", 1.0, 1.2, 2.0)),
                            anchors=(Anchor("A", 0, 0), Anchor("B", 1, 0)),
                            springs=(Spring("r1", "A", "p", 500.0), Spring("r2", "B", "q", 700.0),
                                     Spring("c", "p", "q", 900.0)))
    # a mass behind a junction that two non-parallel springs hold: it swings about J's line
    yield "junction", Model(kind="planar",
                            masses=(Mass("J", 1.0, 0.0, 0.0), Mass("m", 2.0, 0.5, 1.5)),
                            anchors=(Anchor("A", 0, 0), Anchor("B", 1, -1)),
                            springs=(Spring("a", "A", "J", 400.0), Spring("b", "B", "J", 400.0),
                                     Spring("l", "J", "m", 1e9)))


@pytest.mark.parametrize("name,model", list(_mechanism_models()), ids=lambda v: v
                         if isinstance(v, str) else "")
def test_mechanism_causes_state_a_free_motion(name, model):
    """Issue 9, item 8. mpmath at 50 digits (sw_builders.mp_reference, K condensed in mpmath):
    the number of zero modes matches the reference; each mechanism's stated motion (its
    ``motion`` and the amplitudes and directions printed in its cause) is a free motion: its
    Rayleigh quotient u^T K u / u^T M u is ~0 next to the largest eigenvalue (1e-12 for the
    stored motion, 1e-5 for the 3-digit text)."""
    res = solver.modes(model)
    ref = mp_reference(model, dps=50)
    assert len(res.zero_modes) == ref["n_zero"]
    mech = [z for z in res.zero_modes if z.kind == "mechanism"]
    assert mech
    for z in mech:
        rq, top = mp_rayleigh(ref, z.motion)
        assert abs(rq) <= 1e-12 * top, (z.cause, rq)
        # the motion read back from the words
        stated = {}
        for mid, size, ux, uy in re.findall(
                r'"([^"]+)" by ([-\d.e+]+) in direction \(([-\d.e+]+), ([-\d.e+]+)\)', z.cause):
            stated[mid] = {"x": float(size) * float(ux), "y": float(size) * float(uy)}
        single = re.match(r'mass "([^"]+)" can move in direction \(([-\d.e+]+), ([-\d.e+]+)\)',
                          z.cause)
        if single:
            stated = {single.group(1): {"x": float(single.group(2)),
                                        "y": float(single.group(3))}}
        assert set(stated) == set(z.masses), z.cause
        rq, top = mp_rayleigh(ref, stated)
        assert abs(rq) <= 1e-5 * top, (z.cause, rq)


@pytest.mark.parametrize("offset", [1e-12, 1e-10, 1e-8, 1e-7, 1e-6, 2e-6, 1e-5])
def test_nearly_straight_layout_is_computed_or_flagged(offset):
    """A 1 kg mass between two 1000 N/m springs to anchors at (-1, 0) and (1, offset): across the
    near-line the stiffness is second order in the angle (about 3.559e-6 Hz at offset 1e-6; it
    was shown as a 0 Hz mechanism). mpmath reference (sw_mp, 60 digits, model data only): every
    frequency shown is right to its own stated accuracy (10x frequency_rtol, at least 1e-12),
    or it is shown as 0 Hz with a zero-frequency flag and a warning."""
    model = Model(kind="planar", masses=(Mass("m", 0, 0, 1.0),),
                  anchors=(Anchor("a", -1, 0), Anchor("b", 1, offset)),
                  springs=(Spring("s1", "a", "m", 1e3), Spring("s2", "m", "b", 1e3)))
    ref = np.array(mp_frequencies(model, 60))
    res = solver.modes(model)
    for i, (f, r) in enumerate(zip(res.frequencies_hz, ref)):
        if f == 0.0:
            assert res.zero_mode(i + 1) is not None and res.warnings
        else:
            assert abs(f - r) <= max(10 * res.frequency_rtol[i], 1e-12) * r
    if offset >= 1e-8:   # an angle well above the geometry's resolution: computed, not flagged
        assert res.zero_modes == ()
        assert res.frequencies_hz[0] == pytest.approx(ref[0], rel=1e-9)
