"""Interference of order lines with natural frequencies: the data of an interference diagram.

An interference diagram (the trade also calls it a Campbell diagram) plots frequency (Hz, up)
against shaft speed (rpm, across). A speed source's order ``n`` is the line ``f = n * rpm / 60``
through the origin; the source's operating range is a span of speed (a single speed when it has
no range). In this tool the natural frequencies do not depend on shaft speed (a lumped model has no
gyroscopic or centrifugal stiffening), so each elastic mode is a horizontal line ``f = f_i``.

An order line meets mode ``i`` at one speed, ``rpm = 60 f_i / n`` (math). The crossing matters when
that speed lies in the operating range: the machine then runs, at that speed, with an excitation
exactly on the natural frequency.

Margin, consistent with :mod:`solver.margins`: at speed ``r`` the order excites ``e = n r / 60``, and
the margin check widens that to ``[e (1 - p), e (1 + p)]``; mode ``f`` conflicts when it lies
strictly inside, i.e. when ``f / (1 + p) < e < f / (1 - p)``. So the band drawn around a mode is
``[f / (1 + p), f / (1 - p)]`` (slightly wider above than below), and an order line is within the
margin of the mode at the speeds ``60 f / (n (1 + p)) < rpm < 60 f / (n (1 - p))``.
"""

from __future__ import annotations

from dataclasses import dataclass

from .errors import checked_arguments
from .margin_table import margin_of
from .margins import EDGE_RTOL
from .model import Model

#: The speed axis runs this far past the highest operating speed, so the range's upper edge and
#: the order lines' run beyond it are seen.
RPM_HEADROOM = 1.25
#: The frequency axis runs this far past the highest order line (or the lowest mode above it).
HZ_HEADROOM = 1.1


@dataclass(frozen=True)
class OrderLine:
    """One order of one speed source: ``f = order * rpm / 60`` over the operating range.

    ``rpm_low`` / ``rpm_high``: the operating range in rev/min (equal for a single speed);
    ``low_hz`` / ``high_hz``: the frequencies the order covers there, ``order * rpm / 60``.
    """

    source_id: str
    order: float
    rpm_low: float
    rpm_high: float

    @property
    def low_hz(self) -> float:
        return self.order * self.rpm_low / 60.0

    @property
    def high_hz(self) -> float:
        return self.order * self.rpm_high / 60.0

    def hz_at(self, rpm: float) -> float:
        """The order's frequency in Hz at shaft speed ``rpm`` (rev/min)."""
        return self.order * rpm / 60.0


@dataclass(frozen=True)
class Crossing:
    """Where an order line meets an elastic mode's horizontal line.

    ``rpm = 60 * frequency_hz / order`` (rev/min); ``in_range``: that speed lies in the source's
    operating range (ends included, to :data:`solver.margins.EDGE_RTOL`).
    ``margin_rpm_low`` / ``margin_rpm_high``: the speeds between which the order is within the
    margin of the mode, ``60 f / (order (1 + p))`` and ``60 f / (order (1 - p))``.
    """

    mode: int
    frequency_hz: float
    source_id: str
    order: float
    rpm: float
    in_range: bool
    margin_rpm_low: float
    margin_rpm_high: float


@dataclass(frozen=True)
class Interference:
    """Everything an interference diagram draws, in Hz and rev/min.

    modes : ((mode number, Hz), ...) elastic modes up to ``hz_max``, ascending.
    lines : one :class:`OrderLine` per order of every speed source, in model order.
    crossings : every crossing of a line with a listed mode at a speed up to ``rpm_max``, by
        source, order and mode.
    rpm_max, hz_max : suggested extents of the speed and frequency axes (both start at 0).
    modes_above : number of elastic modes above ``hz_max`` (left off the diagram).
    """

    margin_percent: float
    modes: tuple
    lines: tuple
    crossings: tuple
    rpm_max: float
    hz_max: float
    modes_above: int = 0

    @property
    def in_range(self) -> tuple:
        """The crossings inside their source's operating range."""
        return tuple(c for c in self.crossings if c.in_range)

    def mode_band_hz(self, frequency_hz: float) -> tuple[float, float]:
        """The margin band around a mode: ``(f / (1 + p), f / (1 - p))`` Hz (module docstring)."""
        return mode_band_hz(frequency_hz, self.margin_percent)


def mode_band_hz(frequency_hz: float, margin_percent: float) -> tuple[float, float]:
    """``(f / (1 + p), f / (1 - p))`` in Hz, ``p = margin_percent / 100``: an order frequency
    strictly inside it puts the mode within the margin (see the module docstring)."""
    p = margin_percent / 100.0
    return frequency_hz / (1.0 + p), frequency_hz / (1.0 - p)


def order_lines(model: Model) -> tuple:
    """One :class:`OrderLine` per order of each speed source of ``model``."""
    out = []
    for e in model.excitations:
        if e.type != "speed":
            continue
        lo, hi = e.speed_range_rpm()
        for o in e.orders:
            out.append(OrderLine(source_id=e.id, order=float(o), rpm_low=lo, rpm_high=hi))
    return tuple(out)


@checked_arguments
def interference(model: Model, modal, margin_percent: float | None = None) -> Interference:
    """The order lines, elastic modes and their crossings for ``model``'s speed sources.

    Parameters
    ----------
    model : Model whose ``excitations`` of type ``"speed"`` give the order lines.
    modal : its ModalResult (``frequencies_hz`` and ``is_zero`` are read; zero-frequency modes are
        left out: a rigid-body motion has no resonance to excite).
    margin_percent : the margin, default the model's.

    Returns
    -------
    Interference. Without a speed source it has no lines, no crossings and zero extents.
    """
    pct = margin_of(model, margin_percent)
    p = pct / 100.0
    lines = order_lines(model)
    elastic = [(i + 1, float(f)) for i, (f, z) in enumerate(zip(modal.frequencies_hz,
                                                                modal.is_zero))
               if not z and f > 0]
    if not lines:
        return Interference(margin_percent=pct, modes=(), lines=(), crossings=(), rpm_max=0.0,
                            hz_max=0.0, modes_above=len(elastic))
    rpm_max = RPM_HEADROOM * max(ln.rpm_high for ln in lines)
    top = max(ln.hz_at(rpm_max) for ln in lines)
    # the lowest mode above the order lines is kept in view: it shows how much room there is
    above = [f for _, f in elastic if f > top]
    hz_max = HZ_HEADROOM * max(top, min(above) if above else 0.0)
    shown = tuple((n, f) for n, f in elastic if f <= hz_max)
    crossings = []
    for ln in lines:
        for n, f in shown:
            rpm = 60.0 * f / ln.order
            if rpm > rpm_max:
                continue
            inside = ln.rpm_low * (1 - EDGE_RTOL) <= rpm <= ln.rpm_high * (1 + EDGE_RTOL)
            crossings.append(Crossing(
                mode=n, frequency_hz=f, source_id=ln.source_id, order=ln.order, rpm=rpm,
                in_range=inside, margin_rpm_low=60.0 * f / (ln.order * (1 + p)),
                margin_rpm_high=60.0 * f / (ln.order * (1 - p))))
    return Interference(margin_percent=pct, modes=shown, lines=lines, crossings=tuple(crossings),
                        rpm_max=rpm_max, hz_max=hz_max, modes_above=len(elastic) - len(shown))


__all__ = ["Crossing", "Interference", "OrderLine", "interference", "mode_band_hz",
           "order_lines"]
