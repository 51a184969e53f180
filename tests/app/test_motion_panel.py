import os
import time

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import pytest
from PySide6.QtCore import QPoint, Qt

import solver
from app.docks.motion_panel import MotionPanel

from _models_for_views import td3s


@pytest.fixture
def panel(qtbot):
    p = MotionPanel()
    qtbot.addWidget(p)
    p.resize(800, 600)
    p.show()
    qtbot.waitExposed(p)
    return p


def test_displayed_free_response_matches_td3s_reference(panel):
    """TD-3S (REFERENCES.md 2, Rao ch. 5): x0 = [0.01, 0], v0 = 0 gives at t = 0.1 s
    x1,2 = (-6.822950e-3, 2.661482e-3) m; exact modal superposition. atol 1e-9 m."""
    panel.set_analysis(solver.analyse(td3s()))
    panel.show_free_response()
    panel.set_time(0.1)
    assert panel.current_time() == pytest.approx(0.1)
    shown = panel.displayed_positions()
    assert shown["m1"]["x"] == pytest.approx(-6.822950e-3, abs=1e-9)
    assert shown["m2"]["x"] == pytest.approx(2.661482e-3, abs=1e-9)


def test_displayed_positions_match_solver_at_many_times(panel):
    """math: the played-back motion equals solver.free_response at the shown time (the timer
    interpolates precomputed samples; cubic Hermite error ~ (w dt)^4/384). atol 1e-8 m."""
    model = td3s()
    panel.set_analysis(solver.analyse(model))
    panel.show_free_response()
    panel.set_loop(False)
    for t in (0.0, 0.0371, 0.25, 1.3, 2.71):
        panel.set_time(t)
        ref = solver.free_response(model, [panel.current_time()]).node_displacement(0)
        shown = panel.displayed_positions()
        for mid in ("m1", "m2"):
            assert shown[mid]["x"] == pytest.approx(ref[mid]["x"], abs=1e-8)


def test_results_arriving_in_mode_view_are_played_when_free_view_opens(panel):
    """math: the free response is sampled only when its view is shown; results that arrived
    while the mode view was up (a slider drag) are the ones played, with their traces, equal to
    solver.free_response of the newest model at the shown time. atol 1e-8 m."""
    old = td3s()
    panel.set_analysis(solver.analyse(old))
    panel.show_mode(1)
    new = solver.with_value(old, "k2", 3.0 * old.element("k2").k)
    assert new != old
    panel.set_analysis(solver.analyse(new))
    panel.show_free_response()
    panel.set_loop(False)
    for t in (0.0, 0.0533, 0.4):
        panel.set_time(t)
        ref = solver.free_response(new, [t]).node_displacement(0)
        shown = panel.displayed_positions()
        for mid in ("m1", "m2"):
            assert shown[mid]["x"] == pytest.approx(ref[mid]["x"], abs=1e-8)
    assert panel._curves, "traces drawn once the free-response view is open"


def test_playing_advances_time_with_time_scale(panel, qtbot):
    """common practice: play runs model time at wall time x time scale; pause stops it."""
    panel.set_analysis(solver.analyse(td3s()))
    panel.show_free_response()
    panel.set_time_scale(0.1)
    start = time.monotonic()
    panel.play()
    qtbot.waitUntil(lambda: panel.current_time() > 0, timeout=5000)
    qtbot.wait(300)
    panel.pause()
    wall = time.monotonic() - start
    t = panel.current_time()
    # model time never runs ahead of wall time x 0.1 (the wall time measured here, so a slow
    # machine's late ticks cannot make it fail; without the time scale it would be ~ wall)
    assert 0.0 < t <= 0.1 * wall + 1e-9
    qtbot.wait(100)
    assert panel.current_time() == t
    panel.step()
    assert panel.current_time() == pytest.approx(t + 0.1 / 30)


def test_mode_view_shows_the_mode_shape(panel):
    """TD-3S (REFERENCES.md 2): mode 2 shape is [1, -1]; at phase 0 the view shows it exactly."""
    a = solver.analyse(td3s())
    panel.set_analysis(a)
    panel.show_mode(2)
    shown = panel.displayed_positions()
    assert shown["m1"]["x"] == pytest.approx(-shown["m2"]["x"])
    assert shown == a.modal.node_displacement(2)


def test_drag_mass_requests_initial_conditions(panel, qtbot):
    """common practice: dragging a mass and letting go sets its initial displacement (one
    request on release), along the model's axis only, sized by the drawing's magnification."""
    panel.set_analysis(solver.analyse(td3s(x0=0.0)))
    panel.show_free_response()
    view = panel.view
    start = view.mass_screen_point("m2").toPoint()
    end = start + QPoint(30, 17)
    with qtbot.waitSignal(panel.initial_conditions_requested, timeout=1000) as blocker:
        qtbot.mousePress(view, Qt.MouseButton.LeftButton, pos=start)
        qtbot.mouseMove(view, start + QPoint(10, 5))
        qtbot.mouseMove(view, end)
        qtbot.mouseRelease(view, Qt.MouseButton.LeftButton, pos=end)
    (request,) = blocker.args
    assert list(request) == ["m2"] and list(request["m2"]) == ["x"]
    expected = 30 / view.layout_().px_per_m / panel.magnification_value()
    assert request["m2"]["x"] == pytest.approx(expected, rel=1e-9)
