"""The report's mode-shape thumbnails over the undeformed layout in grey."""

from __future__ import annotations

from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPen

from app.report.page import _Page
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
        shape = modal.node_displacement(n)
        inner = box.adjusted(4, 4, -4, -4)
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
        paint_sketch(pg.p, model, inner, shape, scale, st, undeformed=True, labels=False,
                     layout=lay)
        f = float(modal.frequencies_hz[i])
        z = modal.zero_mode(n)
        title = f"Mode {n}: " + (f"0 Hz ({z.kind})" if z is not None else hz(f))
        if modal.repeated_group(n):
            title += ", repeated"
        eff = "  ".join(f"{dd} {percent(pct[dd][i])} %" for dd in dirs)
        pg.text(QRectF(x, y + th + 0.02 * d, tw, cap_h), title, cap_pt, True,
                st.warning if z is not None else st.ink)
        pg.text(QRectF(x, y + th + 0.02 * d + cap_h / 3.3, tw, cap_h), "eff. mass " + eff,
                cap_pt, False, st.ink_soft)
        dominant = analysis.energy.dominant_spring(n)
        if dominant is not None:
            share = analysis.energy.strain[i, analysis.energy.spring_ids.index(dominant)]
            pg.text(QRectF(x, y + th + 0.02 * d + 2 * cap_h / 3.3, tw, cap_h / 3.3),
                    QFontMetricsF(pg.font(cap_pt)).elidedText(
                        f"most strain ({percent(100 * share, 0)} %):"
                        f" {names(model).get(dominant, dominant)}",
                        Qt.TextElideMode.ElideRight, tw),
                    cap_pt, False, st.ink_soft, Qt.AlignmentFlag.AlignLeft)
    pg.y = y + th + cap_h + 0.05 * d
    pg.paragraph("Each thumbnail shows the mode shape (magnified to be visible; its size is"
                 " arbitrary) over the undeformed layout in grey.", 7.5, st.ink_soft)
    if n_total > n_shown:
        pg.paragraph(f"{n_total - n_shown} further modes are left out of the thumbnails.", 7.5,
                     st.ink_soft)
