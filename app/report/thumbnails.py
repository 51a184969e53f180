"""The report's mode-shape thumbnails over the undeformed layout in grey."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPen, QPolygonF

from app.report.outline import OUTLINE_MASSES, AxisCurve, Outline
from app.report.page import _Page
from app.report.response import plot_lines
from app.drawing.sketch import SketchLayout
from app.drawing.sketch import fit_scale
from app.drawing.sketch import paint_sketch
from app.report.sketch import _is_tall
from app.report.sketch import _sway_curve
from app.report.sketch import _shape_curve
from app.results.names import names
from app.text.numbers import hz, percent


def _thumbnails(pg: _Page, model, analysis, n_shown: int, n_total: int):
    st = pg.st
    d = pg.dpi
    modal = analysis.modal
    cols = 4 if n_shown <= 8 else 6
    gap = 0.1 * d
    tw = (pg.right - pg.left - (cols - 1) * gap) / cols
    th = tw * (0.62 if cols == 4 else 0.72)
    cap_pt = 7.5 if cols == 4 else 6.5
    cap_h = 3.3 * QFontMetricsF(pg.font(cap_pt)).lineSpacing()  # title, eff. mass, spring
    base = 0.13 * d if cols == 4 else 0.10 * d
    dirs = list(modal.effective_mass)
    pct = modal.effective_mass_percent
    y = pg.y
    big = len(model.masses) > OUTLINE_MASSES
    shown = names(model)
    outlines = {}   # one layout per drawing box size, moved to each thumbnail
    for i in range(n_shown):
        n = i + 1
        col = i % cols
        if col == 0 and i:
            y += th + cap_h + gap
        x = pg.left + col * (tw + gap)
        box = QRectF(x, y, tw, th)
        pg.p.setPen(QPen(st.grid, max(1.0, 0.004 * d)))
        pg.p.setBrush(QColor("#ffffff"))
        pg.p.drawRect(box)
        pg.p.setBrush(Qt.BrushStyle.NoBrush)
        inner = box.adjusted(4, 4, -4, -4)
        if big:
            _outline_thumbnail(pg, model, modal, i, inner, outlines)
        else:
            _sketch_thumbnail(pg, model, modal, n, inner, base)
        f = float(modal.frequencies_hz[i])
        z = modal.zero_mode(n)
        title = f"Mode {n}: " + (f"0 Hz ({z.kind})" if z is not None else hz(f))
        if modal.repeated_group(n):
            title += ", repeated"
        eff = "  ".join(f"{'θ' if dd == 'theta' else dd} {percent(pct[dd][i])} %"
                        for dd in dirs)
        fm = QFontMetricsF(pg.font(cap_pt))
        eff = "eff. mass " + eff
        if fm.horizontalAdvance(eff) > tw:   # three directions (a body's turn): one line
            eff = fm.elidedText(eff.replace("eff. mass ", "eff. ").replace(" %", "%"),
                                Qt.TextElideMode.ElideRight, tw)
        pg.text(QRectF(x, y + th + 0.02 * d, tw, cap_h), title, cap_pt, True,
                st.warning if z is not None else st.ink)
        pg.text(QRectF(x, y + th + 0.02 * d + cap_h / 3.3, tw, cap_h / 3.3), eff,
                cap_pt, False, st.ink_soft, Qt.AlignmentFlag.AlignLeft)
        dominant = analysis.energy.dominant_spring(n)
        if dominant is not None:
            share = analysis.energy.strain[i, analysis.energy.spring_ids.index(dominant)]
            pg.text(QRectF(x, y + th + 0.02 * d + 2 * cap_h / 3.3, tw, cap_h / 3.3),
                    QFontMetricsF(pg.font(cap_pt)).elidedText(
                        f"most strain ({percent(100 * share, 0)} %):"
                        f" {shown.get(dominant, dominant)}",
                        Qt.TextElideMode.ElideRight, tw),
                    cap_pt, False, st.ink_soft, Qt.AlignmentFlag.AlignLeft)
    pg.y = y + th + cap_h + 0.05 * d
    if big:
        pg.paragraph(f"{len(model.masses):,} masses: each thumbnail is an outline"
                     + (" with the mode-shape curve (motion of each mass against its position)"
                        if model.kind != "planar" else "") + ".", 7.5, st.ink_soft)
    pg.paragraph("Each thumbnail shows the mode shape (magnified to be visible; its size is"
                 " arbitrary) over the undeformed layout in grey.", 7.5, st.ink_soft)
    if n_total > n_shown:
        pg.paragraph(f"{n_total - n_shown} further modes are left out of the thumbnails.", 7.5,
                     st.ink_soft)


def _sketch_thumbnail(pg: _Page, model, modal, n: int, inner: QRectF, base: float) -> None:
    """Mode ``n`` drawn with the model's symbols over the undeformed layout in grey."""
    shape = modal.node_displacement(n)
    if model.kind == "line" and len(model.masses) > 1 and _is_tall(model):
        # A stack (a rack, a tower): the drawing on the left, each mass's displacement
        # along the axis plotted sideways at its own height (the sway curve).
        sketch_box = QRectF(inner.left(), inner.top(), inner.width() * 0.45, inner.height())
        curve_box = QRectF(sketch_box.right(), inner.top(), inner.width() - sketch_box.width(),
                           inner.height())
        inner = sketch_box
        lay = SketchLayout(model, inner, base=base)
        _sway_curve(pg, model, shape, curve_box, lay)
    elif model.kind == "line" and len(model.masses) > 1:
        # Motion along the line is hard to see on a long chain: plot each mass's
        # displacement across the line above the drawing, the textbook mode-shape curve.
        curve_box = QRectF(inner.left(), inner.top(), inner.width(), inner.height() * 0.55)
        inner = QRectF(inner.left(), curve_box.bottom(), inner.width(),
                       inner.height() - curve_box.height())
        _shape_curve(pg, model, shape, curve_box, base)
        lay = SketchLayout(model, inner, base=base)
    else:
        lay = SketchLayout(model, inner, base=base)
    scale = fit_scale(lay, shape, 0.12)
    paint_sketch(pg.p, model, inner, shape, scale, pg.st, undeformed=True, labels=False,
                 layout=lay)


def _outline_thumbnail(pg: _Page, model, modal, i: int, inner: QRectF, cache: dict) -> None:
    """A large model's mode ``i + 1``: on a line or a shaft the mode-shape curve over the
    outline; in a plane the outline moved by the mode over the outline in grey. ``cache``
    keeps the layouts for the next thumbnail."""
    st = pg.st

    def outline(rect: QRectF, pad: float = 6.0) -> Outline:
        key = (round(rect.width(), 3), round(rect.height(), 3))
        if key not in cache:
            cache[key] = Outline(model, rect, pad)
        return cache[key].moved_to(rect)

    if model.kind == "planar":
        drawn = outline(inner, pad=0.12 * min(inner.width(), inner.height()))
        motion = drawn.motion(modal, i)
        drawn.paint(pg.p, st, grey=True)
        drawn.paint(pg.p, st, motion, drawn.fit(motion))
        return
    curve = QRectF(inner.left(), inner.top(), inner.width(), inner.height() * 0.6)
    outline(QRectF(inner.left(), curve.bottom(), inner.width(),
                   inner.height() - curve.height())).paint(pg.p, st, grey=True)
    if "curve" not in cache:
        cache["curve"] = AxisCurve(model, modal)
    pos, u = cache["curve"].position, cache["curve"].motion(i)
    span = float(pos[-1] - pos[0]) if len(pos) > 1 else 0.0
    big = float(np.max(np.abs(u))) if len(u) else 0.0
    x = curve.left() + 4 + ((pos - pos[0]) / span if span else np.full(len(pos), 0.5)) * (
        curve.width() - 8)
    y = curve.center().y() - (u / big if big else u) * 0.4 * curve.height()
    pg.p.setPen(QPen(st.grid, 1.0))
    pg.p.drawLine(QPointF(curve.left() + 4, curve.center().y()),
                  QPointF(curve.right() - 4, curve.center().y()))
    pg.p.setPen(QPen(st.accent, max(1.5, 0.008 * pg.dpi)))
    for line in plot_lines(x, y, curve.left(), curve.right(), curve.top(), curve.bottom()):
        pg.p.drawPolyline(QPolygonF([QPointF(a, b) for a, b in line.tolist()]))
