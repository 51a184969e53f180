"""Symbol geometry: pure QPainterPath builders, free of any scene or model.

All arguments are in the caller's drawing coordinates (pixels or scene units); nothing here knows
about a Model. The drawing conventions are those of mechanics textbooks: a spring is a zig-zag
between two straight leads, a dashpot an open cylinder with a piston, ground a line with hatching on
the far side, a mass a block whose size grows gently with its mass, a torsion disc a circle.

Paths are meant to be *stroked* (open outlines), except where a docstring says a sub-path is closed
(the arrow head, the block and the disc), which may also be filled.
"""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QPainterPath

#: Below this length (drawing units) a two-ended symbol degenerates to a point.
_TINY = 1e-9


def _frame(p1: QPointF, p2: QPointF):
    """Length, unit vector along p1->p2 and its left normal (None for a degenerate segment)."""
    dx, dy = p2.x() - p1.x(), p2.y() - p1.y()
    length = math.hypot(dx, dy)
    if length < _TINY:
        return length, None, None
    u = QPointF(dx / length, dy / length)
    n = QPointF(-u.y(), u.x())
    return length, u, n


def _at(p: QPointF, u: QPointF, n: QPointF, s: float, t: float = 0.0) -> QPointF:
    """Point at distance ``s`` along ``u`` and ``t`` along ``n`` from ``p``."""
    return QPointF(p.x() + u.x() * s + n.x() * t, p.y() + u.y() * s + n.y() * t)


def _leads(length: float, width: float, lead: float | None) -> float:
    # Leads keep the symbol clear of the blocks it joins; on a short spring they shrink first so
    # the zig-zag stays readable.
    if lead is None:
        lead = min(0.2 * length, max(width, 0.12 * length))
    return max(0.0, min(lead, 0.35 * length))


#: A spring whose zig-zag has half-waves shorter than this (device units) is drawn straight: a
#: finer zig-zag cannot be seen, and stroking it cost ~40 us a spring (1000-mass motion frames).
MIN_PITCH = 1.0


def coil_path(p1: QPointF, p2: QPointF, turns: int = 6, width: float = 10.0,
              lead: float | None = None) -> QPainterPath:
    """A spring from ``p1`` to ``p2``: straight leads, then a zig-zag of ``turns`` full waves.

    ``width`` is the peak-to-peak width of the zig-zag, ``lead`` the length of each straight end
    (default: a fifth of the length, shortened on short springs). A degenerate spring (``p1 == p2``)
    gives a path holding just that point.
    """
    path = QPainterPath(p1)
    length, u, n = _frame(p1, p2)
    if u is None:
        return path
    turns = max(1, int(turns))
    lead = _leads(length, width, lead)
    body = length - 2 * lead
    peaks = 2 * turns
    if body < MIN_PITCH * peaks:
        path.lineTo(p2)        # a zig-zag finer than a pixel cannot be seen: a straight line
        return path
    path.lineTo(_at(p1, u, n, lead))
    half = 0.5 * width
    for i in range(peaks):
        s = lead + body * (i + 0.5) / peaks
        path.lineTo(_at(p1, u, n, s, half if i % 2 == 0 else -half))
    path.lineTo(_at(p1, u, n, length - lead))
    path.lineTo(p2)
    return path


def dashpot_path(p1: QPointF, p2: QPointF, width: float = 12.0,
                 lead: float | None = None) -> QPainterPath:
    """A viscous dashpot from ``p1`` to ``p2``: a cylinder open towards ``p2`` and a piston in it.

    The cylinder (closed end, two walls) hangs off a rod from ``p1``; the piston plate, narrower
    than the bore, sits inside on a rod from ``p2``. ``width`` is the bore.
    """
    path = QPainterPath(p1)
    length, u, n = _frame(p1, p2)
    if u is None:
        return path
    half = 0.5 * width
    cyl = min(0.45 * length, 4.0 * width)
    c0 = 0.5 * (length - cyl)          # closed end of the cylinder
    c1 = c0 + cyl                      # open end
    plate = c0 + 0.55 * cyl            # piston plate, inside the bore
    # rod from p1 to the closed end, then the end plate and the two walls
    path.lineTo(_at(p1, u, n, c0))
    path.moveTo(_at(p1, u, n, c1, half))
    path.lineTo(_at(p1, u, n, c0, half))
    path.lineTo(_at(p1, u, n, c0, -half))
    path.lineTo(_at(p1, u, n, c1, -half))
    # piston plate and its rod to p2
    path.moveTo(_at(p1, u, n, plate, 0.8 * half))
    path.lineTo(_at(p1, u, n, plate, -0.8 * half))
    path.moveTo(_at(p1, u, n, plate))
    path.lineTo(p2)
    return path


def anchor_path(center: QPointF, size: float = 24.0, normal: QPointF = QPointF(0.0, -1.0),
                hatches: int | None = None) -> QPainterPath:
    """Ground: a line of length ``size`` through ``center``, hatched on the side away from ``normal``.

    ``normal`` points from the ground into the space where the model is (default: up on a screen,
    y down). Hatches are short parallel strokes at 45 degrees, ``hatches`` of them (default: about
    one per sixth of ``size``).
    """
    nx, ny = normal.x(), normal.y()
    nl = math.hypot(nx, ny)
    if nl < _TINY:
        nx, ny, nl = 0.0, -1.0, 1.0
    nx, ny = nx / nl, ny / nl
    tx, ty = -ny, nx                   # along the ground line
    half = 0.5 * size
    path = QPainterPath(QPointF(center.x() - tx * half, center.y() - ty * half))
    path.lineTo(QPointF(center.x() + tx * half, center.y() + ty * half))
    count = hatches if hatches is not None else max(3, int(round(size / 6.0)))
    hl = 0.28 * size                   # hatch length
    # hatch direction: away from the model, leaning along the line (45 degrees)
    hx, hy = (-nx + tx) * hl / math.sqrt(2), (-ny + ty) * hl / math.sqrt(2)
    for i in range(count):
        s = -half + size * (i + 0.5) / count
        bx, by = center.x() + tx * s, center.y() + ty * s
        path.moveTo(QPointF(bx, by))
        path.lineTo(QPointF(bx + hx, by + hy))
    return path


def mass_block_side(mass_kg: float, base: float = 28.0, reference_kg: float = 1.0,
                    min_factor: float = 0.65, max_factor: float = 2.0) -> float:
    """Side of a mass block: ``base * cbrt(mass / reference)``, clamped to [min, max] x ``base``.

    The cube root follows a block of constant density, so a mass ten times heavier looks about
    twice as large; the clamp keeps extreme ratios on the page. A massless junction (mass 0) gets a
    small marker of a quarter of ``base``.
    """
    if not mass_kg or mass_kg <= 0:
        return 0.25 * base
    ref = reference_kg if reference_kg and reference_kg > 0 else 1.0
    f = (mass_kg / ref) ** (1.0 / 3.0)
    return base * min(max_factor, max(min_factor, f))


def mass_block_rect(center: QPointF, mass_kg: float, base: float = 28.0,
                    reference_kg: float = 1.0) -> QRectF:
    """The square block of a mass centred on ``center`` (see :func:`mass_block_side`)."""
    side = mass_block_side(mass_kg, base, reference_kg)
    return QRectF(center.x() - side / 2, center.y() - side / 2, side, side)


def disc_radius(inertia: float, base: float = 16.0, reference: float = 1.0) -> float:
    """Radius of a torsion disc: grows with the cube root of its inertia (kg m^2), clamped."""
    return 0.5 * mass_block_side(inertia, 2 * base, reference) if inertia and inertia > 0 \
        else 0.25 * base


def disc_path(center: QPointF, inertia: float, base: float = 16.0,
              reference: float = 1.0) -> QPainterPath:
    """A torsion disc seen along the shaft: a rim circle and a small hub (both closed)."""
    r = disc_radius(inertia, base, reference)
    path = QPainterPath()
    path.addEllipse(center, r, r)
    path.addEllipse(center, 0.18 * r, 0.18 * r)
    return path


def axis_arrow_path(origin: QPointF, direction: QPointF = QPointF(1.0, 0.0), length: float = 40.0,
                    head: float = 8.0) -> QPainterPath:
    """An arrow from ``origin`` along ``direction`` (any length), ``length`` long.

    The shaft is an open line; the head is a closed triangle of side about ``head``, so the path
    can be stroked and filled.
    """
    dl = math.hypot(direction.x(), direction.y())
    path = QPainterPath(origin)
    if dl < _TINY or length <= 0:
        return path
    u = QPointF(direction.x() / dl, direction.y() / dl)
    n = QPointF(-u.y(), u.x())
    tip = _at(origin, u, n, length)
    path.lineTo(_at(origin, u, n, length - 0.8 * head))
    path.moveTo(tip)
    path.lineTo(_at(origin, u, n, length - head, 0.45 * head))
    path.lineTo(_at(origin, u, n, length - head, -0.45 * head))
    path.closeSubpath()
    return path


def rotation_arrow_path(center: QPointF, radius: float, start_deg: float = 30.0,
                        span_deg: float = 120.0, head: float = 7.0) -> QPainterPath:
    """A curved arrow round ``center`` for a rotation (counter-clockwise on a y-up page)."""
    rect = QRectF(center.x() - radius, center.y() - radius, 2 * radius, 2 * radius)
    path = QPainterPath()
    path.arcMoveTo(rect, start_deg)
    path.arcTo(rect, start_deg, span_deg)
    end = path.currentPosition()
    a = math.radians(start_deg + span_deg)
    # Tangent of a counter-clockwise arc in y-down coordinates
    tx, ty = -math.sin(a), -math.cos(a)
    nx, ny = -ty, tx
    path.moveTo(QPointF(end.x() + tx * head * 0.3, end.y() + ty * head * 0.3))
    path.lineTo(QPointF(end.x() - tx * head + nx * 0.45 * head, end.y() - ty * head + ny * 0.45 * head))
    path.lineTo(QPointF(end.x() - tx * head - nx * 0.45 * head, end.y() - ty * head - ny * 0.45 * head))
    path.closeSubpath()
    return path


def gear_pair_path(p1: QPointF, p2: QPointF, ratio: float = 1.0, size: float = 16.0,
                   ) -> QPainterPath:
    """A gear stage between two discs: two pitch circles touching at the middle of p1-p2, a
    tick across the line of centres at the pitch point, and a shaft line from each disc to its
    wheel.

    ``ratio`` n = speed of the wheel at p1 / speed of the wheel at p2; pitch radii are inversely
    proportional to speed, so the wheel at p1 is drawn with radius ``size / (1 + n)`` and the
    one at p2 ``size n / (1 + n)`` (each kept at least a fifth of ``size`` so an extreme ratio
    stays visible). ``size`` is the sum of the two radii (device units).
    """
    length, u, n = _frame(p1, p2)
    path = QPainterPath()
    if u is None:
        return path
    r = ratio if ratio > 0 and math.isfinite(ratio) else 1.0
    ra = min(0.8, max(0.2, 1.0 / (1.0 + r))) * size
    rb = size - ra
    if 2 * (ra + rb) > 0.9 * length:        # discs close together: shrink the pair to fit
        k = 0.9 * length / (2 * (ra + rb))
        ra, rb = ra * k, rb * k
    mid = _at(p1, u, n, 0.5 * length)
    ca = QPointF(mid.x() - u.x() * ra, mid.y() - u.y() * ra)
    cb = QPointF(mid.x() + u.x() * rb, mid.y() + u.y() * rb)
    path.addEllipse(ca, ra, ra)
    path.addEllipse(cb, rb, rb)
    # shaft lines, stopping at each wheel's rim
    path.moveTo(p1)
    path.lineTo(QPointF(ca.x() - u.x() * ra, ca.y() - u.y() * ra))
    path.moveTo(QPointF(cb.x() + u.x() * rb, cb.y() + u.y() * rb))
    path.lineTo(p2)
    # the pitch point: a tick across the line of centres
    t = 0.45 * min(ra, rb) + 2.0
    path.moveTo(QPointF(mid.x() - n.x() * t, mid.y() - n.y() * t))
    path.lineTo(QPointF(mid.x() + n.x() * t, mid.y() + n.y() * t))
    # the hubs
    for c, rr in ((ca, ra), (cb, rb)):
        path.addEllipse(c, 0.15 * rr, 0.15 * rr)
    return path


def centre_of_mass_path(center: QPointF, radius: float = 5.0) -> tuple[QPainterPath, QPainterPath]:
    """The centre-of-mass mark of mechanics drawings: a circle split in quarters, two opposite
    quarters filled. Returns (outline to stroke, filled quarters)."""
    rect = QRectF(center.x() - radius, center.y() - radius, 2 * radius, 2 * radius)
    outline = QPainterPath()
    outline.addEllipse(rect)
    outline.moveTo(QPointF(center.x() - radius, center.y()))
    outline.lineTo(QPointF(center.x() + radius, center.y()))
    outline.moveTo(QPointF(center.x(), center.y() - radius))
    outline.lineTo(QPointF(center.x(), center.y() + radius))
    filled = QPainterPath()
    for start in (0.0, 180.0):
        filled.moveTo(center)
        filled.arcTo(rect, start, 90.0)
        filled.closeSubpath()
    return outline, filled


def elastic_centre_path(center: QPointF, radius: float = 5.0) -> QPainterPath:
    """The elastic-centre mark: a small diamond with a cross through it (told apart from the
    centre-of-mass mark at a glance)."""
    c, r = center, radius
    path = QPainterPath(QPointF(c.x(), c.y() - r))
    path.lineTo(QPointF(c.x() + r, c.y()))
    path.lineTo(QPointF(c.x(), c.y() + r))
    path.lineTo(QPointF(c.x() - r, c.y()))
    path.closeSubpath()
    path.moveTo(QPointF(c.x() - 1.5 * r, c.y()))
    path.lineTo(QPointF(c.x() + 1.5 * r, c.y()))
    path.moveTo(QPointF(c.x(), c.y() - 1.5 * r))
    path.lineTo(QPointF(c.x(), c.y() + 1.5 * r))
    return path


__all__ = ["gear_pair_path", "centre_of_mass_path", "elastic_centre_path", "coil_path", "dashpot_path", "anchor_path", "mass_block_rect", "mass_block_side",
           "disc_path", "disc_radius", "axis_arrow_path", "rotation_arrow_path"]
