"""Excitation sources in words: a shaft speed (one speed or an operating range) with its orders,
or a band. Used by the Sources and Tune panels, the report's notes and the command line."""

from __future__ import annotations

from app.text.numbers import band_text, hz, number


def orders_text(orders) -> str:
    """``1, 2, 4.5``."""
    return ", ".join(f"{o:g}" for o in orders)


def speed_text(e) -> str:
    """``1450 rpm`` or, over an operating range, ``600 to 1800 rpm``."""
    lo, hi = e.speed_range_rpm()
    return f"{number(lo)} rpm" if hi <= lo else f"{number(lo)} to {number(hi)} rpm"


def source_summary(e) -> str:
    """``1450 rpm, orders 1, 2`` / ``600 to 1800 rpm, order 2`` / ``10 to 50 Hz``."""
    if e.type != "speed":
        return band_text(e.f_min_hz, e.f_max_hz)
    return f"{speed_text(e)}, order{'s' if len(e.orders) > 1 else ''} {orders_text(e.orders)}"


def order_frequencies(e) -> str:
    """Each order with the frequencies it covers: ``1× = 24.17 Hz, 2× = 48.33 Hz`` (one speed) or
    ``1× = 10 to 30 Hz`` (a range)."""
    return ", ".join(f"{o:g}× = {band_text(lo, hi) if hi > lo else hz(lo)}"
                     for o, (lo, hi) in zip(e.orders, e.frequencies_hz()))


__all__ = ["order_frequencies", "orders_text", "source_summary", "speed_text"]
