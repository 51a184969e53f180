"""Motion keeps playing through edits; a mode animated on the canvas; readable free-response
traces."""

import numpy as np
import pytest
import scipy.linalg
from PySide6.QtCore import QPointF, Qt
from PySide6.QtWidgets import QApplication

import solver
from solver.model import Initial

from _models_for_views import K, M, td3s


def _wait(qtbot, window):
    window.solver.wait()
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model is window.document.model, timeout=8000)


def _type_k(qtbot, window, spring, text):
    window.scene.select_ids([spring])
    field = window.properties.field("k")
    field.edit.setFocus()
    field.edit.selectAll()
    qtbot.keyClicks(field.edit, text)
    qtbot.keyClick(field.edit, Qt.Key.Key_Return)


def test_edit_keeps_free_response_playing(qtbot, window):
    """common practice: changing a stiffness while the free response plays changes the motion,
    not the view: it stays on the initial-conditions view, keeps playing and its clock runs on.
    The new motion is solver.free_response of the edited model (atol 1e-8 m: the playback
    interpolates samples, cubic Hermite error ~ (w dt)^4/384)."""
    window.document.new(model=td3s())
    _wait(qtbot, window)
    panel = window.motion_panel
    panel.show_free_response()
    panel.set_loop(False)
    qtbot.mouseClick(panel.play_button, Qt.MouseButton.LeftButton)
    assert panel.is_playing()
    qtbot.wait(200)
    _type_k(qtbot, window, "k2", "1600")
    assert window.document.model.element("k2").k == 1600
    _wait(qtbot, window)
    assert panel.view_kind() == "free" and panel.is_playing()
    t0 = panel.current_time()
    # the clock runs on at the next animation tick (late on a slow machine)
    qtbot.waitUntil(lambda: panel.current_time() > t0, timeout=5000)
    qtbot.mouseClick(panel.play_button, Qt.MouseButton.LeftButton)   # pause to compare
    t = panel.current_time()
    ref = solver.free_response(window.document.model, [t]).node_displacement(0)
    shown = panel.displayed_positions()
    assert shown["m1"]["x"] == pytest.approx(ref["m1"]["x"], abs=1e-8)


def test_edit_keeps_the_animated_mode(qtbot, window):
    """common practice: the mode being watched stays on screen (mode 2 of TD-3S, still playing,
    its animation running on without a jump back to the start) after an edit of another
    element."""
    window.document.new(model=td3s())
    _wait(qtbot, window)
    table = window.modes_table.view
    rect = table.visualRect(table.model().index(1, 0))
    qtbot.mouseClick(table.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    panel = window.motion_panel
    qtbot.mouseClick(panel.play_button, Qt.MouseButton.LeftButton)
    qtbot.wait(300)
    qtbot.waitUntil(lambda: panel.current_time() > 0, timeout=5000)
    before = panel.current_time()
    _type_k(qtbot, window, "k1", "900")
    _wait(qtbot, window)
    assert panel.view_kind() == "mode" and panel.current_mode() == 2 and panel.is_playing()
    assert panel.current_time() >= before          # the animation did not jump back to its start
    panel.pause()


def test_mode_animated_on_the_canvas(qtbot, window):
    """TD-3S (REFERENCES.md 2, Rao ch. 5): mode 2 of two equal masses between three equal springs
    has the masses in opposition with equal amplitude (scipy.linalg.eigh(K, M) gives the shape;
    rtol 1e-6). Key C animates it on the main canvas: each mass is drawn displaced by the shape
    times one magnification, the largest by a third of the node spacing (at least 12 screen px),
    while the model and the undo history stay untouched; C again puts the drawing back."""
    model = td3s(x0=0)
    window.document.new(model=model)
    _wait(qtbot, window)
    window.view.fit()
    panel = window.motion_panel
    panel.show_mode(2)
    qtbot.keyClick(window, Qt.Key.Key_C)
    assert panel.on_canvas() and window.act_canvas_motion.isChecked()
    panel.pause()
    panel._mode_phase_t = 0.0                  # cos = 1: the full shape
    panel.step()
    panel._mode_phase_t = 0.0
    panel.step()
    Kmat = np.array([[2 * K, -K], [-K, 2 * K]])
    _w2, vecs = scipy.linalg.eigh(Kmat, np.diag([M, M]))
    ref = vecs[:, 1] / np.abs(vecs[:, 1]).max()
    cm = window.canvas_motion
    off = np.array([cm.drawn_offset("m1").x(), cm.drawn_offset("m2").x()])
    c = np.cos(2 * np.pi * panel.speed.value() * panel.current_time())
    drawn = off / np.abs(off).max()
    np.testing.assert_allclose(np.abs(drawn), np.abs(ref), rtol=1e-6)
    assert np.sign(drawn[0]) != np.sign(drawn[1])
    assert np.abs(off).max() == pytest.approx(0.33 * cm.spacing() * abs(c), rel=1e-6)
    assert np.abs(off).max() * window.view.transform().m11() >= 12
    # springs follow the drawn masses
    link = window.scene.links["k2"]
    assert link.endpoints()[0].x() == pytest.approx(
        window.scene.nodes["m1"].shown_pos().x() + window.scene.nodes["m1"].half_size(), abs=1e-6)
    assert window.document.model == model and window.document.undo_stack.count() == 0
    assert window.canvas_motion.caption.isVisible()
    assert "Mode 2" in window.canvas_motion.caption.text()
    qtbot.keyClick(window, Qt.Key.Key_C)
    assert not panel.on_canvas()
    assert cm.drawn_offset("m1") == QPointF(0, 0) and not cm.caption.isVisible()


def test_free_response_traces_are_readable(qtbot, window):
    """common practice: a time trace needs room, units on both axes and a key that does not hide
    the curves. At the window's size the trace plot is at least 150 px high, its axes say
    'time (s)' and 'displacement (m)' (pyqtgraph may prefix the unit), no legend box lies on the
    plotted points, and each traced mass is named beside the plot in its curve's colour."""
    model = td3s().with_changes(put=[Initial("m2", (("x", -0.005),))])
    window.document.new(model=model)
    _wait(qtbot, window)
    panel = window.motion_panel
    qtbot.keyClick(window, Qt.Key.Key_I)
    assert panel.view_kind() == "free"
    QApplication.processEvents()
    plot = panel.plot
    assert plot.height() >= 150
    pi = plot.getPlotItem()
    assert pi.getAxis("bottom").labelText == "time" and pi.getAxis("bottom").labelUnits == "s"
    assert pi.getAxis("left").labelText == "displacement" and pi.getAxis("left").labelUnits == "m"
    legend = pi.legend
    if legend is not None:
        box = legend.sceneBoundingRect()
        for curve in pi.listDataItems():
            xs, ys = curve.getData()
            for x, y in zip(xs[::10], ys[::10]):
                assert not box.contains(pi.vb.mapViewToScene(QPointF(x, y)))
    colours = panel.trace_colours()
    assert set(colours) == {("m1", "x"), ("m2", "x")}
    for i in range(panel.trace_list.count()):
        item = panel.trace_list.item(i)
        dof = item.data(Qt.ItemDataRole.UserRole)
        icon = item.icon().pixmap(18, 10).toImage()
        assert icon.pixelColor(9, 5).rgb() == colours[dof].rgb()
