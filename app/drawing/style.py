"""Springwright's look: one palette of our own, in a light and a dark variant.

Colour carries meaning, and the same meaning everywhere (canvas, motion view, report):

- ``ink``: the drawn model (springs, dashpots, outlines, anchors).
- ``undeformed``: the layout at rest, drawn in grey beneath a deformed shape.
- ``accent``: the selected mode, the selection, the current-time cursor.
- ``warning``: results to look at twice (zero-frequency modes, stale results, modes near an
  excitation); ``error`` for refused input.
- the energy ramp (:meth:`Style.energy_color`): pale sand for no share of the energy, through ochre
  to brick red for all of it; sequential and readable in grey print.

Pick the variant with :func:`current_style` (follows the system palette: a dark window background
gives the dark variant) or ask for ``LIGHT`` / ``DARK`` directly. The report always uses ``LIGHT``
(it is printed).
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtGui import QColor, QGuiApplication, QPalette

#: Pen width (px) of the plots' data curves (sweeps, response, loads, absorber). Qt draws an
#: antialiased line one pixel wide on its fast path and a wider one through its general stroker,
#: 15-28x slower (``bench/plot_paint_bench.py``), and an edit repaints every curve shown: curves
#: are told apart by colour and dash, not by width. Short items (cursors, band edges) may be wider.
#: (A cosmetic pen: one device pixel, a hairline on a 200 % display.)
CURVE_WIDTH = 1.0
#: The one result curve of a plot that is redrawn only when its own computation ends (the Loads
#: responses, the Absorber's "with absorber"): wider, to stand out from its input and variants.
RESULT_WIDTH = 2.0


def _c(hex_rgb: str, alpha: int = 255) -> QColor:
    c = QColor(hex_rgb)
    c.setAlpha(alpha)
    return c


@dataclass(frozen=True)
class Style:
    """A palette and a few stroke widths. Colours are ``#rrggbb`` text; use the QColor accessors."""

    name: str
    background_hex: str
    panel_hex: str
    ink_hex: str
    ink_soft_hex: str
    mass_fill_hex: str
    mass_edge_hex: str
    junction_hex: str
    anchor_hex: str
    undeformed_hex: str
    accent_hex: str
    accent_soft_hex: str
    warning_hex: str
    error_hex: str
    grid_hex: str
    label_hex: str
    #: Energy ramp stops, from 0 (no share) to 1 (all of it).
    energy_stops: tuple[str, ...]
    #: Colours for time traces of several masses (qualitative, distinct in light and dark).
    trace_hexes: tuple[str, ...]
    #: Basic stroke width in device pixels at 96 dpi (scale it for print).
    line_width: float = 1.6
    dark: bool = False

    # -- QColor accessors ------------------------------------------------------------------
    @property
    def background(self) -> QColor:
        return _c(self.background_hex)

    @property
    def panel(self) -> QColor:
        return _c(self.panel_hex)

    @property
    def ink(self) -> QColor:
        return _c(self.ink_hex)

    @property
    def ink_soft(self) -> QColor:
        return _c(self.ink_soft_hex)

    @property
    def mass_fill(self) -> QColor:
        return _c(self.mass_fill_hex)

    @property
    def mass_edge(self) -> QColor:
        return _c(self.mass_edge_hex)

    @property
    def junction(self) -> QColor:
        return _c(self.junction_hex)

    @property
    def anchor(self) -> QColor:
        return _c(self.anchor_hex)

    @property
    def undeformed(self) -> QColor:
        return _c(self.undeformed_hex)

    @property
    def accent(self) -> QColor:
        return _c(self.accent_hex)

    @property
    def accent_soft(self) -> QColor:
        return _c(self.accent_soft_hex)

    @property
    def warning(self) -> QColor:
        return _c(self.warning_hex)

    @property
    def error(self) -> QColor:
        return _c(self.error_hex)

    @property
    def grid(self) -> QColor:
        return _c(self.grid_hex)

    @property
    def label(self) -> QColor:
        return _c(self.label_hex)

    def trace(self, i: int) -> QColor:
        """The i-th trace colour (cycles)."""
        return _c(self.trace_hexes[i % len(self.trace_hexes)])

    def energy_color(self, fraction: float) -> QColor:
        """Colour of an energy share ``fraction`` in [0, 1] (clamped), linear between ramp stops."""
        try:
            f = float(fraction)
        except (TypeError, ValueError):
            f = 0.0
        if f != f:  # NaN: show as "no share" rather than failing a paint
            f = 0.0
        f = min(1.0, max(0.0, f))
        stops = [QColor(h) for h in self.energy_stops]
        pos = f * (len(stops) - 1)
        i = min(int(pos), len(stops) - 2)
        t = pos - i
        a, b = stops[i], stops[i + 1]
        return QColor(round(a.red() + (b.red() - a.red()) * t),
                      round(a.green() + (b.green() - a.green()) * t),
                      round(a.blue() + (b.blue() - a.blue()) * t))


LIGHT = Style(
    name="light",
    background_hex="#fbfaf7",      # warm paper
    panel_hex="#f0eee9",
    ink_hex="#27313b",             # slate ink
    ink_soft_hex="#5b6670",
    mass_fill_hex="#cfd9e2",       # pale steel
    mass_edge_hex="#27313b",
    junction_hex="#27313b",
    anchor_hex="#27313b",
    undeformed_hex="#b7bbbf",
    accent_hex="#136f7a",          # deep teal: the selected mode
    accent_soft_hex="#cfe7e9",
    warning_hex="#b35c00",         # amber-brown, readable on paper
    error_hex="#a8322d",
    grid_hex="#e6e3dc",
    label_hex="#3a444e",
    energy_stops=("#efe6d2", "#e3b65c", "#cf7a2e", "#9c2f25"),
    trace_hexes=("#136f7a", "#b35c00", "#5a4a9c", "#3f7f2e", "#a8322d", "#6b6b6b"),
    dark=False,
)

DARK = Style(
    name="dark",
    background_hex="#1d2227",
    panel_hex="#262c32",
    ink_hex="#d9dfe4",
    ink_soft_hex="#9aa5ae",
    mass_fill_hex="#46576a",
    mass_edge_hex="#d9dfe4",
    junction_hex="#d9dfe4",
    anchor_hex="#c4ccd3",
    undeformed_hex="#5d656d",
    accent_hex="#4cc3cc",
    accent_soft_hex="#234a4f",
    warning_hex="#f0a444",
    error_hex="#ee7a70",
    grid_hex="#2c3339",
    label_hex="#c8d0d7",
    energy_stops=("#3a3a35", "#a98436", "#d9782e", "#f0543e"),
    trace_hexes=("#4cc3cc", "#f0a444", "#a99cf0", "#8fd07a", "#ee7a70", "#b0b0b0"),
    dark=True,
)


def is_dark_palette(palette: QPalette | None = None) -> bool:
    """True when the (application's) window colour is dark."""
    if palette is None:
        app = QGuiApplication.instance()
        if app is None:
            return False
        palette = QGuiApplication.palette()
    return palette.color(QPalette.ColorRole.Window).lightnessF() < 0.45


def current_style(palette: QPalette | None = None) -> Style:
    """``DARK`` when the system palette is dark, else ``LIGHT``."""
    return DARK if is_dark_palette(palette) else LIGHT


__all__ = ["Style", "LIGHT", "DARK", "current_style", "is_dark_palette"]


def restyle(widget, css: str) -> None:
    """Set ``widget``'s style sheet only when it changes: each call makes Qt polish the widget
    again and lay out its panel anew (25-110 ms a solve for a warnings label on a 1000-mass
    model, bench/edit_bench.py)."""
    if widget.styleSheet() != css:
        widget.setStyleSheet(css)
