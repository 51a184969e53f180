"""The review report: one PNG page at print resolution, drawn with no window and no dialog.

:func:`render_report` paints onto a QImage (works with ``QT_QPA_PLATFORM=offscreen``): a title
block, the model sketch, the mode table, a thumbnail of each reported mode shape over the
undeformed layout in grey, the notes on zero-frequency and repeated modes, the solver's warnings and
the cautions. The page is A4 portrait (210 x 297 mm); a model with very long notes makes it taller
rather than cramming the text.
"""

from __future__ import annotations

import datetime as _dt
import os

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFont, QFontMetricsF, QGuiApplication, QImage, QPainter, QPen

from .modes_table import mode_table_cells, mode_table_header, mode_table_rows
from .sketch import SketchLayout, fit_scale, paint_sketch
from .style import LIGHT

#: Modes given a thumbnail (and a row in the table); the rest are counted, not drawn.
MAX_REPORTED_MODES = 12
A4_MM = (210.0, 297.0)

CAUTIONS = (
    "A lumped spring-mass model is an approximation of the real assembly. Natural frequencies and "
    "mode shapes from it are estimates: confirm them by test or by detailed analysis before relying "
    "on them.",
    "Stiffness and mass values, boundary conditions and the choice of what to lump decide the "
    "result; check them against drawings, data sheets and measurements.",
    "Where equipment can hurt people if it fails, local codes, standards and licensed engineering "
    "practice govern. This report does not replace them.",
)

_app_ref = None  # keeps a QGuiApplication we had to create alive


def _ensure_app():
    global _app_ref
    if QGuiApplication.instance() is None:
        if not os.environ.get("DISPLAY") and not os.environ.get("WAYLAND_DISPLAY"):
            os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
        _app_ref = QGuiApplication([])


def _kind_text(model) -> str:
    if model.kind == "line":
        return f"line model, motion along {model.axis}"
    if model.kind == "planar":
        return "planar model, motion in x and y"
    return "torsion model, rotation of discs on a shaft"


def _units_text(model) -> str:
    if model.kind == "torsion":
        return "SI: kg m², N m/rad, N m s/rad, rad, s, Hz"
    return "SI: kg, m, N/m, N s/m, s, Hz"


class _Page:
    """Text and box helpers over a painter, sizes in device pixels for a given dpi."""

    def __init__(self, painter: QPainter, dpi: float, width: float):
        self.p = painter
        self.dpi = dpi
        self.px = dpi / 72.0          # pixels per typographic point
        self.width = width
        self.margin = round(0.5 * dpi)
        self.left = self.margin
        self.right = width - self.margin
        self.y = self.margin
        self.st = LIGHT

    def font(self, pt: float, bold=False, family="DejaVu Sans") -> QFont:
        f = QFont(family)
        f.setPixelSize(max(6, round(pt * self.px)))
        f.setBold(bold)
        return f

    def text(self, rect: QRectF, s: str, pt=9.0, bold=False, color=None,
             flags=Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop) -> float:
        """Draw wrapped text in rect; returns the height used."""
        f = self.font(pt, bold)
        self.p.setFont(f)
        self.p.setPen(QPen(color or self.st.ink))
        fl = int(flags) | int(Qt.TextFlag.TextWordWrap)
        br = QFontMetricsF(f).boundingRect(rect, fl, s)
        self.p.drawText(rect, fl, s)
        return br.height()

    def text_height(self, width: float, s: str, pt=9.0, bold=False) -> float:
        f = self.font(pt, bold)
        return QFontMetricsF(f).boundingRect(QRectF(0, 0, width, 1e6),
                                             int(Qt.TextFlag.TextWordWrap), s).height()

    def heading(self, s: str):
        self.y += round(0.10 * self.dpi)
        h = self.text(QRectF(self.left, self.y, self.right - self.left, 100), s, 12, True,
                      self.st.ink)
        self.y += h + round(0.02 * self.dpi)
        self.p.setPen(QPen(self.st.accent, max(1.0, 0.008 * self.dpi)))
        self.p.drawLine(QPointF(self.left, self.y), QPointF(self.right, self.y))
        self.y += round(0.07 * self.dpi)

    def paragraph(self, s: str, pt=9.0, color=None, indent=0.0, bold=False):
        w = self.right - self.left - indent
        h = self.text(QRectF(self.left + indent, self.y, w, 1e5), s, pt, bold, color)
        self.y += h + round(0.03 * self.dpi)


def render_report(model, analysis, path, dpi: int = 200, date: str | None = None,
                  max_modes: int = MAX_REPORTED_MODES, response=None) -> dict:
    """Write the report of ``model`` (with its ``analysis``; computed when None) to a PNG.

    Returns ``{"path", "width", "height", "dpi", "modes_shown", "modes_total",
    "modes_left_out"}`` (pixel sizes).

    ``response`` (app.response_data.ResponseCurves, e.g. the Response panel's curves) adds a
    forced-response section; without one, a model with dashpots or damping gets the base
    transmissibility of its masses (``default_report_response``).
    """
    _ensure_app()
    if analysis is None:
        from solver import analyse
        analysis = analyse(model)
    modal = analysis.modal
    st = LIGHT
    width = round(A4_MM[0] / 25.4 * dpi)
    a4_height = round(A4_MM[1] / 25.4 * dpi)
    canvas = QImage(width, int(a4_height * 2.5), QImage.Format.Format_RGB32)
    canvas.fill(QColor("#ffffff"))
    dpm = round(dpi / 0.0254)
    canvas.setDotsPerMeterX(dpm)
    canvas.setDotsPerMeterY(dpm)
    n_total = modal.n_modes
    n_shown = min(n_total, max_modes)
    date = date or _dt.date.today().isoformat()

    painter = QPainter(canvas)
    try:
        painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
        painter.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
        pg = _Page(painter, dpi, width)
        _title_block(pg, model, modal, date)
        pg.heading("Model")
        _model_sketch(pg, model)
        pg.heading("Natural frequencies and effective modal mass")
        _mode_table(pg, analysis, n_shown, n_total)
        if n_shown:
            pg.heading("Mode shapes")
            _thumbnails(pg, model, analysis, n_shown, n_total)
        if response is None:
            from .response_data import default_report_response

            response = default_report_response(model, modal)
        if response is not None and response.curves:
            from .report_response import draw_response_section

            pg.heading("Forced response")
            draw_response_section(pg, response)
        if model.excitations:
            from .report_margins import paint_margin_check

            pg.heading("Frequency margin check")
            paint_margin_check(pg, model, analysis)
        pg.heading("Notes")
        _notes(pg, model, analysis, n_shown)
        pg.heading("Cautions")
        _cautions(pg)
        end = pg.y + round(0.12 * dpi)
        footer = (f"Springwright report · {model.name or 'unnamed model'} · {date} · "
                  "results of a lumped model; see Cautions")
        height = max(a4_height, int(end + pg.margin * 0.8))
        pg.text(QRectF(pg.left, height - pg.margin * 0.6, pg.right - pg.left, pg.margin * 0.5),
                footer, 7, False, st.ink_soft, Qt.AlignmentFlag.AlignLeft)
    finally:
        painter.end()
    page = canvas.copy(0, 0, width, height)
    page.setDotsPerMeterX(dpm)
    page.setDotsPerMeterY(dpm)
    if not page.save(str(path), "PNG"):
        raise OSError(f"could not write the report to {path}")
    return {"path": str(path), "width": page.width(), "height": page.height(), "dpi": dpi,
            "modes_shown": n_shown, "modes_total": n_total, "modes_left_out": n_total - n_shown}


def _title_block(pg: _Page, model, modal, date: str):
    st = pg.st
    d = pg.dpi
    top = pg.y
    pad = round(0.12 * d)
    full = QRectF(pg.left, top, pg.right - pg.left, 10)
    right_x = full.left() + full.width() * 0.58
    key_w = 0.95 * d
    val_w = full.right() - right_x - key_w - pad
    total = model.total_mass
    unit = "kg m²" if model.kind == "torsion" else "kg"
    lines = [("Date", date), ("Kind", _kind_text(model)), ("Units", _units_text(model)),
             ("Total " + ("inertia" if model.kind == "torsion" else "mass"), f"{total:.6g} {unit}"),
             ("Modes found", f"{modal.n_modes}" + ("" if modal.complete else " (lowest only)"))]
    heights = [max(pg.text_height(val_w, v, 8), 0.15 * d) + 0.02 * d for _k, v in lines]
    left_w = right_x - full.left() - 2 * pad
    name_h = pg.text_height(left_w, model.name or "Unnamed model", 18, True)
    left_h = 0.26 * d + name_h + 0.25 * d
    box_h = max(1.0 * d, sum(heights) + 2 * pad, left_h + 2 * pad)
    box = QRectF(full.left(), top, full.width(), box_h)
    pg.p.setPen(QPen(st.ink, max(1.0, 0.01 * d)))
    pg.p.setBrush(st.panel)
    pg.p.drawRect(box)
    pg.p.setBrush(Qt.BrushStyle.NoBrush)
    pg.text(QRectF(box.left() + pad, top + pad, left_w, 100),
            "SPRINGWRIGHT · LUMPED MODEL REPORT", 8, True, st.accent)
    h = pg.text(QRectF(box.left() + pad, top + pad + 0.22 * d, left_w, 0.9 * d),
                model.name or "Unnamed model", 18, True, st.ink)
    from .units import count

    torsion = model.kind == "torsion"
    n_el = ", ".join((count(len(model.masses), "disc" if torsion else "mass",
                            "discs" if torsion else "masses"),
                      count(len(model.springs), "spring"), count(len(model.dampers), "dashpot"),
                      count(len(model.anchors), "anchor")))
    pg.text(QRectF(box.left() + pad, top + pad + 0.26 * d + h, left_w, 0.3 * d),
            n_el, 9, False, st.ink_soft)
    y = top + pad
    for (k, v), hh in zip(lines, heights):
        pg.text(QRectF(right_x, y, key_w, 0.2 * d), k, 8, True, st.ink_soft)
        pg.text(QRectF(right_x + key_w, y, val_w, hh), v, 8, False, st.ink)
        y += hh
    pg.y = box.bottom()


def _model_sketch(pg: _Page, model):
    d = pg.dpi
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


def _mode_table(pg: _Page, analysis, n_shown: int, n_total: int):
    st = pg.st
    d = pg.dpi
    if n_total == 0:
        pg.paragraph(analysis.modal.message or "The model has no modes.", 9, st.warning)
        return
    header = mode_table_header(analysis)
    rows = mode_table_rows(analysis)[:n_shown]
    cells = mode_table_cells(analysis, rows)
    pt = 8.0
    f = pg.font(pt)
    fb = pg.font(pt, True)
    fm, fmb = QFontMetricsF(f), QFontMetricsF(fb)
    pad = 0.05 * d
    total_w = pg.right - pg.left
    n_cols = len(header)
    # numeric columns as wide as their widest cell (header may wrap over two lines)
    widths = []
    for c in range(n_cols - 1):
        w_cells = max([fm.horizontalAdvance(r[c]) for r in cells] + [0])
        w = max(w_cells, max(fmb.horizontalAdvance(word) for word in header[c].split()), 0.5 * d)
        # wide enough for the heading to fit on two lines
        while pg.text_height(w, header[c], pt, True) > 2.2 * fmb.lineSpacing():
            w += 0.02 * d
        widths.append(w + 2 * pad)
    widths.append(max(0.8 * d, total_w - sum(widths)))
    scale = min(1.0, total_w / sum(widths))
    widths = [w * scale for w in widths]
    head_h = 2 * fmb.lineSpacing() + 2 * pad
    row_h = fm.lineSpacing() + 1.2 * pad
    x0, y = pg.left, pg.y
    pg.p.fillRect(QRectF(x0, y, total_w, head_h), st.panel)
    x = x0
    for c, title in enumerate(header):
        align = Qt.AlignmentFlag.AlignLeft if c == n_cols - 1 else Qt.AlignmentFlag.AlignRight
        pg.text(QRectF(x + pad, y + pad, widths[c] - 2 * pad, head_h - 2 * pad), title, pt, True,
                st.ink, align | Qt.AlignmentFlag.AlignBottom)
        x += widths[c]
    y += head_h
    pg.p.setPen(QPen(st.ink, max(1.0, 0.006 * d)))
    pg.p.drawLine(QPointF(x0, y), QPointF(x0 + total_w, y))
    for i, (r, row) in enumerate(zip(cells, rows)):
        if i % 2 == 1:
            pg.p.fillRect(QRectF(x0, y, total_w, row_h), QColor("#f4f3ef"))
        x = x0
        for c, s in enumerate(r):
            align = Qt.AlignmentFlag.AlignLeft if c == n_cols - 1 else Qt.AlignmentFlag.AlignRight
            color = st.warning if (c == n_cols - 1 and s) else st.ink
            pg.p.setFont(f)
            pg.p.setPen(QPen(color))
            pg.p.drawText(QRectF(x + pad, y, widths[c] - 2 * pad, row_h),
                          int(align | Qt.AlignmentFlag.AlignVCenter), s)
            x += widths[c]
        y += row_h
    pg.p.setPen(QPen(st.ink_soft, max(1.0, 0.004 * d)))
    pg.p.drawLine(QPointF(x0, y), QPointF(x0 + total_w, y))
    pg.y = y + 0.04 * d
    if n_total > n_shown:
        hi = float(analysis.modal.frequencies_hz[-1])
        pg.paragraph(f"{n_total - n_shown} higher modes are not shown (up to {hi:.5g} Hz); the"
                     " CSV export lists every mode.", 8, st.ink_soft)
    dirs = [k for k in analysis.modal.effective_mass]
    if dirs:
        cum = analysis.modal.cumulative_percent
        parts = [f"{d}: {cum[d][n_shown - 1]:.1f} %" for d in dirs if len(cum[d])]
        pg.paragraph("Effective modal mass of the modes shown, cumulative: " + ", ".join(parts)
                     + ". Effective mass is the share of the mass free to move in a direction that"
                     " takes part in each mode.", 8, st.ink_soft)


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
        title = f"Mode {n}: " + (f"0 Hz ({z.kind})" if z is not None else f"{f:.5g} Hz")
        if modal.repeated_group(n):
            title += ", repeated"
        eff = "  ".join(f"{dd} {pct[dd][i]:.1f} %" for dd in dirs)
        pg.text(QRectF(x, y + th + 0.02 * d, tw, cap_h), title, cap_pt, True,
                st.warning if z is not None else st.ink)
        pg.text(QRectF(x, y + th + 0.02 * d + cap_h / 3.3, tw, cap_h), "eff. mass " + eff,
                cap_pt, False, st.ink_soft)
        dominant = analysis.energy.dominant_spring(n)
        if dominant is not None:
            share = analysis.energy.strain[i, analysis.energy.spring_ids.index(dominant)]
            pg.text(QRectF(x, y + th + 0.02 * d + 2 * cap_h / 3.3, tw, cap_h / 3.3),
                    QFontMetricsF(pg.font(cap_pt)).elidedText(
                        f"most strain ({100 * share:.0f} %): {model.element(dominant).label}",
                        Qt.TextElideMode.ElideRight, tw),
                    cap_pt, False, st.ink_soft, Qt.AlignmentFlag.AlignLeft)
    pg.y = y + th + cap_h + 0.05 * d
    pg.paragraph("Each thumbnail shows the mode shape (magnified to be visible; its size is"
                 " arbitrary) over the undeformed layout in grey.", 7.5, st.ink_soft)
    if n_total > n_shown:
        pg.paragraph(f"{n_total - n_shown} further modes are left out of the thumbnails.", 7.5,
                     st.ink_soft)


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


def _notes(pg: _Page, model, analysis, n_shown: int):
    st = pg.st
    modal = analysis.modal
    items = []
    for z in modal.zero_modes:
        items.append((st.warning, f"Mode {z.mode} has zero frequency ({z.kind}): {z.cause}"))
    for g in modal.repeated:
        items.append((st.ink, "Modes " + ", ".join(map(str, g)) + " share one frequency"
                      f" ({float(modal.frequencies_hz[g[0] - 1]):.5g} Hz): their shapes are one"
                      " choice of basis among many; only their combined effective mass is"
                      " meaningful."))
    for r in mode_table_rows(analysis):
        if r["near_excitation"]:
            items.append((st.warning, f"Mode {r['mode']} ({r['frequency_hz']:.5g} Hz) lies within"
                          f" {model.margin_percent:g} % of " + "; ".join(r["near_excitation"])))
    if model.excitations:
        ex = []
        for e in model.excitations:
            if e.type == "speed":
                ex.append(f"{e.label}: {e.rpm:g} rpm, orders " + ", ".join(f"{o:g}" for o in e.orders))
            else:
                ex.append(f"{e.label}: band {e.f_min_hz:g} to {e.f_max_hz:g} Hz")
        items.append((st.ink, "Excitation sources checked (margin "
                      f"{model.margin_percent:g} %): " + "; ".join(ex) + "."))
    warnings = list(getattr(analysis, "warnings", ()) or ())
    for w in warnings:
        items.append((st.warning, "Solver: " + str(w)))
    if model.damping.model != "none" or model.dampers:
        items.append((st.ink_soft, "Natural frequencies and shapes are those of the undamped"
                      " model; damping affects the responses, not this table."))
    if not items:
        items.append((st.ink_soft, "No zero-frequency or repeated modes, and no solver warnings."))
    indent = 0.18 * pg.dpi
    for color, s in items:
        pg.p.setPen(QPen(color))
        pg.p.setBrush(color)
        r = 0.025 * pg.dpi
        cy = pg.y + 0.5 * QFontMetricsF(pg.font(8.5)).lineSpacing()
        pg.p.drawEllipse(QPointF(pg.left + 0.07 * pg.dpi, cy), r, r)
        pg.p.setBrush(Qt.BrushStyle.NoBrush)
        pg.paragraph(s, 8.5, st.ink if color == st.warning else color, indent)


def _cautions(pg: _Page):
    st = pg.st
    d = pg.dpi
    text = "\n".join(CAUTIONS)
    w = pg.right - pg.left - 0.35 * d
    h = pg.text_height(w, text, 8.5) + 0.22 * d
    box = QRectF(pg.left, pg.y, pg.right - pg.left, h)
    pg.p.fillRect(box, QColor("#fbf3e6"))
    pg.p.fillRect(QRectF(box.left(), box.top(), 0.05 * d, h), st.warning)
    pg.text(box.adjusted(0.2 * d, 0.1 * d, -0.15 * d, -0.1 * d), text, 8.5, False, st.ink)
    pg.y = box.bottom() + 0.05 * d


__all__ = ["render_report", "CAUTIONS", "MAX_REPORTED_MODES"]
