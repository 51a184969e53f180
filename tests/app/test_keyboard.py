"""The main loop without a mouse: draw, read the modes, watch mode 2, set a push, play, undo."""

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication

import solver
from app.canvas import Mode


def _keys(qtbot, widget, *keys):
    for k in keys:
        mod = Qt.NoModifier
        if isinstance(k, tuple):
            k, mod = k
        qtbot.keyClick(QApplication.focusWidget() or widget, k, mod)


def _draw_chain_by_keys(qtbot, window):
    """Anchor, three masses, anchor four grid steps apart; springs joined node to node by Tab
    and Enter. Ends in the select tool."""
    window.document.new("line")
    window.view.setFocus()
    grid = window.scene.mapper.grid_m
    _keys(qtbot, window.view, Qt.Key_A, Qt.Key_Return, Qt.Key_Return)    # show, then place
    _keys(qtbot, window.view, Qt.Key_M)
    for _ in range(3):
        _keys(qtbot, window.view, *[Qt.Key_Right] * 4, Qt.Key_Return)
    _keys(qtbot, window.view, Qt.Key_A, *[Qt.Key_Right] * 4, Qt.Key_Return)
    _keys(qtbot, window.view, Qt.Key_K, Qt.Key_Tab)    # from the last anchor round to the first
    for _ in range(4):
        _keys(qtbot, window.view, Qt.Key_Return, Qt.Key_Tab, Qt.Key_Return)
    _keys(qtbot, window.view, Qt.Key_Escape, Qt.Key_Escape)   # select tool, nothing selected
    assert window.scene.mode == Mode.SELECT and window.scene.selected_ids() == []
    return grid


def test_fixture_drawn_by_keyboard_matches_closed_form(qtbot, window):
    """Rao, Mechanical Vibrations, 5.x (mem): three equal masses between walls on four equal
    springs have w^2 = (2 - sqrt 2, 2, 2 + sqrt 2) k/m. The keyboard-drawn model is that chain
    (nodes 4 grid steps apart, springs in order) and the modes table shows those frequencies;
    rtol 1e-9."""
    grid = _draw_chain_by_keys(qtbot, window)
    model = window.document.model
    xs = sorted(n.x for n in model.masses + model.anchors)
    np.testing.assert_allclose(np.diff(xs), 4 * grid, rtol=1e-9)
    assert len(model.springs) == 4 and len(model.anchors) == 2
    order = {n.id: n.x for n in model.masses + model.anchors}
    pairs = sorted(tuple(sorted((order[s.a], order[s.b]))) for s in model.springs)
    assert all(abs(b - a - 4 * grid) < 1e-9 for a, b in pairs)   # each joins neighbours
    window.solver.wait()
    k, m = model.springs[0].k, model.masses[0].mass
    expected = np.sqrt(np.array([2 - np.sqrt(2), 2, 2 + np.sqrt(2)]) * k / m) / (2 * np.pi)
    shown = [r["frequency_hz"] for r in window.modes_table.rows()]
    np.testing.assert_allclose(shown, expected, rtol=1e-9)


def test_mode_push_play_by_keys(qtbot, window):
    """math: ']' selects mode 2 and the motion view animates it; a typed initial displacement
    and 'I' then 'P' play the free response, whose shown positions equal
    solver.free_response at the shown time (atol 1e-8 m)."""
    _draw_chain_by_keys(qtbot, window)
    window.solver.wait()
    window.view.setFocus()
    _keys(qtbot, window.view, Qt.Key_BracketRight)
    assert window.modes_table.selected_mode() == 2
    assert window.motion_panel.current_mode() == 2
    # select the middle mass by Tab (reading order: anchor, m, m, m, anchor)
    _keys(qtbot, window.view, Qt.Key_Escape, Qt.Key_Tab, Qt.Key_Tab, Qt.Key_Tab)
    (mid,) = window.scene.selected_ids()
    assert mid in {m.id for m in window.document.model.masses}
    field = window.properties.field("init_x")
    field.edit.setFocus()
    field.edit.selectAll()
    qtbot.keyClicks(field.edit, "4 mm")
    qtbot.keyClick(field.edit, Qt.Key_Return)
    assert window.document.model.initial_of(mid).get("displacement", "x") == pytest.approx(0.004)
    window.solver.wait()
    window.view.setFocus()
    _keys(qtbot, window.view, Qt.Key_I, Qt.Key_P)
    panel = window.motion_panel
    assert panel.view_kind() == "free" and panel.is_playing()
    qtbot.wait(150)
    qtbot.waitUntil(lambda: panel.current_time() > 0, timeout=5000)   # a tick came
    _keys(qtbot, window.view, Qt.Key_P)
    assert not panel.is_playing()
    t = panel.current_time()
    assert t > 0
    ref = solver.free_response(window.document.model, [t]).node_displacement(0)
    for m in window.document.model.masses:
        assert panel.displayed_positions()[m.id]["x"] == pytest.approx(ref[m.id]["x"], abs=1e-8)


def test_arrow_nudge_is_one_undo_entry_and_esc_cancels_a_connection(qtbot, window):
    """common practice (Qt undo framework): a nudge by an arrow key is one undo entry moving the
    selection one grid step (Shift: five); Esc during a keyboard connection adds nothing."""
    grid = _draw_chain_by_keys(qtbot, window)
    window.view.setFocus()
    _keys(qtbot, window.view, Qt.Key_Tab, Qt.Key_Tab)
    (eid,) = window.scene.selected_ids()
    assert eid in {m.id for m in window.document.model.masses}
    before = window.document.model
    count = window.document.undo_stack.count()
    _keys(qtbot, window.view, Qt.Key_Up, (Qt.Key_Right, Qt.ShiftModifier))
    el = window.document.model.element(eid)
    assert (el.x, el.y) == pytest.approx((before.element(eid).x + 5 * grid,
                                          before.element(eid).y + grid))
    assert window.document.undo_stack.count() == count + 2
    window.document.undo_stack.undo()
    window.document.undo_stack.undo()
    assert window.document.model == before
    n_springs = len(before.springs)
    _keys(qtbot, window.view, Qt.Key_K, Qt.Key_Tab, Qt.Key_Return, Qt.Key_Tab, Qt.Key_Escape)
    assert len(window.document.model.springs) == n_springs
    assert window.scene.mode == Mode.CONNECT_SPRING     # first Esc only cancels
    _keys(qtbot, window.view, Qt.Key_Escape)
    assert window.scene.mode == Mode.SELECT


def test_click_during_a_keyboard_connection_leaves_no_stray_preview(qtbot, window, two_mass_model):
    """common practice: one connection gesture at a time; a mouse press while a keyboard
    connection is open replaces it, and Esc leaves no rubber line behind."""
    from PySide6.QtWidgets import QGraphicsLineItem

    window.document.new("line", two_mass_model)
    scene = window.scene
    scene.set_mode(Mode.CONNECT_SPRING)
    window.view.setFocus()
    scene._show_cursor(scene.nodes["m1"].pos())
    _keys(qtbot, window.view, Qt.Key_Return)
    vp = window.view.viewport()
    p = window.view.mapFromScene(scene.nodes["m2"].pos())
    qtbot.mousePress(vp, Qt.LeftButton, pos=p)
    qtbot.mouseRelease(vp, Qt.LeftButton, pos=p)
    _keys(qtbot, window.view, Qt.Key_Escape)
    assert [i for i in scene.items() if type(i) is QGraphicsLineItem] == []


def test_light_dark_switch_recolours_every_canvas_label(qtbot, window, two_mass_model):
    """common practice: a palette change restyles all items, not only the ones edited after."""
    from PySide6.QtGui import QColor, QPalette

    from app.drawing.style import DARK

    window.document.new("line", two_mass_model)
    scene = window.scene
    app = QApplication.instance()
    old = QPalette(app.palette())
    pal = QPalette(old)
    pal.setColor(QPalette.ColorRole.Window, QColor("#202020"))
    app.setPalette(pal)
    try:
        qtbot.wait(20)

        def restyled():
            for eid in ("m1", "m2"):
                assert scene.nodes[eid].label_item.brush().color().name() == DARK.label_hex

        qtbot.waitUntil(restyled, timeout=5000)   # change events can come a turn later
    finally:
        app.setPalette(old)
