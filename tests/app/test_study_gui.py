"""Study and Absorber panels and the tolerance fields in Properties (issue 15), driving the real
widgets offscreen."""

from __future__ import annotations

import math

import pytest
from PySide6.QtCore import Qt

from solver.model import Anchor, Excitation, Mass, Model, Spring, Tolerance

from tests.app._screen import click_tab, clipped_texts, settled


def skid():
    return Model(kind="line", name="Pump skid",
                 masses=(Mass("m1", 1.0, 0.0, 40.0, label="Pump", tolerance=Tolerance(5)),
                         Mass("m2", 2.0, 0.0, 25.0, label="Frame")),
                 anchors=(Anchor("g", 0.0, 0.0, label="Floor"),),
                 springs=(Spring("s1", "g", "m1", 4.0e5, label="Isolator",
                                 tolerance=Tolerance(20, "normal")),
                          Spring("s2", "m1", "m2", 1.6e6, label="Bracket")),
                 excitations=(Excitation("e1", "speed", label="Motor", rpm=1480.0,
                                         orders=(1.0, 2.0)),))


@pytest.fixture
def window(qtbot, settings, tmp_path):
    """The window at its first size on a 1600 x 1000 screen (as test_no_clipping.py)."""
    from PySide6.QtCore import QSize

    from app.main_window import MainWindow, first_size

    win = MainWindow(settings=settings, recovery_folder=tmp_path / "recovery")
    win._ask_save_changes = lambda: "discard"
    qtbot.addWidget(win)
    win.resize(*first_size(QSize(1600, 1000)))
    win.show()
    qtbot.waitExposed(win)
    qtbot.wait(50)
    yield win
    win.study_panel.shutdown()
    win.solver.shutdown()


def _open(window, qtbot, model):
    window.document.new(model=model)
    qtbot.waitUntil(lambda: window.solver.last_analysis is not None
                    and window.solver.last_analysis.model is window.document.model, timeout=5000)


def test_study_runs_in_the_background_and_shows_labels(window, qtbot):
    """Run with the real button: the progress bar reaches 100 %, the table has one row per mode
    with the same 50 % value as solver.tolerance_study with that seed (the same code path,
    independent of the widgets), the details name elements by label and carry the caution,
    and nothing is clipped."""
    import solver

    _open(window, qtbot, skid())
    click_tab(qtbot, window, "Study")
    panel = window.study_panel
    panel.samples_spin.setValue(2000)
    panel.seed_spin.setValue(3)
    qtbot.mouseClick(panel.run_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: panel.result is not None, timeout=20000)
    assert panel.progress_bar.value() == 100 and panel.run_button.isEnabled()
    want = solver.tolerance_study(window.document.model, 2000, seed=3)
    assert panel.table.rowCount() == 2
    assert panel.table.item(1, 3).text() == f"{want.mode(2).percentiles_hz[1]:.6g}"
    text = panel.details.toPlainText()
    assert "Isolator: k +-20 % (normal, 3-sigma bound)" in text and "clears Motor" in text
    assert "confirmed by test or detailed analysis" in text
    pi = panel.plot.getPlotItem()
    assert pi.getAxis("bottom").labelText == "natural frequency (Hz)"
    assert pi.getAxis("left").labelText == "samples"
    qtbot.wait(50)
    problems = settled(qtbot, lambda: clipped_texts(window))
    assert problems == [], problems


def test_cancel_stops_a_long_study_and_the_ui_stays_live(window, qtbot):
    """Cancel during a long run: the run ends early (fewer samples, marked cancelled) or with
    nothing solved, and the window keeps processing events meanwhile."""
    _open(window, qtbot, skid())
    click_tab(qtbot, window, "Study")
    panel = window.study_panel
    panel.samples_spin.setValue(5_000_000)
    qtbot.mouseClick(panel.run_button, Qt.MouseButton.LeftButton)
    assert panel.cancel_button.isEnabled()
    qtbot.waitUntil(lambda: panel.progress_bar.value() > 0, timeout=20000)
    ticks = []
    from PySide6.QtCore import QTimer
    QTimer.singleShot(10, lambda: ticks.append(1))
    qtbot.mouseClick(panel.cancel_button, Qt.MouseButton.LeftButton)
    assert panel.wait(30)
    qtbot.waitUntil(lambda: panel.run_button.isEnabled(), timeout=5000)
    assert ticks == [1]
    assert panel.result is None or panel.result.n_samples < 5_000_000
    assert "cancel" in (panel.summary.text() + str(getattr(panel.result, "notes", ""))).lower()


def test_model_without_tolerances_says_what_to_do(window, qtbot, two_mass_model):
    """No tolerance: the panel says where to give one, and runs nothing."""
    _open(window, qtbot, two_mass_model)
    click_tab(qtbot, window, "Study")
    qtbot.mouseClick(window.study_panel.run_button, Qt.MouseButton.LeftButton)
    assert "Tolerance (±%) in Properties" in window.study_panel.summary.text()
    assert not window.study_panel.running


def test_tolerance_fields_in_properties_are_undoable(window, qtbot):
    """Typing a percent and choosing a distribution in Properties changes the spring's tolerance
    as undo steps; a bad value is refused in place, the model unchanged."""
    _open(window, qtbot, skid())
    window.scene.select_ids(["s2"])
    percent = window.properties.widget("tolerance_percent")
    dist = window.properties.widget("tolerance_distribution")
    percent.setText("15")
    percent.editingFinished.emit()
    assert window.document.model.find("s2").tolerance == Tolerance(15, "uniform")
    dist.setCurrentIndex(dist.findData("triangular"))
    dist.activated.emit(dist.currentIndex())     # as a pick from the list does
    assert window.document.model.find("s2").tolerance == Tolerance(15, "triangular")
    percent = window.properties.widget("tolerance_percent")
    percent.setText("150")
    percent.editingFinished.emit()
    assert window.document.model.find("s2").tolerance == Tolerance(15, "triangular")
    err = window.properties.findChild(type(window.properties.title), "tolerance_error")
    assert err is not None and "below 100" in err.text()
    window.document.undo_stack.undo()
    assert window.document.model.find("s2").tolerance == Tolerance(15, "uniform")
    window.document.undo_stack.undo()
    assert window.document.model.find("s2").tolerance is None
    window.scene.select_ids(["m2"])
    assert window.properties.widget("tolerance_percent").text() == ""


def test_absorber_assistant_adds_one_undo_step(window, qtbot):
    """Choose mode 1, protect the Pump with mu = 0.1; the design follows Den Hartog's tuning
    f = 1/(1 + mu) (REFERENCES.md section 5), the plot shows four labelled curves with the
    axes' units, "Add absorber" adds mass, spring and dashpot as ONE undo step."""
    _open(window, qtbot, skid())
    click_tab(qtbot, window, "Absorber")
    panel = window.absorber_panel
    panel.mass_combo.setCurrentIndex(panel.mass_combo.findText("Pump"))
    panel.ratio_spin.setValue(0.1)
    qtbot.waitUntil(lambda: panel.design is not None and panel.design.mass_ratio == 0.1,
                    timeout=5000)
    d = panel.design
    assert d.mode == 1 and d.mass_id == "m1"
    assert d.absorber_hz == pytest.approx(d.primary_hz / 1.1, rel=1e-12)
    assert "Den Hartog" in panel.design_label.text()
    pi = panel.plot_item
    assert [label.text for _s, label in panel.legend.items] == [
        "without absorber", "with absorber", "absorber 5 % low", "absorber 5 % high"]
    assert pi.getAxis("bottom").labelText == "frequency (Hz)"
    assert "(m/N)" in pi.getAxis("left").labelText
    before = window.document.undo_stack.count()
    qtbot.mouseClick(panel.add_button, Qt.MouseButton.LeftButton)
    model = window.document.model
    assert window.document.undo_stack.count() == before + 1
    assert len(model.masses) == 3 and len(model.springs) == 3 and len(model.dampers) == 1
    added = [m for m in model.masses if m.label == "Absorber mass"][0]
    assert added.mass == pytest.approx(0.1 * d.primary_mass)
    qtbot.wait(50)
    problems = settled(qtbot, lambda: clipped_texts(window))
    assert problems == [], problems
    window.document.undo_stack.undo()
    assert len(window.document.model.masses) == 2 and not window.document.model.dampers


def test_one_tolerance_for_several_springs_is_one_undo_step(window, qtbot):
    """Selecting both springs, typing 10 gives each the same tolerance in one undo step."""
    _open(window, qtbot, skid())
    window.scene.select_ids(["s1", "s2"])
    percent = window.properties.widget("tolerance_percent")
    assert percent.text() == "" and percent.placeholderText() == "differ"
    before = window.document.undo_stack.count()
    percent.setText("10")
    percent.editingFinished.emit()
    model = window.document.model
    assert model.find("s1").tolerance == model.find("s2").tolerance == Tolerance(10)
    assert window.document.undo_stack.count() == before + 1
    assert window.properties.widget("tolerance_percent").text() == "10"


def test_absorber_built_late_follows_a_deleted_protected_mass(window, qtbot):
    """The Absorber panel is built when its tab is first shown; it must still take an edit's
    model before the edit's results, as the panels built with the window do. With the Frame
    protected, deleting the Frame (and its bracket) leaves the Pump on its isolator: the design
    is then for the Pump, an SDOF whose modal mass is its mass, 40 kg, at
    sqrt(k/m)/(2 pi) = sqrt(4e5/40)/(2 pi) Hz (math), never an error naming the deleted mass."""
    _open(window, qtbot, skid())
    click_tab(qtbot, window, "Absorber")
    panel = window.absorber_panel
    panel.mass_combo.setCurrentIndex(panel.mass_combo.findText("Frame"))
    qtbot.waitUntil(lambda: panel.design is not None and panel.design.mass_id == "m2",
                    timeout=5000)
    window.scene.select_ids(["m2"])
    window.act_delete.trigger()
    assert "m2" not in window.document.model.ids()
    qtbot.waitUntil(lambda: panel.design is not None and panel.design.mass_id == "m1",
                    timeout=5000)
    text = panel.design_label.text()
    assert "m2" not in text and "not a mass" not in text and "Pump" in text
    assert panel.design.primary_mass == pytest.approx(40.0, rel=1e-9)
    assert panel.design.primary_hz == pytest.approx(math.sqrt(4.0e5 / 40.0) / (2 * math.pi),
                                                    rel=1e-9)
