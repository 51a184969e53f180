"""Editing several elements at once, export dialogs in the model's folder, Esc on the quick guide,
and one report whichever way it is made."""

import math
import shutil
from pathlib import Path

import numpy as np
import pytest
from PySide6.QtCore import QPoint, Qt, QTimer
from PySide6.QtGui import QAction, QImage
from PySide6.QtWidgets import QApplication, QFileDialog, QLineEdit

from solver.model import Anchor, Mass, Model, Spring

EXAMPLES = Path(__file__).resolve().parents[2] / "assets" / "examples"


def _plate_on_four_isolators(k=(2.0e4, 2.5e4, 3.0e4, 3.5e4), m=10.0):
    """A plate (y) on four isolators to the floor, all in parallel."""
    anchors = tuple(Anchor(f"f{i}", 0.1 * i, 0.0, label=f"Floor {i}") for i in range(1, 5))
    springs = tuple(Spring(f"iso{i}", f"f{i}", "plate", k[i - 1], label=f"Isolator {i}")
                    for i in range(1, 5))
    return Model(kind="line", name="plate on isolators", axis="y",
                 masses=(Mass("plate", 0.25, 0.3, m, label="Plate"),), anchors=anchors,
                 springs=springs)


def _wait(qtbot, window):
    window.solver.wait()
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model is window.document.model, timeout=8000)


def _click_item(qtbot, window, eid, modifier=Qt.KeyboardModifier.NoModifier):
    item = window.scene.links.get(eid) or window.scene.nodes[eid]
    path = item.shape()
    # a point on the drawn outline of the item (the spring's coil), in view coordinates
    p = item.mapToScene(path.pointAtPercent(0.5) if path.elementCount() else
                        item.boundingRect().center())
    for pct in (0.5, 0.45, 0.55, 0.4, 0.6):
        cand = item.mapToScene(path.pointAtPercent(pct))
        if window.scene.itemAt(cand, window.view.transform()) is item:
            p = cand
            break
    qtbot.mouseClick(window.view.viewport(), Qt.MouseButton.LeftButton, modifier,
                     window.view.mapFromScene(p))


def test_four_isolators_set_at_once_in_one_undo_step(qtbot, window):
    """math: four parallel isolators of stiffness k under a mass m give f = sqrt(4 k / m) / 2 pi
    (springs in parallel add; Rao, Mechanical Vibrations, ch. 1-2). Selecting the four springs on
    the canvas and typing k once sets all four; one undo step gives back the four old values."""
    model = _plate_on_four_isolators()
    window.document.new(model=model)
    _wait(qtbot, window)
    window.view.fit()
    QApplication.processEvents()
    for i in range(1, 5):
        _click_item(qtbot, window, f"iso{i}",
                    Qt.KeyboardModifier.ControlModifier if i > 1 else Qt.KeyboardModifier.NoModifier)
    assert sorted(window.scene.selected_ids()) == ["iso1", "iso2", "iso3", "iso4"]
    props = window.properties
    assert "4 springs" in props.title.text()
    field = props.field("k")
    assert field.edit.text() == ""                     # the four values differ
    field.edit.setFocus()
    qtbot.keyClicks(field.edit, "50 kN/m")
    qtbot.keyClick(field.edit, Qt.Key.Key_Return)
    assert [s.k for s in window.document.model.springs] == [5.0e4] * 4
    assert window.document.undo_stack.count() == 1
    _wait(qtbot, window)
    f = window.modes_table.rows()[0]["frequency_hz"]
    assert f == pytest.approx(math.sqrt(4 * 5.0e4 / 10.0) / (2 * math.pi), rel=1e-6)
    value, unit = field.edit.text().split()             # now one shared value
    assert float(value) == 5.0e4 and unit == "N/m"
    window.document.undo_stack.undo()
    assert window.document.model == model


def test_several_masses_set_at_once_refusal_changes_none(qtbot, window, two_mass_model):
    """common practice: a value the model refuses for one of the selection is refused for all
    (m1 and m2 both stay; the reason is shown in place)."""
    window.document.new(model=two_mass_model)
    _wait(qtbot, window)
    window.scene.select_ids(["m1", "m2"])
    field = window.properties.field("mass")
    field.edit.setFocus()
    field.edit.selectAll()
    qtbot.keyClicks(field.edit, "-3 kg")
    qtbot.keyClick(field.edit, Qt.Key.Key_Return)
    assert window.document.model == two_mass_model
    assert field.error
    field.edit.selectAll()
    qtbot.keyClicks(field.edit, "3 kg")
    qtbot.keyClick(field.edit, Qt.Key.Key_Return)
    assert [m.mass for m in window.document.model.masses] == [3.0, 3.0]
    assert window.document.undo_stack.count() == 1


def _run_save_dialog(qtbot, trigger, answer=None):
    """Trigger an action that opens a file dialog; note the folder it opens in and answer it
    (a path to accept, or None to cancel)."""
    seen = {}

    def handle():
        dlg = QApplication.activeModalWidget()
        if not isinstance(dlg, QFileDialog):
            QTimer.singleShot(50, handle)
            return
        seen["folder"] = Path(dlg.directory().absolutePath()).resolve()
        seen["file"] = dlg.selectedFiles()[0] if dlg.selectedFiles() else ""
        if answer is None:
            dlg.reject()
        else:
            # type the whole path into the file name field, as a user may
            dlg.findChild(QLineEdit, "fileNameEdit").setText(str(answer))
            dlg.accept()

    QTimer.singleShot(50, handle)
    trigger()
    return seen


def _action(window, text):
    return next(a for a in window.findChildren(QAction) if a.text() == text)


@pytest.mark.parametrize("text", ["Export &report (PNG)…", "Export response &plot (PNG)…",
                                  "Export response &data (CSV)…", "Export mode &table (CSV)…"])
def test_export_dialogs_open_in_the_models_folder(qtbot, window, tmp_path, monkeypatch, text):
    """common practice: an export is saved beside the model it comes from; every export dialog
    opens in the model file's folder (not the program's working folder)."""
    folder = tmp_path / "project"
    folder.mkdir()
    shutil.copy(EXAMPLES / "equipment_rack.json", folder / "rack.json")
    monkeypatch.chdir(tmp_path)
    assert window.open_path(folder / "rack.json")
    _wait(qtbot, window)
    QApplication.processEvents()
    seen = _run_save_dialog(qtbot, _action(window, text).trigger)
    assert seen["folder"] == folder.resolve()
    assert Path(seen["file"]).name.startswith("rack-")


def test_esc_closes_the_quick_guide(qtbot, window):
    """common practice: Esc closes a help window."""
    qtbot.keyClick(window, Qt.Key.Key_F1)
    guide = window._guide
    qtbot.waitExposed(guide)
    assert guide.isVisible()
    qtbot.keyClick(guide, Qt.Key.Key_Escape)
    assert not guide.isVisible()
    qtbot.keyClick(window, Qt.Key.Key_F1)
    assert guide.isVisible()


def test_undamped_report_same_from_window_and_command_line(qtbot, window, tmp_path):
    """common practice: one model, one report. The 40-mass rod (no damping) reported through the
    window's Export report dialog and through `springwright report` gives the same image, pixel
    for pixel, even after the Response panel has been used."""
    from app import cli

    src = EXAMPLES / "rod_chain.json"
    assert window.open_path(src)
    _wait(qtbot, window)
    from _screen import click_tab

    click_tab(qtbot, window, "Response")
    window.response_panel.wait()         # the Response panel has its curves
    assert window.response_panel.response is not None
    from_window = tmp_path / "window.png"
    _run_save_dialog(qtbot, _action(window, "Export &report (PNG)…").trigger, from_window)
    assert from_window.exists(), window.statusBar().currentMessage()
    from_cli = tmp_path / "cli.png"
    assert cli.main(["report", str(src), "-o", str(from_cli)]) == 0
    a, b = QImage(str(from_window)), QImage(str(from_cli))
    assert (a.width(), a.height()) == (b.width(), b.height())
    assert a == b
