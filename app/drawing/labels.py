"""Label placement shared by the canvas, the motion view and the report sketch.

Each label gets the first of its candidate rectangles that stays inside the drawing and overlaps
no symbol and no label placed before it; a label with no clear candidate is left off (its element
keeps its tooltip, and the model file lists every name). Labels are placed in order of
importance (masses, then anchors, then springs and dashpots), on the drawing at rest, so an
animation does not make them jump from frame to frame.

Overlap tests look only at the neighbourhood (a grid of cells a few text lines high), so the
labels of a model with hundreds of elements are placed in linear time. Before that, every
candidate of a label is checked against the symbols at once on a raster of them
(:class:`SymbolRaster`: summed-area tables of the cells some symbol touches and of those one
covers whole): most candidates are then known clear or known blocked in a few array lookups, and
only those at a symbol's edge are tested rectangle by rectangle. The raster only decides what it
can prove, so the places are exactly those of the rectangle tests alone (a crowded 200-mass
chain tried ~4,600 candidates against ~30 rectangles each: 50-95 ms a new layout).
"""

from __future__ import annotations

import math

import numpy as np
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
        self.add_box(_coords(r))

    def add_box(self, box: tuple[float, float, float, float]) -> None:
        """:meth:`add` of a rectangle (left, top, right, bottom), left <= right, top <= bottom."""
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
        return self.hits_box(*_coords(r))

    def hits_box(self, left: float, top: float, right: float, bottom: float) -> bool:
        """:meth:`hits` of the rectangle (left, top, right, bottom), left <= right and
        top <= bottom."""
        if not (right > left and bottom > top):
            return False
        cells, c = self.cells, self.cell
        rows = range(math.floor(top / c), math.floor(bottom / c) + 1)
        for i in range(math.floor(left / c), math.floor(right / c) + 1):
            for j in rows:
                found = cells.get((i, j))
                if found:
                    for a, b, cr, d in found:
                        if left < cr and a < right and top < d and b < bottom:
                            return True
        return False


class SymbolRaster:
    """The symbols' rectangles on a grid of square cells, as two summed-area tables: cells some
    rectangle's interior meets (*touched*) and cells some rectangle holds whole (*covered*).

    :meth:`verdicts` tells, for many query rectangles at once, which are certainly clear of
    every symbol (no touched cell under them), which certainly overlap one (a covered cell under
    their interior) and which it cannot tell (-1, 1, 0). Cell ranges are widened (touched) or
    narrowed (covered) by a small margin, so rounding never turns a "cannot tell" into a wrong
    answer.
    """

    #: Most cells along a side (a larger drawing gets larger cells).
    MAX_CELLS = 512
    _EPS = 1e-6

    def __init__(self, boxes: list[tuple[float, float, float, float]], cell: float):
        b = np.asarray(boxes, float).reshape(-1, 4)
        self.x0, self.y0 = float(b[:, 0].min()), float(b[:, 1].min())
        span = max(float(b[:, 2].max()) - self.x0, float(b[:, 3].max()) - self.y0)
        self.cell = max(float(cell), span / self.MAX_CELLS, 1e-9)
        self.nx = int(math.ceil((float(b[:, 2].max()) - self.x0) / self.cell)) + 1
        self.ny = int(math.ceil((float(b[:, 3].max()) - self.y0) / self.cell)) + 1
        touched = self._cells(b, outward=True)
        covered = self._cells(b, outward=False)
        self.touched = self._table(touched)
        self.covered = self._table(covered)

    def _ranges(self, b, outward: bool):
        """Inclusive cell ranges (i0, j0, i1, j1) of rectangles (n, 4): the cells their interior
        meets (``outward``, widened by a margin) or the cells inside them (narrowed)."""
        e = self._EPS if outward else -self._EPS
        gx = (b[:, [0, 2]] - self.x0) / self.cell
        gy = (b[:, [1, 3]] - self.y0) / self.cell
        if outward:
            i0, i1 = np.floor(gx[:, 0] - e), np.ceil(gx[:, 1] + e) - 1
            j0, j1 = np.floor(gy[:, 0] - e), np.ceil(gy[:, 1] + e) - 1
        else:
            i0, i1 = np.ceil(gx[:, 0] - e), np.floor(gx[:, 1] + e) - 1
            j0, j1 = np.ceil(gy[:, 0] - e), np.floor(gy[:, 1] + e) - 1
        return i0, j0, i1, j1

    def _cells(self, b, outward: bool) -> np.ndarray:
        """A 0/1 grid of the cells the rectangles touch (or cover)."""
        i0, j0, i1, j1 = self._ranges(b, outward)
        i0, i1 = np.clip(i0, 0, self.nx), np.clip(i1 + 1, 0, self.nx)
        j0, j1 = np.clip(j0, 0, self.ny), np.clip(j1 + 1, 0, self.ny)
        keep = (i1 > i0) & (j1 > j0)
        i0, i1, j0, j1 = (a[keep].astype(np.intp) for a in (i0, i1, j0, j1))
        diff = np.zeros((self.ny + 1, self.nx + 1), np.int32)
        np.add.at(diff, (j0, i0), 1)
        np.add.at(diff, (j0, i1), -1)
        np.add.at(diff, (j1, i0), -1)
        np.add.at(diff, (j1, i1), 1)
        return (diff.cumsum(0).cumsum(1)[:self.ny, :self.nx] > 0).astype(np.int32)

    @staticmethod
    def _table(grid: np.ndarray) -> np.ndarray:
        table = np.zeros((grid.shape[0] + 1, grid.shape[1] + 1), np.int32)
        table[1:, 1:] = grid.cumsum(0).cumsum(1)
        return table

    def _count(self, table, i0, j0, i1, j1) -> np.ndarray:
        i0, i1 = np.clip(i0, 0, self.nx), np.clip(i1 + 1, 0, self.nx)
        j0, j1 = np.clip(j0, 0, self.ny), np.clip(j1 + 1, 0, self.ny)
        empty = (i1 <= i0) | (j1 <= j0)
        i0, i1, j0, j1 = (a.astype(np.intp) for a in (i0, i1, j0, j1))
        i1, j1 = np.maximum(i1, i0), np.maximum(j1, j0)
        n = table[j1, i1] - table[j0, i1] - table[j1, i0] + table[j0, i0]
        return np.where(empty, 0, n)

    def verdicts(self, boxes) -> np.ndarray:
        """-1 (clear of every symbol), 1 (overlaps one) or 0 (cannot tell) per rectangle
        (left, top, right, bottom) of ``boxes``; a null rectangle is clear (it meets nothing)."""
        b = np.asarray(boxes, float).reshape(-1, 4)
        clear = self._count(self.touched, *self._ranges(b, outward=True)) == 0
        hit = self._count(self.covered, *self._ranges(b, outward=False)) > 0
        null = ~((b[:, 2] > b[:, 0]) & (b[:, 3] > b[:, 1]))
        return np.where(null | clear, -1, np.where(hit, 1, 0))


class LabelPlacer:
    """Places label rectangles clear of symbols and of each other.

    ``bounds`` (optional): labels must lie inside it. ``line`` is the text height (sets the
    grid cell).
    """

    def __init__(self, line: float, bounds: QRectF | None = None, pad: float = PAD):
        self.bounds = QRectF(bounds) if bounds is not None else None
        self.pad = pad
        # cells of a few lines: a symbol widened by the room it sweeps spans few of them
        self.index = RectIndex(max(32.0, 4.0 * line))      # the symbols
        self.labels = RectIndex(max(32.0, 4.0 * line))     # the labels placed
        #: the symbols as (left, top, right, bottom)
        self.symbols: list[tuple[float, float, float, float]] = []
        self.placed: list[tuple[str, QRectF]] = []
        #: the labels placed, as (left, top, right, bottom) (null ones left out: they meet
        #: nothing), for the tests of many candidates at once in place_groups
        self._taken: list[tuple[float, float, float, float]] = []
        self._raster_cell = max(1.0, line / 4.0)
        self._raster: SymbolRaster | None = None

    def block(self, rect: QRectF) -> None:
        """A symbol (or the room it sweeps when it moves) labels must keep off."""
        box = _coords(rect)
        self.symbols.append(box)
        self.index.add_box(box)
        self._raster = None

    def block_boxes(self, boxes) -> None:
        """:meth:`block` of many rectangles, rows (left, top, right, bottom) with left <= right
        and top <= bottom."""
        for box in np.asarray(boxes, float).reshape(-1, 4).tolist():
            box = tuple(box)
            self.symbols.append(box)
            self.index.add_box(box)
        self._raster = None

    def fits(self, rect: QRectF) -> bool:
        if self.bounds is not None and not self.bounds.contains(rect):
            return False
        p = self.pad
        padded = rect.adjusted(-p, -p, p, p)
        return not self.labels.hits(padded) and not self.index.hits(padded)

    def place(self, text: str, candidates) -> QRectF | None:
        """The first candidate rectangle that fits (then taken), or None: the label is left
        off. One label's candidates are tested one by one (:meth:`place_all` is the faster way
        for many labels: its one pass over the symbols costs more than a label's tests)."""
        for cand in candidates:
            rect = QRectF(cand) if isinstance(cand, QRectF) else QRectF(*cand)
            if self.fits(rect):
                self._take(_coords(rect))
                self.placed.append((text, QRectF(rect)))
                return rect
        return None

    def place_all(self, requests) -> list[QRectF | None]:
        """:meth:`place` for each ``(text, candidates)`` in turn. A candidate is a QRectF or an
        ``(x, y, w, h)`` tuple (:func:`around_boxes`, :func:`shifted_boxes`: no Qt object per
        candidate)."""
        groups = [np.array([r.getRect() if isinstance(r, QRectF) else r for r in cands],
                           float).reshape(-1, 4) for _text, cands in requests]
        return self.place_groups([text for text, _c in requests], groups)

    def place_groups(self, texts, groups) -> list[QRectF | None]:
        """:meth:`place` for each text in turn, its candidates a (k, 4) array of rows (x, y, w,
        h). The candidates of every label are tested against the bounds and the symbols in one
        pass first (:class:`SymbolRaster`), then placed in order, each clear of the labels
        placed before it; the tests are QRectF's own (``contains``, ``intersects`` of the
        rectangle grown by ``pad``), in the same arithmetic."""
        counts = [len(g) for g in groups]
        if not sum(counts):
            return [None] * len(groups)
        flat = np.concatenate([np.asarray(g, float).reshape(-1, 4) for g in groups])
        verdicts, padded = self._verdicts(flat)
        # the candidates still open: not outside, not on a symbol, not on a label placed so far
        # (kept up to date as labels are placed). In a crowded drawing most candidates are
        # blocked (a 200-mass chain: ~4,400 of ~4,600), so the search jumps from one open
        # candidate to the next in the array, in order: a label's first open candidate that
        # passes the exact symbol test (where the raster could not tell) is its place
        open_ = (verdicts != 1) & ~_hits(padded, self._taken)
        label_of = np.repeat(np.arange(len(counts)), counts)
        ends = np.cumsum(counts).tolist()
        out: list[QRectF | None] = [None] * len(groups)
        symbols = self.index.hits_box
        j, total = 0, len(flat)
        while j < total:
            j += int(open_[j:].argmax())
            if not open_[j]:
                break                      # nothing open after j: the rest are left off
            if verdicts[j] == 0 and symbols(*padded[j].tolist()):
                j += 1
                continue
            lab = int(label_of[j])
            x, y, w, h = flat[j].tolist()
            box = (min(x, x + w), min(y, y + h), max(x, x + w), max(y, y + h))
            j = ends[lab]                  # the next label's candidates
            if self._take(box):
                open_[j:] &= ~_hits(padded[j:], [box])
            found = QRectF(x, y, w, h)
            self.placed.append((texts[lab], QRectF(found)))
            out[lab] = found
        return out

    def _take(self, box) -> bool:
        """Record a placed label (left, top, right, bottom); False for a null one (it meets
        nothing, as QRectF.intersects has it)."""
        self.labels.add_box(box)
        if box[2] > box[0] and box[3] > box[1]:
            self._taken.append(box)
            return True
        return False

    def _verdicts(self, xywh: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Per candidate (x, y, w, h): 1 when it is outside the bounds or certainly overlaps a
        symbol, -1 when certainly clear of every symbol, 0 when the rectangles must tell; and
        each one grown by ``pad`` as (left, top, right, bottom) (arrays)."""
        x, y, w, h = xywh.T
        p = self.pad
        # QRectF.adjusted(-p, -p, p, p): x - p, width (w + p) + p
        px, py = x - p, y - p
        pw, ph = (w + p) + p, (h + p) + p
        box = np.column_stack([np.minimum(px, px + pw), np.minimum(py, py + ph),
                               np.maximum(px, px + pw), np.maximum(py, py + ph)])
        if self.symbols:
            if self._raster is None:
                self._raster = SymbolRaster(self.symbols, self._raster_cell)
            verdict = self._raster.verdicts(box)
        else:
            verdict = np.full(len(box), -1)
        if self.bounds is not None:
            verdict = np.where(_inside(self.bounds, x, y, w, h), verdict, 1)
        return verdict, box


def _hits(boxes: np.ndarray, others) -> np.ndarray:
    """Per rectangle of ``boxes`` (n, 4) (left, top, right, bottom): True when its interior
    meets that of one of ``others`` (non-null rectangles, same form): the comparisons of
    :meth:`RectIndex.hits_box` (open intervals, as QRectF.intersects) on every pair at once.
    A null rectangle meets nothing."""
    out = np.zeros(len(boxes), bool)
    if not len(others) or not len(boxes):
        return out
    left, top, right, bottom = boxes.T
    for a, b, c, d in others:
        out |= (left < c) & (a < right) & (top < d) & (b < bottom)
    return out & (right > left) & (bottom > top)


def _inside(bounds: QRectF, x, y, w, h) -> np.ndarray:
    """QRectF.contains(QRectF(x, y, w, h)) of many rectangles: False for a null one (zero
    width or height) or a null ``bounds``."""
    bx, by, bw, bh = bounds.getRect()
    out = np.ones(len(x), bool)
    for lo, size, blo, bsize in ((x, w, bx, bw), (y, h, by, bh)):
        l1, r1 = (blo + bsize, blo) if bsize < 0 else (blo, blo + bsize)
        if l1 == r1:
            return np.zeros(len(x), bool)
        l2 = np.where(size < 0, lo + size, lo)
        r2 = np.where(size < 0, lo, lo + size)
        out &= (l2 != r2) & (l2 >= l1) & (r2 <= r1)
    return out


def around_boxes(symbol: QRectF, w: float, h: float, gap: float) -> list[tuple]:
    """Candidate label rectangles (w x h) round a symbol, ``gap`` away, as ``(x, y, w, h)``
    tuples: below, above, right, left, then the four corners."""
    sx, sy, sw, sh = symbol.getRect()
    cx, cy = sx + sw / 2, sy + sh / 2
    right, bottom = sx + sw, sy + sh
    return [(cx - w / 2, bottom + gap, w, h), (cx - w / 2, sy - gap - h, w, h),
            (right + gap, cy - h / 2, w, h), (sx - gap - w, cy - h / 2, w, h),
            (right + gap, bottom + gap, w, h), (sx - gap - w, bottom + gap, w, h),
            (right + gap, sy - gap - h, w, h), (sx - gap - w, sy - gap - h, w, h)]


def shifted_boxes(rect, h: float, steps: int = 3) -> list[tuple]:
    """``rect`` (a QRectF or an ``(x, y, w, h)`` tuple), then shifted up and down by up to
    ``steps`` lines, as ``(x, y, w, h)`` tuples."""
    x, y, w, rh = rect.getRect() if isinstance(rect, QRectF) else rect
    out = [(x, y, w, rh)]
    for k in range(1, steps + 1):
        out.append((x, y + -k * 0.9 * h, w, rh))
        out.append((x, y + k * 0.9 * h, w, rh))
    return out


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


__all__ = ["LabelPlacer", "RectIndex", "SymbolRaster", "around_boxes", "shifted_boxes",
           "segment_boxes", "PAD"]
