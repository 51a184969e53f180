"""Undo/redo over random edit sequences: undo all gives exactly the start, redo all the end."""

import hypothesis.strategies as st
from hypothesis import HealthCheck, settings
from hypothesis.stateful import RuleBasedStateMachine, invariant, precondition, rule

from app.document.document import Document
from solver.errors import ModelError
from solver.model import Anchor, Mass, Model, Spring

START = Model(kind="line", name="start", masses=(Mass("m1", 0.1, 0.0, 1.0),),
              anchors=(Anchor("g1", 0.0, 0.0),), springs=(Spring("s1", "g1", "m1", 1000.0),))

coords = st.floats(-2, 2, allow_nan=False).map(lambda v: round(v, 3))


class UndoMachine(RuleBasedStateMachine):
    """Common practice (Qt undo framework / command pattern): the history replays exactly.

    ``self.history`` is the list of models after each accepted edit, kept independently of the
    document; the invariant checks the document against it.
    """

    def __init__(self):
        super().__init__()
        self.doc = Document(START)
        self.history = [START]

    def _did(self, changed: bool):
        if changed:
            self.history.append(self.doc.model)

    def _nodes(self):
        m = self.doc.model
        return [n.id for n in m.masses + m.anchors]

    @rule(x=coords, y=coords, mass=st.just(0.0) | st.floats(1e-6, 50))
    def add_mass(self, x, y, mass):
        self.doc.add_mass(x, y, mass)
        self._did(True)

    @rule(x=coords, y=coords)
    def add_anchor(self, x, y):
        self.doc.add_anchor(x, y)
        self._did(True)

    @rule(data=st.data(), what=st.sampled_from(["spring", "dashpot"]))
    def connect(self, data, what):
        nodes = self._nodes()
        if len(nodes) < 2:
            return
        a, b = data.draw(st.lists(st.sampled_from(nodes), min_size=2, max_size=2, unique=True))
        n = self.doc.undo_stack.count()
        self.doc.connect(what, a, b)
        self._did(self.doc.undo_stack.count() > n)

    @rule(data=st.data(), x=coords, y=coords)
    def move(self, data, x, y):
        nodes = self._nodes()
        if nodes:
            nid = data.draw(st.sampled_from(nodes))
            # distinct merge keys: merging is tested separately, here every move is an entry
            self._did(self.doc.move_nodes({nid: (x, y)}, merge_key=("t", len(self.history))))

    @rule(data=st.data())
    def remove(self, data):
        ids = sorted(self.doc.model.ids())
        if ids:
            self._did(self.doc.remove([data.draw(st.sampled_from(ids))]))

    @rule(data=st.data(), k=st.floats(-10, 1e6))
    def set_stiffness(self, data, k):
        springs = [s.id for s in self.doc.model.springs]
        if springs:
            try:
                self._did(self.doc.set_element(data.draw(st.sampled_from(springs)), k=k))
            except ModelError:
                assert k <= 0 or k < 1e-30  # refused (not positive, or below the range)
                assert self.doc.model == self.history[-1]

    @precondition(lambda self: len(self.history) > 1)
    @rule()
    def undo_redo_one(self):
        self.doc.undo_stack.undo()
        assert self.doc.model == self.history[-2]
        self.doc.undo_stack.redo()

    @invariant()
    def matches_history(self):
        assert self.doc.model == self.history[-1]
        assert self.doc.undo_stack.count() == len(self.history) - 1

    def teardown(self):
        stack = self.doc.undo_stack
        while stack.canUndo():
            stack.undo()
        assert self.doc.model == START
        while stack.canRedo():
            stack.redo()
        assert self.doc.model == self.history[-1]


UndoMachine.TestCase.settings = settings(max_examples=40, stateful_step_count=25, deadline=None,
                                         suppress_health_check=[HealthCheck.too_slow])


def test_undo_redo_state_machine(qapp):
    """Common practice: every random sequence of edits undoes to the start and redoes to the end."""
    UndoMachine.TestCase("runTest").runTest()


def test_consecutive_moves_with_one_key_merge(qapp):
    """Common practice (QUndoCommand.mergeWith): nudges of the same node are one entry."""
    doc = Document(START)
    for x in (0.2, 0.3, 0.4):
        doc.move_nodes({"m1": (x, 0.0)})
    assert doc.undo_stack.count() == 1
    doc.undo_stack.undo()
    assert doc.model == START
