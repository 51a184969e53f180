"""The fast paths of assembly and post-processing against scipy.sparse and the definitions.

Assembly builds its diagonal matrices and row-scaled factors directly, and the energy shares and
sensitivities share one computation of each mode's spring stretches and mass motions. Each is
checked here against the general-purpose construction it replaces (scipy.sparse.diags and the
sparse matrix product) or against the textbook definition evaluated element by element.
"""

import numpy as np
import pytest
import scipy.sparse as sp

import solver
from solver import Anchor, Mass, Model, Spring
from solver.assemble import diagonal, scaled_rows
from solver.metrics import _mass_motion_squared, _relative_motion


@pytest.mark.parametrize("n", [0, 1, 7])
def test_diagonal_equals_scipy_diags(n):
    """scipy.sparse.diags(v, format="csr") is the reference: same shape, values and pattern."""
    v = np.linspace(0.5, 3.0, n)
    got, ref = diagonal(v), sp.diags(v, format="csr", shape=(n, n))
    assert got.shape == ref.shape == (n, n)
    assert np.array_equal(got.toarray(), ref.toarray())
    assert got.nnz == n
    v[:] = -1.0                       # the matrix keeps its own copy of the values
    assert np.all(got.diagonal() >= 0.5)


def test_scaled_rows_equals_the_sparse_product():
    """diag(w) @ B by scipy's sparse product is the reference, bit for bit; an entry whose
    product underflows to zero is dropped as the product drops it."""
    rng = np.random.default_rng(4)
    B = sp.random(30, 12, density=0.3, random_state=5, format="csr")
    w = rng.uniform(0.1, 1e4, 30)
    got, ref = scaled_rows(w, B), sp.csr_matrix(sp.diags(w) @ B)
    assert np.array_equal(got.toarray(), ref.toarray())
    B2 = sp.csr_matrix(np.array([[1e-200, 2.0], [0.0, 3.0]]))
    tiny = scaled_rows([1e-200, 1.0], B2)
    assert tiny.nnz == (sp.diags([1e-200, 1.0]) @ B2).nnz == 2
    assert np.array_equal(B2.toarray(), np.array([[1e-200, 2.0], [0.0, 3.0]]))  # B untouched


def _body_model():
    # a planar rigid body on three springs with offsets, a point mass, a locked direction and a
    # massless junction: every kind of entry the mass motion sums over
    body = Mass("b", 0.0, 0.0, 12.0, inertia=0.8)
    return Model(kind="planar",
                 masses=(body, Mass("p", 1.0, 0.5, 3.0, fixed=("y",)), Mass("j", 0.5, -0.5, 0.0)),
                 anchors=(Anchor("g1", -1.0, 0.0), Anchor("g2", 0.0, -1.0), Anchor("g3", 1.0, -1.0)),
                 springs=(Spring("s1", "g1", "b", 4000.0, a_offset=(0, 0), b_offset=(-0.3, 0.1)),
                          Spring("s2", "g2", "b", 3000.0, b_offset=(0.2, -0.2)),
                          Spring("s3", "b", "p", 2500.0, k_t=400.0, a_offset=(0.3, 0.0)),
                          Spring("s4", "p", "j", 1800.0, k_t=100.0),
                          Spring("s5", "j", "g3", 2200.0, k_t=50.0)))


def test_mass_motion_is_the_sum_over_each_mass_s_own_directions():
    """Definition (kinetic energy of a lumped mass, common practice): |phi_j|^2 is the sum of
    the squared modal displacements of mass j's free translations; a rigid body's theta is kept
    apart (it enters with the inertia). Evaluated here element by element from the shapes."""
    res = solver.modes(_body_model())
    system = res.system
    lookup = {d: i for i, d in enumerate(system.all_dofs)}
    for rotation, dirs in ((False, ("x", "y")), (True, ("theta",))):
        got = _mass_motion_squared(res, rotation=rotation)
        for j, m in enumerate(system.model.masses):
            want = sum((res.all_shapes[lookup[(m.id, d)]] ** 2 for d in dirs
                        if (m.id, d) in lookup), np.zeros(res.n_modes))
            assert np.array_equal(got[:, j], want), (m.id, rotation)
    assert _mass_motion_squared(res) is _mass_motion_squared(res)      # computed once
    with pytest.raises(ValueError):
        _mass_motion_squared(res)[0, 0] = 1.0                          # shared: read-only


def test_energy_shares_and_sensitivities_agree_with_their_definitions():
    """Fox and Kapoor, AIAA J. 6(12), 1968: d lambda/dk = (e . (phi_b - phi_a))^2 and
    d lambda/dm = -lambda |phi|^2; strain-energy shares k (stretch)^2 / sum. The stretch is
    taken here from the attachment points' motion by hand (offsets turned with theta)."""
    model = _body_model()
    an = solver.analyse(model)
    res, system = an.modal, an.system
    lookup = {d: i for i, d in enumerate(system.all_dofs)}

    def point(node, offset, col):
        if any(a.id == node for a in model.anchors):
            return np.zeros(2)
        u = np.array([res.all_shapes[lookup[(node, d)]][col] if (node, d) in lookup else 0.0
                      for d in ("x", "y")])
        th = res.all_shapes[lookup[(node, "theta")]][col] if (node, "theta") in lookup else 0.0
        return u + th * np.array([-offset[1], offset[0]])

    pos = {n.id: np.array([n.x, n.y]) for n in model.masses + model.anchors}
    axial, _trans = _relative_motion(res)
    for col in range(res.n_modes):
        for s_i, s in enumerate(model.springs):
            pa, pb = pos[s.a] + s.a_offset, pos[s.b] + s.b_offset
            e = (pb - pa) / np.linalg.norm(pb - pa)
            stretch = e @ (point(s.b, s.b_offset, col) - point(s.a, s.a_offset, col))
            assert axial[col, s_i] == pytest.approx(stretch, abs=1e-12)
            assert an.sensitivity.dlambda_dk[col, s_i] == pytest.approx(stretch ** 2, abs=1e-12)
    lam = res.eigenvalues
    mass_part = _mass_motion_squared(res)
    assert np.allclose(an.sensitivity.dlambda_dm, -lam[:, None] * mass_part, rtol=1e-12, atol=0)
    elastic = lam > 0
    assert np.allclose(an.energy.strain[elastic].sum(axis=1), 1.0, rtol=1e-12)


def test_a_model_keeps_its_hash_but_never_pickles_it():
    """Python's data model (equal objects hash equal; a str hash is salted per process): a
    model's kept hash is the hash of its fields, as the dataclass's own; equal models built
    apart hash equal; a pickled model carries no kept hash (a worker process, with another salt,
    computes its own), and a model read back equals and hashes as the original here. Checked in
    a second interpreter with another PYTHONHASHSEED too."""
    import dataclasses
    import os
    import pickle
    import subprocess
    import sys

    from solver.model import Anchor, Mass, Model, Spring

    def build():
        return Model(kind="line", name="hash check",
                     masses=(Mass("m1", 1.0, 0.0, 2.0), Mass("m2", 2.0, 0.0, 3.0)),
                     anchors=(Anchor("g", 0.0, 0.0),),
                     springs=(Spring("s1", "g", "m1", 1e4), Spring("s2", "m1", "m2", 2e4)))

    a, b = build(), build()
    expected = hash(tuple(getattr(a, f.name) for f in dataclasses.fields(a)))
    assert hash(a) == expected == hash(b) and a == b
    assert a.__dict__.get("_hash") == expected       # kept: asked again, not computed
    changed = dataclasses.replace(a, name="other")
    assert changed != a and hash(changed) != hash(a)
    blob = pickle.dumps(a)
    back = pickle.loads(blob)
    assert "_hash" not in back.__dict__ and back == a and hash(back) == hash(a)
    script = ("import pickle, sys, dataclasses; m = pickle.loads(sys.stdin.buffer.read());"
              " print(hash(m) == hash(tuple(getattr(m, f.name) for f in"
              " dataclasses.fields(m))))")
    env = dict(os.environ, PYTHONHASHSEED="12345")
    out = subprocess.run([sys.executable, "-c", script], input=blob, capture_output=True,
                         env=env, check=True, cwd=os.getcwd())
    assert out.stdout.strip() == b"True"
