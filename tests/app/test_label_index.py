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


def _label_places(scene):
    return {eid: (it.label_item.isVisible(), (round(it.label_item.scenePos().x(), 6),
                                              round(it.label_item.scenePos().y(), 6)))
            for eid, it in list(scene.nodes.items()) + list(scene.links.items())}


def test_canvas_labels_reused_for_the_same_drawing_and_searched_for_a_new_one(
        qtbot, window, monkeypatch):
    """A value edit leaves the drawing as it was: the labels keep their places and the search
    is not run again; a move searches again, and its undo gives back the first places exactly
    (common practice: undo restores the view as well as the model). Each search is checked as
    the placer's contract: no two shown labels overlap (QRectF.intersects)."""
    from PySide6.QtCore import QRectF as _R

    from solver.model import Anchor, Mass, Model, Spring

    masses = tuple(Mass(f"m{i}", 0.1 * (i + 1), 0.0, 1.0 + 0.1 * i) for i in range(12))
    springs = (Spring("s0", "g", "m0", 1000.0),) + tuple(
        Spring(f"s{i}", f"m{i - 1}", f"m{i}", 1000.0 + i) for i in range(1, 12))
    window.document.new(model=Model(kind="line", name="labels", masses=masses,
                                    anchors=(Anchor("g", 0.0, 0.0),), springs=springs))
    window.solver.wait()
    qtbot.wait(20)
    scene = window.scene
    first = _label_places(scene)
    runs = []
    real = scene._place_labels
    monkeypatch.setattr(scene, "_place_labels", lambda *a: runs.append(1) or real(*a))
    window.document.set_element("s5", k=2500.0)
    qtbot.wait(20)
    assert runs == [] and _label_places(scene) == first
    window.document.move_nodes({"m6": (0.7, 0.05)})
    qtbot.wait(20)
    assert runs == [1] and _label_places(scene) != first
    shown = [it.label_item.mapRectToScene(it.label_item.boundingRect())
             for it in list(scene.nodes.values()) + list(scene.links.values())
             if it.label_item.isVisible() and it.label_item.text()]
    assert all(not _R(a).intersects(b) for i, a in enumerate(shown) for b in shown[i + 1:])
    window.document.undo_stack.undo()
    qtbot.wait(20)
    assert runs == [1] and _label_places(scene) == first
