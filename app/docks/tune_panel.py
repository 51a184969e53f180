"""Tune panel: move a resonance by changing one spring or mass, live.

Pick a spring (``k``, or ``k_t`` in a planar model) or a mass; a log-scale slider spans
:data:`DECADES` decade either way of the value it had when picked. Dragging pushes each preview
through the document with one merge key per drag, so a whole drag is one undo entry. Small models
are solved here at once and the results handed to the solve service (which then skips its own
debounced solve), so the modes table, motion view and canvas tint follow the slider; larger ones
are left to the service's debounce and worker thread.

Beside the controls, the sweep plot: every mode's frequency (Hz) against the value over the slider
range (:func:`solver.sweep`, log-spaced, recomputed only when the element, the range or the rest of
the model changes), the excitation sources as horizontal bands widened by the margin
(:func:`solver.source_bands`), a cursor at the current value and the points where a mode curve
enters or leaves a widened band. The sweep is :data:`SWEEP_POINTS` solves: when an edit of
another element makes it stale, it is recomputed in a worker thread while the old curves stay
dimmed and titled as updating, so the edit's own results are shown at once; sweeps of the last
few models are kept (an undo redraws at once).

Below, the retune row: mode, target Hz, *Propose* (ranks the elements by normalised sensitivity,
:func:`solver.rank_elements`, and picks the strongest), *Retune* (solves for the value,
:func:`solver.retune`, and previews it on the plot), *Apply* (one undo entry). A target out of
reach is explained in the panel, not in a dialog.
"""

from __future__ import annotations

import dataclasses
import math
from collections import OrderedDict

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QObject, QRunnable, QSignalBlocker, Qt, QThreadPool, QTimer, Signal
from PySide6.QtWidgets import (QCheckBox, QComboBox, QDoubleSpinBox, QGraphicsItem, QGridLayout,
                               QHBoxLayout, QLabel, QListWidget, QPushButton, QScrollArea,
                               QSizePolicy, QSlider, QSpinBox, QSplitter, QVBoxLayout, QWidget)

import solver
from solver.errors import ModelError
from solver.margins import source_bands
from solver.model import Mass, Spring

from app.docks.on_screen import behind_tab
from app.drawing.pixmap_room import ViewportRoom
from app.drawing.plot_axes import log_ticks, paint_whole, true_value_axes
from app.document.solve_service import dof_count, physics_key
from app.drawing.style import CURVE_WIDTH, current_style
from app.results.names import names
from app.results.source_text import order_frequencies, speed_text
from app.results.verdicts import all_clear, verdicts
from app.text.numbers import band_text, hz, number, signed


# solver.tuning loads scipy.optimize: imported on first use, after the window's first paint
def value_of(model, element_id, field=None):
    from solver.tuning import value_of as fn

    return fn(model, element_id, field)


#: The sweep plot keeps its frequency axis while the curves' top stays between this fraction of
#: the axis and the axis (edits move the curves, not the scale the eye reads them against; a new
#: axis also costs its plot a full redraw of ticks, labels and grid).
HOLD_FRACTION = 0.75


def held_top(current: float, wanted: float) -> float:
    """The top of the frequency axis: ``current`` while ``wanted`` lies in
    [HOLD_FRACTION x current, current], else ``wanted``."""
    if math.isfinite(current) and HOLD_FRACTION * current <= wanted <= current:
        return current
    return wanted


def differs_only_in(model, base, element_id: str, field: str) -> bool:
    """True when ``model`` equals ``base`` but for ``field`` of element ``element_id`` (the
    sweep of ``base`` over that field is then the sweep of ``model`` too): the same answer as
    comparing ``with_value(model, ...)`` to ``with_value(base, ...)``. Elements an edit did not
    touch are the same objects in both models and are compared by identity first (2,000
    elements: well under a millisecond, against several to build and validate a model).
    Where the nodes of a line or torsion model are drawn is no difference: it enters neither
    its matrices nor its sweep (:func:`app.document.solve_service.physics_key`)."""
    attr = "mass" if field == "inertia" else field
    if type(model) is not type(base):
        return False
    place = ("x", "y") if getattr(model, "kind", "planar") != "planar" else ()
    for fl in dataclasses.fields(model):
        a, b = getattr(model, fl.name), getattr(base, fl.name)
        if a is b:
            continue
        if not (isinstance(a, tuple) and isinstance(b, tuple)) or len(a) != len(b):
            if a != b:
                return False
            continue
        for x, y in zip(a, b):
            if x is y:
                continue
            if type(x) is type(y) and dataclasses.is_dataclass(x):
                skip = place
                if getattr(x, "id", None) == element_id == getattr(y, "id", None) and \
                        hasattr(x, attr):
                    skip = place + (attr,)
                if any(getattr(x, g.name) != getattr(y, g.name)
                       for g in dataclasses.fields(x) if g.name not in skip):
                    return False
            elif x != y:
                return False
    return True


def with_value(model, element_id, value, field=None):
    from solver.tuning import with_value as fn

    return fn(model, element_id, value, field)


def ranked(model, sens, mode):
    from solver.tuning import ranked as fn

    return fn(model, sens, mode)


def _fields():
    from solver.tuning import FIELDS

    return FIELDS

#: The slider spans this many decades either side of the value at selection time.
DECADES = 1.0
#: Slider positions across the whole span (an integer slider; 500 per decade here).
SLIDER_STEPS = 1000
#: Log-spaced points of the sweep plot.
SWEEP_POINTS = 40
#: Up to this many DOFs the panel solves each slider step itself (a dense eigensolve of a few
#: hundred DOFs takes milliseconds); above, the solve service's debounce and worker take over.
SYNC_DOF_LIMIT = 300
#: Mode curves per plot item in the sweep plot.
SWEEP_GROUP = 16
#: Sweeps kept for recent (model, element, range).
SWEEP_CACHE_SIZE = 6
#: Up to this many DOFs a sweep (SWEEP_POINTS solves) is computed at once when an element is
#: picked; above, always in the worker (40 solves of 300 DOFs stall the window for a second).
SWEEP_SYNC_DOF_LIMIT = 30
#: A sweep computed in the background starts this long after the edit that made it due (ms):
#: its thread sends models and takes results under the interpreter lock, and started at once
#: it slowed the edit's own solve and paint by 5-10 ms at 200 masses (bench/edit_bench.py); a
#: burst of edits starts one sweep, for the last.
SWEEP_DEFER_MS = 80
#: The sweep's curves keep a pixmap each once they have been drawn unchanged for this long (ms):
#: the pixmaps then serve every edit and slider step that moves only the cursor over them, while
#: new curves are first drawn directly (filling a pixmap of each costs twice the direct drawing,
#: ~8 against ~3.5 ms for 200 modes: an Undo that brings a kept sweep back would pay it).
CURVE_CACHE_MS = 150


class _Relay(QObject):
    """Carries a worker's sweep back to the UI thread (queued signal)."""

    done = Signal(int, object, str)


class _SweepJob(QRunnable):
    """``solver.sweep`` one value at a time, so a sweep overtaken by a newer edit stops after
    the solve it is in."""

    def __init__(self, generation, key, relay, latest):
        super().__init__()
        self.generation, self.key, self.relay, self.latest = generation, key, relay, latest
        self.setAutoDelete(True)

    def run(self):
        from app.results import offload

        base, eid, f, values = self.key
        # beyond a tiny model the solves go to the worker process: scipy's eigensolver keeps the
        # interpreter lock, and in this thread it would stall the window for each point
        # Never solve in this thread: the solver is mostly Python (assembly, checks) and holds
        # the interpreter lock, so even a 10-mass sweep (~50 ms) stalled the window's paint of
        # the edit that started it (bench/edit_bench.py). A small model's sweep goes to the
        # worker process in one call; a large one a value at a time, so a newer edit stops it
        # after the solve it is in.
        far = dof_count(base) > SWEEP_SYNC_DOF_LIMIT
        rows = []
        try:
            if not far:
                rows = list(offload.run(offload.sweep, base, eid, values, f, lane="sweep"))
            for v in values if far else ():
                if self.latest() != self.generation:
                    return
                rows.append(offload.run(offload.sweep_point, base, eid, v, f, lane="sweep"))
        except ModelError as exc:
            self.relay.done.emit(self.generation, None, str(exc))
            return
        except Exception as exc:   # a bug: say so in the panel, never kill the worker silently
            self.relay.done.emit(self.generation, None, f"internal error: {exc!r}")
            return
        width = max((len(r) for r in rows), default=0)
        out = np.full((len(rows), width), np.nan)
        for i, r in enumerate(rows):
            out[i, : len(r)] = r
        result = solver.SweepResult(element_id=eid, field=f, values=np.asarray(values, float),
                                    frequencies_hz=out)
        self.relay.done.emit(self.generation, (self.key, result), "")


def tunable_elements(model) -> list[tuple[str, str, str]]:
    """``[(element_id, field, text)]`` of every spring stiffness and positive mass of ``model``."""
    out = []
    for s in model.springs:
        out.append((s.id, "k", f"spring {s.label} · k"))
        if model.kind == "planar":
            out.append((s.id, "k_t", f"spring {s.label} · k_t"))
    for m in model.masses:
        if m.mass > 0:
            what = "disc" if model.kind == "torsion" else "mass"
            out.append((m.id, "mass", f"{what} {m.label}"))
    return out


def source_texts(model) -> list[str]:
    """One line per excitation source: speed with orders (and their Hz), or band."""
    out = []
    for e in model.excitations:
        if e.type == "speed":
            out.append(f"{e.label}: {speed_text(e)}, orders {order_frequencies(e)}")
        else:
            out.append(f"{e.label}: band {band_text(e.f_min_hz, e.f_max_hz)}")
    return out


def value_text(v: float) -> str:
    """A tick label for a value on a log axis, in the shared format: ``50``, ``0.2``, ``5e6``."""
    return number(v)


def default_element(analysis):
    """The (spring id, field) a model opens with in the Tune panel, from its analysis (no new
    solve): the spring that governs the first mode in conflict with a source, else the first
    elastic mode; None without springs."""
    model = analysis.model
    if not model.springs:
        return None
    res = analysis.modal
    conflicts = solver.margin_check(model, res).conflicts if model.excitations else ()
    elastic = [i + 1 for i in range(res.n_modes) if not res.is_zero[i]]
    mode = conflicts[0].mode if conflicts else (elastic[0] if elastic else None)
    if mode is None:
        return (model.springs[0].id, "k")
    springs = [r for r in ranked(model, analysis.sensitivity, mode) if r[1] in ("k", "k_t")]
    return (springs[0][0], springs[0][1]) if springs else (model.springs[0].id, "k")


def margin_summary(model) -> str:
    """One sentence on the margin check of ``model`` (empty when it has no sources)."""
    if not model.excitations:
        return ""
    try:
        result = solver.margin_check(model, solver.modes(model))
    except ModelError as exc:
        return f"Margin check not possible: {exc}"
    if result.ok:
        return f"Margin check: {all_clear(model, result)}."
    return "Margin check: " + "; ".join(v.sentence for v in verdicts(model, result)) + "."


def band_crossings(values, freqs, bands) -> list[tuple[float, float]]:
    """Points ``(value, Hz)`` where a mode curve crosses an edge of a widened band.

    values : (n,) SI, log-spaced.  freqs : (n, n_modes) Hz (NaN allowed).  bands : as
    :func:`solver.source_bands`. Interpolated linearly in log(value) between sweep points.
    """
    pts = []
    lv = np.log10(np.asarray(values, float))
    F = np.asarray(freqs, float)
    edges = sorted({b[4] for b in bands} | {b[5] for b in bands})
    for j in range(F.shape[1] if F.ndim == 2 else 0):
        f = F[:, j]
        for edge in edges:
            d = f - edge
            for i in range(len(d) - 1):
                if not (np.isfinite(d[i]) and np.isfinite(d[i + 1])):
                    continue
                if d[i] == 0 or d[i] * d[i + 1] < 0:
                    t = 0.0 if d[i] == 0 else d[i] / (d[i] - d[i + 1])
                    pts.append((float(10 ** (lv[i] + t * (lv[i + 1] - lv[i]))), float(edge)))
    return pts


class TunePanel(QWidget):
    """Slider, sweep plot, retune row and the list of excitation sources.

    ``document`` is the :class:`app.document.Document`; ``solve_service`` (optional) the
    :class:`app.solve_service.SolveService` whose results the panel shows and to which it hands
    the results it computes itself during a drag.

    Signals
    -------
    status_message(str)
    element_changed(str, str) : the picked element id and field.
    """

    status_message = Signal(str)
    element_changed = Signal(str, str)

    def __init__(self, document, solve_service=None, parent=None):
        super().__init__(parent)
        self.document = document
        self.solve_service = solve_service
        self._key: tuple[str, str] | None = None
        self._center = 1.0
        self._sweep = None
        self._sweep_base = None
        self._sweep_generation = 0
        self._sweep_pending = False
        self._sweep_cache: OrderedDict = OrderedDict()
        self._sweep_curves: list = []
        self._crossing_dots = None
        self._sweep_frame = None              # what the sweep plot's items were built for
        self._sources_key = None
        self._pool = QThreadPool(self)      # before the relay: destroyed first, see solve_service
        self._pool.setMaxThreadCount(1)
        self._relay = _Relay(self)
        self._relay.done.connect(self._on_sweep_done)
        self._due_sweep = None               # (generation, key) of a sweep about to start
        self._sweep_timer = QTimer(self)
        self._sweep_timer.setSingleShot(True)
        self._sweep_timer.setInterval(SWEEP_DEFER_MS)
        self._sweep_timer.timeout.connect(self._start_sweep)
        self._curve_cache_timer = QTimer(self)
        self._curve_cache_timer.setSingleShot(True)
        self._curve_cache_timer.setInterval(CURVE_CACHE_MS)
        self._curve_cache_timer.timeout.connect(self._cache_curves)
        self._drag_serial = 0
        self._proposed: float | None = None
        self._plot_factor = 1.0
        self._auto_pick = False
        self._combo_signature = None
        self._analysis = None
        self._applying = False
        self._target_set = False
        self._sweep_due = False       # the sweep is for an older model (panel behind a tab)
        self._cursor_due = False
        self._catching_up = False
        self.unit_system = "SI"
        self._build_ui()
        self.target_spin.valueChanged.connect(lambda _v: setattr(self, "_target_set", True))
        document.model_changed.connect(self._on_model_change)
        document.opened.connect(self._on_open)
        if solve_service is not None:
            solve_service.results_ready.connect(self.set_analysis)
        self._on_model_change(document.model)

    # -- UI -----------------------------------------------------------------------------------
    def _build_ui(self):
        st = current_style()
        self.element_combo = QComboBox()
        self.element_combo.setObjectName("tune_element")
        self.element_combo.setToolTip("The spring stiffness or mass the slider changes")
        # as wide as its longest entry (labels are the model's own and can be long): an entry
        # is never cut, and picking another does not change the panel's width
        self.element_combo.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
        self.element_combo.currentIndexChanged.connect(self._on_element_pick)
        self.slider = QSlider(Qt.Orientation.Horizontal)
        self.slider.setObjectName("tune_slider")
        self.slider.setRange(0, SLIDER_STEPS)
        self.slider.setSingleStep(SLIDER_STEPS // 200)
        self.slider.setPageStep(SLIDER_STEPS // 20)   # a tenth of a decade
        self.slider.setTickPosition(QSlider.TickPosition.TicksBelow)
        self.slider.setTickInterval(SLIDER_STEPS // 2)
        self.slider.setToolTip("Drag to change the value live (log scale, a decade either way of"
                               " the value when picked); the whole drag is one undo step")
        self.slider.valueChanged.connect(self._on_slider_value)
        self.slider.sliderPressed.connect(self._on_slider_pressed)
        self.slider.sliderReleased.connect(self._on_slider_released)
        self.low_label, self.high_label = QLabel(), QLabel()
        self.value_label = QLabel()
        self.value_label.setObjectName("tune_value")
        self.value_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)

        self.mode_spin = QSpinBox()
        self.mode_spin.setObjectName("tune_mode")
        self.mode_spin.setRange(1, 1)
        self.mode_spin.setPrefix("mode ")
        self.mode_spin.valueChanged.connect(lambda _v: self._target_from_mode())
        self.target_spin = QDoubleSpinBox()
        self.target_spin.setObjectName("tune_target")
        self.target_spin.setDecimals(4)
        self.target_spin.setRange(1e-4, 1e7)
        self.target_spin.setSuffix(" Hz")
        self.target_spin.setToolTip("The natural frequency the chosen mode should have")
        self.propose_button = QPushButton("Propose")
        self.propose_button.setObjectName("tune_propose")
        self.propose_button.setToolTip("Rank the springs and masses by how strongly they govern"
                                       " this mode and pick the strongest")
        self.retune_button = QPushButton("Retune")
        self.retune_button.setObjectName("tune_retune")
        self.retune_button.setToolTip("Find the value of the picked element that puts the mode"
                                      " on the target (previewed, not applied)")
        self.apply_button = QPushButton("Apply")
        self.apply_button.setObjectName("tune_apply")
        self.apply_button.setToolTip("Set the retuned value (one undo step)")
        self.apply_button.setEnabled(False)
        self.springs_only = QCheckBox("springs only")
        self.springs_only.setObjectName("tune_springs_only")
        self.springs_only.setChecked(True)
        self.springs_only.setToolTip("Propose among the springs only: mounts, brackets and joints"
                                     " are the usual design levers, the equipment's masses seldom"
                                     " are. Untick to rank the masses too.")
        self.propose_button.clicked.connect(self.propose)
        self.retune_button.clicked.connect(self.compute_retune)
        self.apply_button.clicked.connect(self.apply_retune)
        self.message = QLabel()
        self.message.setObjectName("tune_message")
        self.message.setWordWrap(True)
        self.message.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.ranking_label = QLabel()
        self.ranking_label.setObjectName("tune_ranking")
        self.ranking_label.setWordWrap(True)
        self.ranking_label.setStyleSheet(f"color: {st.ink_soft_hex};")
        self.sources_list = QListWidget()
        self.sources_list.setObjectName("tune_sources")
        self.sources_list.setToolTip("Excitation sources of the model; the margin is set with the"
                                     " model's properties (nothing selected on the canvas)")
        self.sources_list.setMaximumHeight(90)
        self.sources_list.setWordWrap(True)          # a source with many orders wraps, not cut
        self.sources_title = QLabel()

        left = QWidget()
        grid = QGridLayout(left)
        grid.setContentsMargins(4, 4, 4, 4)
        grid.addWidget(QLabel("Element"), 0, 0)
        grid.addWidget(self.element_combo, 0, 1, 1, 3)
        grid.addWidget(self.slider, 1, 0, 1, 4)
        grid.addWidget(self.low_label, 2, 0)
        grid.addWidget(self.high_label, 2, 3, Qt.AlignmentFlag.AlignRight)
        grid.addWidget(self.value_label, 3, 0, 1, 4)
        row = QHBoxLayout()
        row.addWidget(self.mode_spin)
        row.addWidget(QLabel("to"))
        row.addWidget(self.target_spin, 1)
        grid.addLayout(row, 4, 0, 1, 4)
        row2 = QHBoxLayout()
        row2.addWidget(self.springs_only)
        row2.addWidget(self.propose_button)
        row2.addWidget(self.retune_button)
        row2.addWidget(self.apply_button)
        grid.addLayout(row2, 5, 0, 1, 4)
        grid.addWidget(self.message, 6, 0, 1, 4)
        grid.addWidget(self.ranking_label, 7, 0, 1, 4)
        grid.addWidget(self.sources_title, 8, 0, 1, 4)
        grid.addWidget(self.sources_list, 9, 0, 1, 4)
        grid.setRowStretch(10, 1)
        grid.setColumnStretch(1, 1)
        left.setMinimumWidth(260)

        pg.setConfigOptions(antialias=True)
        self.plot = paint_whole(pg.PlotWidget(axisItems=true_value_axes()))
        self.plot.setObjectName("tune_plot")
        self.plot.setBackground(st.background)
        pi = self.plot.getPlotItem()
        pi.setLogMode(x=True, y=False)
        pi.showGrid(x=True, y=True, alpha=0.25)
        pi.setLabel("left", "natural frequency (Hz)")   # no SI prefix switching
        pi.setMenuEnabled(False)
        pi.getAxis("bottom").setStyle(maxTickLevel=1)   # ticks set per sweep (log_ticks)
        # the sweep's curves keep a pixmap each (_draw_sweep): room for them in Qt's cache
        self._pixmap_room = ViewportRoom("tune sweep", self.plot.viewport(),
                                         lambda: len(self._sweep_curves))
        for ax in ("left", "bottom"):
            pi.getAxis(ax).setTextPen(st.ink)
            pi.getAxis(ax).setPen(st.ink_soft)
        self.plot.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Expanding)
        self.plot.setMinimumSize(300, 180)

        split = QSplitter(Qt.Orientation.Horizontal)
        scroll = QScrollArea()      # a long message or ranking scrolls instead of being cut off
        scroll.setWidget(left)
        scroll.setWidgetResizable(True)
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setFrameShape(QScrollArea.Shape.NoFrame)
        scroll.setMinimumWidth(280)
        self._controls_scroll = scroll
        split.addWidget(scroll)
        split.addWidget(self.plot)
        split.setStretchFactor(1, 1)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.addWidget(split)
        self._cursor = None
        self._cursor_dots = None
        self._cursor_key = None        # what the cursor dots show (_update_cursor)
        self._proposal_line = None

    # -- display units ------------------------------------------------------------------------
    def set_unit_system(self, system: str) -> None:
        """Show values in "SI" or "US" units (the model and the slider stay SI)."""
        self.unit_system = system
        model = self.document.model
        if self._key is not None:
            self._recentre(model, value_of(model, *self._key))
            self._place_slider(value_of(model, *self._key))
        self._update_value_label(model)

    def _unit_kind(self, model, eid, f) -> str:
        if f == "mass":
            return "inertia" if model.kind == "torsion" else "mass"
        if model.kind == "torsion":
            return "torsional stiffness"
        return "stiffness"

    def _factor(self, model, eid, f) -> float:
        """SI units per display unit of the picked element's field."""
        from app.text.units import KINDS

        return KINDS[self._unit_kind(model, eid, f)].factor(self.unit_system)

    def _unit(self, model, eid, f) -> str:
        from app.text.units import unit_label

        return unit_label(self._unit_kind(model, eid, f), self.unit_system)

    def _show(self, model, eid, f, v: float, digits: int | None = None) -> str:
        from app.text.units import show

        return show(v, self._unit_kind(model, eid, f), self.unit_system, digits)

    # -- state --------------------------------------------------------------------------------
    @property
    def element(self) -> tuple[str, str] | None:
        """``(element_id, field)`` the slider changes, or None."""
        return self._key

    @property
    def sweep_result(self):
        return self._sweep

    @property
    def span(self) -> tuple[float, float]:
        """Slider range in SI units."""
        return self._center * 10 ** -DECADES, self._center * 10 ** DECADES

    def value_at(self, position: int) -> float:
        """SI value of a slider position (log scale)."""
        u = (position - SLIDER_STEPS / 2) / (SLIDER_STEPS / 2)
        return self._center * 10 ** (DECADES * u)

    def position_of(self, value: float) -> int:
        u = math.log10(value / self._center) / DECADES
        return int(round(SLIDER_STEPS / 2 * (1 + u)))

    def select_element(self, element_id: str, field: str | None = None) -> bool:
        """Pick an element (and field) in the combo; False when it is not tunable."""
        for i in range(self.element_combo.count()):
            eid, f = self.element_combo.itemData(i)
            if eid == element_id and (field is None or f == field):
                self.element_combo.setCurrentIndex(i)
                self._on_element_pick(i)
                return True
        return False

    # -- model -> panel -----------------------------------------------------------------------
    def _on_open(self, model):
        """Another model (New, Open, Revert): nothing picked or typed for the last one stays."""
        self._key = None
        self._combo_signature = None
        self._target_set = False
        self._on_model_change(model)

    def _clear_messages(self):
        # a verdict, a ranking or a proposal is true of the model it was made for only
        self.message.clear()
        self.message.setStyleSheet("")
        self.ranking_label.clear()
        self._proposed = None
        self.apply_button.setEnabled(False)
        self._draw_proposal()

    def _fit_controls_width(self):
        """The controls' column at least as wide as its rows need (the element list's longest
        entry): the scroll area around them scrolls only up and down, so it must be told."""
        scroll = self._controls_scroll
        # a combo box's minimum size ignores its entries, so the layout could squeeze it
        self.element_combo.setMinimumWidth(self.element_combo.sizeHint().width())
        need = scroll.widget().minimumSizeHint().width() + 2 * scroll.frameWidth() + \
            scroll.verticalScrollBar().sizeHint().width()
        scroll.setMinimumWidth(max(280, need))

    def showEvent(self, event):  # noqa: N802
        super().showEvent(event)
        self.catch_up()

    def catch_up(self) -> None:
        """Sweep and cursor of the model changed while the panel was behind another tab (the
        sweep is SWEEP_POINTS solves: a hidden panel keeps its values and choices current but
        runs none, and draws nothing)."""
        model = self.document.model
        self._catching_up = True        # the tab may not be on screen yet when this is called
        try:
            if self._sweep_due and self._key is not None:
                self._sweep_due = False
                self._recentre(model, self._center, background=True)
            if self._cursor_due:
                self._update_cursor(model)
        finally:
            self._catching_up = False

    def _on_model_change(self, model):
        if not self._applying:
            self._clear_messages()
        items = tunable_elements(model)
        signature = tuple(items)
        if signature != self._combo_signature:
            self._combo_signature = signature
            with QSignalBlocker(self.element_combo):
                self.element_combo.clear()
                for eid, f, text in items:
                    self.element_combo.addItem(text, (eid, f))
                keys = [(eid, f) for eid, f, _t in items]
                idx = keys.index(tuple(self._key)) if self._key is not None and \
                    tuple(self._key) in keys else -1
                if idx < 0 and items:
                    idx = 0
                    self._auto_pick = True   # the governing spring, once the results arrive
                self.element_combo.setCurrentIndex(idx)
            self._fit_controls_width()
            key = self.element_combo.currentData() if idx >= 0 else None
            if key != self._key:
                self._set_key(key, model)
        self._refresh_sources(model)
        if self._key is None:
            self._update_value_label(model)
            return
        v = value_of(model, *self._key)
        lo, hi = self.span
        if not (lo * (1 - 1e-12) <= v <= hi * (1 + 1e-12)) or v <= 0:
            self._recentre(model, v, background=True)
        elif self._sweep_base is None or \
                not differs_only_in(model, self._sweep_base, *self._key):
            # another element changed: the sweep is stale
            self._recentre(model, self._center, background=True)
        self._place_slider(v)
        self._update_value_label(model)
        self._update_cursor(model)

    def _set_key(self, key, model):
        self._key = tuple(key) if key else None
        self._proposed = None
        self.apply_button.setEnabled(False)
        self._new_gesture()
        if self._key is not None:
            v = value_of(model, *self._key)
            self._recentre(model, v)
            self.element_changed.emit(*self._key)
        else:
            self._sweep = None
            self._draw_sweep(model)

    def _on_element_pick(self, index):
        self._auto_pick = False          # the user's (or a proposal's) choice stands
        key = self.element_combo.itemData(index) if index >= 0 else None
        model = self.document.model
        if key is None:
            return
        if tuple(key) != self._key:
            self._set_key(key, model)
        self._place_slider(value_of(model, *self._key))
        self._update_value_label(model)
        self._update_cursor(model)

    def _recentre(self, model, value: float, background: bool = False):
        """A new slider range around ``value`` and a new sweep (with ``background``, computed
        in the worker unless kept from before; the old curves are dimmed meanwhile)."""
        eid, f = self._key
        if value <= 0:
            value = 1.0
        self._center = float(value)
        self._sweep_base = with_value(model, eid, self._center, f)
        lo, hi = self.span
        values = np.logspace(math.log10(lo), math.log10(hi), SWEEP_POINTS)
        self.low_label.setText(self._show(model, eid, f, lo))
        self.high_label.setText(self._show(model, eid, f, hi))
        self._sweep_generation += 1       # a sweep still running is for an older model
        self._sweep_pending = False
        key = (self._sweep_base, eid, f, tuple(float(v) for v in values))
        found = self._cached_sweep(key)
        if background and not self._catching_up and behind_tab(self):
            self._sweep_due = True         # swept and drawn when the panel is shown (catch_up)
            return
        self._sweep_due = False
        if found is None and (background or dof_count(model) > SWEEP_SYNC_DOF_LIMIT):
            self._sweep_pending = True
            self._dim_sweep(model)
            self._due_sweep = (self._sweep_generation, key)
            self._sweep_timer.start()
            return
        if found is None:
            try:
                found = solver.sweep(self._sweep_base, eid, values, field=f)
                self._remember_sweep(key, found)
            except ModelError as exc:
                found = None
                self.message.setText(f"No sweep: {exc}")
        self._sweep = found
        self._draw_sweep(model)

    @property
    def sweep_pending(self) -> bool:
        """True while the sweep plot shows curves of an older model (a new one is computed)."""
        return self._sweep_pending

    def wait_sweep(self, msecs: int = 60000) -> bool:
        """Block until no sweep is being computed (tests, benchmarks). True when idle."""
        from PySide6.QtCore import QCoreApplication, QElapsedTimer

        clock = QElapsedTimer()
        clock.start()
        while self._sweep_pending and clock.elapsed() < msecs:
            self._pool.waitForDone(20)
            QCoreApplication.processEvents()
        return not self._sweep_pending

    def _start_sweep(self) -> None:
        """Start the background sweep made due last (:data:`SWEEP_DEFER_MS`), unless a newer
        one has overtaken it."""
        due, self._due_sweep = self._due_sweep, None
        if due is None or due[0] != self._sweep_generation:
            return
        self._pool.start(_SweepJob(due[0], due[1], self._relay, lambda: self._sweep_generation))

    def shutdown(self) -> None:
        """Stop the sweep worker (the window is closing)."""
        self._sweep_timer.stop()
        self._due_sweep = None
        self._sweep_generation += 1
        self._pool.clear()
        self._pool.waitForDone(5000)

    def _on_sweep_done(self, generation: int, done, error: str):
        if done is not None:
            self._remember_sweep(*done)
        if generation != self._sweep_generation:
            return
        self._sweep_pending = False
        model = self.document.model
        if done is None:
            self._sweep = None
            self.message.setText(f"No sweep: {error}")
        else:
            self._sweep = done[1]
        self._draw_sweep(model)

    def _cache_curves(self) -> None:
        """The sweep's curves, drawn unchanged for CURVE_CACHE_MS, keep a pixmap each: an edit
        or a slider step then moves the cursor and its dots over unchanged (or dimmed) curves,
        which are a copy, not hundreds of antialiased lines drawn again (200 modes: a plot
        paint 3.5 -> 1.4 ms). The pixmaps are filled now, while the window is idle: Qt fills
        them at the next paint, which was the first paint of the next edit (~5 ms more)."""
        for item in self._sweep_curves:
            item.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
            item.update()

    @property
    def curves_cached(self) -> bool:
        """True when every sweep curve keeps a pixmap (tests)."""
        return bool(self._sweep_curves) and all(
            item.cacheMode() == QGraphicsItem.CacheMode.DeviceCoordinateCache
            for item in self._sweep_curves)

    def _cached_sweep(self, key):
        try:
            found = self._sweep_cache.get(key)
        except TypeError:
            return None
        if found is not None:
            self._sweep_cache.move_to_end(key)
        return found

    def _remember_sweep(self, key, sweep) -> None:
        try:
            self._sweep_cache[key] = sweep
        except TypeError:
            return
        while len(self._sweep_cache) > SWEEP_CACHE_SIZE:
            self._sweep_cache.popitem(last=False)

    def _dim_sweep(self, model):
        """The shown sweep is for an older model: dimmed, and the title says it is updating."""
        for item in self._sweep_curves:
            item.setOpacity(0.3)
        if self._key is not None and self._sweep is not None:
            eid, f = self._key
            label = model.element(eid).label if eid in model.ids() else eid
            self._set_title(f"every mode against {label} · {f}: updating for the edited model…")

    def _place_slider(self, value: float):
        if value <= 0:
            return
        with QSignalBlocker(self.slider):
            self.slider.setValue(max(0, min(SLIDER_STEPS, self.position_of(value))))

    def _update_value_label(self, model):
        if self._key is None:
            self.value_label.setText("no spring or mass to tune")
            return
        eid, f = self._key
        v = value_of(model, eid, f)
        name = _fields()[(Spring if f in ("k", "k_t") else Mass, f)][0]
        self.value_label.setText(f"{name} = {self._show(model, eid, f, v)}")

    def _refresh_sources(self, model):
        texts = source_texts(model)
        key = (tuple(texts), model.margin_percent)
        if key == self._sources_key:
            return
        self._sources_key = key
        self.sources_list.clear()
        for t in texts:
            self.sources_list.addItem(t)
        if texts:
            self.sources_title.setText(f"Excitation sources (margin {model.margin_percent:g} %)")
        else:
            self.sources_title.setText("No excitation sources in this model")
        self.sources_list.setVisible(bool(texts))

    # -- results ------------------------------------------------------------------------------
    def set_analysis(self, analysis):
        """New results of the document's model: moves the cursor dots and the mode choice."""
        self._analysis = analysis
        if self._auto_pick and analysis is not None and analysis.model is self.document.model:
            self._auto_pick = False
            pick = default_element(analysis)
            if pick is not None and pick != self._key:
                self.select_element(*pick)
        n = analysis.modal.n_modes if analysis is not None else 0
        with QSignalBlocker(self.mode_spin):
            self.mode_spin.setRange(1, max(1, n))
        if n and not self._target_set:
            # a starting target the user can edit: the chosen mode's frequency now
            with QSignalBlocker(self.target_spin):
                self.target_spin.setValue(float(analysis.modal.frequencies_hz[self.mode_spin.value() - 1]))
        self._update_cursor(self.document.model)

    def set_mode(self, mode: int):
        """The mode the retune row works on (follows the selected mode in the window); the
        target starts again at that mode's frequency, a target typed for another mode being
        meaningless for this one."""
        with QSignalBlocker(self.mode_spin):
            self.mode_spin.setValue(int(mode))
        self._target_from_mode()

    def _target_from_mode(self):
        a = self._analysis
        n = self.mode_spin.value()
        if a is None or not 1 <= n <= a.modal.n_modes:
            return
        with QSignalBlocker(self.target_spin):
            self.target_spin.setValue(float(a.modal.frequencies_hz[n - 1]))
        self._target_set = False
        self._proposed = None
        self.apply_button.setEnabled(False)
        self._draw_proposal()

    # -- slider -------------------------------------------------------------------------------
    def _new_gesture(self):
        """Start a new undo entry for the next slider change (press, release, new element)."""
        self._drag_serial += 1

    def _on_slider_pressed(self):
        self._new_gesture()
        if self.solve_service is not None:
            self.solve_service.set_live(True)

    def _on_slider_released(self):
        self._new_gesture()
        if self.solve_service is not None:
            self.solve_service.set_live(False)

    def _on_slider_value(self, position: int):
        if self._key is None:
            return
        self.set_value(self.value_at(position), merge=True)

    def set_value(self, value: float, merge: bool = True, text: str | None = None) -> bool:
        """Push ``value`` (SI) of the picked element through the document.

        With ``merge`` the edit merges with the previous one of the same gesture (a drag is one
        undo entry). Small models are solved here at once so every view follows the change.
        """
        eid, f = self._key
        model = self.document.model
        try:
            new = with_value(model, eid, value, f)
        except ModelError as exc:
            self.message.setText(str(exc))
            return False
        label = model.element(eid).label
        text = text or f"Tune {f} of {label}"
        key = ("tune", eid, f, self._drag_serial) if merge else None
        changed = self.document.apply(new, text, merge_key=key)
        if changed:
            self.solve_small(self.document.model)
        return changed

    def solve_small(self, model) -> bool:
        """Solve ``model`` here when it is small and hand the results to the solve service."""
        if self.solve_service is None or dof_count(model) > SYNC_DOF_LIMIT:
            return False
        try:
            analysis = self.solve_service.cached(model) if hasattr(self.solve_service, "cached") \
                else None
            analysis = analysis or solver.analyse(model)
        except ModelError:
            return False   # the service's own solve will report why
        return self.solve_service.offer(model, analysis)

    # -- retune -------------------------------------------------------------------------------
    def propose(self) -> list:
        """Rank elements for the chosen mode (top few shown) and pick the strongest one."""
        model = self.document.model
        mode = self.mode_spin.value()
        try:
            ranked = solver.rank_elements(model, mode)
        except ModelError as exc:
            self.message.setText(str(exc))
            return []
        if self.springs_only.isChecked():
            ranked = [r for r in ranked if r[1] in ("k", "k_t")]
        if not ranked:
            self.message.setText(f"Mode {mode} has no sensitivity to any element (a zero-frequency"
                                 " mode?)")
            return []
        lines = []
        for eid, f, s in ranked[:5]:
            lines.append(f"{model.element(eid).label} · {f}: {signed(s, 3)}")
        self.ranking_label.setText(f"Governing mode {mode} ((p/f) df/dp, % per %): "
                                   + "; ".join(lines))
        eid, f, _s = ranked[0]
        self.select_element(eid, f)
        self.message.setText(f"Picked {model.element(eid).label} · {f}, the strongest for mode"
                             f" {mode}. Press Retune to find its value.")
        return ranked

    def compute_retune(self) -> float | None:
        """Solve for the value that puts the chosen mode on the target; preview it."""
        if self._key is None:
            return None
        model = self.document.model
        eid, f = self._key
        mode, target = self.mode_spin.value(), self.target_spin.value()
        try:
            value = solver.retune(model, eid, mode, target, field=f)
        except ModelError as exc:
            self._proposed = None
            self.apply_button.setEnabled(False)
            self.message.setStyleSheet(f"color: {current_style().error_hex};")
            self.message.setText(str(exc))
            self._draw_proposal()
            return None
        self._proposed = value
        self.apply_button.setEnabled(True)
        self.message.setStyleSheet("")
        now = value_of(model, eid, f)
        self.message.setText(f"{model.element(eid).label} · {f} ="
                             f" {self._show(model, eid, f, value)} puts mode {mode} on"
                             f" {hz(target)}"
                             f" ({signed((value / now - 1) * 100, 3)} % from now). Apply to set"
                             " it.")
        self._draw_proposal()
        return value

    def apply_retune(self) -> bool:
        """Set the previewed retune value: one undo entry."""
        if self._proposed is None or self._key is None:
            return False
        value = self._proposed
        text = self.message.text().replace(" Apply to set it.", " Applied.")
        self._new_gesture()
        self._applying = True      # this edit's message is written below, not cleared
        try:
            changed = self.set_value(value, merge=False,
                                     text=f"Retune {self._key[1]} of"
                                          f" {self.document.model.element(self._key[0]).label}")
        finally:
            self._applying = False
        self._proposed = None
        self.apply_button.setEnabled(False)
        self._draw_proposal()
        if changed:
            text += " " + margin_summary(self.document.model)
            self.message.setText(text)
            self.status_message.emit(text)
        return changed

    # -- plot ---------------------------------------------------------------------------------
    def _draw_sweep(self, model):
        st = current_style()
        pi = self.plot.getPlotItem()
        if self._sweep is None or self._key is None:
            pi.clear()
            self._cursor = self._cursor_dots = self._proposal_line = None
            self._sweep_curves = []
            self._sweep_frame = None
            self._set_title("")
            pi.setLabel("bottom", "")
            return
        eid, f = self._key
        # the plot's x is in display units; the sweep and the crossings stay SI
        self._plot_factor = self._factor(model, eid, f)
        values, F = self._sweep.values / self._plot_factor, self._sweep.frequencies_hz
        finite = F[np.isfinite(F)]
        top = float(np.nanmax(finite)) if finite.size else 1.0
        if not top > 0:
            top = 1.0          # only zero-frequency modes: keep the axis at 0 and up
        bands = source_bands(model)
        labels = names(model)
        frame = (eid, f, model.element(eid).label, self._unit(model, eid, f), self._plot_factor,
                 tuple(bands), tuple(labels.items()), st.name, float(values[0]),
                 float(values[-1]))
        if frame != self._sweep_frame or self._cursor is None:
            # a new element, range, unit, source or palette: the items are built again; an
            # edit elsewhere in the model only moves the curves (new data, same items)
            self._sweep_frame = frame
            self._build_sweep_items(model, st, values, bands, labels)
        # the modes in groups, each group one item of curves joined and separated by NaN: an
        # item per mode costs its own overhead (1000 modes), a single path of every mode is
        # slow to fill where the curves crowd
        groups = [F[:, j:j + SWEEP_GROUP] for j in range(0, F.shape[1], SWEEP_GROUP)]
        if len(groups) != len(self._sweep_curves):
            pi = self.plot.getPlotItem()
            for item in self._sweep_curves:
                pi.removeItem(item)
            pen = pg.mkPen(st.ink, width=CURVE_WIDTH)
            # bare curves, not PlotDataItems: those cost ~3x as much per setData (an Undo that
            # brings a kept sweep back sets every group); the plot's x is log10 of the values
            # (the axis is in log mode), as a PlotDataItem would map it
            self._sweep_curves = [pg.PlotCurveItem(pen=pen, connect="finite") for _g in groups]
            for item in self._sweep_curves:
                item.setZValue(-1)      # over bands and their labels, under markers and cursor
                pi.addItem(item)
            self._pixmap_room.update()
        log_x = np.append(np.log10(values), np.nan)
        for item, G in zip(self._sweep_curves, groups):
            xs = np.tile(log_x, G.shape[1])
            ys = np.vstack([G, np.full((1, G.shape[1]), np.nan)]).T.ravel()
            item.setCacheMode(QGraphicsItem.CacheMode.NoCache)    # see CURVE_CACHE_MS
            item.setData(xs, ys)
            item.setOpacity(1.0)
        self._curve_cache_timer.start()
        pts = band_crossings(self._sweep.values, F, bands)
        if pts:
            xs, ys = zip(*pts)
            self._crossing_dots.setData([x / self._plot_factor for x in xs], list(ys))
        else:
            self._crossing_dots.setData([], [])
        self.crossings = pts
        band_top = max([b[5] for b in bands if b[5] < 3 * top] + [0.0])
        pi.setXRange(math.log10(values[0]), math.log10(values[-1]), padding=0.02)
        pi.setYRange(0, held_top(pi.viewRange()[1][1], max(top, band_top) * 1.05), padding=0)
        self._set_title(f"every mode against {model.element(eid).label} · {f}")
        self._update_cursor(model)
        self._draw_proposal()

    def _set_title(self, text: str):
        if text != getattr(self, "_sweep_title", None):
            self._sweep_title = text
            self.plot.getPlotItem().setTitle(text, color=current_style().ink_soft_hex,
                                             size="9pt")

    def _build_sweep_items(self, model, st, values, bands, labels):
        """The sweep plot's items for the picked element: bands, curves, crossings, cursor."""
        pi = self.plot.getPlotItem()
        pi.clear()
        eid, f = self._key
        pi.setLabel("bottom", f"{model.element(eid).label} · {f} ({self._unit(model, eid, f)})")
        lx0 = math.log10(values[0])
        warn = st.warning
        for sid, order, lo, hi, lo_w, hi_w in bands:
            c = pg.mkColor(warn)
            c.setAlpha(45)
            region = pg.LinearRegionItem(values=(lo_w, hi_w), orientation="horizontal",
                                         movable=False, brush=pg.mkBrush(c),
                                         pen=pg.mkPen(warn, width=0.5))
            region.setZValue(-10)
            pi.addItem(region)
            if hi > lo:
                c2 = pg.mkColor(warn)
                c2.setAlpha(90)
                core = pg.LinearRegionItem(values=(lo, hi), orientation="horizontal",
                                           movable=False, brush=pg.mkBrush(c2),
                                           pen=pg.mkPen(None))
                core.setZValue(-9)
                pi.addItem(core)
            else:
                line = pg.InfiniteLine(pos=lo, angle=0, pen=pg.mkPen(warn, width=1,
                                                                 style=Qt.PenStyle.DashLine))
                line.setZValue(-2)      # under the mode curves (z -1), over the bands
                pi.addItem(line)
        # one label per run of overlapping bands (close orders of one speed, a band over an
        # order line): labels at the tops of overlapping bands were drawn over each other
        for top, words in _band_label_groups(bands, labels):
            text = pg.TextItem(words, color=warn, anchor=(0, 1))
            text.setPos(lx0, top)
            text.setZValue(-2)
            pi.addItem(text)
        self._sweep_curves = []           # filled by _draw_sweep, a group of modes each
        self._crossing_dots = pi.plot([], [], pen=None, symbol="o", symbolSize=7,
                                      symbolBrush=pg.mkBrush(st.error),
                                      symbolPen=pg.mkPen(st.background))
        self._cursor = pg.InfiniteLine(angle=90, pen=pg.mkPen(st.accent, width=2))
        pi.addItem(self._cursor)
        self._cursor_key = None
        self._cursor_dots = pi.plot([], [], pen=None, symbol="o", symbolSize=8,
                                    symbolBrush=pg.mkBrush(st.accent),
                                    symbolPen=pg.mkPen(st.background))
        self._proposal_line = pg.InfiniteLine(angle=90, pen=pg.mkPen(st.accent, width=1.2,
                                                                     style=Qt.PenStyle.DashLine))
        self._proposal_line.hide()
        pi.addItem(self._proposal_line)
        # a decade either way: label 1 and 3 of each decade (evenly spread on a log axis; a
        # value like "300e3" is wide, 1, 2, 5 would overlap here)
        pi.getAxis("bottom").setTicks(log_ticks(values[0], values[-1], labelled=(1, 3),
                                                fmt=value_text))

    def _update_cursor(self, model):
        if self._cursor is None or self._key is None:
            return
        if not self._catching_up and behind_tab(self):
            self._cursor_due = True
            return
        self._cursor_due = False
        v = value_of(model, *self._key)
        if v <= 0:
            return
        self._cursor.setPos(math.log10(v / self._plot_factor))
        a = self._analysis
        # results of this model, or of it as it was before it was moved on the page (a line
        # or torsion model: the same frequencies)
        current = a is not None and (a.model is model or (
            physics_key(model) is not None and physics_key(a.model) == physics_key(model)))
        st = current_style()
        key = (v, self._plot_factor, a.modal.eigenvalues if current else None, st.name,
               model.excitations if current else None, model.margin_percent)
        if self._cursor_key is not None and len(key) == len(self._cursor_key) and all(
                x is y or not (isinstance(x, np.ndarray) or isinstance(y, np.ndarray))
                and x == y
                for x, y in zip(key, self._cursor_key)):
            return       # the dots are as they would be drawn
        self._cursor_key = key
        if current:
            fr = np.asarray(a.modal.frequencies_hz, float)
            bad = {c.mode for c in solver.margin_check(model, a.modal).conflicts} \
                if model.excitations else set()
            # a mode inside a widened band is marked in the error colour at the cursor (one
            # brush for all when none is: a brush per dot costs pyqtgraph a symbol each)
            brushes = ([pg.mkBrush(st.error if i + 1 in bad else st.accent)
                        for i in range(len(fr))] if bad else pg.mkBrush(st.accent))
            self._cursor_dots.setData(np.full(fr.shape, v / self._plot_factor), fr,
                                      symbolBrush=brushes)
            self._cursor_dots.show()
        else:
            # no results of this model yet (they follow the edit): hidden, not emptied, which
            # costs pyqtgraph as much as setting them
            self._cursor_dots.hide()

    def _draw_proposal(self):
        if self._proposal_line is None:
            return
        if self._proposed is None or self._proposed <= 0:
            self._proposal_line.hide()
            return
        self._proposal_line.setPos(math.log10(self._proposed / self._plot_factor))
        self._proposal_line.show()


__all__ = ["TunePanel", "tunable_elements", "band_crossings", "source_texts", "DECADES",
           "SLIDER_STEPS", "SWEEP_POINTS", "SYNC_DOF_LIMIT"]


def _band_label_groups(bands, labels) -> list[tuple[float, str]]:
    """``[(top_hz, text)]``: the bands (``solver.source_bands`` rows) whose widened intervals
    overlap gathered into one label at the group's top, each source named once with its
    orders (``"Motor speed ×1.875, ×2"``)."""
    rows = sorted(bands, key=lambda b: b[4])
    groups: list[list] = []
    for row in rows:
        if groups and row[4] <= max(r[5] for r in groups[-1]):
            groups[-1].append(row)
        else:
            groups.append([row])
    out = []
    for group in groups:
        parts: dict[str, list] = {}
        for sid, order, *_ in group:
            parts.setdefault(sid, [])
            if order is not None:
                parts[sid].append(order)
        words = "; ".join(labels.get(sid, sid) + (" " + ", ".join(f"×{o:g}" for o in sorted(set(
            orders))) if orders else "") for sid, orders in parts.items())
        out.append((max(r[5] for r in group), words))
    return out

