"""A spring drawn as a coil (zig-zag between straight leads)."""

from __future__ import annotations

from app.drawing import shapes

from .link_item import LinkItem


class SpringItem(LinkItem):
    unit = "N/m"

    def build_path(self, p1, p2):
        return shapes.coil_path(p1, p2, turns=5, width=12.0)

    def tooltip_text(self, element) -> str:
        kt = f", k_t {element.k_t:.6g}" if element.k_t else ""
        return f"spring {element.label} ({element.id}): k {element.k:.6g}{kt} (SI), {element.a}–{element.b}"
