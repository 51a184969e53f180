"""Rigid bodies on mounts and geared drive trains: the statements a designer reads.

:func:`body_coupling` gives, for each planar rigid body, the 3x3 stiffness of its mounts about
its centre of mass (the springs attached to it, their other ends held), whether translation and
rotation are coupled, and where the elastic centre lies. Terms of the trade: *bounce* is the
vertical translation (y), *sway* the horizontal one (x), *rock* the rotation (theta).

The elastic centre is the point at which a static force gives a pure translation (no rock).
Derived here: with the mount stiffness about the centre of mass partitioned as
``K = [[K_tt, k_tr], [k_tr^T, k_rr]]`` (K_tt 2x2 on x, y; k_tr 2x1 coupling to theta), a force
``F`` at point ``r`` (from the centre of mass) is the load ``(F, r x F)``; a pure translation
``u`` needs ``K_tt u = F`` and ``k_tr . u = r x F = (-r_y, r_x) . K_tt u`` for every ``u``, so
``K_tt (-r_y, r_x) = k_tr``: ``(-r_y, r_x) = K_tt^+ k_tr``. Where K_tt is singular (mounts that
resist only vertical motion) the pseudo-inverse gives the point of that line nearest the centre
of mass: for vertical springs k1, k2 at x = a, b it is ``x_e = (k1 a + k2 b) / (k1 + k2)``, the
closed form of common practice.

:func:`referred_system` gives a geared torsion model's equivalent on one shaft: with ``r_i`` the
speed of disc i over the speed of the reference shaft, every inertia becomes ``r_i^2 J_i`` and
every torsional stiffness ``r^2 k`` (kinetic and strain energy kept: a standard textbook
method, from memory); a rigid mesh joins its two discs into one, a mesh stiffness (given on
shaft a) becomes ``r_a^2 k_mesh``. Its natural frequencies are those of the geared model.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import ModelError, checked_arguments
from .model import Anchor, Mass, Model, Spring
from .naming import named, named_id, quoted_id

#: Translation and rotation count as coupled when a normalised coupling term
#: |K_d,theta| / sqrt(K_dd K_theta,theta) exceeds this (1 %): below it the coupled and the
#: uncoupled frequencies differ by well under 0.01 % (second order in the coefficient).
COUPLING_RTOL = 0.01
_WORDS = {"x": "sway", "y": "bounce"}


@dataclass(frozen=True)
class BodyCoupling:
    """Mount coupling of one rigid body.

    Attributes
    ----------
    body_id, label : the body.
    stiffness : (3, 3) ndarray on (x, y, theta) about the centre of mass: N/m, N/rad (= N m/m),
        N m/rad.
    coefficients : {"sway-rock": c, "bounce-rock": c} normalised coupling terms in [0, 1].
    coupled : True when a coefficient exceeds :data:`COUPLING_RTOL`.
    elastic_centre_m : (x, y) of the elastic centre in the model's frame, m (None when the
        mounts resist no translation at all).
    offset_m : (dx, dy) of the elastic centre from the centre of mass, m.
    statement : one plain line for the report.
    """

    body_id: str
    label: str
    stiffness: np.ndarray
    coefficients: dict
    coupled: bool
    elastic_centre_m: tuple | None
    offset_m: tuple | None
    statement: str


def _mm(v: float) -> str:
    return f"{abs(v) * 1000:.3g} mm"


def _where(dx: float, dy: float, tol: float) -> str:
    """``42 mm right of and 8 mm above the centre of mass``."""
    parts = []
    if abs(dx) > tol:
        parts.append(f"{_mm(dx)} {'right' if dx > 0 else 'left'} of")
    if abs(dy) > tol:
        parts.append(f"{_mm(dy)} {'above' if dy > 0 else 'below'}")
    if not parts:
        return "at the centre of mass"
    return " and ".join(parts) + " the centre of mass"


@checked_arguments
def body_coupling(model: Model) -> list[BodyCoupling]:
    """One :class:`BodyCoupling` per rigid body of a planar model (empty for other models).

    The stiffness counts every spring with an end on the body (k along the line between the
    attachment points, k_t across it), its other end held; dashpots are left out.
    """
    if not isinstance(model, Model):
        raise ModelError(f"body_coupling: expected a Model, got {type(model).__name__}")
    out = []
    nodes = {el.id: el for el in model.masses + model.anchors}
    for body in model.bodies:
        K = np.zeros((3, 3))
        size = 0.0
        for s in model.springs:
            for end, other, o_self, o_other in (("a", s.b, s.a_offset, s.b_offset),
                                               ("b", s.a, s.b_offset, s.a_offset)):
                if getattr(s, end) != body.id:
                    continue
                far = nodes[other]
                p_self = np.array([body.x + o_self[0], body.y + o_self[1]])
                p_far = np.array([far.x + o_other[0], far.y + o_other[1]])
                e = p_far - p_self
                e = e / np.hypot(*e)
                n = np.array([-e[1], e[0]])
                o = np.asarray(o_self, float)
                size = max(size, float(np.hypot(*o)))
                for value, u in ((s.k, e), (s.k_t, n)):
                    if value:
                        c = np.array([u[0], u[1], o[0] * u[1] - o[1] * u[0]])
                        K += value * np.outer(c, c)
        out.append(_coupling_of(model, body, K, size))
    return out


def _coupling_of(model, body: Mass, K: np.ndarray, size: float) -> BodyCoupling:
    coef = {}
    for i, d in ((0, "x"), (1, "y")):
        den = np.sqrt(K[i, i] * K[2, 2])
        coef[f"{_WORDS[d]}-rock"] = float(abs(K[i, 2]) / den) if den > 0 else 0.0
    coupled = any(c > COUPLING_RTOL for c in coef.values())
    Ktt = K[:2, :2]
    who = named(body)
    if not np.any(Ktt):
        return BodyCoupling(body.id, body.label, K, coef, False, None, None,
                            f"{who}: its mounts resist no translation; it has no elastic centre")
    v = np.linalg.pinv(Ktt, rcond=1e-12) @ K[:2, 2]
    dx, dy = float(v[1]), float(-v[0])
    centre = (body.x + dx, body.y + dy)
    # offsets far below the mounts' own spread are rounding, not a position
    tol = 1e-9 * max(size, 1e-3)
    where = _where(dx, dy, tol)
    pairs = [k.split("-")[0] for k, c in coef.items() if c > COUPLING_RTOL]
    if coupled:
        head = ", ".join(pairs) + " and rock are coupled"
        statement = f"{who}: {head}: the elastic centre lies {where}"
    else:
        statement = (f"{who}: bounce, sway and rock are uncoupled: the elastic centre lies"
                     f" {where}")
    return BodyCoupling(body.id, body.label, K, coef, coupled, centre, (dx, dy), statement)


# ------------------------------------------------------------------------------ gear stages
@dataclass(frozen=True)
class ReferredSystem:
    """A geared torsion model's equivalent on the shaft of one disc.

    Attributes
    ----------
    reference : the disc id whose shaft speed is the reference.
    speed_ratios : {disc id: speed of that disc / speed of the reference}.
    model : the equivalent torsion Model without gears (discs joined by a rigid mesh merged into
        one, named after the first; inertias times r^2, stiffnesses times r^2).
    merged : {equivalent disc id: tuple of the model's disc ids it holds}.
    statements : one line per gear stage, and one for the whole.
    """

    reference: str
    speed_ratios: dict
    model: Model
    merged: dict
    statements: tuple


def _ratio_text(r: float) -> str:
    return f"{r:.4g}" if r >= 1 else f"1/{1 / r:.4g}"


@checked_arguments
def referred_system(model: Model, disc_id: str) -> ReferredSystem:
    """The equivalent system referred to the shaft of disc ``disc_id`` (see the module
    docstring). Raises ModelError for a model that is not torsion, an unknown disc, or gear
    stages whose ratios disagree around a loop."""
    if not isinstance(model, Model):
        raise ModelError(f"referred_system: expected a Model, got {type(model).__name__}")
    if model.kind != "torsion":
        raise ModelError("referred_system: only torsion models have gear stages and shafts")
    discs = {m.id: m for m in model.masses}
    if disc_id not in discs:
        raise ModelError(f"referred_system: {quoted_id(model, disc_id)} is not a disc of the"
                         " model")
    # speed ratios: a shaft (discs joined by springs) turns at one speed; a gear stage
    # scales it, speed a = n speed b
    links: dict = {m: [] for m in discs}
    for s in model.springs:
        if s.a in discs and s.b in discs:
            links[s.a].append((s.b, 1.0, s))
            links[s.b].append((s.a, 1.0, s))
    for g in model.gears:
        links[g.a].append((g.b, 1.0 / g.ratio, g))
        links[g.b].append((g.a, g.ratio, g))
    ratio = {disc_id: 1.0}
    todo = [disc_id]
    while todo:
        here = todo.pop()
        for there, factor, via in links[here]:
            r = ratio[here] * factor
            if there not in ratio:
                ratio[there] = r
                todo.append(there)
            elif abs(ratio[there] - r) > 1e-9 * max(r, ratio[there]):
                raise ModelError(
                    f"referred_system: {named(via, 'gear' if via in model.gears else 'spring')}"
                    f" closes a loop whose speed ratios disagree ({named_id(model, there, 'disc')}"
                    f" would turn at both {ratio[there]:.6g} and {r:.6g} times the reference"
                    " speed)")
    for m in discs:   # shafts no gear or spring reaches keep their own speed
        ratio.setdefault(m, 1.0)
    # discs joined by rigid meshes become one
    parent = {m: m for m in discs}

    def root(m):
        while parent[m] != m:
            parent[m] = parent[parent[m]]
            m = parent[m]
        return m

    order = {m.id: i for i, m in enumerate(model.masses)}
    for g in model.gears:
        if g.k_mesh is None:
            ra, rb = root(g.a), root(g.b)
            if ra != rb:
                keep, drop = sorted((ra, rb), key=order.get)
                parent[drop] = keep
    merged: dict = {}
    for m in model.masses:
        merged.setdefault(root(m.id), []).append(m.id)
    masses = []
    for head, members in merged.items():
        first = discs[head]
        label = " + ".join(discs[i].label for i in members)[:1000]
        masses.append(Mass(head, first.x, first.y,
                           sum(discs[i].mass * ratio[i] ** 2 for i in members), label=label,
                           fixed=tuple(sorted({d for i in members for d in discs[i].fixed}))))
    springs = []
    for s in model.springs:
        ends = [root(e) if e in discs else e for e in (s.a, s.b)]
        if ends[0] == ends[1]:
            continue   # a spring inside a rigidly meshed group strains nothing
        r = ratio[s.a] if s.a in discs else ratio[s.b]
        springs.append(Spring(s.id, ends[0], ends[1], s.k * r * r, label=s.label))
    for g in model.gears:
        if g.k_mesh is not None:
            springs.append(Spring(g.id, root(g.a), root(g.b), g.k_mesh * ratio[g.a] ** 2,
                                  label=g.label))
    anchors = tuple(Anchor(a.id, a.x, a.y, label=a.label) for a in model.anchors)
    equivalent = Model(kind="torsion", name=f"{model.name} referred to {disc_id}".strip(),
                       masses=tuple(masses), anchors=anchors, springs=tuple(springs))
    ref = named_id(model, disc_id, "disc")
    lines = []
    for g in model.gears:
        side = ratio[g.b]
        mesh = ("rigid mesh" if g.k_mesh is None else
                f"mesh stiffness {g.k_mesh:.4g} N m/rad on shaft a, {g.k_mesh * ratio[g.a] ** 2:.4g}"
                " referred")
        lines.append(
            f"{named(g, 'gear stage')}: {named_id(model, g.a, 'disc')} turns"
            f" {_ratio_text(g.ratio)} times as fast as {named_id(model, g.b, 'disc')}; referred"
            f" to the shaft of {ref}, inertias and stiffnesses on the side of"
            f" {quoted_id(model, g.b)} are multiplied by {side ** 2:.4g} (speed ratio"
            f" {_ratio_text(side)} squared); {mesh}")
    lines.append(f"equivalent system on the shaft of {ref}: "
                 + ", ".join(f"{quoted_id(equivalent, h)} {m.mass:.4g} kg m^2"
                             for h, m in zip(merged, masses))
                 + ("; " + ", ".join(f"{quoted_id(equivalent, s.id)} {s.k:.4g} N m/rad"
                                     for s in springs) if springs else ""))
    return ReferredSystem(reference=disc_id, speed_ratios=dict(ratio), model=equivalent,
                          merged={h: tuple(v) for h, v in merged.items()},
                          statements=tuple(lines))


__all__ = ["BodyCoupling", "COUPLING_RTOL", "ReferredSystem", "body_coupling",
           "referred_system"]
