"""Plot paint benchmark: what a curve's pen width costs when a plot is repainted.

Run:  .venv/bin/python bench/plot_paint_bench.py [--repeats N]
(offscreen; no screen needed)

Every edit repaints the curves a panel shows. Two shapes the window draws, in a pyqtgraph
PlotWidget of 760 x 330 px with antialiasing on (as the window's plots have it):

- *sweep*: the Tune panel's plot, every mode of a 200-mode model against 41 stiffness values,
  drawn as groups of 25 curves joined by NaN (as ``TunePanel._draw_sweep`` does);
- *response*: three response curves of 1,500 points each on log axes (the Response panel after
  its per-pixel-column reduction).

Each is painted whole (``QWidget.grab``) with pens 1, 1.5 and 2 px wide; the median of the
repeats is printed with its ratio to the same plot with a 1 px pen and to a bare grab of an empty
PlotWidget of the same size, measured in the same run. ``app.drawing.style.CURVE_WIDTH`` is the
width the window uses for data curves. Last, a plot with titled axes painted with the axes replayed
from pyqtgraph's recording and from the pixmap the window's axes keep
(``app.drawing.plot_axes.TrueValueAxis``), and an edit's repaint of the changed region only (Qt
clips every curve) against the whole viewport (``app.drawing.plot_axes.paint_whole``): the Tune
plot of the whole window, 200-mass chain.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

import gui_common as gc  # noqa: E402

SIZE = (760, 330)
WIDTHS = (1.0, 1.5, 2.0)


def _sweep_data(n_modes: int = 200, points: int = 41):
    values = np.logspace(2, 4, points)
    F = np.sqrt(np.outer(values, np.linspace(0.1, 10.0, n_modes)))
    out = []
    for j in range(0, n_modes, 25):
        G = F[:, j:j + 25]
        xs = np.tile(np.append(np.log10(values), np.nan), G.shape[1])
        ys = np.vstack([G, np.full((1, G.shape[1]), np.nan)]).T.ravel()
        out.append((xs, ys))
    return out


def _response_data(points: int = 1500):
    x = np.logspace(0, 3, points)
    out = []
    for k in range(3):
        r = x / (50.0 * (k + 1))
        y = 1.0 / np.abs(1.0 - r ** 2 + 0.04j * r)
        out.append((np.log10(x), np.log10(y)))
    return out


def grab_time(curves, width, repeats: int) -> float:
    import pyqtgraph as pg

    w = pg.PlotWidget()
    w.resize(*SIZE)
    w.show()
    for xs, ys in curves:
        w.plot(xs, ys, pen=pg.mkPen("k", width=width) if width else None, connect="finite")
    app = gc.app()
    for _ in range(5):
        app.processEvents()
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        w.grab()
        times.append(time.perf_counter() - t0)
    w.close()
    w.deleteLater()
    app.processEvents()
    return statistics.median(times)


def window_plot(args) -> list[str]:
    """The Tune plot of the whole window (run first: the paint timer must be in place before
    any pyqtgraph view exists)."""
    import pyqtgraph as pg

    # the window's Tune plot (200-mass chain, every mode swept): (a) the axes replayed from
    # pyqtgraph's recording against the pixmap the window's axes keep; (b) an edit's paints of
    # the plot (a spring's k typed anew) when the view repaints the changed region only
    # (pyqtgraph's default: every curve drawn through the region's clip) against the whole
    # viewport (app.drawing.plot_axes.paint_whole)
    from PySide6.QtWidgets import QGraphicsItem, QGraphicsView

    out: list[str] = []
    painted: list[float] = []
    original = pg.GraphicsView.paintEvent

    def timed_paint(view, event):
        t0 = time.perf_counter()
        try:
            return original(view, event)
        finally:
            if getattr(view, "_bench_timed", False):
                painted.append(time.perf_counter() - t0)

    pg.GraphicsView.paintEvent = timed_paint
    win = gc.full_window()
    win.document.new(model=gc.chain_model(200))
    gc.settle(win)
    from PySide6.QtWidgets import QDockWidget

    win.findChild(QDockWidget, "dock_tune").raise_()        # in front, as on a first start
    gc.settle(win)
    tp = win.tune_panel
    plot = tp.plot
    pi = plot.getPlotItem()
    plot._bench_timed = True
    app = gc.app()

    def grabbed(mode) -> float:
        for side in ("left", "bottom", "top", "right"):
            pi.getAxis(side).setCacheMode(mode)
        plot.grab()
        times = []
        for _ in range(args.repeats):
            t0 = time.perf_counter()
            plot.grab()
            times.append(time.perf_counter() - t0)
        return statistics.median(times)

    plain = grabbed(QGraphicsItem.CacheMode.NoCache)
    cached = grabbed(QGraphicsItem.CacheMode.DeviceCoordinateCache)
    out.append(f"the window's Tune plot (200-mass chain): axes replayed {plain * 1e3:.2f} ms,"
               f" axes from their pixmap {cached * 1e3:.2f} ms ({plain / cached:.1f}x)")

    model = win.document.model
    spring = model.springs[len(model.springs) // 2]

    def edit_paint(mode) -> float:
        """Paint time of the Tune plot per edit (a spring's k typed anew, as in
        bench/edit_bench.py), summed over the edit's paints, median over the edits."""
        plot.setViewportUpdateMode(mode)
        per_edit = []
        for i in range(args.repeats):
            painted.clear()
            k = spring.k * (1.0 + 0.01 * (i % 2))
            win.document.set_element(spring.id, k=k)
            gc.settle(win)
            per_edit.append(sum(painted))
        return statistics.median(per_edit)

    whole = edit_paint(QGraphicsView.ViewportUpdateMode.FullViewportUpdate)
    region = edit_paint(QGraphicsView.ViewportUpdateMode.MinimalViewportUpdate)
    out.append(f"an edit's paints of it: changed region only {region * 1e3:.2f} ms, whole"
               f" viewport {whole * 1e3:.2f} ms ({region / whole:.1f}x)")
    pg.GraphicsView.paintEvent = original
    win.solver.shutdown()
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=15)
    args = ap.parse_args(argv)
    gc.app()
    window_lines = window_plot(args)
    import pyqtgraph as pg

    from app.drawing.style import CURVE_WIDTH

    pg.setConfigOptions(antialias=True)
    empty = grab_time([], 0, args.repeats)
    print(f"Plot paint, {SIZE[0]}x{SIZE[1]} px, antialiased, offscreen, medians of {args.repeats}")
    print(f"bare grab of an empty plot: {empty * 1e3:.2f} ms")
    print(f"{'shape':>9} | {'pen':>6} | {'paint':>9} | {'x 1 px':>7} | {'x empty':>8}")
    print("-" * 52)
    for name, curves in (("sweep", _sweep_data()), ("response", _response_data())):
        times = {wd: grab_time(curves, wd, args.repeats) for wd in WIDTHS}
        for wd, t in times.items():
            print(f"{name:>9} | {wd:4.1f}px | {t * 1e3:6.2f} ms | {t / times[1.0]:7.1f} |"
                  f" {t / empty:8.1f}")
    print(f"the window draws data curves {CURVE_WIDTH:g} px wide (app.drawing.style.CURVE_WIDTH)")
    for line in window_lines:
        print(line)


if __name__ == "__main__":
    main()
