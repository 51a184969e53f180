"""Response panel: forced harmonic response (FRF) and base-excitation transmissibility.

Choose the input (a unit force at a mass in one direction, or base motion in a direction), the
outputs (one or more masses) and, for a force, the quantity (displacement, velocity or
acceleration per newton). Magnitude (log-log) and phase are two stacked pyqtgraph plots with a
linked frequency axis; excitation sources are shaded; the peaks of every curve are listed with
their half-power bandwidth and the damping ratio it implies. The input chosen is a view preference
held here, never written to the model. The curves are recomputed after every model change: with a
solve service (:class:`app.document.solve_service.SolveService`) when its results for the new
model arrive, reusing its modes; alone, debounced, with a solve of their own. Small sweeps are
computed at once; a costly one (many DOFs, or dashpots on more than a few dozen DOFs: a direct
solve per frequency) runs in a worker thread while the old curves stay dimmed and marked, so
the window keeps responding. Curves of the last few (model, choices) are kept, so an undo
redraws at once. During a continuous gesture (a Tune slider drag, :meth:`set_live`) the panel holds
its curves, dimmed and marked, and recomputes once on release, so the drag stays smooth. The
curves themselves come from :mod:`app.results.response_data`, which has no Qt; every number shown
goes through :mod:`app.text.numbers`, and magnitudes follow the display unit system (SI or US).
"""

from __future__ import annotations

import traceback
from collections import OrderedDict

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import (QAbstractTableModel, QModelIndex, QObject, QRunnable, QSignalBlocker,
                            Qt, QThreadPool, QTimer, Signal)
from PySide6.QtWidgets import (QAbstractItemView, QCheckBox, QComboBox, QFileDialog, QHBoxLayout,
                               QHeaderView, QLabel, QLineEdit, QListWidget, QListWidgetItem,
                               QPushButton, QSizePolicy, QSplitter, QStyledItemDelegate,
                               QTableView, QVBoxLayout, QWidget)

from solver.errors import ModelError

from app.docks.on_screen import behind_tab
from app.results import response_data as rd
from app.results.names import dof_name, names
from app.drawing.plot_axes import log_ticks, paint_whole, true_value_axes
from app.drawing.style import CURVE_WIDTH, current_style
from app.text.numbers import FREQ_SIG, hz, number

DEBOUNCE_MS = 80
#: Above this estimated work (complex multiply-adds of one sweep, see ``_work``) the curves are
#: computed in a worker thread: ~1e7 takes some 10-30 ms on a busy machine.
THREAD_WORK_LIMIT = 1.5e7
#: Curves kept for recent (model, choices): an undo or redo redraws without computing.
CACHE_SIZE = 6


class _PeaksModel(QAbstractTableModel):
    """The peaks of every curve, one row each; cells are formatted only when shown (an
    undamped 200-mass model has thousands of peaks)."""

    HEADER = ("output", "peak (Hz)", "amplitude", "−3 dB width (Hz)", "damping ratio ≈")

    def __init__(self, parent=None):
        super().__init__(parent)
        self.rows: list = []
        self.header = list(self.HEADER)
        self.factor = 1.0     # display unit of the amplitudes: SI value / factor

    def set_rows(self, rows, header=None, factor: float = 1.0) -> None:
        self.beginResetModel()
        self.rows = list(rows)
        self.header = list(header or self.HEADER)
        self.factor = float(factor)
        self.endResetModel()

    def rowCount(self, parent=QModelIndex()):  # noqa: N802
        return 0 if parent.isValid() else len(self.rows)

    def columnCount(self, parent=QModelIndex()):  # noqa: N802
        return 0 if parent.isValid() else len(self.HEADER)

    def headerData(self, section, orientation, role=Qt.ItemDataRole.DisplayRole):  # noqa: N802
        if orientation == Qt.Orientation.Horizontal and role == Qt.ItemDataRole.DisplayRole:
            return self.header[section]
        return None

    def data(self, index, role=Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        c = index.column()
        if role == Qt.ItemDataRole.DisplayRole:
            label, p = self.rows[index.row()]
            return (label, number(p.frequency_hz, FREQ_SIG), number(p.amplitude / self.factor),
                    number(p.bandwidth_hz), number(p.damping_ratio))[c]
        if role == Qt.ItemDataRole.TextAlignmentRole:
            return int(Qt.AlignRight | Qt.AlignVCenter if c else Qt.AlignLeft | Qt.AlignVCenter)
        return None


class _Relay(QObject):
    """Carries a worker's curves back to the UI thread (queued signal)."""

    done = Signal(int, object, str)


class _ResponseJob(QRunnable):
    def __init__(self, generation, key, args, kwargs, relay, latest):
        super().__init__()
        self.generation, self.key, self.args, self.kwargs = generation, key, args, kwargs
        self.relay, self.latest = relay, latest
        self.setAutoDelete(True)

    def run(self):
        if self.latest() != self.generation:
            return     # overtaken by a newer edit while queued
        try:
            resp = rd.compute_response(*self.args, **self.kwargs)
            self.relay.done.emit(self.generation, (self.key, resp), "")
        except ModelError as exc:
            self.relay.done.emit(self.generation, None, str(exc))
        except Exception:  # a bug: show it in the panel, never kill the worker silently
            self.relay.done.emit(self.generation, None, "internal error:\n"
                                 + traceback.format_exc(limit=4))


class ResponsePanel(QWidget):
    """FRF / transmissibility of the document's model.

    Signals: ``status_message(str)``; ``curves_changed()`` after each recompute.

    ``solve_service`` (optional): the panel then takes its modes from the service's results
    (``results_ready``, ``solve_failed``, ``live_changed``) instead of solving on its own.
    """

    status_message = Signal(str)
    curves_changed = Signal()

    def __init__(self, document=None, parent=None, delay_ms: int = DEBOUNCE_MS,
                 solve_service=None):
        super().__init__(parent)
        self.document = document
        self.model = None
        self._modal = None
        self._modal_model = None
        self.response: rd.ResponseCurves | None = None
        self.input: rd.ResponseInput | None = None
        self._outputs: set[tuple[str, str]] = set()
        self._outputs_model_key = None
        self.auto_range = True
        self.f_range = (1.0, 1000.0)
        self.error = ""
        self.unit_system = "SI"
        self._choices: list[rd.ResponseInput] = []
        self._live = False
        self._held = False
        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(delay_ms)
        self._timer.timeout.connect(self.recompute)
        self._service = solve_service
        self._awaiting = False          # a model change waits for the service's results
        self._due = False               # a model change came while hidden: redraw when shown
        self._computing = False         # a worker computes the curves of the current choices
        self._generation = 0
        self._cache: OrderedDict = OrderedDict()
        # the pool first: as a child it is then destroyed first, waiting for a running job
        # while the relay that job reports through still exists
        self._pool = QThreadPool(self)
        self._pool.setMaxThreadCount(1)
        self._relay = _Relay(self)
        self._relay.done.connect(self._on_job_done)
        self._choice_key = None
        self._phase_items = []
        self._plot_shape = self._texts = self._x_span = None   # what the plots show (see _draw)
        self._columns_scale = 1.0
        self._redecimating = False
        self._build_ui()
        if solve_service is not None:
            solve_service.results_ready.connect(self.set_analysis)
            solve_service.solve_failed.connect(self._on_solve_failed)
            solve_service.live_changed.connect(self.set_live)
        if document is not None:
            document.model_changed.connect(self._on_model_change)
            self.set_model(document.model)

    # -- ui -----------------------------------------------------------------------------------
    def _build_ui(self):
        st = current_style()
        outer = QVBoxLayout(self)
        outer.setContentsMargins(2, 2, 2, 2)
        row = QHBoxLayout()
        row.addWidget(QLabel("Input:"))
        self.input_combo = QComboBox()
        self.input_combo.setObjectName("response_input")
        self.input_combo.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
        self.input_combo.setToolTip("What drives the model: a unit harmonic force at a mass, or"
                                    " harmonic motion of the base (every anchor together)")
        self.input_combo.currentIndexChanged.connect(self._on_input_change)
        row.addWidget(self.input_combo, 2)
        self.quantity_combo = QComboBox()
        self.quantity_combo.setObjectName("response_quantity")
        for q, text in (("displacement", "displacement / force (receptance)"),
                        ("velocity", "velocity / force (mobility)"),
                        ("acceleration", "acceleration / force (accelerance)")):
            self.quantity_combo.addItem(text, q)
        self.quantity_combo.setToolTip("Output per unit force (force input only)")
        self.quantity_combo.currentIndexChanged.connect(lambda _i: self._refresh())
        row.addWidget(self.quantity_combo, 2)
        self.relative_check = QCheckBox("relative to base")
        self.relative_check.setObjectName("response_relative")
        self.relative_check.setToolTip("Base input: plot motion relative to the base (X − U)/U"
                                       " instead of the absolute transmissibility X/U")
        self.relative_check.toggled.connect(lambda _on: self._refresh())
        row.addWidget(self.relative_check)
        outer.addLayout(row)

        row2 = QHBoxLayout()
        row2.addWidget(QLabel("From"))
        self.f_lo_edit = QLineEdit()
        self.f_lo_edit.setObjectName("response_f_lo")
        self.f_hi_edit = QLineEdit()
        self.f_hi_edit.setObjectName("response_f_hi")
        for e in (self.f_lo_edit, self.f_hi_edit):
            e.setMaximumWidth(90)
            e.setToolTip("Frequency in Hz; editing it turns the automatic range off")
            e.editingFinished.connect(self._on_range_edit)
        row2.addWidget(self.f_lo_edit)
        row2.addWidget(QLabel("to"))
        row2.addWidget(self.f_hi_edit)
        row2.addWidget(QLabel("Hz"))
        self.auto_check = QCheckBox("auto")
        self.auto_check.setObjectName("response_auto")
        self.auto_check.setChecked(True)
        self.auto_check.setToolTip("0.2 × the lowest to 2 × the highest natural frequency")
        self.auto_check.toggled.connect(self._on_auto_toggled)
        row2.addWidget(self.auto_check)
        self.range_error = QLabel()
        self.range_error.setStyleSheet(f"color: {st.error.name()};")
        self.range_error.hide()
        row2.addWidget(self.range_error, 1)
        row2.addStretch(1)
        self.png_button = QPushButton("PNG…")
        self.png_button.setToolTip("Save the plot as a PNG image")
        self.png_button.clicked.connect(self.export_png_dialog)
        self.csv_button = QPushButton("CSV…")
        self.csv_button.setToolTip("Save the plotted curves (magnitude and phase) as CSV")
        self.csv_button.clicked.connect(self.export_csv_dialog)
        row2.addWidget(self.png_button)
        row2.addWidget(self.csv_button)
        outer.addLayout(row2)

        split = QSplitter(Qt.Horizontal)
        left = QWidget()
        ll = QVBoxLayout(left)
        ll.setContentsMargins(0, 0, 0, 0)
        ll.addWidget(QLabel("Outputs"))
        self.output_list = QListWidget()
        self.output_list.setObjectName("response_outputs")
        self.output_list.setToolTip("Tick the masses whose response is plotted")
        # labels are long ("Mounting bracket y"): wrap rather than cut them
        self.output_list.setWordWrap(True)
        self.output_list.setTextElideMode(Qt.TextElideMode.ElideNone)
        self.output_list.itemChanged.connect(self._on_output_toggled)
        ll.addWidget(self.output_list, 1)
        split.addWidget(left)

        pg.setConfigOptions(antialias=True)
        self.plots = paint_whole(pg.GraphicsLayoutWidget())
        self.plots.setObjectName("response_plots")
        self.plots.setBackground(st.background)
        # true values on every tick, in the unit of the axis title (no hidden x1e6)
        self.mag_plot = self.plots.addPlot(row=0, col=0, axisItems=true_value_axes())
        self.phase_plot = self.plots.addPlot(row=1, col=0, axisItems=true_value_axes())
        # the frequency axis is shared (linked): its numbers once, under the phase plot, so
        # both plots keep the height their axis titles need
        self.mag_plot.getAxis("bottom").setStyle(showValues=False)
        self.mag_plot.getAxis("bottom").setHeight(4)
        self.plots.ci.layout.setRowStretchFactor(0, 1)
        self.plots.ci.layout.setRowStretchFactor(1, 1)
        self.mag_plot.setLogMode(x=True, y=True)
        self.phase_plot.setLogMode(x=True, y=False)
        self.phase_plot.setXLink(self.mag_plot)
        self.mag_plot.getViewBox().sigXRangeChanged.connect(self._on_x_range)
        self.phase_plot.setYRange(-180, 180, padding=0.05)
        self.phase_plot.getAxis("left").setTicks([[(v, f"{v}") for v in (-180, -90, 0, 90, 180)]])
        for p in (self.mag_plot, self.phase_plot):
            p.showGrid(x=True, y=True, alpha=0.25)
        # one width for both value axes (the widest tick label and title of either), so the
        # two plots start at the same frequency
        self.mag_plot.getAxis("left").share_width(self.phase_plot.getAxis("left"))
        self.phase_plot.setLabel("bottom", "frequency (Hz)")
        self.phase_plot.setLabel("left", "phase (deg)")
        # the key sits in a column of its own beside the plots, never over a curve and costing
        # no height; it is in the plots' scene, so the PNG export carries it
        self.legend = pg.LegendItem(labelTextSize="8pt", frame=False)
        self.legend.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Maximum)
        key = self.plots.ci.addLayout(row=0, col=1, rowspan=2)
        key.addItem(self.legend, row=0, col=0)
        key.addLabel("", row=1, col=0)
        key.layout.setRowStretchFactor(1, 100)      # the entries stay together at the top
        key.setMaximumWidth(170)
        self.plots.ci.layout.setColumnStretchFactor(0, 1)
        self.plots.ci.layout.setColumnStretchFactor(1, 0)
        self.mag_plot.legend = self.legend      # curves plotted with a name join it
        self.curve_items = []
        split.addWidget(self.plots)
        split.setStretchFactor(0, 0)
        split.setStretchFactor(1, 1)
        split.setSizes([110, 600])
        left.setMaximumWidth(160)
        vsplit = QSplitter(Qt.Vertical)
        vsplit.addWidget(split)
        below = QWidget()
        bl = QVBoxLayout(below)
        bl.setContentsMargins(0, 0, 0, 0)
        vsplit.addWidget(below)
        vsplit.setStretchFactor(0, 4)
        vsplit.setStretchFactor(1, 1)
        outer.addWidget(vsplit, 1)

        self.note_label = QLabel()
        self.note_label.setObjectName("response_note")
        self.note_label.setWordWrap(True)
        self.note_label.setTextInteractionFlags(Qt.TextSelectableByMouse)
        bl.addWidget(self.note_label)
        self.peaks_table = QTableView()
        self.peaks_table.setObjectName("response_peaks")
        self._peaks = _PeaksModel(self)
        self.peaks_table.setModel(self._peaks)
        self.peaks_table.horizontalHeader().setSectionResizeMode(QHeaderView.Stretch)
        # the output's name as wide as it is (a body's label with its direction is long); the
        # numbers share the rest
        self.peaks_table.horizontalHeader().setSectionResizeMode(0, QHeaderView.ResizeToContents)
        self.peaks_table.setItemDelegateForColumn(0, _RoomyDelegate(self.peaks_table))
        self.peaks_table.verticalHeader().hide()
        self.peaks_table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.peaks_table.setToolTip("Damping ratio from the half-power bandwidth / (2 f)"
                                    " (valid for light damping and well separated peaks)")
        self.peaks_table.verticalHeader().setDefaultSectionSize(20)
        bl.addWidget(self.peaks_table, 1)

    # -- model --------------------------------------------------------------------------------
    def showEvent(self, event):  # noqa: N802
        super().showEvent(event)
        self.catch_up()

    def catch_up(self) -> None:
        """Choices and curves of the model changed while the panel was behind another tab."""
        if self._due and self.model is not None:
            self._due = False
            self._awaiting = False
            self._sync_choices(self.model)
            if self._live:
                self._hold()
            else:
                self._refresh()

    def _on_model_change(self, model):
        self.model = model
        if behind_tab(self):
            self._due = True             # choices and curves when shown
            self._timer.stop()
            self._awaiting = False
            return
        self._sync_choices(model)
        if self._live:
            self._hold()
        elif self._service is not None:
            self._awaiting = True       # the service's results for it come on the next turn
        else:
            self._timer.start()

    def set_live(self, live: bool) -> None:
        """True while a slider drag changes the model continuously: the curves are held (dimmed,
        with a note) and recomputed once when it ends."""
        self._live = bool(live)
        if not self._live and self._held:
            self._held = False
            if behind_tab(self):
                self._due = True
            else:
                self._refresh()

    @property
    def held(self) -> bool:
        """True when the curves shown are older than the model (held during a drag, or being
        computed in the worker)."""
        return self._held or self._computing or self._due

    def shutdown(self) -> None:
        """Drop queued work and wait for a running one (the window is closing)."""
        self._generation += 1
        self._pool.clear()
        self._pool.waitForDone(5000)

    def wait(self, msecs: int = 30000) -> bool:
        """Block until the curves are those of the current model (tests, export: a report
        made while the panel is behind another tab must not show an earlier model's response).
        True when idle."""
        from PySide6.QtCore import QCoreApplication, QElapsedTimer

        clock = QElapsedTimer()
        clock.start()
        if self._due and not self._live:
            self.catch_up()
        while self._computing and clock.elapsed() < msecs:
            self._pool.waitForDone(20)
            QCoreApplication.processEvents()
        return not self._computing

    def _hold(self):
        self._timer.stop()
        self._awaiting = False
        self._generation += 1            # a curve being computed is for an older model
        self._computing = False
        if not self._held:
            self._held = True
            self._dim("Held while the slider moves: the response updates when it is released.")

    def reset(self, model) -> None:
        """Another model was opened: drop every curve, peak and note of the previous one at
        once (they name its elements), then compute the new model's response as usual."""
        self.model = model
        self._modal = self._modal_model = None
        self._generation += 1            # a curve being computed is for the old model
        self._computing = False
        self._sync_choices(model)
        self.response, self.error = None, ""
        self._draw(None, "Computing the response of the model just opened…")
        if behind_tab(self):
            self._due, self._awaiting = True, False
            self._timer.stop()
        elif self._service is not None:
            self._awaiting = True
        else:
            self._timer.start()

    def set_model(self, model) -> None:
        """Show ``model`` now (no debounce)."""
        self.model = model
        self._sync_choices(model)
        self.recompute()

    def set_analysis(self, analysis) -> None:
        """Reuse the solve service's modes for the model they belong to (saves an eigensolve)."""
        model = getattr(analysis, "model", None)
        if model is None:
            return
        self._modal, self._modal_model = analysis.modal, model
        if self._live or self._due:
            return
        if model is self.model and (self._timer.isActive() or self._awaiting):
            self._timer.stop()
            self._awaiting = False
            self._refresh()

    def _on_solve_failed(self, _message: str) -> None:
        # the model cannot be solved: the synchronous path says why in the panel
        if self._awaiting and not self._live:
            self._awaiting = False
            self.recompute()

    def _input_choices(self, model):
        out = []
        if model.anchors:
            out += [rd.ResponseInput("base", d) for d in model.directions]
        out += [rd.ResponseInput("force", d, m) for m, d in rd.output_dofs(model)]
        return out

    def _sync_choices(self, model):
        """Rebuild the input and output lists, keeping the user's choices that still exist."""
        choices = self._input_choices(model)
        self._choices = choices
        if self.input not in choices:
            self.input = rd.default_input(model) if choices else None
            if self.input not in choices:
                self.input = choices[0] if choices else None
        key = (tuple(c.text(model) for c in choices), self.input)
        if key != self._choice_key:      # refilled only when the choices change, not per edit
            self._choice_key = key
            with QSignalBlocker(self.input_combo):
                self.input_combo.clear()
                self.input_combo.addItems(list(key[0]))
                if self.input is not None:
                    self.input_combo.setCurrentIndex(choices.index(self.input))
        dofs = rd.output_dofs(model)
        shown = names(model)
        key = (tuple(dofs), tuple(shown.get(m, m) for m, _d in dofs))
        if key != self._outputs_model_key:
            if not (self._outputs & set(dofs)):
                # default: every mass along the input direction, at most four
                d0 = self.input.direction if self.input else None
                self._outputs = set([x for x in dofs if x[1] == d0][-4:] or dofs[:1])
            self._outputs &= set(dofs)
            self._outputs_model_key = key
            with QSignalBlocker(self.output_list):
                self.output_list.clear()
                for m, d in dofs:
                    it = QListWidgetItem(dof_name(model, m, d, shown))
                    it.setData(Qt.UserRole, (m, d))
                    it.setFlags(it.flags() | Qt.ItemIsUserCheckable)
                    it.setCheckState(Qt.Checked if (m, d) in self._outputs else Qt.Unchecked)
                    self.output_list.addItem(it)
            # room for the longest label (check box included), within reason
            fm = self.output_list.fontMetrics()
            widest = max((fm.horizontalAdvance(self.output_list.item(i).text())
                          for i in range(self.output_list.count())), default=0)
            self.output_list.setMinimumWidth(min(200, widest + 40))
        self._sync_input_widgets()

    def _sync_input_widgets(self):
        base = self.input is not None and self.input.kind == "base"
        self.quantity_combo.setEnabled(not base)
        self.relative_check.setEnabled(base)

    # -- choices ------------------------------------------------------------------------------
    def set_input(self, response_input: rd.ResponseInput) -> None:
        if response_input not in self._choices:
            raise ModelError(f"no such response input: {response_input.label}")
        with QSignalBlocker(self.input_combo):
            self.input_combo.setCurrentIndex(self._choices.index(response_input))
        self.input = response_input
        self._choice_key = None
        self._sync_input_widgets()
        self.recompute()

    def set_outputs(self, outputs) -> None:
        self._outputs = set(outputs)
        with QSignalBlocker(self.output_list):
            for i in range(self.output_list.count()):
                it = self.output_list.item(i)
                it.setCheckState(Qt.Checked if it.data(Qt.UserRole) in self._outputs
                                 else Qt.Unchecked)
        self.recompute()

    def set_quantity(self, quantity: str) -> None:
        self.quantity_combo.setCurrentIndex(self.quantity_combo.findData(quantity))

    def set_frequency_range(self, f_lo: float | None, f_hi: float | None = None) -> None:
        """Fix the range in Hz; ``None`` returns to the automatic range."""
        if f_lo is None:
            self.auto_check.setChecked(True)
            return
        if not (0 < f_lo < f_hi):
            raise ModelError(f"frequency range must be 0 < low < high, got {f_lo:g} to {f_hi:g} Hz")
        self.f_range = (float(f_lo), float(f_hi))
        with QSignalBlocker(self.auto_check):
            self.auto_check.setChecked(False)
        self.auto_range = False
        self.recompute()

    def _on_input_change(self, _i):
        i = self.input_combo.currentIndex()
        self.input = self._choices[i] if 0 <= i < len(self._choices) else None
        self._choice_key = (tuple(c.text(self.model) for c in self._choices), self.input)
        self._sync_input_widgets()
        self._refresh()

    def _on_output_toggled(self, item):
        dof = item.data(Qt.UserRole)
        if item.checkState() == Qt.Checked:
            self._outputs.add(dof)
        else:
            self._outputs.discard(dof)
        self._refresh()

    def _on_auto_toggled(self, on: bool):
        self.auto_range = on
        self._refresh()

    def _on_range_edit(self):
        try:
            lo, hi = float(self.f_lo_edit.text()), float(self.f_hi_edit.text())
            if not (0 < lo < hi) or not np.isfinite(hi):
                raise ValueError
        except ValueError:
            self.range_error.setText("range: need two numbers in Hz, 0 < from < to")
            self.range_error.show()
            return
        self.range_error.hide()
        if self.auto_range is False and (lo, hi) == self.f_range:
            return
        if self.auto_range and np.allclose((lo, hi), self._shown_range(), rtol=1e-3):
            return  # focus left without an edit
        self.set_frequency_range(lo, hi)

    def _shown_range(self):
        return self.f_range

    # -- compute and draw ---------------------------------------------------------------------
    def _modes(self, model):
        if self._modal_model is model and self._modal is not None:
            return self._modal
        import solver

        self._modal, self._modal_model = solver.modes(model), model
        return self._modal

    @property
    def quantity(self) -> str:
        return self.quantity_combo.currentData() or "displacement"

    def outputs(self) -> list[tuple[str, str]]:
        """The ticked outputs, in the model's order."""
        if self.model is None:
            return []
        return [d for d in rd.output_dofs(self.model) if d in self._outputs]

    def recompute(self) -> None:
        """Compute the curves of the current choices and redraw (synchronous)."""
        self._refresh(sync=True)

    def _refresh(self, sync: bool = False) -> None:
        """Curves of the current choices: from the cache, computed here, or (costly, and not
        ``sync``) computed in the worker while the shown curves are dimmed."""
        self._timer.stop()
        self._held = False
        self._generation += 1          # a result still being computed is for older choices
        self._computing = False
        model = self.model
        self.response, self.error = None, ""
        if model is None or self.input is None or not model.masses:
            self._draw(None, "Draw masses and springs to see a forced response.")
            return
        outs = self.outputs()
        if not outs:
            self._draw(None, "Tick at least one output mass.")
            return
        try:
            modal = self._modes(model)
            if self.auto_range:
                self.f_range = rd.auto_range(modal)
            n = rd.N_POINTS if len(rd.output_dofs(model)) <= 300 else 200
            args = (model, self.input, tuple(outs), self.quantity, tuple(self.f_range), modal)
            kwargs = dict(relative=self.relative_check.isChecked(), n_points=n)
            key = args[:5] + (kwargs["relative"], n)
            found = self._cached(key)
            if found is None and not sync and _work(model, modal, n) > THREAD_WORK_LIMIT:
                self._computing = True
                self._dim("Updating the response for the edited model…")
                self._pool.start(_ResponseJob(self._generation, key, args, kwargs, self._relay,
                                              lambda: self._generation))
                return
            if found is None:
                found = rd.compute_response(*args, **kwargs)
                self._remember(key, found)
            self.response = found
        except ModelError as exc:
            self.error = str(exc)
            self._draw(None, f"No response: {exc}")
            return
        self._draw(self.response, "")

    def _on_job_done(self, generation: int, done, error: str):
        resp = None
        if done is not None:
            key, resp = done
            self._remember(key, resp)    # right for its choices even if they changed meanwhile
        if generation != self._generation:
            return                      # the choices or the model changed meanwhile
        self._computing = False
        if resp is None:
            self.error = error
            self._draw(None, f"No response: {error}")
            return
        self.response, self.error = resp, ""
        self._draw(resp, "")

    def _dim(self, note: str):
        for item in self.curve_items:
            item.setOpacity(0.35)
        self.note_label.setText(note)
        self.note_label.setStyleSheet(f"color: {current_style().ink_soft_hex};")

    def _cached(self, key):
        try:
            found = self._cache.get(key)
        except TypeError:
            return None
        if found is not None:
            self._cache.move_to_end(key)
        return found

    def _remember(self, key, resp) -> None:
        try:
            self._cache[key] = resp
        except TypeError:
            return
        while len(self._cache) > CACHE_SIZE:
            self._cache.popitem(last=False)

    def _clear_plots(self):
        for p in (self.mag_plot, self.phase_plot):
            p.clear()
        self.legend.clear()
        self.curve_items = []
        self._phase_items = []
        self._plot_shape = None
        self._texts = None
        self._x_span = None

    def _draw(self, resp, message: str):
        st = current_style()
        with QSignalBlocker(self.f_lo_edit), QSignalBlocker(self.f_hi_edit):
            self.f_lo_edit.setText(number(self.f_range[0]))
            self.f_hi_edit.setText(number(self.f_range[1]))
        if resp is None:
            self._clear_plots()
            self._peaks.set_rows([], self._peak_headers(None))
            self.note_label.setText(message)
            self.note_label.setStyleSheet(f"color: {st.error.name()};" if self.error else "")
            self.curves_changed.emit()
            return
        lo, hi = float(resp.freqs_hz[0]), float(resp.freqs_hz[-1])
        # the same curves, bands and input as shown: new data into the existing items (an edit
        # moves the curves; rebuilding every item, legend and band costs more than the compute)
        unit, factor = resp.display_unit(self.unit_system)
        shape = (tuple(c.label for c in resp.curves), resp.input.kind, tuple(resp.bands),
                 (lo, hi) if resp.bands else None, st.name)
        if shape == getattr(self, "_plot_shape", None):
            for item, phase, c in zip(self.curve_items, self._phase_items, resp.curves):
                mag = c.magnitude / factor
                self._set_curve(item, resp.freqs_hz, np.where(mag > 0, mag, np.nan))
                self._set_curve(phase, resp.freqs_hz, c.phase_deg)
                item.setOpacity(1.0)
        else:
            self._clear_plots()
            self._plot_shape = shape
            self._draw_items(resp, st, lo, hi, factor)
        texts = (resp.axis_label(self.unit_system), resp.title)
        if texts != self._texts:
            self._texts = texts
            self.mag_plot.setLabel("left", texts[0])
            self.mag_plot.setTitle(texts[1], size="9pt")
        self.mag_plot.setXRange(np.log10(lo), np.log10(hi), padding=0)
        if (lo, hi) != self._x_span:
            self._x_span = (lo, hi)
            for p in (self.mag_plot, self.phase_plot):
                p.getAxis("bottom").setTicks(log_ticks(lo, hi))
        self.mag_plot.enableAutoRange(axis="y")
        self._peaks.set_rows([(c.label, p) for c in resp.curves for p in c.peaks],
                             self._peak_headers(resp), factor)
        notes = list(resp.notes)
        if resp.crossovers_hz:
            parts = []
            for label, fs in resp.crossovers_hz.items():
                if fs:
                    parts.append(f"{label} above {hz(fs[-1])}")
            if parts:
                notes.insert(0, "Isolation (|T| < 1): " + "; ".join(parts) + ".")
            else:
                notes.insert(0, "No isolation in this range: |T| ≥ 1 throughout.")
        self.note_label.setText("  ".join(notes))
        self.note_label.setStyleSheet("")
        self.curves_changed.emit()

    def _draw_items(self, resp, st, lo: float, hi: float, factor: float = 1.0):
        # excitation sources first so the curves draw over them
        band_brush = pg.mkBrush(st.warning.red(), st.warning.green(), st.warning.blue(), 40)
        for sid, order, b_lo, b_hi, _lw, _hw in resp.bands:
            for p in (self.mag_plot, self.phase_plot):
                if b_hi > b_lo:
                    a, b = max(b_lo, lo), min(b_hi, hi)
                    if b > a:
                        reg = pg.LinearRegionItem((np.log10(a), np.log10(b)), movable=False,
                                                  brush=band_brush,
                                                  pen=pg.mkPen(None))
                        reg.setZValue(-10)
                        p.addItem(reg)
                elif lo < b_lo < hi:
                    line = pg.InfiniteLine(np.log10(b_lo), angle=90,
                                           pen=pg.mkPen(st.warning, width=1.5,
                                                        style=Qt.DashLine))
                    line.setZValue(-10)
                    p.addItem(line)
        for i, c in enumerate(resp.curves):
            pen = pg.mkPen(st.trace(i), width=CURVE_WIDTH)
            mag = c.magnitude / factor
            mag = np.where(mag > 0, mag, np.nan)  # log axis: a true zero has no place on it
            item = self.mag_plot.plot([], [], pen=pen, name=c.label, connect="finite")
            phase = self.phase_plot.plot([], [], pen=pen, connect="finite")
            self._set_curve(item, resp.freqs_hz, mag, lo, hi)
            self._set_curve(phase, resp.freqs_hz, c.phase_deg, lo, hi)
            self.curve_items.append(item)
            self._phase_items.append(phase)
        if resp.input.kind == "base":
            one = pg.InfiniteLine(0.0, angle=0, pen=pg.mkPen(st.ink_soft, width=1,
                                                                 style=Qt.DotLine))
            self.mag_plot.addItem(one)

    def _peak_headers(self, resp) -> list[str]:
        unit = resp.display_unit(self.unit_system)[0] if resp is not None else ""
        return ["output", "peak (Hz)", f"amplitude ({unit or 'ratio'})" if resp is not None
                else "amplitude", "−3 dB width (Hz)", "damping ratio ≈"]

    def set_unit_system(self, system: str) -> None:
        """Show magnitudes in "SI" or "US" units (curves, axis, peaks, CSV); the model and the
        computed curves stay SI."""
        if system == self.unit_system:
            return
        self.unit_system = system
        if self.response is not None:
            self._plot_shape = None      # every item redrawn in the new unit
            self._texts = None
            self._draw(self.response, "")

    # -- plotted data (tests, export) ---------------------------------------------------------
    def plotted_data(self) -> list[tuple[str, np.ndarray, np.ndarray]]:
        """(label, frequencies Hz, magnitude) of each plotted curve, every computed point (the
        plot may draw fewer, see ``_set_curve``)."""
        out = []
        for item in self.curve_items:
            x, y = item._full     # linear data (pyqtgraph applies the log itself)
            out.append((item.name(), np.asarray(x), np.asarray(y)))
        return out

    # -- what the plot draws ------------------------------------------------------------------
    # A big model's curves have tens of thousands of points (the grid is refined round every
    # natural frequency): 61,000 per curve at 1000 masses took 1.6 s to paint. Per pixel column
    # of the plot only the first, last, lowest and highest point can show, so the plot is
    # handed those (M4 aggregation: Jugel et al., "M4: A Visualization-Oriented Time Series
    # Data Aggregation", PVLDB 7(10), 2014; exact for a line chart at that width), recomputed
    # when the frequency axis is zoomed. Gaps (non-finite points) are kept.

    def _set_curve(self, item, f, y, lo=None, hi=None):
        item._full = (np.asarray(f, float), np.asarray(y, float))
        self._show_curve(item, lo, hi)

    def _show_curve(self, item, lo=None, hi=None):
        f, y = item._full
        if lo is None or hi is None:
            (x0, x1), _ = item.getViewBox().viewRange() if item.getViewBox() else ((0, 1), 0)
            lo, hi = 10 ** x0, 10 ** x1
        keep = _m4(f, y, lo, hi, self._plot_columns())
        item.setData(f[keep], y[keep]) if keep is not None else item.setData(f, y)

    def _plot_columns(self) -> int:
        # device pixels across the plot area (an export may be wider: see export_png)
        vb = self.mag_plot.getViewBox()
        width = vb.sceneBoundingRect().width() if vb is not None else 0.0
        return max(int(width * self.devicePixelRatioF() * self._columns_scale), 400)

    def _on_x_range(self, *_):
        if self._redecimating:
            return
        self._redecimating = True
        try:
            for item in self.curve_items + self._phase_items:
                if getattr(item, "_full", None) is not None:
                    self._show_curve(item)
        finally:
            self._redecimating = False

    def peaks(self) -> dict:
        return {c.label: c.peaks for c in self.response.curves} if self.response else {}

    def export_png(self, path, width: int = 1400) -> None:
        """Write the two plots as a PNG (no dialog). Raises OSError when it cannot."""
        import pyqtgraph.exporters as pgx

        self.wait()                      # the current model's curves, even from a hidden tab
        exp = pgx.ImageExporter(self.plots.scene())
        exp.parameters()["width"] = int(width)
        # columns as many as the image has, not the screen
        self._columns_scale = max(1.0, width / max(1.0, self.plots.width()))
        try:
            self._on_x_range()
            exp.export(str(path))
        finally:
            self._columns_scale = 1.0
            self._on_x_range()
        from pathlib import Path

        if not Path(path).is_file():
            raise OSError(f"could not write {path}")

    def export_csv(self, path) -> None:
        """Write the plotted curves as CSV: frequency, then magnitude and phase of each output."""
        self.wait()                      # the current model's curves, even from a hidden tab
        if self.response is None:
            raise OSError("no response to export" + (f": {self.error}" if self.error else ""))
        self.response.write_csv(path, self.unit_system)

    def _export_dialog(self, what, fn, filt):
        start = "response." + what
        if self.document is not None:
            start = str(self.document.suggested_path(f"-response.{what}"))
        path, _ = QFileDialog.getSaveFileName(self, f"Export response {what.upper()}", start, filt)
        if not path:
            return
        try:
            fn(path)
        except OSError as exc:
            self.status_message.emit(f"Response not written: {exc}")
            return
        self.status_message.emit(f"Response written to {path}")

    def export_png_dialog(self):
        self._export_dialog("png", self.export_png, "PNG image (*.png)")

    def export_csv_dialog(self):
        self._export_dialog("csv", self.export_csv, "CSV (*.csv)")


class _RoomyDelegate(QStyledItemDelegate):
    """A cell's size hint with the whole text margin on both sides: Qt's own hint leaves a
    few pixels less than painting needs, and a name sized to it is cut by its last letter."""

    def sizeHint(self, option, index):  # noqa: N802
        hint = super().sizeHint(option, index)
        hint.setWidth(hint.width() + 4)
        return hint


def _work(model, modal, n_points: int) -> float:
    """Rough complex multiply-adds of one response sweep: modal superposition onto every DOF
    (frequencies x modes x DOFs), or a dense direct solve per frequency (n^3 / 3 each)."""
    n = len(getattr(modal, "all_dofs", ())) or len(rd.output_dofs(model))
    n_freq = n_points + 7 * getattr(modal, "n_modes", n)      # grid + refinement at each mode
    if not model.dampers and getattr(modal, "complete", False):
        return float(n_freq) * getattr(modal, "n_modes", n) * n
    return float(n_freq) * n ** 3 / 3.0


def _m4(f, y, lo: float, hi: float, columns: int):
    """Indices of the points a line chart of ``y`` against log ``f`` needs at ``columns`` pixel
    columns across [lo, hi] Hz (columns of the same width continue beyond): per column the
    first, last, lowest and highest finite point, and every non-finite one (a gap). None when
    that would keep nearly all of them."""
    n = len(f)
    if n < 8 or not (hi > lo > 0):
        return None
    lf = np.log10(f)
    width = (np.log10(hi) - np.log10(lo)) / columns
    if not width > 0:
        return None
    col = np.floor((lf - np.log10(lo)) / width).astype(np.int64)   # pixel columns of [lo, hi]
    if n <= 4 * (int(col[-1] - col[0]) + 1):
        return None
    finite = np.isfinite(y)
    starts = np.flatnonzero(np.r_[True, col[1:] != col[:-1]])
    ends = np.r_[starts[1:], n] - 1
    keep = [starts, ends, np.flatnonzero(~finite)]
    idx = np.flatnonzero(finite)
    if idx.size:
        c, v = col[idx], y[idx]
        order = np.lexsort((v, c))                  # by column, then value
        first = np.r_[True, c[order][1:] != c[order][:-1]]
        last = np.r_[c[order][1:] != c[order][:-1], True]
        keep += [idx[order[first]], idx[order[last]]]   # lowest and highest of each column
    return np.unique(np.concatenate(keep))
