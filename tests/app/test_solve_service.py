"""Solve service: when and where a model is solved, and that what comes back is current.

References: the two-mass chain's natural frequencies are the roots of det(K - w^2 M) = 0, checked
with scipy.linalg.eigh(K, M) built by hand (REFERENCES.md section 10), rtol 1e-10.
"""

import time

import numpy as np
import pytest
import scipy.linalg

from app.document import solve_service
from app.document.document import Document
from app.document.solve_service import SolveService


def _reference_hz(k1, k2, m1=2.0, m2=1.0):
    K = np.array([[k1 + k2, -k2], [-k2, k2]])
    M = np.diag([m1, m2])
    return np.sqrt(scipy.linalg.eigh(K, M, eigvals_only=True)) / (2 * np.pi)


def _frequencies(analysis):
    return np.asarray(analysis.modal.frequencies_hz, float)


def test_single_edit_solved_inside_the_edit(qtbot, two_mass_model):
    """common practice: a lone edit of a small model needs no debounce wait; with ``immediate``
    its results are delivered before the edit call returns, for the document's own model."""
    doc = Document(two_mass_model)
    service = SolveService(parent=doc)
    got = []
    service.results_ready.connect(got.append)
    service.attach(doc, immediate=True)
    assert got and got[-1].model is doc.model
    qtbot.wait(2 * solve_service.DEBOUNCE_MS)     # a pause: the next edit is a single one
    doc.set_element("s2", k=4000.0)
    assert got[-1].model is doc.model and not service.pending
    np.testing.assert_allclose(_frequencies(got[-1]), _reference_hz(1000.0, 4000.0), rtol=1e-10)


def test_undo_reuses_the_earlier_analysis(qtbot, two_mass_model, monkeypatch):
    """common practice: undo gives back a model equal to one already solved; its results come
    back without a new solve, as results of the current model object (never marked stale)."""
    doc = Document(two_mass_model)
    service = SolveService(doc, parent=doc, immediate=True)
    got = []
    service.results_ready.connect(got.append)
    doc.set_element("s2", k=4000.0)
    assert service.wait(5000)
    qtbot.wait(2 * solve_service.DEBOUNCE_MS)
    calls = []
    real = solve_service.analyse
    monkeypatch.setattr(solve_service, "analyse", lambda m: calls.append(m) or real(m))
    doc.undo_stack.undo()
    assert not service.pending and calls == []
    assert got[-1].model is doc.model
    np.testing.assert_allclose(_frequencies(got[-1]), _reference_hz(1000.0, 500.0), rtol=1e-10)


def test_burst_of_edits_is_solved_once(qtbot, two_mass_model, monkeypatch):
    """common practice: edits in quick succession (keys held down) are debounced: one solve, of
    the last model. The debounce interval here is longer than the shipped one, so that the four
    edits fall inside it however slow the machine running the test is."""
    delay = 400
    doc = Document(two_mass_model)
    service = SolveService(doc, parent=doc, immediate=True, delay_ms=delay)
    assert service.wait(5000)
    calls = []
    real = solve_service.analyse
    monkeypatch.setattr(solve_service, "analyse", lambda m: calls.append(m) or real(m))
    qtbot.wait(2 * delay)
    for k in (600.0, 700.0, 800.0, 900.0):
        doc.set_element("s2", k=k)
    assert len(calls) <= 1            # the first may go at once; the rest wait for the pause
    assert service.wait(5000)
    assert calls[-1] is doc.model and len(calls) <= 2
    np.testing.assert_allclose(_frequencies(service.last_analysis), _reference_hz(1000.0, 900.0),
                               rtol=1e-10)


def test_edits_queued_behind_a_slow_solve_are_one_burst(qtbot, two_mass_model, monkeypatch):
    """common practice: keys held down while a solve inside the edit takes longer than the
    debounce interval (a few hundred DOFs on a slow machine): the edits that queued up meanwhile
    arrive together when it returns and are solved once, for the last model, rather than each
    on its own (the pause is counted from the end of the solve, not from the edit before)."""
    delay = 200                       # long enough that the edits in a row fall inside it
    doc = Document(two_mass_model)
    service = SolveService(doc, parent=doc, immediate=True, delay_ms=delay)
    assert service.wait(5000)
    calls = []
    real = solve_service.analyse

    def slow(m):
        calls.append(m)
        time.sleep(3 * delay / 1000.0)
        return real(m)

    monkeypatch.setattr(solve_service, "analyse", slow)
    qtbot.wait(2 * delay)
    for k in (600.0, 700.0, 800.0, 900.0):
        doc.set_element("s2", k=k)
    assert len(calls) == 1 and calls[0].element("s2").k == 600.0   # the first, inside its edit
    assert service.wait(5000)
    assert len(calls) == 2 and calls[-1] is doc.model
    np.testing.assert_allclose(_frequencies(service.last_analysis), _reference_hz(1000.0, 900.0),
                               rtol=1e-10)


def test_large_model_solved_in_worker_process_is_current(qtbot, two_mass_model):
    """A model above the thread limit (forced here with a limit of 0 DOFs) is solved in the
    worker process; the results are those of eigh(K, M) and belong to the document's own model
    object, so no view takes them for stale ones."""
    from app.results import offload

    doc = Document(two_mass_model)
    service = SolveService(doc, parent=doc, thread_dof_limit=0)
    try:
        got = []
        service.results_ready.connect(got.append)
        assert service.wait(120000)
        doc.set_element("s1", k=2500.0)
        assert service.pending
        assert service.wait(120000)
        assert got[-1].model is doc.model
        np.testing.assert_allclose(_frequencies(got[-1]), _reference_hz(2500.0, 500.0),
                                   rtol=1e-10)
    finally:
        service.shutdown()
        offload.shutdown()


def test_hidden_sensitivity_table_fills_when_shown(qtbot, two_mass_model):
    """math: (k/f) df/dk of a spring is half its strain-energy share (see test_tune_panel); the
    table takes new results only while shown, and shows the latest ones once it is."""
    from app.docks.sensitivity_table import SensitivityTable

    doc = Document(two_mass_model)
    service = SolveService(doc, parent=doc, immediate=True)
    table = SensitivityTable(service)
    qtbot.addWidget(table)
    table.hide()
    doc.set_element("s2", k=4000.0)
    assert table._has_due and table.model.rowCount() == 0    # not filled while hidden
    table.show()
    qtbot.waitExposed(table)
    assert not table._has_due and table.model.rowCount() == 4   # 2 springs, 2 masses
    a = service.last_analysis
    j = list(a.energy.spring_ids).index("s2")
    assert table.cell_value("s2", "k", 1) == pytest.approx(0.5 * a.energy.strain[0, j],
                                                           rel=1e-12)


def _same_results(got, fresh):
    """Every number and text of two analyses alike (frequencies, shapes, energy shares,
    sensitivities, zero modes, warnings)."""
    np.testing.assert_array_equal(got.modal.eigenvalues, fresh.modal.eigenvalues)
    np.testing.assert_array_equal(np.abs(got.modal.shapes), np.abs(fresh.modal.shapes))
    np.testing.assert_array_equal(got.energy.strain, fresh.energy.strain)
    np.testing.assert_array_equal(got.energy.kinetic, fresh.energy.kinetic)
    np.testing.assert_array_equal(got.sensitivity.dlambda_dk, fresh.sensitivity.dlambda_dk)
    assert [(z.mode, z.kind, z.cause) for z in got.modal.zero_modes] == \
        [(z.mode, z.kind, z.cause) for z in fresh.modal.zero_modes]
    assert got.warnings == fresh.warnings


def _solved_and_watched(model, qtbot, monkeypatch):
    """A document of ``model`` with a solve service (solved, a single edit away), the results
    it delivers and the models it solves from now on: (document, service, results, solved
    models)."""
    doc = Document(model)
    service = SolveService(doc, parent=doc, immediate=True)
    got = []
    service.results_ready.connect(got.append)
    assert service.wait(5000)
    qtbot.wait(2 * solve_service.DEBOUNCE_MS)
    calls = []
    real = solve_service.analyse
    monkeypatch.setattr(solve_service, "analyse", lambda m: calls.append(m) or real(m))
    return doc, service, got, calls


def test_a_line_model_moved_on_the_page_is_not_solved_again(qtbot, monkeypatch):
    """common practice: in a line model (and a torsion one) every spring acts along the one
    axis whatever the drawing, so K and M (and every result) do not depend on where the nodes
    are drawn. A drag of a mass gives back the results held for the model as it was: for the
    moved model object (its system too), the same as a fresh solve of the moved model, and the
    frequencies are those of scipy.linalg.eigh(K, M) built by hand. A free mass (a rigid mode
    with its text) is in the model, so the texts are compared too."""
    from solver import analyse as fresh_analyse
    from solver.model import Anchor, Mass, Model, Spring

    model = Model(kind="line", name="drag", axis="x",
                  masses=(Mass("m1", 0.2, 0.0, 2.0), Mass("m2", 0.4, 0.0, 1.0),
                          Mass("f1", 1.0, 0.5, 3.0), Mass("f2", 1.2, 0.5, 1.5)),
                  anchors=(Anchor("g1", 0.0, 0.0),),
                  springs=(Spring("s1", "g1", "m1", 1000.0), Spring("s2", "m1", "m2", 500.0),
                           Spring("s3", "f1", "f2", 800.0)))
    doc, service, got, calls = _solved_and_watched(model, qtbot, monkeypatch)
    doc.move_nodes({"m2": (0.9, -0.3), "g1": (-0.5, 0.2)})
    assert not service.pending and calls == []
    result = got[-1]
    assert result.model is doc.model and result.system.model is doc.model
    assert result.modal.system is result.system
    _same_results(result, fresh_analyse(doc.model))
    hz = np.sort(_frequencies(result))
    np.testing.assert_allclose(hz[hz > 1e-6], np.sort(np.concatenate([
        _reference_hz(1000.0, 500.0),
        [np.sqrt(800.0 * (3.0 + 1.5) / (3.0 * 1.5)) / (2 * np.pi)]])), rtol=1e-10)
    # a value edit is a new model: solved
    qtbot.wait(2 * solve_service.DEBOUNCE_MS)
    doc.set_element("s2", k=700.0)
    assert len(calls) == 1
    elastic = np.sort(_frequencies(got[-1]))
    assert np.isclose(elastic, _reference_hz(1000.0, 700.0)[0], rtol=1e-10).any()
    assert np.isclose(elastic, _reference_hz(1000.0, 700.0)[1], rtol=1e-10).any()


def test_a_planar_model_moved_is_solved_again(qtbot, monkeypatch):
    """math: in a planar model a spring acts along the line between its ends, so moving a node
    turns its springs and changes K: the moved model is solved again, and its frequencies are
    those of K built by hand for the new directions (k u u^T per spring, u the unit vector
    along it), not the earlier ones."""
    from solver.model import Anchor, Mass, Model, Spring

    model = Model(kind="planar", name="pendulum",
                  masses=(Mass("m", 0.0, 1.0, 2.0),),
                  anchors=(Anchor("a", 0.0, 0.0), Anchor("b", 2.0, 1.0)),
                  springs=(Spring("s1", "a", "m", 1000.0), Spring("s2", "b", "m", 400.0)))
    doc, _service, got, calls = _solved_and_watched(model, qtbot, monkeypatch)
    doc.move_nodes({"m": (1.0, 0.0)})
    assert len(calls) == 1 and got[-1].model is doc.model

    def by_hand(p):
        K = np.zeros((2, 2))
        for anchor, k in (((0.0, 0.0), 1000.0), ((2.0, 1.0), 400.0)):
            u = np.subtract(p, anchor)
            u = u / np.linalg.norm(u)
            K += k * np.outer(u, u)
        return np.sqrt(scipy.linalg.eigh(K, 2.0 * np.eye(2), eigvals_only=True)) / (2 * np.pi)

    np.testing.assert_allclose(_frequencies(got[-1]), by_hand((1.0, 0.0)), rtol=1e-10)
    assert not np.allclose(by_hand((1.0, 0.0)), by_hand((0.0, 1.0)))
