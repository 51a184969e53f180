"""Unit entry: app.units against pint's own conversions and exact handbook factors."""

import math

import pint
import pytest

from app.text import units

# NIST SP 811 (2008), appendix B: exact definitions 1 lbf = 4.4482216152605 N, 1 in = 0.0254 m.
LBF_PER_IN_IN_N_PER_M = 175.126835


def test_one_lbf_per_inch_is_the_handbook_value():
    """Source: NIST SP 811 exact definitions; 4.4482216152605 / 0.0254 = 175.126835 N/m (9 s.f.)."""
    # the handbook figure is rounded to 9 significant figures: agree within half its last digit
    assert units.parse("1 lbf/in", "stiffness") == pytest.approx(LBF_PER_IN_IN_N_PER_M, abs=5e-7)
    assert units.parse("1", "stiffness", "US") == pytest.approx(LBF_PER_IN_IN_N_PER_M, abs=5e-7)
    assert units.parse("1 lbf/in", "stiffness") == pytest.approx(4.4482216152605 / 0.0254,
                                                                rel=1e-14)


@pytest.mark.parametrize("text,kind,pint_unit", [
    ("12 lbf/in", "stiffness", "N/m"),
    ("3.5 kN/mm", "stiffness", "N/m"),
    ("20 lb", "mass", "kg"),
    ("0.4 kg m^2", "inertia", "kg*m**2"),
    ("150 lb*in**2", "inertia", "kg*m**2"),
    ("7 in", "length", "m"),
    ("25 mm", "length", "m"),
    ("3 in/s", "velocity", "m/s"),
    ("40 lbf*s/in", "damping", "N*s/m"),
    ("2 deg", "angle", "rad"),
])
def test_entries_convert_as_pint_converts(text, kind, pint_unit):
    """Source: pint's own conversion of the same text (its definitions file) — rtol 1e-12."""
    ureg = pint.UnitRegistry()
    expected = ureg.Quantity(text.replace("^", "**")).to(pint_unit).magnitude
    assert units.parse(text, kind) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("kind", sorted(units.KINDS))
def test_display_factors_match_pint(kind):
    """Source: pint; the hard-coded display factors (kept so showing values needs no pint) must
    equal pint's conversion of one display unit to SI — rtol 1e-12."""
    ureg = pint.UnitRegistry()
    qk = units.KINDS[kind]
    for system in units.SYSTEMS:
        _, pint_text, factor = qk.display[system]
        assert ureg.Quantity(1.0, pint_text).to(qk.si_pint).magnitude == pytest.approx(
            factor, rel=1e-12)


def test_plain_numbers_are_in_the_display_system():
    """Source: NIST SP 811 (1 lb = 0.45359237 kg exact); common practice for unit-less entry."""
    assert units.parse("20", "mass", "US") == pytest.approx(20 * 0.45359237, rel=1e-15)
    assert units.parse("20", "mass", "SI") == 20.0


@pytest.mark.parametrize("text,reason", [
    ("12 kg", "not a stiffness"),
    ("abc", "cannot read"),
    ("", "enter a stiffness"),
    ("-5 N/m", "must be positive"),
    ("1e999", "finite"),
    ("12 lbf/", "cannot read"),
    ("abc", "'abc' is not a unit"),
    ("1,5", "decimal point"),
    ("nan", "finite"),
    ("-inf N/m", "finite"),
])
def test_bad_entries_are_refused_with_a_reason(text, reason):
    """Common practice: refuse input that is not a positive finite stiffness, saying why."""
    with pytest.raises(units.UnitError, match=reason):
        units.parse(text, "stiffness")


def test_format_round_trips_through_parse():
    """Math: format then parse gives the value back to the 6 significant digits shown."""
    for system in units.SYSTEMS:
        text = units.format_value(2101.522022957717, "stiffness", system)
        assert math.isclose(units.parse(text, "stiffness", system), 2101.522022957717,
                            rel_tol=1e-5)
