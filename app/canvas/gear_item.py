"""A gear stage between two discs of a torsion model: two pitch circles and the speed ratio."""

from __future__ import annotations

from app.drawing import shapes

from .link_item import LinkItem


class GearItem(LinkItem):
    """``element`` is a :class:`solver.model.Gear`; drawn between its discs like a spring, with
    the wheel on the faster shaft the smaller one (pitch radii go inversely with speed)."""

    def build_path(self, p1, p2):
        return shapes.gear_pair_path(p1, p2, self.element.ratio, 20.0)

    def set_element(self, element, a_item, b_item):
        super().set_element(element, a_item, b_item)
        from app.text.numbers import quantity

        ratio = f"n = {quantity(element.ratio, '').strip()}"
        self.label_item.setText(ratio if element.label == element.id
                                else f"{element.label}  {ratio}")
        self.refresh()

    def tooltip_text(self, element) -> str:
        mesh = "rigid mesh" if element.k_mesh is None else \
            f"mesh stiffness {element.k_mesh:.6g} N m/rad"
        return (f"gear stage {element.label} ({element.id}): speed ratio {element.ratio:.6g}"
                f" (speed of {element.a} / speed of {element.b}), {mesh}")
