"""The report's title block: model name, kind, units, counts and date."""

from __future__ import annotations

from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QPen

from app.report.page import _Page
from app.text.numbers import quantity


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
             ("Total " + ("inertia" if model.kind == "torsion" else "mass"), quantity(total, unit)),
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
    from app.text.units import count

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
