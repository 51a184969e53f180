"""Solver messages name elements the way a person reads them: by label, with the id beside it.

Issue 11 item 3 and DESIGN.md section 3 (a message names the element so the user can act): every
message and warning the solver writes about an element says ``spring "Isolator pad" (s4)`` when
the label differs from the id, and ``spring "s4"`` when it does not (the id stays, since files
and scripts use ids). Each message kind is triggered on a model whose labels differ from its ids
and on the same model with labels equal to the ids, where no name may be doubled
(``"s4" (s4)``). The physical facts that make each message appear are stated per test (math).
"""

from __future__ import annotations

import json
import math
import re

import pytest

import solver
from solver import Anchor, Excitation, Mass, Model, ModelError, ModelFileError, Spring
from solver.margins import margin_check
from solver.naming import LABEL_SHOWN, named, quoted

#: a name written twice: "s4" (s4)
DOUBLED = re.compile(r'"([^"]+)" \(\1\)')


def lab(labelled: bool, text: str) -> str:
    """The label when the model is labelled; "" (the label defaults to the id) otherwise."""
    return text if labelled else ""


def says(text: str, labelled: bool, label: str, el_id: str) -> None:
    """``text`` names the element as ``"label" (id)`` or as ``"id"``, never doubled."""
    assert not DOUBLED.search(text), text
    if labelled:
        assert f'"{label}" ({el_id})' in text, text
    else:
        assert f'"{el_id}"' in text and f"({el_id})" not in text, text


LABELLED = pytest.mark.parametrize("labelled", [True, False], ids=["labels", "ids"])


# ------------------------------------------------------------------ the helper itself
def test_helper_forms():
    """Issue 11 item 3: label and id when they differ, the id alone when they do not."""
    assert quoted("s4", "Isolator pad") == '"Isolator pad" (s4)'
    assert quoted("s4", "s4") == '"s4"'
    assert quoted("s4") == '"s4"'
    assert named(Spring("s4", "a", "b", 1.0, label="Isolator pad")) == 'spring "Isolator pad" (s4)'
    assert named(Spring("s4", "a", "b", 1.0)) == 'spring "s4"'
    assert named(Mass("d1", 0, 0, 1.0, label="Flywheel"), "disc") == 'disc "Flywheel" (d1)'


def test_long_label_with_line_breaks_stays_one_short_line():
    """solver/errors.py: messages are one printable line of bounded length whatever a label
    holds (labels may hold line breaks and 1000 characters)."""
    label = "Pad\nwith a note " + "x" * 980
    with pytest.raises(ModelError) as info:
        Spring("s4", "g", "m1", -200.0, label=label)
    msg = str(info.value)
    assert msg.isprintable() and "\n" not in msg
    assert '"Pad\\nwith a note ' in msg and "…\" (s4)" in msg
    assert len(msg) < 200, len(msg)
    assert len(quoted("s4", label)) == LABEL_SHOWN + len(' "" (s4)') - 1


# ------------------------------------------------------------------ zero-frequency modes
@LABELLED
def test_mechanism_names_the_mass(labelled):
    """A mass on one axial spring in a plane (no transverse stiffness) can swing at right
    angles to the spring with no restoring force (math: k acts only along the line), a
    mechanism; its cause and the mechanism warning name the mass."""
    model = Model(kind="planar", anchors=(Anchor("g", 0.0, 0.0, lab(labelled, "Wall")),),
                  masses=(Mass("cam", 1.0, 0.0, 2.0, lab(labelled, "Camera body")),),
                  springs=(Spring("s1", "g", "cam", 1000.0, lab(labelled, "Arm")),))
    res = solver.analyse(model)
    (z,) = res.modal.zero_modes
    assert z.kind == "mechanism" and "can move in direction (0, 1)" in z.cause
    says(z.cause, labelled, "Camera body", "cam")
    (w,) = [w for w in res.warnings if "mechanism" in w]
    says(w, labelled, "Camera body", "cam")


@LABELLED
def test_mechanism_of_several_masses_names_each(labelled):
    """Two masses in line on axial springs along x (planar, no k_t) can each move in y with no
    stiffness (math): the causes name the moving masses."""
    model = Model(kind="planar", anchors=(Anchor("g", 0.0, 0.0),),
                  masses=(Mass("m1", 1.0, 0.0, 1.0, lab(labelled, "Motor")),
                          Mass("m2", 2.0, 0.0, 1.0, lab(labelled, "Pump"))),
                  springs=(Spring("s1", "g", "m1", 1000.0), Spring("s2", "m1", "m2", 1000.0)))
    causes = " ".join(z.cause for z in solver.modes(model).zero_modes)
    says(causes, labelled, "Motor", "m1")
    says(causes, labelled, "Pump", "m2")


@LABELLED
def test_rigid_body_causes_name_the_masses(labelled):
    """A line model: m1 anchored; m2 and m3 joined to each other only (one rigid translation,
    math); m4 joined to nothing (another). Each cause names its masses."""
    model = Model(kind="line", anchors=(Anchor("g", 0.0, 0.0),),
                  masses=(Mass("m1", 1.0, 0.0, 1.0, lab(labelled, "Base")),
                          Mass("m2", 2.0, 0.0, 1.0, lab(labelled, "Lens")),
                          Mass("m3", 3.0, 0.0, 1.0, lab(labelled, "Hood")),
                          Mass("m4", 4.0, 0.0, 1.0, lab(labelled, "Spare part"))),
                  springs=(Spring("s1", "g", "m1", 1000.0), Spring("s2", "m2", "m3", 1000.0)))
    zero = solver.modes(model).zero_modes
    assert [z.kind for z in zero] == ["rigid", "rigid"]
    pair = next(z.cause for z in zero if "m2" in z.masses)
    alone = next(z.cause for z in zero if "m4" in z.masses)
    assert pair.startswith("masses ") and "no spring path to an anchor" in pair
    says(pair, labelled, "Lens", "m2")
    says(pair, labelled, "Hood", "m3")
    assert alone.startswith("mass ") and "joined to nothing" in alone
    says(alone, labelled, "Spare part", "m4")


@LABELLED
def test_torsion_disc_is_named_as_a_disc(labelled):
    """A disc joined to nothing spins freely (math: no torsional stiffness acts on it)."""
    model = Model(kind="torsion", anchors=(Anchor("g", 0.0, 0.0),),
                  masses=(Mass("d1", 1.0, 0.0, 0.2, lab(labelled, "Motor rotor")),
                          Mass("d2", 2.0, 0.0, 0.5, lab(labelled, "Flywheel"))),
                  springs=(Spring("s1", "g", "d1", 500.0),))
    (z,) = solver.modes(model).zero_modes
    assert z.cause.startswith("disc ") and "spin freely" in z.cause
    says(z.cause, labelled, "Flywheel", "d2")


# ------------------------------------------------------------------ assembly warnings
@LABELLED
def test_loose_junction_warning_names_the_junction(labelled):
    """A massless junction at the end of one axial spring drawn at 30 degrees: its sideways
    direction is held by nothing (math: the spring acts only along its line)."""
    c, s = math.cos(math.pi / 6), math.sin(math.pi / 6)
    model = Model(kind="planar", anchors=(Anchor("A", -1, 0), Anchor("B", 0, -1)),
                  masses=(Mass("P", 0, 0, 1.0, lab(labelled, "Panel")),
                          Mass("J", c, s, 0.0, lab(labelled, "Cable clamp"))),
                  springs=(Spring("s1", "A", "P", 1000.0), Spring("s2", "B", "P", 400.0),
                           Spring("sJ", "P", "J", 500.0, lab(labelled, "Cable"))))
    (w,) = [w for w in solver.analyse(model).warnings if "held by no" in w]
    says(w, labelled, "Cable clamp", "J")


@LABELLED
def test_spring_between_fixed_points_and_locked_direction_warnings(labelled):
    """A spring from an anchor to a mass locked in x does nothing in a line model along x
    (math); a locked y in that model locks nothing. Both warnings name their element."""
    model = Model(kind="line", anchors=(Anchor("g", 0.0, 0.0),),
                  masses=(Mass("m1", 1.0, 0.0, 1.0, lab(labelled, "Clamp"), fixed=("x",)),
                          Mass("m2", 2.0, 0.0, 1.0, lab(labelled, "Slider"), fixed=("y",))),
                  springs=(Spring("s1", "g", "m1", 1000.0, lab(labelled, "Dead link")),
                           Spring("s2", "g", "m2", 1000.0)))
    warnings = solver.assemble(model).warnings
    says(next(w for w in warnings if "two fixed points" in w), labelled, "Dead link", "s1")
    says(next(w for w in warnings if "does not exist" in w), labelled, "Slider", "m2")


@LABELLED
def test_stiff_link_accuracy_warning_names_the_stiffest_link(labelled):
    """A 1e14 N/m link among 1e3 N/m springs on 1 kg masses: the eigenvalues span ~1e14, so on
    the formed K (shift-invert Lanczos) frequencies are good to eps x 1e14 relative only
    (Golub and Van Loan, sec. 8.1); the warning says so and names the stiffest link."""
    n = 40
    masses = tuple(Mass(f"m{i}", float(i), 0.0, 1.0) for i in range(1, n + 1))
    springs = tuple(Spring(f"s{i}", "g" if i == 1 else f"m{i - 1}", f"m{i}",
                           1e14 if i == 21 else 1000.0,
                           lab(labelled, "Welded joint") if i == 21 else "")
                    for i in range(1, n + 1))
    model = Model(kind="line", anchors=(Anchor("g", 0.0, 0.0),), masses=masses, springs=springs)
    res = solver.modes(model, count=4, method="sparse")
    (w,) = [w for w in res.warnings if "accurate to about" in w]
    assert "the stiffest link is spring" in w and "1e+14 N/m" in w
    says(w, labelled, "Welded joint", "s21")


def test_stiff_link_is_not_named_without_a_contrast():
    """With every spring alike no link stands out: the helper adds nothing (common practice:
    naming a culprit that is not one would mislead)."""
    from solver.modes import _stiffest_link

    model = Model(kind="line", anchors=(Anchor("g", 0.0, 0.0),),
                  masses=(Mass("m1", 1.0, 0.0, 1.0), Mass("m2", 2.0, 0.0, 1e-9)),
                  springs=(Spring("s1", "g", "m1", 1000.0), Spring("s2", "m1", "m2", 2000.0)))
    assert _stiffest_link(model) == ""


# ------------------------------------------------------------------ retune and margins
def _isolated(labelled):
    """A 1 kg mass on an isolator pad of 1000 N/m under a 2 kg base mass on 4000 N/m."""
    return Model(kind="line", anchors=(Anchor("g", 0.0, 0.0, lab(labelled, "Floor")),),
                 masses=(Mass("m1", 1.0, 0.0, 2.0, lab(labelled, "Base plate")),
                         Mass("m2", 2.0, 0.0, 1.0, lab(labelled, "Camera body"))),
                 springs=(Spring("s1", "g", "m1", 4000.0, lab(labelled, "Floor mount")),
                          Spring("s2", "m1", "m2", 1000.0, lab(labelled, "Isolator pad"))),
                 excitations=(Excitation("traffic", "band", lab(labelled, "Building vibration"),
                                         f_min_hz=2.0, f_max_hz=8.0),
                              Excitation("fan", "speed", lab(labelled, "Cooling fan"),
                                         rpm=480.0, orders=(1.0,))))


@LABELLED
def test_retune_refusal_names_the_element(labelled):
    """Mode 1 of the two-mass chain stays below the frequency of the base on the floor mount
    with the pad rigid (as k_pad -> infinity, f1 -> sqrt(4000 / 3) / 2 pi = 5.81 Hz, math), so
    100 Hz is out of reach by the pad alone; the refusal names the pad."""
    model = _isolated(labelled)
    with pytest.raises(ModelError) as info:
        solver.retune(model, "s2", 1, 100.0)
    msg = str(info.value)
    assert "by changing the stiffness k of" in msg and "alone" in msg
    says(msg, labelled, "Isolator pad", "s2")
    with pytest.raises(ModelError) as info:
        solver.retune(model, "s2", 1, 3.0, field="k_t")
    assert "k_t acts only in planar models" in str(info.value)
    says(str(info.value), labelled, "Isolator pad", "s2")
    with pytest.raises(ModelError) as info:
        solver.retune(model, "g", 1, 3.0)
    assert "is not a spring or a mass" in str(info.value)
    says(str(info.value), labelled, "Floor", "g")


@LABELLED
def test_margin_conflict_message_names_the_source(labelled):
    """A mode inside the 2-8 Hz band and one near the 8 Hz fan (480 rpm) conflict (common
    practice: 15 % margin); each Conflict.message names its source."""
    model = _isolated(labelled)
    res = solver.modes(model)
    conflicts = margin_check(model, res).conflicts
    assert {c.source_id for c in conflicts} >= {"traffic", "fan"}
    for c in conflicts:
        label = {"traffic": "Building vibration", "fan": "Cooling fan"}[c.source_id]
        assert c.message.startswith(f"mode {c.mode} at ")
        says(c.message, labelled, label, c.source_id)


# ------------------------------------------------------------------ refused models and files
@LABELLED
def test_bad_value_in_model_construction_names_the_element(labelled):
    """DESIGN.md section 3: ``spring "Isolator pad" (s4): stiffness k must be positive, got
    -200 N/m`` (STYLE.md item 7, with the label)."""
    with pytest.raises(ModelError) as info:
        Spring("s4", "g", "m1", -200.0, label=lab(labelled, "Isolator pad"))
    msg = str(info.value)
    assert "stiffness k must be positive, got -200 N/m" in msg and info.value.path == ("k",)
    says(msg, labelled, "Isolator pad", "s4")
    base = _isolated(labelled)
    with pytest.raises(ModelError) as info:
        base.with_changes(put=[Spring("s2", "m2", "m2", 1000.0, lab(labelled, "Isolator pad"))])
    msg = str(info.value)
    assert msg.startswith("spring ") and "both ends are" in msg
    says(msg, labelled, "Isolator pad", "s2")
    says(msg.split("both ends are")[1], labelled, "Camera body", "m2")


@LABELLED
def test_file_refusals_keep_the_json_path_and_name_the_label(labelled, tmp_path):
    """README (bad input: one line naming the file, the JSON path and the problem): the path
    and the file stay first; the element is named by label and id; the label itself, when it
    is the problem, is not used to name the element."""
    base = json.loads(solver.dumps_model(_isolated(labelled)))
    for mutate, place, field_words in (
            (lambda d: d["springs"][1].__setitem__("k", -200.0), "springs[1].k",
             "k"),                                                    # schema check
            (lambda d: d["springs"][1].__setitem__("k", 1e31), "springs[1].k",
             "outside the range"),                                    # Model check
            (lambda d: d["springs"][1].__setitem__("b", "m1"), "springs[1].b",
             "both ends are")):                                       # reference check
        data = json.loads(json.dumps(base))
        mutate(data)
        path = tmp_path / "bad.json"
        path.write_text(json.dumps(data), "utf-8")
        with pytest.raises(ModelFileError) as info:
            solver.load_model(path)
        msg = str(info.value)
        assert msg.startswith(f"{path}: {place}: spring "), msg
        assert field_words in msg and msg.isprintable()
        says(msg, labelled, "Isolator pad", "s2")
    data = json.loads(json.dumps(base))
    data["springs"][1]["label"] = 12
    path.write_text(json.dumps(data), "utf-8")
    with pytest.raises(ModelFileError) as info:
        solver.load_model(path)
    assert 'springs[1].label: spring "s2": ' in str(info.value)


@LABELLED
def test_force_on_an_anchor_names_it(labelled):
    """An anchor has no degrees of freedom (DESIGN.md section 2): a force on it is refused."""
    model = _isolated(labelled)
    with pytest.raises(ModelError) as info:
        solver.harmonic_response(model, [1.0, 2.0], {("g", "x"): 1.0})
    assert "is an anchor" in str(info.value)
    says(str(info.value), labelled, "Floor", "g")
