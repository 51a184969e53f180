"""The review report: one PNG page at print resolution, drawn with no window and no dialog.

:func:`render_report` paints onto a QImage (works with ``QT_QPA_PLATFORM=offscreen``): a title
block, the model sketch, the mode table, a thumbnail of each reported mode shape over the
undeformed layout in grey, the notes on zero-frequency and repeated modes, the solver's warnings and
the cautions; with rigid bodies or gear stages, how each body's motions couple on its mounts and
the geared system referred to one shaft; with excitation sources the margin check and its table, and with a shaft speed the
interference diagram; with loads defined, the responses to them (app.report.loads). The page is A4 portrait (210 x 297 mm); a model with very long notes makes it
taller rather than cramming the text. Each section is a module of this package.
"""

from __future__ import annotations

import datetime as _dt

from PySide6.QtCore import QBuffer, QIODevice, QRectF, Qt
from PySide6.QtGui import QColor, QImage, QPainter

from app.drawing.style import LIGHT
from app.report.mode_table import _mode_table
from app.report.notes import _cautions, _notes
from app.report.page import A4_MM, MAX_REPORTED_MODES, _ensure_app, _Page
from app.report.sketch import _model_sketch
from app.report.thumbnails import _thumbnails
from app.report.title import _title_block


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
    loads = getattr(model, "loads", None)
    has_loads = loads is not None and not loads.empty
    # a loads section adds up to about two pages (plots and tables per load)
    canvas = QImage(width, int(a4_height * (4.5 if has_loads else 2.5)),
                    QImage.Format.Format_RGB32)
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
        from app.report.bodies import paint_bodies, section_title

        title = section_title(model)
        if title:
            pg.heading(title)
            paint_bodies(pg, model)
        if response is None:
            from app.results.response_data import default_report_response

            response = default_report_response(model, modal)
        if response is not None and response.curves:
            from app.report.response import draw_response_section

            pg.heading("Forced response")
            draw_response_section(pg, response)
        if model.excitations:
            from app.report.margins import paint_margin_check

            pg.heading("Frequency margin check")
            paint_margin_check(pg, model, analysis)
            from app.report.margin_table import paint_margin_table

            paint_margin_table(pg, model, analysis, max_modes)
        if any(e.type == "speed" for e in model.excitations):
            from app.report.interference import paint_interference

            pg.heading("Interference diagram")
            paint_interference(pg, model, analysis)
        if has_loads:
            from app.report.loads import paint_loads

            pg.heading("Loads: random vibration, shock and design spectrum")
            paint_loads(pg, model)
        from app.report.study import has_tolerances, paint_study

        if has_tolerances(model):
            pg.heading("Tolerance study")
            paint_study(pg, model)
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
    # encoded here and written by Python: Qt would turn a file name that is not UTF-8 into
    # another name (U+FFFD for each odd byte) and its failure gives no reason; open() writes
    # the name's own bytes and raises OSError with the system's reason
    buffer = QBuffer()
    buffer.open(QIODevice.OpenModeFlag.WriteOnly)
    if not page.save(buffer, "PNG"):
        raise OSError(f"could not encode the report as PNG ({page.width()} x {page.height()}"
                      " pixels)")
    with open(path, "wb") as fh:
        fh.write(bytes(buffer.data()))
    return {"path": str(path), "width": page.width(), "height": page.height(), "dpi": dpi,
            "modes_shown": n_shown, "modes_total": n_total, "modes_left_out": n_total - n_shown}
