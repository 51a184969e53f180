"""Study panel: a tolerance study of the natural frequencies (issue 15).

Samples and seed, Run with a progress bar and Cancel; the study runs in a worker thread (numpy's
stacked eigensolver releases the interpreter lock, so the window stays live; progress arrives
through a queued signal after each chunk). Shown: a histogram of the chosen mode with the
sources' keep-out bands, the percentile table (one row per mode), the probability of clearing
each source, the worst-case corners and the cautions. A study of an older model is kept but
marked out of date.
"""

from __future__ import annotations

import threading

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QObject, QSignalBlocker, Qt, Signal
from PySide6.QtWidgets import (QComboBox, QHBoxLayout, QHeaderView, QLabel, QPlainTextEdit, QProgressBar,
                               QPushButton, QSpinBox, QSplitter, QTableWidget, QTableWidgetItem,
                               QVBoxLayout, QWidget)

from app.drawing.plot_axes import paint_whole, true_value_axes
from app.drawing.style import current_style
from app.results import study_rows

#: Display bins of the histogram (the study's fine bins summed in groups).
SHOWN_BINS = 64


class _Relay(QObject):
    progress = Signal(int, int)
    done = Signal(object, int)
    failed = Signal(str, int)


class StudyPanel(QWidget):
    """Signals: ``status_message(str)``; ``study_finished(object)`` with the StudyResult."""

    status_message = Signal(str)
    study_finished = Signal(object)

    def __init__(self, document, parent=None):
        super().__init__(parent)
        self.document = document
        self.result = None
        self._result_model = None
        self._thread = None
        self._cancel = threading.Event()
        self._generation = 0
        self._relay = _Relay(self)
        self._relay.progress.connect(self._on_progress)
        self._relay.done.connect(self._on_done)
        self._relay.failed.connect(self._on_failed)
        self._build_ui()
        document.model_changed.connect(self._on_model_change)
        self._on_model_change(document.model)

    # -- widgets ------------------------------------------------------------------------------
    def _build_ui(self):
        lay = QVBoxLayout(self)
        row = QHBoxLayout()
        row.addWidget(QLabel("Samples"))
        self.samples_spin = QSpinBox()
        self.samples_spin.setObjectName("study_samples")
        self.samples_spin.setRange(10, 10_000_000)
        self.samples_spin.setSingleStep(1000)
        self.samples_spin.setValue(10_000)
        self.samples_spin.setGroupSeparatorShown(True)
        self.samples_spin.setToolTip("Number of sampled models (Monte Carlo): the error of a"
                                     " probability falls as 1/sqrt(N)")
        row.addWidget(self.samples_spin)
        row.addWidget(QLabel("Seed"))
        self.seed_spin = QSpinBox()
        self.seed_spin.setObjectName("study_seed")
        self.seed_spin.setRange(0, 2_000_000_000)
        self.seed_spin.setToolTip("Random seed: the same seed gives the same study (here, on the"
                                  " command line or on a cluster)")
        row.addWidget(self.seed_spin)
        self.run_button = QPushButton("Run study")
        self.run_button.setObjectName("study_run")
        self.run_button.setToolTip("Sample the toleranced springs, dashpots and masses and solve"
                                   " every sample (in the background)")
        self.run_button.clicked.connect(self.run)
        row.addWidget(self.run_button)
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setObjectName("study_cancel")
        self.cancel_button.setEnabled(False)
        self.cancel_button.clicked.connect(self.cancel)
        row.addWidget(self.cancel_button)
        self.progress_bar = QProgressBar()
        self.progress_bar.setObjectName("study_progress")
        self.progress_bar.setRange(0, 100)
        self.progress_bar.setValue(0)
        row.addWidget(self.progress_bar, 1)
        lay.addLayout(row)
        self.summary = QLabel("")
        self.summary.setObjectName("study_summary")
        self.summary.setWordWrap(True)
        lay.addWidget(self.summary)

        split = QSplitter(Qt.Orientation.Horizontal)
        left = QWidget()
        ll = QVBoxLayout(left)
        ll.setContentsMargins(0, 0, 0, 0)
        mrow = QHBoxLayout()
        mrow.addWidget(QLabel("Mode"))
        self.mode_combo = QComboBox()
        self.mode_combo.setObjectName("study_mode")
        self.mode_combo.currentIndexChanged.connect(lambda _i: self._draw_histogram())
        mrow.addWidget(self.mode_combo, 1)
        ll.addLayout(mrow)
        self.plot = paint_whole(pg.PlotWidget(axisItems=true_value_axes()))
        self.plot.setObjectName("study_histogram")
        self.plot.setMinimumHeight(90)
        st = current_style()
        self.plot.setBackground(st.background)   # the window's colours, as the other plots
        pi = self.plot.getPlotItem()
        for ax in ("left", "bottom"):
            pi.getAxis(ax).setTextPen(st.ink)
            pi.getAxis(ax).setPen(st.ink_soft)
        pi.titleLabel.setAttr("color", st.ink.name())
        pi.setLabel("bottom", "natural frequency (Hz)")
        pi.setLabel("left", "samples")
        pi.showGrid(x=True, y=True, alpha=0.2)
        ll.addWidget(self.plot, 1)
        key = QLabel("Thin line: nominal; dashed: 5 and 95 %; dotted: worst-case corners;"
                     " shaded: each source widened by the margin (its own frequency a bold"
                     " line or a darker band).")
        key.setObjectName("study_key")
        key.setWordWrap(True)
        ll.addWidget(key)
        split.addWidget(left)
        right = QWidget()
        rl = QVBoxLayout(right)
        rl.setContentsMargins(0, 0, 0, 0)
        self.table = QTableWidget(0, len(study_rows.HEADERS))
        self.table.setObjectName("study_table")
        self.table.setHorizontalHeaderLabels(list(study_rows.HEADERS))
        self.table.verticalHeader().setVisible(False)
        self.table.setEditTriggers(QTableWidget.EditTrigger.NoEditTriggers)
        self.table.setSelectionBehavior(QTableWidget.SelectionBehavior.SelectRows)
        self.table.itemSelectionChanged.connect(self._on_table_pick)
        # every header readable before the first result (the table then scrolls sideways)
        self.table.horizontalHeader().setSectionResizeMode(
            QHeaderView.ResizeMode.ResizeToContents)
        rl.addWidget(self.table, 1)
        self.details = QPlainTextEdit()
        self.details.setObjectName("study_details")
        self.details.setReadOnly(True)
        self.details.setMinimumHeight(48)
        rl.addWidget(self.details, 1)
        split.addWidget(right)
        split.setStretchFactor(0, 2)
        split.setStretchFactor(1, 3)
        lay.addWidget(split, 1)

    # -- running ------------------------------------------------------------------------------
    @property
    def running(self) -> bool:
        return self._thread is not None and self._thread.is_alive()

    def run(self) -> None:
        """Start a study of the current model in a worker thread."""
        if self.running:
            return
        from solver.study import tolerance_parameters

        model = self.document.model
        if not tolerance_parameters(model):
            self.summary.setText("No spring, dashpot or mass has a tolerance: select one and give"
                                 " it a Tolerance (±%) in Properties, then run the study.")
            return
        n, seed = self.samples_spin.value(), self.seed_spin.value()
        self._generation += 1
        gen = self._generation
        self._cancel = threading.Event()
        cancel = self._cancel
        relay = self._relay
        self.run_button.setEnabled(False)
        self.cancel_button.setEnabled(True)
        self.progress_bar.setValue(0)
        self.summary.setText(f"Running {n:,} samples (seed {seed})…")

        def work():
            from solver.errors import ModelError
            from solver.study import StudyCancelled, tolerance_study

            try:
                res = tolerance_study(model, n, seed=seed, cancel=cancel,
                                      progress=lambda d, t: relay.progress.emit(d, t))
            except StudyCancelled:
                relay.failed.emit("Study cancelled before any sample was solved.", gen)
            except ModelError as exc:
                relay.failed.emit(f"Study refused: {exc}", gen)
            except Exception as exc:   # a bug: say so in one line, keep the window alive
                relay.failed.emit(f"Study failed: {type(exc).__name__}: {exc}", gen)
            else:
                relay.done.emit((model, res), gen)

        self._thread = threading.Thread(target=work, name="tolerance-study", daemon=True)
        self._thread.start()

    def cancel(self) -> None:
        self._cancel.set()
        self.cancel_button.setEnabled(False)

    def wait(self, seconds: float = 60.0) -> bool:
        """Block until the running study ends (tests, closing); True when none is running."""
        if self._thread is not None:
            self._thread.join(seconds)
        return not self.running

    def shutdown(self) -> None:
        self._cancel.set()
        self.wait(10.0)

    def _on_progress(self, done: int, total: int):
        self.progress_bar.setValue(int(100 * done / max(total, 1)))

    def _on_done(self, payload, gen: int):
        if gen != self._generation:
            return
        model, res = payload
        self.run_button.setEnabled(True)
        self.cancel_button.setEnabled(False)
        self.progress_bar.setValue(100 if res.complete else self.progress_bar.value())
        self.set_result(res, model)
        self.study_finished.emit(res)
        self.status_message.emit(f"Tolerance study: {res.n_samples:,} samples solved")

    def _on_failed(self, message: str, gen: int):
        if gen != self._generation:
            return
        self.run_button.setEnabled(True)
        self.cancel_button.setEnabled(False)
        self.summary.setText(message)
        self.status_message.emit(message)

    # -- showing ------------------------------------------------------------------------------
    def set_result(self, res, model=None) -> None:
        """Show a StudyResult (of ``model``, default the result's own)."""
        self.result = res
        self._result_model = model if model is not None else res.model
        stale = self._result_model is not self.document.model
        state = ("" if res.complete else " (cancelled)") + (
            " — the model has changed since: run again" if stale else "")
        self.summary.setText(f"{res.n_samples:,} samples, seed {res.seed} ({res.method}){state}."
                             " Modes numbered by frequency in every sample.")
        rows = study_rows.table_rows(res)
        with QSignalBlocker(self.table):
            self.table.setRowCount(len(rows))
            for r, cells in enumerate(rows):
                for c, text in enumerate(cells):
                    item = QTableWidgetItem(text)
                    item.setTextAlignment(Qt.AlignmentFlag.AlignRight
                                          | Qt.AlignmentFlag.AlignVCenter)
                    self.table.setItem(r, c, item)
        with QSignalBlocker(self.mode_combo):
            self.mode_combo.clear()
            for m in res.modes:
                self.mode_combo.addItem(f"Mode {m.mode} ({m.nominal_hz:.4g} Hz nominal)", m.mode)
            first = next((i for i, m in enumerate(res.modes) if not m.zero), 0)
            self.mode_combo.setCurrentIndex(first)
        lines = ["Tolerances:"] + ["  " + x for x in study_rows.parameter_lines(res)]
        clear = study_rows.clearing_lines(res)
        if clear:
            lines += ["Probability of clearing each source:"] + ["  " + x for x in clear]
        lines += ["Worst-case corners (verified by a solve):"]
        lines += ["  " + x for x in study_rows.corner_lines(res)]
        lines += ["Notes:"] + ["  " + x for x in res.notes]
        self.details.setPlainText("\n".join(lines))
        self._draw_histogram()

    def _on_table_pick(self):
        rows = {i.row() for i in self.table.selectedItems()}
        if len(rows) == 1:
            self.mode_combo.setCurrentIndex(rows.pop())

    def _draw_histogram(self):
        pi = self.plot.getPlotItem()
        pi.clear()
        res = self.result
        if res is None or self.mode_combo.count() == 0:
            return
        ms = res.mode(self.mode_combo.currentData() or 1)
        st = current_style()
        counts, edges = ms.histogram
        group = max(1, len(counts) // SHOWN_BINS)
        used = np.flatnonzero(counts)
        if used.size == 0:
            return
        lo_bin = (used[0] // group) * group
        hi_bin = min(len(counts), (used[-1] // group + 1) * group)
        c = counts[lo_bin:hi_bin].reshape(-1, group).sum(axis=1)
        e = edges[lo_bin:hi_bin + 1:group]
        if len(e) < len(c) + 1:
            e = np.append(e, edges[hi_bin])
        fill = pg.mkColor(st.accent)
        fill.setAlpha(140)
        pi.addItem(pg.PlotDataItem(e, c, stepMode="center", fillLevel=0, brush=pg.mkBrush(fill),
                                   pen=pg.mkPen(st.accent, width=1)))
        x_lo, x_hi = float(e[0]), float(e[-1])
        pad = 0.25 * (x_hi - x_lo) if x_hi > x_lo else max(abs(x_lo) * 0.05, 1e-3)
        x_lo, x_hi = min(x_lo, ms.corner_low_hz) - pad, max(x_hi, ms.corner_high_hz) + pad
        from solver.margins import source_bands

        warn = st.warning
        for _sid, _order, lo, hi, lo_w, hi_w in source_bands(res.model):
            if hi_w < x_lo or lo_w > x_hi:
                continue
            col = pg.mkColor(warn)
            col.setAlpha(45)
            region = pg.LinearRegionItem(values=(max(lo_w, x_lo), min(hi_w, x_hi)),
                                         movable=False, brush=pg.mkBrush(col),
                                         pen=pg.mkPen(warn, width=0.5))
            region.setZValue(-10)
            pi.addItem(region)
            if hi <= lo:   # a speed's order: the excitation frequency itself
                pi.addItem(pg.InfiniteLine(pos=lo, angle=90, pen=pg.mkPen(warn, width=1.5)))
            else:
                core = pg.mkColor(warn)
                core.setAlpha(90)
                inner = pg.LinearRegionItem(values=(max(lo, x_lo), min(hi, x_hi)),
                                            movable=False, brush=pg.mkBrush(core),
                                            pen=pg.mkPen(None))
                inner.setZValue(-9)
                pi.addItem(inner)
        for x, style_ in ((ms.percentiles_hz[0], Qt.PenStyle.DashLine),
                          (ms.percentiles_hz[2], Qt.PenStyle.DashLine),
                          (ms.nominal_hz, Qt.PenStyle.SolidLine)):
            pi.addItem(pg.InfiniteLine(pos=x, angle=90,
                                       pen=pg.mkPen(st.ink, width=1, style=style_)))
        for x in (ms.corner_low_hz, ms.corner_high_hz):
            pi.addItem(pg.InfiniteLine(pos=x, angle=90,
                                       pen=pg.mkPen(st.error, width=1,
                                                    style=Qt.PenStyle.DotLine)))
        pi.setTitle(f"Mode {ms.mode}: 5-95 % {ms.percentiles_hz[0]:.4g} to"
                    f" {ms.percentiles_hz[2]:.4g} Hz", size="9pt")
        pi.setXRange(x_lo, x_hi, padding=0)
        pi.setYRange(0, float(c.max()) * 1.1, padding=0)

    def _on_model_change(self, model):
        if self.result is not None and self._result_model is not model:
            self.summary.setText(f"{self.result.n_samples:,} samples, seed {self.result.seed}:"
                                 " the model has changed since this study — run again.")


__all__ = ["StudyPanel"]
