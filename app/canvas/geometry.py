"""Model metres <-> scene units. The model has y up; Qt's scene has y down, so y is flipped."""

from __future__ import annotations

from PySide6.QtCore import QPointF

#: Scene units (pixels at zoom 1) per metre.
SCALE = 400.0
#: Snap grid in metres.
GRID_M = 0.05


def to_scene(x: float, y: float) -> QPointF:
    return QPointF(x * SCALE, -y * SCALE)


def to_model(p: QPointF) -> tuple[float, float]:
    return p.x() / SCALE, -p.y() / SCALE


def snap_scene(p: QPointF, grid_m: float = GRID_M) -> QPointF:
    """``p`` moved to the nearest grid point."""
    g = grid_m * SCALE
    return QPointF(round(p.x() / g) * g, round(p.y() / g) * g)


def snapped_model(p: QPointF, snap: bool = True, grid_m: float = GRID_M) -> tuple[float, float]:
    """Model coordinates (m) of a scene point, on the grid when ``snap`` (rounded to 1e-9 m so that
    grid positions are exact decimal-looking numbers in the file)."""
    if snap:
        g = grid_m
        x, y = to_model(p)
        return round(round(x / g) * g, 9), round(round(y / g) * g, 9)
    return to_model(p)
