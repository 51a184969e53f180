"""A viscous dashpot drawn as a cylinder with a piston."""

from __future__ import annotations

from app.drawing import shapes

from .link_item import LinkItem


class DashpotItem(LinkItem):
    def build_path(self, p1, p2):
        return shapes.dashpot_path(p1, p2, width=12.0)

    def tooltip_text(self, element) -> str:
        return f"dashpot {element.label} ({element.id}): c {element.c:.6g} (SI), {element.a}–{element.b}"
