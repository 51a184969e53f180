"""Small models shared by the view tests (TD-3S of /work/shared/REFERENCES.md and friends)."""
from solver import Anchor, Initial, Mass, Model, Spring

M, K = 2.0, 800.0


def td3s(x0=0.01):
    """TD-3S: two masses, three springs, walls both sides; x0 on mass 1 (Rao, ch. 5)."""
    return Model(kind="line", name="TD-3S", masses=(Mass("m1", 1, 0, M), Mass("m2", 2, 0, M)),
                 anchors=(Anchor("A", 0, 0), Anchor("B", 3, 0)),
                 springs=(Spring("k1", "A", "m1", K), Spring("k2", "m1", "m2", K),
                          Spring("k3", "m2", "B", K)),
                 initial=(Initial("m1", (("x", x0),)),) if x0 else ())


def chain(n=20):
    """Uniform fixed-fixed chain of n masses (CH-FF family)."""
    masses = tuple(Mass(f"m{i}", i, 0, M) for i in range(1, n + 1))
    anchors = (Anchor("A", 0, 0), Anchor("B", n + 1, 0))
    ids = ["A"] + [m.id for m in masses] + ["B"]
    springs = tuple(Spring(f"k{i}", ids[i], ids[i + 1], K) for i in range(n + 1))
    return Model(kind="line", name=f"chain of {n}", masses=masses, anchors=anchors, springs=springs)


def fan_drive_frequencies():
    """The fan drive example's natural frequencies (Hz) from scipy: discs 0.05, 0.004, 0.6 kg m^2
    on shafts of 20000 and 9000 N m/rad, free at both ends (math: torsion chain stiffness
    matrix written out by hand)."""
    import numpy as np
    import scipy.linalg

    J = np.diag([0.05, 0.004, 0.6])
    k1, k2 = 20000.0, 9000.0
    K = np.array([[k1, -k1, 0], [-k1, k1 + k2, -k2], [0, -k2, k2]])
    w2 = scipy.linalg.eigh(K, J, eigvals_only=True)
    return np.sqrt(np.clip(w2, 0, None)) / (2 * np.pi)
