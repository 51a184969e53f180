"""Small model builders shared by the solver tests (plain data, no solver results)."""

from __future__ import annotations

import numpy as np

import solver
from solver import Anchor, Mass, Model, Spring


def chain(masses, ks, left=True, right=False, kind="line", name="chain"):
    """A chain of masses m1..mn joined by springs s1..; anchors "A" (left) and "B" (right).

    ``ks`` lists the springs from left to right: with a left anchor the first spring joins A-m1, with
    a right anchor the last joins mn-B. len(ks) must be n - 1 + left + right.
    """
    n = len(masses)
    assert len(ks) == n - 1 + int(left) + int(right)
    ms = tuple(Mass(id=f"m{i + 1}", x=float(i + 1), y=0.0, mass=float(m))
               for i, m in enumerate(masses))
    anchors = []
    nodes = [m.id for m in ms]
    if left:
        anchors.append(Anchor(id="A", x=0.0, y=0.0))
        nodes = ["A"] + nodes
    if right:
        anchors.append(Anchor(id="B", x=float(n + 1), y=0.0))
        nodes = nodes + ["B"]
    springs = tuple(Spring(id=f"s{i + 1}", a=nodes[i], b=nodes[i + 1], k=float(k))
                    for i, k in enumerate(ks))
    return Model(kind=kind, name=name, masses=ms, anchors=tuple(anchors), springs=springs)


def uniform(n, m=2.0, k=800.0, boundary="FF"):
    """n equal masses m and springs k; boundary FF (fixed-fixed), FR (fixed-free), XX (free-free)."""
    left, right = {"FF": (True, True), "FR": (True, False), "XX": (False, False)}[boundary]
    return chain([m] * n, [k] * (n - 1 + left + right), left=left, right=right)


def mac(a, b) -> float:
    """Modal assurance criterion of two real vectors (1 = same shape up to scale and sign)."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    return float((a @ b) ** 2 / ((a @ a) * (b @ b)))


def state_matrix(M, K, C=None):
    """A = [[0, I], [-M^-1 K, -M^-1 C]] of M x'' + C x' + K x = 0."""
    M, K = np.asarray(M, float), np.asarray(K, float)
    n = M.shape[0]
    C = np.zeros((n, n)) if C is None else np.asarray(C, float)
    Minv = np.linalg.inv(M)
    return np.block([[np.zeros((n, n)), np.eye(n)], [-Minv @ K, -Minv @ C]])


def dense(mat):
    return mat.toarray() if hasattr(mat, "toarray") else np.asarray(mat, float)


def square_lattice(n, k=1000.0, k_t=None, m=1.0, name="lattice"):
    """Planar n x n lattice of masses m at integer points, nearest neighbours joined by springs
    (k, k_t), and each edge mass joined by the same spring to an anchor one step outside.

    With ``k_t == k`` every spring is isotropic (``k I``), so K = L (x) I_2 with L the grid
    Laplacian with fixed edges: lambda = (4 k / m) (sin^2(i pi / 2(n+1)) + sin^2(j pi / 2(n+1))),
    i, j = 1..n, each twice (x and y) (math: separable Dirichlet Laplacian).
    """
    k_t = k if k_t is None else k_t
    inside = {(i, j) for i in range(n) for j in range(n)}
    masses = tuple(Mass(f"n{i}_{j}", float(i), float(j), float(m)) for i, j in sorted(inside))
    anchors, springs = {}, []
    for i, j in sorted(inside):
        for di, dj in ((1, 0), (0, 1), (-1, 0), (0, -1)):
            p = (i + di, j + dj)
            if p in inside:
                if (di, dj) in ((1, 0), (0, 1)):
                    springs.append(Spring(f"s{i}_{j}_{p[0]}_{p[1]}", f"n{i}_{j}",
                                          f"n{p[0]}_{p[1]}", k, k_t=k_t))
            else:
                aid = f"A{p[0]}_{p[1]}"
                anchors.setdefault(aid, Anchor(aid, float(p[0]), float(p[1])))
                springs.append(Spring(f"g{i}_{j}_{p[0]}_{p[1]}", aid, f"n{i}_{j}", k, k_t=k_t))
    return Model(kind="planar", name=name, masses=masses, anchors=tuple(anchors.values()),
                 springs=tuple(springs))


def lattice_eigenvalues(n, k=1000.0, m=1.0):
    """Closed form of :func:`square_lattice` with k_t = k, ascending, (rad/s)^2."""
    s = np.sin(np.arange(1, n + 1) * np.pi / (2 * (n + 1))) ** 2
    lam = 4 * k / m * (s[:, None] + s[None, :]).ravel()
    return np.sort(np.concatenate([lam, lam]))


def mp_reference(model, dps=50):
    """Independent high-precision modes of a model (mpmath), built from its element list.

    Assembles M and K in mpmath on the unlocked directions of every mass (axial ``k e e^T`` plus
    transverse ``k_t n n^T`` in a planar model, with ``e`` from the drawn positions), condenses
    massless junctions exactly by the Schur complement with a pseudo-inverse (directions no
    spring holds carry no load), and solves ``M^-1/2 K M^-1/2`` with ``mpmath.eigsy``.

    Returns a dict: ``dofs`` [(mass_id, direction)] that carry mass, ``K`` and ``M`` (mpmath
    matrices on them), ``lam`` (ascending mpf, exact zeros where the eigenvalue is zero to the
    working precision), ``hz`` (floats), ``n_zero`` and ``scale`` (the larger of the largest
    eigenvalue and the largest diagonal stiffness over the smallest mass, (rad/s)^2).
    """
    import mpmath as mp

    with mp.workdps(dps):
        dirs = model.directions
        planar = model.kind == "planar"
        index, masses = {}, []
        for m in model.masses:
            for d in dirs:
                if d not in m.fixed:
                    index[(m.id, d)] = len(masses)
                    masses.append(mp.mpf(m.mass))
        n = len(masses)
        pos = {el.id: (mp.mpf(el.x), mp.mpf(el.y)) for el in model.masses + model.anchors}
        K = mp.zeros(n, n)
        for s in model.springs:
            if planar:
                (xa, ya), (xb, yb) = pos[s.a], pos[s.b]
                length = mp.sqrt((xb - xa) ** 2 + (yb - ya) ** 2)
                e = ((xb - xa) / length, (yb - ya) / length)
                nv = (-e[1], e[0])
                S = [[mp.mpf(s.k) * e[i] * e[j] + mp.mpf(s.k_t) * nv[i] * nv[j] for j in range(2)]
                     for i in range(2)]
            else:
                S = [[mp.mpf(s.k)]]
            for ea, sa in ((s.a, -1), (s.b, 1)):
                for eb, sb in ((s.a, -1), (s.b, 1)):
                    for i, di in enumerate(dirs):
                        for j, dj in enumerate(dirs):
                            p, q = index.get((ea, di)), index.get((eb, dj))
                            if p is not None and q is not None:
                                K[p, q] += sa * sb * S[i][j]
        keep = [i for i in range(n) if masses[i] > 0]
        slave = [i for i in range(n) if masses[i] == 0]
        scale = max([abs(K[i, i]) for i in range(n)] + [mp.mpf(0)])

        def sub(rows, cols):
            out = mp.zeros(len(rows), len(cols))
            for a, r in enumerate(rows):
                for b, c in enumerate(cols):
                    out[a, b] = K[r, c]
            return out

        Kr = sub(keep, keep)
        if slave:
            Kss, Ksm = sub(slave, slave), sub(slave, keep)
            ev, Q = mp.eigsy(Kss)
            tol = mp.mpf(10) ** (-(dps - 12)) * max(scale, mp.mpf(1e-300))
            pinv = mp.zeros(len(slave), len(slave))
            for t in range(len(slave)):
                if abs(ev[t]) > tol:
                    pinv += (Q[:, t] * Q[:, t].T) / ev[t]
            Kr = Kr - Ksm.T * pinv * Ksm
        nm = len(keep)
        Mr = mp.zeros(nm, nm)
        for a, i in enumerate(keep):
            Mr[a, a] = masses[i]
        dofs = [d for d, i in sorted(index.items(), key=lambda kv: kv[1]) if masses[i] > 0]
        if nm == 0:
            return {"dofs": [], "K": Kr, "M": Mr, "lam": [], "hz": np.zeros(0), "n_zero": 0,
                    "scale": 0.0}
        A = mp.zeros(nm, nm)
        for a in range(nm):
            for b in range(nm):
                A[a, b] = Kr[a, b] / mp.sqrt(Mr[a, a] * Mr[b, b])
        lam = sorted(mp.eigsy(A, eigvals_only=True))
        top = max([abs(x) for x in lam] + [scale / min(Mr[a, a] for a in range(nm))])
        lam = [mp.mpf(0) if abs(x) <= mp.mpf(10) ** (-(dps - 15)) * top else x for x in lam]
        hz = np.array([float(mp.sqrt(max(x, 0)) / (2 * mp.pi)) for x in lam])
        return {"dofs": dofs, "K": Kr, "M": Mr, "lam": lam, "hz": hz,
                "n_zero": sum(1 for x in lam if x == 0), "scale": float(top)}


def mp_rayleigh(ref, motion):
    """Rayleigh quotient u^T K u / u^T M u (mpmath) of ``motion`` {mass_id: {direction: value}}
    on the reference's condensed K and M, and the spectral scale: the largest eigenvalue, or
    when every mode is a zero mode, the largest stiffness over the smallest mass."""
    import mpmath as mp

    with mp.workdps(30):
        u = mp.matrix([motion.get(mid, {}).get(d, 0.0) for mid, d in ref["dofs"]])
        num = (u.T * ref["K"] * u)[0, 0]
        den = (u.T * ref["M"] * u)[0, 0]
        return float(num / den), ref["scale"]


__all__ = ["chain", "uniform", "mac", "state_matrix", "dense", "solver", "square_lattice",
           "lattice_eigenvalues", "mp_reference", "mp_rayleigh"]
