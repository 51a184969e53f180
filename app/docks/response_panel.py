"""Response panel: forced harmonic response (FRF) and base-excitation transmissibility.

Choose the input (a unit force at a mass in one direction, or base motion in a direction), the
outputs (one or more masses) and, for a force, the quantity (displacement, velocity or
acceleration per newton). Magnitude (log-log) and phase are two stacked pyqtgraph plots with a
linked frequency axis; excitation sources are shaded; the peaks of every curve are listed with
their half-power bandwidth and the damping ratio it implies. The input chosen is a view preference
held here, never written to the model. The curves are recomputed, debounced, after every model
change (synchronously: the direct solve of a few hundred DOFs at ~900 frequencies takes well under
a second; with proportional damping the modal path reuses the solve service's modes and takes
milliseconds). During a continuous gesture (a Tune slider drag, :meth:`set_live`) the panel holds
its curves, dimmed and marked, and recomputes once on release, so the drag stays smooth. The
curves themselves come from :mod:`app.results.response_data`, which has no Qt; every number shown
goes through :mod:`app.text.numbers`, and magnitudes follow the display unit system (SI or US).
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QSignalBlocker, Qt, QTimer, Signal
from PySide6.QtWidgets import (QCheckBox, QComboBox, QFileDialog, QHBoxLayout, QHeaderView, QLabel,
                               QLineEdit, QListWidget, QListWidgetItem, QPushButton, QSplitter,
                               QSizePolicy, QTableWidget, QTableWidgetItem, QVBoxLayout,
                               QWidget)

from solver.errors import ModelError

from app.results import response_data as rd
from app.results.names import dof_name, names
from app.drawing.plot_axes import log_ticks, true_value_axes
from app.drawing.style import current_style
from app.text.numbers import FREQ_SIG, hz, number

DEBOUNCE_MS = 80


class ResponsePanel(QWidget):
    """FRF / transmissibility of the document's model.

    Signals: ``status_message(str)``; ``curves_changed()`` after each recompute.
    """

    status_message = Signal(str)
    curves_changed = Signal()

    def __init__(self, document=None, parent=None, delay_ms: int = DEBOUNCE_MS):
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
        self._build_ui()
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
        self.quantity_combo.currentIndexChanged.connect(lambda _i: self.recompute())
        row.addWidget(self.quantity_combo, 2)
        self.relative_check = QCheckBox("relative to base")
        self.relative_check.setObjectName("response_relative")
        self.relative_check.setToolTip("Base input: plot motion relative to the base (X − U)/U"
                                       " instead of the absolute transmissibility X/U")
        self.relative_check.toggled.connect(lambda _on: self.recompute())
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
        self.plots = pg.GraphicsLayoutWidget()
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
        self.phase_plot.setYRange(-180, 180, padding=0.05)
        self.phase_plot.getAxis("left").setTicks([[(v, f"{v}") for v in (-180, -90, 0, 90, 180)]])
        for p in (self.mag_plot, self.phase_plot):
            p.showGrid(x=True, y=True, alpha=0.25)
            p.getAxis("left").setWidth(58)
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
        self.peaks_table = QTableWidget(0, 5)
        self.peaks_table.setObjectName("response_peaks")
        self.peaks_table.setHorizontalHeaderLabels(self._peak_headers(None))
        self.peaks_table.horizontalHeader().setSectionResizeMode(QHeaderView.Stretch)
        self.peaks_table.verticalHeader().hide()
        self.peaks_table.setEditTriggers(QTableWidget.NoEditTriggers)
        self.peaks_table.setToolTip("Damping ratio from the half-power bandwidth / (2 f)"
                                    " (valid for light damping and well separated peaks)")
        self.peaks_table.verticalHeader().setDefaultSectionSize(20)
        bl.addWidget(self.peaks_table, 1)

    # -- model --------------------------------------------------------------------------------
    def _on_model_change(self, model):
        self.model = model
        self._sync_choices(model)
        if self._live:
            self._hold()
        else:
            self._timer.start()

    def set_live(self, live: bool) -> None:
        """True while a slider drag changes the model continuously: the curves are held (dimmed,
        with a note) and recomputed once when it ends."""
        self._live = bool(live)
        if not self._live and self._held:
            self._held = False
            self.recompute()

    @property
    def held(self) -> bool:
        """True when the curves shown are older than the model (held during a drag)."""
        return self._held

    def _hold(self):
        self._timer.stop()
        if not self._held:
            self._held = True
            for item in self.curve_items:
                item.setOpacity(0.35)
            self.note_label.setText("Held while the slider moves: the response updates when it"
                                    " is released.")
            self.note_label.setStyleSheet(f"color: {current_style().ink_soft_hex};")

    def reset(self, model) -> None:
        """Another model was opened: drop every curve, peak and note of the previous one at
        once (they name its elements), then compute the new model's response as usual."""
        self.model = model
        self._modal = self._modal_model = None
        self._sync_choices(model)
        self.response, self.error = None, ""
        self._draw(None, "Computing the response of the model just opened…")
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
        if self._live:
            return
        if model is self.model and self._timer.isActive():
            self._timer.stop()
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
        with QSignalBlocker(self.input_combo):
            self.input_combo.clear()
            for c in choices:
                self.input_combo.addItem(c.text(model))
            if self.input is not None:
                self.input_combo.setCurrentIndex(choices.index(self.input))
        dofs = rd.output_dofs(model)
        key = tuple(dofs)
        shown = names(model)
        key = (key, tuple(shown.get(m, m) for m, _d in dofs))
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
        self._sync_input_widgets()
        self.recompute()

    def _on_output_toggled(self, item):
        dof = item.data(Qt.UserRole)
        if item.checkState() == Qt.Checked:
            self._outputs.add(dof)
        else:
            self._outputs.discard(dof)
        self.recompute()

    def _on_auto_toggled(self, on: bool):
        self.auto_range = on
        self.recompute()

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
        self._timer.stop()
        self._held = False
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
            self.response = rd.compute_response(
                model, self.input, outs, self.quantity, self.f_range, modal,
                relative=self.relative_check.isChecked(), n_points=n)
        except ModelError as exc:
            self.error = str(exc)
            self._draw(None, f"No response: {exc}")
            return
        self._draw(self.response, "")

    def _draw(self, resp, message: str):
        st = current_style()
        for p in (self.mag_plot, self.phase_plot):
            p.clear()
        self.legend.clear()
        self.curve_items = []
        with QSignalBlocker(self.f_lo_edit), QSignalBlocker(self.f_hi_edit):
            self.f_lo_edit.setText(number(self.f_range[0]))
            self.f_hi_edit.setText(number(self.f_range[1]))
        self.peaks_table.setRowCount(0)
        self.peaks_table.setHorizontalHeaderLabels(self._peak_headers(resp))
        if resp is None:
            self.note_label.setText(message)
            self.note_label.setStyleSheet(f"color: {st.error.name()};" if self.error else "")
            self.curves_changed.emit()
            return
        lo, hi = float(resp.freqs_hz[0]), float(resp.freqs_hz[-1])
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
        unit, factor = resp.display_unit(self.unit_system)
        for i, c in enumerate(resp.curves):
            pen = pg.mkPen(st.trace(i), width=2)
            mag = c.magnitude / factor
            mag = np.where(mag > 0, mag, np.nan)  # log axis: a true zero has no place on it
            item = self.mag_plot.plot(resp.freqs_hz, mag, pen=pen, name=c.label,
                                      connect="finite")
            self.phase_plot.plot(resp.freqs_hz, c.phase_deg, pen=pen, connect="finite")
            self.curve_items.append(item)
        if resp.input.kind == "base":
            one = pg.InfiniteLine(0.0, angle=0, pen=pg.mkPen(st.ink_soft, width=1,
                                                                 style=Qt.DotLine))
            self.mag_plot.addItem(one)
        self.mag_plot.setLabel("left", resp.axis_label(self.unit_system))
        self.mag_plot.setTitle(resp.title, size="9pt")
        self.mag_plot.setXRange(np.log10(lo), np.log10(hi), padding=0)
        for p in (self.mag_plot, self.phase_plot):
            p.getAxis("bottom").setTicks(log_ticks(lo, hi))
        self.mag_plot.enableAutoRange(axis="y")
        rows = [(c.label, p) for c in resp.curves for p in c.peaks]
        self.peaks_table.setRowCount(len(rows))
        for r, (label, p) in enumerate(rows):
            for col, text in enumerate((label, number(p.frequency_hz, FREQ_SIG),
                                        number(p.amplitude / factor), number(p.bandwidth_hz),
                                        number(p.damping_ratio))):
                it = QTableWidgetItem(text)
                it.setTextAlignment(Qt.AlignRight | Qt.AlignVCenter if col else
                                    Qt.AlignLeft | Qt.AlignVCenter)
                self.peaks_table.setItem(r, col, it)
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
            self._draw(self.response, "")

    # -- plotted data (tests, export) ---------------------------------------------------------
    def plotted_data(self) -> list[tuple[str, np.ndarray, np.ndarray]]:
        """(label, frequencies Hz, magnitude) of each plotted curve, as handed to the plot."""
        out = []
        for item in self.curve_items:
            x, y = item.xData, item.yData  # linear data (pyqtgraph applies the log itself)
            out.append((item.name(), np.asarray(x), np.asarray(y)))
        return out

    def peaks(self) -> dict:
        return {c.label: c.peaks for c in self.response.curves} if self.response else {}

    def export_png(self, path, width: int = 1400) -> None:
        """Write the two plots as a PNG (no dialog). Raises OSError when it cannot."""
        import pyqtgraph.exporters as pgx

        exp = pgx.ImageExporter(self.plots.scene())
        exp.parameters()["width"] = int(width)
        exp.export(str(path))
        from pathlib import Path

        if not Path(path).is_file():
            raise OSError(f"could not write {path}")

    def export_csv(self, path) -> None:
        """Write the plotted curves as CSV: frequency, then magnitude and phase of each output."""
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
