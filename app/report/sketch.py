"""The report's model sketch, with sway curves beside tall (stacked) layouts."""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QPen

from app.report.outline import OUTLINE_MASSES, Outline
from app.report.page import _Page
from app.drawing.sketch import SketchLayout
from app.drawing.sketch import paint_sketch


def _model_sketch(pg: _Page, model):
    d = pg.dpi
    if len(model.masses) > OUTLINE_MASSES:
        h = round(2.6 * d) if model.kind == "planar" else round(1.3 * d)
        Outline(model, QRectF(pg.left, pg.y, pg.right - pg.left, h)).paint(pg.p, pg.st)
        pg.y += h
        pg.paragraph(f"{len(model.masses):,} masses: drawn as an outline (masses as dots, anchors"
                     " as squares, springs and dashpots as lines); above"
                     f" {OUTLINE_MASSES} masses the symbols, labels and values would be smaller"
                     " than the page can show. The model file lists them.", 7.5, pg.st.ink_soft)
        return
    crowded = len(model.masses) > 10
    ys = [n.y for n in list(model.masses) + list(model.anchors)]
    flat = not ys or max(ys) - min(ys) < 1e-9   # everything on one row: a shallow band will do
    tall = _is_tall(model)   # a stack: give it height
    h = round(2.6 * d) if model.kind != "line" and not flat else \
        round(1.3 * d if crowded or flat else 1.7 * d)
    if tall:
        h = max(h, round(3.0 * d))
    rect = QRectF(pg.left, pg.y, pg.right - pg.left, h)
    paint_sketch(pg.p, model, rect, style=pg.st, labels=False if crowded else "values",
                 base=0.22 * d)
    pg.y += h
    if crowded:
        pg.paragraph(f"{len(model.masses)} masses: element labels and values are left off the"
                     " drawing to keep it legible; the model file lists them.", 7.5, pg.st.ink_soft)


def _is_tall(model) -> bool:
    """The nodes span more height than width (a stack of levels)."""
    nodes = list(model.masses) + list(model.anchors)
    if not nodes:
        return False
    xs, ys = [n.x for n in nodes], [n.y for n in nodes]
    return (max(ys) - min(ys)) > 1.5 * (max(xs) - min(xs))


def _sway_curve(pg: _Page, model, shape: dict, box: QRectF, lay: SketchLayout):
    """A stacked line model: displacement (sideways) of each mass at its drawn height."""
    st = pg.st
    # anchors are the still points the curve starts from (a base, a ceiling)
    pts = sorted([(lay.to_px(m.x, m.y).y(), shape.get(m.id, {}).get(model.axis, 0.0))
                  for m in model.masses] +
                 [(lay.to_px(a.x, a.y).y(), 0.0) for a in model.anchors], key=lambda t: -t[0])
    big = max((abs(u) for _h, u in pts), default=0.0) or 1.0
    mid = box.center().x()
    amp = 0.4 * box.width()
    pg.p.setPen(QPen(st.grid, 1.0))
    pg.p.drawLine(QPointF(mid, box.top() + 4), QPointF(mid, box.bottom() - 4))
    pg.p.setPen(QPen(st.accent, max(1.5, 0.008 * pg.dpi)))
    prev = None
    for h, u in pts:
        q = QPointF(mid + amp * u / big, h)
        if prev is not None:
            pg.p.drawLine(prev, q)
        prev = q
    r = max(1.5, 0.012 * pg.dpi) if len(pts) <= 20 else 0
    if r:
        pg.p.setBrush(st.accent)
        for h, u in pts:
            pg.p.drawEllipse(QPointF(mid + amp * u / big, h), r, r)
    pg.p.setBrush(Qt.BrushStyle.NoBrush)


def _shape_curve(pg: _Page, model, shape: dict, box: QRectF, base: float):
    """Displacement of each mass (along the axis) plotted against its drawn position."""
    st = pg.st
    lay = SketchLayout(model, box, base=base)
    axis = model.axis
    pts = []
    for m in model.masses:
        u = shape.get(m.id, {}).get(axis)
        if u is None:
            u = 0.0
        pts.append((lay.to_px(m.x, m.y).x(), u))   # a wide layout: positions run across
    pts.sort()
    big = max((abs(u) for _a, u in pts), default=0.0) or 1.0
    mid = box.center().y()
    amp = 0.4 * box.height()
    pg.p.setPen(QPen(st.grid, 1.0))
    pg.p.drawLine(QPointF(box.left() + 4, mid), QPointF(box.right() - 4, mid))
    pen = QPen(st.accent, max(1.5, 0.008 * pg.dpi))
    pg.p.setPen(pen)
    prev = None
    for a, u in pts:
        q = QPointF(a, mid - amp * u / big)
        if prev is not None:
            pg.p.drawLine(prev, q)
        prev = q
    pg.p.setBrush(st.accent)
    r = max(1.5, 0.012 * pg.dpi) if len(pts) <= 20 else 0
    if r:
        for a, u in pts:
            pg.p.drawEllipse(QPointF(a, mid - amp * u / big), r, r)
    pg.p.setBrush(Qt.BrushStyle.NoBrush)
