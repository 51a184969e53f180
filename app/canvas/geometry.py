"""Model metres <-> scene units. The model has y up; Qt's scene has y down, so y is flipped.

The scale (scene units per metre) is chosen per model when it is opened, so a 0.2 m fixture and a
2 m rack both fill the canvas with symbols of the same size; the snap grid follows the scale.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from PySide6.QtCore import QPointF

#: Scene units the larger side of a model spans at its chosen scale.
_TARGET_SPAN = 600.0
#: Scene units between grid lines, roughly.
_TARGET_GRID = 25.0


def _nice(value: float) -> float:
    """The 1-2-5 step nearest above ``value``."""
    exp = math.floor(math.log10(value))
    for m in (1.0, 2.0, 5.0, 10.0):
        if m * 10 ** exp >= value * 0.999:
            return m * 10 ** exp
    return 10 ** (exp + 1)


@dataclass(frozen=True)
class Mapper:
    """Scale ``px_per_m`` (scene units per metre) and snap grid ``grid_m`` (m)."""

    px_per_m: float = 400.0
    grid_m: float = 0.05

    @classmethod
    def for_model(cls, model) -> "Mapper":
        nodes = model.masses + model.anchors
        if len(nodes) < 2:
            return cls()
        span = max(max(n.x for n in nodes) - min(n.x for n in nodes),
                   max(n.y for n in nodes) - min(n.y for n in nodes))
        if span <= 0:
            return cls()
        grid = _nice(span * _TARGET_GRID / _TARGET_SPAN)
        return cls(px_per_m=_TARGET_GRID / grid, grid_m=grid)

    def to_scene(self, x: float, y: float) -> QPointF:
        return QPointF(x * self.px_per_m, -y * self.px_per_m)

    def to_model(self, p: QPointF) -> tuple[float, float]:
        return p.x() / self.px_per_m, -p.y() / self.px_per_m

    def snap_scene(self, p: QPointF) -> QPointF:
        g = self.grid_m * self.px_per_m
        return QPointF(round(p.x() / g) * g, round(p.y() / g) * g)

    def snapped_model(self, p: QPointF, snap: bool = True) -> tuple[float, float]:
        """Model coordinates (m) of a scene point, on the grid when ``snap``; rounded to 1e-9 m
        so grid positions are plain decimals in the file."""
        x, y = self.to_model(p)
        if snap:
            g = self.grid_m
            x, y = round(x / g) * g, round(y / g) * g
        return round(x, 9), round(y, 9)
