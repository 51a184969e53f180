"""Slider-drag benchmark: how many updates per second the Tune panel's slider gives.

Run:  .venv/bin/python bench/tune_bench.py      (offscreen; no screen needed)

For chains of 10, 50 and 200 masses, the Tune panel's slider is moved programmatically one step
at a time. One step ("frame") is: the model edit through the document (one merged undo command),
the panel's synchronous solve (solver.analyse: modes + energy + sensitivity) handed to the solve
service, every view's update from the results, and a synchronous repaint of the canvas and the
modes table. Two set-ups:

- *tune path*: Document + SolveService + canvas scene/view + modes table + TunePanel only;
- *full window*: the whole MainWindow (motion view, response panel, sensitivity table, tint too).

Bare solve is ``solver.modes(model)`` on the same models in the same run. Medians over the steps;
the ratio is frame time / bare solve time.
"""

from __future__ import annotations

import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import numpy as np  # noqa: E402
from PySide6.QtCore import QSettings  # noqa: E402
from PySide6.QtWidgets import QApplication, QWidget, QVBoxLayout  # noqa: E402

import solver  # noqa: E402
from solver import Anchor, Mass, Model, Spring  # noqa: E402

SIZES = (10, 50, 200)
STEPS = 40
#: The full window is timed only up to this size: at 200 masses its other panels (response panel
#: recompute on every result) take over a minute per step, which is a finding, not a frame rate.
FULL_WINDOW_MAX = 200
FULL_STEPS = 20


def chain_model(n: int) -> Model:
    rng = np.random.default_rng(3)
    masses = tuple(Mass(f"m{i}", 0.3 * (i + 1), 0.0, float(rng.uniform(0.5, 3.0)))
                   for i in range(n))
    springs = [Spring("s0", "g", "m0", 5e4)]
    springs += [Spring(f"s{i}", f"m{i - 1}", f"m{i}", float(rng.uniform(2e4, 8e4)))
                for i in range(1, n)]
    return Model(kind="line", name=f"chain of {n}", masses=masses,
                 anchors=(Anchor("g", 0.0, 0.0),), springs=tuple(springs))


def bare_solve(model, repeats=30) -> float:
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        solver.modes(model)
        times.append(time.perf_counter() - t)
    return statistics.median(times)


class TunePath(QWidget):
    """The views a drag must keep current, nothing else."""

    def __init__(self):
        super().__init__()
        from app.canvas import CanvasView, ModelScene
        from app.document.document import Document
        from app.docks.modes_table import ModesTable
        from app.document.solve_service import SolveService
        from app.docks.tune_panel import TunePanel

        self.document = Document(parent=self)
        self.solver = SolveService(self.document, parent=self)
        self.scene = ModelScene(self.document, self)
        self.view = CanvasView(self.scene)
        self.modes_table = ModesTable()
        self.solver.results_ready.connect(self.modes_table.set_analysis)
        self.tune_panel = TunePanel(self.document, self.solver)
        lay = QVBoxLayout(self)
        for w in (self.view, self.modes_table, self.tune_panel):
            lay.addWidget(w)
        self.resize(1200, 900)


def full_window():
    from app.main_window import MainWindow

    ini = Path(tempfile.mkdtemp()) / "settings.ini"
    w = MainWindow(settings=QSettings(str(ini), QSettings.IniFormat),
                   recovery_folder=Path(tempfile.mkdtemp()))
    w._ask_save_changes = lambda: "discard"
    w.resize(1400, 900)
    return w


def drag_frames(win, model, app, steps=STEPS) -> tuple[float, int]:
    """Median seconds per slider step and the undo entries the whole drag left."""
    win.document.new(model=model)
    win.solver.wait()
    win.show()
    app.processEvents()
    panel = win.tune_panel
    panel.select_element(f"s{len(model.masses) // 2}", "k")
    slider = panel.slider
    panel._on_slider_pressed()   # as on a mouse press: the steps below are one live drag
    start = slider.value()
    times = []
    for i in range(1, steps + 1):
        t = time.perf_counter()
        slider.setValue(start + (i % 40) * 5 + 1)
        win.view.viewport().repaint()
        win.modes_table.view.viewport().repaint()
        app.processEvents()
        times.append(time.perf_counter() - t)
    panel._on_slider_released()
    win.solver.wait()
    return statistics.median(times), win.document.undo_stack.count()


def main():
    app = QApplication.instance() or QApplication([])
    rows = []
    for n in SIZES:
        model = chain_model(n)
        bare = bare_solve(model)
        t_path, undo_path = drag_frames(TunePath(), model, app)
        t_full = undo_full = None
        if n <= FULL_WINDOW_MAX:
            win = full_window()
            t_full, undo_full = drag_frames(win, model, app, FULL_STEPS)
            win.solver.shutdown()
            win.hide()
        print(f"  done {n} masses", file=sys.stderr, flush=True)
        rows.append((n, bare, t_path, t_full, undo_path, undo_full))
    print(f"Tune slider drag, offscreen, {STEPS} steps per case, medians")
    print(f"{'masses':>6} | {'bare solve':>10} | {'tune path':>9} {'fps':>6} {'ratio':>6} |"
          f" {'full window':>11} {'fps':>6} {'ratio':>6} | undo entries")
    print("-" * 92)
    for n, bare, tp, tf, up, uf in rows:
        full = (f"{tf * 1e3:>8.1f} ms {1 / tf:>6.2f} {tf / bare:>6.0f}" if tf is not None
                else f"{'not run':>11} {'':>6} {'':>6}")
        print(f"{n:>6} | {bare * 1e3:>7.3f} ms | {tp * 1e3:>6.2f} ms {1 / tp:>6.1f} {tp / bare:>6.0f} |"
              f" {full} | {up} / {uf if uf is not None else '-'}")
    print("ratio = frame time / bare solver.modes time; a frame = edit + solve + every view"
          " updated + canvas and modes table repainted")


if __name__ == "__main__":
    main()
