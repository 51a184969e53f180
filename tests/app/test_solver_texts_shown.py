"""Solver messages reach the window, the Tune panel, Properties and the command line with the
element named by label and id (issue 11 item 3: labels in every place a person reads; the id
stays so the element can be found in the file). The physics of each message is stated per test
(math)."""

from __future__ import annotations

from PySide6.QtCore import Qt

import solver
from solver.model import Anchor, Mass, Model, Spring


def _swinging():
    """A camera on one axial spring in a plane with no transverse stiffness: it can swing at
    right angles to the spring with no restoring force (math), a mechanism."""
    return Model(kind="planar", name="swing",
                 anchors=(Anchor("g", 0.0, 0.0, "Wall"),),
                 masses=(Mass("cam", 0.3, 0.0, 2.0, "Camera body"),),
                 springs=(Spring("s1", "g", "cam", 1000.0, "Arm"),))


def _chain():
    """Floor -- Floor mount (4000 N/m) -- Base plate 2 kg -- Isolator pad (1000 N/m) -- Camera
    body 1 kg, along x."""
    return Model(kind="line", name="chain", anchors=(Anchor("g", 0.0, 0.0, "Floor"),),
                 masses=(Mass("m1", 0.2, 0.0, 2.0, "Base plate"),
                         Mass("m2", 0.4, 0.0, 1.0, "Camera body")),
                 springs=(Spring("s1", "g", "m1", 4000.0, "Floor mount"),
                          Spring("s2", "m1", "m2", 1000.0, "Isolator pad")))


def _open(window, model):
    window.document.new(model=model)
    window.solver.wait()


def test_mechanism_cause_in_the_warnings_line_and_the_modes_table(qtbot, window):
    """The warnings line above the table and the table's notes (their tooltip holds the full
    text) name the swinging mass by label and id."""
    _open(window, _swinging())
    qtbot.waitUntil(lambda: window.warnings_label.isVisible())
    text = window.warnings_label.text()
    assert "mechanism" in text and 'mass "Camera body" (cam)' in text, text
    view = window.modes_table.view
    model = view.model()
    last = model.columnCount() - 1
    notes = model.data(model.index(0, last), Qt.ItemDataRole.ToolTipRole)
    assert notes.startswith("zero frequency (mechanism)") and '"Camera body" (cam)' in notes


def test_retune_refusal_in_the_tune_panel_names_the_element(qtbot, window):
    """Mode 1 of the chain tends to sqrt(4000 / 3) / 2 pi = 5.81 Hz as the pad grows rigid
    (math), so 50 Hz is out of the pad's reach: the panel says so, naming the pad."""
    _open(window, _chain())
    panel = window.tune_panel
    panel.select_element("s2", "k")
    panel.mode_spin.setValue(1)
    panel.target_spin.setValue(50.0)
    qtbot.mouseClick(panel.retune_button, Qt.MouseButton.LeftButton)
    text = panel.message.text()
    assert "cannot reach" in text and 'stiffness k of "Isolator pad" (s2) alone' in text, text
    assert window.document.undo_stack.count() == 0


def test_model_refusal_in_properties_names_the_elements(qtbot, window):
    """DESIGN.md section 6 (a bad entry is refused in place with the reason): moving the
    camera onto the base plate in a planar model would leave the pad with no length; the
    field's reason names the pad and both its ends by label and id."""
    model = _chain()
    model = model.with_changes(kind="planar")
    _open(window, model)
    window.scene.select_ids(["m2"])
    qtbot.waitUntil(lambda: window.properties.selection == ["m2"])
    field = window.properties.field("x")
    field.edit.setFocus()
    field.edit.selectAll()
    qtbot.keyClicks(field.edit, "0.2 m")
    qtbot.keyClick(field.edit, Qt.Key_Return)
    reason = field.error
    assert "same point" in reason, reason
    assert 'spring "Isolator pad" (s2)' in reason
    assert '"Base plate" (m1)' in reason and '"Camera body" (m2)' in reason
    assert window.document.model.element("m2").x == 0.4


def test_command_line_text_names_elements(tmp_path):
    """README (springwright solve): the zero-frequency note and the warning line of the text
    output name the mass by label and id; the JSON keeps the same warning beside its ids."""
    from app.cli import solve_json, solve_table

    analysis = solver.analyse(_swinging())
    text = solve_table(analysis)
    assert 'zero frequency (mechanism): mass "Camera body" (cam)' in text
    assert 'warning: mode 1 is a mechanism: mass "Camera body" (cam)' in text
    out = solve_json(analysis)
    assert out["dofs"] == [["cam", "x"], ["cam", "y"]]
    assert any('"Camera body" (cam)' in w for w in out["warnings"])
    assert '"Camera body" (cam)' in out["modes"][0]["zero_cause"]
