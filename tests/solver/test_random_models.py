"""Properties that hold for every valid model (hypothesis), each from an identity of the maths.

Random models of all three kinds: random masses (some massless junctions), springs, anchors, planar
positions with transverse stiffness k_t, locked directions; with ``contrast=True`` also springs up
to 1e12 times stiffer than the rest and massless junctions on stiff links. High-precision
references come from mpmath (sw_builders.mp_reference: M and K built in mpmath from the element
list and condensed exactly).
"""

from __future__ import annotations

import copy
import json
import os

import numpy as np
import scipy.linalg
from hypothesis import HealthCheck, Phase, assume, given, settings
from hypothesis import strategies as st

import solver
from solver import (Anchor, Damping, Excitation, Initial, Mass, Model, ModelFileError, Spring)
from sw_builders import dense, mp_rayleigh, mp_reference

#: more examples for a bug hunt: SW_EXAMPLES=2000 pytest tests/solver/test_properties.py
EXAMPLES = int(os.environ.get("SW_EXAMPLES", "50"))
FAST = settings(max_examples=EXAMPLES, deadline=None, phases=[Phase.explicit, Phase.reuse, Phase.generate, Phase.target],
                suppress_health_check=[HealthCheck.function_scoped_fixture,
                                       HealthCheck.too_slow])


@st.composite
def models(draw, kinds=("line", "planar", "torsion"), extras=False, contrast=False,
           max_mass=6, fixed=True, bodies=False):
    """A valid random model. ``contrast``: some springs 1e6..1e12 times stiffer than the rest
    (10..1e4 N/m), and up to two massless junctions each joined to a mass by such a stiff link
    and held by soft springs. ``fixed=False``: no locked directions (layouts that must not
    depend on the axes). ``bodies``: planar masses may be rigid bodies (an inertia, springs and
    dashpots attached off their centres), torsion discs may be joined by gear stages (rigid or
    with a mesh stiffness)."""
    kind = draw(st.sampled_from(kinds))
    n_mass = draw(st.integers(1, max_mass))
    n_anchor = draw(st.integers(0, 2))
    n_link = draw(st.integers(0, 2)) if contrast else 0
    # distinct grid points with jitter, so no planar spring has zero length
    n_cells = n_mass + n_anchor + n_link
    cells = draw(st.lists(st.tuples(st.integers(0, 4), st.integers(0, 4)), min_size=n_cells,
                          max_size=n_cells, unique=True))
    jitter = draw(st.lists(st.floats(-0.3, 0.3), min_size=2 * len(cells), max_size=2 * len(cells)))
    pos = [(cx + jitter[2 * i], cy + jitter[2 * i + 1]) for i, (cx, cy) in enumerate(cells)]
    dirs = solver.directions_for(kind)
    masses = []
    for i in range(n_mass):
        value = draw(st.one_of(st.just(0.0), st.floats(0.1, 10.0))) if i else draw(
            st.floats(0.1, 10.0))
        locked = ()
        if fixed and kind == "planar" and draw(st.integers(0, 5)) == 0:
            locked = (draw(st.sampled_from(dirs)),)
        label = draw(st.sampled_from(["", "top", "disc Ø"])) if extras else ""
        inertia = 0.0
        if bodies and kind == "planar" and value > 0 and draw(st.booleans()):
            inertia = draw(st.floats(0.01, 5.0))
            if fixed and draw(st.integers(0, 5)) == 0:
                locked = ("theta",)
        masses.append(Mass(f"m{i}", pos[i][0], pos[i][1], value, label=label, fixed=locked,
                           inertia=inertia))
    anchors = [Anchor(f"A{j}", *pos[n_mass + j]) for j in range(n_anchor)]
    nodes = [m.id for m in masses] + [a.id for a in anchors]
    pairs = draw(st.lists(st.tuples(st.integers(0, len(nodes) - 1),
                                    st.integers(0, len(nodes) - 1)).filter(lambda p: p[0] != p[1]),
                          min_size=1 if len(nodes) > 1 else 0, max_size=9))
    springs = []
    for s, (a, b) in enumerate(pairs):
        if a >= n_mass and b >= n_mass:
            continue  # anchor to anchor: no effect
        k = draw(st.floats(10.0, 1e4))
        kt = draw(st.one_of(st.just(0.0), st.floats(1.0, 1e3))) if kind == "planar" else 0.0
        if contrast and draw(st.integers(0, 3)) == 0:
            stiff = 10.0 ** draw(st.floats(6.0, 12.0))
            k, kt = k * stiff, kt * (stiff if draw(st.booleans()) else 1.0)
        springs.append(Spring(f"s{s}", nodes[a], nodes[b], k, k_t=kt,
                              a_offset=_attachment(draw, masses, a, bodies),
                              b_offset=_attachment(draw, masses, b, bodies)))
    for j in range(n_link):
        jid = f"J{j}"
        masses.append(Mass(jid, *pos[n_mass + n_anchor + j], 0.0))
        held = draw(st.sampled_from([m.id for m in masses if m.mass > 0]))
        stiff = draw(st.floats(10.0, 1e4)) * 10.0 ** draw(st.floats(6.0, 12.0))
        springs.append(Spring(f"L{j}", jid, held, stiff))
        for t, other in enumerate(draw(st.lists(st.sampled_from(nodes), min_size=1, max_size=3,
                                                unique=True))):
            if other != held:
                springs.append(Spring(f"L{j}_{t}", other, jid, draw(st.floats(10.0, 1e4))))
    top = {}
    if bodies and kind == "torsion" and n_mass > 1:
        gears = []
        for g in range(draw(st.integers(0, 2))):
            a, b = draw(st.lists(st.integers(0, n_mass - 1), min_size=2, max_size=2, unique=True))
            k_mesh = draw(st.one_of(st.none(), st.floats(10.0, 1e6)))
            gears.append(solver.Gear(f"g{g}", f"m{a}", f"m{b}", draw(st.floats(0.2, 5.0)),
                                     k_mesh=k_mesh))
        top["gears"] = tuple(gears)
    if bodies and kind == "planar" and n_mass > 1 and draw(st.booleans()):
        a, b = draw(st.lists(st.integers(0, n_mass - 1), min_size=2, max_size=2, unique=True))
        top["dampers"] = (solver.Damper("c1", f"m{a}", f"m{b}", draw(st.floats(0.1, 50.0)),
                                        a_offset=_attachment(draw, masses, a, True),
                                        b_offset=_attachment(draw, masses, b, True)),)
    if extras:
        dm = draw(st.sampled_from(["none", "modal", "rayleigh"]))
        if dm == "modal":
            top["damping"] = Damping("modal", ratio=draw(st.floats(0, 0.3)),
                                     mode_ratios=((1, draw(st.floats(0, 0.5))),))
        elif dm == "rayleigh":
            top["damping"] = Damping("rayleigh", alpha=draw(st.floats(0, 5)),
                                     beta=draw(st.floats(0, 1e-3)))
        if draw(st.booleans()):
            top["excitations"] = (Excitation("e1", "speed", rpm=draw(st.floats(1, 6000)),
                                             orders=(1.0, 2.0)),
                                  Excitation("e2", "band", f_min_hz=5.0, f_max_hz=12.5))
        top["margin_percent"] = draw(st.floats(0, 99))
        top["name"] = draw(st.text(max_size=8))
        free = [d for d in dirs + ("theta",) * (masses[0].inertia > 0)
                if d not in masses[0].fixed]
        if free and draw(st.booleans()):
            top["initial"] = (Initial("m0", displacement=((free[0], draw(st.floats(-1, 1))),),
                                      velocity=((free[0], draw(st.floats(-1, 1))),)),)
    return Model(kind=kind, masses=tuple(masses), anchors=tuple(anchors), springs=tuple(springs),
                 **top)


def _attachment(draw, masses, index, bodies):
    """An offset of at most 0.1 m in each axis on a rigid body (grid cells 1 m apart, jitter
    0.3 m: attachment points never meet), else the centre."""
    if not bodies or index >= len(masses) or not masses[index].inertia > 0:
        return (0.0, 0.0)
    return (draw(st.floats(-0.1, 0.1)), draw(st.floats(-0.1, 0.1)))


def _norm(a):
    return max(float(np.linalg.norm(a, 2)), 1e-300)


@FAST
@given(models())
def test_eigen_properties(model):
    """math: K phi = w^2 M phi with real w >= 0 ascending, Phi^T M Phi = I, and the effective masses
    over all modes sum to r^T M r, the mass free to move in each direction (ECSS glossary,
    "effective modal mass", note 2)."""
    r = solver.modes(model)
    sysm = r.system
    if sysm.n_dof == 0:
        assert r.n_modes == 0
        return
    K, M = dense(sysm.K), dense(sysm.M)
    lam, phi = r.eigenvalues, r.shapes
    assert np.isrealobj(lam) and np.all(np.isfinite(lam)) and np.all(lam >= 0)
    assert np.all(np.diff(lam) >= 0)
    assert r.n_modes == sysm.n_dof
    np.testing.assert_allclose(phi.T @ M @ phi, np.eye(r.n_modes), atol=1e-9)
    resid = K @ phi - M @ phi * lam
    # relative to the springs before condensation: a condensed K can be pure rounding
    scale = max(_norm(K), _norm(dense(sysm.K_full))) * np.linalg.norm(phi, axis=0)
    assert np.all(np.linalg.norm(resid, axis=0) <= 1e-9 * scale)
    for d in sysm.directions:
        rv = sysm.influence(d)
        np.testing.assert_allclose(r.effective_mass[d].sum(), rv @ M @ rv, rtol=1e-9, atol=1e-12)
        np.testing.assert_allclose(r.total_mass[d], rv @ M @ rv, rtol=1e-12)


def _distinct_modes(lam, zero_flags, gap=1e-3):
    out = []
    for i, v in enumerate(lam):
        if zero_flags[i] or v <= 1e-8 * lam.max():
            continue
        neighbours = [lam[j] for j in (i - 1, i + 1) if 0 <= j < len(lam)]
        if all(abs(v - u) > gap * v for u in neighbours):
            out.append(i)
    return out


@FAST
@given(models(), st.data())
def test_sensitivities_match_central_differences(model, data):
    """Fox and Kapoor, AIAA J. 6(12), 1968 (mem): d lambda/dk_e = (phi_a - phi_b)^2 and
    d lambda/dm_j = -lambda |phi_j|^2 for distinct modes, against central finite differences of
    the solver's eigenvalues with one spring's k (or k_t) or one mass changed."""
    assume(model.springs)
    a = solver.analyse(model)
    lam = a.modal.eigenvalues
    modes_ok = _distinct_modes(lam, a.modal.is_zero, gap=1e-2)
    assume(modes_ok)
    # Rounding in the solver's eigenvalues (condensation of junctions included) is some 1e-14 of
    # the uncondensed stiffness scale; a central difference with step h turns that into an error
    # of ~noise/h, so the tolerance carries it (10x margin) next to rtol for the O(h^2) term.
    heavy_mass = [m.mass for m in model.masses if m.mass > 0]
    noise = 1e-13 * float(np.abs(dense(a.system.K_full)).max()) / min(heavy_mass)
    s_index = data.draw(st.integers(0, len(model.springs) - 1))
    spring = model.springs[s_index]
    which = "k_t" if model.kind == "planar" and spring.k_t > 0 and data.draw(st.booleans()) else "k"
    value = getattr(spring, which)
    h = 1e-4 * value

    def lam_with(v):
        changed = model.with_changes(put=[Spring(spring.id, spring.a, spring.b,
                                                 **{"k": spring.k, "k_t": spring.k_t, which: v})])
        return solver.modes(changed).eigenvalues

    fd = (lam_with(value + h) - lam_with(value - h)) / (2 * h)
    analytic = (a.sensitivity.dlambda_dk if which == "k" else a.sensitivity.dlambda_dkt)[:, s_index]
    for i in modes_ok:
        assert a.sensitivity.valid[i]
        np.testing.assert_allclose(analytic[i], fd[i], rtol=1e-4, atol=noise / h)
    heavy = [j for j, m in enumerate(model.masses) if m.mass > 0]
    j = data.draw(st.sampled_from(heavy))
    mass = model.masses[j]
    hm = 1e-4 * mass.mass

    def lam_mass(v):
        return solver.modes(model.with_changes(put=[Mass(mass.id, mass.x, mass.y, v,
                                                         fixed=mass.fixed)])).eigenvalues

    fdm = (lam_mass(mass.mass + hm) - lam_mass(mass.mass - hm)) / (2 * hm)
    for i in modes_ok:
        np.testing.assert_allclose(a.sensitivity.dlambda_dm[i, j], fdm[i], rtol=1e-4,
                                   atol=noise / hm)


@FAST
@given(models(), st.data())
def test_stiffening_never_lowers_a_frequency(model, data):
    """Rayleigh's theorem (Courant-Fischer, math): raising any spring's stiffness never lowers any
    natural frequency."""
    assume(model.springs)
    s = data.draw(st.sampled_from(model.springs))
    factor = data.draw(st.floats(1.01, 10.0))
    stiffer = model.with_changes(put=[Spring(s.id, s.a, s.b, s.k * factor, k_t=s.k_t)])
    before, after = solver.modes(model).eigenvalues, solver.modes(stiffer).eigenvalues
    assert len(before) == len(after)
    tol = 1e-9 * max(float(after.max(initial=0.0)), 1e-300)
    assert np.all(after >= before - tol)


@FAST
@given(models(extras=True, bodies=True))
def test_save_load_round_trip(tmp_path_factory, model):
    """common practice: a saved model file loads back as the same model (load_model(save_model(m))
    == m), and saving the loaded model gives the same text."""
    path = tmp_path_factory.mktemp("rt") / "model.json"
    solver.save_model(model, path)
    back = solver.load_model(path)
    assert back == model
    assert solver.dumps_model(back) == path.read_text("utf-8")


# ------------------------------------------------------------------ hard models, invariances
#: fewer examples for the tests with an mpmath reference (each solves a small model at 40 digits)
HARD = settings(FAST, max_examples=max(EXAMPLES * 3 // 5, 1))


def _accuracy_warned(res):
    return any("accurate to about" in w or "not positive" in w or "resolved" in w
               for w in res.warnings)


@HARD
@given(models(contrast=True, max_mass=4))
def test_frequencies_match_mpmath_on_stiff_models(model):
    """mpmath at 40 digits (sw_builders.mp_reference: own assembly in mpmath, exact condensation
    of junctions, mpmath.eigsy): with stiffness contrasts up to 1e12 and junctions on stiff
    links, the zero modes are the exact ones in number, no frequency shown as 0 Hz is unflagged,
    every frequency is within 10x its stated error estimate (and within 1e-6 when no accuracy
    warning is given), and every mechanism's stated motion is free (Rayleigh quotient ~0)."""
    res = solver.modes(model)
    ref = mp_reference(model, dps=40)
    if res.n_modes == 0:
        assert ref["hz"].size == 0
        return
    assert [z.kind for z in res.zero_modes].count("unresolved") == 0
    assert len(res.zero_modes) == ref["n_zero"]
    assert np.all(res.is_zero[res.frequencies_hz == 0.0])
    nz = ref["n_zero"]
    f, fr = res.frequencies_hz[nz:], ref["hz"][nz:]
    err = np.abs(f - fr) / fr
    assert np.all(err <= np.maximum(10 * res.frequency_rtol[nz:], 1e-11)), (err, res.frequency_rtol)
    if not _accuracy_warned(res):
        assert np.all(err <= 1e-6)
    for z in res.zero_modes:
        if z.kind == "mechanism":
            rq, top = mp_rayleigh(ref, z.motion)
            assert abs(rq) <= 1e-9 * top, z.cause


def _compare_spectra(a, b, scale=1.0):
    """Frequencies of b equal scale x those of a: same zero flags, nonzero ones to rtol 1e-9 or
    10x the stated error estimates."""
    assert a.n_modes == b.n_modes
    assert len(a.zero_modes) == len(b.zero_modes)
    nz = len(a.zero_modes)
    fa, fb = scale * a.frequencies_hz[nz:], b.frequencies_hz[nz:]
    tol = np.maximum(1e-9, 10 * (a.frequency_rtol[nz:] + b.frequency_rtol[nz:]))
    assert np.all(np.abs(fa - fb) <= tol * np.abs(fa)), (fa, fb)


def _moved(model, fn):
    """The model with every mass and anchor position mapped by fn(x, y) -> (x, y)."""
    put = [Mass(m.id, *fn(m.x, m.y), m.mass, label=m.label, fixed=m.fixed) for m in model.masses]
    put += [Anchor(a.id, *fn(a.x, a.y), label=a.label) for a in model.anchors]
    return model.with_changes(put=put)


@FAST
@given(models(kinds=("planar",), contrast=True, fixed=False), st.floats(-np.pi, np.pi),
       st.floats(-3, 3), st.floats(-3, 3))
def test_rotating_a_planar_layout_leaves_frequencies_unchanged(model, angle, dx, dy):
    """math (objectivity: K and M of a rotated and shifted layout are Q^T K Q and M with Q
    orthogonal): every natural frequency is unchanged, zero modes included."""
    c, s = np.cos(angle), np.sin(angle)
    turned = _moved(model, lambda x, y: (c * x - s * y + dx, s * x + c * y + dy))
    _compare_spectra(solver.modes(model), solver.modes(turned))


@FAST
@given(models(kinds=("planar",), contrast=True, fixed=False))
def test_mirror_image_has_the_same_frequencies(model):
    """math (a reflection is orthogonal, as for rotation): the mirror image x -> -x of a planar
    layout has the same natural frequencies."""
    _compare_spectra(solver.modes(model), solver.modes(_moved(model, lambda x, y: (-x, y))))


@FAST
@given(models(contrast=True), st.floats(1e-2, 1e2), st.booleans())
def test_scaling_masses_or_stiffnesses_scales_frequencies(model, factor, masses):
    """math (w^2 = eigenvalue of M^-1 K): multiplying every mass by a divides every frequency by
    sqrt(a); multiplying every stiffness (k and k_t) by b multiplies them by sqrt(b)."""
    if masses:
        put = [Mass(m.id, m.x, m.y, m.mass * factor, fixed=m.fixed) for m in model.masses]
        scale = 1.0 / np.sqrt(factor)
    else:
        put = [Spring(sp_.id, sp_.a, sp_.b, sp_.k * factor, k_t=sp_.k_t * factor)
               for sp_ in model.springs]
        scale = np.sqrt(factor)
    _compare_spectra(solver.modes(model), solver.modes(model.with_changes(put=put)), scale)


@st.composite
def replicated_models(draw):
    """c identical copies (2..4) of a small random model side by side: every frequency of the
    copy is at least c-fold (math: K and M are block diagonal with equal blocks)."""
    base = draw(models(max_mass=4))
    copies = draw(st.integers(2, 4))
    masses, anchors, springs = [], [], []
    for c in range(copies):
        off = 10.0 * c
        masses += [Mass(f"{m.id}_{c}", m.x + off, m.y, m.mass, fixed=m.fixed) for m in base.masses]
        anchors += [Anchor(f"{a.id}_{c}", a.x + off, a.y) for a in base.anchors]
        springs += [Spring(f"{sp_.id}_{c}", f"{sp_.a}_{c}", f"{sp_.b}_{c}", sp_.k, k_t=sp_.k_t)
                    for sp_ in base.springs]
    return Model(kind=base.kind, masses=tuple(masses), anchors=tuple(anchors),
                 springs=tuple(springs))


@FAST
@given(replicated_models(), st.data())
def test_sparse_path_never_cuts_a_repeated_group(model, data):
    """scipy.linalg.eigh on the dense matrices (LAPACK, independent of Lanczos): on models made
    of identical copies (every frequency repeated), the shift-invert path asked for any count
    returns at least that many modes, equal to the lowest dense ones (rtol 1e-8), and stops at
    a gap: the next dense frequency is not a copy of its last one."""
    sysm = solver.assemble(model)
    n = sysm.n_dof
    assume(n >= 8)
    K, M = dense(sysm.K), dense(sysm.M)
    lam = scipy.linalg.eigh(K, M, eigvals_only=True)
    # the scale of the springs before condensation (a condensed K can be pure rounding)
    top = float(np.abs(dense(sysm.K_full)).max()) / float(np.diag(M).min())
    assume(lam.max() > 1e-8 * top)
    count = data.draw(st.integers(1, n // 3))
    res = solver.modes(sysm, count=count, method="sparse")
    got = res.n_modes
    assert got >= count
    np.testing.assert_allclose(res.eigenvalues, np.where(lam[:got] > 1e-10 * top, lam[:got], 0),
                               rtol=1e-8, atol=1e-10 * top)
    if got < n:
        w = np.sqrt(np.maximum(lam, 0))
        assert w[got] - w[got - 1] > 1e-6 * w[got] or w[got] <= np.sqrt(1e-10 * top)


# ------------------------------------------------------------------ invalid files
def _elements(data):
    return [(key, i) for key in ("masses", "anchors", "springs", "dampers", "excitations",
                                 "gears")
            for i in range(len(data.get(key, [])))]


BAD_VALUES = ["text", None, True, [], {}, [1, 2]]


@st.composite
def invalid_files(draw):
    """A valid model file broken in one way that must always be refused."""
    model = draw(models(extras=True, bodies=True))
    data = solver.model_to_dict(model)
    how = draw(st.sampled_from(["unknown_top", "unknown_element", "wrong_type", "negative_mass",
                                "missing_id", "dangling", "self_loop", "newer", "not_json",
                                "duplicate", "nan", "format", "kind", "not_object"]))
    els = _elements(data)
    if how == "unknown_top":
        data[draw(st.sampled_from(["colour", "units", "Masses", "mass"]))] = 1
    elif how == "unknown_element":
        key, i = draw(st.sampled_from(els))
        data[key][i][draw(st.sampled_from(["kk", "mass_kg", "colour", "ID"]))] = 0
    elif how == "wrong_type":
        key, i = draw(st.sampled_from(els))
        field = draw(st.sampled_from([f for f in data[key][i] if f not in ("label", "type")]))
        bad = draw(st.sampled_from(BAD_VALUES))
        if field in ("id", "a", "b") and isinstance(bad, str):
            bad = 5
        if field in ("orders", "fixed", "mode_ratios", "a_offset", "b_offset") and isinstance(
                bad, list):
            bad = "text"     # a list may be a valid value of these list fields
        data[key][i][field] = bad
    elif how == "negative_mass":
        m = draw(st.sampled_from(data["masses"]))
        m["inertia" if model.kind == "torsion" else "mass"] = -draw(st.floats(1e-9, 1e3))
    elif how == "missing_id":
        key, i = draw(st.sampled_from(els))
        del data[key][i]["id"]
    elif how == "dangling":
        assume(data["springs"])
        data["springs"][0][draw(st.sampled_from("ab"))] = "nowhere"
    elif how == "self_loop":
        assume(data["springs"])
        data["springs"][0]["b"] = data["springs"][0]["a"]
    elif how == "newer":
        data["version"] = draw(st.sampled_from([2, 3, 99, 2.0]))
    elif how == "duplicate":
        assume(len(els) >= 2)
        (k1, i1), (k2, i2) = els[0], els[1]
        data[k2][i2]["id"] = data[k1][i1]["id"]
    elif how == "nan":
        data["masses"][0]["x"] = draw(st.sampled_from([float("nan"), float("inf")]))
        return json.dumps(data).encode()
    elif how == "format":
        data["format"] = draw(st.sampled_from(["springwright", None, 1]))
    elif how == "kind":
        data["kind"] = draw(st.sampled_from(["beam", "", None]))
    elif how == "not_object":
        return json.dumps(draw(st.sampled_from([[data], 1, "model", None]))).encode()
    if how == "not_json":
        text = json.dumps(data)
        cut = draw(st.integers(0, len(text) - 1))
        choice = draw(st.sampled_from(["truncate", "bytes", "latin1"]))
        if choice == "truncate":
            return text[:cut].encode()
        if choice == "bytes":
            return draw(st.binary(min_size=1, max_size=40)).replace(b"{", b"").replace(b"[", b"") \
                or b"\x00"
        return ("{\"name\": \"caf\u00e9\"" + text[1:]).encode("latin-1")
    return json.dumps(data).encode()


@settings(max_examples=EXAMPLES + 10, deadline=None)
@given(invalid_files())
def test_invalid_files_always_raise_model_file_error(tmp_path_factory, raw):
    """common practice: a broken or foreign file is refused with the program's own error
    (solver.ModelFileError), never a crash with another exception."""
    path = tmp_path_factory.mktemp("bad") / "bad.json"
    path.write_bytes(raw)
    try:
        solver.load_model(path)
    except ModelFileError as exc:
        assert str(path) in str(exc)
    else:
        raise AssertionError(f"accepted an invalid file: {raw[:200]!r}")


def _mutate_anywhere(data, draw):
    """Replace one randomly chosen node of the JSON tree with a random JSON value."""
    paths = []

    def walk(node, path):
        paths.append(path)
        if isinstance(node, dict):
            for k, v in node.items():
                walk(v, path + (k,))
        elif isinstance(node, list):
            for i, v in enumerate(node):
                walk(v, path + (i,))

    walk(data, ())
    target = draw(st.sampled_from(paths[1:]))
    value = draw(st.recursive(st.none() | st.booleans() | st.integers(-5, 5) | st.floats(
        allow_nan=True, allow_infinity=True) | st.text(max_size=5),
        lambda c: st.lists(c, max_size=3) | st.dictionaries(st.text(max_size=4), c, max_size=3),
        max_leaves=5))
    node = data
    for p in target[:-1]:
        node = node[p]
    if draw(st.booleans()) and isinstance(node, dict):
        del node[target[-1]]
    else:
        node[target[-1]] = value
    return data


@settings(max_examples=EXAMPLES + 10, deadline=None)
@given(models(extras=True, bodies=True), st.data())
def test_random_mutations_load_or_raise_model_file_error(model, data):
    """common practice: any change to a model file either still loads as a valid Model or is
    refused with solver.ModelFileError; no other exception escapes load."""
    mutated = _mutate_anywhere(copy.deepcopy(solver.model_to_dict(model)), data.draw)
    try:
        raw = json.dumps(mutated)
    except (TypeError, ValueError):
        return
    try:
        out = solver.model_from_dict(json.loads(raw))
    except ModelFileError:
        return
    assert isinstance(out, Model)
