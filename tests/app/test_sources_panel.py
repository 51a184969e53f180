"""Sources panel: add, edit and delete excitation sources with the keyboard and the mouse; one undo
step per change; refused values explained in place; the margin table.

Unit factors: 1 Hz of shaft speed = 1 rev/s = 60 rpm; 1 rad/s = 60 / (2 pi) rpm (math; NIST SP 811
for the radian and the minute). The margin rule is common practice (REFERENCES.md section 9).
"""

import math
from pathlib import Path

import pytest
from PySide6.QtCore import Qt

import solver
from app.document.document import Document
from app.docks.sources_panel import SourcesPanel, parse_orders

ROOT = Path(__file__).resolve().parents[2]


def _type(qtbot, edit, text):
    edit.setFocus()
    edit.selectAll()
    qtbot.keyClicks(edit, text)
    qtbot.keyClick(edit, Qt.Key.Key_Return)


@pytest.fixture
def panel(qtbot, two_mass_model):
    doc = Document(two_mass_model)
    p = SourcesPanel(doc)
    qtbot.addWidget(p)
    p.resize(700, 420)
    p.show()
    qtbot.waitExposed(p)
    return p


def test_add_a_speed_by_mouse_then_edit_undo_redo(qtbot, panel):
    """Clicking Add speed adds one source (one undo step); typing 1450 rpm sets it (one more);
    undo takes each back in turn and redo puts them again (common practice)."""
    doc = panel.document
    start = doc.model
    qtbot.mouseClick(panel.add_speed_button, Qt.MouseButton.LeftButton)
    assert len(doc.model.excitations) == 1
    e = doc.model.excitations[0]
    assert e.type == "speed" and doc.undo_stack.count() == 1
    assert panel.table.item(0, 0).text() == "Shaft speed 1"      # a name, not the id
    assert panel.editor_title.text() == "Shaft speed: Shaft speed 1"
    added = doc.model
    _type(qtbot, panel.field("rpm").edit, "1450 rpm")
    assert doc.model.excitations[0].rpm == 1450.0
    assert doc.undo_stack.count() == 2
    assert panel.field("rpm").edit.text() == "1450 rpm"
    _type(qtbot, panel.field("label"), "Cooling fan")
    assert doc.model.excitations[0].label == "Cooling fan"
    assert panel.table.item(0, 0).text() == "Cooling fan"
    assert doc.undo_stack.count() == 3
    doc.undo_stack.undo()
    doc.undo_stack.undo()
    assert doc.model == added
    assert panel.field("rpm").edit.text() == "1500 rpm"    # the field follows the undo
    doc.undo_stack.undo()
    assert doc.model == start and panel.table.rowCount() == 0
    doc.undo_stack.redo()
    doc.undo_stack.redo()
    assert doc.model.excitations[0].rpm == 1450.0
    assert panel.table.rowCount() == 1


def test_add_a_speed_range_by_keyboard(qtbot, panel):
    """Keyboard only: Insert in the list adds a speed and puts the cursor in its speed field;
    24 Hz of shaft speed is 24 x 60 = 1440 rpm; orders typed as a list; the speed kind switched
    with the arrow key gives a range of +-20 % (1152 to 1728 rpm); its ends typed as 600 1/min and
    157.0796 rad/s (= 1500.0 rpm to 6 digits, 157.0796 x 60 / (2 pi)); rtol 1e-12 / 1e-6."""
    doc = panel.document
    panel.table.setFocus()
    qtbot.keyClick(panel.table, Qt.Key.Key_Insert)
    assert len(doc.model.excitations) == 1
    rpm = panel.field("rpm").edit
    assert rpm.hasFocus()
    qtbot.keyClicks(rpm, "24 Hz")
    qtbot.keyClick(rpm, Qt.Key.Key_Return)
    assert doc.model.excitations[0].rpm == pytest.approx(1440.0, rel=1e-12)
    _type(qtbot, panel.field("orders").edit, "1, 2, 4.5")
    assert doc.model.excitations[0].orders == (1.0, 2.0, 4.5)
    combo = panel.field("speed_kind")
    combo.setFocus()
    qtbot.keyClick(combo, Qt.Key.Key_Down)
    e = doc.model.excitations[0]
    assert e.is_ranged
    assert e.speed_range_rpm() == pytest.approx((1152.0, 1728.0), rel=1e-12)
    _type(qtbot, panel.field("rpm_min").edit, "600 1/min")
    _type(qtbot, panel.field("rpm_max").edit, "157.0796 rad/s")
    e = doc.model.excitations[0]
    assert e.rpm_min == pytest.approx(600.0, rel=1e-12)
    assert e.rpm_max == pytest.approx(157.0796 * 60 / (2 * math.pi), rel=1e-12)
    assert e.rpm_max == pytest.approx(1500.0, rel=1e-6)
    assert doc.undo_stack.count() == 6   # add, speed, orders, range, min, max
    # each order covers n * 600 / 60 to n * 1500 / 60 Hz (math)
    assert e.frequencies_hz()[2] == pytest.approx((45.0, 4.5 * e.rpm_max / 60), rel=1e-12)


@pytest.mark.parametrize("field,text,reason", [
    ("rpm", "fast", "cannot read"),
    ("rpm", "12 kg", "not a shaft speed"),
    ("rpm", "-5 rpm", "positive"),
    ("orders", "1, -2", "positive"),
    ("orders", "one", "cannot read"),
])
def test_refused_entry_is_explained_in_place(qtbot, panel, field, text, reason):
    """Common practice: a refused entry keeps its text, shows the reason under the field and in its
    tooltip, and leaves the model and the history untouched."""
    qtbot.mouseClick(panel.add_speed_button, Qt.MouseButton.LeftButton)
    before, steps = panel.document.model, panel.document.undo_stack.count()
    w = panel.field(field)
    _type(qtbot, w.edit, text)
    assert panel.document.model is before
    assert panel.document.undo_stack.count() == steps
    assert reason in w.error
    assert not w.error_label.isHidden() and reason in w.error_label.text()
    assert w.edit.text() == text and reason in w.edit.toolTip()


def test_range_the_model_refuses_is_shown_on_the_field(qtbot, panel):
    """A minimum speed above the maximum is refused by the model (solver.ModelError) and the
    reason, naming rpm_min and rpm_max, shows on the field typed into; nothing changes."""
    qtbot.mouseClick(panel.add_speed_button, Qt.MouseButton.LeftButton)
    panel.field("speed_kind").setCurrentIndex(1)
    before, steps = panel.document.model, panel.document.undo_stack.count()
    w = panel.field("rpm_min")
    _type(qtbot, w.edit, "5000 rpm")
    assert panel.document.model is before and panel.document.undo_stack.count() == steps
    assert "rpm_min must be below rpm_max" in w.error


def test_band_by_mouse_with_units_and_a_refusal(qtbot, panel):
    """A band's edges take Hz or rpm: 3000 rpm = 50 Hz (math: /60). A lower edge above the upper
    one is refused in place."""
    qtbot.mouseClick(panel.add_band_button, Qt.MouseButton.LeftButton)
    doc = panel.document
    _type(qtbot, panel.field("f_max_hz").edit, "3000 rpm")
    assert doc.model.excitations[0].f_max_hz == pytest.approx(50.0, rel=1e-12)
    before = doc.model
    _type(qtbot, panel.field("f_min_hz").edit, "60 Hz")
    assert doc.model is before
    assert "f_max_hz must not be below f_min_hz" in panel.field("f_min_hz").error


def test_delete_by_key_and_by_button_with_undo(qtbot, panel):
    """A click selects a source; Delete in the list removes it (one step), the button the next;
    undo brings each back in its place."""
    doc = panel.document
    panel.add_speed()
    panel.add_band()
    full = doc.model
    rect = panel.table.visualItemRect(panel.table.item(0, 0))    # select the speed by mouse
    qtbot.mouseClick(panel.table.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    assert panel.current_id == full.excitations[0].id
    assert panel.editor_title.text().startswith("Shaft speed:")
    panel.table.setFocus()
    qtbot.keyClick(panel.table, Qt.Key.Key_Delete)
    assert [e.type for e in doc.model.excitations] == ["band"]
    qtbot.mouseClick(panel.delete_button, Qt.MouseButton.LeftButton)
    assert doc.model.excitations == ()
    doc.undo_stack.undo()
    doc.undo_stack.undo()
    assert doc.model == full


def test_margin_edited_here_with_a_refusal(qtbot, panel):
    """The margin is a top field: 20 % is one undo step; 120 % is refused in place (a margin must
    be below 100 %)."""
    doc = panel.document
    _type(qtbot, panel.margin_field.edit, "20 %")
    assert doc.model.margin_percent == 20.0 and doc.undo_stack.count() == 1
    before = doc.model
    _type(qtbot, panel.margin_field.edit, "120")
    assert doc.model is before and "below 100" in panel.margin_field.error


def test_margin_table_tab_shows_every_mode_and_source(qtbot, panel):
    """The example fan drive (600 to 1800 rpm, orders 1, 2, 7) solved: its second mode, 57.43 Hz,
    lies inside order 2's band 20 to 60 Hz: (60 - 57.43) / 60 = 4.29 % from the upper edge
    (hand arithmetic on the solved frequency), FAIL; every other row passes."""
    model = solver.load_model(ROOT / "assets" / "examples" / "fan_drive.json")
    panel.document.new(model=model)
    analysis = solver.analyse(model)
    panel.set_analysis(analysis)
    panel.tabs.setCurrentIndex(1)
    t = panel.margin_table
    assert t.rowCount() == 2 * 3
    f2 = float(analysis.modal.frequencies_hz[1])
    rows = [[t.item(r, c).text() for c in range(t.columnCount())] for r in range(t.rowCount())]
    failing = [r for r in rows if r[6] == "FAIL"]
    assert len(failing) == 1
    assert failing[0][2] == "Drive speed" and failing[0][3] == "×2"
    assert failing[0][5] == f"{(60 - f2) / 60 * 100:.3g} % inside"
    assert "1 of 6 checks fail" in panel.margin_summary.text()


def test_parse_orders():
    """Orders are positive multiples of the speed, separated by commas, semicolons or spaces."""
    assert parse_orders("1, 2;4.5  7") == (1.0, 2.0, 4.5, 7.0)
    for bad in ("", "0", "x", "1, inf"):
        with pytest.raises(ValueError):
            parse_orders(bad)
