"""The one number format: every value a person reads (tables, panels, plot ticks, the report, the
command line) and every value written to CSV goes through here.

Display (:func:`number`, :func:`quantity`, :func:`hz`): a fixed count of significant digits,
trailing zeros dropped; plain decimals for magnitudes in [0.001, 10000), engineering notation
outside (the exponent a multiple of three, so it reads as an SI prefix: ``200e-6`` is 200 micro,
``26.95e3`` is 26.95 kilo). Only ASCII, so the command line prints it on any console and a
spreadsheet or ``float()`` reads it back.

CSV (:func:`csv_number`): the value rounded to 12 significant digits and written as Python's
shortest repr, exact to far more digits than any display shows but free of binary noise
(``0.30000000000000004`` is written ``0.3``).
"""

from __future__ import annotations

import math
import re

#: Significant digits of a displayed value (amplitudes, stiffnesses, masses, widths, ratios).
SIG = 4
#: Significant digits of a displayed natural frequency: what the command line has always printed,
#: enough to set a result beside a published check case to 1 ppm, and margins and retune targets
#: are read against it.
FREQ_SIG = 6
#: Magnitudes in [PLAIN_LOW, PLAIN_HIGH) are written without an exponent.
PLAIN_LOW, PLAIN_HIGH = 1e-3, 1e4
#: Significant digits kept in CSV.
CSV_SIG = 12

DASH = "—"
#: Decimal exponents written plainly: log10 of PLAIN_LOW and PLAIN_HIGH.
_PLAIN_E = (round(math.log10(PLAIN_LOW)), round(math.log10(PLAIN_HIGH)))
_INFINITE = (math.inf, -math.inf)


def _strip(text: str) -> str:
    """``200.0`` -> ``200``, ``51.660`` -> ``51.66`` (the digits shown are the significant ones)."""
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return text


def _scaled(value: float, e3: int) -> float:
    """``value / 10**e3`` without passing through ``10.0**e3``, which is 0 below 1e-323 and inf
    above 1e308 (a subnormal value such as 5e-324 has e3 = -324): exact decimal arithmetic
    there."""
    if -300 <= e3 <= 300:
        return value / 10.0 ** e3
    from decimal import Decimal

    return float(Decimal(value).scaleb(-e3))


def number(value, sig: int = SIG) -> str:
    """``value`` to ``sig`` significant digits: ``51.66``, ``0.02``, ``200e-6``, ``26.95e3``.

    NaN is a dash, infinity ``inf``; zero ``0`` (never ``-0``).
    """
    v = float(value)
    if v != v:
        return DASH
    if v == 0:
        return "0"
    if v in _INFINITE:
        return "inf" if v > 0 else "-inf"
    # round first, in decimal text (a float rounded up past 1.8e308 would be inf): 9999.7 at 4
    # digits is 1.000e4 and takes the exponent
    mant, exp = f"{abs(v):.{sig - 1}e}".split("e")
    e = int(exp)
    places = sig - 1 - e
    if _PLAIN_E[0] <= e < _PLAIN_E[1] and places >= 0:
        # the same digits written at once: both conversions round the exact binary value to
        # the same last place (or, where rounding carried into a new power of ten, both give
        # that power), and this is the shorter path (tables of hundreds of modes)
        text = f"{v:.{places}f}"
        return _strip(text)
    digits = mant.replace(".", "")
    sign = "-" if v < 0 else ""
    if _PLAIN_E[0] <= e < _PLAIN_E[1]:      # fewer digits than the integer part (9870 at 2)
        return sign + _strip(_point(digits, e))
    e3 = 3 * math.floor(e / 3)
    return sign + _strip(_point(digits, e - e3)) + f"e{e3}"


def _point(digits: str, e: int) -> str:
    """The significant ``digits`` (``"2695"``) of a value ``d.ddd x 10^e`` written with a decimal
    point and no exponent: ``26.95`` for e = 1, ``0.002695`` for e = -3."""
    if e < 0:
        return "0." + "0" * (-e - 1) + digits
    whole = digits[: e + 1].ljust(e + 1, "0")
    return whole + ("." + digits[e + 1:] if len(digits) > e + 1 else "")


def signed(value, sig: int = SIG) -> str:
    """:func:`number` with an explicit ``+`` on positive values (changes, sensitivities)."""
    text = number(value, sig)
    return "+" + text if float(value) > 0 and text[0].isdigit() else text


def quantity(value, unit: str, sig: int = SIG) -> str:
    """``number unit``: ``2.5e6 N/m``, ``29.92e-6 m/N``; no unit for a ratio (``unit`` "")."""
    text = number(value, sig)
    return f"{text} {unit}" if unit and text != DASH else text


def hz(value, sig: int = FREQ_SIG) -> str:
    """A frequency with its unit: ``51.6613 Hz``."""
    return quantity(value, "Hz", sig)


def percent(value, decimals: int = 1) -> str:
    """A share of a whole (0 to 100) with fixed decimals, as a column of shares lines up:
    ``26.4``; a dash for NaN."""
    v = float(value)
    if math.isnan(v):
        return DASH
    text = f"{v:.{decimals}f}"
    return "0" + text[2:] if text.startswith("-0") and float(text) == 0 else text


def number_widths(values, sig: int = SIG):
    """For each of ``values`` (array-like), a count of characters that ``number(v, sig)`` never
    exceeds, without writing the text (a table of hundreds of values asks on every edit whether
    a column must be widened). The count is of the text before :func:`_strip` drops trailing
    zeros, at the exponent of the value rounded to ``sig`` digits; where the floating-point
    log10 leaves that exponent in doubt (a value within 1e-9 of a power of ten or of the
    rounding edge below one), the larger count of the two exponents. Returns an int array."""
    import numpy as np

    v = np.asarray(values, float).ravel()
    out = np.full(v.shape, 4, np.int64)        # "—", "0", "inf", "-inf"
    a = np.abs(v)
    ok = np.isfinite(v) & (a > 0)
    if not ok.any():
        return out
    lg = np.log10(a[ok])
    e0 = np.floor(lg)
    frac = lg - e0
    doubt = 1e-9
    # rounding to sig digits carries into the next power of ten from a mantissa of
    # 10 - 5 x 10^-sig on (9.9995 at 4 digits)
    carry = math.log10(10.0 - 0.5 * 10.0 ** (1 - sig))
    low = np.where(frac < doubt, e0 - 1, np.where(frac > carry + doubt, e0 + 1, e0))
    high = np.where(frac > carry - doubt, e0 + 1, e0)
    widest = np.zeros(len(e0))
    for shift in (-1, 0, 1):
        e = e0 + shift
        inside = (e >= low) & (e <= high)
        widest = np.where(inside, np.maximum(widest, _width_at(e, sig)), widest)
    out[ok] = widest.astype(np.int64) + (v[ok] < 0)
    return out


def _width_at(e, sig: int):
    """Characters of :func:`number`'s text (unsigned, before :func:`_strip`) of values whose
    rounded decimal exponent is ``e`` (an array)."""
    import numpy as np

    places = sig - 1 - e
    plain_width = np.where(places >= 0, np.maximum(e + 1, 1) + np.where(places > 0, 1 + places, 0),
                           e + 1)
    e3 = 3 * np.floor(e / 3)
    k = e - e3
    exponent = 1 + (e3 < 0) + np.where(np.abs(e3) >= 100, 3, np.where(np.abs(e3) >= 10, 2, 1))
    eng_width = (k + 1) + np.where(sig > k + 1, sig - k, 0) + exponent
    plain = (e >= _PLAIN_E[0]) & (e < _PLAIN_E[1])
    return np.where(plain, plain_width, eng_width)


def percent_widths(values, decimals: int = 1):
    """For each of ``values``, a count of characters that ``percent(v, decimals)`` never exceeds
    (see :func:`number_widths`): the sign, the whole digits of the value rounded to
    ``decimals`` places (counted against exact powers of ten, with a margin of 1e-12 for the
    rounding) and the decimals. Returns an int array."""
    import numpy as np

    v = np.asarray(values, float).ravel()
    out = np.ones(v.shape, np.int64)           # "—"
    ok = np.isfinite(v)
    a = np.abs(v[ok])
    huge = a >= 1e21
    top = np.where(huge, 1.0, a) * (1 + 1e-12) + 0.5 * 10.0 ** -decimals
    whole = np.ones(len(a), np.int64)
    for k in range(1, 23):                      # 10.0 ** k is exact up to 10^22
        whole += top >= 10.0 ** k
    # past 10^21 the whole digits from log10, one more for its rounding
    whole = np.where(huge, np.floor(np.log10(np.where(huge, a, 1.0))).astype(np.int64) + 2,
                     whole)
    out[ok] = (v[ok] < 0) + whole + (1 + decimals if decimals > 0 else 0)
    out[~ok & np.isinf(v)] = 4                 # "inf", "-inf"
    return out


def band_text(low_hz: float, high_hz: float) -> str:
    """A frequency interval: ``20 to 200 Hz``; a single line ``49.5 Hz``."""
    if high_hz <= low_hz:
        return hz(low_hz)
    return f"{number(low_hz, FREQ_SIG)} to {hz(high_hz)}"


def csv_number(value) -> str:
    """A CSV cell: 12 significant digits, shortest form (``0.3``, ``1.5e-05``, ``inf``, ``nan``)."""
    v = float(value)
    if math.isnan(v):
        return "nan"
    if math.isinf(v):
        return "inf" if v > 0 else "-inf"
    return repr(float(f"{v:.{CSV_SIG - 1}e}")) if v != 0 else "0.0"


def tick_texts(values, spacing: float) -> list[str]:
    """Labels of the ticks of a linear plot axis: true values, one engineering exponent for the
    whole axis (``0``, ``0.5e-3``, ``1e-3``) and as many decimals as the spacing needs."""
    values = [float(v) for v in values]
    finite = [abs(v) for v in values if math.isfinite(v)]
    big = max(finite, default=0.0)
    if big == 0 or PLAIN_LOW <= big < PLAIN_HIGH:
        e3 = 0
    else:
        e3 = 3 * math.floor(int(f"{big:.3e}".split("e")[1]) / 3)
    step = _scaled(abs(spacing), e3) if spacing else 0.0
    places = max(0, math.ceil(-math.log10(step) - 1e-9)) if step > 0 else 0
    places = min(places, 12)
    out = []
    for v in values:
        m = _scaled(v, e3) if math.isfinite(v) else math.nan
        if not math.isfinite(m):
            out.append("")
            continue
        text = f"{m:.{places}f}"
        if float(text) == 0:
            out.append("0")
            continue
        out.append(text + (f"e{e3}" if e3 else ""))
    return out


_PARSE = re.compile(r"^\s*([-+−]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+−]?\d+)?)\s*(.*)$")


def parse_number(text: str) -> float:
    """Read back a number written by this module (also ``5×10⁶`` and a trailing unit).

    Raises ValueError on text that holds no number."""
    s = (text or "").strip()
    if s == DASH:
        return math.nan
    if s in ("inf", "∞"):
        return math.inf
    s = s.replace("−", "-")
    sup = str.maketrans("⁻⁰¹²³⁴⁵⁶⁷⁸⁹", "-0123456789")
    m = re.match(r"^\s*([-+]?[\d.]*)\s*×?\s*10([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+)", s)
    if m:
        mant = float(m.group(1)) if m.group(1) not in ("", "+", "-") else 1.0
        return mant * 10.0 ** int(m.group(2).translate(sup))
    m = _PARSE.match(s)
    if not m:
        raise ValueError(f"no number in {text!r}")
    return float(m.group(1))


__all__ = [
    "FREQ_SIG",
    "SIG",
    "band_text",
    "csv_number",
    "hz",
    "number",
    "parse_number",
    "percent",
    "quantity",
    "signed",
    "tick_texts",
]
