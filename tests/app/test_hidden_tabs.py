"""Panels in a tab behind another do no work after an edit and catch up when their tab is clicked.

Issue 10 (speed): an edit updates every *visible* panel; the Tune sweep (40 solves) and the
Response curves of a hidden tab are computed only when the tab is shown. The numbers a panel
shows once its tab is clicked are checked against closed forms of the one-mass oscillator
(math: f = sqrt(k/m) / 2 pi; undamped base transmissibility |T| = 1 / |1 - r^2|, r = f / f_n;
Chopra, Dynamics of Structures, 3.6).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import solver
from app.results import offload
from app.docks.on_screen import on_screen
from solver.model import Anchor, Mass, Model, Spring


def _one_mass(k: float = 4000.0, m: float = 1.0) -> Model:
    return Model(kind="line", name="one", axis="x", masses=(Mass("m1", 0.3, 0.0, m),),
                 anchors=(Anchor("g", 0.0, 0.0),), springs=(Spring("s1", "g", "m1", k),))


def _click_tab(qtbot, window, text: str) -> None:
    from _screen import click_tab

    click_tab(qtbot, window, text)


def _settle(qtbot, window):
    assert window.solver.wait()
    qtbot.wait(30)


def _f_hz(k, m):
    return math.sqrt(k / m) / (2 * math.pi)


def test_hidden_tune_panel_sweeps_only_when_shown(qtbot, window, monkeypatch):
    """The Tune tab behind the Response tab runs no sweep after an edit; clicking its tab sweeps
    the edited model, and the mode curve at every swept value is the closed form of a mass on
    two parallel springs (f = sqrt((k1 + k2) / m) / 2 pi)."""
    model = _one_mass(k=4000.0).with_changes(put=[Spring("s2", "g", "m1", 1000.0)])
    window.document.new(model=model)
    _settle(qtbot, window)
    _click_tab(qtbot, window, "Tune")
    tp = window.tune_panel
    assert on_screen(tp) and tp.wait_sweep()
    picked, field = tp.element
    other = "s2" if picked == "s1" else "s1"
    _click_tab(qtbot, window, "Response")
    assert not on_screen(tp)
    calls = []    # the models swept, in this process or handed to the sweep worker process
    real, real_run = solver.sweep, offload.run
    monkeypatch.setattr(solver, "sweep", lambda *a, **k: calls.append(a) or real(*a, **k))
    monkeypatch.setattr(offload, "run", lambda fn, *a, **k: (
        calls.append(a) if fn in (offload.sweep, offload.sweep_point) else None)
        or real_run(fn, *a, **k))
    window.document.set_element(other, k=9000.0)
    _settle(qtbot, window)
    assert calls == [] and not tp.sweep_pending
    _click_tab(qtbot, window, "Tune")
    assert tp.wait_sweep()
    assert calls and all(a[0].element(other).k == 9000.0 for a in calls)   # the edited model
    sw = tp.sweep_result
    expected = [_f_hz(v + 9000.0, 1.0) for v in sw.values]
    assert np.allclose(sw.frequencies_hz[:, 0], expected, rtol=1e-9, atol=0)


def test_hidden_response_panel_computes_only_when_shown(qtbot, window):
    """The Response tab behind the Tune tab keeps its curves after an edit (nothing computed or
    drawn); clicking its tab draws the edited model's transmissibility, which is the closed
    form of the undamped one-mass oscillator."""
    window.document.new(model=_one_mass(k=4000.0))
    _click_tab(qtbot, window, "Response")        # Tune is in front on a first start
    _settle(qtbot, window)
    rp = window.response_panel
    rp.wait()
    before = rp.plotted_data()
    assert before and on_screen(rp)
    _click_tab(qtbot, window, "Tune")
    assert not on_screen(rp)
    window.document.set_element("s1", k=16000.0)
    _settle(qtbot, window)
    same = rp.plotted_data()
    assert len(same) == len(before)
    assert all(np.array_equal(a[2], b[2], equal_nan=True) for a, b in zip(same, before))
    _click_tab(qtbot, window, "Response")
    assert rp.wait()
    (label, f, mag), = rp.plotted_data()
    fn = _f_hz(16000.0, 1.0)
    r = f / fn
    away = np.abs(r - 1) > 0.05          # off the resonance the closed form is well conditioned
    assert np.allclose(mag[away], 1 / np.abs(1 - r[away] ** 2), rtol=1e-6, atol=0)


def test_hidden_sensitivity_table_fills_when_shown(qtbot, window):
    """The Sensitivity tab behind another fills nothing after an edit; clicking its tab shows
    the edited model's values: for one mass on one spring, (k/f) df/dk = 1/2 (math: f is
    proportional to sqrt(k))."""
    window.document.new(model=_one_mass(k=4000.0))
    _settle(qtbot, window)
    table = window.sensitivity_table
    _click_tab(qtbot, window, "Sensitivity")
    assert on_screen(table)
    assert table.model._freqs[0] == pytest.approx(_f_hz(4000.0, 1.0), rel=1e-12)
    _click_tab(qtbot, window, "Response")
    window.document.set_element("s1", k=16000.0)
    _settle(qtbot, window)
    assert table.model._freqs[0] == pytest.approx(_f_hz(4000.0, 1.0), rel=1e-12)   # untouched
    _click_tab(qtbot, window, "Sensitivity")
    assert table.model._freqs[0] == pytest.approx(_f_hz(16000.0, 1.0), rel=1e-12)
    assert table.cell_value("s1", "k", 1) == pytest.approx(0.5, rel=1e-9)


def test_report_from_the_window_shows_the_current_models_response_when_the_tab_is_hidden(
        qtbot, window, tmp_path):
    """A damped model's report takes the Response panel's curves: with the Response tab behind
    Tune, an edit then Export report must report the edited model, not the curves drawn for
    the one before. The peak of the displacement transmissibility of the one-mass oscillator
    lies at f_n sqrt(sqrt(1 + 8 zeta^2) - 1) / (2 zeta) (Rao, Mechanical Vibrations, 9.2,
    from memory; ~f_n for light damping) with f_n = sqrt(k/m) / 2 pi (math)."""
    zeta = 0.05
    model = _one_mass(k=4000.0).with_changes(damping=solver.Damping(model="modal", ratio=zeta))
    window.document.new(model=model)
    _click_tab(qtbot, window, "Response")
    _settle(qtbot, window)
    window.response_panel.wait()
    _click_tab(qtbot, window, "Tune")
    assert not on_screen(window.response_panel)
    window.document.set_element("s1", k=16000.0)
    _settle(qtbot, window)
    assert window.export_report(str(tmp_path / "r.png"))
    resp = window.response_panel.response
    curve = resp.curves[0]
    mag = curve.magnitude
    f_peak = resp.freqs_hz[int(np.argmax(mag))]
    f_n = math.sqrt(16000.0) / (2 * math.pi)
    expect = f_n * math.sqrt(math.sqrt(1 + 8 * zeta ** 2) - 1) / (2 * zeta)
    assert f_peak == pytest.approx(expect, rel=0.02)
    assert abs(f_peak - math.sqrt(4000.0) / (2 * math.pi)) > 0.3 * f_n   # not the old model
    # the same for the Response CSV export from the menu, after another edit
    window.document.set_element("s1", k=36000.0)
    _settle(qtbot, window)
    window.response_panel.export_csv(str(tmp_path / "r.csv"))
    resp = window.response_panel.response
    f_peak = resp.freqs_hz[int(np.argmax(resp.curves[0].magnitude))]
    assert f_peak == pytest.approx(expect * 1.5, rel=0.02)       # f_n ~ sqrt(k): x1.5


def test_hidden_absorber_panel_sizes_only_when_shown(qtbot, window, monkeypatch):
    """The Absorber tab behind another sizes nothing after an edit (four frequency sweeps a
    design); clicking its tab sizes the edited model, and the design follows Den Hartog's
    tuning on the one-mass oscillator: the modal mass is the mass itself and the absorber is
    tuned to f_n / (1 + mu) with f_n = sqrt(k/m) / 2 pi (REFERENCES.md section 5; math)."""
    import solver.absorber as absorber

    window.document.new(model=_one_mass(k=4000.0, m=2.0))
    _settle(qtbot, window)
    _click_tab(qtbot, window, "Absorber")
    panel = window.absorber_panel
    assert panel.wait() and panel.design is not None
    _click_tab(qtbot, window, "Response")
    assert not on_screen(panel)
    calls = []
    real = absorber.size_absorber
    monkeypatch.setattr(absorber, "size_absorber", lambda *a, **k: calls.append(a) or real(*a, **k))
    window.document.set_element("s1", k=9000.0)
    _settle(qtbot, window)
    assert calls == []
    _click_tab(qtbot, window, "Absorber")
    assert panel.wait() and calls and calls[-1][0].element("s1").k == 9000.0
    d = panel.design
    assert d.primary_mass == pytest.approx(2.0, rel=1e-9)
    mu = d.mass_ratio
    assert d.absorber_hz == pytest.approx(_f_hz(9000.0, 2.0) / (1 + mu), rel=1e-9)
