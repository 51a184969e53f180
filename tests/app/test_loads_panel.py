"""Loads panel, driven through real widgets: definitions edited as undo commands, results that
follow every edit and read as the solver gives them (labels, not ids), refusals in place, nothing
cut off.

Sources: the numbers are the solver's (tests/solver/test_loads.py checks those against published
formulas and scipy); here common practice for the window (DESIGN.md section 6: every edit
undoable, results current after every edit, a bad entry refused in place with the reason).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication, QDockWidget

import solver
from solver import Damping
from solver.load_cases import Loads, RandomVibration

from _screen import click_tab, clipped_texts

RACK = Path(__file__).resolve().parents[2] / "assets" / "examples" / "equipment_rack.json"


def _open(qtbot, window, path=RACK):
    assert window.open_path(str(path), ask=False)
    window.solver.wait()
    click_tab(qtbot, window, "Loads")
    panel = window.loads_panel
    panel.wait()
    qtbot.waitUntil(lambda: panel.results is not None or panel.error
                    or panel.model.loads is None, timeout=10000)
    return panel


def _cells(table, col=0):
    return [table.item(r, col).text() for r in range(table.rowCount())]


def _settle(qtbot, panel):
    qtbot.waitUntil(lambda: not panel._timer.isActive(), timeout=3000)
    panel.wait()


def test_results_by_label_as_the_solver_gives_them(qtbot, window):
    """The rack's three loads: every mass and spring by label; the g RMS, peak and CQC cells are
    the solver's values in the shared number format; the cautions are shown."""
    from app.text.numbers import number

    panel = _open(qtbot, window)
    ref = solver.load_results(solver.load_model(RACK))
    assert _cells(panel.random_mass_table) == ["Level 1 (power supplies)",
                                               "Level 2 (controllers)", "Level 3 (display)"]
    assert _cells(panel.random_spring_table)[0] == "Posts, lower bay"
    assert _cells(panel.random_mass_table, 1) == [number(v) for v in
                                                  ref.random.acceleration_grms]
    assert _cells(panel.shock_mass_table, 1) == [number(v) for v in
                                                 ref.shock.peaks["acceleration_g"][0]]
    assert _cells(panel.spectrum_spring_table, 2) == [number(v) for v in
                                                      ref.spectrum.cqc["deflection_m"]]
    assert panel.miles_table.rowCount() == len(ref.random.miles) == 2
    assert "x: 2" in panel.mass90_label.text()
    assert "2.6 g RMS" in panel.grms_label.text()
    assert "licensed engineering practice" in panel.caution_label.text()
    # axes titled with units; spectral densities and the SRS on log axes
    assert "g²/Hz" in panel.random_plot.getAxis("left").labelText
    assert panel.random_plot.getPlotItem().ctrl.logXCheck.isChecked()
    assert panel.srs_plot.getPlotItem().ctrl.logYCheck.isChecked()
    assert "(Hz)" in panel.srs_plot.getAxis("bottom").labelText


def test_editing_the_asd_is_one_undo_step_and_the_results_follow(qtbot, window):
    """A typed ASD value changes the model's loads (one undo command) and the results; Undo
    restores both."""
    panel = _open(qtbot, window)
    before = panel.results.random.acceleration_grms.copy()
    stack = window.document.undo_stack
    n = stack.count()
    panel.asd_editor.table.item(2, 1).setText("0.08")     # 200 Hz: 0.02 -> 0.08 g^2/Hz
    _settle(qtbot, panel)
    model = window.document.model
    assert model.loads.random.points[2] == (200.0, 0.08)
    assert stack.count() == n + 1
    ref = solver.random_response(model, model.loads.random)
    np.testing.assert_allclose(panel.results.random.acceleration_grms, ref.acceleration_grms)
    assert not np.allclose(before, ref.acceleration_grms)
    stack.undo()
    _settle(qtbot, panel)
    assert window.document.model.loads.random.points[2] == (200.0, 0.02)
    assert panel.asd_editor.table.item(2, 1).text() == "0.02"
    np.testing.assert_allclose(panel.results.random.acceleration_grms, before)


def test_a_bad_row_is_refused_in_place(qtbot, window):
    """A frequency below the row before it is refused with the row and field named; the model
    and the undo history stay as they were."""
    panel = _open(qtbot, window)
    stack = window.document.undo_stack
    n = stack.count()
    loads = window.document.model.loads
    panel.asd_editor.table.item(2, 0).setText("10")
    assert panel.problem_label.isVisible() or not panel.isVisible()
    assert "row 3" in panel.problem and "frequency" in panel.problem and "above" in panel.problem
    assert window.document.model.loads == loads and stack.count() == n


def test_a_spring_edit_updates_the_loads(qtbot, window):
    """Results current after every edit: a stiffer lower post changes every response."""
    panel = _open(qtbot, window)
    before = panel.results.spectrum.cqc["force_n"].copy()
    window.document.set_element("post1", k=480000.0)
    _settle(qtbot, panel)
    ref = solver.spectrum_response(window.document.model, window.document.model.loads.spectrum)
    np.testing.assert_allclose(panel.results.spectrum.cqc["force_n"], ref.cqc["force_n"])
    assert not np.allclose(before, ref.cqc["force_n"])


def test_define_and_remove_loads_by_the_check_boxes(qtbot, window, two_mass_model):
    """A model without loads: ticking a load defines it (a placeholder to edit), unticking it
    removes it, each an undo step; with none left the file has no loads key again."""
    window.document.new(model=two_mass_model)
    window.solver.wait()
    click_tab(qtbot, window, "Loads")
    panel = window.loads_panel
    panel.wait()
    assert window.document.model.loads is None
    assert "No loads defined" in panel.status_label.text()
    panel.tabs.setCurrentIndex(1)
    qtbot.waitUntil(panel.shock_check.isVisible, timeout=2000)
    qtbot.mouseClick(panel.shock_check, Qt.MouseButton.LeftButton, pos=_box(panel.shock_check))
    _settle(qtbot, panel)
    shock = window.document.model.loads.shock
    assert shock is not None and shock.shape == "half-sine"
    assert panel.results is not None and panel.results.shock is not None
    assert panel.shock_mass_table.rowCount() == 2
    panel.pulse_edits["peak_g"].setText("40")
    panel.pulse_edits["peak_g"].editingFinished.emit()
    _settle(qtbot, panel)
    assert window.document.model.loads.shock.peak_g == 40.0
    panel.shape_combo.setCurrentIndex(panel.shape_combo.findData("trapezoid"))
    _settle(qtbot, panel)
    pulse = window.document.model.loads.shock
    assert pulse.shape == "trapezoid" and pulse.rise_s > 0 and pulse.fall_s > 0
    qtbot.mouseClick(panel.shock_check, Qt.MouseButton.LeftButton, pos=_box(panel.shock_check))
    _settle(qtbot, panel)
    assert window.document.model.loads is None
    window.document.undo_stack.undo()
    assert window.document.model.loads.shock.shape == "trapezoid"


def test_paste_and_csv_import_replace_the_table(qtbot, window, tmp_path):
    """Rows pasted from a spreadsheet (tabs) or read from a CSV file with a header replace the
    ASD; a line with one number is refused naming the line."""
    panel = _open(qtbot, window)
    QApplication.clipboard().setText("10\t0.01\n100\t0.05\n1000\t0.01\n")
    qtbot.mouseClick(_button(panel, "loads_asd_paste"), Qt.MouseButton.LeftButton)
    _settle(qtbot, panel)
    assert window.document.model.loads.random.points == ((10.0, 0.01), (100.0, 0.05),
                                                         (1000.0, 0.01))
    csv = tmp_path / "asd.csv"
    csv.write_text("frequency_hz,asd_g2_hz\n20,0.02\n2000,0.02\n", "utf-8")
    assert panel.asd_editor.import_file(str(csv)) == ""
    _settle(qtbot, panel)
    assert window.document.model.loads.random == RandomVibration(((20, 0.02), (2000, 0.02)))
    bad = tmp_path / "bad.csv"
    bad.write_text("20,0.02\n30\n", "utf-8")
    problem = panel.asd_editor.import_file(str(bad))
    assert "line 2" in problem and "two numbers" in problem
    assert window.document.model.loads.random == RandomVibration(((20, 0.02), (2000, 0.02)))


def _box(check):
    """Where a user clicks a check box: on its box (the widget may be wider than its text)."""
    from PySide6.QtCore import QPoint

    return QPoint(8, check.height() // 2)


def _button(panel, name):
    from PySide6.QtWidgets import QPushButton

    b = panel.findChild(QPushButton, name)
    assert b is not None, name
    return b


@pytest.mark.parametrize("n", [60, 260])
def test_large_model_computed_off_the_ui_thread(qtbot, window, n):
    """Common practice (DESIGN.md section 3): a model over the panel's limit is computed in a
    worker thread (over 250 DOFs in a worker process: the eigensolver keeps the interpreter
    lock); the panel shows the results of the current model once they are in."""
    from solver import Anchor, Mass, Model, Spring

    masses = tuple(Mass(f"m{i}", float(i + 1), 0.0, 1.0 + 0.01 * i) for i in range(n))
    springs = (Spring("s0", "g", "m0", 1e6),) + tuple(
        Spring(f"s{i}", f"m{i - 1}", f"m{i}", 1e6) for i in range(1, n))
    model = Model(kind="line", masses=masses, anchors=(Anchor("g", 0, 0),), springs=springs,
                  damping=Damping("modal", ratio=0.02),
                  loads=Loads(random=RandomVibration(((10, 0.01), (30, 0.01)))))
    window.document.new(model=model)
    click_tab(qtbot, window, "Loads")
    panel = window.loads_panel
    window.document.set_element("s1", k=2e6)
    # the debounced computation starts on a timer, late on a slow machine
    qtbot.waitUntil(lambda: panel._computing or panel.results is not None, timeout=5000)
    assert panel.wait()
    ref = solver.random_response(window.document.model, window.document.model.loads.random)
    np.testing.assert_allclose(panel.results.random.acceleration_grms, ref.acceleration_grms)


@pytest.mark.parametrize("tab", [0, 1, 2])
def test_nothing_cut_off_in_the_loads_panel(qtbot, settings, tmp_path, tab):
    """Common practice (as tests/app/test_no_clipping.py): at the window's first size on a
    1600 x 1000 screen, every label, header, cell and axis title reads whole with the Loads tab
    in front, on each of its three tabs."""
    from PySide6.QtCore import QSize

    from app.main_window import MainWindow, first_size

    win = MainWindow(settings=settings, recovery_folder=tmp_path / "recovery")
    win._ask_save_changes = lambda: "discard"
    qtbot.addWidget(win)
    win.resize(*first_size(QSize(1600, 1000)))
    win.show()
    qtbot.waitExposed(win)
    qtbot.wait(50)
    try:
        panel = _open(qtbot, win)
        panel.tabs.setCurrentIndex(tab)
        qtbot.wait(100)

        def nothing_cut():
            problems = clipped_texts(win)
            assert problems == [], "\n".join(problems)

        # the tab's plots and tables are laid out on later event-loop turns (an axis widens
        # for its tick labels after it first draws them): late on a slow machine
        qtbot.waitUntil(nothing_cut, timeout=5000)
    finally:
        win.solver.shutdown()
        win.loads_panel.shutdown()
