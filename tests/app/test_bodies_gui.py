"""Rigid bodies on mounts and gear stages, driven through the real canvas and Properties panel."""

import math

import pytest
from PySide6.QtCore import QPoint, Qt
from test_no_clipping import default_window  # noqa: F401 (a fixture)

from app.canvas import Mode
from solver.model import Anchor, Mass, Model, Spring

#: NIST SP 811 (appendix B), exact: 1 lb = 0.45359237 kg, 1 in = 0.0254 m.
LB_IN2 = 0.45359237 * 0.0254 ** 2        # = 2.9264e-4 kg m^2 (SP 811 lists 2.926397e-4)
LB_FT2 = 0.45359237 * 0.3048 ** 2        # = 4.214011e-2 kg m^2


def _vp(window, x_m, y_m) -> QPoint:
    return window.view.mapFromScene(window.scene.mapper.to_scene(x_m, y_m))


def _click(qtbot, window, x, y):
    qtbot.mouseClick(window.view.viewport(), Qt.LeftButton, pos=_vp(window, x, y))


def _drag(qtbot, window, a, b):
    vp = window.view.viewport()
    qtbot.mousePress(vp, Qt.LeftButton, pos=_vp(window, *a))
    qtbot.mouseMove(vp, _vp(window, (a[0] + b[0]) / 2, (a[1] + b[1]) / 2))
    qtbot.mouseMove(vp, _vp(window, *b))
    qtbot.mouseRelease(vp, Qt.LeftButton, pos=_vp(window, *b))


def _type(qtbot, field, text):
    field.edit.setFocus()
    field.edit.selectAll()
    if not text:
        qtbot.keyClick(field.edit, Qt.Key_Backspace)
    qtbot.keyClicks(field.edit, text)
    qtbot.keyClick(field.edit, Qt.Key_Return)


def _skid():
    """A 400 kg skid (60 kg m^2) on two mounts 0.6 m either side of its centre, 0.2 m below."""
    return Model(kind="planar", name="skid",
                 masses=(Mass("m1", 0.0, 0.5, 400.0, label="Skid", inertia=60.0),),
                 anchors=(Anchor("g1", -0.6, 0.0), Anchor("g2", 0.6, 0.0)),
                 springs=(Spring("s1", "g1", "m1", 2e5, k_t=5e4, b_offset=(-0.6, -0.2)),
                          Spring("s2", "g2", "m1", 2e5, k_t=5e4, b_offset=(0.6, -0.2))))


def _open(window, model):
    window.document.new(model=model)
    window.view.resetTransform()
    window.view.centerOn(window.scene.mapper.to_scene(0.0, 0.3))


def test_body_by_mouse_inertia_typed_with_units(qtbot, window):
    """NIST SP 811 conversion factors: 1 lb in^2 = 2.9264e-4 kg m^2, 1 lb ft^2 = 4.2140e-2
    kg m^2 (exact from 1 lb = 0.45359237 kg, 1 in = 0.0254 m). A body placed by mouse, its
    inertia typed: 2.5 kg m^2, then 1000 lb in^2, then 10 lb ft^2; one undo step each."""
    window.document.new("planar")
    window.view.resetTransform()
    window.view.centerOn(0, 0)
    qtbot.keyClick(window.view, Qt.Key_B)
    assert window.scene.mode == Mode.PLACE_BODY
    _click(qtbot, window, 0.0, 0.0)
    model = window.document.model
    assert len(model.masses) == 1 and model.masses[0].inertia > 0
    body = model.masses[0].id
    assert window.scene.selected_ids() == [body]
    panel = window.properties
    count = window.document.undo_stack.count()
    _type(qtbot, panel.field("inertia"), "2.5 kg m^2")
    assert window.document.model.element(body).inertia == pytest.approx(2.5, rel=1e-12)
    _type(qtbot, panel.field("inertia"), "1000 lb in^2")
    assert window.document.model.element(body).inertia == pytest.approx(1000 * LB_IN2,
                                                                        rel=1e-12)
    assert 1000 * LB_IN2 == pytest.approx(0.29264, rel=1e-4)
    _type(qtbot, panel.field("inertia"), "10 lb ft^2")
    assert window.document.model.element(body).inertia == pytest.approx(10 * LB_FT2, rel=1e-12)
    assert window.document.undo_stack.count() == count + 3
    window.document.undo_stack.undo()
    assert window.document.model.element(body).inertia == pytest.approx(1000 * LB_IN2,
                                                                        rel=1e-12)


def test_refused_inertia_values_explained_in_place(qtbot, window):
    """Common practice: a rotary inertia cannot be negative; a typed mass is not an inertia.
    Refused in place, the model unchanged, no undo entry."""
    _open(window, _skid())
    window.scene.select_ids(["m1"])
    panel = window.properties
    before = window.document.model
    for text, reason in (("-3 kg m^2", "positive"), ("12 kg", "inertia")):
        field = panel.field("inertia")
        _type(qtbot, field, text)
        assert window.document.model is before
        assert reason in field.error, field.error
        assert not field.error_label.isHidden()
    assert window.document.undo_stack.count() == 0


def test_line_model_refuses_a_body(qtbot, window):
    """DESIGN.md model kinds: a rotary inertia of a point in a line model means nothing; a
    planar model with a body turned into a line model is refused with the reason, in place."""
    _open(window, Model(kind="planar", masses=(Mass("m1", 0.0, 0.5, 4.0, inertia=0.3),),
                        anchors=(Anchor("g1", 0.0, 0.0),),
                        springs=(Spring("s1", "g1", "m1", 1e4),)))
    window.scene.select_ids([])
    panel = window.properties
    before = window.document.model
    combo = panel.widget("kind")
    combo.setCurrentIndex(combo.findData("line"))
    assert window.document.model is before
    assert window.document.undo_stack.count() == 0
    assert "inertia" in panel._kind_error.text() and not panel._kind_error.isHidden()
    assert panel.widget("kind").currentData() == "planar"
    # a line model's mass offers no inertia to type
    window.document.new("line")
    window.document.add_mass(0.0, 0.0)
    window.scene.select_ids(["m1"])
    assert "inertia" not in panel._fields


def test_offsets_edited_in_length_units(qtbot, window):
    """NIST SP 811: 1 in = 0.0254 m exact. The mount of spring s1 moved to x = -20 in, one
    undo step, and the canvas ring follows."""
    _open(window, _skid())
    window.scene.select_ids(["s1"])
    panel = window.properties
    assert "a_offset_x" not in panel._fields          # end a is an anchor: no offset
    _type(qtbot, panel.field("b_offset_x"), "-20 in")
    assert window.document.model.element("s1").b_offset == pytest.approx((-0.508, -0.2),
                                                                          rel=1e-12)
    assert window.document.undo_stack.count() == 1
    ring_offsets = set(window.scene.nodes["m1"].mounts)
    assert (-0.508, -0.2) in ring_offsets and (-0.6, -0.2) not in ring_offsets
    # the attachment point put on the spring's anchor (-0.6, 0): no length, refused in place
    _type(qtbot, panel.field("b_offset_x"), "-0.6 m")
    before = window.document.model
    _type(qtbot, panel.field("b_offset_y"), "-0.5 m")
    assert window.document.model is before
    assert "same point" in panel.field("b_offset_y").error
    assert window.document.undo_stack.count() == 2


def test_spring_attached_at_a_point_of_the_body_by_dragging(qtbot, window):
    """Common practice (drawing a mount): a spring dragged from an anchor to a point of the
    body attaches there, on the grid, measured from the body's centre."""
    _open(window, _skid())
    model = window.document.model
    window.scene.set_mode(Mode.CONNECT_SPRING)
    g = window.scene.mapper.grid_m
    window.document.add_anchor(0.0, -0.5)
    target = (0.2 + 0.2 * g, 0.5 - 0.2 + 0.3 * g)     # off the grid: snapped
    _drag(qtbot, window, (0.0, -0.5), target)
    model = window.document.model
    assert len(model.springs) == 3
    s = model.springs[-1]
    assert (s.a, s.b) == ("g3", "m1")
    assert s.b_offset == pytest.approx((0.2, -0.2), abs=1e-9)
    assert (0.2, -0.2) in window.scene.nodes["m1"].mounts
    link = window.scene.links[s.id]
    _p1, p2 = link.endpoints()
    ring = window.scene.nodes["m1"].attach_scene_point((0.2, -0.2))
    assert (p2 - ring).manhattanLength() < 1e-6
    # a second spring started on that ring shares the mount point exactly
    window.document.add_anchor(0.6, -0.5)
    _drag(qtbot, window, (0.2, 0.3), (0.6, -0.5))
    s2 = window.document.model.springs[-1]
    assert s2.a == "m1" and s2.a_offset == (0.2, -0.2)


def test_mount_point_dragged_then_undone(qtbot, window):
    """Common practice: moving an isolator moves every element attached there; one drag is
    one undo step, and undo puts it back."""
    _open(window, _skid())
    window.scene.set_mode(Mode.SELECT)
    start = window.document.model
    vp = window.view.viewport()
    qtbot.mousePress(vp, Qt.LeftButton, pos=_vp(window, 0.6, 0.3))
    qtbot.mouseMove(vp, _vp(window, 0.55, 0.3))
    qtbot.mouseMove(vp, _vp(window, 0.5, 0.3))
    qtbot.mouseRelease(vp, Qt.LeftButton, pos=_vp(window, 0.5, 0.3))
    model = window.document.model
    assert model.element("s2").b_offset == pytest.approx((0.5, -0.2), abs=1e-9)
    assert model.element("s1").b_offset == (-0.6, -0.2)
    assert model.element("m1") == start.element("m1")     # the body itself did not move
    assert window.document.undo_stack.count() == 1
    window.document.undo_stack.undo()
    assert window.document.model.element("s2").b_offset == (0.6, -0.2)
    assert set(window.scene.nodes["m1"].mounts) == {(-0.6, -0.2), (0.6, -0.2)}


def _geared():
    return Model(kind="torsion", name="geared",
                 masses=(Mass("m1", 0.0, 0.0, 0.05, label="Motor"),
                         Mass("m2", 0.3, 0.0, 0.002, label="Pinion"),
                         Mass("m3", 0.6, 0.0, 0.02, label="Wheel"),
                         Mass("m4", 0.9, 0.0, 0.4, label="Fan")),
                 springs=(Spring("s1", "m1", "m2", 2000.0), Spring("s2", "m3", "m4", 800.0)))


def test_gear_stage_added_between_discs_and_ratio_edited(qtbot, window):
    """A gear stage drawn between two discs by mouse, its ratio typed (3), mesh stiffness
    typed then blanked (rigid); each one undo step; delete removes it."""
    _open(window, _geared())
    window.view.centerOn(window.scene.mapper.to_scene(0.45, 0.0))
    qtbot.keyClick(window.view, Qt.Key_R)
    assert window.scene.mode == Mode.CONNECT_GEAR
    _drag(qtbot, window, (0.3, 0.0), (0.6, 0.0))
    model = window.document.model
    assert len(model.gears) == 1
    gear = model.gears[0]
    assert (gear.a, gear.b) == ("m2", "m3") and gear.k_mesh is None
    assert gear.id in window.scene.links
    assert window.scene.selected_ids() == [gear.id]
    panel = window.properties
    _type(qtbot, panel.field("ratio"), "3")
    assert window.document.model.gears[0].ratio == 3.0
    assert "n = 3" in window.scene.links[gear.id].label_item.text()
    _type(qtbot, panel.field("ratio"), "-1")
    assert window.document.model.gears[0].ratio == 3.0
    assert "above 0" in panel.field("ratio").error
    _type(qtbot, panel.field("k_mesh"), "5 kN m/rad")
    assert window.document.model.gears[0].k_mesh == pytest.approx(5000.0)
    _type(qtbot, panel.field("k_mesh"), "")
    assert window.document.model.gears[0].k_mesh is None
    assert window.document.undo_stack.count() == 4
    window.scene.delete_selection()
    assert window.document.model.gears == ()
    window.document.undo_stack.undo()
    assert window.document.model.gears[0].ratio == 3.0


def test_gear_tool_only_in_torsion_models(qtbot, window):
    """DESIGN.md: gear stages join discs of torsion models; the tool says so elsewhere."""
    _open(window, _skid())
    window.scene.set_mode(Mode.CONNECT_GEAR)
    assert window.scene.mode == Mode.SELECT
    window.scene.set_mode(Mode.PLACE_BODY)
    assert window.scene.mode == Mode.PLACE_BODY
    _open(window, _geared())
    window.scene.set_mode(Mode.PLACE_BODY)
    assert window.scene.mode == Mode.SELECT


def _wait(qtbot, window):
    window.solver.wait()
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model is window.document.model, timeout=8000)


def test_body_turns_on_the_canvas_by_theta_times_the_magnification(qtbot, window):
    """Math (rigid-body kinematics): a body displaced by (u_x, u_y) and turned by theta moves
    an attachment point at r to c + u + R(theta) r. On the canvas a mode is drawn magnified by
    g: the box is translated by g u and turned by theta g / px_per_m (the same true-size
    factor), and each spring ends on its mount point so moved. The mode itself comes from
    solver.modes, checked here only for having a turn to show."""
    import solver

    _open(window, _skid())
    _wait(qtbot, window)
    modal = window.analysis.modal
    j = modal.dofs.index(("m1", "theta"))
    n = 1 + max(range(modal.n_modes), key=lambda i: abs(modal.shapes[j, i]))
    panel = window.motion_panel
    panel.pause()
    panel.canvas_box.setChecked(True)
    panel.show_mode(n)
    panel.pause()
    panel.step()
    frame = panel.displayed_positions()["m1"]
    assert abs(frame["theta"]) > 0
    motion = window.canvas_motion
    item = window.scene.nodes["m1"]
    ppm = window.scene.mapper.px_per_m
    turn = frame["theta"] * motion.magnification / ppm
    assert motion.drawn_turn("m1") == pytest.approx(turn, rel=1e-12)
    t = item.transform()
    # Qt's y points down: a counter-clockwise turn on the page is a clockwise matrix
    assert math.atan2(t.m12(), t.m11()) == pytest.approx(-turn, abs=1e-9)
    assert t.dx() == pytest.approx(frame["x"] * motion.magnification, rel=1e-9, abs=1e-9)
    assert t.dy() == pytest.approx(-frame.get("y", 0.0) * motion.magnification, abs=1e-9)
    assert abs(turn) <= math.radians(55) + 1e-12
    # spring s2's end on its mount point (0.6, -0.2): c + g u + R(turn) r, in scene units
    (ox, oy) = (0.6, -0.2)
    c, s_ = math.cos(turn), math.sin(turn)
    x = 0.0 + frame["x"] * motion.magnification / ppm + (c * ox - s_ * oy)
    y = 0.5 + frame.get("y", 0.0) * motion.magnification / ppm + (s_ * ox + c * oy)
    expected = window.scene.mapper.to_scene(x, y)
    end = window.scene.links["s2"].endpoints()[1]
    assert end.x() == pytest.approx(expected.x(), abs=1e-6)
    assert end.y() == pytest.approx(expected.y(), abs=1e-6)
    assert solver.modes(window.document.model).n_modes == modal.n_modes
    panel.canvas_box.setChecked(False)
    assert window.scene.nodes["m1"].transform().isIdentity()


@pytest.mark.parametrize("name", ["pump_skid.json", "geared_fan_drive.json"])
def test_new_examples_nothing_clipped_at_the_first_size(qtbot, default_window, name):  # noqa: F811
    """Common practice (a screen that reads true): the skid on isolators and the geared fan at
    the window's first size, with the body, a mount's spring and the gear stage selected in
    turn (Properties then shows the coupling statement, the offsets, the referred system):
    no text cut anywhere; the canvas draws the body's rings and the gear stage."""
    from _screen import clipped_texts, settled
    from test_no_clipping import EXAMPLES, _settle, _states

    window = default_window
    assert window.open_path(EXAMPLES / name)
    _settle(qtbot, window)
    model = window.document.model
    states = list(_states(window))
    if model.bodies:
        body = model.bodies[0].id
        assert window.scene.nodes[body].mounts          # its mount points drawn as rings
        on_body = next(s.id for s in model.springs if body in (s.a, s.b))
        states += [("the body", lambda: window.scene.select_ids([body])),
                   ("a mount's spring", lambda: window.scene.select_ids([on_body]))]
    if model.gears:
        assert model.gears[0].id in window.scene.links
        states.append(("the gear stage",
                       lambda: window.scene.select_ids([model.gears[0].id])))
    problems = []
    for state, show in states:
        show()
        qtbot.wait(120)
        problems += [f"{state}: {p}" for p in settled(qtbot, lambda: clipped_texts(window))]
    assert not problems, "\n".join(problems)
    if model.bodies:
        window.scene.select_ids([model.bodies[0].id])
        note = window.properties.widget("coupling")
        assert note.isVisible() and "elastic centre" in note.text()
    if model.gears:
        window.scene.select_ids([model.gears[0].id])
        note = window.properties.widget("referred")
        assert note.isVisible() and "referred" in note.text()
