"""Nothing cut off or drawn over at the window's first size (1600 x 1000 screen).

common practice: a text that is cut (a header, a combo box, a check box, an axis title), a key
drawn over the curves it explains or two labels on top of each other is a text the user cannot
read; the window's first size must show every panel's text whole.
"""

from pathlib import Path

import pytest
from PySide6.QtCore import QRectF, QSize
from PySide6.QtGui import QImage, QPainter
from PySide6.QtWidgets import QApplication, QDockWidget

from _screen import clipped_texts, settled

EXAMPLES = Path(__file__).resolve().parents[2] / "assets" / "examples"


@pytest.fixture
def default_window(qtbot, settings, tmp_path):
    """The window as it first opens on a 1600 x 1000 screen (no saved layout)."""
    from app.main_window import MainWindow, first_size

    win = MainWindow(settings=settings, recovery_folder=tmp_path / "recovery")
    win._ask_save_changes = lambda: "discard"
    qtbot.addWidget(win)
    win.resize(*first_size(QSize(1600, 1000)))
    win.show()
    qtbot.waitExposed(win)
    qtbot.wait(50)                        # the first-start dock sizes are applied
    yield win
    win.solver.shutdown()


def _settle(qtbot, window):
    window.solver.wait()
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model is window.document.model, timeout=8000)
    qtbot.wait(200)
    # results computed off the window's thread (response curves in a thread, the Tune sweep in
    # a worker process) are in before the screen is read, however slow the machine
    assert window.tune_panel.wait_sweep()
    qtbot.waitUntil(lambda: not window.response_panel._computing, timeout=10000)


def _states(window):
    """What a user looks at in turn: each tab of the bottom row, the free response, a mass and
    a spring in Properties."""
    def raise_dock(name):
        return lambda: window.findChild(QDockWidget, name).raise_()

    model = window.document.model
    return [("Tune tab", raise_dock("dock_tune")),
            ("Sensitivity tab", raise_dock("dock_sensitivity")),
            ("Response tab", raise_dock("dock_response")),
            ("Study tab", raise_dock("dock_study")),
            ("Absorber tab", raise_dock("dock_absorber")),
            ("Tune tab again", raise_dock("dock_tune")),
            ("free response", window.motion_panel.show_free_response),
            ("a mass selected", lambda: window.scene.select_ids([model.masses[0].id])),
            ("a spring selected", lambda: window.scene.select_ids([model.springs[0].id]))]


@pytest.mark.parametrize("name", ["shaker_fixture.json", "camera_bracket.json",
                                  "instrument_shelf.json", "pump_shaft.json", "fan_drive.json",
                                  "equipment_rack.json"])
def test_nothing_clipped_at_the_first_size(qtbot, default_window, name):
    """Every label, button, check box, combo box, table header and cell, list entry, axis title
    and legend of the shown panels fits; the modes table shows all its columns and Properties
    every field without scrolling (the default example, a planar model, a two-source model, two
    shafts in torsion with long labels, a rack with long mass labels)."""
    window = default_window
    assert window.open_path(EXAMPLES / name)
    _settle(qtbot, window)
    problems = []
    for state, show in _states(window):
        show()
        qtbot.wait(120)
        problems += [f"{state}: {p}" for p in settled(qtbot, lambda: clipped_texts(window))]
    assert not problems, "\n".join(problems)


def test_the_40_mass_rod_reads_at_the_first_size(qtbot, default_window):
    """The 40-mass rod: canvas labels clear of each other and of every symbol (the rest are
    left off), the modes table whole, nothing cut in the Tune tab or the free response."""
    window = default_window
    assert window.open_path(EXAMPLES / "rod_chain.json")
    _settle(qtbot, window)
    window.view.fit()
    QApplication.processEvents()
    problems = settled(qtbot, lambda: clipped_texts(window))
    assert not problems, problems
    scene = window.scene
    shown = [it.label_item for it in list(scene.nodes.values()) + list(scene.links.values())
             if it.label_item.isVisible()]
    rects = [lab.mapRectToScene(lab.boundingRect()) for lab in shown]
    symbols = [it.mapRectToScene(it.symbol_rect()) for it in scene.nodes.values()]
    assert len(shown) >= 40
    for i, r in enumerate(rects):
        assert not any(r.intersects(o) for o in rects[i + 1:]), shown[i].text()
        assert not any(r.intersects(s) for s in symbols), shown[i].text()
    window.motion_panel.show_free_response()
    qtbot.wait(120)
    problems = settled(qtbot, lambda: clipped_texts(window))
    assert not problems, problems


def _frame_rects(view):
    from app.drawing.sketch import symbol_rects

    lay = view.layout_()
    return list(lay.placed_labels), symbol_rects(lay, view.displacements, view.scale)


def test_motion_view_labels_stay_put_and_clear_while_a_mode_plays(qtbot, default_window):
    """The motion view of the 40-mass rod, mode 3 played over eight frames: the labels shown
    are the same rectangles in every frame, never overlap each other and never touch a symbol
    where it is drawn in that frame; labels with no clear spot are left off, not piled up."""
    window = default_window
    assert window.open_path(EXAMPLES / "rod_chain.json")
    _settle(qtbot, window)
    panel = window.motion_panel
    panel.show_mode(3)
    first = None
    for _ in range(8):
        panel.step()
        panel.view.repaint()
        labels, symbols = _frame_rects(panel.view)
        if first is None:
            first = labels
            assert len(labels) >= 30
        assert labels == first
        rects = [r for _t, r in labels]
        for i, r in enumerate(rects):
            assert not any(r.intersects(o) for o in rects[i + 1:]), labels[i][0]
            assert not any(r.intersects(s) for s in symbols), labels[i][0]


@pytest.mark.parametrize("name", ["shaker_fixture", "camera_bracket", "pump_shaft",
                                  "equipment_rack"])
def test_report_sketch_labels_every_element_clear_of_the_rest(qtbot, name):
    """The report's sketch (values shown, 200 dpi symbols) of each example names every element,
    its labels clear of each other and of every symbol."""
    from app.drawing.sketch import paint_sketch, symbol_rects
    from app.report.sketch import _is_tall
    from solver.io import load_model

    model = load_model(EXAMPLES / f"{name}.json")
    dpi = 200
    h = 3.0 * dpi if _is_tall(model) else 2.6 * dpi
    img = QImage(1500, int(h), QImage.Format.Format_RGB32)
    p = QPainter(img)
    lay = paint_sketch(p, model, QRectF(0, 0, 1500, h), labels="values", base=0.22 * dpi)
    p.end()
    placed = lay.placed_labels
    n = len(model.masses) + len(model.anchors) + len(model.springs) + len(model.dampers)
    assert len([t for t, _r in placed]) >= n
    rects = [r for _t, r in placed]
    symbols = symbol_rects(lay)
    for i, r in enumerate(rects):
        assert not any(r.intersects(o) for o in rects[i + 1:]), placed[i][0]
        assert not any(r.intersects(s) for s in symbols), placed[i][0]
