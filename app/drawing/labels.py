"""Label placement shared by the canvas, the motion view and the report sketch.

Each label gets the first of its candidate rectangles that stays inside the drawing and overlaps
no symbol and no label placed before it; a label with no clear candidate is left off (its element
keeps its tooltip, and the model file lists every name). Labels are placed in order of
importance (masses, then anchors, then springs and dashpots), on the drawing at rest, so an
animation does not make them jump from frame to frame.

Overlap tests look only at the neighbourhood (a grid of cells a few text lines high), so the
labels of a model with hundreds of elements are placed in linear time.
"""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF

#: Clear space kept round every label (device units).
PAD = 2.0


def _coords(r: QRectF) -> tuple[float, float, float, float]:
    x1, y1, x2, y2 = r.getCoords()
    return min(x1, x2), min(y1, y2), max(x1, x2), max(y1, y2)


class RectIndex:
    """Rectangles bucketed on a square grid of ``cell`` units, kept as plain (left, top, right,
    bottom) tuples: a test is a few float comparisons, not a call into Qt per pair."""

    def __init__(self, cell: float):
        self.cell = max(1.0, float(cell))
        self.cells: dict[tuple[int, int], list[tuple[float, float, float, float]]] = {}

    def _keys(self, box):
        c = self.cell
        left, top, right, bottom = box
        for i in range(math.floor(left / c), math.floor(right / c) + 1):
            for j in range(math.floor(top / c), math.floor(bottom / c) + 1):
                yield i, j

    def add(self, r: QRectF) -> None:
        box = _coords(r)
        if not (box[2] > box[0] and box[3] > box[1]):
            return      # a null rectangle meets nothing (as QRectF.intersects has it)
        cells = self.cells
        for k in self._keys(box):
            found = cells.get(k)
            if found is None:
                cells[k] = [box]
            else:
                found.append(box)

    def hits(self, r: QRectF) -> bool:
        """True when ``r`` overlaps a stored rectangle (open intervals: touching edges do not
        overlap, as QRectF.intersects)."""
        left, top, right, bottom = box = _coords(r)
        if not (right > left and bottom > top):
            return False
        cells = self.cells
        for k in self._keys(box):
            for a, b, c, d in cells.get(k, ()):
                if left < c and a < right and top < d and b < bottom:
                    return True
        return False


class LabelPlacer:
    """Places label rectangles clear of symbols and of each other.

    ``bounds`` (optional): labels must lie inside it. ``line`` is the text height (sets the
    grid cell).
    """

    def __init__(self, line: float, bounds: QRectF | None = None, pad: float = PAD):
        self.bounds = QRectF(bounds) if bounds is not None else None
        self.pad = pad
        # cells of a few lines: a symbol widened by the room it sweeps spans few of them
        self.index = RectIndex(max(32.0, 4.0 * line))
        self.symbols: list[QRectF] = []
        self.placed: list[tuple[str, QRectF]] = []

    def block(self, rect: QRectF) -> None:
        """A symbol (or the room it sweeps when it moves) labels must keep off."""
        self.symbols.append(QRectF(rect))
        self.index.add(rect)

    def fits(self, rect: QRectF) -> bool:
        if self.bounds is not None and not self.bounds.contains(rect):
            return False
        p = self.pad
        return not self.index.hits(rect.adjusted(-p, -p, p, p))

    def place(self, text: str, candidates) -> QRectF | None:
        """The first candidate rectangle that fits (then taken), or None: the label is left
        off."""
        for rect in candidates:
            if self.fits(rect):
                self.index.add(rect)
                self.placed.append((text, QRectF(rect)))
                return QRectF(rect)
        return None


def around(symbol: QRectF, w: float, h: float, gap: float):
    """Candidate label rectangles (w x h) round a symbol, ``gap`` away: below, above, right,
    left, then the four corners."""
    c = symbol.center()
    yield QRectF(c.x() - w / 2, symbol.bottom() + gap, w, h)
    yield QRectF(c.x() - w / 2, symbol.top() - gap - h, w, h)
    yield QRectF(symbol.right() + gap, c.y() - h / 2, w, h)
    yield QRectF(symbol.left() - gap - w, c.y() - h / 2, w, h)
    yield QRectF(symbol.right() + gap, symbol.bottom() + gap, w, h)
    yield QRectF(symbol.left() - gap - w, symbol.bottom() + gap, w, h)
    yield QRectF(symbol.right() + gap, symbol.top() - gap - h, w, h)
    yield QRectF(symbol.left() - gap - w, symbol.top() - gap - h, w, h)


def shifted(rect: QRectF, h: float, steps: int = 3):
    """``rect``, then shifted up and down by up to ``steps`` lines."""
    yield QRectF(rect)
    for k in range(1, steps + 1):
        yield rect.translated(0, -k * 0.9 * h)
        yield rect.translated(0, k * 0.9 * h)


def segment_boxes(p1: QPointF, p2: QPointF, half_width: float, pieces: int = 8) -> list[QRectF]:
    """Small boxes covering a straight link of half-width ``half_width`` (a diagonal spring is
    not blocked by its whole bounding rectangle)."""
    out = []
    n = max(1, pieces)
    if min(abs(p2.x() - p1.x()), abs(p2.y() - p1.y())) <= 0.25 * half_width:
        # a link along an axis is covered by one box as well as by eight (a chain's links: one
        # eighth of the overlap tests)
        n = 1
    for i in range(n):
        a = QPointF(p1.x() + (p2.x() - p1.x()) * i / n, p1.y() + (p2.y() - p1.y()) * i / n)
        b = QPointF(p1.x() + (p2.x() - p1.x()) * (i + 1) / n,
                    p1.y() + (p2.y() - p1.y()) * (i + 1) / n)
        out.append(QRectF(a, b).normalized().adjusted(-half_width, -half_width,
                                                      half_width, half_width))
    return out


__all__ = ["LabelPlacer", "RectIndex", "around", "shifted", "segment_boxes", "PAD"]
