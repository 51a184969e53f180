"""Paint a whole model, at rest or deformed, fitted into a rectangle.

One painter for the motion view, the report and its thumbnails, so they share one look with the
canvas (same symbols from :mod:`app.shapes`, same palette from :mod:`app.style`).

Model coordinates are metres with y up; the rectangle is in the painter's device coordinates
(y down). Displacements are ``{mass_id: {direction: value}}`` in model units (m, rad) and are
multiplied by ``scale`` before drawing (a magnification: mode shapes and small vibrations are
invisible at true scale). In a line model a mass moves along the model's axis; in a planar model
in x and y; in a torsion model the discs stay put and a radius line on each disc turns by
``theta * scale``. A planar rigid body (a mass with an inertia) is a box round its mount points,
moved by ``(x, y) * scale`` and turned by ``theta * scale`` (:mod:`app.drawing.bodies`); springs
and dashpots end on their attachment points. Gear stages of a torsion model are drawn as two
pitch circles between their discs with the speed ratio.
"""

from __future__ import annotations

import math
from statistics import median

import numpy as np
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QFont, QFontMetricsF, QPainter, QPen

from app.drawing import bodies as _bodies
from app.drawing import shapes
from app.drawing.style import LIGHT, Style, current_style

#: A rotation drawn larger than this (rad) would wrap visually; fit_scale aims below it.
_MAX_DRAWN_ROTATION = math.radians(55)


def _fmt_value(v: float, unit: str) -> str:
    from app.text.numbers import quantity  # the one number format of panels, report and CLI

    return quantity(v, unit)


class SketchLayout:
    """Where every node of a model lands inside ``rect``, and the size of the symbols.

    Attributes
    ----------
    px_per_m : float
        Drawing scale, device units per metre of model coordinates.
    base : float
        Basic symbol size in device units (a 'typical' mass block side).
    reference_mass : float
        Mass (kg, kg m^2 in torsion) drawn at ``base`` size: the median of the model's masses.
    """

    def __init__(self, model, rect: QRectF, base: float | None = None):
        self.model = model
        self._geometry = _geometry_key(model)
        self.rect = QRectF(rect)
        nodes = list(model.masses) + list(model.anchors)
        self._nodes = {n.id: n for n in nodes}
        self._is_mass = {m.id for m in model.masses}
        w, h = max(1.0, rect.width()), max(1.0, rect.height())
        if base is None:
            base = min(60.0, max(10.0, min(w, h) / 9.0))
        masses = [m.mass for m in model.masses if m.mass > 0]
        self.reference_mass = median(masses) if masses else 1.0
        # Room round the nodes for blocks, anchors' hatching and labels.
        margin = 1.6 * base + 0.5 * base
        if nodes:
            xs = [n.x for n in nodes]
            ys = [n.y for n in nodes]
            # a body's box reaches out to its mount points
            for m in model.masses:
                ex, ey = _bodies.mount_extent(model, m.id) if _bodies.is_body(model, m) \
                    else (0.0, 0.0)
                if ex or ey:
                    xs += [m.x - ex, m.x + ex]
                    ys += [m.y - ey, m.y + ey]
            x0, x1, y0, y1 = min(xs), max(xs), min(ys), max(ys)
        else:
            x0 = x1 = y0 = y1 = 0.0
        dx, dy = x1 - x0, y1 - y0
        aw, ah = max(1.0, w - 2 * margin), max(1.0, h - 2 * margin)
        extent = max(dx, dy)
        if extent <= 1e-12:
            ppm = min(aw, ah) / 1.0  # a single point: any scale, centred
        else:
            cands = []
            if dx > 1e-9 * extent:
                cands.append(aw / dx)
            if dy > 1e-9 * extent:
                cands.append(ah / dy)
            ppm = min(cands)
        self.px_per_m = ppm
        self._cx = 0.5 * (x0 + x1)
        self._cy = 0.5 * (y0 + y1)
        self._center = rect.center()
        # Symbols must not overlap their neighbours: shrink them on crowded layouts.
        spacing = self._min_spacing_px()
        self.min_spacing_px = spacing
        if spacing is not None:
            base = max(8.0, min(base, 0.55 * spacing))
        self.base = base
        self.extent_m = extent if extent > 1e-12 else 1.0
        self._rest_ends: dict = {}
        self._turns = {}
        for s in model.springs:
            a = self.attach(s.a, _bodies.offset_of(s, "a"))
            b = self.attach(s.b, _bodies.offset_of(s, "b"))
            length = math.hypot(b.x() - a.x(), b.y() - a.y())
            self._turns[s.id] = int(min(8, max(3, round(length / (0.38 * base)))))

    def rebind(self, model) -> bool:
        """Use this layout for ``model`` when everything the layout depends on (node positions,
        masses, links, kind) is the same; False (and nothing changed) otherwise."""
        if model is self.model:
            return True
        if _geometry_key(model) != self._geometry:
            return False
        self.model = model
        self._nodes = {n.id: n for n in list(model.masses) + list(model.anchors)}
        return True

    # -- coordinates ------------------------------------------------------------------------
    def _min_spacing_px(self):
        pts = [(n.x, n.y) for n in self._nodes.values()]
        if len(pts) < 2 or len(pts) > 400:
            return None
        # every pair at once (a pair loop in Python: ~10 ms at 200 nodes, on every geometry edit)
        P = np.asarray(pts, dtype=float)
        i, j = np.triu_indices(len(pts), 1)
        d = np.hypot(P[i, 0] - P[j, 0], P[i, 1] - P[j, 1]) * self.px_per_m
        d = d[d > 1e-9]
        return float(d.min()) if d.size else None

    def to_px(self, x: float, y: float) -> QPointF:
        """Device point of model coordinates (m, y up)."""
        return QPointF(self._center.x() + (x - self._cx) * self.px_per_m,
                       self._center.y() - (y - self._cy) * self.px_per_m)

    def to_model(self, p: QPointF) -> tuple[float, float]:
        """Model coordinates (m, y up) of a device point."""
        return (self._cx + (p.x() - self._center.x()) / self.px_per_m,
                self._cy - (p.y() - self._center.y()) / self.px_per_m)

    def offset_px(self, displacement: dict | None, scale: float) -> QPointF:
        """Device offset of a node displaced by ``{direction: value}`` magnified by ``scale``."""
        if not displacement or self.model.kind == "torsion":
            return QPointF(0.0, 0.0)
        ux = displacement.get("x", 0.0) * scale
        uy = displacement.get("y", 0.0) * scale
        return QPointF(ux * self.px_per_m, -uy * self.px_per_m)

    def point(self, node_id: str, displacements: dict | None = None, scale: float = 1.0) -> QPointF:
        """Device point of a node, displaced when ``displacements`` are given (anchors never move)."""
        n = self._nodes[node_id]
        p = self.to_px(n.x, n.y)
        if displacements and node_id in self._is_mass:
            off = self.offset_px(displacements.get(node_id), scale)
            p = QPointF(p.x() + off.x(), p.y() + off.y())
        return p

    def is_mass(self, node_id: str) -> bool:
        return node_id in self._is_mass

    def is_body(self, node_id: str) -> bool:
        n = self._nodes.get(node_id)
        return n is not None and node_id in self._is_mass and _bodies.is_body(self.model, n)

    def turn(self, node_id: str, displacements: dict | None = None, scale: float = 1.0) -> float:
        """Drawn turn of a body (rad, counter-clockwise on the page): theta x ``scale``."""
        if not displacements or not self.is_body(node_id):
            return 0.0
        return (displacements.get(node_id) or {}).get("theta", 0.0) * scale

    def attach(self, node_id: str, offset=_bodies.ORIGIN, displacements: dict | None = None,
               scale: float = 1.0) -> QPointF:
        """Device point of an attachment at ``offset`` (m, body frame) on a node, moved with
        the body (translation and turn, both times ``scale``)."""
        c = self.point(node_id, displacements, scale)
        if offset == _bodies.ORIGIN:
            return c
        ox, oy = _bodies.rotated(offset, self.turn(node_id, displacements, scale))
        return QPointF(c.x() + ox * self.px_per_m, c.y() - oy * self.px_per_m)

    def body_half(self, mass) -> tuple[float, float]:
        """Half width and half height (device units) of a body's box: the mass's block, grown
        to take in its mount points with a little room."""
        side = shapes.mass_block_side(mass.mass, self.base, self.reference_mass)
        ex, ey = _bodies.mount_extent(self.model, mass.id)
        pad = 0.12 * self.base
        return (max(side / 2, ex * self.px_per_m + pad), max(side / 2, ey * self.px_per_m + pad))

    def mass_rect(self, mass, center: QPointF) -> QRectF:
        """Block of a mass (translation models); a body's box (at rest orientation)."""
        if self.is_body(mass.id):
            hw, hh = self.body_half(mass)
            return QRectF(center.x() - hw, center.y() - hh, 2 * hw, 2 * hh)
        return shapes.mass_block_rect(center, mass.mass, self.base, self.reference_mass)

    def disc_radius(self, mass) -> float:
        return shapes.disc_radius(mass.mass, 0.5 * self.base, self.reference_mass)

    def turns(self, spring_id: str) -> int:
        return self._turns.get(spring_id, 5)

    def hit_mass(self, p: QPointF, displacements: dict | None = None, scale: float = 1.0,
                 slack: float = 3.0):
        """Id of the mass drawn under device point ``p`` (topmost), or None."""
        hit = None
        for m in self.model.masses:
            c = self.point(m.id, displacements, scale)
            if self.model.kind == "torsion":
                r = self.disc_radius(m) + slack
                if math.hypot(p.x() - c.x(), p.y() - c.y()) <= r:
                    hit = m.id
            else:
                r = self.mass_rect(m, c).adjusted(-slack, -slack, slack, slack)
                if r.contains(p):
                    hit = m.id
        return hit

    # -- element geometry --------------------------------------------------------------------
    def _exit_distance(self, node_id: str, center: QPointF, start: QPointF, u: QPointF,
                       turn: float = 0.0) -> float:
        """Distance from ``start`` (inside the node's symbol) along ``u`` to the symbol's edge
        (a body's box turned by ``turn`` rad, counter-clockwise on the page)."""
        if node_id not in self._is_mass:
            return 0.0
        m = self._nodes[node_id]
        if turn and self.is_body(node_id):
            # into the box's own frame: undo the turn (on a y-down page a counter-clockwise
            # turn by t is the matrix of -t)
            c, s_ = math.cos(turn), math.sin(turn)
            fx, fy = start.x() - center.x(), start.y() - center.y()
            start = QPointF(center.x() + c * fx - s_ * fy, center.y() + s_ * fx + c * fy)
            u = QPointF(c * u.x() - s_ * u.y(), s_ * u.x() + c * u.y())
        if self.model.kind == "torsion":
            r = self.disc_radius(m)
            # ray-circle exit from a point inside
            fx, fy = start.x() - center.x(), start.y() - center.y()
            b = fx * u.x() + fy * u.y()
            c = fx * fx + fy * fy - r * r
            disc = b * b - c
            return max(0.0, -b + math.sqrt(disc)) if disc >= 0 else 0.0
        if m.mass <= 0:
            return 0.0
        rect = self.mass_rect(m, center)
        ts = []
        for pu, lo, hi, ps in ((u.x(), rect.left(), rect.right(), start.x()),
                               (u.y(), rect.top(), rect.bottom(), start.y())):
            if abs(pu) > 1e-12:
                edge = hi if pu > 0 else lo
                ts.append((edge - ps) / pu)
        return max(0.0, min(ts)) if ts else 0.0

    def link_ends(self, a: str, b: str, lane: float, displacements=None, scale=1.0,
                  a_offset=_bodies.ORIGIN, b_offset=_bodies.ORIGIN):
        """End points of a spring or dashpot between nodes ``a`` and ``b`` on a side lane.

        ``lane`` is a perpendicular offset in device units (parallel elements between the same
        two nodes are drawn side by side). Ends are trimmed to the edges of mass blocks; an end
        with an attachment offset (m, on a body) ends exactly on its attachment point.
        At rest (no ``displacements``) the ends are kept: the layout's geometry is fixed
        (:meth:`rebind` takes only a model of the same geometry), and the drawing at rest, its
        labels and the symbols they avoid each ask for every link's ends.
        """
        if not displacements:
            key = (a, b, lane, a_offset, b_offset)
            ends = self._rest_ends.get(key)
            if ends is None:
                ends = self._rest_ends[key] = self._link_ends(a, b, lane, None, 1.0,
                                                              a_offset, b_offset)
            return QPointF(ends[0]), QPointF(ends[1])
        return self._link_ends(a, b, lane, displacements, scale, a_offset, b_offset)

    def _link_ends(self, a, b, lane, displacements, scale, a_offset, b_offset):
        pa = self.attach(a, a_offset, displacements, scale)
        pb = self.attach(b, b_offset, displacements, scale)
        dx, dy = pb.x() - pa.x(), pb.y() - pa.y()
        length = math.hypot(dx, dy)
        if length < 1e-9:
            return pa, pb
        u = QPointF(dx / length, dy / length)
        n = QPointF(-u.y(), u.x())
        sa = QPointF(pa.x() + n.x() * lane, pa.y() + n.y() * lane)
        sb = QPointF(pb.x() + n.x() * lane, pb.y() + n.y() * lane)
        ta = 0.0 if a_offset != _bodies.ORIGIN else \
            self._exit_distance(a, pa, sa, u, self.turn(a, displacements, scale))
        tb = 0.0 if b_offset != _bodies.ORIGIN else \
            self._exit_distance(b, pb, sb, QPointF(-u.x(), -u.y()),
                                self.turn(b, displacements, scale))
        if ta + tb >= length - 2.0:   # blocks overlap: keep a stub rather than reverse
            return sa, sb
        return (QPointF(sa.x() + u.x() * ta, sa.y() + u.y() * ta),
                QPointF(sb.x() - u.x() * tb, sb.y() - u.y() * tb))

    def ends_of(self, link, lane: float = 0.0, displacements=None, scale=1.0):
        """:meth:`link_ends` of a spring or dashpot element, its attachment points included."""
        return self.link_ends(link.a, link.b, lane, displacements, scale,
                              _bodies.offset_of(link, "a"), _bodies.offset_of(link, "b"))

    def lanes(self) -> dict:
        """Perpendicular lane offset (device units) of every spring and dashpot id."""
        cached = getattr(self, "_lanes", None)
        if cached is not None and cached[0] is self.model:
            return cached[1]
        groups: dict = {}
        for el in list(self.model.springs) + list(self.model.dampers):
            groups.setdefault(_bodies.link_key(el), []).append(el)
        out = {}
        step = 0.5 * self.base
        for key, els in groups.items():
            k = len(els)
            for i, el in enumerate(els):
                off = (i - (k - 1) / 2.0) * step
                # lanes are measured on the a->b normal; keep them consistent for a pair drawn
                # in either direction
                if (el.a, _bodies.offset_of(el, "a")) != key[0]:
                    off = -off
                out[el.id] = off
        self._lanes = (self.model, out)
        return out

    def anchor_normal(self, anchor_id: str) -> QPointF:
        """Direction (device) from an anchor towards what it holds, snapped to the nearest axis."""
        a = self.point(anchor_id)
        sx = sy = 0.0
        for el in list(self.model.springs) + list(self.model.dampers):
            other = el.b if el.a == anchor_id else el.a if el.b == anchor_id else None
            if other is None:
                continue
            # towards the point held: a mount point of a body, not the body's centre
            p = self.attach(other, _bodies.offset_of(el, "b" if other == el.b else "a"))
            dx, dy = p.x() - a.x(), p.y() - a.y()
            d = math.hypot(dx, dy)
            if d > 1e-9:
                sx, sy = sx + dx / d, sy + dy / d
        if abs(sx) < 1e-9 and abs(sy) < 1e-9:
            return QPointF(0.0, -1.0)
        if abs(sx) >= abs(sy):
            return QPointF(math.copysign(1.0, sx), 0.0)
        return QPointF(0.0, math.copysign(1.0, sy))


def _geometry_key(model) -> tuple:
    """What a :class:`SketchLayout` reads from a model: kind, nodes, masses, bodies, links
    with their attachment points, gear stages."""
    def ends(e):
        return (e.id, e.a, e.b, _bodies.offset_of(e, "a"), _bodies.offset_of(e, "b"))

    return (model.kind,
            tuple((m.id, m.x, m.y, m.mass, getattr(m, "inertia", 0.0) > 0)
                  for m in model.masses),
            tuple((a.id, a.x, a.y) for a in model.anchors),
            tuple(ends(e) for e in model.springs),
            tuple(ends(e) for e in model.dampers),
            tuple((g.id, g.a, g.b, g.ratio) for g in getattr(model, "gears", ())))


def fit_scale(layout: SketchLayout, displacements: dict | None, fraction: float = 0.12) -> float:
    """Magnification that draws the largest displacement as ``fraction`` of the layout's size.

    Translations: the largest |u| becomes ``fraction`` of the rectangle's short side (at least a
    block side). Torsion: the largest rotation becomes about 55 degrees. Returns 1.0 for no motion.
    """
    if not displacements:
        return 1.0
    if layout.model.kind == "torsion":
        big = max((abs(d.get("theta", 0.0)) for d in displacements.values()), default=0.0)
        return _MAX_DRAWN_ROTATION / big if big > 0 else 1.0
    big = 0.0
    turn = 0.0
    for mid, d in displacements.items():
        reach = math.hypot(d.get("x", 0.0), d.get("y", 0.0))
        theta = abs(d.get("theta", 0.0))
        if theta and layout.is_body(mid):
            # a body's corners move by its turn times their distance from the centre
            m = layout._nodes[mid]
            hw, hh = layout.body_half(m)
            reach += theta * math.hypot(hw, hh) / layout.px_per_m
            turn = max(turn, theta)
        big = max(big, reach)
    if big <= 0:
        return 1.0
    short = min(layout.rect.width(), layout.rect.height())
    target_px = max(fraction * short, 0.8 * layout.base)
    spacing = layout.min_spacing_px
    if spacing:
        # neighbours moving towards each other must not swap places on the drawing
        target_px = min(target_px, 0.2 * spacing)
    scale = target_px / layout.px_per_m / big
    if turn > 0:
        scale = min(scale, _MAX_DRAWN_ROTATION / turn)
    return scale


def _value_text(model, el, kind: str) -> str:
    torsion = model.kind == "torsion"
    if kind == "mass":
        return _fmt_value(el.mass, "kg m²" if torsion else "kg") if el.mass > 0 else "junction"
    if kind == "spring":
        text = _fmt_value(el.k, "N·m/rad" if torsion else "N/m")
        if model.kind == "planar" and el.k_t > 0:
            text += f", kt {_fmt_value(el.k_t, '').strip()}"
        return text
    if kind == "dashpot":
        return _fmt_value(el.c, "N·m·s/rad" if torsion else "N·s/m")
    return ""


def paint_sketch(painter: QPainter, model, rect: QRectF, displacements: dict | None = None,
                 scale: float = 1.0, style: Style | None = None, undeformed: bool = True,
                 energy: dict | None = None, labels=True, layout: SketchLayout | None = None,
                 highlight: set | None = None, base: float | None = None,
                 motion_px: float = 0.0) -> SketchLayout:
    """Paint ``model`` fitted into ``rect``; returns the :class:`SketchLayout` used.

    Parameters
    ----------
    displacements : {mass_id: {direction: value}}, optional
        Node motion in m (rad in torsion), drawn magnified by ``scale``.
    undeformed : bool
        With displacements, draw the layout at rest in grey beneath.
    energy : {element_id: fraction}, optional
        Tint springs by strain-energy share and masses by kinetic-energy share (0..1).
    labels : bool or "values"
        Element labels; ``"values"`` adds each element's mass, stiffness or damping.
    layout : reuse a layout (so an animation does not refit every frame).
    highlight : element ids drawn in the accent colour (e.g. a mass being dragged).
    motion_px : float
        The largest distance (device units) a mass is drawn away from rest in the animation
        this frame belongs to: labels keep that far off the moving symbols.

    Labels are placed on the drawing at rest (:mod:`app.drawing.labels`), clear of each other,
    of the symbols and of the room the symbols sweep, and kept on the layout, so they stay put
    from frame to frame; a label with no clear spot is left off. ``layout.placed_labels`` lists
    ``(text, QRectF)`` of the labels drawn.
    """
    st = style or current_style()
    lay = layout or SketchLayout(model, rect, base=base)
    painter.save()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    try:
        lw = max(1.0, lay.base / 18.0)
        moving = bool(displacements)
        if moving and undeformed and model.kind != "torsion":
            _paint_layer(painter, lay, st, None, 1.0, lw * 0.9, grey=True, energy=None,
                         labels=False, highlight=set())
        _paint_layer(painter, lay, st, displacements if moving else None, scale, lw, grey=False,
                     energy=energy, labels=labels, highlight=set(highlight or ()),
                     show_rest_radius=moving and undeformed)
        if labels:
            _paint_labels(painter, lay, st, labels, energy, motion_px if moving else 0.0)
        else:
            lay.placed_labels = []
    finally:
        painter.restore()
    return lay


def _paint_layer(painter, lay: SketchLayout, st: Style, disp, scale, lw, grey, energy, labels,
                 highlight, show_rest_radius=False):
    model = lay.model
    base = lay.base
    ink = st.undeformed if grey else st.ink
    lanes = lay.lanes()
    pen = QPen(ink, lw)
    pen.setCapStyle(Qt.PenCapStyle.RoundCap)
    pen.setJoinStyle(Qt.PenJoinStyle.RoundJoin)
    painter.setBrush(Qt.BrushStyle.NoBrush)

    # anchors (never move)
    for a in model.anchors:
        painter.setPen(QPen(st.undeformed if grey else st.anchor, lw))
        c = lay.point(a.id)
        normal = lay.anchor_normal(a.id)
        painter.drawPath(shapes.anchor_path(c, 1.5 * base, normal))

    # springs
    for s in model.springs:
        p1, p2 = lay.ends_of(s, lanes.get(s.id, 0.0), disp, scale)
        f = energy.get(s.id) if energy else None
        if grey:
            painter.setPen(QPen(ink, lw))
        elif s.id in highlight:
            painter.setPen(QPen(st.accent, lw * 1.6))
        elif f is not None:
            if f < 0.005:
                painter.setPen(QPen(st.ink_soft, lw))
            else:
                painter.setPen(QPen(st.energy_color(0.25 + 0.75 * f), lw * (1.2 + 2.0 * f)))
        else:
            painter.setPen(pen)
        painter.drawPath(shapes.coil_path(p1, p2, lay.turns(s.id), 0.42 * base))

    # dashpots
    for d in model.dampers:
        p1, p2 = lay.ends_of(d, lanes.get(d.id, 0.0), disp, scale)
        painter.setPen(QPen(ink, lw) if grey else pen)
        painter.drawPath(shapes.dashpot_path(p1, p2, 0.42 * base))

    # gear stages (torsion): discs stay put, so the symbol does too
    for g in getattr(model, "gears", ()):
        p1, p2 = lay.link_ends(g.a, g.b, 0.0)
        if g.id in highlight and not grey:
            painter.setPen(QPen(st.accent, lw * 1.6))
        else:
            painter.setPen(QPen(ink, lw) if grey else pen)
        painter.drawPath(shapes.gear_pair_path(p1, p2, g.ratio, 0.55 * base))

    # masses
    for m in model.masses:
        c = lay.point(m.id, disp, scale)
        f = energy.get(m.id) if energy else None
        edge = st.accent if m.id in highlight and not grey else (ink if grey else st.mass_edge)
        painter.setPen(QPen(edge, lw * (1.6 if m.id in highlight and not grey else 1.0)))
        if grey:
            painter.setBrush(Qt.BrushStyle.NoBrush)
        elif f is not None:
            painter.setBrush(QBrush(st.energy_color(f)))
        else:
            painter.setBrush(QBrush(st.mass_fill))
        if model.kind == "torsion":
            r = lay.disc_radius(m)
            painter.drawPath(shapes.disc_path(c, m.mass, 0.5 * base, lay.reference_mass))
            theta = (disp or {}).get(m.id, {}).get("theta", 0.0) * scale if disp else 0.0
            if show_rest_radius:
                painter.setPen(QPen(st.undeformed, lw))
                painter.drawLine(c, QPointF(c.x(), c.y() - r))
            # angle measured counter-clockwise from "up" on a y-up page
            tip = QPointF(c.x() - r * math.sin(theta), c.y() - r * math.cos(theta))
            painter.setPen(QPen(st.accent if disp else edge, lw * 1.5))
            painter.drawLine(c, tip)
            below = r
        elif m.mass <= 0:
            painter.setBrush(QBrush(edge))
            painter.drawEllipse(c, 0.14 * base, 0.14 * base)
            below = 0.14 * base
        elif lay.is_body(m.id):
            _paint_body(painter, lay, st, m, c, lay.turn(m.id, disp, scale), lw, grey, edge)
            below = lay.body_half(m)[1]
        else:
            rect = lay.mass_rect(m, c)
            painter.drawRect(rect)
            below = rect.height() / 2
        if m.fixed and not grey:
            painter.setPen(QPen(st.ink_soft, lw))
            _paint_locks(painter, lay, c, below, m.fixed)
        painter.setBrush(Qt.BrushStyle.NoBrush)

    if labels and not grey and model.kind == "line":
        _paint_axis_arrow(painter, lay, st, lw)


def _paint_axis_arrow(painter, lay: SketchLayout, st: Style, lw: float) -> None:
    """A small arrow saying which way the masses of a line model move."""
    o = _axis_origin(lay)
    direction = QPointF(1, 0) if lay.model.axis == "x" else QPointF(0, -1)
    painter.setPen(QPen(st.ink_soft, lw))
    painter.setBrush(QBrush(st.ink_soft))
    painter.drawPath(shapes.axis_arrow_path(o, direction, 1.2 * lay.base, 0.3 * lay.base))
    painter.setBrush(Qt.BrushStyle.NoBrush)


def _paint_body(painter, lay, st, m, c: QPointF, turn: float, lw: float, grey: bool, edge):
    """A rigid body: its box round the mount points, the centre-of-mass mark and a small ring
    on each mount point, all turned by ``turn`` (rad, counter-clockwise on the page) about the
    centre. The brush is the caller's (the fill or the energy tint)."""
    hw, hh = lay.body_half(m)
    painter.save()
    try:
        painter.translate(c)
        painter.rotate(-math.degrees(turn))
        painter.drawRect(QRectF(-hw, -hh, 2 * hw, 2 * hh))
        r = max(2.5, 0.15 * lay.base)
        outline, filled = shapes.centre_of_mass_path(QPointF(0, 0), r)
        painter.setPen(QPen(edge, max(0.8, 0.6 * lw)))
        painter.setBrush(Qt.BrushStyle.NoBrush)
        painter.drawPath(outline)
        painter.setBrush(QBrush(edge))
        painter.drawPath(filled)
        painter.setBrush(QBrush(st.undeformed if grey else st.background))
        k = lay.px_per_m
        for ox, oy in _bodies.mount_points(lay.model).get(m.id, ()):
            painter.drawEllipse(QPointF(ox * k, -oy * k), 0.8 * r, 0.8 * r)
    finally:
        painter.restore()


def _axis_origin(lay) -> QPointF:
    r = lay.rect
    return QPointF(r.left() + 0.4 * lay.base, r.bottom() - 0.4 * lay.base)


def _symbol_half(lay, m) -> float:
    """Half the size of a mass's symbol (device units)."""
    if lay.model.kind == "torsion":
        return lay.disc_radius(m)
    if m.mass <= 0:
        return 0.14 * lay.base
    if lay.is_body(m.id):
        return max(lay.body_half(m))
    return lay.mass_rect(m, QPointF(0, 0)).height() / 2


def symbol_rects(lay: SketchLayout, displacements: dict | None = None,
                 scale: float = 1.0) -> list[QRectF]:
    """Rectangles of the drawn symbols (masses, anchors, springs and dashpots in pieces) of one
    frame: what a label must not cover."""
    from app.drawing.labels import segment_boxes

    base = lay.base
    out = []
    for a in lay.model.anchors:
        c = lay.point(a.id)
        out.append(QRectF(c.x() - 0.8 * base, c.y() - 0.8 * base, 1.6 * base, 1.6 * base))
    lanes = lay.lanes()
    for el in list(lay.model.springs) + list(lay.model.dampers):
        p1, p2 = lay.ends_of(el, lanes.get(el.id, 0.0), displacements, scale)
        out += segment_boxes(p1, p2, 0.21 * base)
    for g in getattr(lay.model, "gears", ()):
        p1, p2 = lay.link_ends(g.a, g.b, 0.0)
        out += segment_boxes(p1, p2, 0.55 * base)
    for m in lay.model.masses:
        c = lay.point(m.id, displacements, scale)
        h = _symbol_half(lay, m)
        if lay.is_body(m.id) and not lay.turn(m.id, displacements, scale):
            out.append(lay.mass_rect(m, c))      # a body's box as drawn (turned: its circle)
        else:
            out.append(QRectF(c.x() - h, c.y() - h, 2 * h, 2 * h))
    return out


#: The label places of the last few drawings: (everything the placement reads, places).
_PLACED: list = []


def _paint_labels(painter, lay: SketchLayout, st: Style, labels, energy, motion_px: float):
    """Place the labels once per layout (on the drawing at rest) and draw them."""
    font = QFont(painter.font())
    font.setPixelSize(int(max(9, min(28, lay.base * 0.40))))
    texts = _label_texts(lay, labels, energy)
    key = (labels, tuple(t for _k, _e, t in texts), round(motion_px, 1), font.pixelSize())
    if getattr(lay, "_labels_key", None) != key:
        lay._labels_key = key
        # a new layout of the same drawing (a value edited, an edit undone) takes the places
        # found before: the search is the costly part of a repaint of a large model
        full = (key, lay._geometry, tuple(m.fixed for m in lay.model.masses), lay.model.axis,
                lay.rect.getRect(), lay.base, st.label.rgba(), st.ink_soft.rgba())
        found = next((places for k, places in _PLACED if k == full), None)
        if found is None:
            found = _place_labels(lay, st, texts, QFontMetricsF(font), motion_px,
                                  _text_widths(font, [t for _k, _e, t in texts]))
            _PLACED.insert(0, (full, found))
            del _PLACED[4:]
        lay._labels = found
        lay.placed_labels = [(t, r) for t, r, _c in lay._labels]
    painter.setFont(font)
    fm = QFontMetricsF(font)
    for text, rect, color in lay._labels:
        painter.setPen(QPen(color))
        painter.drawText(QPointF(rect.left(), rect.center().y() + fm.ascent() / 2
                                 - fm.descent() / 2), text)


def _gear_text(g, labels) -> str:
    """A gear stage's label: its name when it has one, and its speed ratio (always: the ratio
    is what the symbol cannot show), with the mesh stiffness among the values."""
    from app.text.numbers import quantity

    ratio = f"n = {quantity(g.ratio, '').strip()}"
    text = ratio if g.label == g.id else f"{g.label}  {ratio}"
    if labels == "values" and getattr(g, "k_mesh", None) is not None:
        text += f", mesh {_fmt_value(g.k_mesh, 'N·m/rad')}"
    return text


def _label_texts(lay, labels, energy) -> list[tuple[str, object, str]]:
    """``[(kind, element, text)]`` in placing order: masses, anchors, springs, dashpots."""
    model = lay.model
    out = []
    for m in model.masses:
        text = m.label
        if labels == "values":
            text += "  " + _value_text(model, m, "mass")
        f = energy.get(m.id) if energy else None
        if f is not None:
            text += f"  ({100 * f:.0f} %)"
        out.append(("mass", m, text))
    for a in model.anchors:
        out.append(("anchor", a, a.label))
    for s in model.springs:
        text = s.label
        if labels == "values":
            text += "  " + _value_text(model, s, "spring")
        f = energy.get(s.id) if energy else None
        if f is not None:
            text += f"  ({100 * f:.0f} %)"
        out.append(("spring", s, text))
    for d in model.dampers:
        text = d.label
        if labels == "values":
            text += "  " + _value_text(model, d, "dashpot")
        out.append(("dashpot", d, text))
    for g in getattr(model, "gears", ()):
        out.append(("gear", g, _gear_text(g, labels)))
    if model.kind == "line":
        out.append(("axis", None, model.axis))
    return out


# -- animation frames -----------------------------------------------------------------------
# A motion view redraws the model many times a second. Without labels or energy tints (over
# LABEL_LIMIT masses the view has none) a frame is the same picture as paint_sketch's, built
# differently: the parts that never move (the grey layout at rest and the anchors) are painted
# once into a pixmap by paint_static_layer, and the moving springs, dashpots and masses are
# computed for every element at once with numpy and stroked as one path (paint_moving_layer).
# Per-element Python work, not painting, was what capped the frame rate at 200 masses and more.


def can_paint_fast(model, displacements, labels=False, energy=None, highlight=None) -> bool:
    """True when :func:`paint_static_layer` (with :func:`paint_labels_layer` for ``labels``) +
    :func:`paint_moving_layer` draw what :func:`paint_sketch` would: translation models without
    mount points, moving. The energy tint and highlighted elements are drawn by the moving layer;
    the labels, placed clear of the room every symbol sweeps, stay put under it."""
    return (model is not None and model.kind != "torsion" and bool(displacements)
            and not (model.kind == "planar" and _bodies.mount_points(model)))


def paint_labels_layer(painter: QPainter, lay: SketchLayout, labels, style: Style | None = None,
                       energy=None, motion_px: float = 0.0) -> None:
    """The labels of a frame alone (and a line model's axis arrow), as :func:`paint_sketch`
    draws them (placed once per layout,
    clear of the room each symbol sweeps: ``motion_px``), for a picture that is kept from frame
    to frame."""
    st = style or current_style()
    painter.save()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    try:
        if lay.model.kind == "line":
            _paint_axis_arrow(painter, lay, st, max(1.0, lay.base / 18.0))
        _paint_labels(painter, lay, st, labels, energy, motion_px)
    finally:
        painter.restore()


def paint_static_layer(painter: QPainter, lay: SketchLayout, style: Style | None = None,
                       anchors: bool = True):
    """What does not move in a frame: the layout at rest in grey, then (with ``anchors``,
    for :func:`paint_moving_layer`) the anchors."""
    st = style or current_style()
    model = lay.model
    lw = max(1.0, lay.base / 18.0)
    painter.save()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    try:
        if _paint_rest_fast(lay):
            _paint_arrays(painter, lay, _frame_arrays(lay)["rest"], st, grey=True)
        else:
            _paint_layer(painter, lay, st, None, 1.0, lw * 0.9, grey=True, energy=None,
                         labels=False, highlight=set())
        painter.setBrush(Qt.BrushStyle.NoBrush)
        for a in (model.anchors if anchors else ()):
            painter.setPen(QPen(st.anchor, lw))
            painter.drawPath(shapes.anchor_path(lay.point(a.id), 1.5 * lay.base,
                                                lay.anchor_normal(a.id)))
    finally:
        painter.restore()


def paint_deformed_layer(painter: QPainter, lay: SketchLayout, displacements: dict,
                         scale: float = 1.0, style: Style | None = None, energy=None,
                         labels=True, highlight=None, motion_px: float = 0.0) -> None:
    """:func:`paint_sketch`'s deformed layer alone (its layer at rest comes from
    :func:`paint_static_layer` with ``anchors=False``): a frame with labels or a tint, the
    labels kept clear of the room each symbol sweeps (``motion_px``), as paint_sketch does."""
    st = style or current_style()
    painter.save()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    try:
        _paint_layer(painter, lay, st, displacements, scale, max(1.0, lay.base / 18.0),
                     grey=False, energy=energy, labels=labels, highlight=set(highlight or ()),
                     show_rest_radius=True)
        if labels:
            _paint_labels(painter, lay, st, labels, energy, motion_px)
        else:
            lay.placed_labels = []
    finally:
        painter.restore()


def _frame_arrays(lay: SketchLayout) -> dict:
    """Per-layout arrays for fast frames (node points, block sizes, link ends, lanes, turns)."""
    fd = getattr(lay, "_frame_arrays", None)
    if fd is not None and fd["geometry"] is lay._geometry:
        return fd
    model = lay.model
    nodes = list(model.masses) + list(model.anchors)
    index = {n.id: k for k, n in enumerate(nodes)}
    rest = np.array([[q.x(), q.y()] for q in (lay.to_px(n.x, n.y) for n in nodes)],
                    float).reshape(-1, 2)
    half = np.zeros(len(nodes))       # half side of a mass block; 0: junction or anchor
    for k, m in enumerate(model.masses):
        if m.mass > 0:
            half[k] = shapes.mass_block_side(m.mass, lay.base, lay.reference_mass) / 2
    lanes = lay.lanes()

    def links(elements):
        a = np.array([index[e.a] for e in elements], int)
        b = np.array([index[e.b] for e in elements], int)
        lane = np.array([lanes.get(e.id, 0.0) for e in elements], float)
        return a, b, lane

    fd = {"geometry": lay._geometry, "n_masses": len(model.masses),
          "mass_ids": [m.id for m in model.masses], "rest": rest, "half": half,
          "spring_ids": [sp.id for sp in model.springs],
          "springs": links(model.springs), "dampers": links(model.dampers),
          "turns": np.array([lay.turns(s.id) for s in model.springs], int)}
    lay._frame_arrays = fd
    return fd


def _exit(half, centre, start, u):
    """Distance from ``start`` along unit ``u`` to the edge of the block round ``centre``
    (per row; 0 where ``half`` is 0), as :meth:`SketchLayout._exit_distance`."""
    t = np.full(len(half), np.inf)
    for ax in (0, 1):
        pu = u[:, ax]
        ok = np.abs(pu) > 1e-12
        edge = np.where(pu > 0, centre[:, ax] + half, centre[:, ax] - half)
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.where(ok, np.minimum(t, (edge - start[:, ax]) / np.where(ok, pu, 1.0)), t)
    t = np.where(np.isfinite(t), np.maximum(t, 0.0), 0.0)
    return np.where(half > 0, t, 0.0)


def _link_ends(fd, points, links):
    """Ends of every link (n, 2) and (n, 2), as :meth:`SketchLayout.link_ends`."""
    a, b, lane = links
    pa, pb = points[a], points[b]
    d = pb - pa
    length = np.hypot(d[:, 0], d[:, 1])
    short = length < 1e-9
    u = d / np.where(short, 1.0, length)[:, None]
    nrm = np.stack([-u[:, 1], u[:, 0]], axis=1)
    sa, sb = pa + nrm * lane[:, None], pb + nrm * lane[:, None]
    ta = _exit(fd["half"][a], pa, sa, u)
    tb = _exit(fd["half"][b], pb, sb, -u)
    overlap = (ta + tb >= length - 2.0)[:, None]    # blocks overlap: keep a stub
    p1 = np.where(overlap, sa, sa + u * ta[:, None])
    p2 = np.where(overlap, sb, sb - u * tb[:, None])
    return np.where(short[:, None], pa, p1), np.where(short[:, None], pb, p2)


def _coils(p1, p2, turns, width):
    """Vertices of the zig-zag springs (as :func:`shapes.coil_path`): ``[(index, (m, 2))]`` per
    spring drawn (a degenerate one, p1 == p2, draws nothing there either)."""
    d = p2 - p1
    length = np.hypot(d[:, 0], d[:, 1])
    keep = length >= 1e-9
    xs = []
    for t in np.unique(turns[keep]):
        sel = keep & (turns == t)
        q1, L = p1[sel], length[sel]
        u = d[sel] / L[:, None]
        nrm = np.stack([-u[:, 1], u[:, 0]], axis=1)
        lead = np.minimum(0.2 * L, np.maximum(width, 0.12 * L))
        lead = np.maximum(0.0, np.minimum(lead, 0.35 * L))
        body = L - 2 * lead
        peaks = 2 * int(t)
        i = np.arange(peaks)
        along = np.concatenate([np.zeros((len(L), 1)), lead[:, None],
                                lead[:, None] + body[:, None] * (i + 0.5) / peaks,
                                (L - lead)[:, None], L[:, None]], axis=1)
        side = np.concatenate([[0.0, 0.0], np.where(i % 2 == 0, 0.5, -0.5) * width, [0.0, 0.0]])
        x = q1[:, 0:1] + u[:, 0:1] * along + nrm[:, 0:1] * side[None, :]
        y = q1[:, 1:2] + u[:, 1:2] * along + nrm[:, 1:2] * side[None, :]
        x[:, -1], y[:, -1] = p2[sel, 0], p2[sel, 1]       # the end exactly on p2
        verts = np.stack([x, y], axis=2)
        # finer than shapes.MIN_PITCH: a straight line, as shapes.coil_path draws it
        flat = body < shapes.MIN_PITCH * peaks
        for i, v, f in zip(np.flatnonzero(sel), verts, flat):
            xs.append((i, v[[0, -1]] if f else v))
    return sorted(xs, key=lambda item: item[0])


def _spring_pen(st: Style, sid: str, lw: float, energy, highlight, default: QPen) -> QPen:
    """The pen of a spring in a deformed layer, as :func:`_paint_layer` chooses it."""
    if sid in highlight:
        return QPen(st.accent, lw * 1.6)
    f = energy.get(sid) if energy else None
    if f is None:
        return default
    if f < 0.005:
        return QPen(st.ink_soft, lw)
    return QPen(st.energy_color(0.25 + 0.75 * f), lw * (1.2 + 2.0 * f))


def paint_moving_layer(painter: QPainter, lay: SketchLayout, displacements: dict,
                       scale: float = 1.0, style: Style | None = None, energy=None,
                       highlight=()) -> None:
    """The moving part of a frame (see :func:`can_paint_fast`): springs, dashpots and masses
    displaced by ``displacements`` x ``scale``, over :func:`paint_static_layer`; springs and
    masses tinted by ``energy`` ({id: share}) and ``highlight`` ids in the accent colour, as
    :func:`paint_sketch` draws them."""
    fd = _frame_arrays(lay)
    points = fd["rest"].copy()
    k = scale * lay.px_per_m
    for j, mid in enumerate(fd["mass_ids"]):
        dd = displacements.get(mid)
        if dd:
            points[j, 0] += dd.get("x", 0.0) * k
            points[j, 1] -= dd.get("y", 0.0) * k
    _paint_arrays(painter, lay, points, style or current_style(), False, energy, highlight)


def _paint_rest_fast(lay: SketchLayout) -> bool:
    """True when :func:`_paint_arrays` draws the layout at rest in grey as ``_paint_layer``
    does: translation models without rigid bodies."""
    model = lay.model
    return model.kind != "torsion" and not any(lay.is_body(m.id) for m in model.masses)


def _paint_arrays(painter: QPainter, lay: SketchLayout, points, st: Style, grey: bool,
                  energy=None, highlight=()) -> None:
    """Springs, dashpots and masses at ``points`` (rows of :func:`_frame_arrays`' nodes, device
    units) from arrays: the deformed layer (``grey`` False: tint, highlight, locks) or the
    layout at rest in grey (its anchors too), each exactly as :func:`_paint_layer` draws it."""
    # numpy straight into a QPolygonF's memory (pyqtgraph is loaded with the first plot)
    from pyqtgraph.functions import create_qpolygonf, ndarray_from_qpolygonf

    model = lay.model
    fd = _frame_arrays(lay)
    base, n_m = lay.base, fd["n_masses"]
    lw = max(1.0, base / 18.0) * (0.9 if grey else 1.0)
    painter.save()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    try:
        if grey:
            pen = QPen(st.undeformed, lw)
            painter.setBrush(Qt.BrushStyle.NoBrush)
            painter.setPen(pen)
            for a in model.anchors:
                painter.drawPath(shapes.anchor_path(lay.point(a.id), 1.5 * base,
                                                    lay.anchor_normal(a.id)))
        else:
            pen = QPen(st.ink, lw)
            pen.setCapStyle(Qt.PenCapStyle.RoundCap)
            pen.setJoinStyle(Qt.PenJoinStyle.RoundJoin)
        painter.setBrush(Qt.BrushStyle.NoBrush)
        painter.setPen(pen)
        if len(fd["springs"][0]):
            p1, p2 = _link_ends(fd, points, fd["springs"])
            # one stroke per spring, as paint_sketch: a single path of every spring is faster
            # to build but far slower to fill where the zig-zags overlap
            styled = not grey and (bool(energy) or bool(highlight))
            sids = fd["spring_ids"]
            for i, verts in _coils(p1, p2, fd["turns"], 0.42 * base):
                if styled:
                    painter.setPen(_spring_pen(st, sids[i], lw, energy, highlight, pen))
                poly = create_qpolygonf(len(verts))
                ndarray_from_qpolygonf(poly)[:] = verts
                painter.drawPolyline(poly)
            painter.setPen(pen)
        if len(fd["dampers"][0]):
            p1, p2 = _link_ends(fd, points, fd["dampers"])
            for q1, q2 in zip(p1, p2):
                painter.drawPath(shapes.dashpot_path(QPointF(*q1), QPointF(*q2), 0.42 * base))
        half = fd["half"][:n_m]
        pts = points[:n_m]
        edge_pen = QPen(st.undeformed if grey else st.mass_edge, lw)
        painter.setPen(edge_pen)
        fill = Qt.BrushStyle.NoBrush if grey else QBrush(st.mass_fill)
        edge = QBrush(st.undeformed if grey else st.mass_edge)
        brushes = []      # each mass's brush, for its lock too
        for j, ((x, y), h) in enumerate(zip(pts.tolist(), half.tolist())):
            mid = fd["mass_ids"][j]
            lit = not grey and mid in highlight
            if lit:
                painter.setPen(QPen(st.accent, lw * 1.6))
            f = energy.get(mid) if energy and not grey else None
            # in order: blocks may overlap
            if h > 0:
                brush = fill if f is None else QBrush(st.energy_color(f))
                painter.setBrush(brush)
                painter.drawRect(QRectF(x - h, y - h, 2 * h, 2 * h))
            else:
                brush = QBrush(st.accent) if lit else edge
                painter.setBrush(brush)
                painter.drawEllipse(QPointF(x, y), 0.14 * base, 0.14 * base)
            brushes.append(brush)
            if lit:
                painter.setPen(edge_pen)
        for j, m in enumerate(model.masses if not grey else ()):
            if m.fixed:
                below = half[j] if half[j] > 0 else 0.14 * base
                # the lock is drawn with the mass's own brush, as paint_sketch does
                painter.setBrush(brushes[j])
                painter.setPen(QPen(st.ink_soft, lw))
                _paint_locks(painter, lay, QPointF(*pts[j]), below, m.fixed)
        painter.setBrush(Qt.BrushStyle.NoBrush)
    finally:
        painter.restore()


def _text_widths(font: QFont, texts) -> list[float]:
    """``QFontMetricsF(font).horizontalAdvance`` of each text, kept by font and text: a drawing
    placed again (a mass moved) has the same labels (400 of them at 200 masses: ~0.6 ms)."""
    # QFont.key() leaves out kerning and hinting, which change the widths
    key = (font.key(), font.kerning(), font.hintingPreference(), font.styleStrategy(),
           font.letterSpacing(), font.letterSpacingType(), font.wordSpacing())
    fm = None
    out = []
    for text in texts:
        w = _WIDTHS.get((key, text))
        if w is None:
            if fm is None:
                fm = QFontMetricsF(font)
            if len(_WIDTHS) > 20_000:
                _WIDTHS.clear()
            w = _WIDTHS[(key, text)] = fm.horizontalAdvance(text)
        out.append(w)
    return out


#: Label widths by (font, text): see :func:`_text_widths`.
_WIDTHS: dict = {}


def _place_labels(lay, st, texts, fm: QFontMetricsF, motion_px: float, widths=None):
    """Place the labels ``texts`` (:func:`_label_texts`) on the drawing at rest: ``[(text,
    QRectF, colour)]`` of those that found room. Masses and links of a translation model
    without rigid bodies are done with arrays (:func:`_fast_label_parts`: their geometry is
    :func:`_frame_arrays`' own), everything else element by element; both give the same
    symbols to keep off and the same candidates in the same order."""
    from app.drawing.labels import LabelPlacer, around_boxes, segment_boxes, shifted_boxes

    model = lay.model
    base = lay.base
    h = fm.height()
    placer = LabelPlacer(h, lay.rect.adjusted(1, 1, -1, -1))
    sweep = max(0.0, motion_px)
    if widths is None:
        widths = [fm.horizontalAdvance(t) for _k, _e, t in texts]
    fast = _fast_label_parts(lay, texts, widths, h, sweep, placer.pad) \
        if _paint_rest_fast(lay) else None
    # what labels keep off: every symbol at rest, widened by the room it sweeps when it moves
    for a in model.anchors:
        c = lay.point(a.id)
        placer.block(QRectF(c.x() - 0.8 * base, c.y() - 0.8 * base, 1.6 * base, 1.6 * base))
    lanes = lay.lanes()
    if fast is not None:
        placer.block_boxes(fast["blocks"])
    else:
        moving = {m.id for m in model.masses}
        for el in list(model.springs) + list(model.dampers):
            p1, p2 = lay.ends_of(el, lanes.get(el.id, 0.0))     # kept by the layout
            grow = sweep if (el.a in moving or el.b in moving) else 0.0
            for box in segment_boxes(p1, p2, 0.21 * base):
                placer.block(box.adjusted(-grow, -grow, grow, grow))
    for g in getattr(model, "gears", ()):
        p1, p2 = lay.link_ends(g.a, g.b, 0.0)
        for box in segment_boxes(p1, p2, 0.55 * base):
            placer.block(box)
    mass_box = {}
    for m in ([] if fast is not None else model.masses):
        c = lay.point(m.id)
        half = _symbol_half(lay, m)
        box = QRectF(c.x() - half, c.y() - half, 2 * half, 2 * half)
        if lay.is_body(m.id):
            box = lay.mass_rect(m, c)        # a body's box is rarely square
        if m.fixed:
            box = box.adjusted(-0.4 * base, 0, 0, 0.4 * base)     # the lock marks
        mass_box[m.id] = box
        placer.block(box.adjusted(-sweep, -sweep, sweep, sweep))
    if model.kind == "line":
        o = _axis_origin(lay)
        d = QPointF(1, 0) if model.axis == "x" else QPointF(0, -1)
        tip = QPointF(o.x() + d.x() * 1.2 * base, o.y() + d.y() * 1.2 * base)
        placer.block(QRectF(o, tip).normalized().adjusted(-0.3 * base, -0.3 * base,
                                                          0.3 * base, 0.3 * base))

    groups, colors = [], []
    label_color, soft = st.label, st.ink_soft
    for i, (kind, el, text) in enumerate(texts):
        w = widths[i]
        color = soft if kind in ("anchor", "axis") else label_color
        if fast is not None and i in fast["candidates"]:
            cands = fast["candidates"][i]
        elif kind == "mass":
            box = mass_box[el.id].adjusted(-sweep, -sweep, sweep, sweep)
            gap = 0.2 * base + placer.pad + 1     # the clear space round a label included
            side = _free_side(lay, el.id)
            c = box.center()
            first = {"below": (c.x() - w / 2, box.bottom() + gap, w, h),
                     "above": (c.x() - w / 2, box.top() - gap - h, w, h),
                     "right": (box.right() + gap, c.y() - h / 2, w, h),
                     "left": (box.left() - gap - w, c.y() - h / 2, w, h)}[side]
            cands = [first] + around_boxes(box, w, h, gap)
        elif kind == "anchor":
            c = lay.point(el.id)
            normal = lay.anchor_normal(el.id)
            box = QRectF(c.x() - 0.8 * base, c.y() - 0.8 * base, 1.6 * base, 1.6 * base)
            # on the hatched side, out of the way of the springs
            g = placer.pad + 1
            if abs(normal.x()) > 0.5:
                x = box.left() - g - w if normal.x() > 0 else box.right() + g
                first = (x, c.y() - h / 2, w, h)
            else:
                y = box.bottom() + g if normal.y() < 0 else box.top() - g - h
                first = (c.x() - w / 2, y, w, h)
            cands = [first] + around_boxes(box, w, h, g)
        elif kind == "axis":
            o = _axis_origin(lay)
            if model.axis == "x":
                first = (o.x() + 1.2 * base + 4, o.y() - h / 2, w, h)
            else:
                first = (o.x() + 0.4 * base, o.y() - 1.2 * base - h / 2, w, h)
            cands = [first]
        elif kind == "gear":
            p1, p2 = lay.link_ends(el.a, el.b, 0.0)
            pos = _beside(p1, p2, 0.55 * base + 0.35 * h + 2, fm, text)
            first = (pos.x() - w / 2, pos.y() - h / 2, w, h)
            mid = QPointF(0.5 * (p1.x() + p2.x()), 0.5 * (p1.y() + p2.y()))
            r = 0.55 * base
            cands = shifted_boxes(first, h) + around_boxes(
                QRectF(mid.x() - r, mid.y() - r, 2 * r, 2 * r), w, h, placer.pad + 1)
        else:
            p1, p2 = lay.ends_of(el, lanes.get(el.id, 0.0))
            pos = _beside(p1, p2, 0.21 * base + 0.35 * h + 2 + sweep, fm, text,
                          lanes.get(el.id, 0.0))
            first = (pos.x() - w / 2, pos.y() - h / 2, w, h)
            mid = QPointF(0.5 * (p1.x() + p2.x()), 0.5 * (p1.y() + p2.y()))
            r = 0.21 * base + sweep
            cands = shifted_boxes(first, h) + around_boxes(
                QRectF(mid.x() - r, mid.y() - r, 2 * r, 2 * r), w, h, placer.pad + 1)
        groups.append(np.asarray(cands, float).reshape(-1, 4))
        colors.append(color)
    # every label's candidates tested against the symbols in one pass, then placed in order
    rects = placer.place_groups([t for _k, _e, t in texts], groups)
    return [(text, rect, color) for (_k, _e, text), rect, color in zip(texts, rects, colors)
            if rect is not None]


def _fast_label_parts(lay, texts, widths, h: float, sweep: float, pad: float) -> dict:
    """The masses' and links' share of :func:`_place_labels` for a translation model without
    rigid bodies, with arrays: ``blocks`` (k, 4) left, top, right, bottom of their symbols
    (each link in :func:`segment_boxes` pieces, grown by the sweep when a mass ends it; each
    block with its lock marks, grown by the sweep) and ``candidates`` {index in ``texts``:
    (m, 4) x, y, w, h}, as the element-by-element code makes them."""
    model = lay.model
    base = lay.base
    fd = _frame_arrays(lay)
    nm = fd["n_masses"]
    rest = fd["rest"]
    mass_values = np.array([m.mass for m in model.masses], float)
    half = np.where(mass_values > 0, fd["half"][:nm], 0.14 * base)
    x, y = rest[:nm, 0] - half, rest[:nm, 1] - half
    w = h_box = 2 * half
    fixed = np.array([bool(m.fixed) for m in model.masses], bool)
    # QRectF.adjusted(-0.4 base, 0, 0, 0.4 base) for the lock marks
    x = np.where(fixed, x - 0.4 * base, x)
    w = np.where(fixed, w + 0.4 * base, w)
    h_box = np.where(fixed, h_box + 0.4 * base, h_box)
    # grown by the sweep: adjusted(-s, -s, s, s)
    bx, by, bw, bh = x - sweep, y - sweep, (w + sweep) + sweep, (h_box + sweep) + sweep
    blocks = [np.column_stack([bx, by, bx + bw, by + bh])]
    cands: dict = {}

    links = list(model.springs) + list(model.dampers)
    ends = []
    for key, group in (("springs", model.springs), ("dampers", model.dampers)):
        if len(group):
            ends.append(_link_ends(fd, rest, fd[key]))
    if links:
        p1 = np.concatenate([e[0] for e in ends])
        p2 = np.concatenate([e[1] for e in ends])
        is_mass = set(fd["mass_ids"])
        grow = np.array([sweep if (el.a in is_mass or el.b in is_mass) else 0.0
                         for el in links], float)
        blocks.append(_segment_box_array(p1, p2, 0.21 * base, grow))

    index = {(kind, id(el)): i for i, (kind, el, _t) in enumerate(texts)}
    gap = 0.2 * base + pad + 1
    rows = [(j, index[("mass", id(m))]) for j, m in enumerate(model.masses)
            if ("mass", id(m)) in index]
    if rows:
        j = np.array([r[0] for r in rows])
        tw = np.array([widths[r[1]] for r in rows], float)
        left, top, bw_, bh_ = bx[j], by[j], bw[j], bh[j]
        around = _around_array(left, top, left + bw_, top + bh_, bw_, bh_, tw, h, gap)
        # first the side farthest from the links (below, above, right, left: rows 0-3)
        side = np.array(_free_side_rows(lay, j.tolist()), int)
        first = around[np.arange(len(j)), side][:, None, :]
        for (_j, i), group in zip(rows, np.concatenate([first, around], axis=1)):
            cands[i] = group
    kinds = ["spring"] * len(model.springs) + ["dashpot"] * len(model.dampers)
    rows = [(k, index[(kind, id(el))]) for k, (kind, el) in enumerate(zip(kinds, links))
            if (kind, id(el)) in index]
    if rows:
        k = np.array([r[0] for r in rows])
        tw = np.array([widths[r[1]] for r in rows], float)
        lanes = lay.lanes()
        lane = np.array([lanes.get(links[q].id, 0.0) for q in k], float)
        r = 0.21 * base + sweep
        px, py = _beside_array(p1[k], p2[k], 0.21 * base + 0.35 * h + 2 + sweep, tw, lane)
        fx, fy = px - tw / 2, py - h / 2
        width, height = tw, np.full(len(k), h)
        shifted = [np.column_stack([fx, fy, width, height])]
        for step in range(1, 4):
            shifted.append(np.column_stack([fx, fy + -step * 0.9 * h, width, height]))
            shifted.append(np.column_stack([fx, fy + step * 0.9 * h, width, height]))
        mx = 0.5 * (p1[k, 0] + p2[k, 0])
        my = 0.5 * (p1[k, 1] + p2[k, 1])
        sx, sy = mx - r, my - r
        around = _around_array(sx, sy, sx + 2 * r, sy + 2 * r, np.full(len(k), 2 * r),
                               np.full(len(k), 2 * r), tw, h, pad + 1)
        groups = np.concatenate([np.stack(shifted, axis=1), around], axis=1)
        for (_k, i), group in zip(rows, groups):
            cands[i] = group
    return {"blocks": np.concatenate(blocks), "candidates": cands}


#: Rows of :func:`_around_array` of a mass label's first choices (see :func:`_free_side`).
_SIDES = {"below": 0, "above": 1, "right": 2, "left": 3}


def _around_array(left, top, right, bottom, w_box, h_box, w, h: float, gap: float):
    """:func:`app.drawing.labels.around_boxes` of many boxes (arrays left, top, right, bottom,
    width, height; label widths ``w``): (n, 8, 4) rows x, y, w, h."""
    cx, cy = left + w_box / 2, top + h_box / 2
    hh = np.full(len(w), h)
    xs = (cx - w / 2, cx - w / 2, right + gap, left - gap - w,
          right + gap, left - gap - w, right + gap, left - gap - w)
    ys = (bottom + gap, top - gap - h, cy - h / 2, cy - h / 2,
          bottom + gap, bottom + gap, top - gap - h, top - gap - h)
    return np.stack([np.column_stack([x, y, w, hh]) for x, y in zip(xs, ys)], axis=1)


def _beside_array(p1, p2, off: float, text_width, lane):
    """:func:`_beside` of many links (rows of ``p1``, ``p2``; arrays of label widths and
    lanes): the label points' x and y."""
    mx, my = 0.5 * (p1[:, 0] + p2[:, 0]), 0.5 * (p1[:, 1] + p2[:, 1])
    dx, dy = p2[:, 0] - p1[:, 0], p2[:, 1] - p1[:, 1]
    length = np.hypot(dx, dy)
    short = length < 1e-9
    safe = np.where(short, 1.0, length)
    nx, ny = -dy / safe, dx / safe
    on_lane = np.abs(lane) > 1e-9
    flip = np.where(on_lane, lane < 0, (ny > 0) | ((np.abs(ny) < 1e-9) & (nx < 0)))
    nx, ny = np.where(flip, -nx, nx), np.where(flip, -ny, ny)
    extra = 0.5 * text_width * np.abs(nx)
    return (np.where(short, mx, mx + nx * (off + extra)),
            np.where(short, my - off, my + ny * off))


def _segment_box_array(p1, p2, half_width: float, grow) -> np.ndarray:
    """:func:`app.drawing.labels.segment_boxes` of every link (rows of ``p1``, ``p2``), each
    box grown by its link's ``grow``: (k, 4) left, top, right, bottom."""
    d = p2 - p1
    along_axis = np.minimum(np.abs(d[:, 0]), np.abs(d[:, 1])) <= 0.25 * half_width
    out = []
    for pieces, sel in ((1, along_axis), (8, ~along_axis)):
        if not sel.any():
            continue
        q1, dd, g = p1[sel], d[sel], grow[sel]
        for i in range(pieces):
            a = q1 + dd * i / pieces
            b = q1 + dd * (i + 1) / pieces
            lo, hi = np.minimum(a, b), np.maximum(a, b)
            pad = (half_width + g)[:, None]
            out.append(np.column_stack([lo - pad, hi + pad]))
    return np.concatenate(out) if out else np.zeros((0, 4))


def _beside(p1: QPointF, p2: QPointF, off: float, fm: QFontMetricsF, text: str,
            lane: float = 0.0) -> QPointF:
    """Label point beside the middle of a link: on its lane's side when it shares the link with
    parallel elements, else above (screen) or to the right."""
    mx, my = 0.5 * (p1.x() + p2.x()), 0.5 * (p1.y() + p2.y())
    dx, dy = p2.x() - p1.x(), p2.y() - p1.y()
    length = math.hypot(dx, dy)
    if length < 1e-9:
        return QPointF(mx, my - off)
    nx, ny = -dy / length, dx / length
    if abs(lane) > 1e-9:
        if lane < 0:
            nx, ny = -nx, -ny
    elif ny > 0 or (abs(ny) < 1e-9 and nx < 0):
        nx, ny = -nx, -ny                 # above (screen) or to the right
    # a vertical link: push the label sideways by half its width too
    extra = 0.5 * fm.horizontalAdvance(text) * abs(nx)
    return QPointF(mx + nx * (off + extra), my + ny * off)


def _neighbours(lay: SketchLayout) -> dict[str, list[str]]:
    """Every node's linked nodes (by springs and dashpots), once per model: a scan of all links
    per mass was quadratic (0.3 s at 200 masses)."""
    cached = getattr(lay, "_neighbours", None)
    if cached is None or cached[0] is not lay.model:
        found: dict[str, list[str]] = {}
        for el in list(lay.model.springs) + list(lay.model.dampers):
            found.setdefault(el.a, []).append(el.b)
            found.setdefault(el.b, []).append(el.a)
        cached = lay._neighbours = (lay.model, found)
    return cached[1]


def _free_side(lay: SketchLayout, mass_id: str) -> str:
    """Side of a mass (below, left, right, above) farthest from the links attached to it."""
    c = lay.point(mass_id)
    dirs = []
    for other in _neighbours(lay).get(mass_id, ()):
        p = lay.point(other)
        dirs.append(math.atan2(p.y() - c.y(), p.x() - c.x()))
    return _side_away(dirs)


def _free_side_rows(lay: SketchLayout, rows) -> list[int]:
    """:func:`_free_side` of the masses at ``rows`` of :func:`_frame_arrays` (their
    :data:`_SIDES` rows), from the arrays' points: the same points as ``lay.point`` (both are
    ``lay.to_px`` of the node), without a QPointF per node and neighbour (~2 ms at 200 masses,
    on every geometry edit)."""
    fd = _frame_arrays(lay)
    model = lay.model
    pts = fd["rest"].tolist()
    row_of = {n.id: k for k, n in enumerate(list(model.masses) + list(model.anchors))}
    found = _neighbours(lay)
    out = []
    for k in rows:
        cx, cy = pts[k]
        dirs = []
        for other in found.get(fd["mass_ids"][k], ()):
            px, py = pts[row_of[other]]
            dirs.append(math.atan2(py - cy, px - cx))
        out.append(_SIDES[_side_away(dirs)])
    return out


def _side_away(dirs) -> str:
    """The side (below, left, right, above) farthest from the directions ``dirs`` (rad, on the
    page) of a mass's links: the first at least 60 degrees from every one, in reading
    preference, else the one farthest from its nearest."""
    if not dirs:
        return "below"
    best, best_score = "below", -1.0
    for name, ang in (("below", math.pi / 2), ("left", math.pi), ("right", 0.0),
                      ("above", -math.pi / 2)):
        score = min(abs(math.remainder(ang - d, 2 * math.pi)) for d in dirs)
        if score >= math.radians(60):
            return name                   # the first clear side in reading preference
        if score > best_score + 1e-6:
            best, best_score = name, score
    return best


def _paint_locks(painter, lay, c: QPointF, below: float, fixed):
    """Small hatched stops beside a mass for each locked direction."""
    s = 0.55 * lay.base
    if "x" in fixed:
        p = QPointF(c.x() - below - 0.12 * lay.base, c.y())
        painter.drawPath(shapes.anchor_path(p, s, QPointF(1, 0), 3))
    if "y" in fixed:
        p = QPointF(c.x(), c.y() + below + 0.12 * lay.base)
        painter.drawPath(shapes.anchor_path(p, s, QPointF(0, -1), 3))


__all__ = ["SketchLayout", "paint_sketch", "fit_scale", "symbol_rects", "LIGHT", "can_paint_fast",
           "paint_static_layer", "paint_moving_layer", "paint_deformed_layer", "paint_labels_layer"]
