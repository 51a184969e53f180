"""Canvas: build a model with real mouse gestures and check it against the solver."""

import numpy as np
from PySide6.QtCore import QPoint, Qt

import solver
from app.canvas import Mode


def _vp(window, x_m, y_m) -> QPoint:
    scene = window.scene
    return window.view.mapFromScene(scene.mapper.to_scene(x_m, y_m))


def _click(qtbot, window, x, y):
    qtbot.mouseClick(window.view.viewport(), Qt.LeftButton, pos=_vp(window, x, y))


def _drag(qtbot, window, a, b):
    vp = window.view.viewport()
    qtbot.mousePress(vp, Qt.LeftButton, pos=_vp(window, *a))
    qtbot.mouseMove(vp, _vp(window, (a[0] + b[0]) / 2, (a[1] + b[1]) / 2))
    qtbot.mouseMove(vp, _vp(window, *b))
    qtbot.mouseRelease(vp, Qt.LeftButton, pos=_vp(window, *b))


def _build_chain(qtbot, window):
    """Anchors at x = 0 and 0.8 m, masses at 0.2, 0.4, 0.6 m, four springs in a chain."""
    window.document.new("line")
    window.view.resetTransform()
    window.view.centerOn(window.scene.mapper.to_scene(0.4, 0.0))
    qtbot.keyClick(window.view, Qt.Key_A)
    assert window.scene.mode == Mode.PLACE_ANCHOR
    for x in (0.0, 0.8):
        _click(qtbot, window, x, 0.0)
    qtbot.keyClick(window.view, Qt.Key_M)
    for x in (0.2, 0.4, 0.6):
        _click(qtbot, window, x, 0.0)
    qtbot.keyClick(window.view, Qt.Key_K)
    for a, b in ((0.0, 0.2), (0.2, 0.4), (0.4, 0.6), (0.6, 0.8)):
        _drag(qtbot, window, (a, 0.0), (b, 0.0))
    qtbot.keyClick(window.view, Qt.Key_Escape)
    assert window.scene.mode == Mode.SELECT


def test_three_masses_four_springs_by_mouse_match_solver(qtbot, window):
    """Math: the fixed-fixed chain of three equal masses m and four equal springs k has
    omega^2 = (k/m)(2 - sqrt 2), 2k/m, (k/m)(2 + sqrt 2) (e.g. Rao, Mechanical Vibrations, 4-dof
    chain examples); and the modes table shows what solver.modes gives for the same model."""
    _build_chain(qtbot, window)
    model = window.document.model
    assert [(m.x, m.y) for m in model.masses] == [(0.2, 0.0), (0.4, 0.0), (0.6, 0.0)]
    assert [(a.x, a.y) for a in model.anchors] == [(0.0, 0.0), (0.8, 0.0)]
    assert [(s.a, s.b) for s in model.springs] == [("g1", "m1"), ("m1", "m2"), ("m2", "m3"),
                                                  ("m3", "g2")]
    assert window.document.undo_stack.count() == 9
    assert window.solver.wait()
    expected = solver.modes(model).frequencies_hz
    k, m = model.springs[0].k, model.masses[0].mass
    analytic = np.sqrt(np.array([2 - np.sqrt(2), 2, 2 + np.sqrt(2)]) * k / m) / (2 * np.pi)
    np.testing.assert_allclose(expected, analytic, rtol=1e-9)
    rows = window.modes_table.rows()
    np.testing.assert_allclose([r["frequency_hz"] for r in rows], expected, rtol=1e-12)


def test_drag_move_is_one_undo_entry(qtbot, window):
    """Common practice (Qt undo framework): one drag is one history entry; undo restores it."""
    _build_chain(qtbot, window)
    start = window.document.model
    count = window.document.undo_stack.count()
    _drag(qtbot, window, (0.4, 0.0), (0.4, 0.15))
    moved = window.document.model.element("m2")
    assert (moved.x, moved.y) == (0.4, 0.15)
    assert window.document.undo_stack.count() == count + 1
    window.document.undo_stack.undo()
    assert window.document.model == start


def test_rubber_band_delete_and_paste(qtbot, window):
    """Common practice: area select then Delete removes the masses and their springs in one step;
    copy/paste inserts copies under fresh ids."""
    _build_chain(qtbot, window)
    start = window.document.model
    _drag(qtbot, window, (0.3, 0.1), (0.5, -0.1))  # encloses m2 only
    assert window.scene.selected_ids() == ["m2"]
    window.act_delete.trigger()
    model = window.document.model
    assert "m2" not in model.ids()
    assert [s.id for s in model.springs] == ["s1", "s4"]
    window.document.undo_stack.undo()
    assert window.document.model == start
    window.scene.select_ids(["m1", "m2", "s2"])
    window.scene.copy_selection()
    new_ids = window.scene.paste()
    model = window.document.model
    assert len(new_ids) == 3 and len(model.masses) == 5 and len(model.springs) == 5
    pasted = model.springs[-1]
    assert {pasted.a, pasted.b} == set(new_ids[:2])


def test_connect_released_on_empty_canvas_adds_nothing(qtbot, window):
    """Common practice: a gesture that does not end on a node is cancelled, model unchanged."""
    _build_chain(qtbot, window)
    before = window.document.model
    qtbot.keyClick(window.view, Qt.Key_D)
    _drag(qtbot, window, (0.2, 0.0), (0.3, 0.3))
    assert window.document.model is before
    assert "No dashpot added" in window.statusBar().currentMessage()
    _drag(qtbot, window, (0.2, 0.0), (0.4, 0.0))
    assert [(d.a, d.b) for d in window.document.model.dampers] == [("m1", "m2")]
