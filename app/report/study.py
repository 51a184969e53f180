"""The report's tolerance study (issue 15): with toleranced springs, dashpots or masses, a
modest seeded study (N and seed stated), its percentile table, the probability of clearing each
source, the worst-case corners and the study's cautions (:mod:`app.results.study_rows`, the
window's and the command line's words)."""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPen

from app.results import study_rows

#: Samples of the report's study: enough for percentiles to about 1 % of the spread, fast
#: enough that the report stays quick (a few tenths of a second at 20 DOFs).
REPORT_SAMPLES = 2000
REPORT_SEED = 0
#: Above this many DOFs the report leaves the study to the command line.
REPORT_MAX_DOF = 200
#: Rows of the percentile table drawn at most.
MAX_ROWS = 24


def has_tolerances(model) -> bool:
    return any(el.tolerance is not None
               for el in model.springs + model.dampers + model.masses)


def report_study(model):
    """The study the report shows (None when the model is too large for a quick one)."""
    from solver.study import tolerance_study

    n_dof = sum(len([d for d in model.directions_of(m) if d not in m.fixed])
                for m in model.masses)
    if n_dof > REPORT_MAX_DOF:
        return None
    return tolerance_study(model, REPORT_SAMPLES, seed=REPORT_SEED)


def paint_study(pg, model, result=None) -> None:
    """Draw the section at ``pg.y``."""
    from solver.errors import ModelError

    st = pg.st
    d = pg.dpi
    try:
        res = report_study(model) if result is None else result
    except ModelError as exc:
        pg.paragraph(f"Tolerance study not run: {exc}", 8.5, st.error)
        return
    if res is None:
        pg.paragraph(f"The model has more than {REPORT_MAX_DOF} degrees of freedom: run"
                     " springwright study FILE -n N for its tolerance study.", 8.5)
        return
    pg.paragraph(f"{res.n_samples:,} sampled models (seed {res.seed}; springwright study FILE"
                 f" -n {res.n_samples} --seed {res.seed} repeats it, and -n 100000 narrows it),"
                 f" solved by {res.method}. Tolerances: "
                 + "; ".join(study_rows.parameter_lines(res)) + ".", 8.5)
    rows = study_rows.table_rows(res)[:MAX_ROWS]
    header = study_rows.HEADERS
    pt = 7.0
    f, fb = pg.font(pt), pg.font(pt, True)
    fm, fmb = QFontMetricsF(f), QFontMetricsF(fb)
    pad = 0.035 * d
    total_w = pg.right - pg.left
    # headers wrap onto two lines; columns as wide as their widest cell or word
    widths = [max([fm.horizontalAdvance(r[c]) for r in rows]
                  + [max(fmb.horizontalAdvance(w) for w in header[c].split())]) + 2 * pad
              for c in range(len(header))]
    scale = min(1.0, total_w / sum(widths))
    widths = [w * scale for w in widths]
    spare = total_w - sum(widths)
    widths = [w + spare / len(widths) for w in widths]
    head_h = max(pg.text_height(w - 2 * pad, h, pt, True) for w, h in zip(widths, header)) \
        + 2 * pad
    row_h = fm.lineSpacing() + 1.2 * pad
    p = pg.p
    x0, y = pg.left, pg.y
    p.fillRect(QRectF(x0, y, total_w, head_h), st.panel)
    x = x0
    for c, title in enumerate(header):
        pg.text(QRectF(x + pad, y + pad, widths[c] - 2 * pad, head_h - pad), title, pt, True,
                st.ink, Qt.AlignmentFlag.AlignRight)
        x += widths[c]
    y += head_h
    p.setPen(QPen(st.ink, max(1.0, 0.005 * d)))
    p.drawLine(QPointF(x0, y), QPointF(x0 + total_w, y))
    for i, r in enumerate(rows):
        if i % 2 == 1:
            p.fillRect(QRectF(x0, y, total_w, row_h), QColor("#f4f3ef"))
        x = x0
        p.setFont(f)
        p.setPen(QPen(st.ink))
        for c, s in enumerate(r):
            shown = fm.elidedText(s, Qt.TextElideMode.ElideRight, widths[c] - 2 * pad)
            p.drawText(QRectF(x + pad, y, widths[c] - 2 * pad, row_h),
                       int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
                       | int(Qt.TextFlag.TextSingleLine), shown)
            x += widths[c]
        y += row_h
    p.setPen(QPen(st.ink_soft, max(1.0, 0.004 * d)))
    p.drawLine(QPointF(x0, y), QPointF(x0 + total_w, y))
    pg.y = y + 0.05 * d
    if len(res.modes) > len(rows):
        pg.paragraph(f"{len(res.modes) - len(rows)} higher modes not shown; springwright study"
                     " --json lists every mode.", 7.5, st.ink_soft)
    for line in study_rows.clearing_lines(res)[:MAX_ROWS]:
        pg.paragraph(line, 7.5)
    for line in study_rows.corner_lines(res)[:MAX_ROWS]:
        pg.paragraph("Worst case, " + line, 7.5)
    for line in res.notes:
        pg.paragraph(line, 7.5, st.ink_soft)


__all__ = ["paint_study", "report_study", "has_tolerances", "REPORT_SAMPLES", "REPORT_SEED"]
