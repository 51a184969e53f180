"""Margin check of every mode against excitation sources (solver.margins), hand-computed cases.

A speed of 1200 rpm with orders 1, 2, 3 gives lines at 20, 40 and 60 Hz; a 15 % margin widens them
to [17, 23], [34, 46] and [51, 69] Hz. Models are single masses on springs whose frequency is set
exactly: k = m (2 pi f)^2 (math). The separation rule itself is common practice (REFERENCES.md
section 9: "natural frequencies away from forcing frequencies and their harmonics, +-10 to 20 %").
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

import solver
from solver import Anchor, Excitation, Mass, Model, Spring, margin_check, source_bands

M = 2.0
ENG = Excitation(id="eng", type="speed", rpm=1200.0, orders=(1.0, 2.0, 3.0))
FAN = Excitation(id="fan", type="band", f_min_hz=100.0, f_max_hz=120.0)
CLI = Path(sys.executable).with_name("springwright")


def k_for(f_hz, m=M):
    """k = m (2 pi f)^2 puts a single mass on one spring at f (math)."""
    return m * (2 * math.pi * f_hz) ** 2


def oscillators(freqs_hz, excitations=(ENG,), margin=15.0, name="margins"):
    """Independent single-DOF oscillators m_i on spring s_i to anchor A_i, one per frequency."""
    masses, anchors, springs = [], [], []
    for i, f in enumerate(freqs_hz):
        masses.append(Mass(id=f"m{i + 1}", x=float(i), y=1.0, mass=M))
        anchors.append(Anchor(id=f"A{i + 1}", x=float(i), y=0.0))
        springs.append(Spring(id=f"s{i + 1}", a=f"A{i + 1}", b=f"m{i + 1}", k=k_for(f)))
    return Model(name=name, masses=tuple(masses), anchors=tuple(anchors), springs=tuple(springs),
                 excitations=tuple(excitations), margin_percent=margin)


def exact(freqs_hz, zero=None):
    """A stand-in for a ModalResult with exactly these frequencies (margin_check reads only
    ``frequencies_hz`` and ``is_zero``), to test the edges without eigen-solver round-off."""
    f = np.asarray(freqs_hz, float)
    z = np.zeros(len(f), bool) if zero is None else np.asarray(zero, bool)
    return SimpleNamespace(frequencies_hz=f, is_zero=z)


def conflicted_modes(result):
    return sorted({c.mode for c in result.conflicts})


def test_bands_are_order_lines_widened_both_sides():
    """1200 rpm, orders 1..3 -> 20, 40, 60 Hz, widened by 15 % each side (common practice);
    a band [100, 120] Hz -> [85, 138] Hz. Exact to 1e-12 relative."""
    model = oscillators([5.0], excitations=(ENG, FAN))
    bands = source_bands(model)
    expect = [("eng", 1.0, 20.0, 20.0, 17.0, 23.0), ("eng", 2.0, 40.0, 40.0, 34.0, 46.0),
              ("eng", 3.0, 60.0, 60.0, 51.0, 69.0), ("fan", None, 100.0, 120.0, 85.0, 138.0)]
    assert len(bands) == len(expect)
    for got, want in zip(bands, expect):
        assert got[:2] == want[:2]
        np.testing.assert_allclose(got[2:], want[2:], rtol=1e-12)
    # an explicit margin overrides the model's
    lo_w, hi_w = source_bands(model, 10.0)[0][4:]
    assert lo_w == pytest.approx(18.0, rel=1e-12) and hi_w == pytest.approx(22.0, rel=1e-12)


@pytest.mark.parametrize("f, conflict", [(17.0, False), (23.0, False), (16.99, False),
                                         (17.01, True), (22.99, True), (23.01, False),
                                         (20.0, True), (34.0, False), (33.99, False),
                                         (34.01, True), (46.0, False), (45.99, True),
                                         (51.0, False), (69.0, False), (60.0, True),
                                         (48.5, False), (30.0, False)])
def test_edges_exact(f, conflict):
    """Strictly inside a widened interval conflicts; exactly on an edge has exactly the margin and
    passes (common practice, REFERENCES.md section 9; edges by hand: 17/23, 34/46, 51/69 Hz)."""
    model = oscillators([f])
    res = margin_check(model, exact([f]))
    assert bool(res.conflicts) is conflict
    assert res.ok is (not conflict)


@pytest.mark.parametrize("f, conflict", [(17.0, False), (23.0, False), (16.99, False),
                                         (17.01, True), (22.99, True), (23.01, False),
                                         (34.0, False), (46.0, False), (51.0, False),
                                         (69.0, False)])
def test_edges_through_the_eigen_solver(f, conflict):
    """The same edges with the frequency from the eigen-solver, k = m (2 pi f)^2 (math): a mode put
    on an edge (to round-off) still has the margin and passes (common practice)."""
    model = oscillators([f])
    res = margin_check(model, solver.modes(model))
    assert bool(res.conflicts) is conflict, res.conflicts


def test_retuned_onto_an_edge_passes():
    """retune to the widened edge 23 Hz (= 20 Hz * 1.15, common practice) then check: no conflict."""
    model = oscillators([21.0])
    assert conflicted_modes(margin_check(model, solver.modes(model))) == [1]
    k = solver.retune(model, "s1", 1, 23.0)
    assert k == pytest.approx(k_for(23.0), rel=1e-10)
    tuned = solver.with_value(model, "s1", k)
    assert margin_check(tuned, solver.modes(tuned)).ok


@pytest.mark.parametrize("f, source, order, lower_to, raise_to, move", [
    (19.0, "eng", 1.0, 17.0, 23.0, -2.0),
    (22.0, "eng", 1.0, 17.0, 23.0, 1.0),
    (17.5, "eng", 1.0, 17.0, 23.0, -0.5),
    (41.0, "eng", 2.0, 34.0, 46.0, 5.0),
    (38.0, "eng", 2.0, 34.0, 46.0, -4.0),
    (55.0, "eng", 3.0, 51.0, 69.0, -4.0),
    (66.0, "eng", 3.0, 51.0, 69.0, 3.0),
    (90.0, "fan", None, 85.0, 138.0, -5.0),
    (130.0, "fan", None, 85.0, 138.0, 8.0),
])
def test_move_values(f, source, order, lower_to, raise_to, move):
    """lower_to_hz / raise_to_hz are the widened edges; move_hz the smaller signed change to clear
    (hand-computed; common practice). Exact to 1e-12 relative."""
    model = oscillators([f], excitations=(ENG, FAN))
    res = margin_check(model, exact([f]))
    assert len(res.conflicts) == 1
    c = res.conflicts[0]
    assert (c.mode, c.source_id, c.order) == (1, source, order)
    assert c.frequency_hz == f
    assert c.lower_to_hz == pytest.approx(lower_to, rel=1e-12)
    assert c.raise_to_hz == pytest.approx(raise_to, rel=1e-12)
    assert c.move_hz == pytest.approx(move, rel=1e-12)
    assert res.for_mode(1) == (c,) and res.for_mode(2) == ()
    assert source in c.message and "below" in c.message and "above" in c.message


def test_margin_argument_and_model_margin():
    """A 10 % margin makes [18, 22] Hz (common practice): 17.5 Hz passes, 18.5 Hz conflicts; the
    model's margin_percent is the default, an explicit argument overrides it."""
    model = oscillators([17.5, 18.5], margin=10.0)
    res = margin_check(model, exact([17.5, 18.5]))
    assert conflicted_modes(res) == [2] and res.margin_percent == 10.0
    res15 = margin_check(model, exact([17.5, 18.5]), margin_percent=15.0)
    assert conflicted_modes(res15) == [1, 2]
    res0 = margin_check(model, exact([20.0, 19.999]), margin_percent=0.0)
    # zero margin: a mode exactly on the line is a resonance; 1e-4 off it passes
    assert conflicted_modes(res0) == [1]


def test_zero_modes_never_conflict():
    """A free-free pair (rigid mode, 0 Hz) and a band from 0 Hz: the zero mode is not checked, the
    elastic one at sqrt(k (m1 + m2)/(m1 m2))/(2 pi) is (REFERENCES.md TD-FREE, math)."""
    band = Excitation(id="low", type="band", f_min_hz=0.0, f_max_hz=50.0)
    k = 800.0
    model = Model(masses=(Mass(id="m1", x=0, y=0, mass=2.0), Mass(id="m2", x=1, y=0, mass=2.0)),
                  springs=(Spring(id="s", a="m1", b="m2", k=k),), excitations=(band,))
    r = solver.modes(model)
    assert r.is_zero[0] and not r.is_zero[1]
    assert r.omegas[1] == pytest.approx(math.sqrt(k * 4.0 / 4.0), rel=1e-10)
    res = margin_check(model, r)
    assert conflicted_modes(res) == [2]
    # flagged as zero, never checked even at a frequency inside a band
    res = margin_check(model, exact([20.0, 20.0], zero=[True, False]))
    assert conflicted_modes(res) == [2]


def test_several_sources_and_overlapping_orders():
    """A mode inside two sources conflicts with each; with a 40 % margin orders 1 and 2 overlap
    ([12, 28] and [24, 56] Hz) so a 26 Hz mode is inside both (hand-computed)."""
    wide = Excitation(id="wide", type="band", f_min_hz=15.0, f_max_hz=16.0)
    model = oscillators([16.5], excitations=(ENG, wide))
    res = margin_check(model, exact([16.5]))
    # eng order 1 widened to [17, 23]: 16.5 Hz is outside; the band [12.75, 18.4] holds it
    assert [(c.source_id, c.order) for c in res.conflicts] == [("wide", None)]
    res = margin_check(model, exact([26.0]), margin_percent=40.0)
    assert sorted((c.source_id, c.order) for c in res.conflicts) == [("eng", 1.0), ("eng", 2.0)]


def test_cli_json_lists_conflicting_sources(tmp_path):
    """`springwright solve FILE --json`: each mode has a "conflicts" list of source ids (DESIGN.md
    section 5); modes by k = m (2 pi f)^2 (math), edges by the 15 % rule (common practice)."""
    band = Excitation(id="fan", type="band", f_min_hz=28.0, f_max_hz=32.0)
    # 18 Hz: eng; 23 Hz: on the edge, none; 30 Hz: fan; 44 Hz: eng (order 2) and fan ([23.8, 36.8]
    # no) -> eng only; 35 Hz: eng order 2 [34, 46] and fan [23.8, 36.8] -> both
    freqs = [18.0, 23.0, 30.0, 44.0, 35.0]
    model = oscillators(freqs, excitations=(ENG, band), name="cli margins")
    path = tmp_path / "margins.json"
    solver.save_model(model, path)
    exe = CLI if CLI.exists() else Path("/work/main/.venv/bin/springwright")
    out = subprocess.run([str(exe), "solve", str(path), "--json"], capture_output=True, text=True,
                         timeout=120)
    assert out.returncode == 0, out.stderr
    data = json.loads(out.stdout)
    got = {round(m["frequency_hz"], 6): m["conflicts"] for m in data["modes"]}
    assert got == {18.0: ["eng"], 23.0: [], 30.0: ["fan"], 35.0: ["eng", "fan"], 44.0: ["eng"]}
    assert data["margin_percent"] == 15.0


def test_overlapping_orders_advice_clears_every_source():
    """Issue 9 item 9, by hand: 600 rpm, orders 1 and 2 -> lines at 10 and 20 Hz; a 40 % margin
    widens them to [10 * 0.6, 10 * 1.4] = [6, 14] and [20 * 0.6, 20 * 1.4] = [12, 28] Hz (common
    practice), which overlap: together (6, 28) Hz. A mode at 13 Hz is inside both. Moving it to
    14 Hz (order 1's edge) would land inside order 2, to 12 Hz inside order 1; the nearest clear
    frequencies are 6 Hz below and 28 Hz above, so both conflicts advise those, and the smaller
    move is down by 7 Hz. Checked: every advised frequency clears every widened interval."""
    motor = Excitation(id="motor", type="speed", rpm=600.0, orders=(1.0, 2.0))
    model = oscillators([13.0], excitations=(motor,), margin=40.0)
    res = margin_check(model, solver.modes(model))
    assert sorted(c.order for c in res.conflicts) == [1.0, 2.0]
    for c in res.conflicts:
        assert c.lower_to_hz == pytest.approx(6.0, rel=1e-12)
        assert c.raise_to_hz == pytest.approx(28.0, rel=1e-12)
        assert c.move_hz == pytest.approx(6.0 - 13.0, rel=1e-9)
        assert "below 6 Hz" in c.message and "above 28 Hz" in c.message
        for f in (c.lower_to_hz, c.raise_to_hz):
            assert not margin_check(model, exact([f])).conflicts
    np.testing.assert_allclose(res.keep_out, [(6.0, 28.0)], rtol=1e-12)


@pytest.mark.parametrize("f", [7.0, 13.0, 27.0, 29.0, 40.0, 69.0])
def test_advice_over_a_chain_of_sources(f):
    """By hand (common practice rule, 40 %): 600 rpm orders 1, 2 -> [6, 14], [12, 28] Hz; a band
    35 to 50 Hz -> [21, 70] Hz. Union: (6, 70) Hz, one interval, since [12, 28] and [21, 70]
    overlap. Every conflicting mode (in one source or in two) is advised 6 Hz below or 70 Hz
    above, nothing in between."""
    motor = Excitation(id="motor", type="speed", rpm=600.0, orders=(1.0, 2.0))
    band = Excitation(id="pump", type="band", f_min_hz=35.0, f_max_hz=50.0)
    model = oscillators([f], excitations=(motor, band), margin=40.0)
    res = margin_check(model, exact([f]))
    np.testing.assert_allclose(res.keep_out, [(6.0, 70.0)], rtol=1e-12)
    assert res.conflicts
    for c in res.conflicts:
        assert (c.lower_to_hz, c.raise_to_hz) == pytest.approx((6.0, 70.0), rel=1e-12)


def test_touching_intervals_leave_their_edge_clear():
    """By hand: 600 rpm order 1 at 25 % -> [7.5, 12.5] Hz; a band 12.5/0.75 = 16.667 to 20 Hz at
    25 % -> [12.5, 25] Hz. They touch at 12.5 Hz, which has exactly the margin from both (edges
    pass, common practice), so a mode at 11 Hz is advised 7.5 or 12.5 Hz, not 25."""
    motor = Excitation(id="motor", type="speed", rpm=600.0, orders=(1.0,))
    band = Excitation(id="pump", type="band", f_min_hz=12.5 / 0.75, f_max_hz=20.0)
    model = oscillators([11.0], excitations=(motor, band), margin=25.0)
    res = margin_check(model, exact([11.0]))
    (c,) = res.conflicts
    assert (c.lower_to_hz, c.raise_to_hz) == pytest.approx((7.5, 12.5), rel=1e-12)
    assert not margin_check(model, exact([12.5])).conflicts


def test_band_from_zero_has_no_lower_advice():
    """A band from 0 to 10 Hz widened by 15 % is [0, 11.5] Hz (common practice): a mode at 5 Hz
    can only be raised; lower_to_hz is 0 and the message offers the way up only."""
    band = Excitation(id="low", type="band", f_min_hz=0.0, f_max_hz=10.0)
    model = oscillators([5.0], excitations=(band,))
    (c,) = margin_check(model, exact([5.0])).conflicts
    assert c.lower_to_hz == 0.0 and c.raise_to_hz == pytest.approx(11.5, rel=1e-12)
    assert c.move_hz == pytest.approx(6.5, rel=1e-12)
    assert "above 11.5 Hz" in c.message and "below" not in c.message.split(":")[1].replace(
        "no frequency below", "")


@pytest.mark.parametrize("f, conflict", [(20.0, True), (40.0, True), (60.0, True),
                                         (19.99, False), (20.01, False), (100.0, True),
                                         (110.0, True), (120.0, True), (99.9, False),
                                         (120.1, False)])
def test_on_the_excitation_conflicts_at_zero_margin(f, conflict):
    """At margin_percent = 0 the widened intervals are the excitations themselves: a mode exactly
    on a speed order (20, 40, 60 Hz at 1200 rpm) or in the band [100, 120] Hz, edges included,
    is a resonance and conflicts; anything off them passes (common practice: a forcing frequency
    on a natural frequency is resonance, whatever margin is asked). The margin table agrees."""
    model = oscillators([f], excitations=(ENG, FAN), margin=0.0)
    res = margin_check(model, exact([f]))
    assert bool(res.conflicts) is conflict
    table = solver.margin_table(model, exact([f]))
    assert table.ok is (not conflict)


@pytest.mark.parametrize("f", [20.0, 40.0])
def test_on_the_excitation_through_the_eigen_solver_at_zero_margin(f):
    """The same with the frequency from the eigen-solver, k = m (2 pi f)^2 (math): on the line to
    round-off is on it."""
    model = oscillators([f], margin=0.0)
    assert not margin_check(model, solver.modes(model)).ok


def test_widened_edge_still_passes_with_a_margin():
    """With a 15 % margin the edges 17 and 23 Hz keep exactly the margin and pass, while 20 Hz
    (on the line) conflicts (common practice; edges by hand)."""
    model = oscillators([17.0, 20.0, 23.0])
    res = margin_check(model, exact([17.0, 20.0, 23.0]))
    assert conflicted_modes(res) == [2]
