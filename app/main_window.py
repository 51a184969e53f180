"""The main window: lays out the panels and wires the actions. Logic lives in the parts.

Centre: the sketch canvas. Right: properties. Bottom: modes table (with solver warnings above it)
and the motion panel. File, edit, tool and export actions are here with shortcuts and tooltips.
"""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import QSettings, QSignalBlocker, Qt, QTimer, QUrl
from PySide6.QtGui import QAction, QActionGroup, QKeySequence
from PySide6.QtWidgets import (QDockWidget, QFileDialog, QFrame, QHBoxLayout, QLabel, QMainWindow,
                               QMessageBox, QPushButton, QTextBrowser, QVBoxLayout, QWidget)

from solver.errors import ModelError

from app.canvas import MODE_INFO, CanvasView, Mode, ModelScene
from app.document.document import Document
from app.docks.modes_table import ModesTable
from app.docks.motion_panel import MotionPanel
from app.docks.properties import PropertyPanel
from app.document.recovery import Recovery
from app.document.solve_service import SolveService
from app.drawing.style import current_style, restyle

#: A pending solve is marked out of date only when it takes longer than this (ms).
STALE_DELAY_MS = 120


def first_size(available=None) -> tuple[int, int]:
    """Window size on a first start: most of the screen, at least 1100 x 720 and at most
    1800 x 1100 (the panels need the room; a saved geometry wins afterwards)."""
    if available is None:
        return 1400, 880
    w = int(min(1800, max(1100, available.width() * 0.92)))
    h = int(min(1100, max(720, available.height() * 0.92)))
    return min(w, available.width()), min(h, available.height())

MAX_RECENT = 8
FILE_FILTER = "Springwright models (*.json);;All files (*)"



CAUTION_TEXT = (
    "A lumped spring-mass model is an approximation of the real assembly: its frequencies, shapes,"
    " margins and responses depend on how the structure was idealised and on stiffness and mass"
    " values that are often uncertain. Confirm them by test or detailed analysis before they feed"
    " a decision about equipment that can hurt people. Local codes and licensed engineering"
    " practice govern.")

GUIDE_HTML = """
<h2>Springwright quick guide</h2>
<p><b>The main loop:</b> draw the assembly, read its natural frequencies, watch a mode,
set an initial push and play it, change a part to move a resonance, export the report.</p>
<h3>Drawing (Tools menu and toolbar)</h3>
<table cellpadding="3">
<tr><td><b>S</b></td><td>Select: click an element, drag to move, drag on empty canvas to
select an area. Delete removes the selection (a mass goes with its springs).</td></tr>
<tr><td><b>M</b></td><td>Place mass: click on the canvas. A mass of 0 kg is a massless
junction.</td></tr>
<tr><td><b>A</b></td><td>Place anchor: a fixed point (ground).</td></tr>
<tr><td><b>B</b></td><td>Place rigid body (planar models): a mass with an inertia that bounces,
sways and rocks. Springs attach where you press on the body (a mount point, drawn as a ring;
drag a ring to move it).</td></tr>
<tr><td><b>K</b></td><td>Connect spring: drag from one node to another.</td></tr>
<tr><td><b>D</b></td><td>Connect dashpot: drag from one node to another.</td></tr>
<tr><td><b>R</b></td><td>Connect gear stage (torsion models): drag from the disc on the faster
shaft to the disc it drives; the speed ratio is edited in Properties.</td></tr>
<tr><td><b>Esc</b></td><td>Back to Select (or cancel a connection).</td></tr>
<tr><td><b>Arrows, Tab, Enter</b></td><td>Without a mouse: in a place or connect tool the
arrows move a cross-hair one grid step (Shift: five), Tab jumps it from node to node, Enter
places there or starts and then ends a spring or dashpot. In Select, Tab walks the elements and
the arrows nudge the selected masses and anchors.</td></tr>
<tr><td><b>F</b>, wheel, middle drag</td><td>Fit, zoom, pan. <b>G</b> toggles grid snap.</td></tr>
<tr><td><b>Ctrl+Z / Ctrl+Shift+Z</b></td><td>Undo / redo every edit; a drag is one step.</td></tr>
</table>
<h3>Values</h3>
<p>The Properties panel edits the selection. Fields take a number with a unit
(<i>12 lbf/in</i>, <i>3.5 kN/mm</i>, <i>20 lb</i>, <i>0.4 kg m^2</i>); a plain number is in
the display units chosen at the top. A bad entry is refused in place with the reason.
The file always stores SI units.</p>
<h3>Modes and motion</h3>
<p>The Modes table updates after every edit: frequency, period, effective modal mass per
direction and its running total, and notes (zero-frequency modes with their cause, repeated
frequencies, modes within the margin of an excitation). Selecting a row animates that mode in
the Motion panel. Switch the Motion panel to the free response to play the motion from the
initial conditions; drag a mass there and let go to set its initial displacement (or type it
in the mass's properties). Keys: <b>[</b> and <b>]</b> previous and next mode, <b>I</b> free
response, <b>P</b> play or pause, <b>.</b> one step, <b>Home</b> back to t = 0,
<b>Ctrl+R</b> export the report.</p>
<h3>Moving a resonance</h3>
<p>The Tune panel changes one spring or mass with a slider (a decade either way) while the modes
follow; the sweep plot shows every mode against that value with the excitation bands and their
margin. <i>Propose</i> picks the element that governs the chosen mode, <i>Retune</i> finds the
value that puts it on a target frequency, <i>Apply</i> sets it (one undo step). The Sensitivity
tab lists (p/f) df/dp of every mode to every element.</p>
<h3>Excitation sources</h3>
<p>The Sources panel lists the shaft speeds and frequency bands the model is checked against:
<i>Add speed</i> (or Insert in the list), <i>Add band</i>, Delete. A speed takes a unit
(<i>1450 rpm</i>, <i>24 Hz</i>, <i>150 rad/s</i>), runs at one speed or over a range (a
variable-speed drive, run-up), and lists its orders (<i>1, 2, 4.5</i>). The Margin table tab
gives every mode's separation from every source, pass or fail, and the nearest frequency clear
of all of them. The Interference diagram plots each order line against shaft speed with the
natural frequencies across it; a dot marks where they meet inside the operating range.</p>
<h3>Tolerances and absorbers</h3>
<p>Give a spring, dashpot or mass a <i>Tolerance (±%)</i> in Properties (uniform, normal or
triangular). The Study tab samples that many models (the seed makes it repeatable) and shows each
mode's spread, its 5/50/95 percentiles, the chance of clearing every source and the worst-case
corners; <i>Cancel</i> keeps what was solved. The Absorber tab sizes a tuned absorber for a mode
at the mass you protect (Den Hartog's optimum) and <i>Add absorber</i> puts it in (one undo
step).</p>
<h3>Cautions</h3>
<p>""" + CAUTION_TEXT + """</p>
"""


class _GuideWindow(QTextBrowser):
    """The quick guide: a window of its own (not modal) that Esc closes, as help windows do."""

    def keyPressEvent(self, event):  # noqa: N802
        if event.key() == Qt.Key.Key_Escape and event.modifiers() == Qt.KeyboardModifier.NoModifier:
            self.close()
            return
        super().keyPressEvent(event)


class MainWindow(QMainWindow):
    def __init__(self, settings: QSettings | None = None, recovery_folder=None):
        super().__init__()
        self.settings = settings if settings is not None else QSettings()
        self.document = Document(parent=self)
        # attached to the document at the end, once every view follows it (see attach)
        self.solver = SolveService(parent=self)
        self.analysis = None
        self._selected_mode = 1

        # -- panels ---------------------------------------------------------------------------
        self.scene = ModelScene(self.document, self)
        self.view = CanvasView(self.scene)
        self.view.setObjectName("canvas")
        central = QWidget()
        lay = QVBoxLayout(central)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(0)
        self.recovery_bar = self._make_recovery_bar()
        lay.addWidget(self.recovery_bar)
        lay.addWidget(self.view, 1)
        self.setCentralWidget(central)

        system = str(self.settings.value("units/system", "SI"))
        self.properties = PropertyPanel(self.document, system)
        self.properties.unit_system_changed.connect(
            lambda s: self.settings.setValue("units/system", s))
        self.properties.status_message.connect(lambda m: self.statusBar().showMessage(m, 8000))
        props_dock = self._dock("Properties", self.properties, Qt.RightDockWidgetArea,
                                "dock_properties")

        results = QWidget()
        rl = QVBoxLayout(results)
        rl.setContentsMargins(2, 2, 2, 2)
        self.warnings_label = QLabel()
        self.warnings_label.setObjectName("warnings")
        self.warnings_label.setWordWrap(True)
        self.warnings_label.setTextInteractionFlags(Qt.TextSelectableByMouse)
        self.warnings_label.hide()
        rl.addWidget(self.warnings_label)
        self.modes_table = ModesTable()
        rl.addWidget(self.modes_table, 1)
        self._dock("Modes", results, Qt.BottomDockWidgetArea, "dock_modes")
        self.motion_panel = MotionPanel()
        motion_dock = self._dock("Motion", self.motion_panel, Qt.RightDockWidgetArea,
                                 "dock_motion")
        # beside Properties, not under it: both need their height (all the model's fields; a
        # drawing over its time traces)
        self.splitDockWidget(props_dock, motion_dock, Qt.Horizontal)
        from app.docks.response_panel import ResponsePanel

        self.response_panel = ResponsePanel(self.document, solve_service=self.solver)
        self.response_panel.status_message.connect(lambda m: self.statusBar().showMessage(m, 8000))
        self.response_dock = self._dock("Response", self.response_panel, Qt.BottomDockWidgetArea,
                                        "dock_response")
        # the display units chosen in Properties reach every view that shows a unit
        for view in (self.response_panel, self.modes_table, self.motion_panel):
            view.set_unit_system(self.properties.unit_system)
            self.properties.unit_system_changed.connect(view.set_unit_system)
        self.scene.unit_system = self.properties.unit_system
        self.properties.unit_system_changed.connect(
            lambda s: setattr(self.scene, "unit_system", s))

        self.pending_label = QLabel("")
        self.statusBar().addPermanentWidget(self.pending_label)
        self.mode_label = QLabel("")
        self.statusBar().addPermanentWidget(self.mode_label)
        caution = QLabel("Lumped-model estimate: confirm by test or detailed analysis")
        caution.setObjectName("caution_label")
        caution.setToolTip(CAUTION_TEXT)
        self.statusBar().addPermanentWidget(caution)

        # -- wiring ---------------------------------------------------------------------------
        self.scene.selection_ids_changed.connect(self.properties.set_selection)
        self.scene.status_message.connect(lambda m: self.statusBar().showMessage(m, 8000))
        self.scene.mode_changed.connect(self._on_mode_change)
        self.document.dirty_changed.connect(self._update_title)
        self.document.path_changed.connect(self._update_title)
        self.document.model_changed.connect(lambda _m: self._update_title())
        self.document.opened.connect(lambda _m: self.view.fit())
        self.solver.results_ready.connect(self._on_results)
        self.solver.solve_failed.connect(self._on_solve_failed)
        self._stale_timer = QTimer(self)
        self._stale_timer.setSingleShot(True)
        self._stale_timer.setInterval(STALE_DELAY_MS)
        self._stale_timer.timeout.connect(lambda: self._show_stale(True))
        self.solver.pending_changed.connect(self._on_pending_change)
        if hasattr(self.modes_table, "mode_selected"):
            self.modes_table.mode_selected.connect(self._on_mode_selected)
        self.motion_panel.initial_conditions_requested.connect(self._on_initial_request)
        from app.canvas.motion_overlay import CanvasMotion

        self.canvas_motion = CanvasMotion(self.scene, self.view)
        self.motion_panel.canvas_frame.connect(self.canvas_motion.show_frame)

        self._make_actions()
        self._add_tune_panels()
        self._add_source_panels()
        self._add_loads_panel()
        self._add_study_panels()
        # after every panel's own handler: it clears what the panels show of the last model and
        # then hands them the new model's results if they are already in
        self.document.opened.connect(self._on_opened)
        self._opened_wired = True
        self.setAcceptDrops(True)
        self.recovery = Recovery(self.document, self.settings, folder=recovery_folder, parent=self)
        self.recovery.status_message.connect(lambda m: self.statusBar().showMessage(m, 12000))
        geometry = self.settings.value("window/geometry")
        if geometry is not None:
            self.restoreGeometry(geometry)
        else:
            self.resize(*first_size(self.screen().availableGeometry().size()
                                    if self.screen() is not None else None))
        state = self.settings.value("window/state")
        if state is not None:
            self.restoreState(state)
        else:
            self._first_layout_due = True    # on the first show: the window has its real size
            self._first_layout_pending = True
        self._update_title()
        self._on_mode_change(self.scene.mode)
        # last: a small model's edit is then solved after every view has taken the new model,
        # and the edit and its results are painted together
        self.solver.attach(self.document, immediate=True)

    # -- layout helpers -----------------------------------------------------------------------
    def showEvent(self, event):  # noqa: N802 (Qt's name)
        super().showEvent(event)
        if getattr(self, "_first_layout_due", False):
            self._first_layout_due = False
            QTimer.singleShot(0, self._first_layout)

    def _first_layout(self):
        """Dock sizes on a first start. Top row: the canvas, Properties (every model field
        without scrolling), Motion. Bottom row: the modes table wide enough for all its columns,
        then the Tune / Sensitivity / Response tabs, Tune in front."""
        docks = {d.objectName(): d for d in self.findChildren(QDockWidget)}
        row = [docks[n] for n in ("dock_modes", "dock_tune") if n in docks]
        w, h = self.width(), self.height()
        if len(row) == 2:
            self.resizeDocks(row, [int(w * 0.44), int(w * 0.56)], Qt.Horizontal)
            self.resizeDocks(row[:1], [int(h * 0.56)], Qt.Vertical)
        side = [docks[n] for n in ("dock_properties", "dock_motion") if n in docks]
        if len(side) == 2:
            self.resizeDocks(side, [int(w * 0.235), int(w * 0.30)], Qt.Horizontal)
        # Tune in front: the main loop reads the frequencies in the table and moves them there.
        # Raised here, once the window is shown: a raise_() before the tab bar exists is lost
        # and left whichever tab Qt put in front. A saved layout brings back the user's tab.
        if "dock_tune" in docks:
            docks["dock_tune"].raise_()
        self._first_layout_pending = False
        for name in list(getattr(self, "_builders", {})):
            self._build_if_shown(name)
        QTimer.singleShot(0, self.view.fit)   # the canvas has its final size now

    def _widen_modes(self, want: int) -> None:
        """Give the modes table the width its columns need (a model with rigid bodies has two
        more), taken from the Tune tabs beside it, up to 60 % of the window."""
        modes = self.findChild(QDockWidget, "dock_modes")
        tune = self.findChild(QDockWidget, "dock_tune")
        if modes is None or tune is None or modes.isFloating() or tune.isFloating() \
                or not (modes.isVisible() and tune.isVisible()):
            return
        target = min(want + modes.width() - self.modes_table.width(), int(0.6 * self.width()))
        if target > modes.width():
            total = modes.width() + tune.width()
            self.resizeDocks([modes, tune], [target, total - target], Qt.Horizontal)

    def _dock(self, title, widget, area, name):
        dock = QDockWidget(title, self)
        dock.setObjectName(name)
        dock.setWidget(widget)
        self.addDockWidget(area, dock)
        return dock

    def _make_recovery_bar(self) -> QFrame:
        bar = QFrame()
        bar.setObjectName("recovery_bar")
        bar.setFrameShape(QFrame.StyledPanel)
        c = current_style().warning.name()
        bar.setStyleSheet(f"#recovery_bar {{ border: 1px solid {c}; }}")
        h = QHBoxLayout(bar)
        self.recovery_text = QLabel()
        h.addWidget(self.recovery_text, 1)
        restore = QPushButton("Restore")
        restore.setObjectName("recovery_restore")
        restore.setToolTip("Open the autosaved model (it stays unsaved until you save it)")
        restore.clicked.connect(self.restore_recovery)
        discard = QPushButton("Discard")
        discard.setObjectName("recovery_discard")
        discard.clicked.connect(self.discard_recovery)
        h.addWidget(restore)
        h.addWidget(discard)
        bar.hide()
        return bar

    def _action(self, text, slot, shortcut=None, tip="", menu=None, checkable=False):
        act = QAction(text, self)
        if shortcut is not None:
            act.setShortcut(QKeySequence(shortcut))
        if tip:
            act.setToolTip(tip)
            act.setStatusTip(tip)
        act.setCheckable(checkable)
        act.triggered.connect(slot)
        if menu is not None:
            menu.addAction(act)
        self.addAction(act)
        return act

    def _make_actions(self):
        mb = self.menuBar()
        f = mb.addMenu("&File")
        self.act_new = self._action("&New line model", lambda: self.new_model("line"),
                                    QKeySequence.New, "Start an empty line model", f)
        self._action("New &planar model", lambda: self.new_model("planar"), None,
                     "Start an empty planar model (x and y per mass)", f)
        self._action("New &torsion model", lambda: self.new_model("torsion"), None,
                     "Start an empty torsion model (discs on shafts)", f)
        self.act_open = self._action("&Open…", self.open_dialog, QKeySequence.Open,
                                     "Open a model file", f)
        self.recent_menu = f.addMenu("Open &recent")
        self._update_recent_menu()
        self.act_revert = self._action("Re&vert to saved", self.revert, None,
                                       "Drop the edits since the last save and reload the file", f)
        f.addSeparator()
        self.act_save = self._action("&Save", self.save, QKeySequence.Save, "Save the model", f)
        self.act_save_as = self._action("Save &as…", self.save_as, QKeySequence.SaveAs,
                                        "Save the model to a new file", f)
        f.addSeparator()
        self._action("Export &report (PNG)…", self.export_report_dialog, "Ctrl+R",
                     "Write the review report as a PNG image", f)
        self._action("Export response &plot (PNG)…", self.response_panel.export_png_dialog, None,
                     "Write the Response panel's plot as a PNG image", f)
        self._action("Export response &data (CSV)…", self.response_panel.export_csv_dialog, None,
                     "Write the Response panel's curves (magnitude, phase) as CSV", f)
        self._action("Export mode &table (CSV)…", self.export_csv_dialog, None,
                     "Write the modes table as CSV", f)
        f.addSeparator()
        self._action("&Quit", self.close, QKeySequence.Quit, "Close Springwright", f)

        e = mb.addMenu("&Edit")
        # every edit says what it did (more specific messages from the canvas follow it)
        self.document.undo_stack.indexChanged.connect(self._on_undo_index)
        self.act_undo = self.document.undo_stack.createUndoAction(self, "&Undo")
        self.act_undo.setShortcut(QKeySequence.Undo)
        self.act_redo = self.document.undo_stack.createRedoAction(self, "&Redo")
        self.act_redo.setShortcut(QKeySequence.Redo)
        e.addAction(self.act_undo)
        e.addAction(self.act_redo)
        self.addAction(self.act_undo)
        self.addAction(self.act_redo)
        e.addSeparator()
        self._action("&Copy", self.scene.copy_selection, QKeySequence.Copy,
                     "Copy the selected elements", e)
        self._action("&Paste", self.scene.paste, QKeySequence.Paste,
                     "Paste copies of the copied elements", e)
        self.act_delete = self._action("&Delete", self.scene.delete_selection,
                                       QKeySequence.Delete,
                                       "Delete the selection (with springs of deleted masses)", e)
        self._action("Select &all", self.scene.select_all, QKeySequence.SelectAll,
                     "Select every element", e)
        e.addSeparator()
        self._action("Copy modes table", self.copy_table, "Ctrl+Shift+C",
                     "Copy the modes table to the clipboard (tab-separated)", e)

        v = mb.addMenu("&View")
        self._action("&Fit to view", self.view.fit, "F", "Show the whole model", v)
        self._action("Zoom &in", lambda: self.view.zoom_by(1.25), QKeySequence.ZoomIn, "", v)
        self._action("Zoom &out", lambda: self.view.zoom_by(0.8), QKeySequence.ZoomOut, "", v)
        snap = self._action("Snap to &grid", self._set_snap, "G",
                            "Snap placed and moved nodes to the grid", v, checkable=True)
        snap.setChecked(self.scene.snap)

        mo = mb.addMenu("&Motion")
        self._action("&Play / pause", self._toggle_play, "P",
                     "Play or pause the mode animation or the free response", mo)
        self._action("&Step", self._motion("step"), ".", "Advance the animation one frame", mo)
        self._action("&Restart", lambda: self.motion_panel.set_time(0.0), "Home",
                     "Back to t = 0 of the free response", mo)
        mo.addSeparator()
        self._action("&Free response", self._motion("show_free_response"), "I",
                     "Play the response to the model's initial conditions", mo)
        self._action("&Next mode", lambda: self._step_mode(+1), "]",
                     "Select and animate the next mode", mo)
        self._action("P&revious mode", lambda: self._step_mode(-1), "[",
                     "Select and animate the previous mode", mo)
        mo.addSeparator()
        self.act_canvas_motion = self._action(
            "Animate on &canvas", self.motion_panel.set_on_canvas, "C",
            "Play the mode (or the free response) on the main canvas too; only the drawing"
            " moves", mo, checkable=True)
        self.motion_panel.canvas_toggled.connect(self._on_canvas_motion_toggled)

        t = mb.addMenu("&Tools")
        tb = self.addToolBar("Tools")
        tb.setObjectName("toolbar_tools")
        group = QActionGroup(self)
        group.setExclusive(True)
        self.mode_actions = {}
        for mode, (text, key, hint) in MODE_INFO.items():
            act = self._action(text, lambda _c=False, m=mode: self.scene.set_mode(m), key,
                               f"{hint} [{key}]", t, checkable=True)
            group.addAction(act)
            tb.addAction(act)
            self.mode_actions[mode] = act
        tb.addSeparator()
        tb.addAction(self.act_undo)
        tb.addAction(self.act_redo)

        h = mb.addMenu("&Help")
        self._action("&Quick guide", self.show_guide, QKeySequence.HelpContents,
                     "How to draw a model, read its modes and move a resonance", h)
        self._action("&Cautions", self.show_guide, "",
                     "What a lumped model can and cannot tell you", h)

    def _on_undo_index(self, index: int):
        try:
            stack = self.document.undo_stack
            before, self._undo_index = getattr(self, "_undo_index", 0), index
            if index < before and index < stack.count():
                self.statusBar().showMessage(f"Undone: {stack.text(index)}", 5000)
            elif index > 0 and stack.count():
                self.statusBar().showMessage(stack.text(index - 1) or "Edited", 5000)
        except RuntimeError:   # the window is being torn down
            pass

    def _motion(self, name):
        return lambda: getattr(self.motion_panel, name, lambda: None)()

    def _toggle_play(self):
        mp = self.motion_panel
        if hasattr(mp, "is_playing"):
            mp.pause() if mp.is_playing() else mp.play()

    def _on_canvas_motion_toggled(self, on: bool):
        with QSignalBlocker(self.act_canvas_motion):
            self.act_canvas_motion.setChecked(on)

    def _step_mode(self, delta: int):
        n_modes = getattr(getattr(self.analysis, "modal", None), "n_modes", 0) \
            if getattr(self, "analysis", None) is not None else 0
        if not n_modes:
            return
        mode = min(max(1, self._selected_mode + delta), n_modes)
        self._select_mode(mode)
        self._on_mode_selected(mode)
        if hasattr(self, "tune_panel"):
            self.tune_panel.set_mode(mode)
            self.energy_tint.show(self.solver.last_analysis, mode)

    def _add_tune_panels(self):
        """Tune panel beside the modes table, sensitivity table tabbed with it, energy tint."""
        from app.canvas.energy_view import EnergyTint
        from app.docks.sensitivity_table import SensitivityTable
        from app.docks.tune_panel import TunePanel

        self.tune_panel = TunePanel(self.document, self.solver)
        self.tune_panel.status_message.connect(lambda m: self.statusBar().showMessage(m, 8000))
        self.tune_panel.set_unit_system(getattr(self.properties, "unit_system", "SI"))
        self.properties.unit_system_changed.connect(self.tune_panel.set_unit_system)
        tune_dock = self._dock("Tune", self.tune_panel, Qt.BottomDockWidgetArea, "dock_tune")
        modes_dock = self.findChild(QDockWidget, "dock_modes")
        if modes_dock is not None:
            self.splitDockWidget(modes_dock, tune_dock, Qt.Horizontal)
            self.modes_table.needs_width.connect(
                lambda want: QTimer.singleShot(0, lambda: self._widen_modes(want)))
        self.sensitivity_table = SensitivityTable(self.solver)
        sens_dock = self._dock("Sensitivity", self.sensitivity_table, Qt.BottomDockWidgetArea,
                               "dock_sensitivity")
        self.tabifyDockWidget(tune_dock, sens_dock)
        # the Response plots share the Tune tab stack: beside the modes table they get the width
        # their controls and curves need, which three panels in one row could not give
        self.tabifyDockWidget(sens_dock, self.response_dock)
        self.energy_tint = EnergyTint(self.scene, self.view)
        view_menu = next(a.menu() for a in self.menuBar().actions() if a.text() == "&View")
        view_menu.addSeparator()
        self.act_energy = self._action(
            "&Energy tint", self.energy_tint.set_enabled, "E",
            "Tint springs by strain-energy share and masses by kinetic-energy share in the"
            " selected mode", view_menu, checkable=True)

        def follow_mode(mode):
            self.tune_panel.set_mode(mode)
            self.energy_tint.show(self.solver.last_analysis, mode)

        self.solver.results_ready.connect(lambda a: self.energy_tint.show(a, self._selected_mode))
        if hasattr(self.modes_table, "mode_selected"):
            self.modes_table.mode_selected.connect(follow_mode)

    def _add_source_panels(self):
        """Sources (editor and margin table) tabbed with Tune; the interference diagram tabbed
        with Response. Both follow the solve service's results; each clears itself when another
        model is opened. Both are built when their tab is first shown (see :meth:`_lazy_dock`)."""
        self._lazy_dock("Sources", "dock_sources", self._build_sources,
                        self.findChild(QDockWidget, "dock_sensitivity"))
        self._lazy_dock("Interference diagram", "dock_interference", self._build_interference,
                        self.response_dock)
        # a panel behind another tab does no work on an edit; its tab shown, it catches up
        for name, panel in (("dock_tune", self.tune_panel), ("dock_response", self.response_panel),
                            ("dock_sensitivity", self.sensitivity_table)):
            self.findChild(QDockWidget, name).visibilityChanged.connect(
                lambda shown, p=panel: shown and p.catch_up())

    def _build_sources(self):
        from app.docks.sources_panel import SourcesPanel

        return SourcesPanel(self.document)

    def _build_interference(self):
        from app.docks.interference_panel import InterferencePanel

        panel = InterferencePanel(self.document)
        self.solver.live_changed.connect(panel.set_live)
        panel.set_live(self.solver.live)
        return panel

    def _add_loads_panel(self):
        """Loads (random vibration, shock, design spectrum), tabbed with Response; it computes
        only when shown and clears itself when another model is opened."""
        self._lazy_dock("Loads", "dock_loads", self._build_loads,
                        self.findChild(QDockWidget, "dock_interference"))

    def _build_loads(self):
        from app.docks.loads_panel import LoadsPanel

        panel = LoadsPanel(self.document)
        self.document.opened.connect(panel.reset)
        return panel

    def _add_study_panels(self):
        """Study (tolerance scatter) and Absorber (tuned absorber assistant), tabbed with the
        Response plots."""
        self._lazy_dock("Study", "dock_study", self._build_study,
                        self.findChild(QDockWidget, "dock_loads"))
        self._lazy_dock("Absorber", "dock_absorber", self._build_absorber,
                        self.findChild(QDockWidget, "dock_study"))

    def _build_study(self):
        from app.docks.study_panel import StudyPanel

        return StudyPanel(self.document)

    def _build_absorber(self):
        from app.docks.absorber_panel import AbsorberPanel

        return AbsorberPanel(self.document)

    # -- panels built on first show ------------------------------------------------------------
    # Behind their tabs at the start, these panels cost the first paint a third of the window's
    # construction (their plots, tables and imports); each is built the first time its tab is
    # shown, or when the program asks for it (``window.loads_panel``), and is then the same
    # panel it would have been from the start: wired to the document and the solve service,
    # handed the current results, and with the window's and the solve service's handlers of
    # the document still connected after its own (the order the eager panels had).
    sources_panel = property(lambda self: self._panel("dock_sources"))
    interference_panel = property(lambda self: self._panel("dock_interference"))
    loads_panel = property(lambda self: self._panel("dock_loads"))
    study_panel = property(lambda self: self._panel("dock_study"))
    absorber_panel = property(lambda self: self._panel("dock_absorber"))

    def _lazy_dock(self, title, name, build, tab_with) -> QDockWidget:
        """A dock tabbed with ``tab_with`` whose panel ``build()`` makes on its first showing."""
        if not hasattr(self, "_builders"):
            self._builders, self._panels = {}, {}
        placeholder = QWidget()
        placeholder.setObjectName(f"{name}_placeholder")
        dock = self._dock(title, placeholder, Qt.BottomDockWidgetArea, name)
        if tab_with is not None:
            self.tabifyDockWidget(tab_with, dock)
        self._builders[name] = build
        # Qt reports a tab "shown" while the window lays out its tab group (the last tab added
        # is in front until the first layout raises Tune): the build waits for the event loop
        # and happens only if the tab is still on screen then
        dock.visibilityChanged.connect(
            lambda shown: shown and QTimer.singleShot(0, dock, lambda: self._build_if_shown(name)))
        return dock

    def _build_if_shown(self, name: str) -> None:
        from app.docks.on_screen import on_screen

        dock = self.findChild(QDockWidget, name)
        if dock is None:
            return
        if name in self._builders:
            # before the first layout the front tab is not yet the one the user will see
            if not on_screen(dock.widget()) or getattr(self, "_first_layout_pending", False):
                return
            self._panel(name)
        catch_up = getattr(self._panels[name], "catch_up", None)
        if catch_up is not None:
            catch_up()

    def _panel(self, name: str):
        """The panel of dock ``name``, built now if it has not been."""
        build = self._builders.pop(name, None)
        if build is None:
            return self._panels[name]
        panel = build()
        self._panels[name] = panel
        # what every such panel has: its messages in the status bar, the solve service's results
        if hasattr(panel, "status_message"):
            panel.status_message.connect(lambda m: self.statusBar().showMessage(m, 8000))
        if hasattr(panel, "set_analysis"):
            self.solver.results_ready.connect(panel.set_analysis)
        dock = self.findChild(QDockWidget, name)
        placeholder = dock.widget()
        dock.setWidget(panel)
        if placeholder is not None:
            placeholder.deleteLater()
        # the window's own handler of another model and the solve service's handler of an edit
        # stay the last ones (see __init__): the panel takes an edit's model before its results
        if getattr(self, "_opened_wired", False):
            self.document.opened.disconnect(self._on_opened)
            self.document.opened.connect(self._on_opened)
        self.solver.connect_last()
        analysis = self.solver.last_analysis
        if analysis is not None and analysis.model is self.document.model and \
                hasattr(panel, "set_analysis"):
            panel.set_analysis(analysis)
        return panel

    def built_panels(self) -> list:
        """The panels built on first show that have been built (for shutdown and tests)."""
        return list(getattr(self, "_panels", {}).values())

    def show_guide(self):
        """A non-modal window with the tools, their keys, the main loop and the cautions."""
        if getattr(self, "_guide", None) is None:
            self._guide = _GuideWindow()
            self._guide.setObjectName("quick_guide")
            self._guide.setWindowTitle("Springwright quick guide")
            self._guide.setHtml(GUIDE_HTML)
            self._guide.resize(620, 560)
        self._guide.show()
        self._guide.raise_()

    # -- title, status ------------------------------------------------------------------------
    def _update_title(self, *_):
        self.setWindowTitle(f"{self.document.display_name}[*] — Springwright")
        self.setWindowModified(self.document.dirty)

    def _on_mode_change(self, mode):
        act = self.mode_actions.get(mode) if hasattr(self, "mode_actions") else None
        if act is not None:
            act.setChecked(True)
        self.mode_label.setText(f"Tool: {mode.value}")
        self.statusBar().showMessage(MODE_INFO[mode][2])

    def _on_pending_change(self, pending: bool):
        # A solve that answers within STALE_DELAY_MS (small models, every slider step) never
        # flashes the out-of-date marks; a slower one shows them until its results arrive.
        if pending:
            self._stale_timer.start()
        else:
            self._stale_timer.stop()
            self._show_stale(False)

    def _show_stale(self, stale: bool):
        stale = bool(stale) and self.solver.pending
        if hasattr(self.modes_table, "set_stale") and \
                getattr(self.modes_table, "is_stale", lambda: None)() != stale:
            self.modes_table.set_stale(stale)
        if stale:
            self.pending_label.setText("results out of date")
            restyle(self.pending_label, f"color: {current_style().warning.name()};")
        else:
            self.pending_label.setText("")

    def _set_snap(self, on: bool):
        self.scene.snap = on
        for item in self.scene.nodes.values():
            item.snap = on

    # -- results ------------------------------------------------------------------------------
    def _on_opened(self, model):
        """Another model (New, Open, Revert, Restore): until its own results arrive, no view
        shows results, names or verdicts of the previous one."""
        self.analysis = None
        self.response_panel.reset(model)
        self._selected_mode = 1
        self._show_warnings([])
        self.modes_table.set_analysis(None)
        self.motion_panel.set_analysis(None)
        if hasattr(self, "tune_panel"):
            self.sensitivity_table.set_analysis(None)
            self.tune_panel.set_analysis(None)
            self.energy_tint.show(None, 1)
        # a small model was solved inside the signal that opened it, before this clearing
        self.solver.repeat_results(model)

    def _on_results(self, analysis):
        self.analysis = analysis
        warnings = list(getattr(analysis, "warnings", ()) or ())
        self._show_warnings(warnings)
        if hasattr(self.modes_table, "set_analysis"):
            self.modes_table.set_analysis(analysis)
        if hasattr(self.motion_panel, "set_analysis"):
            self.motion_panel.set_analysis(analysis)
        n_modes = getattr(getattr(analysis, "modal", None), "n_modes", 0)
        if n_modes:
            # new results keep the motion view as it is (free response playing, say): the
            # table's selection follows, the motion panel only learns the mode number
            mode = min(self._selected_mode, n_modes)
            self._select_mode(mode, show=False)

    def _select_mode(self, mode: int, show: bool = True):
        self._selected_mode = mode
        for name in ("select_mode", "set_selected_mode", "select"):
            fn = getattr(self.modes_table, name, None)
            if callable(fn):
                try:
                    fn(mode)
                except Exception:  # a mismatch of the table's API must not break the window
                    continue
                break
        if show:
            self.motion_panel.show_mode(mode)
        else:
            self.motion_panel.set_mode(mode)

    def _on_mode_selected(self, mode: int):
        self._selected_mode = mode
        if hasattr(self.motion_panel, "show_mode"):
            self.motion_panel.show_mode(mode)
        self.statusBar().showMessage(f"Mode {mode} selected", 4000)

    def _on_solve_failed(self, message: str):
        self._show_warnings([f"Cannot solve: {message}"], error=True)

    def _show_warnings(self, warnings, error=False):
        if not warnings:
            self.warnings_label.hide()
            return
        st = current_style()
        color = (st.error if error else st.warning).name()
        text = "\n".join(f"⚠ {w}" for w in warnings)
        # only what changed (a style sheet or text set again lays the panel out anew)
        restyle(self.warnings_label, f"color: {color};")
        if self.warnings_label.text() != text:
            self.warnings_label.setText(text)
        self.warnings_label.show()

    def _on_initial_request(self, value: dict):
        """A drag in the motion view: ``{mass_id: {direction: displacement}}`` becomes one undo
        entry; the masses' initial velocities are kept."""
        from solver.model import Initial

        model = self.document.model
        put = []
        for mass_id, disp in value.items():
            old = model.initial_of(mass_id) or Initial(mass_id=mass_id)
            merged = dict(old.displacement)
            merged.update({d: float(v) for d, v in disp.items()})
            put.append(Initial(mass_id=mass_id, displacement=tuple(merged.items()),
                               velocity=old.velocity))
        try:
            names = ", ".join(value)
            self.document.apply(model.with_changes(put=put), f"Set initial displacement of {names}")
        except ModelError as exc:
            self.statusBar().showMessage(f"Initial conditions refused: {exc}", 8000)

    # -- files --------------------------------------------------------------------------------
    def _ask_save_changes(self) -> str:
        """'save', 'discard' or 'cancel' (tests replace this to answer without a dialog)."""
        box = QMessageBox(QMessageBox.Warning, "Unsaved changes",
                          f"“{self.document.display_name}” has unsaved changes.",
                          QMessageBox.Save | QMessageBox.Discard | QMessageBox.Cancel, self)
        box.setInformativeText("Save them first?")
        answer = box.exec()
        return {QMessageBox.Save: "save", QMessageBox.Discard: "discard"}.get(answer, "cancel")

    def _notify_error(self, title: str, message: str) -> None:
        """Tell the user a file action failed (tests replace this to avoid a modal box)."""
        if self.isVisible():
            QMessageBox.warning(self, title, message)

    def maybe_save(self) -> bool:
        """True when it is fine to drop the current model (saved, discarded or clean)."""
        if not self.document.dirty:
            return True
        answer = self._ask_save_changes()
        if answer == "save":
            return self.save()
        return answer == "discard"

    def new_model(self, kind="line"):
        if self.maybe_save():
            self.document.new(kind)
            self.statusBar().showMessage(f"New {kind} model", 4000)

    def open_dialog(self):
        if not self.maybe_save():
            return
        start = str(self.document.path.parent) if self.document.path else ""
        path, _ = QFileDialog.getOpenFileName(self, "Open model", start, FILE_FILTER)
        if path:
            self.open_path(path, ask=False)

    def _confirm_revert(self) -> bool:
        """True to drop the unsaved edits (tests replace this to answer without a dialog)."""
        answer = QMessageBox.question(
            self, "Revert to saved",
            f"Drop the unsaved changes of “{self.document.display_name}” and reload the file?",
            QMessageBox.Discard | QMessageBox.Cancel, QMessageBox.Cancel)
        return answer == QMessageBox.Discard

    def revert(self) -> bool:
        """Reload the model's file, dropping the edits since it was saved (after asking)."""
        path = self.document.path
        if path is None:
            self.statusBar().showMessage("Not saved yet: there is no file to revert to", 6000)
            return False
        if self.document.dirty and not self._confirm_revert():
            return False
        try:
            self.document.open(path)
        except ModelError as exc:
            self.statusBar().showMessage(f"Not reverted: {exc}", 12000)
            self._notify_error("Cannot revert", str(exc))
            return False
        self.statusBar().showMessage(f"Reverted to {path}", 6000)
        return True

    def open_path(self, path, ask: bool = True) -> bool:
        if ask and not self.maybe_save():
            return False
        try:
            self.document.open(path)
        except ModelError as exc:
            self.statusBar().showMessage(f"Not opened: {exc}", 12000)
            self._notify_error("Cannot open", str(exc))
            return False
        self._add_recent(self.document.path)
        self.scene.set_mode(Mode.SELECT)
        self._selected_mode = 1
        self.statusBar().showMessage(f"Opened {self.document.path}", 6000)
        return True

    def save(self) -> bool:
        if self.document.path is None:
            return self.save_as()
        return self.save_to(self.document.path)

    def save_as(self) -> bool:
        start = str(self.document.path or self.document.suggested_path(".json"))
        path, _ = QFileDialog.getSaveFileName(self, "Save model as", start, FILE_FILTER)
        if not path:
            return False
        if not path.lower().endswith(".json"):
            path += ".json"
        return self.save_to(path)

    def save_to(self, path) -> bool:
        try:
            written = self.document.save(path)
        except (OSError, ModelError) as exc:
            # ModelError: a model too large for a model file (it would not load back)
            why = (exc.strerror if isinstance(exc, OSError) else None) or exc
            msg = f"Not saved to {path}: {why}; the previous file is unchanged"
            self.statusBar().showMessage(msg, 12000)
            self._notify_error("Cannot save", msg)
            return False
        self._add_recent(written)
        self.statusBar().showMessage(f"Saved {written}", 6000)
        return True

    def _recent(self) -> list[str]:
        value = self.settings.value("files/recent", [])
        if isinstance(value, str):
            value = [value]
        return [str(v) for v in (value or [])]

    def _add_recent(self, path):
        if path is None:
            return
        items = [p for p in self._recent() if p != str(path)]
        self.settings.setValue("files/recent", ([str(path)] + items)[:MAX_RECENT])
        self._update_recent_menu()

    def _update_recent_menu(self):
        self.recent_menu.clear()
        recent = self._recent()
        for p in recent:
            act = self.recent_menu.addAction(Path(p).name)
            act.setToolTip(p)
            act.triggered.connect(lambda _c=False, p=p: self.open_path(p))
        self.recent_menu.setEnabled(bool(recent))

    # -- exports ------------------------------------------------------------------------------
    def export_report_dialog(self):
        if self.analysis is None:
            self.statusBar().showMessage("No results to report yet", 6000)
            return
        start = str(self.document.suggested_path("-report.png"))
        path, _ = QFileDialog.getSaveFileName(self, "Export report", start, "PNG image (*.png)")
        if path:
            self.export_report(path)

    def export_report(self, path) -> bool:
        self.solver.wait()
        self.response_panel.wait()
        try:
            from app.report import render_report

            model = self.document.model
            # An undamped model's response is bounded only by the frequency grid: the report
            # leaves it out, from here as from `springwright report`, so both give one page.
            # A damped model's report shows the response chosen in the panel.
            damped = bool(model.dampers) or model.damping.model != "none"
            render_report(model, self.solver.last_analysis, path,
                          response=self.response_panel.response if damped else None)
        except (ImportError, OSError, ModelError) as exc:
            self.statusBar().showMessage(f"Report not written: {exc}", 12000)
            return False
        self.statusBar().showMessage(f"Report written to {path}", 6000)
        return True

    def export_csv_dialog(self):
        if not hasattr(self.modes_table, "to_csv"):
            return
        start = str(self.document.suggested_path("-modes.csv"))
        path, _ = QFileDialog.getSaveFileName(self, "Export modes table", start, "CSV (*.csv)")
        if path:
            try:
                self.modes_table.to_csv(path)
            except OSError as exc:
                self.statusBar().showMessage(f"Table not written: {exc}", 12000)
                return
            self.statusBar().showMessage(f"Modes table written to {path}", 6000)

    def copy_table(self):
        if hasattr(self.modes_table, "copy_to_clipboard"):
            self.modes_table.copy_to_clipboard()
            self.statusBar().showMessage("Modes table copied", 4000)

    # -- recovery -----------------------------------------------------------------------------
    def check_recovery(self):
        found = self.recovery.pending()
        if found is None:
            return False
        model, path = found
        where = f" of {path.name}" if path else ""
        self._recovered = found
        self.recovery_text.setText(f"Springwright did not close cleanly. An autosaved copy{where}"
                                   f" (“{model.name or 'untitled'}”) can be restored.")
        self.recovery_bar.show()
        return True

    def restore_recovery(self):
        found = getattr(self, "_recovered", None)
        if found is None or not self.maybe_save():
            return
        model, path = found
        self.document.load_recovered(model, path)
        self.recovery_bar.hide()
        self.statusBar().showMessage("Restored the autosaved model; save it to keep it", 8000)

    def discard_recovery(self):
        self.recovery.clear()
        self.recovery_bar.hide()

    # -- drag and drop, close -----------------------------------------------------------------
    def dragEnterEvent(self, event):  # noqa: N802
        urls = event.mimeData().urls()
        if urls and all(QUrl(u).isLocalFile() for u in urls):
            event.acceptProposedAction()

    def dropEvent(self, event):  # noqa: N802
        urls = event.mimeData().urls()
        if urls:
            self.open_path(urls[0].toLocalFile())
            event.acceptProposedAction()

    def closeEvent(self, event):  # noqa: N802
        if not self.maybe_save():
            event.ignore()
            return
        self.settings.setValue("window/geometry", self.saveGeometry())
        self.settings.setValue("window/state", self.saveState())
        from app.results import offload

        offload.shutdown()          # first: a worker thread waiting on it returns at once
        self.solver.shutdown()
        self.response_panel.shutdown()
        self.tune_panel.shutdown()
        for panel in self.built_panels():
            if hasattr(panel, "shutdown"):
                panel.shutdown()
        self.recovery.mark_clean_exit()
        event.accept()
