"""Loads panel: random vibration, shock and a design response spectrum as base motion.

Three tabs, each with its definition on the left (a breakpoint table typed, pasted or imported
from CSV; a pulse's shape, peak and duration) and its results on the right: plots on log axes for
spectral densities and spectra, a time plot for the shock, and tables per mass and per spring
(labels, never ids). Editing a definition pushes one undo command (``Document.set_top(loads=...)``)
so the window, the report and the command line use the same loads, and a saved file keeps them; a
refused value is shown in place with the reason, the model unchanged.

The results follow every edit: computed at once for small models, in a worker thread for larger
ones (the plots dim until they are in), and not at all while the panel is behind another tab (it
catches up when shown). The numbers come from :mod:`solver.loads`; the texts from
:mod:`app.results.load_rows`, shared with the report and ``springwright loads``.
"""

from __future__ import annotations

import traceback

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QObject, QRunnable, QSignalBlocker, Qt, QThreadPool, QTimer, Signal
from PySide6.QtWidgets import (QAbstractItemView, QApplication, QCheckBox, QComboBox,
                               QFileDialog, QFormLayout, QHBoxLayout, QHeaderView, QLabel,
                               QLineEdit, QPushButton, QSplitter, QTableWidget, QTableWidgetItem,
                               QTabWidget, QVBoxLayout, QWidget)

from solver.errors import ModelError

from app.docks.on_screen import behind_tab
from app.drawing.plot_axes import log_ticks, paint_whole, true_value_axes
from app.drawing.style import RESULT_WIDTH, current_style
from app.results import load_rows as lr
from app.text.numbers import number

DEBOUNCE_MS = 80
#: above this many DOFs the loads are computed off the UI thread: a worker thread hands them to
#: a worker process (never computed in the thread itself: the solver is mostly Python and keeps
#: the interpreter lock, which stalls the window's paints, app.results.offload)
THREAD_DOF_LIMIT = 40
CAUTION_SHORT = ("Estimates from a linear lumped model: confirm by test or detailed analysis."
                 " Qualification and seismic design follow the applicable standards, local codes"
                 " and licensed engineering practice.")

#: what a newly ticked load starts as (an editable placeholder, not a test standard)
DEFAULT_ASD = ((20.0, 0.01), (2000.0, 0.01))
DEFAULT_PULSE = ("half-sine", 10.0, 0.011)
DEFAULT_SPECTRUM = ("period", ((0.05, 0.5), (4.0, 0.5)))


class _Relay(QObject):
    done = Signal(int, object, str)


class _Job(QRunnable):
    def __init__(self, generation, model, relay, in_process: bool = False):
        super().__init__()
        self.generation, self.model, self.relay = generation, model, relay
        self.in_process = in_process
        self.setAutoDelete(True)

    def run(self):
        if self.in_process:
            from app.results import offload

            try:
                out = offload.run(lr.solve_loads, self.model, lane="loads")
            except RuntimeError:      # the window is closing
                return
            except Exception:  # a bug: shown in the panel, never a dead worker
                out = None, "internal error:\n" + traceback.format_exc(limit=4)
            self.relay.done.emit(self.generation, *out)
            return
        self.relay.done.emit(self.generation, *_compute(self.model))


def _compute(model):
    """(LoadResults or None, error text)."""
    try:
        return lr.solve_loads(model)
    except Exception:  # a bug: shown in the panel, never a dead worker
        return None, "internal error:\n" + traceback.format_exc(limit=4)


def _table_widget(name: str, columns) -> QTableWidget:
    t = QTableWidget(0, len(columns))
    t.setObjectName(name)
    t.setHorizontalHeaderLabels([lr.heading(c) for c in columns])
    t.verticalHeader().hide()
    t.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
    t.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
    t.horizontalHeader().setStretchLastSection(True)
    return t


def _fill(table: QTableWidget, rows) -> None:
    table.setRowCount(len(rows))
    for r, row in enumerate(rows):
        for c, text in enumerate(row):
            item = QTableWidgetItem(text)
            item.setTextAlignment((Qt.AlignLeft if c == 0 else Qt.AlignRight) | Qt.AlignVCenter)
            table.setItem(r, c, item)
    table.resizeColumnsToContents()


def _results_side(top_widgets, tables) -> QSplitter:
    """Plots (with their controls) above, the result tables in tabs below, a splitter between."""
    split = QSplitter(Qt.Vertical)
    top = QWidget()
    tl = QVBoxLayout(top)
    tl.setContentsMargins(0, 0, 0, 0)
    for w in top_widgets:
        if isinstance(w, QHBoxLayout):
            tl.addLayout(w)
        else:
            tl.addWidget(w, 1 if isinstance(w, (pg.PlotWidget, QWidget)) and not
                         isinstance(w, QLabel) else 0)
    split.addWidget(top)
    tabs = QTabWidget()
    for title, t in tables:
        tabs.addTab(t, title)
    split.addWidget(tabs)
    split.setStretchFactor(0, 3)
    split.setStretchFactor(1, 2)
    split.setSizes([230, 170])    # a few rows of every table under the plot
    split.setChildrenCollapsible(False)
    return split


def _log_x(plot: pg.PlotWidget, lo: float, hi: float) -> None:
    """Labelled 1-2-5 ticks on a log frequency (or period) axis, the other integers unlabelled
    (pyqtgraph's own labels every minor tick, which run together)."""
    if lo > 0 and hi > lo:
        wide = hi / lo > 1e3     # 1-2-5 labels would run together: decades only
        plot.getAxis("bottom").setTicks(log_ticks(lo, hi, labelled=(1,) if wide else (1, 2, 5)))


def _log_y(plot: pg.PlotWidget, values) -> None:
    """The same for a log value axis, over the positive values plotted."""
    v = np.asarray(values, float)
    v = v[np.isfinite(v) & (v > 0)]
    if len(v):
        lo, hi = float(v.min()), float(v.max())
        if hi > lo:
            plot.getAxis("left").setTicks(log_ticks(lo, hi, labelled=(1,) if hi / lo > 1e3
                                                    else (1, 2, 5)))


def _mode_line(pos: float, mode: int, st) -> pg.InfiniteLine:
    """A dotted vertical line at a mode, its number at the top (staggered in three heights, so
    the numbers of close modes do not cover each other)."""
    return pg.InfiniteLine(pos=pos, angle=90, pen=pg.mkPen(st.warning, width=1, style=Qt.DotLine),
                           label=str(mode), labelOpts={"position": 0.92 - 0.1 * ((mode - 1) % 3),
                                                       "color": st.warning})


def _plot(name: str, x_title: str, y_title: str, log=(True, True)) -> pg.PlotWidget:
    st = current_style()
    w = paint_whole(pg.PlotWidget(axisItems=true_value_axes()))
    w.setObjectName(name)
    w.setBackground(st.background)
    w.setLogMode(x=log[0], y=log[1])
    w.showGrid(x=True, y=True, alpha=0.25)
    w.setLabel("bottom", x_title)
    w.setLabel("left", y_title)
    w.setMinimumHeight(160)
    return w


class _TableEditor(QWidget):
    """A two-column breakpoint table with Add, Remove, Paste and CSV import. ``edited(rows)``
    when a cell is changed or rows are replaced (rows as typed, numbers or text)."""

    edited = Signal(list)

    def __init__(self, name: str, x_title: str, y_title: str, what: str, parent=None):
        super().__init__(parent)
        self.what = what
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        self.table = QTableWidget(0, 2)
        self.table.setObjectName(name)
        self.table.setHorizontalHeaderLabels([x_title, y_title])
        self.table.verticalHeader().setVisible(True)
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Stretch)
        self.table.setMinimumWidth(220)
        self.table.itemChanged.connect(lambda _i: self.edited.emit(self.rows()))
        lay.addWidget(self.table, 1)
        row = QHBoxLayout()
        for text, tip, slot in (("Add", "Add a row after the last", self._add),
                                ("Remove", "Remove the selected rows", self._remove),
                                ("Paste", "Replace the table by rows pasted from the clipboard"
                                          " (two numbers a line)", self._paste),
                                ("CSV…", "Replace the table by rows read from a CSV file",
                                 self._import)):
            b = QPushButton(text)
            b.setObjectName(f"{name}_{text.strip('…').lower()}")
            b.setToolTip(tip)
            b.clicked.connect(slot)
            row.addWidget(b)
        lay.addLayout(row)

    def rows(self) -> list:
        out = []
        for r in range(self.table.rowCount()):
            cells = []
            for c in range(2):
                item = self.table.item(r, c)
                text = item.text().strip() if item is not None else ""
                try:
                    cells.append(float(text))
                except ValueError:
                    cells.append(text)
            out.append(cells)
        return out

    def set_rows(self, rows) -> None:
        with QSignalBlocker(self.table):
            self.table.setRowCount(len(rows))
            for r, (x, y) in enumerate(rows):
                for c, v in enumerate((x, y)):
                    self.table.setItem(r, c, QTableWidgetItem(
                        v if isinstance(v, str) else number(v, 6)))

    def _add(self):
        rows = self.rows()
        if rows and all(isinstance(v, float) for v in rows[-1]):
            rows.append([rows[-1][0] * 2, rows[-1][1]])
        else:
            rows.append([1.0, 1.0])
        self.set_rows(rows)
        self.edited.emit(self.rows())

    def _remove(self):
        picked = sorted({i.row() for i in self.table.selectedIndexes()}, reverse=True)
        if not picked:
            picked = [self.table.rowCount() - 1] if self.table.rowCount() else []
        rows = self.rows()
        for r in picked:
            del rows[r]
        self.set_rows(rows)
        self.edited.emit(self.rows())

    def replace_text(self, text: str) -> str:
        """Replace the rows by those of ``text``; the problem in words, or ""."""
        try:
            rows = lr.parse_table_text(text, self.what)
        except ValueError as exc:
            return str(exc)
        self.set_rows(rows)
        self.edited.emit(self.rows())
        return ""

    def _paste(self):
        problem = self.replace_text(QApplication.clipboard().text())
        if problem:
            self.parent_panel().show_problem(problem)

    def _import(self):
        path, _ = QFileDialog.getOpenFileName(self, f"Import {self.what}", "",
                                              "CSV or text (*.csv *.txt);;All files (*)")
        if path:
            self.import_file(path)

    def import_file(self, path: str) -> str:
        try:
            with open(path, encoding="utf-8-sig") as fh:
                text = fh.read(2_000_000)
        except (OSError, UnicodeDecodeError) as exc:
            problem = f"{self.what}: cannot read {path} ({exc})"
        else:
            problem = self.replace_text(text)
        if problem:
            self.parent_panel().show_problem(problem)
        return problem

    def parent_panel(self):
        p = self.parent()
        while p is not None and not isinstance(p, LoadsPanel):
            p = p.parent()
        return p


class LoadsPanel(QWidget):
    """The loads of the document's model: definitions (undoable edits) and results.

    Signals: ``status_message(str)``; ``results_changed()`` after results (or an error) arrive.
    """

    status_message = Signal(str)
    results_changed = Signal()

    def __init__(self, document=None, parent=None, delay_ms: int = DEBOUNCE_MS):
        super().__init__(parent)
        self.document = document
        self.model = None
        self.results = None
        self.error = ""
        self.problem = ""
        self._computing = False
        self._due = False
        self._generation = 0
        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(delay_ms)
        self._timer.timeout.connect(self.recompute)
        self._pool = QThreadPool(self)
        self._pool.setMaxThreadCount(1)
        self._relay = _Relay(self)
        self._relay.done.connect(self._on_done)
        self._build_ui()
        if document is not None:
            document.model_changed.connect(self._on_model_change)
            self._on_model_change(document.model)

    # -- ui -------------------------------------------------------------------------------
    def _build_ui(self):
        st = current_style()
        outer = QVBoxLayout(self)
        outer.setContentsMargins(2, 2, 2, 2)
        top = QHBoxLayout()
        top.addWidget(QLabel("Base motion in"))
        self.direction_combo = QComboBox()
        self.direction_combo.setObjectName("loads_direction")
        self.direction_combo.setToolTip("Direction of the base motion (every anchor together)")
        self.direction_combo.currentIndexChanged.connect(self._on_direction)
        top.addWidget(self.direction_combo)
        top.addWidget(QLabel("SRS Q"))
        self.q_edit = QLineEdit()
        self.q_edit.setObjectName("loads_q")
        self.q_edit.setMaximumWidth(70)
        self.q_edit.setToolTip("Q = 1 / (2 zeta) of the shock response spectrum (10 is common"
                               " practice)")
        self.q_edit.editingFinished.connect(self._on_q)
        top.addWidget(self.q_edit)
        self.status_label = QLabel()
        self.status_label.setObjectName("loads_status")
        self.status_label.setWordWrap(True)
        top.addWidget(self.status_label, 1)
        outer.addLayout(top)
        self.problem_label = QLabel()
        self.problem_label.setObjectName("loads_problem")
        self.problem_label.setWordWrap(True)
        self.problem_label.setStyleSheet(f"color: {st.error.name()};")
        self.problem_label.hide()
        outer.addWidget(self.problem_label)

        self.tabs = QTabWidget()
        self.tabs.setObjectName("loads_tabs")
        self.tabs.addTab(self._random_tab(), "Random vibration")
        self.tabs.addTab(self._shock_tab(), "Shock")
        self.tabs.addTab(self._spectrum_tab(), "Design spectrum")
        outer.addWidget(self.tabs, 1)
        self.notes_label = QLabel()
        self.notes_label.setObjectName("loads_notes")
        self.notes_label.setWordWrap(True)
        self.notes_label.setTextInteractionFlags(Qt.TextSelectableByMouse)
        outer.addWidget(self.notes_label)
        self.caution_label = QLabel(CAUTION_SHORT)
        self.caution_label.setObjectName("loads_caution")
        self.caution_label.setWordWrap(True)
        self.caution_label.setStyleSheet(f"color: {st.warning.name()};")
        outer.addWidget(self.caution_label)

    def _split(self, left: QWidget, right: QWidget) -> QSplitter:
        split = QSplitter(Qt.Horizontal)
        split.addWidget(left)
        split.addWidget(right)
        split.setStretchFactor(0, 0)
        split.setStretchFactor(1, 1)
        split.setSizes([260, 700])
        return split

    def _random_tab(self) -> QWidget:
        left = QWidget()
        ll = QVBoxLayout(left)
        ll.setContentsMargins(0, 0, 0, 0)
        self.random_check = QCheckBox("Random vibration")
        self.random_check.setObjectName("loads_random_on")
        self.random_check.setToolTip("Define random base vibration by its acceleration spectral"
                                     " density")
        self.random_check.toggled.connect(lambda on: self._toggle("random", on))
        ll.addWidget(self.random_check)
        self.asd_editor = _TableEditor("loads_asd", "frequency (Hz)", "ASD (g²/Hz)",
                                       "acceleration spectral density")
        self.asd_editor.edited.connect(self._on_asd)
        ll.addWidget(self.asd_editor, 1)
        self.grms_label = QLabel()
        self.grms_label.setObjectName("loads_grms")
        self.grms_label.setWordWrap(True)
        ll.addWidget(self.grms_label)
        row = QHBoxLayout()
        row.addWidget(QLabel("Plot"))
        self.random_output = QComboBox()
        self.random_output.setObjectName("loads_random_output")
        self.random_output.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
        self.random_output.currentIndexChanged.connect(lambda _i: self._draw_random())
        row.addWidget(self.random_output)
        row.addStretch(1)
        self.random_key = QLabel("solid: the response; dashed: the input ASD")
        self.random_key.setObjectName("loads_random_key")
        self.random_key.setWordWrap(True)
        self.random_plot = _plot("loads_random_plot", "frequency (Hz)", "PSD (g²/Hz)")
        self.random_mass_table = _table_widget("loads_random_masses", lr.RANDOM_MASS_COLUMNS)
        self.random_spring_table = _table_widget("loads_random_springs",
                                                 lr.RANDOM_SPRING_COLUMNS)
        self.miles_table = _table_widget("loads_miles", lr.MILES_COLUMNS)
        self.miles_table.setToolTip("Miles' equation g RMS = sqrt(pi/2 f Q ASD(f)) per dominant"
                                    " mode (the trade's hand check) beside the exact integral")
        right = _results_side([row, self.random_key, self.random_plot], [
            ("Masses", self.random_mass_table), ("Springs", self.random_spring_table),
            ("Miles' check", self.miles_table)])
        return self._split(left, right)

    def _shock_tab(self) -> QWidget:
        left = QWidget()
        ll = QVBoxLayout(left)
        ll.setContentsMargins(0, 0, 0, 0)
        self.shock_check = QCheckBox("Shock pulse")
        self.shock_check.setObjectName("loads_shock_on")
        self.shock_check.toggled.connect(lambda on: self._toggle("shock", on))
        ll.addWidget(self.shock_check)
        form = QFormLayout()
        self.shape_combo = QComboBox()
        self.shape_combo.setObjectName("loads_shape")
        for key, text in (("half-sine", "half-sine"), ("sawtooth", "terminal-peak sawtooth"),
                          ("trapezoid", "trapezoid")):
            self.shape_combo.addItem(text, key)
        self.shape_combo.currentIndexChanged.connect(lambda _i: self._on_pulse())
        form.addRow("Shape", self.shape_combo)
        self.pulse_edits = {}
        for key, label, tip in (("peak_g", "Peak (g)", "Peak acceleration of the base in g"),
                                ("duration_ms", "Duration (ms)", "The whole pulse"),
                                ("rise_ms", "Rise (ms)", "Trapezoid: time to the peak"),
                                ("fall_ms", "Fall (ms)", "Trapezoid: time from the peak to 0")):
            e = QLineEdit()
            e.setObjectName(f"loads_{key}")
            e.setToolTip(tip)
            e.editingFinished.connect(self._on_pulse)
            self.pulse_edits[key] = e
            form.addRow(label, e)
        ll.addLayout(form)
        ll.addStretch(1)
        row = QHBoxLayout()
        row.addWidget(QLabel("Plot"))
        self.shock_output = QComboBox()
        self.shock_output.setObjectName("loads_shock_output")
        self.shock_output.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
        self.shock_output.currentIndexChanged.connect(lambda _i: self._draw_shock())
        row.addWidget(self.shock_output)
        row.addStretch(1)
        self.shock_key = QLabel("solid: the response; dashed: the base. Shock response spectrum"
                                " of the base pulse (maximax): dotted lines mark the modes")
        self.shock_key.setObjectName("loads_shock_key")
        self.shock_key.setWordWrap(True)
        plots = QWidget()
        pl = QHBoxLayout(plots)
        pl.setContentsMargins(0, 0, 0, 0)
        self.time_plot = _plot("loads_time_plot", "time (s)", "acceleration (g)", (False, False))
        self.srs_plot = _plot("loads_srs_plot", "natural frequency (Hz)", "SRS (g)")
        self.srs_plot.setToolTip("Shock response spectrum of the base pulse: the largest absolute"
                                 " acceleration of a single-DOF system of each natural frequency"
                                 " and the chosen Q (maximax)")
        pl.addWidget(self.time_plot, 1)
        pl.addWidget(self.srs_plot, 1)
        self.shock_mass_table = _table_widget("loads_shock_masses", lr.SHOCK_MASS_COLUMNS)
        self.shock_spring_table = _table_widget("loads_shock_springs", lr.SHOCK_SPRING_COLUMNS)
        right = _results_side([row, self.shock_key, plots], [("Masses", self.shock_mass_table),
                                             ("Springs", self.shock_spring_table)])
        return self._split(left, right)

    def _spectrum_tab(self) -> QWidget:
        left = QWidget()
        ll = QVBoxLayout(left)
        ll.setContentsMargins(0, 0, 0, 0)
        self.spectrum_check = QCheckBox("Design response spectrum")
        self.spectrum_check.setObjectName("loads_spectrum_on")
        self.spectrum_check.toggled.connect(lambda on: self._toggle("spectrum", on))
        ll.addWidget(self.spectrum_check)
        self.abscissa_combo = QComboBox()
        self.abscissa_combo.setObjectName("loads_abscissa")
        self.abscissa_combo.addItem("against period (s)", "period")
        self.abscissa_combo.addItem("against frequency (Hz)", "frequency")
        self.abscissa_combo.currentIndexChanged.connect(lambda _i: self._on_spectrum())
        ll.addWidget(self.abscissa_combo)
        self.spectrum_editor = _TableEditor("loads_spectrum", "period (s)", "Sa (g)",
                                            "design spectrum")
        self.spectrum_editor.edited.connect(lambda _r: self._on_spectrum())
        ll.addWidget(self.spectrum_editor, 1)
        self.spectrum_plot = _plot("loads_spectrum_plot", "period (s)", "Sa (g)")
        self.spectrum_plot.setToolTip("The design spectrum: pseudo-acceleration Sa; dotted lines"
                                      " mark the modes")
        self.mass90_label = QLabel()
        self.mass90_label.setObjectName("loads_mass90")
        self.mass90_label.setWordWrap(True)
        self.spectrum_mode_table = _table_widget("loads_spectrum_modes", lr.SPECTRUM_MODE_COLUMNS)
        self.spectrum_mass_table = _table_widget("loads_spectrum_masses",
                                                 lr.SPECTRUM_MASS_COLUMNS)
        self.spectrum_spring_table = _table_widget("loads_spectrum_springs",
                                                   lr.SPECTRUM_SPRING_COLUMNS)
        right = _results_side([self.spectrum_plot, self.mass90_label], [
            ("Modes", self.spectrum_mode_table), ("Masses (SRSS, CQC)", self.spectrum_mass_table),
            ("Springs (SRSS, CQC)", self.spectrum_spring_table)])
        return self._split(left, right)

    # -- definitions <-> model ----------------------------------------------------------------
    def _loads(self):
        from solver.load_cases import Loads

        loads = getattr(self.model, "loads", None)
        if loads is not None:
            return loads
        dirs = [d for d in getattr(self.model, "directions", ("x",)) if d != "theta"]
        return Loads(direction=dirs[0] if dirs else "x")

    def _push(self, text: str, **changes) -> bool:
        """A new Loads with ``changes`` (None everywhere empties the key) as one undo command."""
        import dataclasses

        from solver.load_cases import Loads

        if self.document is None or self.model is None:
            return False
        try:
            loads = dataclasses.replace(self._loads(), **changes)
        except ModelError as exc:
            self.show_problem(str(exc))
            return False
        if loads.empty and loads.srs_q == Loads().srs_q:
            loads = None     # nothing left defined: the file is as it was before
        self.show_problem("")
        return self.document.set_top(text=text, loads=loads)

    def show_problem(self, message: str) -> None:
        """A refused definition, in place (the model unchanged)."""
        self.problem = message
        self.problem_label.setText(message)
        self.problem_label.setVisible(bool(message))
        if message:
            self.status_message.emit(message)

    def _toggle(self, which: str, on: bool):
        from solver.load_cases import DesignSpectrum, RandomVibration, ShockPulse

        value = None
        if on:
            value = {"random": lambda: RandomVibration(DEFAULT_ASD),
                     "shock": lambda: ShockPulse(*DEFAULT_PULSE),
                     "spectrum": lambda: DesignSpectrum(*DEFAULT_SPECTRUM)}[which]()
        words = {"random": "random vibration", "shock": "shock pulse",
                 "spectrum": "design spectrum"}[which]
        self._push(("Define " if on else "Remove ") + words, **{which: value})

    def _on_direction(self, _i):
        d = self.direction_combo.currentData()
        if d and d != self._loads().direction:
            self._push(f"Base motion in {d}", direction=d)

    def _on_q(self):
        try:
            q = float(self.q_edit.text())
        except ValueError:
            self.show_problem(f"SRS Q must be a number, got {self.q_edit.text()!r}")
            return
        if q != self._loads().srs_q:
            self._push("Change the Q of the shock response spectrum", srs_q=q)

    def _on_asd(self, rows):
        from solver.load_cases import RandomVibration

        try:
            asd = RandomVibration(tuple(tuple(r) for r in rows))
        except ModelError as exc:
            self.show_problem(str(exc))
            return
        if asd != self._loads().random:
            self._push("Change the acceleration spectral density", random=asd)

    def _on_pulse(self):
        from solver.load_cases import ShockPulse

        if self._loads().shock is None:
            return
        shape = self.shape_combo.currentData()
        values = {}
        for key, e in self.pulse_edits.items():
            text = e.text().strip()
            if key in ("rise_ms", "fall_ms") and (shape != "trapezoid" or not text):
                continue     # not used, or a trapezoid just chosen: a quarter of the duration
            try:
                values[key] = float(text)
            except ValueError:
                self.show_problem(f"shock pulse: {key.split('_')[0]} must be a number, got"
                                  f" {text!r}")
                return
        if shape == "trapezoid":
            d = values["duration_ms"]
            values.setdefault("rise_ms", d / 4)
            values.setdefault("fall_ms", d / 4)
        try:
            pulse = ShockPulse(shape, values["peak_g"], values["duration_ms"] / 1e3,
                               values.get("rise_ms", 0.0) / 1e3, values.get("fall_ms", 0.0) / 1e3)
        except ModelError as exc:
            self.show_problem(str(exc))
            return
        if pulse != self._loads().shock:
            self._push("Change the shock pulse", shock=pulse)

    def _on_spectrum(self):
        from solver.load_cases import DesignSpectrum

        if self._loads().spectrum is None:
            return
        abscissa = self.abscissa_combo.currentData()
        try:
            spec = DesignSpectrum(abscissa, tuple(tuple(r) for r in self.spectrum_editor.rows()))
        except ModelError as exc:
            self.show_problem(str(exc))
            return
        if spec != self._loads().spectrum:
            self._push("Change the design spectrum", spectrum=spec)

    def _sync_editors(self, model):
        """The definitions of ``model`` into the editors, signals blocked (no echo)."""
        loads = getattr(model, "loads", None)
        dirs = [d for d in getattr(model, "directions", ("x",)) if d != "theta"] or ["x"]
        blockers = [QSignalBlocker(w) for w in (
            self.direction_combo, self.random_check, self.shock_check, self.spectrum_check,
            self.shape_combo, self.abscissa_combo, self.q_edit, *self.pulse_edits.values())]
        self.direction_combo.clear()
        for d in dirs:
            self.direction_combo.addItem(d, d)
        cur = loads.direction if loads is not None else dirs[0]
        if cur not in dirs:
            self.direction_combo.addItem(cur, cur)
        self.direction_combo.setCurrentIndex(self.direction_combo.findData(cur))
        self.q_edit.setText(number(loads.srs_q if loads is not None else 10.0))
        rnd = loads.random if loads is not None else None
        self.random_check.setChecked(rnd is not None)
        self.asd_editor.setEnabled(rnd is not None)
        self.asd_editor.set_rows(rnd.points if rnd is not None else [])
        shock = loads.shock if loads is not None else None
        self.shock_check.setChecked(shock is not None)
        p = shock if shock is not None else None
        self.shape_combo.setCurrentIndex(self.shape_combo.findData(p.shape if p else "half-sine"))
        for key, value in (("peak_g", p.peak_g if p else None),
                           ("duration_ms", p.duration_s * 1e3 if p else None),
                           ("rise_ms", p.rise_s * 1e3 if p and p.shape == "trapezoid" else None),
                           ("fall_ms", p.fall_s * 1e3 if p and p.shape == "trapezoid" else None)):
            self.pulse_edits[key].setText("" if value is None else number(value, 6))
            self.pulse_edits[key].setEnabled(p is not None and (
                key in ("peak_g", "duration_ms") or p.shape == "trapezoid"))
        self.shape_combo.setEnabled(p is not None)
        spec = loads.spectrum if loads is not None else None
        self.spectrum_check.setChecked(spec is not None)
        self.abscissa_combo.setCurrentIndex(self.abscissa_combo.findData(
            spec.abscissa if spec else "period"))
        self.abscissa_combo.setEnabled(spec is not None)
        x = "period (s)" if (spec is None or spec.abscissa == "period") else "frequency (Hz)"
        self.spectrum_editor.table.setHorizontalHeaderLabels([x, "Sa (g)"])
        self.spectrum_editor.set_rows(spec.points if spec is not None else [])
        self.spectrum_editor.setEnabled(spec is not None)
        del blockers
        if rnd is not None:
            from solver.loads import asd_grms

            self.grms_label.setText(f"overall {number(asd_grms(rnd))} g RMS")
        else:
            self.grms_label.setText("")

    # -- results ------------------------------------------------------------------------------
    def _on_model_change(self, model):
        self.model = model
        self._sync_editors(model)
        self._generation += 1
        if behind_tab(self):
            self._due = True
            return
        self._schedule()

    def reset(self, model) -> None:
        """Another model was opened: nothing of the previous one stays shown."""
        self.results, self.error = None, ""
        self.show_problem("")
        self._on_model_change(model)
        self._draw()

    def _schedule(self):
        if self._dofs() > THREAD_DOF_LIMIT:
            self._set_dim(True)
        self._timer.start()

    def catch_up(self) -> None:
        if self._due:
            self._due = False
            self._schedule()

    def _dofs(self) -> int:
        m = self.model
        if m is None:
            return 0
        return sum(len(m.directions_of(x)) for x in m.masses if x.mass > 0)

    def recompute(self) -> None:
        model = self.model
        self._timer.stop()
        if model is None or model.loads is None or model.loads.empty:
            self.results, self.error = None, ""
            self._draw()
            return
        gen = self._generation
        if self._dofs() > THREAD_DOF_LIMIT:
            self._computing = True
            self._set_dim(True)
            self.status_label.setText("computing…")
            self._pool.start(_Job(gen, model, self._relay,
                                  in_process=True))
        else:
            self._on_done(gen, *_compute(model))

    def _on_done(self, generation, results, error):
        if generation != self._generation:
            if not self._pool.activeThreadCount():
                self._computing = False
            return
        self._computing = False
        self.results, self.error = results, error
        self._set_dim(False)
        self._draw()
        self.results_changed.emit()

    def wait(self, msecs: int = 30000) -> bool:
        """Block until the results are those of the current model (tests, the report)."""
        from PySide6.QtCore import QCoreApplication, QElapsedTimer

        clock = QElapsedTimer()
        clock.start()
        if self._due:
            self._due = False
            self.recompute()
        if self._timer.isActive():
            self.recompute()
        while self._computing and clock.elapsed() < msecs:
            self._pool.waitForDone(20)
            QCoreApplication.processEvents()
        return not self._computing

    def shutdown(self) -> None:
        self._generation += 1
        self._pool.clear()
        self._pool.waitForDone(5000)

    def _set_dim(self, dim: bool):
        for p in (self.random_plot, self.time_plot, self.srs_plot, self.spectrum_plot):
            p.setEnabled(not dim)

    def _draw(self):
        r = self.results
        model = self.model
        if self.error:
            self.status_label.setText(self.error)
            self.status_label.setStyleSheet(f"color: {current_style().error.name()};")
        else:
            self.status_label.setStyleSheet("")
            defined = model is not None and model.loads is not None and not model.loads.empty
            self.status_label.setText("" if defined else
                                      "No loads defined: tick one in a tab below.")
        notes = lr.notes(r) if r is not None else []
        self.notes_label.setText("\n".join(notes))
        self.notes_label.setVisible(bool(notes))
        self._fill_random(model, r.random if r is not None else None)
        self._fill_shock(model, r.shock if r is not None else None)
        self._fill_spectrum(model, r.spectrum if r is not None else None)

    def _outputs(self, combo: QComboBox, result) -> None:
        keep = combo.currentText()
        with QSignalBlocker(combo):
            combo.clear()
            if result is not None:
                mass_names = lr._mass_names(self.model, result.mass_outputs)
                spring_names = lr._spring_names(self.model, result.springs)
                for i, n in enumerate(mass_names):
                    combo.addItem(f"{n}: acceleration", ("acceleration", i))
                    combo.addItem(f"{n}: displacement", ("displacement", i))
                for i, n in enumerate(spring_names):
                    combo.addItem(f"{n}: deflection", ("deflection", i))
                    combo.addItem(f"{n}: force", ("force", i))
                i = combo.findText(keep)
                # the top mass's acceleration by default: usually the largest
                combo.setCurrentIndex(i if i >= 0 else max(0, 2 * len(mass_names) - 2))

    def _fill_random(self, model, r):
        self._outputs(self.random_output, r)
        if r is None:
            for t in (self.random_mass_table, self.random_spring_table, self.miles_table):
                t.setRowCount(0)
        else:
            masses, springs, miles = lr.random_rows(model, r)
            _fill(self.random_mass_table, masses)
            _fill(self.random_spring_table, springs)
            _fill(self.miles_table, miles)
        self._draw_random()

    _PSD_UNIT = {"acceleration": "g²/Hz", "displacement": "m²/Hz", "deflection": "m²/Hz",
                 "force": "N²/Hz"}

    def _draw_random(self):
        p = self.random_plot
        p.clear()
        r = self.results.random if self.results is not None else None
        if r is None:
            return
        st = current_style()
        what, i = self.random_output.currentData() or ("acceleration", 0)
        data = {"acceleration": r.acceleration_psd, "displacement": r.displacement_psd,
                "deflection": r.deflection_psd, "force": r.force_psd}[what]
        f = r.frequencies_hz
        p.setLabel("left", f"PSD ({self._PSD_UNIT[what]})")
        if what == "acceleration":
            keep = r.input_asd > 0
            p.plot(f[keep], r.input_asd[keep], pen=pg.mkPen(st.ink, width=1,
                                                            style=Qt.DashLine))
        y = data[:, i]
        keep = y > 0
        p.plot(f[keep], y[keep], pen=pg.mkPen(st.accent, width=RESULT_WIDTH))
        _log_x(p, f[0], f[-1])
        _log_y(p, np.concatenate([y, r.input_asd if what == "acceleration" else []]))
        p.autoRange()

    def _fill_shock(self, model, s):
        self._outputs(self.shock_output, s)
        if s is None:
            self.shock_mass_table.setRowCount(0)
            self.shock_spring_table.setRowCount(0)
        else:
            masses, springs = lr.shock_rows(model, s)
            _fill(self.shock_mass_table, masses)
            _fill(self.shock_spring_table, springs)
        self._draw_shock()
        self._draw_srs()

    _TIME_UNIT = {"acceleration": "acceleration (g)", "displacement": "displacement (m)",
                  "deflection": "deflection (m)", "force": "force (N)"}

    def _draw_shock(self):
        p = self.time_plot
        p.clear()
        s = self.results.shock if self.results is not None else None
        if s is None:
            return
        st = current_style()
        what, i = self.shock_output.currentData() or ("acceleration", 0)
        data = {"acceleration": s.acceleration_g, "displacement": s.displacement_m,
                "deflection": s.deflection_m, "force": s.force_n}[what]
        p.setLabel("left", self._TIME_UNIT[what])
        if what == "acceleration":
            p.plot(s.times, s.input_g, pen=pg.mkPen(st.ink, width=1, style=Qt.DashLine))
        p.plot(s.times, data[:, i], pen=pg.mkPen(st.accent, width=RESULT_WIDTH))
        p.autoRange()

    def _draw_srs(self):
        p = self.srs_plot
        p.clear()
        res = self.results
        if res is None or res.srs is None:
            return
        st = current_style()
        srs = res.srs
        p.plot(srs.frequencies_hz, srs.maximax_g,
               pen=pg.mkPen(st.accent, width=RESULT_WIDTH))
        for n, f in enumerate(res.shock.mode_frequencies_hz, start=1):
            if f <= 0:
                continue
            p.addItem(_mode_line(np.log10(f), n, st))
        _log_x(p, srs.frequencies_hz[0], srs.frequencies_hz[-1])
        _log_y(p, srs.maximax_g)
        p.autoRange()

    def _fill_spectrum(self, model, sp):
        if sp is None:
            for t in (self.spectrum_mode_table, self.spectrum_mass_table,
                      self.spectrum_spring_table):
                t.setRowCount(0)
            self.mass90_label.setText("")
        else:
            modes, masses, springs = lr.spectrum_rows(model, sp)
            _fill(self.spectrum_mode_table, modes)
            _fill(self.spectrum_mass_table, masses)
            _fill(self.spectrum_spring_table, springs)
            self.mass90_label.setText(lr.modes_for_90_text(sp))
        self._draw_spectrum()

    def _draw_spectrum(self):
        p = self.spectrum_plot
        p.clear()
        loads = getattr(self.model, "loads", None)
        spec = loads.spectrum if loads is not None else None
        if spec is None:
            return
        st = current_style()
        pts = np.asarray(spec.points, float)
        x_title = "period (s)" if spec.abscissa == "period" else "frequency (Hz)"
        p.setLabel("bottom", x_title)
        x = np.geomspace(pts[0, 0], pts[-1, 0], 200)
        from solver.loads import _loglog

        p.plot(x, _loglog(pts, x), pen=pg.mkPen(st.accent,
                                                width=2))
        p.plot(pts[:, 0], pts[:, 1], pen=None, symbol="o", symbolSize=6,
               symbolBrush=st.ink)
        sp = self.results.spectrum if self.results is not None else None
        if sp is not None:
            for m, f in zip(sp.modes, sp.frequencies_hz):
                xm = 1 / f if spec.abscissa == "period" else f
                p.addItem(_mode_line(np.log10(xm), int(m), st))
        _log_x(p, pts[0, 0], pts[-1, 0])
        _log_y(p, pts[:, 1])
        p.autoRange()


__all__ = ["LoadsPanel"]
