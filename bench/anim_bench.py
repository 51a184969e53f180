"""Animation benchmark: frames per second of the Motion panel's mode animation, whole window.

Run:  .venv/bin/python bench/anim_bench.py [--sizes 10,50,200,1000] [--seconds S]
(offscreen; no screen needed)

For chains of 10, 50, 200 and 1000 masses the whole MainWindow is shown, mode 1 is animated in
the Motion panel (its own timer, Play) and the paints of the motion view are counted over a few
seconds of wall-clock time. Free-response playback is timed the same way. The baseline, in the
same run: an empty widget of the motion view's size repainted from a QTimer at the display's
frame interval (the screen's refresh rate; 60 Hz offscreen), which shows the frame rate the event
loop itself allows on this machine now. Also printed: the median cost of one frame (tick +
paint) in ms, and the ratio fps / baseline fps. Goal: the display rate (60 fps) up to 200 masses.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

import gui_common as gc  # noqa: E402
from PySide6.QtCore import QEvent, QObject, QTimer  # noqa: E402
from PySide6.QtWidgets import QWidget  # noqa: E402


class FrameCounter(QObject):
    """Counts the paint events of one widget and times each (the paint itself)."""

    def __init__(self, widget):
        super().__init__()
        self.widget = widget
        self.stamps: list[float] = []
        widget.installEventFilter(self)

    def eventFilter(self, obj, event):  # noqa: N802
        if obj is self.widget and event.type() == QEvent.Type.Paint:
            self.stamps.append(time.perf_counter())
        return False

    def fps(self, t0: float, t1: float) -> float:
        n = sum(1 for s in self.stamps if t0 <= s <= t1)
        return n / (t1 - t0)


def run_for(seconds: float):
    qapp = gc.app()
    end = time.perf_counter() + seconds
    while time.perf_counter() < end:
        qapp.processEvents()
        time.sleep(0.0005)


def display_interval_ms() -> int:
    screen = gc.app().primaryScreen()
    rate = screen.refreshRate() if screen is not None else 60.0
    return max(1, int(round(1000.0 / (rate if rate > 0 else 60.0))))


def baseline_fps(size, seconds: float) -> float:
    w = QWidget()
    w.resize(size)
    w.show()
    counter = FrameCounter(w)
    timer = QTimer()
    timer.setInterval(display_interval_ms())
    timer.timeout.connect(w.update)
    run_for(0.2)
    timer.start()
    t0 = time.perf_counter()
    run_for(seconds)
    t1 = time.perf_counter()
    timer.stop()
    w.close()
    return counter.fps(t0, t1)


def frame_costs(panel, frames: int = 30) -> float:
    """Median ms of one animation frame done synchronously: tick (new positions) + repaint."""
    times = []
    for _ in range(frames):
        t = time.perf_counter()
        panel._on_tick()
        panel.view.repaint()
        times.append(time.perf_counter() - t)
    return statistics.median(times) * 1e3


def animate(win, model, seconds: float, free: bool) -> tuple[float, float]:
    """fps of the motion view while playing, and the median frame cost in ms."""
    win.document.new(model=model)
    gc.settle(win)
    panel = win.motion_panel
    if free:
        # a displaced middle mass, so the free response moves
        mid = model.masses[len(model.masses) // 2].id
        win.document.set_initial(mid, model.directions[0], displacement=0.01)
        gc.settle(win)
        panel.show_free_response()
    else:
        panel.show_mode(1)
    gc.settle(win)
    counter = FrameCounter(panel.view)
    panel.play()
    run_for(0.3)                        # first frames (free response: its first table)
    t0 = time.perf_counter()
    run_for(seconds)
    t1 = time.perf_counter()
    panel.pause()
    cost = frame_costs(panel)
    counter.widget.removeEventFilter(counter)
    return counter.fps(t0, t1), cost


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="10,50,200,1000")
    ap.add_argument("--seconds", type=float, default=2.0)
    args = ap.parse_args(argv)
    sizes = [int(s) for s in args.sizes.split(",") if s]
    gc.app()
    win = gc.full_window()
    gc.settle(win)
    base = baseline_fps(win.motion_panel.view.size(), args.seconds)
    rows = []
    for n in sizes:
        model = gc.chain_model(n)
        mode_fps, mode_cost = animate(win, model, args.seconds, free=False)
        free_fps, free_cost = animate(win, model, args.seconds, free=True)
        rows.append((n, mode_fps, mode_cost, free_fps, free_cost))
        print(f"  done {n}", file=sys.stderr, flush=True)
    win.solver.shutdown()
    print(f"Motion panel animation, whole window, offscreen, {args.seconds:g} s per case")
    print(f"baseline: empty widget of the view's size on a {display_interval_ms()} ms timer:"
          f" {base:.1f} fps")
    print(f"{'masses':>6} | {'mode fps':>8} {'x base':>6} {'frame':>8} |"
          f" {'free fps':>8} {'x base':>6} {'frame':>8}")
    print("-" * 64)
    for n, mf, mc, ff, fc in rows:
        print(f"{n:>6} | {mf:8.1f} {mf / base:6.2f} {mc:6.2f}ms | {ff:8.1f} {ff / base:6.2f}"
              f" {fc:6.2f}ms")
    print("frame = one tick + synchronous repaint of the motion view, median; goal: the display"
          " rate (60 fps) up to 200 masses")


if __name__ == "__main__":
    main()
