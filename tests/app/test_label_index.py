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


def test_symbol_raster_never_contradicts_the_rectangles():
    """Qt (QRectF.intersects), brute force: the raster's "clear" (-1) and "overlaps" (1) are
    always what the rectangles say; it may only answer "cannot tell" (0). Rectangles of every
    size, touching edges, off-grid and null ones, with cells finer and coarser than them."""
    from app.drawing.labels import SymbolRaster, _coords

    rng = np.random.default_rng(23)
    undecided = 0
    for cell in (0.7, 3.0, 25.0):
        stored = [r for r in _random_rects(rng, 200) if not r.normalized().isNull()]
        raster = SymbolRaster([_coords(r) for r in stored], cell)
        queries = _random_rects(rng, 800) + [QRectF(r) for r in stored[:50]] + \
            [r.translated(r.width(), 0) for r in stored[:50]] + \
            [r.adjusted(1e-9, 1e-9, -1e-9, -1e-9) for r in stored[:50]]
        verdicts = raster.verdicts([_coords(q) for q in queries])
        for q, v in zip(queries, verdicts):
            truth = any(q.intersects(r) for r in stored)
            assert v == 0 or v == (1 if truth else -1), (cell, q, v, truth)
        undecided += int(np.sum(verdicts == 0))
    # it decides most queries (what it is for); the count can fail only if it stops deciding
    assert undecided < 0.5 * 3 * 950


def test_place_groups_of_tuples_is_place_of_rectangles():
    """Qt (QRectF.contains, QRectF.intersects): candidates given as (x, y, w, h) rows give the
    same places as the same candidates given as QRectF, and both are the first candidate inside
    the bounds and clear of every symbol and earlier label."""
    rng = np.random.default_rng(31)
    bounds = QRectF(0, 0, 400, 300)
    symbols = _random_rects(rng, 80)
    requests = [(f"label {k}", _random_rects(rng, 7)) for k in range(250)]
    by_rect, by_row = LabelPlacer(14.0, bounds), LabelPlacer(14.0, bounds)
    for r in symbols:
        by_rect.block(r)
        by_row.block(r)
    got_rect = [by_rect.place(t, c) for t, c in requests]
    got_row = by_row.place_groups([t for t, _c in requests],
                                  [np.array([c.getRect() for c in cands]) for _t, cands in requests])
    assert got_rect == got_row
    # labels placed one by one first, the rest in one pass: the pass keeps clear of them too
    mixed = LabelPlacer(14.0, bounds)
    for r in symbols:
        mixed.block(r)
    first = [mixed.place(t, c) for t, c in requests[:60]]
    rest = mixed.place_groups([t for t, _c in requests[60:]],
                              [np.array([c.getRect() for c in cands]) for _t, cands in requests[60:]])
    assert first + rest == got_rect
    taken, p = list(symbols), by_rect.pad
    for (_t, cands), got in zip(requests, got_rect):
        expect = next((c for c in cands if bounds.contains(c) and
                       not any(c.adjusted(-p, -p, p, p).intersects(o) for o in taken)), None)
        assert got == expect
        if got is not None:
            taken.append(got)
    assert sum(g is not None for g in got_rect) > 20


def _sketch_models():
    from solver.model import Anchor, Damper, Mass, Model, Spring

    rng = np.random.default_rng(5)
    chain = Model(
        kind="line", name="chain",
        masses=tuple(Mass(f"m{i}", 0.3 * (i + 1), 0.0, float(rng.uniform(0.2, 5.0)),
                          fixed=("x",) if i == 7 else ()) for i in range(60))
        + (Mass("j", 20.0, 0.0, 0.0),),
        anchors=(Anchor("g", 0.0, 0.0),),
        springs=(Spring("s0", "g", "m0", 1e4), Spring("p0", "g", "m0", 2e4))
        + tuple(Spring(f"s{i}", f"m{i - 1}", f"m{i}", 1e4) for i in range(1, 60))
        + (Spring("sj", "m59", "j", 1e4),),
        dampers=(Damper("d0", "g", "m0", 30.0), Damper("d1", "m3", "m4", 5.0)))
    planar = Model(
        kind="planar", name="frame",
        masses=tuple(Mass(f"n{r}{c}", 0.5 * c + 0.1 * r, 0.4 * r + 0.05 * c, 1.0 + r + c)
                     for r in range(4) for c in range(5)),
        anchors=(Anchor("a", -0.5, 0.0), Anchor("b", -0.5, 1.2)),
        springs=(Spring("sa", "a", "n00", 1e4), Spring("sb", "b", "n30", 1e4))
        + tuple(Spring(f"h{r}{c}", f"n{r}{c - 1}", f"n{r}{c}", 1e4)
                for r in range(4) for c in range(1, 5))
        + tuple(Spring(f"v{r}{c}", f"n{r - 1}{c}", f"n{r}{c}", 1e4)
                for r in range(1, 4) for c in range(5))
        + tuple(Spring(f"x{r}{c}", f"n{r - 1}{c - 1}", f"n{r}{c}", 5e3)
                for r in range(1, 4) for c in range(1, 5)))
    return chain, planar


def test_array_label_placement_is_the_element_by_element_one(qapp, monkeypatch):
    """The masses' and links' labels of a translation model placed with arrays give the same
    labels in the same places as the element-by-element code the other models use (itself
    checked against Qt above): parallel links on lanes, a dashpot, a locked mass, a junction,
    diagonal links, with and without the room moving symbols sweep."""
    from PySide6.QtGui import QFont, QFontMetricsF

    from app.drawing import sketch
    from app.drawing.style import LIGHT

    font = QFont()
    font.setPixelSize(11)
    fm = QFontMetricsF(font)
    compared = 0
    for model in _sketch_models():
        for size, sweep in (((900, 300), 0.0), ((500, 400), 6.0), ((300, 200), 0.0)):
            lay = sketch.SketchLayout(model, QRectF(0, 0, *size))
            texts = sketch._label_texts(lay, True, None)
            assert sketch._paint_rest_fast(lay)
            fast = sketch._place_labels(lay, LIGHT, texts, fm, sweep)
            monkeypatch.setattr(sketch, "_paint_rest_fast", lambda _lay: False)
            slow = sketch._place_labels(lay, LIGHT, texts, fm, sweep)
            monkeypatch.undo()
            assert [t for t, _r, _c in fast] == [t for t, _r, _c in slow]
            for (_t, a, _ca), (_t2, b, _cb) in zip(fast, slow):
                assert np.allclose(a.getRect(), b.getRect(), atol=1e-9)
            compared += len(fast)
    assert compared > 100


def test_free_side_from_arrays_is_the_one_from_points(qapp):
    """The side a mass label tries first, found from the frame arrays' points for every mass at
    once, is the one found from the layout's points mass by mass (both are the layout's
    to_px of each node): chain with parallel links and a junction, planar frame with diagonal
    links at 45 degrees and links at every side of a mass."""
    from app.drawing import sketch

    checked, sides = 0, set()
    for model in _sketch_models():
        for size in ((900, 300), (300, 200)):
            lay = sketch.SketchLayout(model, QRectF(0, 0, *size))
            rows = list(range(len(model.masses)))
            one_by_one = [sketch._SIDES[sketch._free_side(lay, m.id)] for m in model.masses]
            assert sketch._free_side_rows(lay, rows) == one_by_one
            checked += len(rows)
            sides.update(one_by_one)
    # not every mass takes the same side: the comparison can tell them apart
    assert checked > 100 and len(sides) > 1


def test_kept_label_widths_are_the_font_metrics_widths(qapp):
    """The label widths kept by font and text are QFontMetricsF's own, for a font and for
    another size of it asked after the first was kept (Qt is the reference)."""
    from PySide6.QtGui import QFont, QFontMetricsF

    from app.drawing import sketch

    texts = ["m1", "Spring 12  2.5e6 N/m", "m1", "x", "a much longer label  (40 %)"]
    for px in (11, 17, 11):
        font = QFont()
        font.setPixelSize(px)
        fm = QFontMetricsF(font)
        assert sketch._text_widths(font, texts) == [fm.horizontalAdvance(t) for t in texts]
    # kerning and hinting change the widths but not QFont.key(): kept apart all the same
    for change in (lambda f: f.setKerning(False),
                   lambda f: f.setHintingPreference(QFont.HintingPreference.PreferFullHinting)):
        font = QFont()
        font.setPixelSize(17)
        change(font)
        fm = QFontMetricsF(font)
        assert sketch._text_widths(font, texts) == [fm.horizontalAdvance(t) for t in texts]
    small, big = QFont(), QFont()
    small.setPixelSize(9)
    big.setPixelSize(25)
    assert sketch._text_widths(small, texts[1:2])[0] < sketch._text_widths(big, texts[1:2])[0]
