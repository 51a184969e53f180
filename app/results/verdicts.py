"""Margin verdicts in words: which mode is too close to which source, how close, and the way out.

:func:`solver.margin_check` finds the conflicts (a mode strictly inside a source's interval widened
by the margin); this module says them the way the case is: a mode *inside* a band's own interval is
"inside" it, one only inside the widening is "within 15 % of" it. Sources are named by their
labels, frequencies written with :mod:`app.text.numbers`. The modes table, the Tune panel, the
report and the command line all take their sentences from here, so they agree.
"""

from __future__ import annotations

from dataclasses import dataclass

from app.results.names import names
from app.text.numbers import FREQ_SIG, band_text, hz, number


@dataclass(frozen=True)
class Verdict:
    """One conflict of :func:`solver.margin_check` with the words for it.

    ``inside`` : the mode lies in the source's own interval (a band's [f_min, f_max], or the band
    an order sweeps over a speed range), not only in the margin around it.  ``source`` : the source's name as shown (its label).
    """

    mode: int
    frequency_hz: float
    source_id: str
    source: str
    order: float | None
    low_hz: float
    high_hz: float
    lower_to_hz: float
    raise_to_hz: float
    move_hz: float
    margin_percent: float
    inside: bool

    @property
    def what(self) -> str:
        """The source and its frequencies: ``Sine test band (20 to 200 Hz)``,
        ``Pump order 2 (49.5 Hz)``."""
        if self.order is not None:
            return f"{self.source} order {self.order:g} ({band_text(self.low_hz, self.high_hz)})"
        return f"{self.source} ({band_text(self.low_hz, self.high_hz)})"

    @property
    def relation(self) -> str:
        return "inside" if self.inside else f"within {self.margin_percent:g} % of"

    @property
    def way_out(self) -> str:
        """``move it below 17 Hz or above 230 Hz`` (the nearest frequencies clear of every
        source); only ``above`` when nothing below clears them (a band from 0 Hz)."""
        if self.lower_to_hz <= 0:
            return f"move it above {hz(self.raise_to_hz)} (no frequency below clears the sources)"
        return f"move it below {hz(self.lower_to_hz)} or above {hz(self.raise_to_hz)}"

    @property
    def sentence(self) -> str:
        """``mode 1 at 51.6613 Hz is inside Sine test band (20 to 200 Hz): move it below ...``"""
        return (f"mode {self.mode} at {hz(self.frequency_hz)} is {self.relation} {self.what}:"
                f" {self.way_out}")

    @property
    def short(self) -> str:
        """For a table cell: ``inside Sine test band: move below 17 Hz or above 230 Hz``."""
        name = self.source + (f" ×{self.order:g}" if self.order is not None else "")
        if self.lower_to_hz <= 0:
            return f"{self.relation} {name}: move above {hz(self.raise_to_hz)}"
        return (f"{self.relation} {name}: move below {number(self.lower_to_hz, FREQ_SIG)} or above"
                f" {hz(self.raise_to_hz)}")

    @property
    def smaller_move(self) -> str:
        """``lower it by 34.66 Hz`` / ``raise it by 3.2 Hz``: the smaller of the two moves."""
        way = "lower it" if self.move_hz < 0 else "raise it"
        return f"{way} by {hz(abs(self.move_hz))}"


def verdicts(model, margin) -> list[Verdict]:
    """The conflicts of ``margin`` (a :class:`solver.margins.MarginResult` of ``model``) in words,
    in the order the solver found them (by mode, then source)."""
    table = names(model)
    out = []
    for c in margin.conflicts:
        # inside the source's own frequencies: a band, or the span an order sweeps over a
        # speed range (a single speed's line has no inside, only "within the margin")
        inside = ((c.order is None or c.high_hz > c.low_hz)
                  and c.low_hz <= c.frequency_hz <= c.high_hz)
        out.append(Verdict(mode=c.mode, frequency_hz=c.frequency_hz, source_id=c.source_id,
                           source=table.get(c.source_id, c.source_id), order=c.order,
                           low_hz=c.low_hz, high_hz=c.high_hz, lower_to_hz=c.lower_to_hz,
                           raise_to_hz=c.raise_to_hz, move_hz=c.move_hz,
                           margin_percent=margin.margin_percent, inside=inside))
    return out


def all_clear(model, margin) -> str:
    """The sentence for a model whose modes clear every source (empty without sources)."""
    if not model.excitations:
        return ""
    return (f"every elastic mode clears every source by at least {margin.margin_percent:g} %")


__all__ = ["Verdict", "all_clear", "verdicts"]
