"""Absorber assistant: size a tuned absorber for one mode at one mass (Den Hartog's optimum) and
add it as one undo step (issue 15).

Pick the mode, the mass to protect (by label) and the mass ratio; the panel shows the design
(absorber mass, stiffness, damping, the formula) and the receptance of the protected mass before
and after, with the absorber 5 % mistuned either way dashed. "Add absorber" re-sizes on the
current model and pushes one command that adds the mass, spring and dashpot.
"""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtCore import QObject, QRunnable, QSignalBlocker, Qt, QThreadPool, Signal
from PySide6.QtWidgets import (QComboBox, QDoubleSpinBox, QHBoxLayout, QLabel, QPushButton,
                               QSizePolicy, QVBoxLayout, QWidget)

from solver.errors import ModelError

from app.docks.on_screen import on_screen
from app.document import commands
from app.drawing.plot_axes import paint_whole, true_value_axes
from app.drawing.style import CURVE_WIDTH, RESULT_WIDTH, current_style
from app.results.names import names
from app.results.offload import dof_count
from app.text.numbers import number


#: Above this many DOFs a design is sized in the worker process (four frequency sweeps by
#: direct solves: ~2 s at 200 DOFs), a worker thread waiting for it; the panel keeps the window
#: live and shows "sizing…" meanwhile.
PROCESS_DOF_LIMIT = 40


def _size(model, mode, mass_id, ratio):
    """(AbsorberDesign or None, error text); module-level for the worker process."""
    from solver.absorber import size_absorber

    try:
        return size_absorber(model, mode, mass_id, ratio), ""
    except ModelError as exc:
        return None, str(exc)


class _Relay(QObject):
    done = Signal(int, object, str)


class _SizeJob(QRunnable):
    def __init__(self, generation, args, relay, latest):
        super().__init__()
        self.generation, self.args, self.relay, self.latest = generation, args, relay, latest
        self.setAutoDelete(True)

    def run(self):
        if self.latest() != self.generation:
            return        # overtaken by a newer edit while queued
        from app.results import offload

        try:
            design, error = offload.run(_size, *self.args, lane="absorber")
        except RuntimeError:      # the window is closing
            return
        except Exception as exc:  # a bug: said in the panel, never a dead worker
            design, error = None, f"internal error: {exc!r}"
        self.relay.done.emit(self.generation, design, error)


class AbsorberPanel(QWidget):
    """Signals: ``status_message(str)``."""

    status_message = Signal(str)

    def __init__(self, document, parent=None):
        super().__init__(parent)
        self.document = document
        self.design = None
        self._analysis = None
        self._generation = 0
        self._pool = QThreadPool(self)     # before the relay: destroyed first
        self._pool.setMaxThreadCount(1)
        self._relay = _Relay(self)
        self._relay.done.connect(self._on_sized)
        self._build_ui()
        document.model_changed.connect(self._on_model_change)
        self._on_model_change(document.model)

    def _build_ui(self):
        lay = QVBoxLayout(self)
        row = QHBoxLayout()
        row.addWidget(QLabel("Mode"))
        self.mode_combo = QComboBox()
        self.mode_combo.setObjectName("absorber_mode")
        self.mode_combo.currentIndexChanged.connect(lambda _i: self.resize_design())
        row.addWidget(self.mode_combo, 1)
        row.addWidget(QLabel("Protect"))
        self.mass_combo = QComboBox()
        self.mass_combo.setObjectName("absorber_mass")
        self.mass_combo.setToolTip("The mass whose motion the absorber reduces; the absorber"
                                   " hangs on it")
        self.mass_combo.currentIndexChanged.connect(lambda _i: self.resize_design())
        for combo in (self.mode_combo, self.mass_combo):
            combo.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
        row.addWidget(self.mass_combo, 1)
        lay.addLayout(row)
        row = QHBoxLayout()
        row.addWidget(QLabel("Mass ratio μ"))
        self.ratio_spin = QDoubleSpinBox()
        self.ratio_spin.setObjectName("absorber_ratio")
        self.ratio_spin.setDecimals(3)
        self.ratio_spin.setRange(0.005, 1.0)
        self.ratio_spin.setSingleStep(0.01)
        self.ratio_spin.setValue(0.05)
        self.ratio_spin.setToolTip("Absorber mass / modal mass of the mode at the protected mass"
                                   " (0.01 to 0.25 is usual; more mass, wider and lower peaks)")
        self.ratio_spin.valueChanged.connect(lambda _v: self.resize_design())
        row.addWidget(self.ratio_spin)
        self.add_button = QPushButton("Add absorber")
        self.add_button.setObjectName("absorber_add")
        self.add_button.setToolTip("Add the absorber's mass, spring and dashpot (one undo step)")
        self.add_button.clicked.connect(self.add_absorber)
        row.addWidget(self.add_button)
        row.addStretch(1)
        lay.addLayout(row)
        self.design_label = QLabel("")
        self.design_label.setObjectName("absorber_design")
        self.design_label.setWordWrap(True)
        self.design_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        lay.addWidget(self.design_label)
        # the plot and, in a column of its own beside it, its key (never over a curve)
        self.plots = paint_whole(pg.GraphicsLayoutWidget())
        self.plots.setObjectName("absorber_plots")
        self.plots.setMinimumHeight(90)
        self.plot_item = self.plots.addPlot(row=0, col=0, axisItems=true_value_axes())
        st = current_style()
        self.plots.setBackground(st.background)   # the window's colours, as the other plots
        pi = self.plot_item
        for ax in ("left", "bottom"):
            pi.getAxis(ax).setTextPen(st.ink)
            pi.getAxis(ax).setPen(st.ink_soft)
        pi.setLabel("bottom", "frequency (Hz)")
        pi.setLabel("left", "receptance at the protected mass")
        pi.setLogMode(x=False, y=True)
        pi.showGrid(x=True, y=True, alpha=0.2)
        self.legend = pg.LegendItem(labelTextSize="8pt", frame=False, labelTextColor=st.ink)
        self.legend.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Maximum)
        key = self.plots.ci.addLayout(row=0, col=1)
        key.addItem(self.legend, row=0, col=0)
        key.addLabel("", row=1, col=0)
        key.layout.setRowStretchFactor(1, 100)
        key.setMaximumWidth(150)
        self.plots.ci.layout.setColumnStretchFactor(0, 1)
        self.plots.ci.layout.setColumnStretchFactor(1, 0)
        pi.legend = self.legend
        self.plot = self.plots
        lay.addWidget(self.plots, 1)
        self.limits_label = QLabel("")
        self.limits_label.setObjectName("absorber_limits")
        self.limits_label.setWordWrap(True)
        lay.addWidget(self.limits_label)

    # -- model -> choices ---------------------------------------------------------------------
    def set_analysis(self, analysis) -> None:
        """The modes to offer (from the solve service)."""
        self._analysis = analysis
        if analysis is None or analysis.model is not self.document.model:
            return
        modal = analysis.modal
        keep = self.mode_combo.currentData()
        with QSignalBlocker(self.mode_combo):
            self.mode_combo.clear()
            for i in range(modal.n_modes):
                if not modal.is_zero[i]:
                    self.mode_combo.addItem(
                        f"Mode {i + 1} ({modal.frequencies_hz[i]:.4g} Hz)", i + 1)
            j = self.mode_combo.findData(keep)
            self.mode_combo.setCurrentIndex(j if j >= 0 else 0)
        # four frequency sweeps per design: done when the panel is seen, not on every edit
        self._due = True
        if on_screen(self):        # a tab behind another is "visible" to Qt, not on screen
            self.catch_up()

    def catch_up(self) -> None:
        if getattr(self, "_due", True):
            self._due = False
            self.resize_design()

    def _on_model_change(self, model):
        table = names(model)
        keep = self.mass_combo.currentData()
        with QSignalBlocker(self.mass_combo):
            self.mass_combo.clear()
            for m in model.masses:
                if m.mass > 0:
                    self.mass_combo.addItem(table.get(m.id, m.id), m.id)
            j = self.mass_combo.findData(keep)
            self.mass_combo.setCurrentIndex(j if j >= 0 else 0)

    # -- design -------------------------------------------------------------------------------
    def resize_design(self, sync: bool = False) -> None:
        """Size the absorber for the current choices (shown, not added); a large model in the
        worker process unless ``sync``."""
        mode, mass_id = self.mode_combo.currentData(), self.mass_combo.currentData()
        self._generation += 1
        self.design = None
        self.plot_item.clear()
        if mode is None or mass_id is None:
            self.design_label.setText("Pick a mode and the mass to protect.")
            self.add_button.setEnabled(False)
            return
        model = self.document.model
        args = (model, int(mode), mass_id, self.ratio_spin.value())
        if not sync and dof_count(model) > PROCESS_DOF_LIMIT:
            self.add_button.setEnabled(False)
            self.design_label.setText("Sizing the absorber for the edited model…")
            self._pool.start(_SizeJob(self._generation, args, self._relay,
                                      lambda: self._generation))
            return
        self._show(*_size(*args))

    def _on_sized(self, generation, design, error):
        if generation == self._generation:
            self._show(design, error)

    def wait(self, msecs: int = 60000) -> bool:
        """Block until no design is being sized (tests). True when idle."""
        from PySide6.QtCore import QCoreApplication, QElapsedTimer

        clock = QElapsedTimer()
        clock.start()
        while self._pool.activeThreadCount() and clock.elapsed() < msecs:
            self._pool.waitForDone(20)
            QCoreApplication.processEvents()
        QCoreApplication.processEvents()
        return not self._pool.activeThreadCount()

    def _show(self, d, error: str) -> None:
        if d is None:
            self.design_label.setText(error)
            self.add_button.setEnabled(False)
            return
        self.design = d
        self.add_button.setEnabled(True)
        model = self.document.model
        torsion = model.kind == "torsion"
        mu = "kg m²" if torsion else "kg"
        ku = "N m/rad" if torsion else "N/m"
        cu = "N m s/rad" if torsion else "N s/m"
        self.design_label.setText(
            f"Modal mass at {names(model).get(d.mass_id, d.mass_id)} ({d.direction}):"
            f" {number(d.primary_mass)} {mu}. Absorber: mass {number(d.absorber_mass)} {mu},"
            f" spring {number(d.stiffness)} {ku}, dashpot {number(d.damping)} {cu}; tuned to"
            f" {d.absorber_hz:.4g} Hz (f = 1/(1+μ) = {d.tuning_ratio:.4g} of"
            f" {d.primary_hz:.4g} Hz), ζ = sqrt(3μ/(8(1+μ)³)) = {d.damping_ratio:.4g}"
            " (Den Hartog's optimum for an undamped primary).")
        self.limits_label.setText(
            "Limits: optimal for this one mode only, the model's own damping left out of the"
            " sizing; dashed curves: absorber 5 % low / high (mistuning). A lumped linear model"
            " is an estimate to be confirmed by test or detailed analysis.")
        self._draw()

    def _draw(self):
        d = self.design
        pi = self.plot_item
        pi.clear()
        self.legend.clear()
        st = current_style()
        unit = "rad/(N m)" if self.document.model.kind == "torsion" else "m/N"
        pi.setLabel("left", f"receptance at the protected mass ({unit})")
        f = d.freqs_hz
        for y, name, pen in (
                (d.before, "without absorber", pg.mkPen(st.ink_soft, width=CURVE_WIDTH)),
                (d.after, "with absorber", pg.mkPen(st.accent, width=RESULT_WIDTH)),
                (d.after_low, "absorber 5 % low", pg.mkPen(st.warning, width=1,
                                                            style=Qt.PenStyle.DashLine)),
                (d.after_high, "absorber 5 % high", pg.mkPen(st.error, width=1,
                                                              style=Qt.PenStyle.DashLine))):
            ok = y > 0
            pi.plot(f[ok], y[ok], pen=pen, name=name)

    def add_absorber(self) -> bool:
        """Size on the current model and add the absorber as one undo step."""
        self.resize_design(sync=True)
        d = self.design
        if d is None:
            return False
        label = names(self.document.model).get(d.mass_id, d.mass_id)
        done = self.document.apply(d.model, f"Add tuned absorber on {label}",
                                   command_class=commands.AddCommand)
        if done:
            self.status_message.emit(f"Tuned absorber added on {label} (mode {d.mode});"
                                     " Undo removes it")
        return done


__all__ = ["AbsorberPanel"]
