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


__all__ = ["chain", "uniform", "mac", "state_matrix", "dense", "solver"]
