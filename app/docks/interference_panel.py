"""Interference diagram: natural frequency against shaft speed, with every order line.

The data come from :func:`solver.interference.interference` (Qt-free): one line ``f = n rpm / 60``
per order of every speed source, the source's operating range shaded (a single speed is a dashed
upright line), each elastic mode as a horizontal line (the modes of a lumped model do not change
with speed) with its margin band ``[f / (1 + p), f / (1 - p)]`` lightly shaded, and every crossing
of an order line with a mode marked: filled and labelled with its speed inside the operating range,
hollow outside it. Under the plot the crossings inside the range are listed in words.

The panel follows the document: new results redraw it (only while it is shown; a hidden panel
redraws when it is shown again; during a slider drag it holds, dimmed, and redraws on release),
and opening another model clears it until that model's results arrive.
"""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QLabel, QScrollArea, QSizePolicy, QVBoxLayout, QWidget

from solver.errors import ModelError
from solver.interference import interference

from app.docks.on_screen import on_screen
from app.drawing.plot_axes import paint_whole, true_value_axes
from app.report.interference import spread
from app.drawing.style import current_style
from app.results.margin_rows import crossing_sentence
from app.results.names import names
from app.text.numbers import hz, number

#: Crossings labelled with their speed on the plot (more would pile up; the list has them all).
MAX_LABELS = 24
#: Height of an order line's name: at least this share of the plot's height, and this many pixels
#: (names of lines ending close together are kept this far apart).
LABEL_HEIGHT, LABEL_PX = 0.05, 18.0

TOOLTIP = ("Interference diagram (the trade also calls it a Campbell diagram): each order of a"
           " shaft speed is a line f = order × rpm / 60; natural frequencies are horizontal lines"
           " (a lumped model's modes do not change with speed), shaded by the margin. Where an"
           " order line crosses a mode inside the operating range (shaded upright band), the"
           " machine runs at a resonance: the crossing is marked with its speed.")


class InterferencePanel(QWidget):
    """The interference diagram of the document's model (``set_analysis`` with new results)."""

    def __init__(self, document=None, parent=None):
        super().__init__(parent)
        self.document = document
        self.data = None            # the solver.interference.Interference drawn now
        self._analysis = None
        self._dirty = False
        self._live = False
        st = current_style()
        pg.setConfigOptions(antialias=True)
        self.plot = paint_whole(pg.PlotWidget(axisItems=true_value_axes()))
        self.plot.setObjectName("interference_plot")
        self.plot.setBackground(st.background)
        self.plot.setToolTip(TOOLTIP)
        pi = self.plot.getPlotItem()
        pi.setMenuEnabled(False)
        pi.showGrid(x=True, y=True, alpha=0.2)
        pi.setLabel("bottom", "shaft speed (rpm)")
        pi.setLabel("left", "frequency (Hz)")
        for ax in ("left", "bottom"):
            pi.getAxis(ax).setTextPen(st.ink)
            pi.getAxis(ax).setPen(st.ink_soft)
        self.plot.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Expanding)
        self.plot.setMinimumSize(260, 160)
        self.message = QLabel()
        self.message.setObjectName("interference_message")
        self.message.setWordWrap(True)
        self.message.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.message.setAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop)
        scroll = QScrollArea()
        scroll.setWidget(self.message)
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QScrollArea.Shape.NoFrame)
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setMaximumHeight(64)
        self._scroll = scroll
        lay = QVBoxLayout(self)
        lay.setContentsMargins(2, 2, 2, 2)
        lay.setSpacing(2)
        lay.addWidget(self.plot, 1)
        lay.addWidget(scroll)
        if document is not None:
            document.opened.connect(self._on_opened)
        self.clear()

    # -- public -------------------------------------------------------------------------------
    def set_analysis(self, analysis) -> None:
        """New results (or None): redraw now when shown, else when next shown; during a live
        gesture (a slider drag) the drawn diagram is held, dimmed, and redrawn on release."""
        self._analysis = analysis
        if analysis is None:
            self.clear()
            return
        if on_screen(self) and not self._live:
            self._redraw()
        else:
            self._dirty = True
            if self._live and self.data is not None:
                self.plot.getPlotItem().setOpacity(0.45)

    def set_live(self, live: bool) -> None:
        """A live gesture starts or ends (``SolveService.live_changed``): a redraw costs tens of
        ms, too much for every slider step, so the diagram waits for the release."""
        self._live = bool(live)
        if not self._live:
            self.plot.getPlotItem().setOpacity(1.0)
            if self._dirty and self._analysis is not None and on_screen(self):
                self._redraw()

    def clear(self, text: str = "") -> None:
        """No diagram (another model is being opened, or no results yet)."""
        self.data = None
        self._dirty = False
        self.plot.getPlotItem().clear()
        self.plot.getPlotItem().setTitle("")
        self.message.setText(text)

    def crossing_texts(self) -> list[str]:
        """The crossings inside the operating range, in words (as listed under the plot)."""
        if self.data is None or self._analysis is None:
            return []
        shown = names(self._analysis.model)
        return [crossing_sentence(self._analysis.model, c, shown) for c in self.data.in_range]

    # -- events -------------------------------------------------------------------------------
    def _on_opened(self, _model):
        self._analysis = None
        self.clear()

    def showEvent(self, event):  # noqa: N802
        super().showEvent(event)
        self.catch_up()

    def catch_up(self) -> None:
        """Draw the results that came while the panel was behind another tab."""
        if self._dirty and self._analysis is not None and not self._live:
            self._redraw()

    # -- drawing ------------------------------------------------------------------------------
    def _redraw(self) -> None:
        self._dirty = False
        self.plot.getPlotItem().setOpacity(1.0)
        analysis = self._analysis
        model = analysis.model
        try:
            data = interference(model, analysis.modal)
        except ModelError as exc:
            self.clear(f"No diagram: {exc}")
            return
        if not data.lines:
            self.clear("No shaft-speed source in this model. Add one in the Sources panel to see"
                       " where its orders cross the natural frequencies.")
            return
        self.data = data
        self._draw(model, data)
        self.message.setText(self._words(model, data))

    def _words(self, model, data) -> str:
        shown = names(model)
        inside = data.in_range
        if inside:
            text = "Crossings inside the operating range: " + "; ".join(
                crossing_sentence(model, c, shown) for c in inside) + "."
        else:
            text = "No order line crosses a natural frequency inside the operating range."
        if data.modes_above:
            text += (f" {data.modes_above} higher mode{'s' if data.modes_above > 1 else ''} above"
                     f" {hz(data.hz_max, 3)} not drawn.")
        return text

    def _draw(self, model, data) -> None:
        st = current_style()
        pi = self.plot.getPlotItem()
        pi.clear()
        shown = names(model)
        x_max, y_max = data.rpm_max, data.hz_max
        colours = {}
        for ln in data.lines:
            # trace colour 0 is the accent the modes are drawn in: sources take the others
            colours.setdefault(ln.source_id, st.trace(len(colours) + 1))
        # operating ranges first, beneath everything
        done = set()
        for ln in data.lines:
            if ln.source_id in done:
                continue
            done.add(ln.source_id)
            c = pg.mkColor(colours[ln.source_id])
            if ln.rpm_high > ln.rpm_low:
                fill = pg.mkColor(c)
                fill.setAlpha(40)
                region = pg.LinearRegionItem(values=(ln.rpm_low, ln.rpm_high), movable=False,
                                             brush=pg.mkBrush(fill), pen=pg.mkPen(c, width=0.8))
                region.setZValue(-20)
                region.setToolTip(f"{shown.get(ln.source_id, ln.source_id)}: operating range"
                                  f" {number(ln.rpm_low)} to {number(ln.rpm_high)} rpm")
                pi.addItem(region)
            else:
                line = pg.InfiniteLine(pos=ln.rpm_low, angle=90,
                                       pen=pg.mkPen(c, width=1.2, style=Qt.PenStyle.DashLine))
                line.setZValue(-20)
                pi.addItem(line)
        # modes: a horizontal line each, its margin band lightly shaded
        band = pg.mkColor(st.accent)
        band.setAlpha(28)
        for n, f in data.modes:
            lo, hi = data.mode_band_hz(f)
            if data.margin_percent > 0:
                region = pg.LinearRegionItem(values=(lo, min(hi, y_max)), orientation="horizontal",
                                             movable=False, brush=pg.mkBrush(band),
                                             pen=pg.mkPen(None))
                region.setZValue(-15)
                pi.addItem(region)
            pi.addItem(pg.InfiniteLine(pos=f, angle=0, pen=pg.mkPen(st.accent, width=1.4)))
            label = pg.TextItem(f"mode {n} · {hz(f, 4)}", color=st.accent, anchor=(0, 1))
            label.setPos(0.01 * x_max, f)
            pi.addItem(label)
        # order lines from 0 rpm to the right edge or the top, whichever comes first
        ends = []
        height = max(1.0, pi.getViewBox().height())
        gap = max(LABEL_HEIGHT, LABEL_PX / height) * y_max
        pale = pg.mkColor(st.background_hex)
        pale.setAlpha(200)
        backing = pg.mkBrush(pale)
        for ln in data.lines:
            c = colours[ln.source_id]
            x_end = min(x_max, 60.0 * y_max / ln.order)
            pi.plot([0.0, x_end], [0.0, ln.hz_at(x_end)], pen=pg.mkPen(c, width=1.6))
            # label bottoms in Hz: above the end on the right edge, under it at the top edge
            y = ln.hz_at(x_end) if x_end >= x_max else ln.hz_at(x_end) - gap
            ends.append((y, x_end, f"{shown.get(ln.source_id, ln.source_id)} ×{ln.order:g}", c))
        # pushed apart where lines end close together (a label is ~18 px high)
        for y, x, name, c in spread(ends, gap, 0.0, y_max - gap):
            text = pg.TextItem(name, color=c, anchor=(1, 1), fill=backing)
            text.setPos(x - 0.01 * x_max, y)
            pi.addItem(text)
        # crossings: filled and labelled inside the range, hollow outside it
        inside = [c for c in data.crossings if c.in_range]
        outside = [c for c in data.crossings if not c.in_range]
        if outside:
            pi.plot([c.rpm for c in outside], [c.frequency_hz for c in outside], pen=None,
                    symbol="o", symbolSize=8, symbolBrush=pg.mkBrush(None),
                    symbolPen=pg.mkPen(st.ink_soft, width=1.2))
        if inside:
            pi.plot([c.rpm for c in inside], [c.frequency_hz for c in inside], pen=None,
                    symbol="o", symbolSize=10, symbolBrush=pg.mkBrush(st.error),
                    symbolPen=pg.mkPen(st.background, width=1))
            for c in inside[:MAX_LABELS]:
                # right of the middle the speed reads to the left of its dot, clear of the
                # order names at the right edge
                t = pg.TextItem(f"{number(c.rpm)} rpm", color=st.error, fill=backing,
                                anchor=(0.5 if c.rpm < 0.5 * x_max else 1.05, 1.1))
                t.setPos(c.rpm, c.frequency_hz)
                pi.addItem(t)
        pi.setXRange(0, x_max, padding=0)
        pi.setYRange(0, y_max, padding=0)
        pi.setTitle(f"margin {data.margin_percent:g} %", color=st.ink_soft_hex, size="8pt")


__all__ = ["InterferencePanel", "TOOLTIP"]
