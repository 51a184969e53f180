"""The window as a file opened from the command line first shows it (1600 x 1000 screen, no saved
layout): every column, caption, axis title, field and tab reads whole.

common practice: a number that is cut, a title drawn over the tick labels it names or a caption
that ends in "..." is a number or a sentence the user cannot read; a table whose last columns hide
behind a scroll bar hides the effective masses a check needs.
"""

from pathlib import Path

import pyqtgraph as pg
import pytest
from PySide6.QtCore import QPoint, QSize, Qt
from PySide6.QtGui import QFont, QFontMetrics, QPainter, QPicture
from PySide6.QtWidgets import QDockWidget, QStyle, QTabBar

from _screen import settled

EXAMPLES = Path(__file__).resolve().parents[2] / "assets" / "examples"
ALL_EXAMPLES = sorted(p.name for p in EXAMPLES.glob("*.json"))


def _settle(qtbot, window):
    window.solver.wait()
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model is window.document.model, timeout=8000)
    qtbot.wait(200)
    # results computed off the window's thread (response curves in a thread, the Tune sweep in
    # a worker process) are in before the screen is read, however slow the machine
    assert window.tune_panel.wait_sweep()
    qtbot.waitUntil(lambda: not window.response_panel._computing, timeout=10000)


@pytest.fixture
def first_start(qtbot, settings, tmp_path):
    """``open(name)``: a window opened on an example before it is shown, as ``springwright
    FILE`` does, at its first size on a 1600 x 1000 screen."""
    from app.main_window import MainWindow, first_size

    made = []

    def open_(name=None, settings_=settings):
        win = MainWindow(settings=settings_, recovery_folder=tmp_path / "recovery")
        win._ask_save_changes = lambda: "discard"
        qtbot.addWidget(win)
        made.append(win)
        if name is not None:
            assert win.open_path(EXAMPLES / name, ask=False)
        win.resize(*first_size(QSize(1600, 1000)))
        win.show()
        qtbot.waitExposed(win)
        qtbot.wait(50)
        if name is not None:
            _settle(qtbot, win)
        return win

    yield open_
    for win in made:
        win.solver.shutdown()


# -- 1. the modes table --------------------------------------------------------------------------
def _column_widths(view):
    hdr = view.horizontalHeader()
    return [hdr.sectionSize(c) for c in range(view.model().columnCount())]


def _assert_columns_fit(table, readable=True):
    """Every column in the viewport; each number column as wide as its widest text (the font's
    own metrics), the notes the rest of the width, and (``readable``) at least MIN_NOTES wide:
    a model with rigid bodies has two columns more, and the window widens the table for them
    rather than wrap the notes a word or two per line."""
    view = table.view
    model = view.model()
    widths = _column_widths(view)
    room = view.viewport().width()
    assert sum(widths) <= room, (widths, room)
    assert view.horizontalScrollBar().maximum() == 0
    fm = QFontMetrics(view.font())
    notes = model.columnCount() - 1
    for c in range(notes):
        texts = [str(model.index(r, c).data()) for r in range(model.rowCount())]
        need = max(fm.horizontalAdvance(t) for t in texts)
        assert widths[c] >= need + 4, (c, widths[c], need)
    assert widths[notes] >= room - sum(widths[:notes]) - 1, "the notes take the rest"
    if readable:
        from app.docks.modes_table import MIN_NOTES

        assert widths[notes] >= MIN_NOTES, (widths, room)


@pytest.mark.parametrize("name", ALL_EXAMPLES)
def test_the_modes_table_shows_every_column_at_the_first_size(qtbot, first_start, name):
    """Every example opened from the command line: the columns' widths add up to no more than
    the table's viewport (no horizontal scroll bar) and the notes wrap into taller rows."""
    window = first_start(name)
    # the window fits the table on a later event-loop turn than the results (late when slow)
    qtbot.waitUntil(lambda: _assert_columns_fit(window.modes_table), timeout=5000)


def test_the_modes_table_refits_for_a_larger_font(qtbot, first_start):
    """Fonts differ from one desktop to the next: with a font a third larger the columns are
    measured again and still fit."""
    window = first_start("fan_drive.json")
    view = window.modes_table.view
    font = QFont(view.font())
    font.setPointSizeF(font.pointSizeF() * 4 / 3)
    view.setFont(font)
    qtbot.wait(100)
    # the columns are measured again on a later event-loop turn (late on a slow machine)
    qtbot.waitUntil(lambda: _assert_columns_fit(window.modes_table, readable=False),
                    timeout=5000)


# -- 3. plot axes: titles clear of the tick labels and whole ---------------------------------------
def _plot_items(window):
    out = []
    for w in window.findChildren(pg.GraphicsView):
        if isinstance(w, pg.PlotWidget):
            out.append((w.objectName(), w.getPlotItem()))
        elif isinstance(w, pg.GraphicsLayoutWidget):
            out += [(w.objectName(), i) for i in w.ci.items if isinstance(i, pg.PlotItem)]
    return out


def _axis_problems(where, ax):
    """The title's rectangle against every tick label's rectangle as the axis draws them
    (AxisItem.generateDrawSpecs, in the axis's coordinates), and the title's length against
    the axis's."""
    if not ax.isVisible() or not ax.labelText or not ax.label.isVisible():
        return []
    picture = QPicture()
    p = QPainter(picture)
    try:
        specs = ax.generateDrawSpecs(p)
    finally:
        p.end()
    if specs is None:
        return []
    title = ax.label.mapRectToParent(ax.label.boundingRect())
    out = [f"{where} {ax.orientation} title {ax.labelText!r} over tick label {text!r}"
           for rect, _flags, text in specs[2] if rect.intersects(title)]
    vertical = ax.orientation in ("left", "right")
    length, room = (title.height(), ax.height()) if vertical else (title.width(), ax.width())
    if length > room + 0.5:
        out.append(f"{where} {ax.orientation} title {ax.labelText!r} cut: {length:.0f} >"
                   f" {room:.0f}")
    if vertical and (title.top() < -0.5 or title.bottom() > ax.height() + 0.5):
        out.append(f"{where} title {ax.labelText!r} runs off its axis")
    return out


def _plots_problems(window):
    out = []
    for name, pi in _plot_items(window):
        view = pi.getViewWidget()
        if not pi.isVisible() or not view.isVisible() or \
                view.viewport().visibleRegion().isEmpty():
            continue                      # a panel tabbed behind another
        for side in ("left", "bottom"):
            out += _axis_problems(name, pi.getAxis(side))
    return out


def _raise(window, name):
    return lambda: window.findChild(QDockWidget, name).raise_()


@pytest.mark.parametrize("name", ["fan_drive.json", "pump_shaft.json", "shaker_fixture.json",
                                  "rod_chain.json"])
def test_axis_titles_clear_of_tick_labels_and_whole(qtbot, first_start, name):
    """Every plot of the window (Response magnitude and phase, the Tune sweep, the free-response
    traces, the interference diagram): no axis title touches a tick label and none is longer
    than its axis, whatever the tick labels' width (engineering notation: ``100e-12``)."""
    window = first_start(name)
    response, tune = window.response_panel, window.tune_panel
    problems = []
    for state, show, computed in [
            ("Response", _raise(window, "dock_response"), response.wait),
            ("Tune", _raise(window, "dock_tune"), tune.wait_sweep),
            ("Interference", _raise(window, "dock_interference"), None),
            ("free response", window.motion_panel.show_free_response, None),
            ("Response with free response", _raise(window, "dock_response"), response.wait)]:
        show()
        qtbot.wait(100)
        # curves computed off the window's thread (Response in a thread, the Tune sweep in a
        # worker process) arrive later, with new ticks: check once they are in
        if computed is not None:
            assert computed(), f"{state}: the curves never came"
        # an axis learns its tick labels' width when it first draws them and makes room on the
        # next layout pass, which a slow machine runs late: the axis has until then
        found = settled(qtbot, lambda: _plots_problems(window), timeout_s=8.0)
        problems += [f"{state}: {p}" for p in found]
    assert not problems, "\n".join(problems)


def test_a_long_axis_title_wraps_to_fit_a_short_axis(qtbot):
    """A title longer than its axis goes onto two lines (the quantity, then the unit), still
    clear of the tick labels; with room again it is one line."""
    from app.drawing.plot_axes import true_value_axes

    plot = pg.PlotWidget(axisItems=true_value_axes())
    qtbot.addWidget(plot)
    plot.setLabel("left", "|displacement| (rad/(N m))")
    plot.plot([1.0, 2.0, 3.0], [1e-12, 3e-9, 2e-6])
    plot.resize(400, 120)
    plot.show()
    qtbot.waitExposed(plot)
    ax = plot.getAxis("left")
    # the axis learns its tick labels' width when it first draws them and widens on the next
    # layout pass (pyqtgraph's order); on a slow machine that pass can come after 100 ms
    qtbot.waitUntil(lambda: not _axis_problems("plot", ax), timeout=3000)
    one_line = QFontMetrics(ax.label.font()).horizontalAdvance(ax.labelText)
    assert one_line > ax.height()
    assert "<br>" in ax.labelString()
    plot.resize(400, 500)
    qtbot.waitUntil(lambda: "<br>" not in ax.labelString(), timeout=3000)
    qtbot.waitUntil(lambda: not _axis_problems("plot", ax), timeout=3000)


# -- 2. the motion view's caption: whole, never elided ---------------------------------------------
def _wrapped_height(fm, width, text):
    return fm.boundingRect(0, 0, int(width), 100000, int(Qt.TextFlag.TextWordWrap), text).height()


@pytest.mark.parametrize("name", ["fan_drive.json", "pump_shaft.json"])
def test_the_motion_caption_is_whole_at_the_first_size(qtbot, first_start, name):
    """A rigid-body mode's caption with its cause ("the whole shaft can spin freely ...") is
    longer than the Motion panel is wide: it wraps, every word of it is drawn, and the drawing
    starts below its last line; the hint under the drawing is whole too."""
    window = first_start(name)
    window.motion_panel.show_mode(1)
    qtbot.wait(100)
    view = window.motion_panel.view
    caption = view.caption
    assert "(rigid)" in caption
    font = view.caption_font()
    fm = QFontMetrics(font)
    width = view.width() - 16
    assert fm.horizontalAdvance(caption) > width, "the case needs a caption longer than a line"
    need = _wrapped_height(fm, width, caption)
    sketch = view.layout_().rect
    assert sketch.top() >= 4 + need, (sketch.top(), need)
    lines = view.text_lines("caption")
    assert " ".join(lines).split() == caption.split()
    assert all(fm.horizontalAdvance(t) <= width for t in lines)
    assert view.text_rect("caption").height() >= len(lines) * fm.lineSpacing()
    assert view.text_rect("caption").bottom() <= sketch.top()
    hint = view.text_lines("hint")
    assert " ".join(hint).split() == view.hint.split()
    assert view.text_rect("hint").top() >= sketch.bottom()


def test_the_motion_caption_wraps_in_a_narrow_panel_and_the_drawing_stays_put(qtbot):
    """Mode to mode in a narrow Motion panel: every caption whole; the drawing is fitted once
    for the longest caption seen, not moved each time a caption changes its line count."""
    from app.docks.motion_panel import MotionPanel
    from solver import analyse
    from solver.io import load_model

    panel = MotionPanel()
    qtbot.addWidget(panel)
    panel.resize(330, 420)
    panel.show()
    qtbot.waitExposed(panel)
    model = load_model(EXAMPLES / "fan_drive.json")
    panel.set_analysis(analyse(model))
    view = panel.view
    fm = QFontMetrics(view.caption_font())
    tops = []
    for n in (1, 2, 3, 1):
        panel.show_mode(n)
        qtbot.wait(30)
        lines = view.text_lines("caption")
        assert " ".join(lines).split() == view.caption.split()
        assert all(fm.horizontalAdvance(t) <= view.width() - 16 for t in lines)
        assert view.layout_().rect.top() >= view.text_rect("caption").bottom()
        tops.append(view.layout_().rect.top())
    assert len(set(tops)) == 1, tops


def test_the_canvas_motion_caption_is_whole(qtbot, first_start):
    """Modes animated on the canvas: the caption in its corner wraps to the canvas's width."""
    from _screen import clipped_texts

    window = first_start("fan_drive.json")
    window.motion_panel.canvas_box.setChecked(True)
    window.motion_panel.show_mode(1)
    qtbot.wait(100)
    label = window.canvas_motion.caption

    def caption_whole():
        assert label.isVisible() and "(rigid)" in label.text()
        assert label.geometry().right() <= label.parentWidget().width()
        assert not [p for p in clipped_texts(window) if "canvas_motion_caption" in p]

    # the caption is placed and wrapped on a layout pass (late on a slow machine)
    qtbot.waitUntil(caption_whole, timeout=5000)


# -- 4. Properties: a long name reads from its start ---------------------------------------------
def test_a_long_model_name_shows_its_start_and_the_whole_in_the_tooltip(qtbot, first_start):
    """A name longer than the Name field: the field shows its first characters
    (cursor at 0, nothing scrolled off on the left) and its tooltip holds the whole name; the
    same after the name is changed by an undo."""
    window = first_start("fan_drive.json")
    field = window.properties.widget("name")
    panel_width = window.properties.width()
    long = window.document.model.name
    while QFontMetrics(field.font()).horizontalAdvance(long) <= field.width() + 40:
        long += ", second build for the variable-speed study"   # longer than the field
    window.document.set_top(name=long)
    qtbot.wait(20)
    assert window.properties.width() == panel_width, "a long name must not widen the panel"
    assert window.properties.title.width() <= panel_width
    edit = window.properties.widget("name")
    name = window.document.model.name
    assert QFontMetrics(edit.font()).horizontalAdvance(name) > edit.width(), "needs a long name"
    assert edit.text() == name
    assert edit.cursorPosition() == 0
    assert edit.cursorRect().left() < 8
    assert name in edit.toolTip()
    window.document.set_top(name=name + " (copy for the variable-speed study)")
    qtbot.wait(20)
    edit = window.properties.widget("name")
    assert edit.cursorPosition() == 0 and "variable-speed study" in edit.toolTip()
    window.document.undo_stack.undo()
    qtbot.wait(20)
    edit = window.properties.widget("name")
    assert edit.cursorPosition() == 0 and edit.toolTip().startswith(name + "\n")


def test_a_long_element_label_shows_its_start(qtbot, first_start):
    """A spring's label in its Label field: the start shows, the whole in the tooltip."""
    window = first_start("pump_shaft.json")
    spring = max(window.document.model.springs, key=lambda s: len(s.label))
    window.scene.select_ids([spring.id])
    qtbot.wait(20)
    edit = window.properties.widget("label")
    assert edit.text() == spring.label
    assert edit.cursorPosition() == 0
    assert spring.label in edit.toolTip()


# -- 5. the first tab of the bottom-right group ----------------------------------------------------
def _tab_bar(window):
    """The tab bar of the group that holds Tune (the bottom-right panels)."""
    for bar in window.findChildren(QTabBar):
        if "Tune" in [bar.tabText(i) for i in range(bar.count())] and bar.isVisible():
            return bar
    raise AssertionError("no tab bar with Tune")


def _shown_tab(window):
    bar = _tab_bar(window)
    return bar.tabText(bar.currentIndex())


@pytest.mark.parametrize("name", [None, "shaker_fixture.json"])
def test_the_first_start_shows_the_tune_tab(qtbot, first_start, name):
    """On a first start (no saved layout) the Tune tab is in front, with or without a file:
    frequencies in the table beside it, the tune controls to move them."""
    window = first_start(name)
    qtbot.wait(50)
    assert _shown_tab(window) == "Tune"
    tune = window.findChild(QDockWidget, "dock_tune")
    assert not tune.widget().visibleRegion().isEmpty()
    for other in ("dock_sensitivity", "dock_response", "dock_sources", "dock_interference"):
        assert window.findChild(QDockWidget, other).widget().visibleRegion().isEmpty(), other


def test_the_last_tab_comes_back_on_the_next_start(qtbot, first_start, settings):
    """The tab a user clicked is saved with the rest of the layout when the window closes and
    is in front again on the next start."""
    window = first_start("shaker_fixture.json")
    bar = _tab_bar(window)
    index = [bar.tabText(i) for i in range(bar.count())].index("Sources")
    qtbot.mouseClick(bar, Qt.MouseButton.LeftButton, pos=bar.tabRect(index).center())
    qtbot.wait(50)
    assert _shown_tab(window) == "Sources"
    window.close()
    settings.sync()
    again = first_start("shaker_fixture.json")
    qtbot.wait(50)
    assert _shown_tab(again) == "Sources"


# -- 6. combo boxes fit their text -----------------------------------------------------------------
def _combo_room(combo):
    from PySide6.QtWidgets import QStyle, QStyleOptionComboBox

    opt = QStyleOptionComboBox()
    combo.initStyleOption(opt)
    return combo.style().subControlRect(QStyle.ComplexControl.CC_ComboBox, opt,
                                        QStyle.SubControl.SC_ComboBoxEditField, combo).width()


def test_the_tune_element_list_fits_a_long_label(qtbot, first_start):
    """A spring renamed to a long label: the Tune panel's element box widens so that every entry,
    picked, shows whole (the controls' column grows, the sweep plot gives way)."""
    window = first_start("pump_shaft.json")
    spring = window.document.model.springs[0]
    window.document.set_element(spring.id, label="Motor shaft end, keyed hub and flexible disc")
    qtbot.wait(100)
    combo = window.tune_panel.element_combo
    fm = QFontMetrics(combo.font())

    def every_entry_fits():
        for i in range(combo.count()):
            combo.setCurrentIndex(i)
            qtbot.wait(10)
            assert fm.horizontalAdvance(combo.currentText()) <= _combo_room(combo), \
                combo.currentText()

    # the controls' column grows on a layout pass after the edit (late on a slow machine)
    qtbot.waitUntil(every_entry_fits, timeout=5000)


# -- 7. Properties: every field without scrolling ----------------------------------------------------
@pytest.mark.parametrize("name", ALL_EXAMPLES)
def test_properties_shows_every_field_without_scrolling(qtbot, first_start, name):
    """The model's fields, a mass's (a planar mass has twelve rows: label, position, mass,
    locks, initial displacement and velocity in x, y and θ) and a spring's, each without a
    scroll bar at the first size."""
    from PySide6.QtWidgets import QScrollArea

    window = first_start(name)
    scroll = window.findChild(QScrollArea, "properties_scroll")
    model = window.document.model
    for what, ids in [("model", []), ("mass", [model.masses[0].id]),
                      ("spring", [model.springs[0].id])]:
        window.scene.select_ids(ids)
        qtbot.wait(60)

        def no_scrolling():
            assert scroll.verticalScrollBar().maximum() == 0, \
                (what, scroll.widget().minimumSizeHint().height(), scroll.viewport().height())

        # the scroll range follows the new fields on a layout pass (late on a slow machine)
        qtbot.waitUntil(no_scrolling, timeout=5000)


# -- and the sensitivity table's headings ------------------------------------------------------------
def test_sensitivity_headings_fit_in_a_larger_font(qtbot):
    """The 40-mass rod's mode headings ("mode 12" over "29.2296e3 Hz") in a font a fifth larger
    than the default: every heading's wider line fits its column."""
    from app.docks.sensitivity_table import SensitivityTable
    from solver import analyse
    from solver.io import load_model

    table = SensitivityTable()
    qtbot.addWidget(table)
    font = QFont(table.font())
    font.setPointSizeF(font.pointSizeF() * 1.2)
    table.setFont(font)
    table.resize(900, 300)
    table.show()
    qtbot.waitExposed(table)
    table.set_analysis(analyse(load_model(EXAMPLES / "rod_chain.json")))
    qtbot.wait(20)
    hdr = table.view.horizontalHeader()
    fm = QFontMetrics(hdr.font())
    model = table.view.model()
    assert model.columnCount() == 41

    def every_heading_fits():
        for c in range(1, model.columnCount()):
            text = model.headerData(c, Qt.Orientation.Horizontal)
            need = max(fm.horizontalAdvance(t) for t in text.split("\n"))
            assert hdr.sectionSize(c) >= need + 8, (text, hdr.sectionSize(c), need)

    # the header sizes its sections on a delayed layout pass (late on a slow machine)
    qtbot.waitUntil(every_heading_fits, timeout=5000)
    # sorted by mode 3: its heading shares the column with the sort arrow
    x = hdr.sectionViewportPosition(3) + hdr.sectionSize(3) // 2
    qtbot.mouseClick(hdr.viewport(), Qt.MouseButton.LeftButton, pos=QPoint(x, 5))
    qtbot.wait(20)
    assert hdr.sortIndicatorSection() == 3
    arrow = hdr.style().pixelMetric(QStyle.PixelMetric.PM_HeaderMarkSize, None, hdr)
    text = model.headerData(3, Qt.Orientation.Horizontal)
    need = max(fm.horizontalAdvance(t) for t in text.split("\n"))
    qtbot.waitUntil(lambda: hdr.sectionSize(3) >= need + 8 + arrow, timeout=5000)
