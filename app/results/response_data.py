"""Forced-response curves for the Response panel and the report: plain data, no widgets.

A :class:`ResponseInput` says what drives the model (a harmonic force at one mass in one
direction, or motion of the base, i.e. every anchor together, in one direction). The chosen input
is a view preference of the panel, not part of the model file. :func:`compute_response` evaluates
``solver.harmonic_response`` or ``solver.base_transmissibility`` on a log-spaced grid refined
around each natural frequency and returns a :class:`ResponseCurves` with the peaks of each curve
(``solver.find_peaks``) and, for base input, the isolation crossover (``|T| = 1``).
"""

from __future__ import annotations

import csv
from dataclasses import dataclass, field

import numpy as np

from solver.errors import ModelError

from app.results.names import dof_name, names
from app.text.numbers import csv_number, number
from app.text.units import KINDS

#: Log-spaced points over the range, before the refinement around each natural frequency.
N_POINTS = 800
#: Relative offsets from each natural frequency added to the grid: ~30 per decade from 1e-4 to
#: 1e-1 on both sides, enough to resolve a half-power band down to a damping ratio of ~1e-4.
_REFINE = np.logspace(-4, -1, 30)
#: Auto range: this fraction of the lowest elastic frequency to this multiple of the highest.
AUTO_LOW, AUTO_HIGH = 0.2, 2.0

QUANTITIES = ("displacement", "velocity", "acceleration")
_FORCE_UNITS = {"displacement": "m/N", "velocity": "m/s/N", "acceleration": "m/s²/N"}
_TORQUE_UNITS = {"displacement": "rad/(N m)", "velocity": "rad/s/(N m)",
                 "acceleration": "rad/s²/(N m)"}
_FRF_NAMES = {"displacement": "receptance", "velocity": "mobility", "acceleration": "accelerance"}


@dataclass(frozen=True)
class ResponseInput:
    """What drives the model: ``kind`` "force" (at ``mass_id`` in ``direction``, 1 N or 1 N m)
    or "base" (all anchors and locked directions move together in ``direction``)."""

    kind: str
    direction: str
    mass_id: str = ""

    @property
    def label(self) -> str:
        """With ids (for messages about a choice that no longer exists); people read
        :meth:`text`."""
        if self.kind == "base":
            return f"Base motion in {self.direction}"
        return f"Force at {self.mass_id} in {self.direction}"

    def text(self, model) -> str:
        """As a person reads it: ``Force at Unit under test in y`` (the mass by its label;
        a torque on a torsion model)."""
        if self.kind == "base":
            return f"Base motion in {self.direction}"
        what = "Torque" if model is not None and model.kind == "torsion" else "Force"
        name = names(model).get(self.mass_id, self.mass_id) if model is not None else self.mass_id
        return f"{what} at {name} in {self.direction}"


@dataclass(frozen=True, eq=False)
class Curve:
    """One output: ``values`` (n_freq,) complex on the grid; ``peaks`` from solver.find_peaks."""

    label: str
    mass_id: str
    direction: str
    values: np.ndarray
    peaks: tuple

    @property
    def magnitude(self) -> np.ndarray:
        return np.abs(self.values)

    @property
    def phase_deg(self) -> np.ndarray:
        return np.degrees(np.angle(self.values))


@dataclass(frozen=True, eq=False)
class ResponseCurves:
    """Curves of one input on one frequency grid.

    freqs_hz : (n_freq,) Hz, ascending.   curves : one :class:`Curve` per output.
    quantity : "displacement" | "velocity" | "acceleration" (force input), or "transmissibility"
    (base input, absolute) / "relative transmissibility".   unit : text of the magnitude's SI
    unit ("—" for a ratio).   unit_kind : its :data:`app.text.units.KINDS` key ("" for a ratio),
    for showing it in another unit system (:meth:`display_unit`).
    bands : ``solver.source_bands`` rows (id, order, lo, hi, lo_widened, hi_widened) in Hz.
    crossovers_hz : per curve, frequencies where |T| falls through 1 (base input only).
    """

    input: ResponseInput
    freqs_hz: np.ndarray
    curves: tuple
    quantity: str
    unit: str
    title: str
    bands: tuple = ()
    natural_frequencies_hz: tuple = ()
    crossovers_hz: dict = field(default_factory=dict)
    notes: tuple = ()
    unit_kind: str = ""

    def display_unit(self, system: str = "SI") -> tuple[str, float]:
        """(unit text, SI value of one display unit) of the magnitude in ``system``; ("", 1) for
        a ratio."""
        if not self.unit_kind:
            return "", 1.0
        k = KINDS[self.unit_kind]
        return k.label(system), k.factor(system)

    def axis_label(self, system: str = "SI") -> str:
        """The magnitude axis title, short enough for a small plot, with its unit:
        ``|x/F| (m/N)``, ``|a/T| (rad/s²/(N m))``, ``|X/U| (ratio)``, ``|(X-U)/U| (ratio)``."""
        unit, _f = self.display_unit(system)
        torsion = self.unit_kind.startswith("torsional")
        symbol = {"displacement": "θ" if torsion else "x", "velocity": "ω" if torsion else "v",
                  "acceleration": "α" if torsion else "a"}
        if self.quantity in symbol:
            what = f"{symbol[self.quantity]}/{'T' if torsion else 'F'}"
        else:
            what = "(X-U)/U" if self.quantity.startswith("relative") else "X/U"
        return f"|{what}| ({unit or 'ratio'})"

    def write_csv(self, path, system: str = "SI") -> None:
        """One row per frequency: f, then magnitude (in ``system``'s unit) and phase (deg) of
        each curve; every header names its unit; 12 significant digits
        (:func:`app.text.numbers.csv_number`)."""
        unit, factor = self.display_unit(system)
        header = ["frequency_hz"]
        for c in self.curves:
            header += [f"{c.label} |{self.quantity}| ({unit or 'ratio'})",
                       f"{c.label} phase (deg)"]
        with open(path, "w", newline="", encoding="utf-8") as fh:
            w = csv.writer(fh)
            w.writerow(header)
            mags = [c.magnitude / factor for c in self.curves]
            phases = [c.phase_deg for c in self.curves]
            for i, f in enumerate(self.freqs_hz):
                row = [csv_number(f)]
                for m, p in zip(mags, phases):
                    row += [csv_number(m[i]), csv_number(p[i])]
                w.writerow(row)


def decade_ticks(lo: float, hi: float, labelled=(1, 2, 5), fmt=number) -> list[tuple[float, str]]:
    """Ticks for a log axis from lo to hi: the ``labelled`` mantissas of each decade labelled by
    ``fmt`` (default the shared number format: ``20``, ``500``, ``2000``, ``20e3``), the other
    integers with an empty label (minor)."""
    out = []
    for e in range(int(np.floor(np.log10(lo))) - 1, int(np.ceil(np.log10(hi))) + 1):
        for m in range(1, 10):
            v = m * 10.0 ** e
            if lo / 1.001 <= v <= hi * 1.001:
                out.append((v, fmt(v) if m in labelled else ""))
    return out


def elastic_frequencies(modal) -> np.ndarray:
    """Natural frequencies (Hz) of the modes that are not zero-frequency."""
    f = np.asarray(modal.frequencies_hz, float)
    return f[~np.asarray(modal.is_zero, bool)] if len(f) else f


def auto_range(modal) -> tuple[float, float]:
    """(f_lo, f_hi) Hz: 0.2 x the lowest elastic frequency to 2 x the highest (1 to 1000 Hz when
    there is none)."""
    f = elastic_frequencies(modal) if modal is not None else np.zeros(0)
    f = f[f > 0]
    if not len(f):
        return 1.0, 1000.0
    lo, hi = AUTO_LOW * f.min(), AUTO_HIGH * f.max()
    if hi <= lo * 1.01:
        hi = lo * 100
    return float(lo), float(hi)


def frequency_grid(f_lo: float, f_hi: float, natural_hz=(), n_points: int = N_POINTS) -> np.ndarray:
    """``n_points`` log-spaced points from f_lo to f_hi plus points close around each natural
    frequency inside the range (so a lightly damped peak and its half-power band are resolved)."""
    if not (np.isfinite(f_lo) and np.isfinite(f_hi)) or f_lo <= 0 or f_hi <= f_lo:
        raise ModelError(f"frequency range must be 0 < low < high, got {f_lo:g} to {f_hi:g} Hz")
    parts = [np.logspace(np.log10(f_lo), np.log10(f_hi), n_points)]
    for fn in natural_hz:
        if f_lo < fn < f_hi:
            parts.append(fn * np.concatenate([1 - _REFINE, [1.0], 1 + _REFINE]))
    f = np.unique(np.concatenate(parts))
    return f[(f >= f_lo) & (f <= f_hi)]


def default_input(model) -> ResponseInput | None:
    """Base motion in the first direction when the model has anchors, else a force at the first
    mass; None for a model without masses."""
    if not model.masses:
        return None
    d = model.directions[0]
    if model.anchors:
        return ResponseInput("base", d)
    return ResponseInput("force", d, model.masses[0].id)


def output_dofs(model) -> list[tuple[str, str]]:
    """Every (mass_id, direction) an output can be taken at (unlocked, with mass or junction)."""
    return [(m.id, d) for m in model.masses for d in model.directions if d not in m.fixed]


def compute_response(model, response_input: ResponseInput, outputs, quantity="displacement",
                     f_range=None, modal=None, relative: bool = False,
                     n_points: int = N_POINTS) -> ResponseCurves:
    """Curves of ``outputs`` [(mass_id, direction)] for ``response_input``.

    ``quantity`` applies to a force input (receptance, mobility, accelerance); a base input gives
    the transmissibility X/U (absolute, also the ratio of accelerations) or, with ``relative``,
    (X - U)/U. ``f_range`` (lo, hi) Hz, default :func:`auto_range`. Raises ModelError.
    """
    import solver

    if modal is None:
        modal = solver.modes(model)
    natural = tuple(float(f) for f in elastic_frequencies(modal))
    lo, hi = f_range if f_range is not None else auto_range(modal)
    freqs = frequency_grid(lo, hi, natural, n_points)
    system = solver.assemble(model)
    index = {dof: i for i, dof in enumerate(system.dofs)}
    notes = []
    # proportional damping with every mode at hand: modal superposition, exact and far cheaper
    # than a dynamic-stiffness solve per frequency; dashpots always go to the direct solve
    method = "modal" if not model.dampers and getattr(modal, "complete", False) else "direct"
    if response_input.kind == "base":
        if not model.anchors:
            raise ModelError("base motion needs at least one anchor to move")
        X = solver.base_transmissibility(system, freqs, response_input.direction,
                                         relative=relative, method=method, result=modal)
        q = "relative transmissibility" if relative else "transmissibility"
        unit, unit_kind = "—", ""
        title = f"{'Relative' if relative else 'Absolute'} transmissibility, base motion in" \
                f" {response_input.direction}"
    elif response_input.kind == "force":
        X = solver.harmonic_response(system, freqs,
                                     {(response_input.mass_id, response_input.direction): 1.0},
                                     output=quantity, method=method, result=modal)
        q = quantity
        torsion = model.kind == "torsion"
        unit = (_TORQUE_UNITS if torsion else _FORCE_UNITS)[quantity]
        unit_kind = ("torsional " if torsion else "") + _FRF_NAMES[quantity]
        title = f"{_FRF_NAMES[quantity].capitalize()}, unit {'torque' if torsion else 'force'}" \
                f" at {names(model).get(response_input.mass_id, response_input.mass_id)} in" \
                f" {response_input.direction}"
    else:
        raise ModelError(f'response input must be "force" or "base", got "{response_input.kind}"')
    curves = []
    crossovers = {}
    shown = names(model)
    for mass_id, d in outputs:
        if (mass_id, d) not in index:
            continue  # a locked or removed output: nothing to plot
        v = X[:, index[(mass_id, d)]]
        v = np.where(np.isfinite(v), v, np.nan)
        label = dof_name(model, mass_id, d, shown)
        curves.append(Curve(label=label, mass_id=mass_id, direction=d, values=v,
                            peaks=tuple(solver.find_peaks(freqs, np.abs(v)))))
        if response_input.kind == "base" and not relative:
            crossovers[label] = _crossings(freqs, np.abs(v), 1.0)
    if model.damping.model == "none" and not model.dampers:
        notes.append("No damping in the model: the peaks are bounded only by the frequency grid."
                     " Set a damping ratio or add dashpots for realistic amplitudes.")
    return ResponseCurves(input=response_input, freqs_hz=freqs, curves=tuple(curves), quantity=q,
                          unit=unit, title=title, bands=tuple(solver.source_bands(model)),
                          natural_frequencies_hz=natural, crossovers_hz=crossovers,
                          notes=tuple(notes), unit_kind=unit_kind)


def _crossings(f: np.ndarray, a: np.ndarray, level: float) -> tuple:
    """Frequencies (log-interpolated) where ``a`` passes from above ``level`` to below it."""
    out = []
    for i in range(len(a) - 1):
        if a[i] > level >= a[i + 1] and np.isfinite(a[i]) and np.isfinite(a[i + 1]):
            la, lb = np.log(a[i]), np.log(a[i + 1])
            t = (np.log(level) - la) / (lb - la) if lb != la else 0.0
            out.append(float(np.exp(np.log(f[i]) + t * (np.log(f[i + 1]) - np.log(f[i])))))
    return tuple(out)


def default_report_response(model, modal=None) -> ResponseCurves | None:
    """The report's response when the panel gave none: base transmissibility to every mass (up to
    four) when the model has anchors and any damping; None otherwise."""
    if not (model.dampers or model.damping.model != "none") or not model.anchors:
        return None
    inp = default_input(model)
    if inp is None:
        return None
    outs = [(m, d) for m, d in output_dofs(model) if d == inp.direction][-4:]
    return compute_response(model, inp, outs, modal=modal)
