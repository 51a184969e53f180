"""Panels behind tabs are built when their tab is first shown, and are then the panels they would
have been from the start: wired to the document and the solve service, showing the model open now.

Frequencies are checked against scipy.linalg.eigh on the fan drive's inertias and shaft
stiffnesses written out by hand (torsion chain, math), crossing speeds against N = 60 f / n
(REFERENCES.md section 10).
"""

from pathlib import Path

import pytest
from PySide6.QtWidgets import QDockWidget

from _models_for_views import fan_drive_frequencies
from tests.app._screen import click_tab

ROOT = Path(__file__).resolve().parents[2]
FAN = ROOT / "assets" / "examples" / "fan_drive.json"
SHELF = ROOT / "assets" / "examples" / "shaker_fixture.json"   # a band only, no speed
LAZY = ("dock_sources", "dock_interference", "dock_loads", "dock_study", "dock_absorber")


def _open(qtbot, window, path):
    assert window.open_path(str(path), ask=False)
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model == window.document.model, timeout=8000)


def _built(window):
    return {window.findChild(QDockWidget, n).objectName() for n in LAZY
            if window.findChild(QDockWidget, n).widget() in window.built_panels()}


def test_tabs_behind_others_are_built_on_first_show(qtbot, window):
    """After the first layout (Tune in front) no panel behind a tab has been built; clicking the
    Loads tab builds the Loads panel, puts it in its dock and on screen, and nothing else."""
    tune = window.findChild(QDockWidget, "dock_tune")
    qtbot.waitUntil(lambda: not tune.widget().visibleRegion().isEmpty(), timeout=3000)
    qtbot.wait(50)
    assert _built(window) == set()
    click_tab(qtbot, window, "Loads")
    dock = window.findChild(QDockWidget, "dock_loads")
    qtbot.waitUntil(lambda: "dock_loads" in _built(window), timeout=3000)
    assert _built(window) == {"dock_loads"}
    assert dock.widget() is window.loads_panel
    qtbot.waitUntil(lambda: not window.loads_panel.visibleRegion().isEmpty(), timeout=3000)


def test_a_panel_built_after_open_shows_the_open_model(qtbot, window):
    """The interference diagram, first shown after the fan drive was opened, draws the order 2
    crossing of the first torsional mode at 60 f2 / 2 rpm (f2 from scipy, rtol 1e-9); the Sources
    editor shows the first source; the Absorber offers the two elastic modes at scipy's
    frequencies."""
    _open(qtbot, window, FAN)
    assert _built(window) == set()
    f = fan_drive_frequencies()
    click_tab(qtbot, window, "Interference diagram")
    qtbot.waitUntil(lambda: "dock_interference" in _built(window), timeout=3000)
    panel = window.interference_panel
    qtbot.waitUntil(lambda: panel.data is not None, timeout=5000)
    (c,) = panel.data.in_range
    assert c.order == 2.0 and c.rpm == pytest.approx(60 * f[1] / 2, rel=1e-9)

    click_tab(qtbot, window, "Sources")
    qtbot.waitUntil(lambda: "dock_sources" in _built(window), timeout=3000)
    sp = window.sources_panel
    first = window.document.model.excitations[0]
    assert sp.current_id == first.id
    assert sp.field("label").text() == first.label

    click_tab(qtbot, window, "Absorber")
    qtbot.waitUntil(lambda: "dock_absorber" in _built(window), timeout=3000)
    combo = window.absorber_panel.mode_combo
    assert [combo.itemData(i) for i in range(combo.count())] == [2, 3]
    for i, fi in zip(range(combo.count()), f[1:]):
        assert f"({fi:.4g} Hz)" in combo.itemText(i)


def test_another_model_after_a_lazy_build_still_gets_its_results(qtbot, window):
    """A panel built late still clears before the window hands it the new model's results (a
    small model is solved inside the signal that opens it): open the shelf (no speed source:
    no diagram), then the fan drive again: its crossing is drawn (60 f2 / 2 rpm, scipy)."""
    _open(qtbot, window, FAN)
    click_tab(qtbot, window, "Interference diagram")
    qtbot.waitUntil(lambda: "dock_interference" in _built(window), timeout=3000)
    panel = window.interference_panel
    qtbot.waitUntil(lambda: panel.data is not None, timeout=5000)
    _open(qtbot, window, SHELF)
    qtbot.waitUntil(lambda: panel.data is None or not panel.data.in_range, timeout=5000)
    _open(qtbot, window, FAN)
    qtbot.waitUntil(lambda: panel.data is not None and len(panel.data.in_range) == 1,
                    timeout=5000)
    assert panel.data.in_range[0].rpm == pytest.approx(60 * fan_drive_frequencies()[1] / 2,
                                                       rel=1e-9)


def test_closing_shuts_down_only_what_was_built(qtbot, window):
    """Closing the window builds no panel just to shut it down."""
    window.close()
    assert _built(window) == set()
