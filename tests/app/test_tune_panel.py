"""Tune panel, energy tint and sensitivity table, driven through the real window (offscreen)."""

import math

import numpy as np
import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QApplication, QStyle, QStyleOptionSlider

import solver
from solver.model import Anchor, Mass, Model, Spring
from app.drawing.style import current_style
from app.text.numbers import signed


def _open(window, model):
    window.document.new(model=model)
    window.solver.wait()
    return window.tune_panel


def _handle_centre(slider) -> QPoint:
    opt = QStyleOptionSlider()
    slider.initStyleOption(opt)
    rect = slider.style().subControlRect(QStyle.ComplexControl.CC_Slider, opt,
                                         QStyle.SubControl.SC_SliderHandle, slider)
    return rect.center()


def _table_frequencies(window):
    return np.array([r["frequency_hz"] for r in window.modes_table.rows()])


def test_mouse_drag_is_live_and_one_undo_entry(qtbot, window, two_mass_model):
    """math: the modes table shows solver.modes of the document's model after each drag step
    (rtol 1e-12); the drag is one undo entry and undo gives back k exactly (1000.0 N/m)."""
    panel = _open(window, two_mass_model)
    assert panel.select_element("s1", "k")
    sweep_before = panel.sweep_result
    slider = panel.slider
    start = _handle_centre(slider)
    qtbot.mousePress(slider, Qt.MouseButton.LeftButton, pos=start)
    seen = []
    for dx in (10, 25, 40, 60):
        qtbot.mouseMove(slider, start + QPoint(dx, 0))
        QApplication.processEvents()
        k_now = window.document.model.element("s1").k
        seen.append(k_now)
        # the table follows while the button is still down
        np.testing.assert_allclose(_table_frequencies(window),
                                   solver.modes(window.document.model).frequencies_hz, rtol=1e-12)
    qtbot.mouseRelease(slider, Qt.MouseButton.LeftButton, pos=start + QPoint(60, 0))
    window.solver.wait()
    assert seen[-1] > 1000.0 and len(set(seen)) == len(seen)   # rose step by step
    assert window.document.undo_stack.count() == 1
    assert panel.sweep_result is sweep_before                   # not recomputed per tick
    window.document.undo_stack.undo()
    assert window.document.model.element("s1").k == 1000.0
    window.solver.wait()
    np.testing.assert_allclose(_table_frequencies(window),
                               solver.modes(window.document.model).frequencies_hz, rtol=1e-12)


def test_page_up_steps_a_tenth_of_a_decade(qtbot, window, two_mass_model):
    """math: the slider is log scale, a page is 1/10 decade: two PageUp give k 10^0.2 times
    larger (rtol 1e-12); one undo restores it exactly."""
    panel = _open(window, two_mass_model)
    panel.select_element("s2", "k")
    panel.slider.setFocus()
    qtbot.keyClick(panel.slider, Qt.Key.Key_PageUp)
    qtbot.keyClick(panel.slider, Qt.Key.Key_PageUp)
    assert window.document.model.element("s2").k == pytest.approx(500.0 * 10 ** 0.2, rel=1e-12)
    window.solver.wait()
    np.testing.assert_allclose(_table_frequencies(window),
                               solver.modes(window.document.model).frequencies_hz, rtol=1e-12)
    assert window.document.undo_stack.count() == 1
    window.document.undo_stack.undo()
    assert window.document.model.element("s2").k == 500.0


def test_retune_single_dof_puts_mode_on_target(qtbot, window):
    """common practice (closed form, single DOF): k = m (2 pi f)^2; m = 2 kg, f = 5 Hz gives
    k = 1973.92 N/m (rtol 1e-9); Apply is one undo entry."""
    model = Model(kind="line", name="sdof", masses=(Mass("m1", 0.2, 0.0, 2.0),),
                  anchors=(Anchor("g", 0.0, 0.0),), springs=(Spring("s1", "g", "m1", 1000.0),))
    panel = _open(window, model)
    panel.select_element("s1", "k")
    panel.mode_spin.setValue(1)
    panel.target_spin.setValue(5.0)
    qtbot.mouseClick(panel.retune_button, Qt.MouseButton.LeftButton)
    assert window.document.model.element("s1").k == 1000.0      # only previewed
    assert panel.apply_button.isEnabled()
    qtbot.mouseClick(panel.apply_button, Qt.MouseButton.LeftButton)
    k = window.document.model.element("s1").k
    assert k == pytest.approx(2.0 * (2 * math.pi * 5.0) ** 2, rel=1e-9)
    assert window.document.undo_stack.count() == 1
    window.solver.wait()
    assert _table_frequencies(window)[0] == pytest.approx(5.0, rel=1e-9)


def test_unreachable_target_is_explained_in_the_panel(qtbot, window, two_mass_model):
    """math (Rayleigh monotonicity): with s2 rigid, mode 1 of the two-mass chain tends to
    sqrt(1000 / 3) / 2 pi = 2.906 Hz, so 50 Hz is out of s2's reach; the reason shows in the panel,
    no modal dialog, nothing applied."""
    panel = _open(window, two_mass_model)
    panel.select_element("s2", "k")
    panel.mode_spin.setValue(1)
    panel.target_spin.setValue(50.0)
    qtbot.mouseClick(panel.retune_button, Qt.MouseButton.LeftButton)
    assert "cannot reach" in panel.message.text()
    assert QApplication.activeModalWidget() is None
    assert not panel.apply_button.isEnabled()
    assert window.document.undo_stack.count() == 0


def test_propose_picks_the_strongest_element(qtbot, window, two_mass_model):
    """math: Propose takes the first of solver.rank_elements (largest |(p/f) df/dp|), among the
    springs by default and among springs and masses with "springs only" unticked."""
    panel = _open(window, two_mass_model)
    panel.mode_spin.setValue(2)
    qtbot.mouseClick(panel.propose_button, Qt.MouseButton.LeftButton)
    ranked = solver.rank_elements(window.document.model, 2)
    top = [r for r in ranked if r[1] == "k"][0]
    assert panel.element == (top[0], top[1])
    assert signed(top[2], 3) in panel.ranking_label.text()
    panel.springs_only.setChecked(False)
    qtbot.mouseClick(panel.propose_button, Qt.MouseButton.LeftButton)
    assert panel.element == (ranked[0][0], ranked[0][1])


def test_mode_pick_resets_target_and_apply_reports_margin(qtbot, window):
    """math: picking mode 2 sets the target to mode 2's frequency (solver.modes); after Apply the
    panel states the margin check (solver.margin_check) of the new model."""
    model = solver.load_model("assets/examples/shaker_fixture.json")
    panel = _open(window, model)
    res = solver.modes(model)
    panel.set_mode(2)
    assert panel.target_spin.value() == pytest.approx(res.frequencies_hz[1], rel=1e-4)
    panel.set_mode(1)
    # the opening element governs the conflicting mode 1: a spring, the top-ranked one
    ranked = [r for r in solver.rank_elements(model, 1) if r[1] == "k"]
    assert panel.element == (ranked[0][0], "k")
    lower = solver.margin_check(model, res).conflicts[0].lower_to_hz
    panel.target_spin.setValue(0.9 * lower)
    qtbot.mouseClick(panel.retune_button, Qt.MouseButton.LeftButton)
    qtbot.mouseClick(panel.apply_button, Qt.MouseButton.LeftButton)
    new = window.document.model
    ok = solver.margin_check(new, solver.modes(new)).ok
    assert "Apply to set it" not in panel.message.text()
    assert ("clears every source" in panel.message.text()) == ok


def test_energy_tint_follows_strain_energy_share(qtbot, window, two_mass_model):
    """math: strain-energy share of each spring in mode 1 (solver.energy_fractions); the spring
    with the larger share gets the ramp colour of that share, different from the other's."""
    _open(window, two_mass_model)
    window.act_energy.trigger()
    assert window.act_energy.isChecked()
    share = window.solver.last_analysis.energy.strain_energy_fraction(1)
    big, small = sorted(share, key=share.get, reverse=True)
    c_big = window.scene.links[big].energy_color
    c_small = window.scene.links[small].energy_color
    st = current_style()
    assert c_big == st.energy_color(share[big]) and c_small == st.energy_color(share[small])
    assert c_big != c_small
    assert f"{100 * share[big]:.1f} %" in window.scene.links[big].toolTip()
    kin = window.solver.last_analysis.energy.kinetic_energy_fraction(1)
    assert window.scene.nodes["m1"].energy_color == st.energy_color(kin["m1"])
    assert window.energy_tint.legend.isVisible()
    window.act_energy.trigger()
    assert window.scene.links[big].energy_color is None


def test_sensitivity_is_half_the_strain_energy_share(qtbot, window, two_mass_model):
    """math: for a mass-normalised mode, (k/f) df/dk = k (dphi)^2 / (2 w^2) = half the spring's
    strain-energy fraction (rtol 1e-12); masses sum to -1/2 in each mode."""
    _open(window, two_mass_model)
    a = window.solver.last_analysis
    table = window.sensitivity_table
    for mode in (1, 2):
        for j, sid in enumerate(a.energy.spring_ids):
            assert table.cell_value(sid, "k", mode) == pytest.approx(
                0.5 * a.energy.strain[mode - 1, j], rel=1e-12)
        total_m = sum(table.cell_value(mid, "mass", mode) for mid in ("m1", "m2"))
        assert total_m == pytest.approx(-0.5, rel=1e-12)


def test_zero_mode_sensitivity_shows_a_dash(qtbot, window):
    """math: a free-free pair has a rigid-body mode with no frequency to differentiate."""
    model = Model(kind="line", masses=(Mass("a", 0, 0, 2), Mass("b", 1, 0, 2)),
                  springs=(Spring("k", "a", "b", 800),))
    _open(window, model)
    table = window.sensitivity_table
    assert table.cell_text("k", "k", 1) == "—"
    assert table.cell_value("k", "k", 2) == pytest.approx(0.5, rel=1e-12)
    table.view.sortByColumn(2, Qt.SortOrder.DescendingOrder)   # sortable, no crash


def test_sources_listed_and_bands_crossed(qtbot, window, two_mass_model):
    """math: a speed source at 90 rpm has order lines at 1.5 and 3 Hz (order x rpm / 60); a mode
    curve that runs through a widened band is marked where it enters and leaves."""
    from solver.model import Excitation
    import dataclasses

    model = dataclasses.replace(two_mass_model, excitations=(
        Excitation("fan", "speed", rpm=90.0, orders=(1.0, 2.0)),))
    panel = _open(window, model)
    panel.select_element("s1", "k")
    texts = [panel.sources_list.item(i).text() for i in range(panel.sources_list.count())]
    assert texts and "90 rpm" in texts[0] and "1.5 Hz" in texts[0] and "3 Hz" in texts[0]
    assert panel.crossings   # mode 1 (2.6 Hz at 1000 N/m) sweeps across the 3 Hz line


def test_response_held_during_drag_and_recomputed_on_release(qtbot, window):
    """common practice: the costly response plot waits while the slider moves and then shows the
    final model. After release each curve is |T| of the two-DOF chain with the final stiffness,
    checked against numpy.linalg.solve of (K - w^2 M + i w C) y = w^2 M r built by hand
    (Chopra, Dynamics of Structures, 13.1, base excitation (mem)); rtol 1e-9."""
    zeta = 0.05
    model = Model(kind="line", name="two", axis="x",
                  masses=(Mass("m1", 0.2, 0.0, 2.0), Mass("m2", 0.4, 0.0, 1.0)),
                  anchors=(Anchor("g1", 0.0, 0.0),),
                  springs=(Spring("s1", "g1", "m1", 1000.0), Spring("s2", "m1", "m2", 500.0)),
                  damping=solver.Damping(model="modal", ratio=zeta))
    panel = _open(window, model)
    response = window.response_panel
    # Response and Tune share a tab stack: floated, the Response plot is in sight while the
    # Tune slider is dragged (a user's own arrangement)
    window.response_dock.setFloating(True)
    qtbot.waitUntil(lambda: response.isVisible(), timeout=3000)
    response.wait()
    qtbot.waitUntil(lambda: not response._timer.isActive(), timeout=3000)
    before = response.plotted_data()
    assert before
    assert panel.select_element("s1", "k")
    slider = panel.slider
    start = _handle_centre(slider)
    qtbot.mousePress(slider, Qt.MouseButton.LeftButton, pos=start)
    assert window.solver.live
    for dx in (15, 30, 45):
        qtbot.mouseMove(slider, start + QPoint(dx, 0))
        QApplication.processEvents()
        assert response.held                       # not recomputed per step
        for (_l, f0, m0), (_l1, f1, m1) in zip(before, response.plotted_data()):
            np.testing.assert_array_equal(m0, m1)
    qtbot.mouseRelease(slider, Qt.MouseButton.LeftButton, pos=start + QPoint(45, 0))
    window.solver.wait()
    assert not window.solver.live and not response.held
    final = window.document.model
    k1, k2 = final.element("s1").k, final.element("s2").k
    assert k1 > 1000.0
    Mm = np.diag([2.0, 1.0])
    Kk = np.array([[k1 + k2, -k2], [-k2, k2]])
    lam, phi = np.linalg.eigh(np.linalg.inv(np.sqrt(Mm)) @ Kk @ np.linalg.inv(np.sqrt(Mm)))
    phi = np.linalg.inv(np.sqrt(Mm)) @ phi                      # mass-normalised shapes
    C = Mm @ phi @ np.diag(2 * zeta * np.sqrt(lam)) @ phi.T @ Mm
    index = {lab: j for j, lab in enumerate(("m1", "m2"))}
    for label, f, mag in response.plotted_data():
        w = 2 * np.pi * f
        ref = np.array([np.abs(np.linalg.solve(Kk - wi ** 2 * Mm + 1j * wi * C,
                                               wi ** 2 * Mm @ np.ones(2))[index[label]] + 1.0)
                        for wi in w])
        np.testing.assert_allclose(mag, ref, rtol=1e-9)


def test_tune_panel_follows_the_display_unit_system(qtbot, window, two_mass_model):
    """Handbook factor 1 lbf/in = 175.126835 N/m (NIST SP 811 (mem)): with US units chosen in
    Properties, the Tune value reads k in lbf/in; the model keeps N/m."""
    panel = _open(window, two_mass_model)
    assert panel.select_element("s1", "k")
    combo = window.properties.units_combo
    combo.setCurrentIndex(combo.findText("US", Qt.MatchFlag.MatchContains))
    assert panel.unit_system == "US"
    text = panel.value_label.text()
    assert "lbf/in" in text
    shown = float(text.split("=")[1].split()[0])
    assert shown == pytest.approx(1000.0 / 175.126835, rel=1e-4)
    assert window.document.model.element("s1").k == 1000.0


def test_overlapping_bands_share_one_label(qtbot, window, two_mass_model):
    """math: at 1450 rpm the orders 1.875 and 2 lie at 45.3 and 48.3 Hz (order x rpm / 60);
    widened by the 15 % margin ([f (1 - 0.15), f (1 + 0.15)]) they overlap, so the sweep plot
    names them once, at the top of the pair (55.58 Hz), and order 1 (24.17 Hz, up to 27.79 Hz)
    on its own: no two band labels are drawn over each other."""
    import dataclasses

    import pyqtgraph as pg

    from solver.model import Excitation

    model = dataclasses.replace(two_mass_model, margin_percent=15.0, excitations=(
        Excitation("mot", "speed", label="Motor speed", rpm=1450.0, orders=(1.0, 1.875, 2.0)),))
    panel = _open(window, model)
    panel.select_element("s1", "k")
    assert panel.wait_sweep()
    items = [it for it in panel.plot.getPlotItem().items if isinstance(it, pg.TextItem)]
    found = sorted((it.pos().y(), it.toPlainText()) for it in items)
    f = [o * 1450.0 / 60.0 for o in (1.0, 1.875, 2.0)]
    assert [t for _y, t in found] == ["Motor speed ×1", "Motor speed ×1.875, ×2"]
    assert [y for y, _t in found] == pytest.approx([f[0] * 1.15, f[2] * 1.15], rel=1e-9)


def _sweep_model():
    masses = tuple(Mass(f"m{i}", float(i), 0.0, 1.0 + 0.1 * i) for i in range(1, 6))
    ids = ["g"] + [m.id for m in masses]
    springs = tuple(Spring(f"s{i}", ids[i - 1], ids[i], 1000.0 * i) for i in range(1, 6))
    return Model(kind="line", name="five", masses=masses, anchors=(Anchor("g", 0.0, 0.0),),
                 springs=springs)


@pytest.mark.parametrize("edit, expect", [
    ("same spring k", True), ("same mass value", True), ("nothing", True), ("rebuilt equal", True),
    ("other spring k", False), ("same spring label", False), ("other mass", False),
    ("model name", False), ("spring removed", False)])
def test_sweep_kept_exactly_when_only_the_swept_value_changed(edit, expect):
    """The Tune panel keeps its sweep when an edit changed only the swept element's swept value.
    Its fast check (identity first, no model rebuilt) agrees with the definition: the two models
    are equal once that value is set the same in both (``with_value`` then ``==``, math)."""
    import dataclasses as dc

    from app.docks.tune_panel import differs_only_in, with_value

    base = _sweep_model()
    key = ("m2", "mass") if edit == "same mass value" else ("s3", "k")
    if edit == "same spring k":
        model = base.with_changes(put=[dc.replace(base.element("s3"), k=1234.5)])
    elif edit == "same mass value":
        model = base.with_changes(put=[dc.replace(base.element("m2"), mass=7.5)])
    elif edit == "nothing":
        model = base
    elif edit == "rebuilt equal":
        model = Model(**{f.name: getattr(base, f.name) for f in dc.fields(base)})
        model = dc.replace(model, springs=tuple(dc.replace(s) for s in model.springs))
    elif edit == "other spring k":
        model = base.with_changes(put=[dc.replace(base.element("s4"), k=99.0)])
    elif edit == "same spring label":
        model = base.with_changes(put=[dc.replace(base.element("s3"), label="mount")])
    elif edit == "other mass":
        model = base.with_changes(put=[dc.replace(base.element("m5"), mass=9.0)])
    elif edit == "model name":
        model = dc.replace(base, name="renamed")
    else:
        model = base.with_changes(remove=["s5"])
    reference = with_value(model, *key[:1], 1.0, key[1]) == with_value(base, *key[:1], 1.0, key[1])
    assert reference == expect
    assert differs_only_in(model, base, *key) == expect


@pytest.mark.parametrize("kind", ["line", "planar"])
def test_sweep_kept_when_a_line_model_is_moved_on_the_page(kind):
    """common practice: a line model's springs act along its one axis wherever its nodes are
    drawn, so a mass moved on the page leaves every frequency of the sweep as it was (checked:
    the sweep of the moved model equals that of the model as it was, point by point); a planar
    model's springs turn with its nodes, so there the sweep is stale. A value changed besides
    the move still makes it stale."""
    import dataclasses as dc

    import solver
    from app.docks.tune_panel import differs_only_in

    base = _sweep_model()
    if kind == "planar":
        base = dc.replace(base, kind="planar")
    moved = base.with_changes(put=[dc.replace(base.element("m3"), x=3.4, y=0.7),
                                   dc.replace(base.element("g"), y=-0.2)])
    values = np.geomspace(300.0, 9000.0, 7)
    same = np.allclose(solver.sweep(moved, "s3", values).frequencies_hz,
                       solver.sweep(base, "s3", values).frequencies_hz, rtol=1e-12, atol=0)
    assert same == (kind == "line")
    assert differs_only_in(moved, base, "s3", "k") == same
    assert differs_only_in(moved, base, "m3", "mass") == same
    also = moved.with_changes(put=[dc.replace(moved.element("s4"), k=4321.0)])
    assert not differs_only_in(also, base, "s3", "k")


def test_the_frequency_axis_holds_through_small_edits(qtbot, window, two_mass_model):
    """The sweep's frequency axis stays put while an edit moves the curves' top by a little (the
    eye reads the curves against a steady scale), always shows every curve, and rescales when
    the top falls below 3/4 of it or rises past it. Frequencies from scipy.linalg.eigh of the
    two-mass chain's K and M written out by hand (math)."""
    import scipy.linalg

    panel = _open(window, two_mass_model)
    panel.select_element("s1", "k")
    assert panel.wait_sweep()
    pi = panel.plot.getPlotItem()

    def top_hz(model):
        k1, k2 = model.element("s1").k, model.element("s2").k
        m1, m2 = model.element("m1").mass, model.element("m2").mass
        K = np.array([[k1 + k2, -k2], [-k2, k2]])
        w2 = scipy.linalg.eigh(K, np.diag([m1, m2]), eigvals_only=True)
        return math.sqrt(w2[-1]) / (2 * math.pi)

    def edit(spring_factor, mass_factor=1.0):
        m = window.document.model
        window.document.set_element("s2", k=m.element("s2").k * spring_factor)
        if mass_factor != 1.0:
            for mid in ("m1", "m2"):
                window.document.set_element(mid, mass=m.element(mid).mass * mass_factor)
        window.solver.wait()
        qtbot.waitUntil(lambda: not panel.sweep_pending, timeout=8000)
        return pi.viewRange()[1][1]

    first = pi.viewRange()[1][1]
    held = edit(0.98)                          # the top falls by ~1 %
    assert held == first
    sweep_top = float(np.nanmax(panel.sweep_result.frequencies_hz))
    assert sweep_top <= held
    assert top_hz(window.document.model) <= held
    lower = edit(1.0, 4.0)                     # masses x4: every frequency halves
    assert lower < 0.75 * first
    assert float(np.nanmax(panel.sweep_result.frequencies_hz)) <= lower
    higher = edit(1.0, 1 / 16)                 # masses / 16: x4, past the axis
    assert higher > lower
    assert float(np.nanmax(panel.sweep_result.frequencies_hz)) <= higher
    assert top_hz(window.document.model) <= higher



def test_a_burst_of_edits_sweeps_once_for_the_last_model(qtbot, window):
    """A sweep of the swept spring made stale by other edits is computed in the background
    once, for the model after the last edit of a burst, and only after the edits' own results
    are drawn (it starts SWEEP_DEFER_MS later). Its frequencies at each value are those of
    scipy.linalg.eigh(K, M) of the chain built by hand (math: K tridiagonal from the spring
    stiffnesses, M diagonal), rtol 1e-9."""
    import scipy.linalg

    from app.docks import tune_panel as tp

    model = _sweep_model()
    panel = _open(window, model)
    assert panel.select_element("s3", "k")
    assert panel.wait_sweep()
    started = []
    real = panel._pool.start
    panel._pool.start = lambda job: started.append(job) or real(job)
    for k in (2500.0, 2600.0, 2700.0):
        window.document.set_element("s4", k=k)
    assert panel.sweep_pending and started == []      # not during the edits
    assert panel.wait_sweep()
    assert len(started) == 1
    sweep = panel.sweep_result
    ks = [1000.0, 2000.0, None, 2700.0, 5000.0]
    masses = [1.1, 1.2, 1.3, 1.4, 1.5]
    for value, row in zip(sweep.values[::7], sweep.frequencies_hz[::7]):
        k = [value if x is None else x for x in ks]
        K = np.zeros((5, 5))
        for i, ki in enumerate(k):
            K[i, i] += ki
            if i:
                K[i - 1, i - 1] += ki
                K[i - 1, i] -= ki
                K[i, i - 1] -= ki
        hz = np.sqrt(scipy.linalg.eigh(K, np.diag(masses), eigvals_only=True)) / (2 * np.pi)
        np.testing.assert_allclose(row, hz, rtol=1e-9)
    assert tp.SWEEP_DEFER_MS > 0
