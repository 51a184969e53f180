"""Rigid bodies and gear stages as drawn: mount points, attachment points, the coupling in words.

Shared by the canvas, the motion view and the report, so all three put a spring's end on the
same point of a body and turn the body by the same angle.

A planar mass with an ``inertia`` > 0 is a rigid body (x, y and theta). A spring or dashpot end
on it may carry an offset (``a_offset`` / ``b_offset``, m, in the body's frame, which is the
global frame at rest); the distinct nonzero offsets on a body are its *mount points*. A mode or
a response moves a body by (u_x, u_y) and turns it by theta (rad, counter-clockwise); drawn
magnified by ``scale``, an attachment point at offset r lands at

    centre + scale * u + R(scale * theta) r

with R the rotation matrix: the displacement field of a rigid body, magnified, and the turn kept
a true rotation so the body keeps its shape on the drawing however large the magnification.
"""

from __future__ import annotations

import math

from solver.errors import ModelError

ORIGIN = (0.0, 0.0)


def is_body(model, mass) -> bool:
    """True when ``mass`` is drawn and moves as a rigid body (planar, inertia > 0)."""
    return model.kind == "planar" and getattr(mass, "inertia", 0.0) > 0


def offset_of(link, end: str) -> tuple[float, float]:
    """``link``'s attachment offset (m) at end ``"a"`` or ``"b"``; (0, 0) for the centre."""
    off = getattr(link, f"{end}_offset", ORIGIN)
    return (float(off[0]), float(off[1]))


def links_of(model) -> tuple:
    """Springs and dashpots of ``model``, the elements with attachment points."""
    return tuple(model.springs) + tuple(model.dampers)


def mount_points(model) -> dict[str, list[tuple[float, float]]]:
    """``{body_id: [(dx, dy), ...]}``: each body's distinct nonzero attachment offsets (m),
    in the order the springs and dashpots name them. Cached on the model (it never changes)."""
    cached = model.__dict__.get("_drawn_mounts")
    if cached is not None:
        return cached
    bodies = {m.id for m in model.masses if is_body(model, m)}
    out: dict[str, list[tuple[float, float]]] = {b: [] for b in bodies}
    if bodies:
        for link in links_of(model):
            for end in ("a", "b"):
                node = getattr(link, end)
                off = offset_of(link, end)
                if node in bodies and off != ORIGIN and off not in out[node]:
                    out[node].append(off)
    model.__dict__["_drawn_mounts"] = out
    return out


def mount_extent(model, body_id: str) -> tuple[float, float]:
    """Largest |dx| and |dy| (m) of a body's mount points: the box is drawn round them."""
    pts = mount_points(model).get(body_id, ())
    return (max((abs(p[0]) for p in pts), default=0.0),
            max((abs(p[1]) for p in pts), default=0.0))


def rotated(offset, theta: float) -> tuple[float, float]:
    """``offset`` (dx, dy) turned counter-clockwise by ``theta`` rad (y up)."""
    c, s = math.cos(theta), math.sin(theta)
    return (offset[0] * c - offset[1] * s, offset[0] * s + offset[1] * c)


def attachment_point(node, offset, displacement: dict | None = None,
                     scale: float = 1.0) -> tuple[float, float]:
    """Model point (m, y up) of an attachment at ``offset`` on ``node`` moved by
    ``displacement`` ``{direction: value}`` magnified by ``scale`` (see the module text)."""
    d = displacement or {}
    x = node.x + scale * d.get("x", 0.0)
    y = node.y + scale * d.get("y", 0.0)
    if offset != ORIGIN:
        ox, oy = rotated(offset, scale * d.get("theta", 0.0))
        x, y = x + ox, y + oy
    return x, y


def link_key(link) -> tuple:
    """Links sharing this key run between the same two attachment points (drawn side by side);
    the key reads the same whichever way the link was drawn."""
    a = (link.a, offset_of(link, "a"))
    b = (link.b, offset_of(link, "b"))
    return (a, b) if a <= b else (b, a)


def body_radius(model, body_id: str) -> float:
    """Distance (m) from a body's centre to its farthest mount point (0 with none)."""
    return max((math.hypot(*p) for p in mount_points(model).get(body_id, ())), default=0.0)


# -- the coupling in words (solver.bodies) ----------------------------------------------------
def coupling(model) -> dict:
    """``{body_id: coupling}`` from ``solver.bodies.body_coupling`` (cached per model); empty
    when the model has no bodies or the solver cannot say (a body held by nothing)."""
    cached = model.__dict__.get("_drawn_coupling")
    if cached is not None:
        return cached
    out = {}
    if any(is_body(model, m) for m in model.masses):
        try:
            from solver.bodies import body_coupling

            found = body_coupling(model)
        except (ImportError, ModelError):   # a statement is an aid: the drawing goes on
            found = None
        if isinstance(found, dict):
            out = dict(found)
        elif found is not None:
            out = {getattr(c, "body_id", getattr(c, "id", None)): c for c in found}
    model.__dict__["_drawn_coupling"] = out
    return out


def coupling_statement(model, body_id: str) -> str:
    """The one-line statement of a body's coupling, "" when there is none."""
    c = coupling(model).get(body_id)
    return str(getattr(c, "statement", "") or "") if c is not None else ""


def elastic_centre(model, body_id: str) -> tuple[float, float] | None:
    """The body's elastic centre relative to its centre of mass (m, body frame), None when
    it is not a finite point."""
    c = coupling(model).get(body_id)
    e = getattr(c, "offset_m", None) if c is not None else None
    if e is None:
        return None
    try:
        x, y = float(e[0]), float(e[1])
    except (TypeError, ValueError, IndexError):
        return None
    return (x, y) if math.isfinite(x) and math.isfinite(y) else None


def referred_statements(model) -> list[str]:
    """Lines stating the equivalent system of a geared torsion model referred to one shaft
    (``solver.bodies.referred_system``); empty without gear stages."""
    if model.kind != "torsion" or not getattr(model, "gears", ()):
        return []
    cached = model.__dict__.get("_drawn_referred")
    if cached is not None:
        return cached
    lines: list[str] = []
    try:
        from solver.bodies import referred_system

        disc = model.gears[0].a
        ref = referred_system(model, disc)
        found = getattr(ref, "statements", None)
        if found is None:
            found = [getattr(ref, "statement", "")]
        lines = [str(s) for s in found if s]
    except (ImportError, ModelError):   # a statement is an aid: the drawing goes on
        lines = []
    model.__dict__["_drawn_referred"] = lines
    return lines


__all__ = [
    "ORIGIN",
    "attachment_point",
    "body_radius",
    "coupling",
    "coupling_statement",
    "elastic_centre",
    "is_body",
    "link_key",
    "links_of",
    "mount_extent",
    "mount_points",
    "offset_of",
    "referred_statements",
    "rotated",
]
