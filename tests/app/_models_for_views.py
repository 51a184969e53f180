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
