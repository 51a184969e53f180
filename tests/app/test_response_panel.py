"""Response panel: plotted FRF / transmissibility against closed forms, driven through real widgets."""

import csv

import numpy as np
import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtGui import QImage

from app.canvas import Mode
from app.document.document import Document
from app.results.response_data import ResponseInput
from app.docks.response_panel import ResponsePanel
from solver.damping import rayleigh_coefficients
from solver.model import Anchor, Damping, Mass, Model, Spring

K, M = 8000.0, 2.0  # N/m, kg: f_n = sqrt(k/m) / 2 pi = 10.07 Hz


def _sdof(zeta=0.05):
    return Model(kind="line", name="sdof", axis="x", masses=(Mass("m1", 0.2, 0.0, M),),
                 anchors=(Anchor("g1", 0.0, 0.0),), springs=(Spring("s1", "g1", "m1", K),),
                 damping=Damping(model="modal", ratio=zeta))


def _settle(qtbot, window):
    from _screen import click_tab, on_screen_now

    window.solver.wait()
    panel = window.response_panel
    if not on_screen_now(panel):
        click_tab(qtbot, window, "Response")    # Tune is in front on a first start
    panel.wait()
    qtbot.waitUntil(lambda: not panel._timer.isActive(), timeout=3000)
    return panel


def _peak(panel):
    (peak,) = panel.peaks()["m1"]
    return peak


def test_base_transmissibility_matches_handbook(qtbot):
    """Harris' Shock and Vibration Handbook, ch. 30; Rao, Mechanical Vibrations, 3.6 (mem):
    T = sqrt((1 + (2 zeta r)^2) / ((1 - r^2)^2 + (2 zeta r)^2)) for one mass on a spring and a
    viscous damper (modal ratio zeta is the same C = 2 zeta sqrt(k m) for one DOF). rtol 1e-9."""
    zeta = 0.1
    doc = Document(_sdof(zeta))
    panel = ResponsePanel(doc)
    qtbot.addWidget(panel)
    assert panel.input == ResponseInput("base", "x")
    ((label, f, mag),) = panel.plotted_data()
    assert label == "m1"
    fn = np.sqrt(K / M) / (2 * np.pi)
    for r_target in (0.5, 1.0, np.sqrt(2.0), 2.0, 3.0):
        i = int(np.argmin(np.abs(f / fn - r_target)))
        r = f[i] / fn
        T = np.sqrt((1 + (2 * zeta * r) ** 2) / ((1 - r * r) ** 2 + (2 * zeta * r) ** 2))
        assert mag[i] == pytest.approx(T, rel=1e-9)
    # isolation begins at r = sqrt(2) whatever the damping (same sources)
    (cross,) = panel.response.crossovers_hz["m1"]
    assert cross == pytest.approx(np.sqrt(2) * fn, rel=1e-4)


def test_damping_ratio_typed_in_properties_lowers_peak_to_closed_form(qtbot, window):
    """Rao, Mechanical Vibrations, ch. 2-3 (mem): the peak of k|X/F| is 1/(2 zeta sqrt(1 - zeta^2))
    = 10.01252 at zeta = 0.05 (rtol 1e-4, the grid and parabolic peak refinement). The ratio is
    typed in the Properties panel: one undo entry; a negative ratio is refused in place."""
    window.document.new(model=_sdof(0.02))
    panel = _settle(qtbot, window)
    panel.set_input(ResponseInput("force", "x", "m1"))
    before = _peak(panel).amplitude * K
    assert before == pytest.approx(1 / (2 * 0.02 * np.sqrt(1 - 0.02 ** 2)), rel=1e-4)

    editor = window.properties.widget("damping")
    n = window.document.undo_stack.count()
    editor.set_ratio_text("5 %")
    panel = _settle(qtbot, window)
    assert window.document.model.damping.ratio == pytest.approx(0.05)
    assert window.document.undo_stack.count() == n + 1
    after = _peak(panel).amplitude * K
    assert after == pytest.approx(10.01252, rel=1e-4)
    assert after < before
    assert _peak(panel).damping_ratio == pytest.approx(0.05, rel=0.02)  # half-power estimate

    editor = window.properties.widget("damping")
    editor.set_ratio_text("-3 %")
    assert "ratio" in editor.ratio.error and "positive" in editor.ratio.error
    assert editor.ratio.error_label.isVisibleTo(editor)
    assert window.document.model.damping.ratio == pytest.approx(0.05)
    assert window.document.undo_stack.count() == n + 1


def test_rayleigh_fit_in_properties_is_one_undo_entry(qtbot, window):
    """Chopra, Dynamics of Structures, 11.4 (mem): the fit helper stores the alpha and beta of
    solver.rayleigh_coefficients for the two frequencies and ratios typed (rtol 1e-12)."""
    window.document.new(model=_sdof(0.0))
    editor = window.properties.widget("damping")
    n = window.document.undo_stack.count()
    editor.model_combo.setCurrentIndex(editor.model_combo.findData("rayleigh"))
    editor = window.properties.widget("damping")
    for e, text in ((editor.fit_f1, "5"), (editor.fit_z1, "2 %"), (editor.fit_f2, "50"),
                    (editor.fit_z2, "0.03")):
        e.edit.setText(text)
    assert editor.fit_rayleigh()
    alpha, beta = rayleigh_coefficients(5, 0.02, 50, 0.03)
    d = window.document.model.damping
    assert (d.model, d.alpha, d.beta) == ("rayleigh", pytest.approx(alpha, rel=1e-12),
                                          pytest.approx(beta, rel=1e-12))
    assert window.document.undo_stack.count() == n + 2  # choose Rayleigh, then fit


def _vp(window, x_m, y_m) -> QPoint:
    return window.view.mapFromScene(window.scene.mapper.to_scene(x_m, y_m))


def test_dashpot_drawn_with_mouse_lowers_peak_and_undo_restores(qtbot, window):
    """Common practice: adding viscous damping across a resonating spring lowers the resonance
    peak; undo gives back exactly the original curve (rtol 1e-12)."""
    window.document.new(model=_sdof(0.01))
    window.view.fit()
    panel = _settle(qtbot, window)
    original = _peak(panel).amplitude
    qtbot.keyClick(window.view, Qt.Key_D)
    assert window.scene.mode == Mode.CONNECT_DASHPOT
    vp = window.view.viewport()
    qtbot.mousePress(vp, Qt.LeftButton, pos=_vp(window, 0.0, 0.0))
    qtbot.mouseMove(vp, _vp(window, 0.1, 0.0))
    qtbot.mouseMove(vp, _vp(window, 0.2, 0.0))
    qtbot.mouseRelease(vp, Qt.LeftButton, pos=_vp(window, 0.2, 0.0))
    assert len(window.document.model.dampers) == 1
    panel = _settle(qtbot, window)
    damped = _peak(panel).amplitude
    assert damped < 0.8 * original
    # the dashpot's c is editable in the properties panel
    cid = window.document.model.dampers[0].id
    window.properties.set_selection([cid])
    field = window.properties.field("c")
    field.edit.setText("40")
    field.edit.editingFinished.emit()
    assert window.document.model.dampers[0].c == pytest.approx(40.0)
    panel = _settle(qtbot, window)
    assert _peak(panel).amplitude < damped
    window.document.undo_stack.undo()
    window.document.undo_stack.undo()
    assert not window.document.model.dampers
    panel = _settle(qtbot, window)
    assert _peak(panel).amplitude == pytest.approx(original, rel=1e-12)


def test_export_png_and_csv_match_plot(qtbot, tmp_path):
    """Common practice: the exported CSV holds the plotted values (rtol 1e-8, 9 significant
    digits written) and the PNG is a readable image."""
    doc = Document(Model(kind="line", name="two", axis="x",
                         masses=(Mass("m1", 0.2, 0.0, 2.0), Mass("m2", 0.4, 0.0, 1.0)),
                         anchors=(Anchor("g1", 0.0, 0.0),),
                         springs=(Spring("s1", "g1", "m1", 1000.0),
                                  Spring("s2", "m1", "m2", 500.0)),
                         damping=Damping(model="modal", ratio=0.03)))
    panel = ResponsePanel(doc)
    qtbot.addWidget(panel)
    panel.resize(800, 600)
    panel.show()
    qtbot.waitExposed(panel)
    png, table = tmp_path / "r.png", tmp_path / "r.csv"
    panel.export_png(png)
    img = QImage(str(png))
    assert not img.isNull() and img.width() > 100
    panel.export_csv(table)
    with open(table, newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    plotted = panel.plotted_data()
    assert [lab for lab, _f, _m in plotted] == ["m1", "m2"]
    data = np.array(rows[1:], float)
    assert len(data) == len(plotted[0][1])
    np.testing.assert_allclose(data[:, 0], plotted[0][1], rtol=1e-8)
    for j, (_lab, _f, mag) in enumerate(plotted):
        np.testing.assert_allclose(data[:, 1 + 2 * j], mag, rtol=1e-8)
