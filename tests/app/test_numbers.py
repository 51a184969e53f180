"""The one number format (app/text/numbers.py) against arithmetic: what it writes reads back to
the value within half a unit of its last significant digit, engineering exponents are multiples of
three, and CSV cells keep 12 significant digits with no binary noise."""

import math
import re

from hypothesis import given
from hypothesis import strategies as st

from app.text.numbers import csv_number, number, tick_texts

finite = st.floats(min_value=-1e30, max_value=1e30, allow_nan=False, allow_infinity=False).filter(
    lambda v: v == 0 or abs(v) > 1e-30)


@given(finite, st.integers(min_value=2, max_value=8))
def test_number_reads_back_within_half_its_last_digit(v, sig):
    """Math: a value rounded to ``sig`` significant digits differs from it by at most half a unit
    of the last digit, 0.5 x 10^(1 - sig) relative (plus one ulp of float round-off)."""
    text = number(v, sig)
    back = float(text)
    assert abs(back - v) <= 0.5 * 10.0 ** (1 - sig) * abs(v) * (1 + 1e-12) + 1e-300
    digits = re.sub(r"e.*$", "", text).replace("-", "").replace(".", "").strip("0")
    assert len(digits) <= sig, text


@given(finite)
def test_engineering_exponent_is_a_multiple_of_three(v):
    """Common practice (engineering notation): an exponent, where written, is a multiple of 3 and
    the mantissa lies in [1, 1000), so ``e-6`` reads as micro and ``e3`` as kilo."""
    text = number(v)
    if "e" in text:
        mant, exp = text.split("e")
        assert int(exp) % 3 == 0
        assert 1 <= abs(float(mant)) < 1000
    else:
        assert v == 0 or 1e-3 * (1 - 5e-4) <= abs(v) < 1e4


@given(finite)
def test_csv_cell_keeps_12_digits_and_drops_noise(v):
    """Math: 12 significant digits reproduce the value to 5e-12 relative; the cell never holds
    more (so 0.1 + 0.2 is written 0.3, not 0.30000000000000004)."""
    cell = csv_number(v)
    assert abs(float(cell) - v) <= 5e-12 * abs(v)
    digits = re.sub(r"e.*$", "", cell).replace("-", "").replace(".", "").strip("0")
    assert len(digits) <= 12, cell


def test_csv_noise_examples():
    """Math: binary sums that print with noise under repr are written as their decimal value."""
    assert csv_number(0.1 + 0.2) == "0.3"
    assert csv_number(1.1 * 3) == "3.3"
    assert csv_number(math.inf) == "inf" and csv_number(math.nan) == "nan"


def test_linear_ticks_share_one_exponent_and_read_true():
    """Math: ticks at 0, 0.5 mm and 1 mm in metres read back as those values; one exponent."""
    values = [0.0, 0.0005, 0.001, 0.0015]
    texts = tick_texts(values, 0.0005)
    assert [float(t) for t in texts] == values
    texts = tick_texts([0.0, 2e-6, 4e-6], 2e-6)
    assert texts[1:] == ["2e-6", "4e-6"]
    assert [float(t) for t in texts] == [0.0, 2e-6, 4e-6]


def _boundary_values():
    """Values on and beside the rounding boundaries d.dd...5 x 10^e, and where rounding carries
    into the next power of ten (9.9995 at 4 digits), around the plain range's ends too."""
    digits = st.integers(min_value=1, max_value=8)
    return st.builds(
        lambda sig, mant, e, nudge, neg: (-1 if neg else 1) * nudge(
            (mant + 0.5) * 10.0 ** (e - sig + 1)),
        digits, st.integers(min_value=1, max_value=99_999_999), st.integers(-6, 6),
        st.sampled_from([lambda x: x, lambda x: math.nextafter(x, 0),
                         lambda x: math.nextafter(x, math.inf)]),
        st.booleans())


@given(st.one_of(finite, _boundary_values()), st.integers(min_value=1, max_value=8))
def test_number_is_the_correctly_rounded_decimal(v, sig):
    """IEEE 754-2008 sec. 5.12.2 (correctly rounded conversion to decimal, ties to even): the
    text written is the exact binary value rounded to ``sig`` significant digits, checked with
    Python's decimal module (exact arithmetic on Decimal(v)), a different algorithm from the
    float formatting the display uses. Includes ties, their neighbours and carries."""
    from decimal import ROUND_HALF_EVEN, Decimal

    text = number(v, sig)
    if v == 0:
        assert text == "0"
        return
    exact = Decimal(v)
    place = exact.adjusted() - sig + 1
    want = exact.quantize(Decimal(1).scaleb(place), rounding=ROUND_HALF_EVEN)
    assert Decimal(text) == want, (v, sig, text, want)


_any_float = st.floats(allow_nan=True, allow_infinity=True)
# values at the edges the widths must get right: powers of ten and the rounding edge below them
_edges = st.sampled_from([1e-3, 9.9995, 9.99949999999, 9.99950000001, 999.95, 9999.5, 1e4,
                          0.00099995, 99.95, 99.949999999, 9.95, 0.05, 1e22, 1e-300, 5e-324,
                          1.7976931348623157e308, 0.0, -0.0])


@given(st.lists(st.one_of(_any_float, _edges, _edges.map(lambda v: -v)), min_size=1,
                max_size=20), st.integers(min_value=1, max_value=8))
def test_number_widths_never_fall_short_of_the_text(values, sig):
    """Counting (an upper bound, no source needed): number_widths is never shorter than the text
    number() writes, for any float (NaN, infinities, subnormals, signs, values at powers of ten
    and at the rounding edge just below them), so a column fitted to it never cuts a number."""
    from app.text.numbers import number_widths

    widths = number_widths(values, sig)
    for v, w in zip(values, widths):
        assert len(number(v, sig)) <= w, (v, number(v, sig), w)


@given(st.lists(st.one_of(_any_float, _edges, _edges.map(lambda v: -v)), min_size=1,
                max_size=20), st.integers(min_value=0, max_value=3))
def test_percent_widths_never_fall_short_of_the_text(values, decimals):
    """Counting (an upper bound): percent_widths is never shorter than percent()'s text."""
    from app.text.numbers import percent, percent_widths

    widths = percent_widths(values, decimals)
    for v, w in zip(values, widths):
        assert len(percent(v, decimals)) <= w, (v, percent(v, decimals), w)


def test_widths_are_the_text_lengths_where_no_zero_is_dropped():
    """Counting: where number() drops no trailing zero the width is the text's own length (a
    bound that is too loose would make the table format every value it meant to skip); so is
    a percentage's, but for one digit more at a value that sits on a rounding edge (9.95)."""
    import random

    from app.text.numbers import number_widths, percent, percent_widths

    rnd = random.Random(7)
    values = [rnd.choice((1, -1)) * 10 ** rnd.uniform(-9, 9) for _ in range(4000)]
    for sig in (4, 6):
        widths = number_widths(values, sig)
        kept = [(len(number(v, sig)), w) for v, w in zip(values, widths)
                if not f"{abs(v):.{sig - 1}e}".split("e")[0].endswith("0")]
        assert len(kept) > 3000
        assert sum(n == w for n, w in kept) >= 0.99 * len(kept)
    shares = [rnd.uniform(0, 100) for _ in range(2000)] + [99.95, 9.95, 0.0, 100.0]
    pairs = list(zip(percent_widths(shares), (len(percent(v)) for v in shares)))
    assert all(w >= n for w, n in pairs)
    assert sum(w == n for w, n in pairs) >= len(pairs) - 2
