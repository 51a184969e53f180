"""Property panel: typed values with units change the model; bad text is refused in place."""

import pytest
from PySide6.QtCore import Qt

from app.document.document import Document
from app.docks.properties import PropertyPanel


def _type(qtbot, field, text):
    field.edit.setFocus()
    field.edit.selectAll()
    qtbot.keyClicks(field.edit, text)
    qtbot.keyClick(field.edit, Qt.Key_Return)


@pytest.fixture
def panel(qtbot, two_mass_model):
    doc = Document(two_mass_model)
    p = PropertyPanel(doc, "SI")
    qtbot.addWidget(p)
    p.show()
    return p


def test_stiffness_typed_in_lbf_per_inch(qtbot, panel):
    """Source: NIST SP 811 exact factors: 12 lbf/in = 12 x 175.126835 N/m = 2101.52202 N/m."""
    panel.set_selection(["s1"])
    _type(qtbot, panel.field("k"), "12 lbf/in")
    assert panel.document.model.element("s1").k == pytest.approx(12 * 4.4482216152605 / 0.0254,
                                                                rel=1e-12)
    assert panel.document.undo_stack.count() == 1
    assert panel.field("k").edit.text() == "2101.52 N/m"


def test_mass_typed_in_pounds_and_kn_per_mm(qtbot, panel):
    """Source: NIST SP 811: 1 lb = 0.45359237 kg exact; 1 kN/mm = 1e6 N/m."""
    panel.set_selection(["m1"])
    _type(qtbot, panel.field("mass"), "20 lb")
    assert panel.document.model.element("m1").mass == pytest.approx(9.0718474, rel=1e-12)
    panel.set_selection(["s2"])
    _type(qtbot, panel.field("k"), "3.5 kN/mm")
    assert panel.document.model.element("s2").k == pytest.approx(3.5e6, rel=1e-12)


@pytest.mark.parametrize("text,reason", [("12 kg", "not a stiffness"), ("soft", "cannot read"),
                                         ("-200", "positive")])
def test_bad_entry_is_refused_in_place(qtbot, panel, text, reason):
    """Common practice: refused text stays for correction, with a red frame and the reason."""
    before = panel.document.model
    panel.set_selection(["s1"])
    field = panel.field("k")
    _type(qtbot, field, text)
    assert panel.document.model is before
    assert panel.document.undo_stack.count() == 0
    assert reason in field.error
    assert not field.error_label.isHidden() and reason in field.error_label.text()
    assert "border" in field.edit.styleSheet()
    assert field.edit.text() == text
    assert reason in field.edit.toolTip()


def test_model_refusal_is_shown_on_the_field(qtbot, two_mass_model):
    """Common practice: a value the model refuses (zero-length planar spring) is refused in place."""
    import dataclasses

    model = dataclasses.replace(two_mass_model, kind="planar")
    doc = Document(model)
    p = PropertyPanel(doc, "SI")
    qtbot.addWidget(p)
    p.set_selection(["m1"])
    _type(qtbot, p.field("y"), "100 mm")
    _type(qtbot, p.field("x"), "0.4 m")
    assert (doc.model.element("m1").x, doc.model.element("m1").y) == (0.4, pytest.approx(0.1))
    before = doc.model
    _type(qtbot, p.field("y"), "0")  # onto m2 at (0.4, 0): spring s2 would have no length
    assert "same point" in p.field("y").error
    assert doc.model is before


def test_plain_number_uses_us_customary_when_chosen(qtbot, panel):
    """Source: NIST SP 811: 1 in = 0.0254 m exact; plain numbers are in the display system."""
    panel.units_combo.setCurrentIndex(1)
    panel.set_selection(["m2"])
    assert panel.field("x").edit.text() == "15.748 in"  # 0.4 m
    _type(qtbot, panel.field("x"), "10")
    assert panel.document.model.element("m2").x == pytest.approx(0.254, rel=1e-12)


def test_undo_of_a_property_edit_updates_the_field(qtbot, panel):
    """Common practice: views refresh from the model after undo."""
    panel.set_selection(["s1"])
    _type(qtbot, panel.field("k"), "2000")
    assert panel.field("k").edit.text() == "2000 N/m"
    panel.document.undo_stack.undo()
    assert panel.field("k").edit.text() == "1000 N/m"


def test_initial_condition_and_lock(qtbot, panel):
    """Common practice: initial displacement and locked direction are edits of the model."""
    panel.set_selection(["m2"])
    _type(qtbot, panel.field("init_x"), "5 mm")
    assert panel.document.model.initial_of("m2").get("displacement", "x") == pytest.approx(0.005)
    panel.widget("fixed_x").click()
    assert panel.document.model.element("m2").fixed == ("x",)
