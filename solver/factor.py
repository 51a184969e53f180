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

import math
from dataclasses import dataclass

import numpy as np
import scipy.linalg
import scipy.sparse as sp
from scipy.linalg import lapack
from scipy.sparse.csgraph import connected_components

#: Singular values of the geometry below this fraction of the largest count as zero (a junction
#: direction no spring holds); direction cosines are O(1), so this is an angle in radians.
GEOMETRY_RTOL = 1e-9
#: Junction clusters (DOFs joined through junctions) up to this size are condensed by one dense
#: pivoted QR each; larger ones (long chains of junctions, meshes of them) junction by junction
#: on the sparse rows (:func:`_eliminate_sparse`), whose cost grows with the fill, not the cube.
CLUSTER_DENSE_LIMIT = 60
#: Largest model solved by Jacobi SVD; above it, divide-and-conquer SVD (gesdd).
JACOBI_DOF_LIMIT = 400


def spring_rows(spring_dofs: np.ndarray, axis: np.ndarray, k, k_t, n_all: int):
    """Geometry ``B`` (sparse, (n_rows, n_all)) and weights ``sqrt(stiffness)`` (n_rows,).

    ``spring_dofs`` (n_springs, 2 nd): DOF indices of end a then end b (-1: ground or locked);
    ``axis`` (n_springs, 2): unit vectors from a to b (planar), or (n_springs, 2, 2 nd) the
    stretch coefficients of ``System.spring_coef`` (axial row, transverse row: rigid bodies'
    rotations included); ``k_t`` None outside planar models. One row per spring along its
    axis, and one across it where ``k_t > 0``. Rows with no free DOF are dropped (they strain
    nothing that moves).
    """
    n_s = spring_dofs.shape[0]
    nd = spring_dofs.shape[1] // 2
    k = np.asarray(k, float).reshape(n_s)
    if np.ndim(axis) == 3:
        coef = np.asarray(axis, float).reshape(n_s, 2, 2 * nd)
        if k_t is None:
            vals, weights = coef[:, :1, :], k[:, None]
        else:
            vals = coef
            weights = np.stack([k, np.asarray(k_t, float).reshape(n_s)], axis=1)
        n_kind = vals.shape[1]
        cols = np.broadcast_to(spring_dofs[:, None, :], vals.shape)
        rows = np.broadcast_to(np.arange(n_s * n_kind).reshape(n_s, n_kind, 1), vals.shape)
        keep = (cols >= 0) & (vals != 0.0) & (weights[:, :, None] > 0)
        B = sp.csr_matrix((vals[keep], (rows[keep], cols[keep])), shape=(n_s * n_kind, n_all))
        return _used_rows(B, weights)
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
    return _used_rows(B, weights)


def _used_rows(B, weights):
    """The rows of ``B`` with an entry, and their weights sqrt(stiffness)."""
    B.sum_duplicates()
    used = np.flatnonzero(np.diff(B.indptr) > 0)
    w = np.sqrt(weights.reshape(-1)[used])
    if len(used) == B.shape[0]:
        return B, w        # every row strains something (row selection copies the matrix)
    return B[used], w


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


def condense(B, w, retained, slaves, node=None) -> Condensed:
    """Condense the junction DOFs ``slaves`` out of ``A = diag(w) B`` by orthogonal projection.

    Each cluster of junctions (joined through springs) is done on its own rows: a small one by
    one dense pivoted QR, a large one junction by junction on the sparse rows
    (:func:`_eliminate_sparse`). Either way the result is ``Q_2^T A_m`` for an orthogonal
    ``Q``, so it is exact up to rounding in each row whatever the stiffness contrast.
    ``node`` (n_all,) labels the node each DOF belongs to (by default each DOF its own).
    """
    node = np.arange(B.shape[1]) if node is None else np.asarray(node)
    n_rows = B.shape[0]
    n_m, n_s = len(retained), len(slaves)
    groups, group_rows, row_label = junction_clusters(B, slaves)
    Bm_all = sp.csr_matrix(B[:, retained])
    Bs_all = sp.csr_matrix(B[:, slaves])
    small = n_rows * (n_m + n_s) <= 200_000   # dense slicing is far cheaper for small models
    if small:
        Bm_d, Bs_d = Bm_all.toarray(), Bs_all.toarray()
    # rows touching no junction pass through unchanged
    plain = np.flatnonzero(row_label < 0)
    plain_rows = sp.coo_matrix(sp.diags(w[plain]) @ Bm_all[plain])
    f_r, f_c, f_v = [plain_rows.row], [plain_rows.col], [plain_rows.data]
    n_out = len(plain)
    g_r, g_c, g_v = [], [], []
    null_blocks = []

    def add(dofs, mcols, rest, Gc, N):
        nonlocal n_out
        if N.shape[1]:
            null_blocks.append((dofs, N))
        if Gc is not None:
            gi, gj = np.nonzero(Gc)
            g_r.append(dofs[gi])
            g_c.append(mcols[gj])
            g_v.append(Gc[gi, gj])
        if rest.shape[0]:
            ri, rj = np.nonzero(rest)
            f_r.append(ri + n_out)
            f_c.append(mcols[rj])
            f_v.append(rest[ri, rj])
            n_out += rest.shape[0]

    # small clusters of one shape (rows, junction DOFs, retained DOFs) are done together, one
    # stacked LAPACK call each (a model with many junctions has many alike)
    batches: dict = {}
    for dofs, rows in zip(groups, group_rows):
        if len(rows) == 0:   # junction DOFs that no spring touches at all
            null_blocks.append((dofs, np.eye(len(dofs))))
            continue
        wr = w[rows]
        if len(dofs) > CLUSTER_DENSE_LIMIT:
            Bs_sp = Bs_all[rows][:, dofs]
            Bm_sp = Bm_all[rows]
            mcols = np.unique(Bm_sp.indices)
            add(dofs, mcols, *_eliminate_sparse(sp.diags(wr) @ Bs_sp,
                                                sp.diags(wr) @ Bm_sp[:, mcols],
                                                node[np.asarray(slaves)[dofs]]))
            continue
        if small:
            mcols = np.flatnonzero(np.any(Bm_d[rows] != 0.0, axis=0))
        else:
            mcols = np.unique(Bm_all[rows].indices)
        if len(dofs) <= 2 and len(rows) >= len(dofs):
            batches.setdefault((len(rows), len(dofs), len(mcols)), []).append(
                (dofs, np.asarray(rows), mcols))
            continue
        if small:
            Bs, Bm = Bs_d[np.ix_(rows, dofs)], Bm_d[np.ix_(rows, mcols)]
        else:
            Bs = Bs_all[rows][:, dofs].toarray()
            Bm = Bm_all[rows][:, mcols].toarray()
        add(dofs, mcols, *_condense_dense(Bs, Bm, wr))
    for items in batches.values():
        D = np.array([it[0] for it in items])
        R = np.array([it[1] for it in items])
        C = np.array([it[2] for it in items])
        if small:
            Bs = Bs_d[R[:, :, None], D[:, None, :]]
            Bm = Bm_d[R[:, :, None], C[:, None, :]]
        else:
            Bs = np.array([Bs_all[r][:, d].toarray() for r, d in zip(R, D)])
            Bm = np.array([Bm_all[r][:, c].toarray() for r, c in zip(R, C)])
        rest, G, ok = _condense_batch(Bs, Bm, w[R])
        for i, (dofs, rows, mcols) in enumerate(items):
            if ok[i]:
                add(dofs, mcols, rest[i], G[i], np.zeros((len(dofs), 0)))
            else:   # a loose junction direction: the one-by-one path finds it
                add(dofs, mcols, *_condense_dense(Bs[i], Bm[i], w[rows]))
    factor = sp.csr_matrix((np.concatenate(f_v), (np.concatenate(f_r), np.concatenate(f_c))),
                           shape=(n_out, n_m))
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


def _condense_batch(Bs, Bm, W):
    """:func:`_condense_dense` for a stack of clusters of one shape with at most two junction
    DOFs each: ``Bs`` (b, r, d), ``Bm`` (b, r, q), row weights ``W`` (b, r). The same
    algorithm (rows sorted heaviest first, Householder QR with column pivoting: for two columns
    the larger first), in stacked LAPACK calls. Returns (rest (b, r - d, q), G (b, d, q), ok
    (b,)): ``ok`` False where the geometry leaves a junction direction loose (not handled
    here)."""
    b, _r, d = Bs.shape
    sv = np.linalg.svd(Bs, compute_uv=False)
    ok = np.all(sv > GEOMETRY_RTOL * sv.max(axis=1, keepdims=True), axis=1)
    order = np.argsort(-W, axis=1, kind="stable")
    As = np.take_along_axis(W[:, :, None] * Bs, order[:, :, None], axis=1)
    Am = np.take_along_axis(W[:, :, None] * Bm, order[:, :, None], axis=1)
    swap = np.zeros(b, bool)
    if d == 2:
        swap = np.linalg.norm(As[:, :, 1], axis=1) > np.linalg.norm(As[:, :, 0], axis=1)
        As[swap] = As[swap][:, :, ::-1]
    Q, R = np.linalg.qr(As, mode="complete")
    QtAm = np.swapaxes(Q, 1, 2) @ Am
    rhs = -QtAm[:, :d]
    with np.errstate(divide="ignore", invalid="ignore"):   # rank-deficient ones are not used
        if d == 1:
            y = rhs / R[:, :1, :1]
        else:
            y1 = rhs[:, 1] / R[:, 1, 1, None]
            y0 = (rhs[:, 0] - R[:, 0, 1, None] * y1) / R[:, 0, 0, None]
            y = np.stack([y0, y1], axis=1)
    if d == 2:
        y[swap] = y[swap][:, ::-1]
    return QtAm[:, d:], y, ok


def _condense_dense(Bs, Bm, wr):
    """One small junction cluster: geometry ``Bs`` (rows x junction DOFs), ``Bm`` (rows x the
    retained DOFs it touches), row weights ``wr``. Returns the projected rows on the retained
    DOFs (dense), the junction motion ``Gc`` (junction DOFs x retained; None when nothing holds
    the junctions) and the orthonormal loose directions (junction DOFs x n_loose)."""
    # loose directions and rank from the geometry alone
    _u, sv, vt = np.linalg.svd(Bs)
    rank = int(np.sum(sv > GEOMETRY_RTOL * sv.max(initial=0.0))) if sv.size else 0
    N = vt[rank:].T
    order = np.argsort(-wr, kind="stable")   # heaviest rows first (row-wise stability)
    As = wr[order, None] * Bs[order]
    Am = wr[order, None] * Bm[order]
    if not rank:
        return Am, None, N
    Q, R, piv = scipy.linalg.qr(As, pivoting=True, check_finite=False)
    QtAm = Q.T @ Am
    # least-squares junction motion: R11 y = -(Q1^T A_m) on the pivot columns, then the
    # least-motion solution (nothing along the loose directions)
    y = _back_substitute(R[:rank, :rank], -QtAm[:rank])
    Gc = np.zeros((Bs.shape[1], Am.shape[1]))
    Gc[piv[:rank]] = y
    if N.shape[1]:
        Gc -= N @ (N.T @ Gc)
    return QtAm[rank:], Gc, N


def _eliminate_sparse(As, Am, node, rtol: float = GEOMETRY_RTOL):
    """Condense a large junction cluster one junction at a time on the sparse rows.

    ``As`` (r, p) and ``Am`` (r, q) sparse: the weighted rows of the cluster on its junction
    DOFs and on the retained DOFs they touch; ``node`` (p,) labels the junction each DOF belongs
    to. Each step takes the rows that touch one junction (fewest first: minimum degree, so a
    chain is worked from its ends and keeps no fill), sorted by decreasing norm, and applies a
    Householder QR with column pivoting on that junction's columns (as the small clusters get,
    :func:`_condense_dense`): the first rows give the junction's motion, the others, with those
    columns zero, go back to the pool. Two springs in series through a junction become one row
    of stiffness ``k_1 k_2 / (k_1 + k_2)`` (compliances add, ``1/k = sum 1/k_i``), each entry
    formed without cancellation.

    An entry below ``rtol`` times the norm of its row counts as zero, and a junction's rank is
    judged on its rows scaled to unit norm: the rows are direction cosines times a weight, so a
    direction no spring holds is found by angle, not by size.

    Returns (rest (n_rest, q) dense rows on the retained DOFs, G (p, q) dense junction motion
    with no part along the loose directions, N (p, n_loose) orthonormal loose directions).
    """
    import heapq

    p, q = As.shape[1], Am.shape[1]
    W = sp.csr_matrix(sp.hstack([As, Am], format="csr"))
    node = np.asarray(node)
    node_ids, node_of = np.unique(node, return_inverse=True)
    members = [[] for _ in node_ids]
    for c, nd in enumerate(node_of):
        members[nd].append(c)
    # rows as (columns, values) arrays, columns ascending; junction DOFs are columns < p
    rows = {}
    touch = [set() for _ in node_ids]      # rows touching each junction
    for i in range(W.shape[0]):
        lo, hi = W.indptr[i], W.indptr[i + 1]
        cols, vals = W.indices[lo:hi], W.data[lo:hi]
        nz = vals != 0.0
        if not nz.any():
            continue
        rows[i] = (cols[nz], vals[nz])
        for nd in set(node_of[cols[nz][cols[nz] < p]].tolist()):
            touch[nd].add(i)
    next_id = W.shape[0]
    heap = [(len(t), nd) for nd, t in enumerate(touch)]
    heapq.heapify(heap)
    done = np.zeros(len(node_ids), bool)
    order = []                 # junction DOFs in elimination order
    recovery = {}              # junction DOF -> (columns, coefficients): x_c = sum coef x_col
    loose = []
    empty = (np.zeros(0, np.int64), np.zeros(0))
    while heap:
        deg, nd = heapq.heappop(heap)
        if done[nd] or deg != len(touch[nd]):
            continue
        done[nd] = True
        own = np.asarray(members[nd])
        keep, norms = [], []
        for rid in touch[nd]:
            cols, vals = rows[rid]
            norm = float(np.sqrt(vals @ vals))
            mine = (cols < p) & (node_of[np.minimum(cols, p - 1)] == nd)
            # rounding of a combination in which this junction's DOFs cancelled
            drop = mine & (np.abs(vals) <= rtol * norm)
            if drop.any():
                cols, vals = cols[~drop], vals[~drop]
                rows[rid] = (cols, vals)
                mine = mine[~drop]
            if mine.any():
                keep.append(rid)
                norms.append(norm)
        touch[nd] = set()
        if not keep:
            loose.extend(own.tolist())
            for c in own.tolist():
                recovery[c] = empty
            continue
        idx = np.argsort(-np.asarray(norms), kind="stable")   # heaviest rows first
        keep = [keep[i] for i in idx]
        norms = np.asarray(norms)[idx]
        allcols = np.unique(np.concatenate([rows[rid][0] for rid in keep]))
        others = allcols[(allcols >= p) | (node_of[np.minimum(allcols, p - 1)] != nd)]
        cols_all = np.concatenate([own, others])
        D = np.zeros((len(keep), len(cols_all)))
        pos = np.argsort(cols_all)
        for i, rid in enumerate(keep):
            cols, vals = rows[rid]
            D[i, pos[np.searchsorted(cols_all[pos], cols)]] = vals
        for rid in keep:
            cols = rows.pop(rid)[0]
            for k in set(node_of[cols[cols < p]].tolist()):
                if k != nd:
                    touch[k].discard(rid)
        n_own = len(own)
        if n_own == 1:
            # one DOF (line, torsion): one Householder reflection H a = alpha e_1 of its column
            # (rows whose entry is negligible were cleared above, so the rank is 1)
            a = D[:, 0]
            alpha = -math.copysign(float(np.sqrt(a @ a)), a[0])
            Dr = D[:, 1:]
            if len(keep) > 1:
                v = a.copy()
                v[0] -= alpha
                Dr = Dr - np.outer(v, (2.0 / float(v @ v)) * (v @ Dr))
            c = int(own[0])
            nz = Dr[0] != 0.0
            recovery[c] = (others[nz], -Dr[0, nz] / alpha)
            order.append(c)
            new_rows = Dr[1:]
            rank = -1
        else:
            # rank of the junction's columns, judged on rows of unit norm (angles)
            sv = np.linalg.svd(D[:, :n_own] / norms[:, None], compute_uv=False)
            rank = int(np.sum(sv > rtol * sv.max(initial=0.0)))
        if rank == -1:
            pass
        elif rank == 0:
            loose.extend(own.tolist())
            for c in own.tolist():
                recovery[c] = empty
            new_rows = D[:, n_own:]
        else:
            Q, R, piv = scipy.linalg.qr(D[:, :n_own], pivoting=True, check_finite=False)
            QtD = Q.T @ D[:, n_own:]
            # pivot DOFs: R11 x_piv + R12 x_free + (Q^T D)[:rank] x_others = 0 (least squares)
            rhs = -np.hstack([R[:rank, rank:n_own], QtD[:rank]])
            y = _back_substitute(R[:rank, :rank], rhs)
            free = own[piv[rank:]]
            rest_cols = np.concatenate([free, others])
            for i in range(rank):
                c = int(own[piv[i]])
                nz = y[i] != 0.0
                recovery[c] = (rest_cols[nz], y[i, nz])
                order.append(c)
            for c in free.tolist():
                loose.append(c)
                recovery[c] = empty
            new_rows = QtD[rank:]
        if new_rows.shape[0] > new_rows.shape[1]:
            # more rows than columns: keep only their triangular factor (an orthogonal
            # transformation of rows leaves A^T A as it is), so fill does not pile up rows
            srt = np.argsort(-np.linalg.norm(new_rows, axis=1), kind="stable")
            new_rows = scipy.linalg.qr(new_rows[srt], mode="r", check_finite=False)[0]
            new_rows = new_rows[:new_rows.shape[1]]
        for r_ in new_rows:
            nz = r_ != 0.0
            if not nz.any():
                continue
            cols = others[nz]
            rows[next_id] = (cols, r_[nz])
            for k in set(node_of[cols[cols < p]].tolist()):
                touch[k].add(next_id)
            next_id += 1
        for k in set(node_of[others[others < p]].tolist()):
            if not done[k]:
                heapq.heappush(heap, (len(touch[k]), k))
    # what is left acts on the retained DOFs only
    rest = np.zeros((len(rows), q))
    for i, (cols, vals) in enumerate(rows.values()):
        rest[i, cols - p] = vals
    # junction motion: back-substitution in reverse elimination order, x_s = T x_s + P x_m,
    # with a unit column for each loose DOF (whose recovery then gives the loose directions)
    n_loose = len(loose)
    X = np.zeros((p, q + n_loose))
    for j, c in enumerate(loose):
        X[c, q + j] = 1.0
    for c in reversed(order):
        cols, coef = recovery[c]
        junction = cols < p
        if junction.any():
            X[c] += coef[junction] @ X[cols[junction]]
        X[c, cols[~junction] - p] += coef[~junction]
    G = X[:, :q]
    N = np.zeros((p, 0))
    if n_loose:
        N, _r = np.linalg.qr(X[:, q:])
        G = G - N @ (N.T @ G)
    return rest, G, N


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
