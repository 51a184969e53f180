"""Pixmaps kept by plot and canvas items (Qt's DeviceCoordinateCache): the Tune sweep's curves
show what they draw, and Qt's pixmap cache has room for every user's pixmaps
(app/drawing/pixmap_room.py)."""

import numpy as np
from PySide6.QtGui import QImage, QPixmapCache
from PySide6.QtWidgets import QGraphicsItem, QWidget

from solver.model import Anchor, Mass, Model, Spring


def _pixels(widget) -> np.ndarray:
    image = widget.grab().toImage().convertToFormat(QImage.Format.Format_RGBA8888)
    raw = np.frombuffer(image.constBits(), np.uint8)
    return raw.reshape(image.height(), image.bytesPerLine() // 4, 4)[:, :image.width()].astype(int)


def _chain(n=40):
    masses = tuple(Mass(f"m{i}", 0.2 * (i + 1), 0.0, 1.0 + 0.02 * i) for i in range(n))
    ids = ["g"] + [m.id for m in masses]
    springs = tuple(Spring(f"s{i}", ids[i], ids[i + 1], 1000.0 * (1 + 0.05 * i))
                    for i in range(n))
    return Model(kind="line", name="sweep chain", masses=masses,
                 anchors=(Anchor("g", 0.0, 0.0),), springs=springs)


def _swept_panel(qtbot, window):
    """The Tune panel with the sweep of spring s3 of the chain drawn."""
    window.document.new(model=_chain())
    window.solver.wait()
    panel = window.tune_panel
    qtbot.waitUntil(lambda: panel.isVisible() and panel.plot.viewport().width() > 100)
    assert panel.select_element("s3", "k")
    assert panel.wait_sweep()
    return panel


def _same_as_drawn(panel, earlier=None, crossings=0):
    """The plot from the curves' pixmaps equals the plot the curves draw with none, to the
    rounding of anti-aliased edges (a stale or missing curve differs by tens of colour levels
    over hundreds of pixels); with ``earlier``, the plot also differs from it. ``crossings``:
    pixels allowed to differ by up to 40 levels where dimmed curves cross (drawn directly, each
    segment is laid on at 30 % opacity and a crossing comes out darker; from the pixmap the group
    is laid on once)."""
    curves = list(panel._sweep_curves)
    assert curves and all(c.cacheMode() == QGraphicsItem.CacheMode.DeviceCoordinateCache
                          for c in curves)
    viewport = panel.plot.viewport()
    cached = _pixels(viewport)
    for c in curves:
        c.setCacheMode(QGraphicsItem.CacheMode.NoCache)
    direct = _pixels(viewport)
    for c in curves:
        c.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
    off = np.abs(cached - direct).max(axis=2)
    assert (off > 16).sum() <= crossings and off.max() <= (40 if crossings else 16)
    if earlier is not None:
        assert (np.abs(direct - earlier).max(axis=2) > 60).sum() > 200
    return direct


def test_cached_sweep_curves_show_what_they_draw(qtbot, window):
    """common practice (a cache is invisible): the sweep plot drawn from its curves' pixmaps
    matches the curves' own drawing when swept, while dimmed for an edit elsewhere in the model
    (the pixmaps drawn at 30 % opacity) and after the new sweep arrives (drawn directly first,
    kept as pixmaps once unchanged for tune_panel.CURVE_CACHE_MS)."""
    panel = _swept_panel(qtbot, window)
    qtbot.waitUntil(lambda: panel.curves_cached)          # once drawn unchanged for a while
    swept = _same_as_drawn(panel)
    window.document.set_element("s20", k=9000.0)          # the sweep is stale: dimmed
    assert panel.sweep_pending and panel.curves_cached
    dimmed = _same_as_drawn(panel, swept, crossings=swept.shape[0] * swept.shape[1] // 1000)
    assert panel.wait_sweep()
    # new curves are drawn directly first (filling pixmaps costs more than drawing), then kept
    assert not panel.curves_cached
    qtbot.waitUntil(lambda: panel.curves_cached)
    _same_as_drawn(panel, dimmed)


def test_pixmap_cache_has_room_for_every_reservation(qtbot):
    """The cache's limit is Qt's default plus every owner's reservation, each kept at its
    viewports' worth of pixels (4 bytes each) as the viewport is resized; a new reservation by
    the same owner replaces its old one."""
    from app.drawing import pixmap_room

    saved = dict(pixmap_room._RESERVED)
    try:
        pixmap_room._RESERVED.clear()
        a, b = QWidget(), QWidget()
        qtbot.addWidget(a)
        qtbot.addWidget(b)
        a.resize(400, 300)
        b.resize(200, 100)
        a.show()
        b.show()
        qtbot.waitExposed(a)
        room_a = pixmap_room.ViewportRoom("a", a, 8)
        room_b = pixmap_room.ViewportRoom("b", b, lambda: 3)
        r = a.devicePixelRatioF()
        kb_a = int(8 * 400 * 300 * r * r * 4 / 1024)
        kb_b = int(3 * 200 * 100 * r * r * 4 / 1024)
        assert pixmap_room._RESERVED == {"a": kb_a, "b": kb_b}
        assert QPixmapCache.cacheLimit() >= pixmap_room.BASE_KB + kb_a + kb_b
        a.resize(1600, 1200)                     # a resize reserves again
        qtbot.waitUntil(lambda: pixmap_room._RESERVED["a"] == int(8 * 1600 * 1200 * r * r * 4
                                                                  / 1024))
        assert QPixmapCache.cacheLimit() >= pixmap_room.BASE_KB + sum(
            pixmap_room._RESERVED.values())
        assert room_a.update() == QPixmapCache.cacheLimit() and room_b is not None
    finally:
        pixmap_room._RESERVED.clear()
        pixmap_room._RESERVED.update(saved)


def test_sweep_curves_fill_their_pixmaps_while_the_window_is_idle(qtbot, window):
    """common practice (work that can wait is done while idle, not in the next edit's frame):
    once the sweep's curves keep pixmaps, the plot is painted with no edit, so the pixmaps are
    filled then. Qt fills an item's pixmap at its next paint; without that idle paint the first
    paint of the next edit filled all of them (a dimmed plot ~7 ms instead of ~2 ms at 200
    modes)."""
    from PySide6.QtCore import QEvent, QObject

    panel = _swept_panel(qtbot, window)
    assert not panel.curves_cached

    class PaintLog(QObject):
        def __init__(self):
            super().__init__()
            self.cached_at_paint = []

        def eventFilter(self, obj, event):  # noqa: N802 (Qt's name)
            if event.type() == QEvent.Type.Paint:
                self.cached_at_paint.append(panel.curves_cached)
            return False

    log = PaintLog()
    panel.plot.viewport().installEventFilter(log)
    try:
        qtbot.waitUntil(lambda: panel.curves_cached)
        # nothing else changes from here on: a paint comes only from the pixmaps being filled
        qtbot.waitUntil(lambda: any(log.cached_at_paint), timeout=3000)
    finally:
        panel.plot.viewport().removeEventFilter(log)
    assert panel.curves_cached
