"""The label placer's rectangle index against Qt's own overlap test (an independent
implementation: QRectF.intersects and QRectF.contains), on random rectangles of every size,
touching edges, null and unnormalised ones included."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QRectF

from app.drawing.labels import LabelPlacer, RectIndex


def _random_rects(rng, n):
    out = []
    for _ in range(n):
        x, y = rng.uniform(-200, 600, 2).round(0 if rng.random() < 0.3 else 3)
        w, h = rng.choice([0.0, -5.0, 1.0, 12.0, 40.0, 150.0], 2) * rng.uniform(0.5, 1.5, 2)
        if rng.random() < 0.3:
            w, h = float(round(w)), float(round(h))
        out.append(QRectF(float(x), float(y), float(w), float(h)))
    return out


def test_hits_is_qrectf_intersects_against_every_stored_rectangle():
    """Qt (QRectF.intersects): any stored rectangle overlapping the query, brute force."""
    rng = np.random.default_rng(7)
    for cell in (8.0, 32.0, 200.0):
        stored = _random_rects(rng, 300)
        index = RectIndex(cell)
        for r in stored:
            index.add(r)
        for q in _random_rects(rng, 600) + [QRectF(r) for r in stored[:50]] + \
                [r.translated(r.width(), 0) for r in stored[:50]]:          # edge to edge
            assert index.hits(q) == any(q.intersects(r) for r in stored), (cell, q)


def test_placer_takes_the_first_clear_candidate():
    """Qt (QRectF.contains, QRectF.intersects): place() gives the first candidate inside the
    bounds whose padded rectangle overlaps no symbol and no label placed before, else None."""
    rng = np.random.default_rng(11)
    bounds = QRectF(0, 0, 400, 300)
    placer = LabelPlacer(14.0, bounds)
    symbols = _random_rects(rng, 60)
    for r in symbols:
        placer.block(r)
    taken = list(symbols)
    p = placer.pad
    for k in range(200):
        cands = _random_rects(rng, 6)
        expect = next((c for c in cands if bounds.contains(c) and
                       not any(c.adjusted(-p, -p, p, p).intersects(o) for o in taken)), None)
        got = placer.place(f"label {k}", cands)
        assert got == expect
        if got is not None:
            taken.append(got)
