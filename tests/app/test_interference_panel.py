"""Interference diagram in the window: drawn from the solved model, labelled by name, updated on
every edit, cleared when another file is opened; the Sources and diagram docks fit the window.

Crossing speeds are checked against N = 60 f / n with f from scipy.linalg.eigh (REFERENCES.md
section 10) on the example's own M and K written out by hand (torsion chain, math).
"""

from pathlib import Path

import numpy as np
import pyqtgraph as pg
import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QDockWidget

import solver
from _models_for_views import fan_drive_frequencies

ROOT = Path(__file__).resolve().parents[2]
FAN = ROOT / "assets" / "examples" / "fan_drive.json"
SHELF = ROOT / "assets" / "examples" / "shaker_fixture.json"   # a band only, no speed


def _open(qtbot, window, path):
    assert window.open_path(str(path), ask=False)
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model == window.document.model, timeout=8000)


def _show_diagram(qtbot, window):
    dock = window.findChild(QDockWidget, "dock_interference")
    dock.raise_()
    qtbot.waitUntil(lambda: window.interference_panel.isVisible(), timeout=5000)
    qtbot.waitUntil(lambda: window.interference_panel.data is not None, timeout=8000)
    return window.interference_panel


def test_diagram_of_the_fan_drive(qtbot, window):
    """Order 2 meets the first torsional mode f2 at N = 60 f2 / 2 rpm (math), inside 600 to 1800
    rpm; f2 from scipy (rtol 1e-9). The crossing is drawn there and listed by the source's label,
    never its id; axes say their units."""
    _open(qtbot, window, FAN)
    panel = _show_diagram(qtbot, window)
    f = fan_drive_frequencies()
    (c,) = panel.data.in_range
    assert c.order == 2.0 and c.rpm == pytest.approx(60 * f[1] / 2, rel=1e-9)
    text = panel.message.text()
    assert "Drive speed order 2" in text and "drive" not in text.replace("Drive", "")
    assert "1722.8" in text
    pi = panel.plot.getPlotItem()
    assert pi.getAxis("bottom").labelText == "shaft speed (rpm)"
    assert pi.getAxis("left").labelText == "frequency (Hz)"
    dots = [it for it in pi.listDataItems() if it.opts.get("symbol") == "o"]
    xs = np.concatenate([it.xData for it in dots])
    assert np.any(np.isclose(xs, 60 * f[1] / 2, rtol=1e-9))
    names = [it.toPlainText() for it in pi.items if isinstance(it, pg.TextItem)]
    assert "Drive speed ×2" in names and "Drive speed ×7" in names
    assert any(n.startswith("mode 2 ·") for n in names)


def test_diagram_follows_an_edit_in_the_sources_panel(qtbot, window):
    """Lowering the top speed to 1700 rpm (typed in the Sources panel) puts the crossing at
    60 f2 / 2 = 1722.8 rpm outside the range (math): the diagram lists none inside it; undo puts
    it back."""
    _open(qtbot, window, FAN)
    panel = _show_diagram(qtbot, window)
    sources = window.sources_panel
    sources.select("drive")
    edit = sources.field("rpm_max").edit
    edit.setFocus()
    edit.selectAll()
    qtbot.keyClicks(edit, "1700 rpm")
    qtbot.keyClick(edit, Qt.Key.Key_Return)
    assert window.document.model.element("drive").rpm_max == 1700.0
    qtbot.waitUntil(lambda: panel.data is not None and not panel.data.in_range, timeout=5000)
    assert "No order line crosses" in panel.message.text()
    window.document.undo_stack.undo()
    qtbot.waitUntil(lambda: panel.data is not None and len(panel.data.in_range) == 1,
                    timeout=5000)


def test_opening_another_file_clears_the_diagram(qtbot, window):
    """Stale results are never shown: opening a model clears the diagram at once (before its own
    results); a model with no shaft speed then shows a note, not a diagram."""
    _open(qtbot, window, FAN)
    panel = _show_diagram(qtbot, window)
    seen = []
    window.document.opened.connect(lambda _m: seen.append(panel.data))
    window.open_path(str(SHELF), ask=False)
    assert seen == [None]
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model == window.document.model, timeout=8000)
    assert panel.data is None
    assert "No shaft-speed source" in panel.message.text()
    assert not panel.plot.getPlotItem().listDataItems()
    assert not [it for it in panel.plot.getPlotItem().items if isinstance(it, pg.TextItem)]
    # the Sources panel shows the new model's band, ready to edit
    assert window.sources_panel.table.item(0, 0).text() == "Sine test band"


def _clipped(widget):
    """True when part of a shown widget lies outside one of its parents (cut off), up to the
    window, all rectangles in window coordinates."""
    win = widget.window()
    rect = widget.rect().translated(widget.mapTo(win, widget.rect().topLeft()))
    area = rect
    w = widget.parentWidget()
    while w is not None:
        area = area.intersected(w.rect().translated(w.mapTo(win, w.rect().topLeft()))
                                if w is not win else w.rect())
        if w is win:
            break
        w = w.parentWidget()
    return area != rect


def test_new_docks_fit_the_default_window(qtbot, settings, tmp_path):
    """At the first-start size (1400 x 880, app.main_window.first_size) the Sources editor's
    fields and the diagram are shown whole (common practice: nothing cut off)."""
    from app.main_window import MainWindow, first_size

    win = MainWindow(settings=settings, recovery_folder=tmp_path / "rec")
    win._ask_save_changes = lambda: "discard"
    qtbot.addWidget(win)
    win.resize(*first_size())
    win.show()
    qtbot.waitExposed(win)
    qtbot.wait(50)
    _open(qtbot, win, FAN)
    # docks tabbed together: Qt moves the ones not raised off the window, so one at a time
    win.findChild(QDockWidget, "dock_sources").raise_()
    qtbot.wait(50)
    sp = win.sources_panel

    def sources_whole():
        for name in ("label", "speed_kind", "rpm_min", "rpm_max", "orders"):
            w = sp.field(name)
            assert w.isVisible() and not _clipped(w), name
        for w in (sp.add_speed_button, sp.add_band_button, sp.delete_button, sp.table):
            assert not _clipped(w)

    # the raised dock is laid out on later event-loop turns (late on a slow machine)
    qtbot.waitUntil(sources_whole, timeout=5000)
    panel = _show_diagram(qtbot, win)
    qtbot.wait(50)

    def diagram_whole():
        assert _clipped(sp.field("label"))     # now behind the diagram's tab: the check sees it
        assert not _clipped(panel.plot) and panel.plot.height() >= 150
        assert panel.plot.width() >= 300
        assert not _clipped(panel.message)

    qtbot.waitUntil(diagram_whole, timeout=5000)
    win.solver.shutdown()


def test_clip_check_can_fail(qtbot):
    """The check above sees a child hanging over its parent's edge (so it can fail)."""
    from PySide6.QtWidgets import QLabel, QWidget

    parent = QWidget()
    qtbot.addWidget(parent)
    parent.resize(100, 100)
    inside, over = QLabel("in", parent), QLabel("over", parent)
    inside.setGeometry(10, 10, 50, 20)
    over.setGeometry(80, 10, 50, 20)
    parent.show()
    assert not _clipped(inside) and _clipped(over)


def test_diagram_holds_during_a_live_drag(qtbot):
    """Common practice for costly views (DEVELOPERS.md, live gestures): while a slider is dragged
    the diagram keeps its last drawing, dimmed; on release it shows the latest results."""
    from app.docks.interference_panel import InterferencePanel

    model = solver.load_model(FAN)
    panel = InterferencePanel()
    qtbot.addWidget(panel)
    panel.resize(500, 350)
    panel.show()
    qtbot.waitExposed(panel)
    panel.set_analysis(solver.analyse(model))
    first = panel.data
    slower = model.with_changes(put=[solver.Excitation(id="drive", type="speed", label="Drive",
                                                       rpm_min=600.0, rpm_max=1700.0,
                                                       orders=(1.0, 2.0, 7.0))])
    panel.set_live(True)
    panel.set_analysis(solver.analyse(slower))
    assert panel.data is first and panel.plot.getPlotItem().opacity() < 1
    panel.set_live(False)
    assert panel.data is not first and not panel.data.in_range    # 1722.8 rpm > 1700 rpm
    assert panel.plot.getPlotItem().opacity() == 1.0
