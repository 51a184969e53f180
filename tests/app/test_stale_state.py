"""Nothing of the previous model, and no message an edit has made untrue, stays on the screen.

A practitioner reads the window as the state of the model in front of them: a header naming
another model, a count that an edit changed, or a margin verdict from before the margin was
changed is a wrong statement (common practice: a result shown must belong to the inputs shown).
"""

import re
from pathlib import Path

import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QAction

from _screen import window_texts

EXAMPLES = Path(__file__).resolve().parents[2] / "assets" / "examples"


def _wait_results(qtbot, window):
    window.solver.wait()
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model is window.document.model, timeout=8000)
    qtbot.wait(150)        # debounced views (response curves) catch up
    # what is computed off the window's thread (the response curves in a thread, the Tune
    # sweep in a worker process) is in too, however slow the machine: its text is read next
    assert window.tune_panel.wait_sweep()
    qtbot.waitUntil(lambda: not window.response_panel._computing, timeout=10000)


def _open(qtbot, window, name):
    assert window.open_path(EXAMPLES / name)
    _wait_results(qtbot, window)


def _model_words(model) -> set[str]:
    words = {model.name}
    for el in (list(model.masses) + list(model.anchors) + list(model.springs)
               + list(model.dampers) + list(model.excitations)):
        words |= {el.id, el.label}
    return {w for w in words if w}


def _found(word, texts):
    pat = re.compile(r"(?<![\w])" + re.escape(word) + r"(?![\w])")
    return [(where, t) for where, t in texts if pat.search(t)]


def _use_everything(qtbot, window):
    """Touch the views that keep text: Propose, Retune, Apply in Tune; a mode picked; an element
    selected on the canvas; the free response shown."""
    panel = window.tune_panel
    qtbot.mouseClick(panel.propose_button, Qt.MouseButton.LeftButton)
    panel.target_spin.setValue(panel.target_spin.value() * 0.8)
    qtbot.mouseClick(panel.retune_button, Qt.MouseButton.LeftButton)
    assert panel.apply_button.isEnabled()
    qtbot.mouseClick(panel.apply_button, Qt.MouseButton.LeftButton)
    assert "Margin check" in panel.message.text()
    _wait_results(qtbot, window)
    table = window.modes_table.view
    rect = table.visualRect(table.model().index(1, 0))
    qtbot.mouseClick(table.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    first_spring = window.document.model.springs[0].id
    window.scene.select_ids([first_spring])
    window.motion_panel.show_free_response()


def test_opening_b_after_a_leaves_no_text_of_a(qtbot, window, settings, tmp_path):
    """common practice: after Open, every header, count, message, table, combo, plot title and
    canvas label of the window belongs to the model opened. A's name, ids and labels are looked
    for as whole words in every text; words a fresh window with B alone shows too (shared
    vocabulary such as 'test' in the caution line) are not counted."""
    from app.main_window import MainWindow

    _open(qtbot, window, "shaker_fixture.json")
    a_model = window.document.model
    _use_everything(qtbot, window)
    _open(qtbot, window, "instrument_shelf.json")
    after = window_texts(window)

    fresh = MainWindow(settings=settings, recovery_folder=tmp_path / "rec2")
    qtbot.addWidget(fresh)
    fresh.resize(window.size())
    fresh.show()
    try:
        _open(qtbot, fresh, "instrument_shelf.json")
        baseline = window_texts(fresh)
    finally:
        fresh.solver.shutdown()
    leftovers = {}
    for word in sorted(_model_words(a_model)):
        if _found(word, baseline):
            continue
        hits = _found(word, after)
        if hits:
            leftovers[word] = hits[:3]
    assert not leftovers, f"text of the previous model still shown: {leftovers}"


def test_margin_change_clears_the_tune_verdict(qtbot, window):
    """common practice: a margin verdict is true for one margin; after the margin is changed in
    Properties the Apply message (which states the old check) is gone or restated for the new
    margin."""
    _open(qtbot, window, "shaker_fixture.json")
    panel = window.tune_panel
    qtbot.mouseClick(panel.propose_button, Qt.MouseButton.LeftButton)
    qtbot.mouseClick(panel.retune_button, Qt.MouseButton.LeftButton)
    qtbot.mouseClick(panel.apply_button, Qt.MouseButton.LeftButton)
    old = panel.message.text()
    assert "Margin check" in old
    window.scene.select_ids([])
    margin = window.properties.widget("margin_percent")
    margin.setFocus()
    margin.selectAll()
    qtbot.keyClicks(margin, "40")
    qtbot.keyClick(margin, Qt.Key.Key_Return)
    assert window.document.model.margin_percent == 40
    _wait_results(qtbot, window)
    assert "15 %" not in panel.message.text()
    assert panel.ranking_label.text() == "" or "15 %" not in panel.ranking_label.text()


def test_header_and_counts_follow_the_model(qtbot, window):
    """common practice: the Properties header names the model shown and its element counts
    change with every edit (Open, a rename, a spring added, undo)."""
    _open(qtbot, window, "shaker_fixture.json")
    props = window.properties
    window.scene.select_ids([])
    assert props.title.text() == "Model: Test fixture and unit on a shaker table"
    assert "3 springs" in props.counts_label.text()
    name = props.widget("name")
    name.setFocus()
    name.selectAll()
    qtbot.keyClicks(name, "Fixture B")
    qtbot.keyClick(name, Qt.Key.Key_Return)
    assert props.title.text() == "Model: Fixture B"
    window.document.connect("spring", "fixture", "unit")
    assert "4 springs" in props.counts_label.text()
    window.document.undo_stack.undo()
    assert "3 springs" in props.counts_label.text()
    _open(qtbot, window, "rod_chain.json")
    window.scene.select_ids([])
    assert props.title.text() == f"Model: {window.document.model.name}"
    assert "41 springs" in props.counts_label.text() and "40 masses" in props.counts_label.text()


def test_revert_and_new_clear_the_tune_messages(qtbot, window, tmp_path):
    """common practice: File > Revert to saved reloads the file and drops every message about
    the edits it undid; File > New leaves no result of the old model on screen."""
    import shutil

    path = tmp_path / "fixture.json"
    shutil.copy(EXAMPLES / "shaker_fixture.json", path)
    _open(qtbot, window, path)
    saved = window.document.model
    _use_everything(qtbot, window)
    assert window.document.dirty
    window._confirm_revert = lambda: True
    revert = next(a for a in window.findChildren(QAction) if a.text() == "Re&vert to saved")
    revert.trigger()
    assert window.document.model == saved and not window.document.dirty
    panel = window.tune_panel
    assert panel.message.text() == "" and panel.ranking_label.text() == ""
    assert not panel.apply_button.isEnabled()
    _wait_results(qtbot, window)
    window.act_new.trigger()
    assert window.modes_table.view.model().rowCount() == 0
    assert window.sensitivity_table.view.model().rowCount() == 0
    texts = window_texts(window)
    for word in ("Isolator pad", "Fixture plate", "Sine test band"):
        assert not _found(word, texts), _found(word, texts)
