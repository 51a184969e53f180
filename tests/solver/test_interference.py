"""Interference diagram data (solver.interference): order lines, crossings and margin bands.

Order n of a shaft at N rev/min excites f = n N / 60 Hz, so it meets a natural frequency f_i at
N = 60 f_i / n (math). A lumped model's modes do not change with speed (no gyroscopic or
centrifugal terms in M x'' + K x = 0, DESIGN.md section 2), so each mode is a horizontal line.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import solver
from solver import Anchor, Excitation, Mass, Model, Spring
from solver.interference import RPM_HEADROOM, interference, mode_band_hz


def exact(freqs_hz):
    f = np.asarray(freqs_hz, float)
    return SimpleNamespace(frequencies_hz=f, is_zero=np.zeros(len(f), bool))


def oscillators(freqs_hz, excitations, margin=15.0):
    """Independent 2 kg masses on springs k = m (2 pi f)^2 (math), one per frequency."""
    masses, anchors, springs = [], [], []
    for i, f in enumerate(freqs_hz):
        masses.append(Mass(id=f"m{i}", x=float(i), y=1.0, mass=2.0))
        anchors.append(Anchor(id=f"g{i}", x=float(i), y=0.0))
        springs.append(Spring(id=f"s{i}", a=f"g{i}", b=f"m{i}", k=2.0 * (2 * math.pi * f) ** 2))
    return Model(masses=tuple(masses), anchors=tuple(anchors), springs=tuple(springs),
                 excitations=tuple(excitations), margin_percent=margin)


def test_crossing_inside_the_range_listed_with_its_speed():
    """Drive 900 to 3000 rpm, orders 1 and 3; modes at 40 and 70 Hz (solved). By hand:
    order 1 meets 40 Hz at 60 * 40 / 1 = 2400 rpm (inside), order 3 meets 70 Hz at
    60 * 70 / 3 = 1400 rpm (inside), order 3 meets 40 Hz at 800 rpm (below the range: listed,
    not inside), order 1 meets 70 Hz at 4200 rpm, past the axis end 1.25 * 3000 = 3750 rpm (not
    listed). rtol 1e-9 (eigen-solver round-off)."""
    drive = Excitation(id="vfd", type="speed", label="Drive", rpm_min=900.0, rpm_max=3000.0,
                       orders=(1.0, 3.0))
    model = oscillators((40.0, 70.0), (drive,))
    data = interference(model, solver.modes(model))
    assert data.rpm_max == pytest.approx(RPM_HEADROOM * 3000.0, rel=1e-15)
    found = {(c.mode, c.order): (c.rpm, c.in_range) for c in data.crossings}
    assert set(found) == {(1, 1.0), (1, 3.0), (2, 3.0)}
    assert found[(1, 1.0)] == (pytest.approx(2400.0, rel=1e-9), True)
    assert found[(2, 3.0)] == (pytest.approx(1400.0, rel=1e-9), True)
    assert found[(1, 3.0)] == (pytest.approx(800.0, rel=1e-9), False)
    assert [(c.mode, c.order) for c in data.in_range] == [(1, 1.0), (2, 3.0)]


def test_mode_exactly_on_an_order_line_at_the_range_ends():
    """Drive 600 to 1800 rpm, order 2: modes at exactly 20 and 60 Hz meet it at 60 * 20 / 2 = 600
    and 60 * 60 / 2 = 1800 rpm, the range's ends, which belong to it; a mode at 19.99 Hz meets it
    at 599.7 rpm, outside (math)."""
    drive = Excitation(id="vfd", type="speed", rpm_min=600.0, rpm_max=1800.0, orders=(2.0,))
    model = oscillators((19.99, 20.0, 60.0), (drive,))
    data = interference(model, exact((19.99, 20.0, 60.0)))
    got = [(c.mode, c.rpm, c.in_range) for c in data.crossings]
    assert got == [(1, pytest.approx(599.7, rel=1e-12), False), (2, 600.0, True),
                   (3, 1800.0, True)]
    solved = interference(model, solver.modes(model))
    assert [c.in_range for c in solved.crossings] == [False, True, True]


def test_single_speed_crosses_only_on_the_line():
    """A single speed is a range of zero width: 1500 rpm order 2 excites 50 Hz; a mode at exactly
    50 Hz meets it at 1500 rpm (inside), one at 49 Hz at 1470 rpm (outside) (math)."""
    fan = Excitation(id="fan", type="speed", rpm=1500.0, orders=(2.0,))
    data = interference(oscillators((49.0, 50.0), (fan,)), exact((49.0, 50.0)))
    assert [(c.rpm, c.in_range) for c in data.crossings] == [
        (pytest.approx(1470.0, rel=1e-12), False), (1500.0, True)]


def test_margin_band_and_speeds_within_the_margin():
    """At 15 % a mode at 46 Hz is within the margin of an excitation e when 46 / 1.15 = 40 < e <
    46 / 0.85 = 54.12 Hz (solver.margins widens e to [0.85 e, 1.15 e]); for order 2 that is
    1200 < N < 1623.5 rpm (math: N = 60 e / 2)."""
    assert mode_band_hz(46.0, 15.0) == pytest.approx((40.0, 46.0 / 0.85), rel=1e-15)
    drive = Excitation(id="vfd", type="speed", rpm_min=600.0, rpm_max=3000.0, orders=(2.0,))
    (c,) = interference(oscillators((46.0,), (drive,)), exact((46.0,))).crossings
    assert (c.margin_rpm_low, c.margin_rpm_high) == pytest.approx((1200.0, 30 * 46 / 0.85),
                                                                  rel=1e-12)


@settings(max_examples=200, deadline=None)
@given(f=st.floats(1.0, 1000.0), pct=st.floats(1.0, 40.0), order=st.sampled_from([0.5, 1, 2, 3.7]),
       t=st.floats(-0.9, 0.9))
def test_band_matches_margin_check(f, pct, order, t):
    """An order line inside a mode's band [f / (1 + p), f / (1 - p)] is exactly a margin_check
    conflict (math: e (1 - p) < f < e (1 + p) <=> f / (1 + p) < e < f / (1 - p)); speeds are
    placed by t in (-1, 1) across the band, away from its edges by 10 % of its width."""
    lo, hi = mode_band_hz(f, pct)
    for e in (lo + (0.5 + 0.5 * t) * (hi - lo), lo * (1 - 0.1 * (1 + t)), hi * (1 + 0.1 * (1 + t))):
        inside = lo < e < hi
        fan = Excitation(id="fan", type="speed", rpm=60.0 * e / order, orders=(float(order),))
        model = Model(excitations=(fan,), margin_percent=pct)
        hit = bool(solver.margin_check(model, exact((f,))).conflicts)
        assert hit == inside


def test_axes_and_modes_shown():
    """Fan 1200 rpm order 1 (20 Hz): speed axis to 1.25 * 1200 = 1500 rpm, the order reaches 25 Hz
    there; the lowest mode above (60 Hz) stays in view, so the frequency axis runs to 1.1 * 60 =
    66 Hz and the mode at 500 Hz is left off (counted)."""
    fan = Excitation(id="fan", type="speed", rpm=1200.0, orders=(1.0,))
    data = interference(oscillators((10.0, 60.0, 500.0), (fan,)), exact((10.0, 60.0, 500.0)))
    assert data.rpm_max == pytest.approx(1500.0, rel=1e-15)
    assert data.hz_max == pytest.approx(66.0, rel=1e-15)
    assert [n for n, _ in data.modes] == [1, 2] and data.modes_above == 1


def test_no_speed_source_no_lines():
    """A band alone draws no order lines (there is no speed to plot against)."""
    band = Excitation(id="b", type="band", f_min_hz=5.0, f_max_hz=9.0)
    data = interference(oscillators((7.0,), (band,)), exact((7.0,)))
    assert data.lines == () and data.crossings == ()
