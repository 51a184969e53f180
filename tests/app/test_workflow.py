"""The main loop through the real window: solve, watch a mode, push a mass, play it, export."""

import numpy as np
import pytest
from PySide6.QtCore import QPoint, Qt

import solver


def _wait_results(qtbot, window, model):
    qtbot.waitUntil(lambda: window.analysis is not None and window.analysis.model == model,
                    timeout=5000)


def test_drag_in_motion_view_sets_initial_condition_as_one_undo_entry(qtbot, window,
                                                                      two_mass_model):
    """common practice: pushing a mass in the motion view and letting go sets its initial
    displacement; it is one undo entry and keeps any initial velocity already set."""
    model = two_mass_model.with_changes(put=[solver.Initial("m2", velocity=(("x", 0.3),))])
    window.document.apply(model, "start")
    _wait_results(qtbot, window, window.document.model)
    start_model = window.document.model
    panel = window.motion_panel
    panel.show_free_response()
    view = panel.view
    qtbot.waitUntil(lambda: view.mass_screen_point("m2") is not None, timeout=3000)
    a = view.mass_screen_point("m2").toPoint()
    b = a + QPoint(25, 0)
    qtbot.mousePress(view, Qt.MouseButton.LeftButton, pos=a)
    qtbot.mouseMove(view, a + QPoint(8, 0))
    qtbot.mouseMove(view, b)
    qtbot.mouseRelease(view, Qt.MouseButton.LeftButton, pos=b)
    ic = window.document.model.initial_of("m2")
    assert ic is not None
    assert ic.get("displacement", "x") > 0
    assert ic.get("velocity", "x") == pytest.approx(0.3)
    window.document.undo_stack.undo()
    assert window.document.model == start_model


def test_modes_table_follows_an_edit(qtbot, window, two_mass_model):
    """scipy.linalg.eigh(K, M) (REFERENCES.md section 10): after a stiffness edit the modes
    table shows the frequencies of the new model. rtol 1e-4 (table text precision)."""
    window.document.apply(two_mass_model, "start")
    _wait_results(qtbot, window, window.document.model)
    edited = two_mass_model.with_changes(put=[solver.Spring("s2", "m1", "m2", 4000.0)])
    window.document.apply(edited, "stiffer s2")
    _wait_results(qtbot, window, edited)
    K = np.array([[1000.0 + 4000.0, -4000.0], [-4000.0, 4000.0]])
    M = np.diag([2.0, 1.0])
    import scipy.linalg

    expected = np.sqrt(scipy.linalg.eigh(K, M, eigvals_only=True)) / (2 * np.pi)
    table = window.modes_table.view.model()
    assert table.rowCount() == 2
    shown = [float(table.index(r, 1).data()) for r in range(table.rowCount())]
    np.testing.assert_allclose(shown, expected, rtol=1e-4)


def test_slow_solve_marks_results_out_of_date_until_they_arrive(qtbot, window, two_mass_model):
    """common practice: results older than the model are visibly marked while a solve is
    pending (past STALE_DELAY_MS), and the mark goes when the new results are shown; the values
    then match the edited model (eigenvalues of M^-1/2 K M^-1/2 by numpy.linalg.eigvalsh, rtol 1e-4)."""
    from app.main_window import STALE_DELAY_MS

    window.document.apply(two_mass_model, "start")
    _wait_results(qtbot, window, window.document.model)
    assert not window.modes_table.is_stale()
    # a solve that takes its time: long enough that a slow machine's late timers still mark
    # the results first (solver.wait() below starts it at once)
    window.solver._timer.setInterval(STALE_DELAY_MS + 10000)
    edited = two_mass_model.with_changes(put=[solver.Spring("s2", "m1", "m2", 4000.0)])
    window.document.apply(edited, "stiffer s2")
    qtbot.waitUntil(window.modes_table.is_stale, timeout=STALE_DELAY_MS + 8000)
    assert "out of date" in window.pending_label.text()
    window.solver.wait()
    assert not window.modes_table.is_stale() and window.pending_label.text() == ""
    _wait_results(qtbot, window, edited)
    K = np.array([[5000.0, -4000.0], [-4000.0, 4000.0]])
    M = np.diag([2.0, 1.0])
    expected = np.sqrt(np.linalg.eigvalsh(np.linalg.inv(np.sqrt(M)) @ K @ np.linalg.inv(np.sqrt(M))))
    shown = [r["frequency_hz"] * 2 * np.pi for r in window.modes_table.rows()]
    np.testing.assert_allclose(shown, expected, rtol=1e-4)


def test_window_carries_the_caution_and_a_quick_guide(qtbot, window):
    """common practice: a lumped model is an approximation to be confirmed by test or detailed
    analysis, and local codes and licensed practice govern; the window says so at all times and
    the guide (F1) lists the tools with their keys, without a modal dialog."""
    from PySide6.QtWidgets import QLabel

    label = window.findChild(QLabel, "caution_label")
    assert label is not None and label.isVisible()
    assert "licensed engineering" in label.toolTip()
    qtbot.keyClick(window, Qt.Key_F1)
    guide = window._guide
    assert guide.isVisible() and not guide.isModal()
    text = guide.toPlainText()
    for key in ("Place mass", "Connect spring", "approximation"):
        assert key in text
