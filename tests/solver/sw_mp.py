"""High-precision reference frequencies (mpmath), built from a model's data alone.

Nothing here uses the solver's assembly, condensation or eigen-solver: the stiffness and mass
matrices are assembled from the springs' end positions and values (a planar spring's 2x2 block is
``k e e^T + k_t n n^T``, math), massless nodes are condensed with a pseudo-inverse computed from
``mpmath.eigsy`` of their block, and the eigenvalues of ``M^-1/2 K_c M^-1/2`` come from
``mpmath.eigsy`` at ``dps`` digits. Values may span 50 decades (a "rigid" link of k * 1e24): the
working precision carries them. (:func:`check_limits` compares the solver's limits with these;
it uses the solver only to edit one value of the model data.)
"""

from __future__ import annotations

import math
import re

import mpmath as mp

#: how far (as a factor) a reference takes a value toward its limit: 24 decades, so the
#: reference differs from the limit by ~1e-24 relative, far below any tolerance used
FAR = 1e24


def _directions(model):
    return {"line": (model.axis,), "planar": ("x", "y"), "torsion": ("theta",)}[model.kind]


def full_matrices(model):
    """(K, masses, dofs) in mpmath: every unlocked direction of every node, junctions included."""
    dirs = _directions(model)
    dofs = [(m.id, d) for m in model.masses for d in dirs if d not in m.fixed]
    index = {dof: i for i, dof in enumerate(dofs)}
    pos = {n.id: (mp.mpf(n.x), mp.mpf(n.y)) for n in model.masses + model.anchors}
    K = mp.zeros(len(dofs), len(dofs))
    for s in model.springs:
        if model.kind == "planar":
            (xa, ya), (xb, yb) = pos[s.a], pos[s.b]
            length = mp.sqrt((xb - xa) ** 2 + (yb - ya) ** 2)
            e = ((xb - xa) / length, (yb - ya) / length)
            n = (-e[1], e[0])
            S = [[mp.mpf(s.k) * e[i] * e[j] + mp.mpf(s.k_t) * n[i] * n[j] for j in range(2)]
                 for i in range(2)]
        else:
            S = [[mp.mpf(s.k)]]
        for node_i, sign_i in ((s.a, -1), (s.b, 1)):
            for node_j, sign_j in ((s.a, -1), (s.b, 1)):
                for di, d in enumerate(dirs):
                    for dj, d2 in enumerate(dirs):
                        i, j = index.get((node_i, d)), index.get((node_j, d2))
                        if i is not None and j is not None:
                            K[i, j] += sign_i * sign_j * S[di][dj]
    masses = [mp.mpf(next(m.mass for m in model.masses if m.id == mid)) for mid, _ in dofs]
    return K, masses, dofs


def eigenvalues(model, dps: int = 60):
    """Ascending w^2 ((rad/s)^2) of the model's modes, as mpf, to about ``dps`` digits."""
    with mp.workdps(dps):
        K, masses, _ = full_matrices(model)
        heavy = [i for i, m in enumerate(masses) if m > 0]
        light = [i for i, m in enumerate(masses) if m == 0]
        Kc = mp.matrix([[K[i, j] for j in heavy] for i in heavy]) if heavy else mp.matrix(0, 0)
        if light and heavy:
            Kll = mp.matrix([[K[i, j] for j in light] for i in light])
            Klh = mp.matrix([[K[i, j] for j in heavy] for i in light])
            E, Q = mp.eigsy(Kll)
            big = max(abs(x) for x in E)
            pinv = mp.zeros(len(light), len(light))
            for k, ev in enumerate(E):
                if abs(ev) > mp.mpf(10) ** (-dps // 2) * big:
                    q = Q[:, k]
                    pinv += (q * q.T) / ev
            Kc = Kc - Klh.T * pinv * Klh
        if not heavy:
            return []
        s = [1 / mp.sqrt(masses[i]) for i in heavy]
        A = mp.matrix([[Kc[i, j] * s[i] * s[j] for j in range(len(heavy))]
                       for i in range(len(heavy))])
        A = (A + A.T) / 2
        E = mp.eigsy(A, eigvals_only=True)
        return sorted(E[i] for i in range(len(heavy)))


def frequencies_hz(model, dps: int = 60):
    """Ascending natural frequencies in Hz (float), negative round-off clipped to 0."""
    with mp.workdps(dps):
        return [float(mp.sqrt(max(v, 0)) / (2 * mp.pi)) for v in eigenvalues(model, dps)]


def numbers_in(message):
    return [float(x) for x in re.findall(r"[-+]?\d+(?:\.\d+)?(?:e[-+]?\d+)?", message)]


def stated(message, value, rtol=1e-6, atol=1e-9):
    """True when the message states ``value`` (to its 7 significant digits)."""
    return any(abs(v - value) <= rtol * abs(value) + atol for v in numbers_in(message))


def check_limits(model, element_id, field):
    """limit_spectrum against sw_mp eigenvalues with the value 1e24 times smaller / larger:
    finite limits to rtol 1e-8 plus 1e-10 of the model's stiffness scale (largest k over
    smallest mass, or its largest eigenvalue), zeros to that atol, and an infinite limit where the
    reference exceeds 1e10 x that scale."""
    from solver.tuning import limit_spectrum, value_of, with_value

    v = value_of(model, element_id, field)
    light = min(m.mass for m in model.masses if m.mass > 0)
    stiff = max((max(s.k, s.k_t) for s in model.springs), default=0.0)
    scale = float(max(eigenvalues(model, 30)[-1], stiff / light))
    for toward, factor in (("zero", 1 / FAR), ("infinity", FAR)):
        got = limit_spectrum(model, element_id, field, toward)
        ref = [float(x) for x in eigenvalues(with_value(model, element_id, v * factor, field))]
        assert len(got) == len(ref)
        for g, r in zip(got, ref):
            if math.isinf(g):
                assert r > 1e10 * scale, (element_id, field, toward, got, ref)
            else:
                assert abs(g - r) <= 1e-8 * abs(r) + 1e-10 * scale, (element_id, field, toward, got, ref)
