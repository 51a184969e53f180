"""Large and densely connected models solve in bounded time with the same modes: the inertia
count by LAPACK's Bunch-Kaufman factorisation and the dense shift-invert factor that the sparse
path takes when a sparse LU would fill in completely.

Sources: Sylvester's law of inertia with numpy's eigvalsh as the independent reference (math);
scipy.linalg.eigh on the dense pencil as the reference for the modes (an independent routine).
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.linalg
import scipy.sparse as sp

import solver
from solver import Anchor, Mass, Model, Spring

modes_module = __import__("sys").modules["solver.modes"]


@pytest.mark.parametrize("n", [1, 2, 3, 7, 40, 120])
def test_negative_pivots_count_negative_eigenvalues(n):
    """math (Sylvester's law of inertia): the negative eigenvalues of a symmetric matrix,
    counted from the D of its Bunch-Kaufman LDL^T, equal those numpy's eigvalsh finds; matrices
    with zero diagonal blocks force 2x2 pivots."""
    rng = np.random.default_rng(n)
    for trial in range(20):
        b = rng.standard_normal((n, n))
        a = b + b.T
        if trial % 2:   # a zero leading block: the factorisation must take 2x2 pivots
            a[: n // 2, : n // 2] = 0.0
        ev = np.linalg.eigvalsh(a)
        if np.min(np.abs(ev)) < 1e-8 * max(1.0, np.max(np.abs(ev))):
            continue
        assert modes_module._negative_pivots(a.copy()) == int(np.sum(ev < 0))


def _dense_planar(n_side: int, reach: int) -> Model:
    """A planar grid whose masses are joined to every neighbour within ``reach`` cells: a
    stiffness matrix a few percent full, whose sparse LU fills in completely."""
    masses = [Mass(f"m{i}_{j}", float(i), float(j), 1.0 + 0.01 * (i + 2 * j))
              for i in range(n_side) for j in range(n_side)]
    springs = []
    for i in range(n_side):
        for j in range(n_side):
            for di in range(0, reach + 1):
                for dj in range(-reach, reach + 1):
                    if (di, dj) <= (0, 0) or i + di >= n_side or not 0 <= j + dj < n_side:
                        continue
                    springs.append(Spring(f"s{len(springs)}", f"m{i}_{j}", f"m{i + di}_{j + dj}",
                                          1000.0 + len(springs) % 7))
    anchors = [Anchor("g", -1.0, -1.0)]
    springs.append(Spring("base", "g", "m0_0", 500.0, k_t=500.0))
    return Model(kind="planar", masses=tuple(masses), anchors=tuple(anchors),
                 springs=tuple(springs))


def test_dense_factor_gives_the_lowest_modes():
    """scipy.linalg.eigh on the dense pencil (an independent routine): a 20 x 20 planar grid
    (800 DOF) joined to all neighbours within 3 cells, solved by the sparse path (which factors
    densely here: the matrix is over DENSE_FILL full), gives the 20 lowest frequencies to rtol
    1e-8."""
    model = _dense_planar(20, 3)
    system = solver.assemble(model, sparse=True)
    k = sp.csc_matrix(system.K)
    assert modes_module._dense_enough(k), k.nnz / k.shape[0] ** 2
    res = solver.modes(system, count=20)
    m = np.asarray(system.M.diagonal()).ravel()
    lam = scipy.linalg.eigh(k.toarray(), np.diag(m), eigvals_only=True, subset_by_index=(0, 19))
    ref = np.sqrt(np.maximum(lam, 0.0)) / (2 * np.pi)
    got = np.asarray(res.frequencies_hz[:20])
    elastic = ref > 1e-6 * ref.max()
    assert got[elastic] == pytest.approx(ref[elastic], rel=1e-8)
