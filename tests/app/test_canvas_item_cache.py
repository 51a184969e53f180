"""The canvas items keep a pixmap of their drawing (``node_item.ITEM_CACHE``): what they show
after edits must be what they draw without one, and a mode played on the canvas turns the
pixmaps off and back on."""

import numpy as np
from PySide6.QtCore import QPoint, Qt
from PySide6.QtGui import QImage
from PySide6.QtWidgets import QGraphicsItem

from solver.model import Anchor, Mass, Model, Spring


def _pixels(widget) -> np.ndarray:
    image = widget.grab().toImage().convertToFormat(QImage.Format.Format_RGBA8888)
    raw = np.frombuffer(image.constBits(), np.uint8)
    return raw.reshape(image.height(), image.bytesPerLine() // 4, 4)[:, :image.width()].astype(int)


def _items(window):
    return list(window.scene.nodes.values()) + list(window.scene.links.values())


def _chain():
    masses = tuple(Mass(f"m{i}", 0.25 * (i + 1), 0.0, 1.0 + 0.5 * i) for i in range(5))
    springs = (Spring("s0", "g", "m0", 1000.0),) + tuple(
        Spring(f"s{i}", f"m{i - 1}", f"m{i}", 1000.0 + 100 * i) for i in range(1, 5))
    return Model(kind="line", name="cache", masses=masses, anchors=(Anchor("g", 0.0, 0.0),),
                 springs=springs)


def test_cached_items_show_what_they_draw_after_edits(qtbot, window):
    """common practice (a cache is invisible): after a mass grows, a spring is selected, a mass
    is dragged with the mouse and the energy tint goes on, the canvas drawn from the items'
    pixmaps matches the canvas drawn by the items themselves (no cache) on every pixel, to
    within the rounding of anti-aliased edges (a few colour levels; a stale drawing differs by
    tens of levels over hundreds of pixels)."""
    from app.canvas.node_item import ITEM_CACHE

    window.document.new(model=_chain())
    window.solver.wait()
    view = window.view
    assert all(item.cacheMode() == ITEM_CACHE for item in _items(window))
    qtbot.wait(50)
    before = _pixels(view.viewport())         # every item's pixmap made
    window.document.set_element("m2", mass=9.0)
    window.scene.select_ids(["s3"])
    m4 = window.scene.nodes["m4"]
    start = view.mapFromScene(m4.scenePos())
    qtbot.mousePress(view.viewport(), Qt.LeftButton, pos=start)
    qtbot.mouseMove(view.viewport(), start + QPoint(30, 40))
    qtbot.mouseRelease(view.viewport(), Qt.LeftButton, pos=start + QPoint(30, 40))
    assert window.document.model.element("m4").y != 0.0
    qtbot.waitUntil(lambda: not window.solver.pending, timeout=3000)
    _same_as_drawn(qtbot, window, before)
    # the energy tint over the drawing as it is: every spring and mass changes colour
    tinted = _pixels(view.viewport())
    window.act_energy.trigger()
    assert window.energy_tint.enabled
    _same_as_drawn(qtbot, window, tinted)


def _same_as_drawn(qtbot, window, earlier):
    """The canvas from the items' pixmaps equals the canvas the items draw with none (to the
    rounding of anti-aliased edges), and differs from ``earlier`` (the check compares
    something); the pixmaps are then made again."""
    from app.canvas.node_item import ITEM_CACHE

    qtbot.wait(30)
    cached = _pixels(window.view.viewport())
    for item in _items(window):
        item.setCacheMode(QGraphicsItem.CacheMode.NoCache)
    direct = _pixels(window.view.viewport())
    assert (np.abs(cached - direct).max(axis=2) > 16).sum() == 0
    assert (np.abs(direct - earlier).max(axis=2) > 60).sum() > 200
    for item in _items(window):
        item.setCacheMode(ITEM_CACHE)
    _pixels(window.view.viewport())


def test_a_mode_played_on_the_canvas_draws_without_pixmaps(qtbot, window):
    """Every item changes every frame of a mode played on the canvas: the pixmaps are turned
    off while it plays (drawing into them and then out cost more than drawing) and on again
    when it stops."""
    from app.canvas.node_item import ITEM_CACHE

    window.document.new(model=_chain())
    window.solver.wait()
    panel = window.motion_panel
    panel.set_on_canvas(True)
    qtbot.waitUntil(lambda: window.canvas_motion.active, timeout=3000)
    assert all(item.cacheMode() == QGraphicsItem.CacheMode.NoCache for item in _items(window))
    panel.set_on_canvas(False)
    qtbot.waitUntil(lambda: not window.canvas_motion.active, timeout=3000)
    assert all(item.cacheMode() == ITEM_CACHE for item in _items(window))


def test_an_unchanged_canvas_repaints_from_the_pixmaps(qtbot, window, monkeypatch):
    """common practice (what the cache is for): on a large window with a 200-mass chain,
    repainting a canvas where nothing changed draws no item again: every item's pixmap is
    kept (Qt's pixmap room of 10 MB was too small and threw them out on every repaint)."""
    from app.canvas.mass_item import MassItem
    from app.canvas.spring_item import SpringItem

    drawn = []
    for cls in (MassItem, SpringItem):
        real = cls.paint
        monkeypatch.setattr(cls, "paint", lambda self, *a, _real=real: drawn.append(self)
                            or _real(self, *a))
    masses = tuple(Mass(f"m{i}", 0.05 * (i + 1), 0.02 * (i % 7), 1.0 + 0.01 * i)
                   for i in range(200))
    springs = (Spring("s0", "g", "m0", 1000.0),) + tuple(
        Spring(f"s{i}", f"m{i - 1}", f"m{i}", 1000.0) for i in range(1, 200))
    window.resize(1900, 1200)
    window.document.new(model=Model(kind="line", name="many", masses=masses,
                                    anchors=(Anchor("g", 0.0, 0.0),), springs=springs))
    window.solver.wait()
    window.view.fitInView(window.scene.itemsBoundingRect())
    view = window.view.viewport()
    view.repaint()
    assert len(drawn) > 300                 # the first paint draws the items
    drawn.clear()
    view.repaint()
    assert drawn == []


def test_kept_bounding_rects_follow_the_drawing(qtbot, window):
    """The items keep their bounding rectangles (Qt asks for them on every paint): after a mass
    grows and a mass is dragged with the mouse, each item's rectangle is the one its current
    symbol gives (its path's bounds with the item's margins), and a grown mass's rectangle grew."""
    from PySide6.QtCore import QRectF

    window.document.new(model=_chain())
    window.solver.wait()
    scene, view = window.scene, window.view
    before = QRectF(scene.nodes["m2"].boundingRect())
    window.document.set_element("m2", mass=9.0)
    m4 = scene.nodes["m4"]
    start = view.mapFromScene(m4.scenePos())
    qtbot.mousePress(view.viewport(), Qt.LeftButton, pos=start)
    qtbot.mouseMove(view.viewport(), start + QPoint(30, 40))
    qtbot.mouseRelease(view.viewport(), Qt.LeftButton, pos=start + QPoint(30, 40))
    qtbot.waitUntil(lambda: not window.solver.pending, timeout=3000)
    after = scene.nodes["m2"].boundingRect()
    assert after.width() > before.width() and after.height() > before.height()
    for item in scene.nodes.values():
        if hasattr(item, "elastic_centre"):
            assert item.boundingRect() == item._path.boundingRect().adjusted(-12, -4, 4, 14)
    for link in scene.links.values():
        assert link.boundingRect() == link._path.boundingRect().adjusted(-8, -8, 8, 8)
    assert scene.links["s4"].boundingRect() != QRectF()
