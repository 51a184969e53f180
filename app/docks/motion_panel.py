"""Motion: a chosen mode animated, or the free response to the initial conditions played back.

Two views in one panel:

- **Mode shape**: the layout deformed by one mode, ``u(t) = phi cos(2 pi f_shown t)``, at an
  adjustable amplitude. The mode is shown at a *visual* speed (cycles per second on screen) so
  that a 400 Hz mode is as watchable as a 2 Hz one; its true frequency is printed beside it.
- **Initial conditions**: the exact free response from the model's initial conditions
  (``solver.free_response``, modal superposition), played in real time times a time scale, with
  traces of chosen masses against time.

Dragging a mass and letting go asks for new initial conditions: ``initial_conditions_requested``
carries ``{mass_id: {direction: displacement}}`` (m, rad); the main window turns it into an undo
command on the document, and the new analysis comes back through :meth:`MotionPanel.set_analysis`.

The timer only moves precomputed geometry: mode shapes are read once per analysis and the free
response is sampled once per time window (displacement and velocity), then each frame is a cubic
Hermite interpolation between samples, accurate to about ``(w dt)^4 / 384`` relative (40 samples
per period of the fastest mode: ~2e-6).
"""

from __future__ import annotations

import math

import numpy as np
from PySide6.QtCore import QElapsedTimer, QPointF, QRectF, Qt, QTimer, Signal
from PySide6.QtGui import QFont, QFontMetrics, QIcon, QPainter, QPen, QPixmap, QTextLayout
from PySide6.QtWidgets import (QCheckBox, QComboBox, QDoubleSpinBox, QGraphicsItem, QHBoxLayout, QLabel,
                               QListWidget, QListWidgetItem, QPushButton, QSizePolicy, QSlider,
                               QSplitter, QVBoxLayout, QWidget)

import pyqtgraph as pg

from app.drawing.plot_axes import true_value_axes
from app.drawing.sketch import (SketchLayout, can_paint_fast, fit_scale, paint_deformed_layer,
                                paint_labels_layer, paint_moving_layer, paint_sketch,
                                paint_static_layer)
from app.drawing.style import CURVE_WIDTH, current_style
from app.text.numbers import hz

#: One press of Step advances the animation by 1/FPS s (of animation time).
FPS = 30
#: Playing redraws at the display's refresh rate, this when the screen does not say.
DISPLAY_HZ = 60.0
#: Time scales offered (model seconds per wall-clock second).
TIME_SCALES = (1.0, 0.5, 0.2, 0.1, 0.05, 0.02, 0.01, 0.005, 0.002, 0.001)
#: Samples per period of the fastest mode in the free-response table.
SAMPLES_PER_PERIOD = 40
#: Cap on stored samples x DOFs, to keep big models' tables small (doubles).
MAX_TABLE = 4_000_000
#: Displacement used to size the drawing when the model has no initial conditions (m, rad).
_DEFAULT_IC = {"x": 0.01, "y": 0.01, "theta": 0.05}

#: Beyond this many masses the motion view leaves the labels off; below, labels that find no
#: clear spot are left off one by one (app.drawing.labels).
LABEL_LIMIT = 200

MODE_VIEW = "mode"
FREE_VIEW = "free"


class _ResponseTable:
    """Free response sampled on [t0, t0 + duration] with displacement and velocity, for Hermite
    interpolation at any time inside."""

    def __init__(self, model, modal, t0: float, duration: float, f_max_hz: float):
        from solver import free_response  # local: keeps app import light when unused
        n_all = max(1, len(modal.all_dofs))
        n = int(math.ceil(duration * max(f_max_hz, 1.0 / duration) * SAMPLES_PER_PERIOD)) + 1
        n = max(200, min(n, 20000, MAX_TABLE // n_all))
        self.times = np.linspace(t0, t0 + duration, n)
        resp = free_response(model, self.times, result=modal)
        self.dofs = list(resp.dofs)
        self.x = resp.displacement
        self.v = resp.velocity
        self.t0 = t0
        self.t1 = t0 + duration
        self.dt = self.times[1] - self.times[0]
        self.warnings = resp.warnings

    def contains(self, t: float) -> bool:
        return self.t0 - 1e-12 <= t <= self.t1 + 1e-12

    def at(self, t: float) -> np.ndarray:
        """Displacement on ``dofs`` at time t (cubic Hermite from samples and velocities)."""
        u = (t - self.t0) / self.dt
        i = int(min(max(math.floor(u), 0), len(self.times) - 2))
        s = u - i
        h00 = 2 * s**3 - 3 * s**2 + 1
        h10 = s**3 - 2 * s**2 + s
        h01 = -2 * s**3 + 3 * s**2
        h11 = s**3 - s**2
        return (h00 * self.x[i] + h10 * self.dt * self.v[i]
                + h01 * self.x[i + 1] + h11 * self.dt * self.v[i + 1])


def wrap_text(text: str, font: QFont, width: float) -> list[str]:
    """``text`` broken at word boundaries into lines no wider than ``width`` px in ``font``
    (a single word wider than that is broken inside)."""
    if not text:
        return []
    layout = QTextLayout(text, font)
    option = layout.textOption()
    option.setWrapMode(option.WrapMode.WrapAtWordBoundaryOrAnywhere)
    layout.setTextOption(option)
    lines = []
    layout.beginLayout()
    try:
        while True:
            line = layout.createLine()
            if not line.isValid():
                break
            line.setLineWidth(width)
            lines.append(text[line.textStart():line.textStart() + line.textLength()].rstrip())
    finally:
        layout.endLayout()
    return [t for t in lines if t]


class MotionView(QWidget):
    """Paints the model with the current displacements; turns a mass drag into a request."""

    #: (mass_id, {direction: displacement}) when a drag of a mass ends.
    drag_finished = Signal(str, dict)
    drag_started = Signal(str)

    def __init__(self, parent=None):
        super().__init__(parent)
        self.setMinimumSize(200, 90)
        self.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Expanding)
        self.setMouseTracking(True)
        self.model = None
        self.displacements: dict | None = None
        self.scale = 1.0
        self._texts = {"caption": "", "hint": ""}
        self._rows = {"caption": 1, "hint": 1}    # lines the bands above and below have room for
        self.energy = None
        #: the largest drawn excursion of a mass in the animation shown (px): labels keep off it
        self.motion_px = 0.0
        self._layout: SketchLayout | None = None
        self._layout_key = None
        self._static = None      # (key, pixmap): background and the parts that never move
        self._drag = None        # (mass_id, grab offset from the displayed centre in px)
        self._drag_pos = None

    # -- the caption over the drawing and the hint under it: wrapped, never cut -------------
    @property
    def caption(self) -> str:
        """The text over the drawing (mode, frequency, the cause of a zero-frequency mode)."""
        return self._texts["caption"]

    @caption.setter
    def caption(self, text: str) -> None:
        self._set_text("caption", text)

    @property
    def hint(self) -> str:
        """The text under the drawing (what a drag does)."""
        return self._texts["hint"]

    @hint.setter
    def hint(self, text: str) -> None:
        self._set_text("hint", text)

    def caption_font(self) -> QFont:
        f = QFont(self.font())
        f.setPixelSize(13)
        return f

    def text_lines(self, which: str = "caption") -> list[str]:
        """``"caption"`` or ``"hint"`` broken into the lines drawn at the current width."""
        return wrap_text(self._texts[which], self.caption_font(), self._text_width())

    def text_rect(self, which: str = "caption") -> QRectF:
        """Where ``"caption"`` (the band above the drawing) or ``"hint"`` (below) is drawn."""
        line = QFontMetrics(self.caption_font()).lineSpacing()
        h = max(20, self._rows[which] * line)
        top = 4 if which == "caption" else self.height() - 2 - h
        return QRectF(8, top, self._text_width(), h)

    def _text_width(self) -> float:
        return max(10.0, self.width() - 16.0)

    def _set_text(self, which: str, text: str) -> None:
        self._texts[which] = text
        self._reserve_rows(which)

    def _reserve_rows(self, which: str) -> None:
        # a band grows to the longest text shown since the drawing was last fitted, and does not
        # shrink back from mode to mode: stepping through the modes would otherwise refit and
        # shift the drawing each time a caption changes its number of lines
        rows = max(1, len(self.text_lines(which)))
        if rows > self._rows[which]:
            self._rows[which] = rows
            self._layout = None
            self.update()

    def _reset_rows(self) -> None:
        self._rows = {"caption": 1, "hint": 1}
        for which in self._rows:
            self._reserve_rows(which)

    def resizeEvent(self, event):  # noqa: N802 (Qt's name)
        self._reset_rows()
        super().resizeEvent(event)

    def set_model(self, model):
        self.model = model
        # an edit that leaves the drawing's geometry alone (a stiffness, a damping) keeps the
        # layout: fitting one is quadratic in the masses
        if self._layout is None or model is None or not self._layout.rebind(model):
            self._layout = None
            self._reset_rows()
        self.update()

    def layout_(self) -> SketchLayout | None:
        """The current sketch layout (refitted when the widget or the model changes)."""
        if self.model is None:
            return None
        key = (self.width(), self.height(), self._rows["caption"], self._rows["hint"])
        if self._layout is None or self._layout_key != key:
            r = self._sketch_rect()
            # screen symbols stay modest on a big panel
            self._layout = SketchLayout(self.model, r,
                                        base=min(36.0, max(10.0, min(r.width(), r.height()) / 10)))
            self._layout_key = key
        return self._layout

    def _sketch_rect(self) -> QRectF:
        # a band at the top for the caption and one at the bottom for the hint
        top = self.text_rect("caption").bottom() + 2
        bottom = self.text_rect("hint").top() - 2
        return QRectF(8, top, max(10, self.width() - 16), max(10, bottom - top))

    def paintEvent(self, event):
        st = current_style(self.palette())
        p = QPainter(self)
        try:
            p.fillRect(self.rect(), st.background)
            lay = self.layout_()
            if lay is None:
                p.setPen(st.ink_soft)
                p.drawText(self.rect(), Qt.AlignmentFlag.AlignCenter, "No model")
                return
            disp = self.displacements
            highlight = set()
            if self._drag is not None and self._drag_pos is not None:
                mid, grab = self._drag
                disp = dict(disp or {})
                disp[mid] = self._drag_displacement(mid, grab, self._drag_pos)
                highlight = {mid}
            labels = len(self.model.masses) <= LABEL_LIMIT
            if disp and self.model.kind != "torsion":
                # an animation frame: the layout at rest from a pixmap painted once, then what
                # moves (without labels or tint: every element at once)
                fast = can_paint_fast(self.model, disp, labels, self.energy, highlight)
                p.drawPixmap(0, 0, self._static_pixmap(lay, st, anchors=fast,
                                                       labels=labels if fast else False))
                if fast:
                    paint_moving_layer(p, lay, disp, self.scale, st, energy=self.energy,
                                       highlight=highlight)
                else:
                    paint_deformed_layer(p, lay, disp, self.scale, st, energy=self.energy,
                                         labels=labels, highlight=highlight,
                                         motion_px=self.motion_px)
            else:
                paint_sketch(p, self.model, lay.rect, disp, self.scale, st, undeformed=True,
                             energy=self.energy, labels=labels, layout=lay,
                             highlight=highlight, motion_px=self.motion_px)
            p.setPen(st.ink)
            f = self.caption_font()
            p.setFont(f)
            fm = QFontMetrics(f)
            left = Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter
            right = Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
            for which, align in (("caption", left), ("hint", right)):
                band, lines = self.text_rect(which), self.text_lines(which)
                y = band.top() + max(0.0, (band.height() - len(lines) * fm.lineSpacing()) / 2)
                for line in lines:
                    p.drawText(QRectF(band.left(), y, band.width(), fm.lineSpacing()), align,
                               line)
                    y += fm.lineSpacing()
                p.setPen(st.ink_soft)
        finally:
            p.end()

    def _static_pixmap(self, lay, st, anchors: bool, labels=False) -> QPixmap:
        """Background, the layout at rest (and the anchors, and the labels: they are placed
        clear of the room the symbols sweep, so they never move), painted once per layout,
        size, label texts and sweep."""
        ratio = self.devicePixelRatioF()
        label_key = ((labels, self.energy, round(self.motion_px, 1)) if labels else None)
        key = (lay, lay._geometry, st.name, self.width(), self.height(), ratio, anchors,
               label_key)
        if self._static is not None and self._static[0] == key:
            return self._static[1]
        pix = QPixmap(max(1, round(self.width() * ratio)), max(1, round(self.height() * ratio)))
        pix.setDevicePixelRatio(ratio)
        pix.fill(st.background)
        p = QPainter(pix)
        try:
            paint_static_layer(p, lay, st, anchors=anchors)
            if labels:
                p.setFont(self.font())
                paint_labels_layer(p, lay, labels, st, self.energy, self.motion_px)
        finally:
            p.end()
        self._static = (key, pix)
        return pix

    # -- dragging ----------------------------------------------------------------------------
    def _directions(self, mass_id):
        m = next(m for m in self.model.masses if m.id == mass_id)
        return [d for d in self.model.directions if d not in m.fixed]

    def _drag_displacement(self, mass_id, grab: QPointF, pos: QPointF) -> dict:
        """Displacement (m, rad; unmagnified) that puts the mass's centre under the pointer."""
        lay = self.layout_()
        rest = lay.point(mass_id)
        centre = QPointF(pos.x() - grab.x(), pos.y() - grab.y())
        dirs = self._directions(mass_id)
        scale = self.scale if self.scale > 0 else 1.0
        out = {}
        if self.model.kind == "torsion":
            # angle of the pointer round the disc, counter-clockwise from "up"
            dx, dy = pos.x() - rest.x(), pos.y() - rest.y()
            if "theta" in dirs and math.hypot(dx, dy) > 2:
                out["theta"] = math.atan2(-dx, -dy) / scale
            return out
        dx_m = (centre.x() - rest.x()) / lay.px_per_m / scale
        dy_m = -(centre.y() - rest.y()) / lay.px_per_m / scale
        if "x" in dirs:
            out["x"] = dx_m
        if "y" in dirs:
            out["y"] = dy_m
        return out

    def mousePressEvent(self, event):
        lay = self.layout_()
        if lay is None or event.button() != Qt.MouseButton.LeftButton:
            return super().mousePressEvent(event)
        pos = event.position()
        mid = lay.hit_mass(pos, self.displacements, self.scale)
        if mid is None or not self._directions(mid):
            return super().mousePressEvent(event)
        c = lay.point(mid, self.displacements, self.scale)
        grab = QPointF(pos.x() - c.x(), pos.y() - c.y()) if self.model.kind != "torsion" \
            else QPointF(0, 0)
        self._drag = (mid, grab)
        self._drag_pos = pos
        self.drag_started.emit(mid)
        self.update()
        event.accept()

    def mouseMoveEvent(self, event):
        # Track the drag from our own press state, not event.buttons(): synthetic test events
        # do not always carry the held button.
        if self._drag is not None:
            self._drag_pos = event.position()
            self.update()
            event.accept()
            return
        lay = self.layout_()
        over = lay is not None and lay.hit_mass(event.position(), self.displacements,
                                                self.scale) is not None
        self.setCursor(Qt.CursorShape.OpenHandCursor if over else Qt.CursorShape.ArrowCursor)

    def mouseReleaseEvent(self, event):
        if self._drag is None:
            return super().mouseReleaseEvent(event)
        mid, grab = self._drag
        disp = self._drag_displacement(mid, grab, event.position())
        self._drag = None
        self._drag_pos = None
        self.update()
        event.accept()
        if disp:
            self.drag_finished.emit(mid, disp)

    def is_dragging(self) -> bool:
        return self._drag is not None

    def mass_screen_point(self, mass_id: str) -> QPointF:
        """Where a mass is drawn now (widget coordinates); for tests and tooltips."""
        return self.layout_().point(mass_id, self.displacements, self.scale)


class MotionPanel(QWidget):
    """Animated mode shapes and free response; see the module docstring.

    Signals
    -------
    initial_conditions_requested(dict) : ``{mass_id: {direction: displacement}}`` from a drag.
    """

    initial_conditions_requested = Signal(dict)
    #: ``(displacements, peak, caption)`` of every frame while the canvas animation is on:
    #: ``{mass_id: {direction: value}}`` (m, rad; unmagnified), the largest value the animation
    #: reaches (the canvas sizes its magnification on it) and the caption of the frame;
    #: ``({}, 0.0, "")`` when it is switched off.
    canvas_frame = Signal(dict, float, str, float)
    canvas_toggled = Signal(bool)

    def __init__(self, parent=None):
        super().__init__(parent)
        self._analysis = None
        self._model = None
        self._modal = None
        self._view_kind = MODE_VIEW
        self._mode = None
        self._mode_shapes: dict = {}
        self._mode_phase_t = 0.0           # animation time in mode view (s, wall clock)
        self._t = 0.0                      # model time in free view (s)
        self._table: _ResponseTable | None = None
        self._duration = 1.0
        self._f_max = 1.0
        self._scale_locked = False
        self._free_fit_due = False
        self._traces_due = False
        self._free_scale = 1.0
        self.unit_system = "SI"
        self._positions: dict = {}
        self._trace_key = None
        self._clock = QElapsedTimer()
        self._timer = QTimer(self)
        self._timer.setTimerType(Qt.TimerType.PreciseTimer)
        self._timer.setInterval(int(1000 / DISPLAY_HZ))
        self._timer.timeout.connect(self._on_tick)
        self._build_ui()
        self._refresh()

    # -- UI ----------------------------------------------------------------------------------
    def _build_ui(self):
        self.view = MotionView(self)
        self.view.drag_finished.connect(self._on_drag_finished)
        self.view.drag_started.connect(self._on_drag_started)

        self.kind_box = QComboBox(self)
        self.kind_box.addItem("Mode shape", MODE_VIEW)
        self.kind_box.addItem("Initial conditions", FREE_VIEW)
        self.kind_box.setToolTip("Animate the selected mode, or play the free response to the"
                                 " model's initial conditions")
        self.kind_box.currentIndexChanged.connect(self._on_kind_change)

        self.play_button = QPushButton("Play", self)
        self.play_button.setCheckable(True)
        self.play_button.setToolTip("Play or pause the animation")
        self.play_button.toggled.connect(self._on_play_toggled)
        self.step_button = QPushButton("Step", self)
        self.step_button.setToolTip("Advance one frame")
        self.step_button.clicked.connect(self.step)
        self.restart_button = QPushButton("Restart", self)
        self.restart_button.setToolTip("Back to t = 0")
        self.restart_button.clicked.connect(lambda: self.set_time(0.0))
        self.loop_box = QCheckBox("Loop", self)
        self.loop_box.setChecked(True)
        self.loop_box.setToolTip("Free response: start again after the shown duration")

        self.amplitude = QSlider(Qt.Orientation.Horizontal, self)
        self.amplitude.setRange(1, 100)
        self.amplitude.setValue(50)
        self.amplitude.setToolTip("Drawn amplitude of the mode shape")
        self.amplitude.valueChanged.connect(lambda _v: self._refresh())
        self.speed = QDoubleSpinBox(self)
        self.speed.setRange(0.05, 5.0)
        self.speed.setSingleStep(0.1)
        self.speed.setValue(0.8)
        self.speed.setSuffix(" cycles/s")
        self.speed.setToolTip("Visual speed of the mode animation; the true frequency is shown"
                              " in the caption")
        self.canvas_box = QCheckBox("On canvas", self)
        self.canvas_box.setObjectName("motion_on_canvas")
        self.canvas_box.setToolTip("Animate the motion on the main canvas too (the drawing moves;"
                                   " the model does not) [C]")
        self.canvas_box.toggled.connect(self._on_canvas_toggled)

        self.time_scale_box = QComboBox(self)
        for ts in TIME_SCALES:
            self.time_scale_box.addItem(f"{ts:g}×" if ts >= 1 else f"{ts:g}× (slow)", ts)
        self.time_scale_box.setToolTip("Model seconds shown per second of wall-clock time")
        self.magnification = QDoubleSpinBox(self)
        self.magnification.setDecimals(3)
        self.magnification.setRange(1e-3, 1e9)
        self.magnification.setValue(1.0)
        self.magnification.setPrefix("drawn × ")
        self.magnification.setToolTip("Displacements are drawn this many times true size")
        self.magnification.valueChanged.connect(self._on_magnification_change)
        self.fit_button = QPushButton("Fit", self)
        self.fit_button.setToolTip("Choose a magnification that makes the motion visible")
        self.fit_button.clicked.connect(self._fit_free_scale)

        self.trace_list = QListWidget(self)
        self.trace_list.setObjectName("motion_traces")
        self.trace_list.setMaximumWidth(170)
        # a long label ("Level 1 (power supplies) x") wraps rather than being cut
        self.trace_list.setWordWrap(True)
        self.trace_list.setTextElideMode(Qt.TextElideMode.ElideNone)
        self.trace_list.setToolTip("Masses whose displacement is traced against time; the"
                                   " colour of each ticked one is its curve's (the legend)")
        self.trace_list.itemChanged.connect(lambda _i: self._rebuild_traces())
        self.plot = pg.PlotWidget(self, axisItems=true_value_axes())
        self.plot.setObjectName("motion_trace_plot")
        # tall enough to read a decaying trace; the list beside it is the legend, so no legend
        # box sits on the curves
        self.plot.setMinimumHeight(165)
        self.plot.setLabel("bottom", "time", units="s")
        self.plot.setLabel("left", "displacement", units="m")
        self.plot.setMenuEnabled(False)
        st = current_style()
        self.plot.setBackground(st.background)
        self._cursor = pg.InfiniteLine(angle=90, pen=pg.mkPen(st.accent, width=1.5))
        self.plot.addItem(self._cursor)
        self._curves = []

        row1 = QHBoxLayout()
        for w in (self.kind_box, self.play_button, self.step_button, self.restart_button,
                  self.loop_box):
            row1.addWidget(w)
        row1.addStretch(1)
        self._mode_controls = QWidget(self)
        mrow = QHBoxLayout(self._mode_controls)
        mrow.setContentsMargins(0, 0, 0, 0)
        mrow.addWidget(QLabel("Amplitude", self))
        mrow.addWidget(self.amplitude, 1)
        mrow.addWidget(QLabel("Speed", self))
        mrow.addWidget(self.speed)
        mrow.addWidget(self.canvas_box)
        self._free_controls = QWidget(self)
        frow = QHBoxLayout(self._free_controls)
        frow.setContentsMargins(0, 0, 0, 0)
        frow.addWidget(QLabel("Time scale", self))
        frow.addWidget(self.time_scale_box)
        frow.addWidget(self.magnification)
        frow.addWidget(self.fit_button)
        frow.addStretch(1)

        self._trace_area = QWidget(self)
        trow = QHBoxLayout(self._trace_area)
        trow.setContentsMargins(0, 0, 0, 0)
        trow.addWidget(self.trace_list)
        trow.addWidget(self.plot, 1)

        split = self._split = QSplitter(Qt.Orientation.Vertical, self)
        split.addWidget(self.view)
        split.addWidget(self._trace_area)
        split.setStretchFactor(0, 3)
        split.setStretchFactor(1, 1)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(2, 2, 2, 2)
        lay.addLayout(row1)
        lay.addWidget(self._mode_controls)
        lay.addWidget(self._free_controls)
        lay.addWidget(split, 1)
        self._sync_controls()

    def _sync_controls(self):
        free = self._view_kind == FREE_VIEW
        self._mode_controls.setVisible(not free)
        self._free_controls.setVisible(free)
        was = self._trace_area.isVisible()
        self._trace_area.setVisible(free)
        if free and not was:
            total = max(300, sum(self._split.sizes()))
            self._split.setSizes([int(total * 0.35), int(total * 0.65)])
        self.loop_box.setEnabled(free)

    # -- public API --------------------------------------------------------------------------
    def set_analysis(self, analysis) -> None:
        """Show a new analysis (None clears). Keeps the view kind and, where it exists, the mode."""
        self._analysis = analysis
        self._model = getattr(analysis, "model", None) if analysis is not None else None
        self._modal = getattr(analysis, "modal", analysis) if analysis is not None else None
        self._mode_shapes = {}
        self._table = None
        self.view.set_model(self._model)
        self._f_max, self._duration = self._response_window()
        # an edit neither restarts nor stops what is playing: the time runs on (wrapped into
        # the new loop), the view kind and the mode stay
        if self._t > self._duration and self.loop_box.isChecked():
            self._t = math.fmod(self._t, self._duration)
        if self._modal is None or self._mode is None or self._mode > self._modal.n_modes:
            self._mode = 1 if self._modal is not None and self._modal.n_modes else None
        self._pick_time_scale()
        self._fill_trace_list()
        # the free response is sampled only when it is shown (a slider drag in the mode view
        # must not pay for it on every step)
        self._free_fit_due = not self._scale_locked
        if self._view_kind == FREE_VIEW:
            self._catch_up_free()
        self._rebuild_traces()
        self._refresh()

    def show_mode(self, n: int) -> None:
        """Animate mode n (from 1) in the mode-shape view."""
        if self._modal is None or not 1 <= int(n) <= self._modal.n_modes:
            return
        self._mode = int(n)
        self._mode_phase_t = 0.0
        self._set_view_kind(MODE_VIEW)
        self._refresh()

    def set_unit_system(self, system: str) -> None:
        """"SI" or "US": the unit of the traced displacements (m or in; rad either way)."""
        if system != self.unit_system:
            self.unit_system = system
            self._rebuild_traces()

    def set_mode(self, n: int) -> None:
        """Make mode n (from 1) the one the mode view shows, without switching views or
        restarting its animation (new results of an edit keep what is on screen)."""
        if self._modal is None or not 1 <= int(n) <= self._modal.n_modes or self._mode == int(n):
            return
        self._mode = int(n)
        self._refresh()

    def set_on_canvas(self, on: bool) -> None:
        """Animate on the main canvas too (playback starts when switched on)."""
        self.canvas_box.setChecked(bool(on))

    def on_canvas(self) -> bool:
        return self.canvas_box.isChecked()

    def show_free_response(self) -> None:
        """Switch to the initial-conditions view (free response)."""
        self._set_view_kind(FREE_VIEW)
        self._refresh()

    def view_kind(self) -> str:
        return self._view_kind

    def current_mode(self) -> int | None:
        return self._mode

    def play(self):
        self.play_button.setChecked(True)

    def pause(self):
        self.play_button.setChecked(False)

    def is_playing(self) -> bool:
        return self._timer.isActive()

    def step(self):
        """Advance one frame (at the current speed or time scale)."""
        if self._view_kind == FREE_VIEW:
            self.set_time(self._t + self.time_scale() / FPS)
        else:
            self._mode_phase_t += 1.0 / FPS
            self._refresh()

    def set_loop(self, loop: bool):
        self.loop_box.setChecked(bool(loop))

    def time_scale(self) -> float:
        return float(self.time_scale_box.currentData())

    def set_time_scale(self, scale: float):
        i = min(range(len(TIME_SCALES)), key=lambda k: abs(math.log(TIME_SCALES[k] / scale)))
        self.time_scale_box.setCurrentIndex(i)

    def set_time(self, t: float) -> None:
        """Show the free response at model time t (s)."""
        self._t = max(0.0, float(t))
        if self._view_kind == FREE_VIEW and self.loop_box.isChecked() and self._duration > 0:
            if self._t > self._duration:
                self._t = math.fmod(self._t, self._duration)
        self._refresh()

    def current_time(self) -> float:
        """Model time (s) shown in the free-response view; animation time in the mode view."""
        return self._t if self._view_kind == FREE_VIEW else self._mode_phase_t

    def displayed_positions(self) -> dict:
        """Displacements shown now, ``{mass_id: {direction: value}}`` before magnification.

        Free-response view: m (rad in torsion) at :meth:`current_time`. Mode view: the
        mass-normalised shape times the animation's cos(phase).
        """
        return {k: dict(v) for k, v in self._positions.items()}

    def magnification_value(self) -> float:
        return self.view.scale

    # -- internals ---------------------------------------------------------------------------
    def _catch_up_free(self):
        if self._free_fit_due:
            self._free_fit_due = False
            self._fit_free_scale(lock=False)
        if self._traces_due:
            self._rebuild_traces()

    def _set_view_kind(self, kind):
        if kind == self._view_kind:
            return
        self._view_kind = kind
        if kind == FREE_VIEW:
            self._catch_up_free()
        self.kind_box.blockSignals(True)
        self.kind_box.setCurrentIndex(0 if kind == MODE_VIEW else 1)
        self.kind_box.blockSignals(False)
        self._sync_controls()

    def _on_kind_change(self, _i):
        self._view_kind = self.kind_box.currentData()
        if self._view_kind == FREE_VIEW:
            self._catch_up_free()
        self._sync_controls()
        self._refresh()

    def _on_play_toggled(self, on: bool):
        self.play_button.setText("Pause" if on else "Play")
        if on:
            # a frame per refresh of the screen the panel is on (the motion is timed by the
            # wall clock, so the rate only sets how smooth it looks)
            screen = self.screen()
            rate = screen.refreshRate() if screen is not None else 0.0
            self._timer.setInterval(max(1, int(1000.0 / (rate if rate >= 20 else DISPLAY_HZ))))
            self._clock.start()
            self._timer.start()
        else:
            self._timer.stop()

    def _on_canvas_toggled(self, on: bool):
        if on:
            self.play()
            self._refresh()
        else:
            self.canvas_frame.emit({}, 0.0, "", 0.0)
        self.canvas_toggled.emit(bool(on))

    def _canvas_peak(self) -> tuple[float, float]:
        """Largest displacement the shown animation reaches (m; rad in torsion) and largest
        turn of a planar rigid body (rad): two kinds of value, never mixed."""
        planar = self._model is not None and self._model.kind != "torsion"

        def split(pairs):
            move = [abs(v) for d, v in pairs if not (planar and d == "theta")]
            turn = [abs(v) for d, v in pairs if planar and d == "theta"]
            return max(move, default=0.0), max(turn, default=0.0)

        if self._view_kind == MODE_VIEW:
            shape = self._mode_shapes.get(self._mode or 1, ({}, 1.0))[0]
            # the amplitude slider (50 = as fitted) scales the canvas motion too
            gain = self.amplitude.value() / 50.0
            move, turn = split([(d, v) for dd in shape.values() for d, v in dd.items()])
            return move / gain, turn / gain
        table = self._table
        if table is None or not table.x.size:
            return 0.0, 0.0
        peak = np.abs(table.x).max(axis=0)
        return split([(d, float(v)) for (_m, d), v in zip(table.dofs, peak)])

    def _on_tick(self):
        dt_wall = self._clock.restart() / 1000.0
        dt_wall = min(dt_wall, 0.25)   # a stalled UI must not make the motion jump
        if self._view_kind == FREE_VIEW:
            # past the window: set_time loops, or runs on into the next window
            self.set_time(self._t + dt_wall * self.time_scale())
        else:
            self._mode_phase_t += dt_wall
            self._refresh()

    def _on_magnification_change(self, value):
        if self._view_kind == FREE_VIEW:
            self._free_scale = float(value)
            self._scale_locked = True
            self._refresh()

    def _response_window(self):
        """Fastest frequency that matters (Hz) and the looped duration (s) of the free response."""
        if self._modal is None or self._modal.n_modes == 0:
            return 1.0, 1.0
        f = np.asarray(self._modal.frequencies_hz, float)
        nz = f[f > 0]
        if nz.size == 0:
            return 1.0, 2.0
        f_max = float(nz.max())
        # a few periods of the slowest elastic mode, within sensible bounds
        duration = min(max(4.0 / float(nz.min()), 20.0 / f_max), 60.0)
        return f_max, duration

    def _pick_time_scale(self):
        # Fastest mode shown at no more than about two cycles per second of wall time.
        self.set_time_scale(min(1.0, 2.0 / self._f_max) if self._f_max > 0 else 1.0)

    def _free_table(self, t: float) -> _ResponseTable | None:
        if self._model is None or self._modal is None or self._modal.n_modes == 0:
            return None
        if self._table is None or not self._table.contains(t):
            start = math.floor(t / self._duration) * self._duration if self._duration > 0 else 0
            self._table = _ResponseTable(self._model, self._modal, start, self._duration,
                                         self._f_max)
        return self._table

    def _free_displacements(self, t: float) -> dict:
        table = self._free_table(t)
        if table is None:
            return {}
        vec = table.at(t)
        out: dict = {}
        for (mid, d), v in zip(table.dofs, vec):
            out.setdefault(mid, {})[d] = float(v)
        return out

    def _initial_displacements(self) -> dict:
        out: dict = {}
        if self._model is None:
            return out
        for ic in self._model.initial:
            for d, v in ic.displacement:
                out.setdefault(ic.mass_id, {})[d] = v
        return out

    def _fit_free_scale(self, lock=True):
        """Magnification for the free response: the largest motion made clearly visible."""
        lay = self.view.layout_()
        if lay is None:
            return
        big: dict = {}
        if self._modal is not None and self._modal.n_modes:
            table = self._free_table(0.0)
            if table is not None and table.x.size:
                peak = np.abs(table.x).max(axis=0)
                for (mid, d), v in zip(table.dofs, peak):
                    big.setdefault(mid, {})[d] = float(v)
        if not any(abs(v) > 0 for dd in big.values() for v in dd.values()):
            # no motion yet: size the drawing for a typical small initial displacement
            big = {m.id: {d: _DEFAULT_IC[d] for d in self._model.directions}
                   for m in self._model.masses[:1]} if self._model is not None else {}
        scale = fit_scale(lay, big, 0.12)
        self._free_scale = scale
        self.magnification.blockSignals(True)
        self.magnification.setValue(scale)
        self.magnification.blockSignals(False)
        self._scale_locked = bool(lock)
        self._refresh()

    def _fill_trace_list(self):
        key = None
        if self._model is not None and self._modal is not None:
            labels = {n.id: n.label for n in self._model.masses + self._model.anchors}
            key = tuple((dof, labels[dof[0]]) for dof in self._modal.dofs)
        if key == self._trace_key:
            return        # same masses and directions: the list (and what is ticked) stays
        self._trace_key = key
        checked = {self.trace_list.item(i).data(Qt.ItemDataRole.UserRole)
                   for i in range(self.trace_list.count())
                   if self.trace_list.item(i).checkState() == Qt.CheckState.Checked}
        self.trace_list.blockSignals(True)
        self.trace_list.clear()
        if self._model is not None and self._modal is not None:
            dofs = [d for d in self._modal.dofs]
            first = not checked
            for k, dof in enumerate(dofs):
                mid, d = dof
                item = QListWidgetItem(f"{labels[mid]} {d}")
                item.setData(Qt.ItemDataRole.UserRole, dof)
                on = (dof in checked) or (first and k < 2)
                item.setFlags(item.flags() | Qt.ItemFlag.ItemIsUserCheckable)
                item.setCheckState(Qt.CheckState.Checked if on else Qt.CheckState.Unchecked)
                self.trace_list.addItem(item)
        self.trace_list.blockSignals(False)

    def traced_dofs(self) -> list:
        return [self.trace_list.item(i).data(Qt.ItemDataRole.UserRole)
                for i in range(self.trace_list.count())
                if self.trace_list.item(i).checkState() == Qt.CheckState.Checked]

    def _rebuild_traces(self):
        for c in self._curves:
            self.plot.removeItem(c)
        self._curves = []
        legend = self.plot.plotItem.legend
        if legend is not None:
            legend.clear()
        if self._view_kind != FREE_VIEW:
            self._traces_due = True   # drawn when the free-response view is shown
            return
        self._traces_due = False
        table = self._free_table(self._t)
        if table is None:
            return
        st = current_style()
        from app.text.units import KINDS

        torsion = self._model.kind == "torsion"
        kind = KINDS["angle" if torsion else "length"]
        unit, factor = kind.label(self.unit_system), kind.factor(self.unit_system)
        traced = [dof for dof in self.traced_dofs() if dof in table.dofs]
        turns = not torsion and any(d == "theta" for _m, d in traced)
        moves = any(d != "theta" for _m, d in traced)
        if turns and moves:
            # a body's turn beside translations: one axis, both units named on it
            self.plot.setLabel("left", f"displacement ({unit}), rotation (rad)")
        elif turns:
            self.plot.setLabel("left", "rotation", units="rad")
        else:
            self.plot.setLabel("left", "rotation" if torsion else "displacement", units=unit)
        colours = {}
        for k, dof in enumerate(self.traced_dofs()):
            if dof not in table.dofs:
                continue
            j = table.dofs.index(dof)
            colours[dof] = st.trace(k)
            scale = 1.0 if dof[1] == "theta" and not torsion else factor
            curve = self.plot.plot(table.times, table.x[:, j] / scale,
                                   pen=pg.mkPen(st.trace(k), width=CURVE_WIDTH),
                                   name=f"{self._model.node(dof[0]).label} {dof[1]}")
            # drawn once into a pixmap: the time cursor moves every frame and would otherwise
            # restroke thousands of samples under it
            curve.curve.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
            self._curves.append(curve)
        self._show_trace_colours(colours)

    def _show_trace_colours(self, colours: dict):
        """The trace list is the legend: each ticked entry carries its curve's colour."""
        self.trace_list.blockSignals(True)
        try:
            for i in range(self.trace_list.count()):
                item = self.trace_list.item(i)
                c = colours.get(item.data(Qt.ItemDataRole.UserRole))
                if c is None:
                    item.setIcon(QIcon())
                    continue
                pix = QPixmap(18, 10)
                pix.fill(Qt.GlobalColor.transparent)
                p = QPainter(pix)
                p.setPen(QPen(c, 3))
                p.drawLine(1, 5, 17, 5)
                p.end()
                item.setIcon(QIcon(pix))
        finally:
            self.trace_list.blockSignals(False)

    def trace_colours(self) -> dict:
        """``{(mass_id, direction): QColor}`` of the curves drawn (as the list shows them)."""
        return {dof: c.opts["pen"].color() for dof, c in zip(
            [d for d in self.traced_dofs() if self._table is not None and d in self._table.dofs],
            self._curves)}

    def _refresh(self):
        view = self.view
        st = current_style()
        if self._modal is None or self._model is None:
            view.displacements = None
            view.caption = "No results"
            view.hint = ""
            self._positions = {}
            view.update()
            if self.canvas_box.isChecked():
                self.canvas_frame.emit({}, 0.0, "", 0.0)
            return
        if self._modal.n_modes == 0:
            view.displacements = None
            view.caption = self._modal.message or "No modes"
            view.hint = ""
            self._positions = {}
            view.update()
            if self.canvas_box.isChecked():
                self.canvas_frame.emit({}, 0.0, "", 0.0)
            return
        if self._view_kind == MODE_VIEW:
            n = self._mode or 1
            if n not in self._mode_shapes:
                shape = self._modal.node_displacement(n)
                lay = view.layout_()
                self._mode_shapes[n] = (shape, fit_scale(lay, shape, 0.12) if lay else 1.0)
            shape, fit = self._mode_shapes[n]
            c = math.cos(2 * math.pi * self.speed.value() * self._mode_phase_t)
            disp = {mid: {d: v * c for d, v in dd.items()} for mid, dd in shape.items()}
            self._positions = disp
            view.displacements = disp
            view.scale = fit * self.amplitude.value() / 50.0
            view.motion_px = self._excursion_px(shape, view.scale)
            f = float(self._modal.frequencies_hz[n - 1])
            z = self._modal.zero_mode(n)
            cap = f"Mode {n} of {self._modal.n_modes}: {hz(f)}"
            if z is not None:
                cap = f"Mode {n} of {self._modal.n_modes}: 0 Hz ({z.kind}): {z.cause}"
            else:
                cap += f" (shown at {self.speed.value():.2g} cycles/s)"
            group = self._modal.repeated_group(n)
            if group:
                cap += "  · repeated frequency: this shape is one choice"
            view.caption = cap
            view.hint = "Drag a mass to set an initial displacement"
        else:
            disp = self._free_displacements(self._t)
            self._positions = disp
            view.displacements = disp
            view.scale = self._free_scale
            table = self._table
            if getattr(self, "_free_peak_key", None) is not table:
                # the largest excursion per mass and direction of this window (a body's turn
                # kept apart from its translation: radians are not metres)
                peaks: dict = {}
                if table is not None and table.x.size:
                    for (mid, d), v in zip(table.dofs, np.abs(table.x).max(axis=0)):
                        peaks.setdefault(mid, {})[d] = float(v)
                self._free_peak_key, self._free_peaks = table, peaks
            view.motion_px = self._excursion_px(self._free_peaks, view.scale)
            ts = self.time_scale()
            view.caption = (f"Free response  t = {self._t:.4f} s   time scale {ts:g}×   "
                            f"drawn {self._free_scale:.3g}× true size")
            view.hint = ("No initial conditions: drag a mass to displace it"
                         if not self._model.initial else "Drag a mass to change its initial"
                         " displacement")
            self._cursor.setValue(self._t)
        del st
        view.update()
        if self.canvas_box.isChecked():
            peak, turn = self._canvas_peak()
            self.canvas_frame.emit(self._positions, peak, view.caption.split(" (shown at")[0],
                                   turn)

    def _excursion_px(self, shape: dict, scale: float) -> float:
        """Largest drawn translation (px) of ``shape`` at ``scale``; 0 in torsion (discs turn
        in place)."""
        lay = self.view.layout_()
        if lay is None or self._model is None or self._model.kind == "torsion":
            return 0.0

        def reach(mid, d):
            r = math.hypot(d.get("x", 0.0), d.get("y", 0.0))
            if d.get("theta") and lay.is_body(mid):   # a body's corner swings with its turn
                r += abs(d["theta"]) * math.hypot(*lay.body_half(lay._nodes[mid])) / lay.px_per_m
            return r

        big = max((reach(mid, d) for mid, d in shape.items()), default=0.0)
        # quantised so that the labels are re-placed only when the excursion really changes
        return math.ceil(big * scale * lay.px_per_m / 4.0) * 4.0

    def _on_drag_started(self, _mass_id: str):
        # Initial conditions are set in the free-response drawing, at its magnification, from
        # the state at t = 0.
        self.pause()
        self._set_view_kind(FREE_VIEW)
        self._t = 0.0
        self._refresh()

    def _on_drag_finished(self, mass_id: str, disp: dict):
        # keep the drawing scale: the mass stays where it was dropped when the new response comes
        self._scale_locked = True
        self._set_view_kind(FREE_VIEW)
        self._t = 0.0
        self.initial_conditions_requested.emit({mass_id: dict(disp)})


__all__ = ["MotionPanel", "MotionView"]
