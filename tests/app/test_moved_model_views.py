"""A line model moved on the page keeps its results (the solve service hands them out again):
the views that skip their update then (the modes table, the Tune cursor dots) must still show
the numbers of the model on the page, and take new ones at the next value edit."""

import numpy as np
import scipy.linalg

from solver.model import Anchor, Excitation, Mass, Model, Spring


def _chain(k2=500.0):
    return Model(kind="line", name="moved", axis="x",
                 masses=(Mass("m1", 0.2, 0.0, 2.0), Mass("m2", 0.4, 0.0, 1.0)),
                 anchors=(Anchor("g1", 0.0, 0.0),),
                 springs=(Spring("s1", "g1", "m1", 1000.0), Spring("s2", "m1", "m2", k2)),
                 excitations=(Excitation("e", "speed", label="Fan", rpm=180.0, orders=(1.0,)),),
                 margin_percent=20.0)


def _reference_hz(k2):
    """math: the roots of det(K - w^2 M) = 0 of the two-mass chain, by scipy.linalg.eigh."""
    K = np.array([[1000.0 + k2, -k2], [-k2, k2]])
    return np.sqrt(scipy.linalg.eigh(K, np.diag([2.0, 1.0]), eigvals_only=True)) / (2 * np.pi)


def _dots(window):
    _x, y = window.tune_panel._cursor_dots.getData()
    return np.sort(np.asarray(y, float))


def _table(window):
    return np.array([r["frequency_hz"] for r in window.modes_table.rows()])


def test_views_after_a_move_and_after_a_value_edit(qtbot, window, monkeypatch):
    """math (scipy.linalg.eigh of K and M by hand): after a mass of a line model is moved, the
    modes table and the Tune cursor dots show the frequencies of the model on the page (the
    same as before the move: positions do not enter a line model) with no table refill; after
    a stiffness is then typed, both show the new model's frequencies; the dot inside the
    widened fan band (180 rpm, 3 Hz +- 20 %) is marked in the error colour before and after."""
    window.document.new(model=_chain())
    window.solver.wait()
    panel = window.tune_panel
    assert panel.select_element("s1", "k")
    assert panel.wait_sweep()
    qtbot.waitUntil(lambda: _dots(window).size == 2, timeout=5000)
    np.testing.assert_allclose(_table(window), _reference_hz(500.0), rtol=1e-10)
    np.testing.assert_allclose(_dots(window), _reference_hz(500.0), rtol=1e-10)
    refills = []
    table_model = window.modes_table._model
    table_model.dataChanged.connect(lambda *a: refills.append(a))
    window.document.move_nodes({"m2": (0.7, 0.3)})
    window.solver.wait()
    assert window.modes_table._analysis.model is window.document.model
    assert refills == []
    np.testing.assert_allclose(_table(window), _reference_hz(500.0), rtol=1e-10)
    np.testing.assert_allclose(_dots(window), _reference_hz(500.0), rtol=1e-10)
    window.document.set_element("s2", k=800.0)
    window.solver.wait()
    assert refills
    np.testing.assert_allclose(_table(window), _reference_hz(800.0), rtol=1e-10)
    qtbot.waitUntil(lambda: np.allclose(_dots(window), _reference_hz(800.0), rtol=1e-10),
                    timeout=5000)
    # the fan band 2.4-3.6 Hz: which dots are in it, by the reference frequencies
    brushes = window.tune_panel._cursor_dots.opts["symbolBrush"]
    in_band = [2.4 <= f <= 3.6 for f in _reference_hz(800.0)]
    if isinstance(brushes, list):
        colours = [b.color().name() for b in brushes]
        assert len(set(colours)) == (2 if any(in_band) and not all(in_band) else 1)
    else:
        assert not any(in_band)
