"""The report's drawing of a large model: nodes as dots and every spring and dashpot as a
straight line, computed with numpy and each pixel drawn once.

:func:`app.drawing.sketch.paint_sketch` draws coils, blocks, hatching and labels element by
element. On a page a model of thousands of masses leaves each symbol smaller than a pixel, and
drawing them one by one took minutes (a 100,000-mass chain: over two minutes for the sketch and
twelve thumbnails). Above :data:`OUTLINE_MASSES` masses the report draws this outline instead,
which is what such a drawing shows at page size, and says so on the page.
"""

from __future__ import annotations

import copy

import numpy as np
from PySide6.QtCore import QLineF, QPointF, QRectF, Qt
from PySide6.QtGui import QPainter, QPen, QPolygonF

#: Above this many masses the report's sketch and thumbnails are outlines (common practice for
#: page drawings: below about 0.5 mm a symbol no longer reads; at 200 dpi and a 17 cm wide
#: drawing that is reached at a few hundred masses in a row).
OUTLINE_MASSES = 300


class Outline:
    """Pixel positions of a model's nodes inside ``rect`` (model coordinates, y up, one scale
    for both axes, centred) and the node pairs its springs and dashpots join."""

    def __init__(self, model, rect: QRectF, pad: float = 6.0):
        nodes = list(model.masses) + list(model.anchors)
        self.n_mass = len(model.masses)
        self.index = {n.id: i for i, n in enumerate(nodes)}
        x = np.fromiter((n.x for n in nodes), float, len(nodes))
        y = np.fromiter((n.y for n in nodes), float, len(nodes))
        links = list(model.springs) + list(model.dampers)
        self.a = np.fromiter((self.index[e.a] for e in links), np.int64, len(links))
        self.b = np.fromiter((self.index[e.b] for e in links), np.int64, len(links))
        w, h = max(1.0, rect.width() - 2 * pad), max(1.0, rect.height() - 2 * pad)
        if len(nodes):
            dx, dy = float(np.ptp(x)), float(np.ptp(y))
            cx, cy = 0.5 * (x.min() + x.max()), 0.5 * (y.min() + y.max())
        else:
            dx = dy = cx = cy = 0.0
        scales = [s for s, span in ((w / dx if dx else 0.0, dx), (h / dy if dy else 0.0, dy))
                  if span > 0]
        self.px_per_m = min(scales) if scales else 1.0
        self.px = rect.center().x() + (x - cx) * self.px_per_m
        self.py = rect.center().y() - (y - cy) * self.px_per_m
        self.rect = QRectF(rect)
        self._dofs = None

    def moved_to(self, rect: QRectF) -> Outline:
        """The same outline in a rectangle of the same size elsewhere (thumbnails share one
        layout: computing it once per page saves a pass over every element per thumbnail)."""
        other = copy.copy(self)
        dx, dy = rect.left() - self.rect.left(), rect.top() - self.rect.top()
        other.px, other.py, other.rect = self.px + dx, self.py + dy, QRectF(rect)
        return other

    def motion(self, modal, column: int) -> np.ndarray:
        """(n_nodes, 2) motion of every node in model units (x, y) in mode ``column + 1``
        (anchors and rotations 0), from the result's arrays (no per-node dicts)."""
        if self._dofs is None:   # (rows of all_dofs in x or y, their node, 0 for x / 1 for y)
            rows = [(r, self.index[mid], 0 if d == "x" else 1)
                    for r, (mid, d) in enumerate(modal.all_dofs) if d in ("x", "y")]
            self._dofs = np.array(rows, np.int64).reshape(-1, 3)
        out = np.zeros((len(self.px), 2))
        r, node, axis = self._dofs.T
        out[node, axis] = np.asarray(modal.all_shapes[:, column], float)[r]
        return out

    def fit(self, motion: np.ndarray, fraction: float = 0.12) -> float:
        """Scale (pixels per unit of motion) that makes the largest motion ``fraction`` of the
        drawing's smaller side."""
        big = float(np.max(np.abs(motion))) if motion.size else 0.0
        side = min(self.rect.width(), self.rect.height())
        return fraction * side / big if big > 0 else 0.0

    def paint(self, p: QPainter, st, motion: np.ndarray | None = None, scale: float = 0.0,
              grey: bool = False) -> None:
        """Lines for the springs and dashpots, dots for the masses, squares for the anchors;
        ``motion`` (n_nodes, 2) times ``scale`` pixels moves the nodes."""
        px, py = self.px, self.py
        if motion is not None and scale:
            px, py = px + scale * motion[:, 0], py - scale * motion[:, 1]
        colour = st.ink_soft if grey else st.ink
        p.save()
        p.setRenderHint(QPainter.RenderHint.Antialiasing, False)   # sub-pixel work, no gain
        if len(self.a):
            ends = _distinct(px[self.a], py[self.a], px[self.b], py[self.b])
            p.setPen(QPen(colour, 1.0))
            p.drawLines([QLineF(*row) for row in ends.tolist()])
        for sl, width, cap in ((slice(0, self.n_mass), 4.0, Qt.PenCapStyle.RoundCap),
                               (slice(self.n_mass, None), 5.0, Qt.PenCapStyle.SquareCap)):
            pts = _distinct(px[sl], py[sl])
            if len(pts):
                p.setPen(QPen(colour if sl.start == 0 else st.ink, width, Qt.PenStyle.SolidLine,
                              cap))
                p.drawPoints(QPolygonF([QPointF(a, b) for a, b in pts.tolist()]))
        p.restore()


def _distinct(*coords) -> np.ndarray:
    """Rows of the coordinates rounded to whole pixels, each distinct row once (many elements
    land on one pixel on a page); rows far outside the page are dropped. One int64 key per row
    (16 bits a coordinate) keeps np.unique one-dimensional and fast."""
    arr = np.rint(np.column_stack(coords))
    arr = arr[np.all(np.isfinite(arr) & (np.abs(arr) < _FAR), axis=1)].astype(np.int64) + _FAR
    if not len(arr):
        return np.zeros((0, len(coords)))
    key = np.zeros(len(arr), np.int64)
    for c in range(arr.shape[1]):
        key = (key << 16) | arr[:, c]
    _, first = np.unique(key, return_index=True)
    return (arr[np.sort(first)] - _FAR).astype(float)


#: Pixel coordinates kept: within +-2^15 of the page's origin, 16 bits each in a key
_FAR = 1 << 15


class AxisCurve:
    """The mode-shape curve of a long chain or shaft: each mass's motion along the model's axis
    (line) or its rotation (torsion) against its position along the drawing's long side."""

    def __init__(self, model, modal):
        direction = model.axis if model.kind == "line" else "theta"
        xs = np.fromiter((m.x for m in model.masses), float, len(model.masses))
        ys = np.fromiter((m.y for m in model.masses), float, len(model.masses))
        pos = xs if np.ptp(xs) >= np.ptp(ys) else ys
        index = {m.id: i for i, m in enumerate(model.masses)}
        rows = [(r, index[mid]) for r, (mid, d) in enumerate(modal.all_dofs) if d == direction]
        self._rows = np.array(rows, np.int64).reshape(-1, 2)
        self._order = np.argsort(pos, kind="stable")
        self.position = pos[self._order]
        self._modal = modal
        self._n = len(model.masses)

    def motion(self, column: int) -> np.ndarray:
        """Motion of each mass in mode ``column + 1``, in the order of :attr:`position`."""
        u = np.zeros(self._n)
        r, mass = self._rows.T
        u[mass] = np.asarray(self._modal.all_shapes[:, column], float)[r]
        return u[self._order]


__all__ = ["OUTLINE_MASSES", "AxisCurve", "Outline"]
