"""The stiffness in factored form, ``K = A^T A``, and what stays accurate with it.

Each spring gives one row of ``A = D^(1/2) B``: ``sqrt(k) e^T (u_b - u_a)`` on the relative motion
of its ends, and in a planar model a second row ``sqrt(k_t) n^T (u_b - u_a)`` for a transverse
stiffness. ``B`` holds geometry only (direction cosines), ``D`` the stiffnesses.

Why bother: forming ``K`` adds stiffnesses of very different size (``1 + 1e16`` is ``1e16`` in
double precision), so a soft spring next to a very stiff one is lost before any eigensolver sees
it. The factor keeps every spring in its own row, so nothing is added:

- massless junctions are condensed by orthogonal projection. With ``A = [A_m  A_s]`` (columns of
  the DOFs that carry mass and of the junctions), the junctions sit where the strain energy
  ``|A_m x_m + A_s x_s|^2`` is least, which leaves ``|Q_2^T A_m x_m|^2`` with ``Q_2`` an
  orthonormal basis of the complement of the range of ``A_s`` (Householder QR with column
  pivoting and rows sorted by decreasing norm, which is row-wise backward stable: Cox and
  Higham, BIT 38, 1998). The condensed ``K = (Q_2^T A_m)^T (Q_2^T A_m)`` is positive
  semi-definite by construction, and the directions no spring holds are the null space of
  ``A_s`` (found on the geometry ``B_s`` alone, so no stiffness contrast hides or fakes one);
- the eigenvalues ``w^2`` are the squared singular values of ``F M^(-1/2)`` (``F`` the condensed
  factor), found by one-sided Jacobi SVD (LAPACK ``dgejsv`` with full pivoting, which is
  accurate in the relative sense for ``D_1 X D_2`` with well-conditioned ``X``: Drmac and
  Veselic, SIAM J. Matrix Anal. Appl. 29, 2008), or by ``gesdd`` for large models, whose
  error in ``w`` is ``eps ||F M^(-1/2)||``, the square root of that of ``eigh`` on ``K``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg
import scipy.sparse as sp
from scipy.linalg import lapack
from scipy.sparse.csgraph import connected_components

#: Singular values of the geometry below this fraction of the largest count as zero (a junction
#: direction no spring holds); direction cosines are O(1), so this is an angle in radians.
GEOMETRY_RTOL = 1e-9
#: Largest junction cluster (DOFs joined through junctions) condensed in factored form; larger
#: ones (long chains of junctions) use the sparse Schur complement of assemble.py.
CLUSTER_LIMIT = 1500
#: Largest model solved by Jacobi SVD; above it, divide-and-conquer SVD (gesdd).
JACOBI_DOF_LIMIT = 400


def spring_rows(spring_dofs: np.ndarray, axis: np.ndarray, k, k_t, n_all: int):
    """Geometry ``B`` (sparse, (n_rows, n_all)) and weights ``sqrt(stiffness)`` (n_rows,).

    ``spring_dofs`` (n_springs, 2 nd): DOF indices of end a then end b (-1: ground or locked);
    ``axis`` (n_springs, 2): unit vectors from a to b (planar); ``k_t`` None outside planar
    models. One row per spring along its axis, and one across it where ``k_t > 0``. Rows with
    no free DOF are dropped (they strain nothing that moves).
    """
    n_s = spring_dofs.shape[0]
    nd = spring_dofs.shape[1] // 2
    k = np.asarray(k, float).reshape(n_s)
    if nd == 1:
        dirs = np.ones((n_s, 1, 1))            # (spring, row kind, component)
        weights = k[:, None]
    else:
        nvec = np.stack([-axis[:, 1], axis[:, 0]], axis=1)
        dirs = np.stack([axis, nvec], axis=1)   # (n_s, 2, 2)
        kt = np.zeros(n_s) if k_t is None else np.asarray(k_t, float).reshape(n_s)
        weights = np.stack([k, kt], axis=1)
    n_kind = dirs.shape[1]
    # row r = (spring, kind); entries -dir on end a's DOFs, +dir on end b's
    vals = np.concatenate([-dirs, dirs], axis=2)                 # (n_s, n_kind, 2 nd)
    cols = np.broadcast_to(spring_dofs[:, None, :], vals.shape)
    rows = np.broadcast_to(np.arange(n_s * n_kind).reshape(n_s, n_kind, 1), vals.shape)
    keep = (cols >= 0) & (vals != 0.0) & (weights[:, :, None] > 0)
    B = sp.csr_matrix((vals[keep], (rows[keep], cols[keep])), shape=(n_s * n_kind, n_all))
    B.sum_duplicates()
    used = np.flatnonzero(np.diff(B.indptr) > 0)
    return B[used], np.sqrt(weights.reshape(-1)[used])


@dataclass
class Condensed:
    """Result of :func:`condense`.

    factor : (n_rows, n_m) sparse; ``K = factor^T factor`` on the retained DOFs.
    G : (n_s, n_m) sparse; junction motion ``x_s = G x_m`` (least motion along loose directions).
    null : (n_s, n_loose) orthonormal junction directions that no spring holds.
    """

    factor: object
    G: object
    null: np.ndarray


def junction_clusters(B, slaves):
    """Groups of junction DOFs joined through springs (rows of B), and each group's rows."""
    Bs = sp.csc_matrix(B[:, slaves])
    pattern = (abs(Bs).T @ abs(Bs)).tocsr()
    n_c, label = connected_components(pattern, directed=False)
    Bs_r = sp.csr_matrix(Bs)
    row_of = np.repeat(np.arange(Bs_r.shape[0]), np.diff(Bs_r.indptr))
    row_label = np.full(Bs_r.shape[0], -1)
    row_label[row_of] = label[Bs_r.indices]
    groups = [np.flatnonzero(label == c) for c in range(n_c)]
    group_rows = [[] for _ in range(n_c)]
    for r, c in enumerate(row_label):
        if c >= 0:
            group_rows[c].append(r)
    return groups, [np.asarray(g, np.int64) for g in group_rows], row_label


def condense(B, w, retained, slaves) -> Condensed | None:
    """Condense the junction DOFs ``slaves`` out of ``A = diag(w) B`` by orthogonal projection.

    Returns None when a cluster of junctions is larger than ``CLUSTER_LIMIT`` (the caller then
    condenses ``K`` by the sparse Schur complement).
    """
    n_rows = B.shape[0]
    n_m, n_s = len(retained), len(slaves)
    m_col = np.full(B.shape[1], -1)
    m_col[retained] = np.arange(n_m)
    groups, group_rows, row_label = junction_clusters(B, slaves)
    if any(len(g) > CLUSTER_LIMIT for g in groups):
        return None
    Bm_all = sp.csr_matrix(B[:, retained])
    Bs_all = sp.csr_matrix(B[:, slaves])
    small = n_rows * (n_m + n_s) <= 200_000   # dense slicing is far cheaper for small models
    if small:
        Bm_d, Bs_d = Bm_all.toarray(), Bs_all.toarray()
    # rows touching no junction pass through unchanged
    plain = np.flatnonzero(row_label < 0)
    blocks = [sp.diags(w[plain]) @ Bm_all[plain]]
    g_r, g_c, g_v = [], [], []
    null_blocks = []
    for dofs, rows in zip(groups, group_rows):
        if len(rows) == 0:   # junction DOFs that no spring touches at all
            null_blocks.append((dofs, np.eye(len(dofs))))
            continue
        if small:
            Bs = Bs_d[np.ix_(rows, dofs)]
            mcols = np.flatnonzero(np.any(Bm_d[rows] != 0.0, axis=0))
            Bm = Bm_d[np.ix_(rows, mcols)]
        else:
            Bs = Bs_all[rows][:, dofs].toarray()
            Bm_sp = Bm_all[rows]
            mcols = np.unique(Bm_sp.indices)
            Bm = Bm_sp[:, mcols].toarray()
        # loose directions and rank from the geometry alone
        _u, sv, vt = scipy.linalg.svd(Bs, check_finite=False)
        rank = int(np.sum(sv > GEOMETRY_RTOL * sv.max(initial=0.0))) if sv.size else 0
        if rank < len(dofs):
            null_blocks.append((dofs, vt[rank:].T))
        wr = w[rows]
        order = np.argsort(-wr, kind="stable")   # heaviest rows first (row-wise stability)
        As = wr[order, None] * Bs[order]
        Am = wr[order, None] * Bm[order]
        if rank:
            Q, R, piv = scipy.linalg.qr(As, pivoting=True, check_finite=False)
            QtAm = Q.T @ Am
            rest = QtAm[rank:]
            # least-squares junction motion: R11 y = -(Q1^T A_m) on the pivot columns, then
            # the least-motion solution (nothing along the loose directions)
            y = _back_substitute(R[:rank, :rank], -QtAm[:rank])
            Gc = np.zeros((len(dofs), len(mcols)))
            Gc[piv[:rank]] = y
            if rank < len(dofs):
                N = vt[rank:].T
                Gc -= N @ (N.T @ Gc)
            gi, gj = np.nonzero(Gc)
            g_r.append(dofs[gi])
            g_c.append(mcols[gj])
            g_v.append(Gc[gi, gj])
        else:
            rest = Am
        if rest.shape[0]:
            blk = np.zeros((rest.shape[0], n_m))
            blk[:, mcols] = rest
            blocks.append(sp.csr_matrix(blk))
    factor = sp.vstack(blocks, format="csr") if blocks else sp.csr_matrix((0, n_m))
    if g_r:
        G = sp.csr_matrix((np.concatenate(g_v), (np.concatenate(g_r), np.concatenate(g_c))),
                          shape=(n_s, n_m))
    else:
        G = sp.csr_matrix((n_s, n_m))
    n_loose = sum(b.shape[1] for _, b in null_blocks)
    null = np.zeros((n_s, n_loose))
    col = 0
    for dofs, b in null_blocks:
        null[dofs, col:col + b.shape[1]] = b
        col += b.shape[1]
    return Condensed(factor=factor, G=G, null=null)


def _back_substitute(R, rhs):
    """Solve the upper-triangular R y = rhs. Row by row for small R: a threaded BLAS triangular
    solve costs milliseconds on a busy machine for a 3 x 3 system."""
    r = R.shape[0]
    if r > 64:
        y, info = lapack.dtrtrs(np.asfortranarray(R), np.asfortranarray(rhs))
        if info == 0:
            return y
    y = np.zeros_like(rhs, dtype=float)
    for i in range(r - 1, -1, -1):
        y[i] = (rhs[i] - R[i, i + 1:] @ y[i + 1:]) / R[i, i]
    return y


def factored_eig(F, M_diag: np.ndarray, rtol: float = 1e-9):
    """Eigenvalues and mass-normalised vectors of ``F^T F v = lam M v`` from the SVD of
    ``F M^(-1/2)``, ascending.

    Divide and conquer (gesdd) first: its error in each singular value is ``eps ||F M^-1/2||``
    (backward stable), a relative ``eps sigma_max / sigma_i``. Where that exceeds ``rtol`` for a
    nonzero one and the model is small enough, one-sided Jacobi (dgejsv) instead, whose bound
    is ``eps cond(X)`` with ``X`` the row- and column-equilibrated matrix (the smaller of the two
    bounds holds).

    Returns lam (n,), phi (n, n) and the relative error bound of each ``w = sqrt(lam)`` (n,).
    """
    F = F.toarray() if sp.issparse(F) else np.asarray(F, float)
    n = len(M_diag)
    s = 1.0 / np.sqrt(M_diag)
    Gm = F * s[None, :]
    # drop rows that are exactly zero, pad to at least n rows (the SVD routines want m >= n)
    Gm = Gm[np.any(Gm != 0.0, axis=1)]
    if Gm.shape[0] < n:
        Gm = np.vstack([Gm, np.zeros((n - Gm.shape[0], n))])
    eps = np.finfo(float).eps
    _u, sigma, vt = scipy.linalg.svd(Gm, full_matrices=False, lapack_driver="gesdd",
                                     check_finite=False)
    v = vt.T

    def normwise(sig):
        top_ = float(sig.max(initial=0.0))
        with np.errstate(divide="ignore"):
            return np.where(sig > 0, 4 * eps * top_ / np.where(sig > 0, sig, 1.0), np.inf)

    bound = normwise(sigma)
    top = float(sigma.max(initial=0.0))
    # singular values that are rounding of a zero one (rigid-body motions, mechanisms)
    nonzero = sigma > 4 * eps * top * max(n, 1)
    if n <= JACOBI_DOF_LIMIT and top > 0 and np.any(bound[nonzero] > rtol):
        # rows sorted by decreasing norm help the pivoted QR that dgejsv starts with
        order = np.argsort(-np.linalg.norm(Gm, axis=1), kind="stable")
        # joba='F' (full pivoting: rows and columns graded), jobu='N', jobv='V', jobr='N',
        # jobt='N', jobp='N' (scipy's integer codes)
        sva, _u, vv, work, _iw, info = lapack.dgejsv(Gm[order], joba=2, jobu=3, jobv=0,
                                                     jobr=0, jobt=0, jobp=0)
        if info == 0 and work[1] != 0:
            sigma = (work[0] / work[1]) * sva[:n]
            v = vv[:, :n]
            bound = normwise(sigma)
            X = Gm[np.any(Gm != 0.0, axis=1)]
            X = X / np.linalg.norm(X, axis=1, keepdims=True)
            cn = np.linalg.norm(X, axis=0)
            X = X[:, cn > 0] / cn[cn > 0]
            sx = scipy.linalg.svd(X, compute_uv=False, check_finite=False)
            rank = int(np.sum(nonzero))
            if 0 < rank <= len(sx) and sx[rank - 1] > 0:
                scaled = 4 * eps * np.sqrt(n) * sx[0] / sx[rank - 1]
                bound = np.minimum(bound, np.where(sigma > 0, scaled, np.inf))
    order = np.argsort(sigma, kind="stable")
    sigma, v, bound = sigma[order], v[:, order], bound[order]
    return sigma * sigma, v * s[:, None], bound
