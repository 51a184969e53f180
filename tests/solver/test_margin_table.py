"""The margin table (solver.margin_table): every elastic mode against every source interval.

Separation is measured from the nearest edge of the source's own interval in % of that edge's
frequency, the measure solver.margins widens intervals by ([lo (1 - p), hi (1 + p)]); the rule
of separating natural frequencies from forcing frequencies by 10 to 20 % is common practice
(REFERENCES.md section 9). Every expected value below is worked by hand in the docstring.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest

import solver
from solver import Anchor, Excitation, Mass, Model, Spring
from solver.margin_table import margin_table, nearest_clear, separation

FAN = Excitation(id="fan", type="speed", label="Fan", rpm=1200.0, orders=(1.0, 2.0))
BENCH = Excitation(id="bench", type="band", label="Bench", f_min_hz=100.0, f_max_hz=120.0)
MODES = (17.5, 45.0, 130.0)


def exact(freqs_hz, zero=None):
    """A stand-in for a ModalResult with exactly these frequencies (the table reads only
    ``frequencies_hz`` and ``is_zero``), so edges are tested without eigen-solver round-off."""
    f = np.asarray(freqs_hz, float)
    return SimpleNamespace(frequencies_hz=f,
                           is_zero=np.zeros(len(f), bool) if zero is None else np.asarray(zero))


def oscillators(freqs_hz, excitations, margin):
    """Independent masses of 2 kg on springs k = m (2 pi f)^2 (math), one per frequency."""
    masses, anchors, springs = [], [], []
    for i, f in enumerate(freqs_hz):
        masses.append(Mass(id=f"m{i}", x=float(i), y=1.0, mass=2.0))
        anchors.append(Anchor(id=f"g{i}", x=float(i), y=0.0))
        springs.append(Spring(id=f"s{i}", a=f"g{i}", b=f"m{i}", k=2.0 * (2 * math.pi * f) ** 2))
    return Model(masses=tuple(masses), anchors=tuple(anchors), springs=tuple(springs),
                 excitations=tuple(excitations), margin_percent=margin)


#: (mode, source, order) -> (position, separation %), worked by hand for modes 17.5, 45, 130 Hz
#: against Fan 1200 rpm (order 1: 20 Hz, order 2: 40 Hz) and Bench 100 to 120 Hz:
SEPARATIONS = {
    (1, "fan", 1.0): ("below", 12.5),       # (20 - 17.5) / 20
    (1, "fan", 2.0): ("below", 56.25),      # (40 - 17.5) / 40
    (1, "bench", None): ("below", 82.5),    # (100 - 17.5) / 100
    (2, "fan", 1.0): ("above", 125.0),      # (45 - 20) / 20
    (2, "fan", 2.0): ("above", 12.5),       # (45 - 40) / 40
    (2, "bench", None): ("below", 55.0),    # (100 - 45) / 100
    (3, "fan", 1.0): ("above", 550.0),      # (130 - 20) / 20
    (3, "fan", 2.0): ("above", 225.0),      # (130 - 40) / 40
    (3, "bench", None): ("above", 100 / 12),  # (130 - 120) / 120 = 8.333 %
}

#: margin -> (failing (mode, source, order), nearest clear frequency per mode), by hand:
#:  5 %: nothing below 5 %; every mode is clear where it is.
#: 15 %: intervals [17, 23], [34, 46], [85, 138]: 12.5 < 15 fails twice, 8.33 < 15 once;
#:       17.5 -> 17 (0.5 away, not 23), 45 -> 46 (not 34), 130 -> 138 (not 85).
#: 40 %: [12, 28] and [24, 56] overlap into [12, 56]; bench [60, 168]. 17.5 -> 12 (5.5 away),
#:       45 -> 56 (the union's edge: 28 would land in order 2's interval), 130 -> 168.
CASES = {
    5.0: (set(), {1: 17.5, 2: 45.0, 3: 130.0}),
    15.0: ({(1, "fan", 1.0), (2, "fan", 2.0), (3, "bench", None)}, {1: 17.0, 2: 46.0, 3: 138.0}),
    40.0: ({(1, "fan", 1.0), (2, "fan", 2.0), (3, "bench", None)}, {1: 12.0, 2: 56.0, 3: 168.0}),
}


@pytest.mark.parametrize("margin", sorted(CASES))
def test_two_sources_at_three_margins(margin):
    """Hand-computed separations (SEPARATIONS) and verdicts (CASES) of the two-source model at
    5, 15 and 40 %; rtol 1e-12 on exact frequencies."""
    model = oscillators(MODES, (FAN, BENCH), margin)
    table = margin_table(model, exact(MODES))
    assert len(table.rows) == 3 * 3
    fails, clear = CASES[margin]
    for r in table.rows:
        key = (r.mode, r.source_id, r.order)
        position, sep = SEPARATIONS[key]
        assert r.position == position, key
        assert r.separation_percent == pytest.approx(sep, rel=1e-12), key
        assert r.passes == (key not in fails), key
        assert r.clear_hz == pytest.approx(clear[r.mode], rel=1e-12), key
    assert table.ok == (not fails)


@pytest.mark.parametrize("margin", sorted(CASES))
def test_table_agrees_with_margin_check_on_solved_modes(margin):
    """The same model solved (k = m (2 pi f)^2, math): frequencies to rtol 1e-9, and the failing
    rows are exactly margin_check's conflicts (one independent reading of the same rule)."""
    model = oscillators(MODES, (FAN, BENCH), margin)
    modal = solver.modes(model)
    assert modal.frequencies_hz == pytest.approx(MODES, rel=1e-9)
    table = margin_table(model, modal)
    failing = {(r.mode, r.source_id, r.order) for r in table.failing}
    conflicts = {(c.mode, c.source_id, c.order) for c in solver.margin_check(model, modal).conflicts}
    assert failing == conflicts == CASES[margin][0]
    for r in table.rows:
        assert r.separation_percent == pytest.approx(SEPARATIONS[(r.mode, r.source_id, r.order)][1],
                                                     rel=1e-8)


def test_mode_exactly_on_an_order_line_at_the_range_ends():
    """Drive 600 to 1800 rpm, order 2: the order covers [20, 60] Hz (math: 2 N / 60). Modes at
    exactly 20 and 60 Hz sit on the order line at the range's ends: inside, separation 0, FAIL at
    15 % (the widened band is [17, 69]); nearest clear 17 Hz for the first (3 Hz away, not 9) and
    69 Hz for the second. A mode at 19.99 Hz is below, (20 - 19.99) / 20 = 0.05 %."""
    drive = Excitation(id="vfd", type="speed", rpm_min=600.0, rpm_max=1800.0, orders=(2.0,))
    model = oscillators((19.99, 20.0, 60.0), (drive,), 15.0)
    rows = margin_table(model, exact((19.99, 20.0, 60.0))).rows
    assert [(r.position, r.passes) for r in rows] == [("below", False), ("inside", False),
                                                      ("inside", False)]
    assert rows[0].separation_percent == pytest.approx(0.05, rel=1e-9)
    assert rows[1].separation_percent == 0.0 and rows[2].separation_percent == 0.0
    assert (rows[1].low_hz, rows[1].high_hz) == pytest.approx((20.0, 60.0), rel=1e-15)
    assert rows[1].clear_hz == pytest.approx(17.0, rel=1e-12)
    assert rows[2].clear_hz == pytest.approx(69.0, rel=1e-12)
    assert rows[2].clear_below_hz == pytest.approx(17.0, rel=1e-12)


def test_inside_a_band_depth_to_the_nearer_edge():
    """Bench 100 to 120 Hz: a mode at 104 Hz is (104 - 100) / 100 = 4 % in from the lower edge,
    (120 - 104) / 120 = 13.3 % from the upper: 4 %. At 118 Hz: min(18 %, 1.667 %) = 1.667 %."""
    assert separation(104.0, 100.0, 120.0) == ("inside", pytest.approx(4.0, rel=1e-12))
    assert separation(118.0, 100.0, 120.0) == ("inside", pytest.approx(2 / 1.2, rel=1e-12))


def test_band_from_zero_has_no_way_down():
    """A band from 0 to 10 Hz at 15 % keeps out (0, 11.5) Hz (common practice): a mode at 2 Hz
    can only go up, to 11.5 Hz; no positive frequency below clears it."""
    floor = Excitation(id="floor", type="band", f_min_hz=0.0, f_max_hz=10.0)
    model = oscillators((2.0,), (floor,), 15.0)
    (row,) = margin_table(model, exact((2.0,))).rows
    assert row.position == "inside" and not row.passes
    assert row.clear_hz == pytest.approx(11.5, rel=1e-12)
    assert row.clear_below_hz is None
    assert nearest_clear(2.0, ((0.0, 11.5),)) == (pytest.approx(11.5), None, pytest.approx(11.5))


def test_zero_frequency_modes_are_not_listed():
    """Rigid-body modes have no resonance to separate (DESIGN.md section 2)."""
    model = oscillators((30.0,), (FAN,), 15.0)
    table = margin_table(model, exact((0.0, 30.0), zero=(True, False)))
    assert {r.mode for r in table.rows} == {2}


def test_margin_outside_0_to_100_is_refused():
    """Common practice: a margin of 100 % or more would leave no frequency below a source."""
    model = oscillators((30.0,), (FAN,), 15.0)
    with pytest.raises(solver.ModelError, match="margin_percent"):
        margin_table(model, exact((30.0,)), margin_percent=100.0)
