"""Moving a resonance: parameter sweeps, retuning, and which element governs each mode.

Natural frequencies never fall when a stiffness grows and never rise when a mass grows (Rayleigh's
theorem of stiffness and mass monotonicity: each eigenvalue is a min-max of the Rayleigh quotient,
which is monotone in every k and every m). So a mode's frequency as a function of one element's
value is monotone, and a bracketed root-find on ``log(value)`` always finds the value that puts the
mode on a target, or proves the target out of that element's reach.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
from scipy.optimize import brentq

from .errors import ModelError, checked_arguments, number, numbers
from .model import Mass, Model, Spring
from .modes import modes

#: How many decades a retune may move a value before calling the target unreachable. Beyond
#: about 10^10 the matrices' conditioning spoils the lower modes' accuracy.
MAX_DECADES = 10

#: Editable element fields: (element type, field) -> display name and SI unit
FIELDS = {
    (Spring, "k"): ("stiffness k", "N/m"),
    (Spring, "k_t"): ("transverse stiffness k_t", "N/m"),
    (Mass, "mass"): ("mass", "kg"),
}


def _field_for(model: Model, element_id: str, field: str | None):
    el = model.element(element_id)
    if isinstance(el, Spring):
        f = field or "k"
        if f not in ("k", "k_t"):
            raise ModelError(f'spring "{element_id}": field must be "k" or "k_t", got "{f}"')
        if f == "k_t" and model.kind != "planar":
            raise ModelError(f'spring "{element_id}": k_t acts only in planar models')
    elif isinstance(el, Mass):
        f = field or "mass"
        if f == "inertia":
            f = "mass"
        if f != "mass":
            raise ModelError(f'mass "{element_id}": field must be "mass", got "{f}"')
    else:
        raise ModelError(f'"{element_id}" is not a spring or a mass; only those can be retuned')
    return el, f


def unit_of(model: Model, element_id: str, field: str | None = None) -> str:
    el, f = _field_for(model, element_id, field)
    if model.kind == "torsion":
        return "N m/rad" if isinstance(el, Spring) else "kg m^2"
    return FIELDS[(type(el), f)][1]


def value_of(model: Model, element_id: str, field: str | None = None) -> float:
    el, f = _field_for(model, element_id, field)
    return float(getattr(el, f))


@checked_arguments
def with_value(model: Model, element_id: str, value: float, field: str | None = None) -> Model:
    """A new model with one element's stiffness or mass set to ``value`` (SI)."""
    el, f = _field_for(model, element_id, field)
    return model.with_changes(put=[replace(el, **{f: float(value)})])


def _frequency(model: Model, mode: int) -> float:
    res = modes(model)
    if mode > res.n_modes:
        raise ModelError(f"mode {mode} does not exist: the model has {res.n_modes} modes")
    return float(res.frequencies_hz[mode - 1])


@checked_arguments
def retune(model: Model, element_id: str, mode: int, target_hz: float,
           field: str | None = None) -> float:
    """The value of one element's stiffness or mass that puts ``mode`` (from 1) on ``target_hz``.

    Parameters
    ----------
    model : Model
    element_id : id of a spring (field ``"k"``, or ``"k_t"`` in planar models) or a mass
        (field ``"mass"``; a disc's inertia in torsion).
    mode : mode number from 1, in ascending frequency.
    target_hz : the wanted natural frequency in Hz (> 0).

    Returns
    -------
    float : the value in SI units (N/m, N m/rad, kg or kg m^2).

    Raises
    ------
    ModelError : when the target lies outside what this element alone can reach, stating the
        reachable range; or on a bad id, field, mode or target.
    """
    el, f = _field_for(model, element_id, field)
    target = number(target_hz, "retune: target frequency (Hz)")
    if not math.isfinite(target) or target <= 0:
        raise ModelError(f"retune: target frequency must be a positive number of Hz, got {target_hz!r}")
    if isinstance(mode, bool) or int(mode) != mode or mode < 1:
        raise ModelError(f"retune: mode numbers start at 1, got {mode!r}")
    mode = int(mode)
    base = modes(model)
    if mode > base.n_modes:
        raise ModelError(f"retune: mode {mode} does not exist; the model has {base.n_modes} modes")
    if base.zero_mode(mode) is not None:
        raise ModelError(f"retune: mode {mode} is a zero-frequency mode ({base.zero_mode(mode).cause});"
                         " no stiffness or mass value gives it a frequency without a new spring")
    v0 = float(getattr(el, f))
    if v0 <= 0:
        v0 = 1.0 if f != "mass" else max(model.total_mass, 1.0) * 1e-3
    name = FIELDS[(type(el), f)][0]

    def g(u):
        return _frequency(with_value(model, element_id, math.exp(u), f), mode) - target

    u0 = math.log(v0)
    h0 = g(u0)
    if abs(h0) <= 1e-12 * target:
        return v0
    # the frequency rises with a stiffness and falls with a mass: step the value by decades in
    # the direction that helps until the target is crossed, then root-find inside that decade
    rising = f != "mass"
    direction = 1.0 if (h0 < 0) == rising else -1.0
    step = math.log(10.0)
    prev_u, prev_h = u0, h0
    saturated = False
    for i in range(MAX_DECADES):
        u = prev_u + direction * step
        try:
            h = g(u)
        except ModelError:
            break
        if h == 0:
            return math.exp(u)
        if (h > 0) != (h0 > 0):
            root = brentq(g, min(prev_u, u), max(prev_u, u), xtol=1e-13, rtol=1e-13, maxiter=200)
            return math.exp(root)
        saturated = abs(h - prev_h) <= 1e-9 * target
        prev_u, prev_h = u, h
        if saturated:
            break
    far_f = prev_h + target
    # the other way's limit too, so the message gives the whole reachable range
    back_u, back_h = u0, h0
    for i in range(MAX_DECADES):
        u = back_u - direction * step
        try:
            h = g(u)
        except ModelError:
            break
        levelled = abs(h - back_h) <= 1e-9 * target
        back_u, back_h = u, h
        if levelled:
            break
    back_f = back_h + target
    unit = unit_of(model, element_id, f)
    way = "raising" if direction > 0 else "lowering"
    now_f = h0 + target
    if abs(far_f - back_f) <= 1e-6 * max(far_f, back_f, target):
        raise ModelError(
            f'retune: mode {mode} does not depend on the {name} of "{element_id}" (it stays at'
            f" {now_f:.6g} Hz whatever the value: the element does not deform in this mode);"
            " change another element")
    lo_f, hi_f = sorted((far_f, back_f))
    lo_txt, hi_txt = f"{lo_f:.6g} Hz", f"{hi_f:.6g} Hz"
    raise ModelError(
        f'retune: mode {mode} cannot reach {target:.6g} Hz by changing the {name} of'
        f' "{element_id}" alone: within {MAX_DECADES} decades either way of its present value'
        f" the mode stays between {lo_txt} and {hi_txt} (now {now_f:.6g} Hz at {v0:.6g} {unit}; {way} it gets no closer than"
        f" {far_f:.6g} Hz); change another element or add one")


def reachable_range(model: Model, element_id: str, mode: int, field: str | None = None,
                    decades: float = 12.0) -> tuple[float, float]:
    """Frequencies (Hz) the mode takes with the value at 10^-decades and 10^decades of now."""
    el, f = _field_for(model, element_id, field)
    v0 = float(getattr(el, f)) or 1.0
    lo = _frequency(with_value(model, element_id, v0 * 10 ** -decades, f), mode)
    hi = _frequency(with_value(model, element_id, v0 * 10 ** decades, f), mode)
    return tuple(sorted((lo, hi)))


@dataclass(frozen=True, eq=False)
class SweepResult:
    """Every mode's frequency against one element's value.

    values : (n_values,) SI units.   frequencies_hz : (n_values, n_modes), NaN where a value has
    fewer modes (a mass set to zero becomes a junction).
    """

    element_id: str
    field: str
    values: np.ndarray
    frequencies_hz: np.ndarray


@checked_arguments
def sweep(model: Model, element_id: str, values, field: str | None = None,
          count: int | None = None) -> SweepResult:
    """Solve the model at each value of one element's stiffness or mass."""
    el, f = _field_for(model, element_id, field)
    values = numbers(values, f'sweep of "{element_id}": values')
    if values.ndim != 1 or not np.all(np.isfinite(values)) or np.any(values <= 0):
        raise ModelError(f'sweep of "{element_id}": values must be positive finite numbers')
    rows = []
    for v in values:
        rows.append(modes(with_value(model, element_id, v, f), count=count).frequencies_hz)
    width = max((len(r) for r in rows), default=0)
    out = np.full((len(rows), width), np.nan)
    for i, r in enumerate(rows):
        out[i, : len(r)] = r
    return SweepResult(element_id=element_id, field=f, values=values, frequencies_hz=out)


@checked_arguments
def rank_elements(model: Model, mode: int) -> list[tuple[str, str, float]]:
    """Springs and masses ranked by how strongly they govern a mode's frequency.

    Returns ``[(element_id, field, s)]`` with ``s`` the normalised sensitivity
    ``(p/f)(df/dp)`` (dimensionless: the % change in frequency per % change in the value),
    strongest |s| first.
    """
    from .metrics import sensitivities

    res = modes(model)
    if not 1 <= mode <= res.n_modes:
        raise ModelError(f"mode {mode} does not exist: the model has {res.n_modes} modes")
    return ranked(model, sensitivities(res), mode)


def ranked(model: Model, sens, mode: int) -> list[tuple[str, str, float]]:
    """:func:`rank_elements` from sensitivities already computed (``Analysis.sensitivity``)."""
    out = []
    for j, sid in enumerate(sens.spring_ids):
        out.append((sid, "k", float(sens.normalised_k[mode - 1, j])))
        if model.kind == "planar" and model.springs[j].k_t > 0:
            out.append((sid, "k_t", float(sens.normalised_kt[mode - 1, j])))
    for j, mid in enumerate(sens.mass_ids):
        if model.masses[j].mass > 0:
            out.append((mid, "mass", float(sens.normalised_m[mode - 1, j])))
    out = [o for o in out if math.isfinite(o[2])]
    out.sort(key=lambda o: -abs(o[2]))
    return out
