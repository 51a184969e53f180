"""Shaft speeds and frequencies typed with units (app.text.units, parsed with pint).

A shaft speed in Hz or 1/min counts revolutions (1 Hz = 1 rev/s = 60 rpm); one in rad/s counts
radians (1 rad/s = 60 / (2 pi) rpm). pint treats the radian as 1, so a bare conversion of Hz to rpm
would come out 2 pi too small: the values below are worked by hand (math; NIST SP 811 for the
minute and the radian), not read from pint.
"""

import math

import pytest

from app.text import units


@pytest.mark.parametrize("text,rpm", [
    ("1450", 1450.0), ("1450 rpm", 1450.0), ("1450 rev/min", 1450.0), ("1450 1/min", 1450.0),
    ("1450 min^-1", 1450.0), ("24 Hz", 1440.0), ("24 rev/s", 1440.0),
    ("100 rad/s", 100 * 60 / (2 * math.pi)), ("360 deg/s", 60.0),
])
def test_shaft_speed_in_rpm(text, rpm):
    assert units.parse(text, "shaft speed") == pytest.approx(rpm, rel=1e-12)


@pytest.mark.parametrize("text,hz", [
    ("50", 50.0), ("50 Hz", 50.0), ("3000 rpm", 50.0), ("3000 1/min", 50.0), ("2 kHz", 2000.0),
    ("314.159265358979 rad/s", 50.0),
])
def test_frequency_in_hz(text, hz):
    assert units.parse(text, "frequency") == pytest.approx(hz, rel=1e-12)


@pytest.mark.parametrize("text,kind,reason", [
    ("0 rpm", "shaft speed", "positive"), ("3 kg", "shaft speed", "not a shaft speed"),
    ("fast", "shaft speed", "cannot read"), ("-1 Hz", "frequency", "zero or positive"),
])
def test_refusals_say_why(text, kind, reason):
    """Common practice: a refusal names what is wrong and gives an example."""
    with pytest.raises(units.UnitError, match=reason):
        units.parse(text, kind)


def test_shown_in_rpm_and_hz():
    assert units.format_value(1450.0, "shaft speed") == "1450 rpm"
    assert units.format_value(24.5, "frequency") == "24.5 Hz"
