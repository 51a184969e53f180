"""Tuned vibration absorber sized for one mode (Den Hartog's optimum).

Method
------
The chosen mode, seen at the protected mass, is treated as a single-DOF primary system: its
*modal mass at that point* is ``M = 1 / phi_p^2`` for the mass-normalised shape ``phi``
(``phi^T M phi = 1``) and ``phi_p`` its component at the protected mass in the chosen
direction; its stiffness is ``K = Omega^2 M`` (common practice: the apparent mass of a mode at a
point). The absorber gets mass ``m_a = mu M`` and, for an undamped primary under a harmonic force,
Den Hartog's optimum (Den Hartog, Mechanical Vibrations, 4th ed., sections 3.2-3.3 (mem);
Ormondroyd and Den Hartog, Trans. ASME 50 (1928)):

- tuning ``f = w_a / Omega = 1 / (1 + mu)`` (equal heights of the two fixed points);
- damping ``zeta = c / (2 m_a Omega) = sqrt(3 mu / (8 (1 + mu)^3))`` (flat response at both
  fixed points, approximately; the true peak lies within 0.5 % above the fixed-point height).

So ``k_a = m_a (f Omega)^2`` and ``c_a = 2 m_a zeta Omega``.

Limits (stated in :attr:`AbsorberDesign.notes`): the optimum is for one mode of a primary treated
as undamped (the model's own damping is left out of the sizing, but in the response curves); the
other modes shift and the absorber adds two modes near the tuned one; the design is sensitive to
mistuning, shown by curves with the absorber's frequency 5 % low and 5 % high.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .errors import ModelError, shown
from .model import Damper, Mass, Model, Spring

#: Mistuning shown beside the optimum: the absorber's natural frequency off by this fraction.
MISTUNING = 0.05


def den_hartog_tuning(mu: float) -> float:
    """Optimum frequency ratio w_a / Omega = 1 / (1 + mu) (Den Hartog)."""
    return 1.0 / (1.0 + mu)


def den_hartog_damping(mu: float) -> float:
    """Optimum damping ratio c / (2 m_a Omega) = sqrt(3 mu / (8 (1 + mu)^3)) (Den Hartog)."""
    return math.sqrt(3.0 * mu / (8.0 * (1.0 + mu) ** 3))


@dataclass(frozen=True)
class AbsorberDesign:
    """A tuned absorber for one mode, and the response before and after.

    Units SI (kg, N/m, N s/m; kg m^2, N m/rad, N m s/rad in torsion).

    mode : the mode number (1 = lowest).    mass_id, direction : the protected DOF.
    mass_ratio : mu.    primary_mass : modal mass of the mode at the protected DOF (1/phi_p^2).
    primary_hz : the mode's frequency Omega / 2 pi.     tuning_ratio, damping_ratio : Den Hartog's.
    absorber_mass, stiffness, damping : m_a, k_a, c_a.   absorber_hz : sqrt(k_a / m_a) / 2 pi.
    mass, spring, damper : the new elements;  model : the model with them added.
    freqs_hz : (n,) the frequency grid around the mode.
    before, after, after_low, after_high : (n,) |receptance| at the protected DOF (m/N, or rad/(N
        m)) without the absorber, with it, and with its frequency 5 % low and 5 % high.
    notes : the method and its limits in words.
    """

    mode: int
    mass_id: str
    direction: str
    mass_ratio: float
    primary_mass: float
    primary_hz: float
    tuning_ratio: float
    damping_ratio: float
    absorber_mass: float
    stiffness: float
    damping: float
    absorber_hz: float
    mass: Mass
    spring: Spring
    damper: Damper
    model: Model = field(repr=False)
    freqs_hz: np.ndarray = field(repr=False, compare=False)
    before: np.ndarray = field(repr=False, compare=False)
    after: np.ndarray = field(repr=False, compare=False)
    after_low: np.ndarray = field(repr=False, compare=False)
    after_high: np.ndarray = field(repr=False, compare=False)
    notes: tuple = ()

    @property
    def formula(self) -> str:
        return ("Den Hartog's optimum: f = 1/(1 + mu), zeta = sqrt(3 mu / (8 (1 + mu)^3))"
                " (referred to the mode's frequency)")


def _frequency_grid(f_n: float, count: int = 801) -> np.ndarray:
    return np.linspace(0.6 * f_n, 1.5 * f_n, count)


def size_absorber(model: Model, mode: int, mass_id: str, mass_ratio: float,
                  direction: str | None = None, count: int = 801) -> AbsorberDesign:
    """Size a tuned absorber for ``mode`` at mass ``mass_id`` (Den Hartog's optimum).

    Parameters
    ----------
    model : Model
    mode : int, mode number from 1 (an elastic mode: not 0 Hz).
    mass_id : the mass to protect (its id).
    mass_ratio : mu = absorber mass / modal mass of the mode at that mass, 0 < mu <= 1
        (typically 0.01 to 0.25).
    direction : the direction the absorber acts in (default: the one in which the mass moves
        most in that mode).
    count : points of the response grid (0.6 to 1.5 times the mode's frequency).
    """
    from .assemble import assemble
    from .frequency import harmonic_response
    from .modes import modes

    if not isinstance(model, Model):
        raise ModelError(f"size_absorber: model must be a Model, got {type(model).__name__}")
    if isinstance(mass_ratio, bool) or not isinstance(mass_ratio, (int, float)) or \
            not math.isfinite(mass_ratio) or not 0 < mass_ratio <= 1:
        raise ModelError(f"size_absorber: mass_ratio must be above 0 and at most 1 (absorber"
                         f" mass / modal mass; 0.01 to 0.25 is usual), got {shown(mass_ratio)}")
    node = model.find(mass_id)
    if not isinstance(node, Mass):
        raise ModelError(f"size_absorber: {shown(mass_id)} is not a mass of the model")
    if node.mass == 0:
        raise ModelError(f"size_absorber: mass {shown(mass_id)} is a massless junction; protect"
                         " a mass")
    system = assemble(model)
    result = modes(system)
    if isinstance(mode, bool) or not isinstance(mode, (int, np.integer)) or \
            not 1 <= mode <= result.n_modes:
        raise ModelError(f"size_absorber: mode must be a mode number from 1 to"
                         f" {result.n_modes}, got {shown(mode)}")
    if result.is_zero[mode - 1]:
        raise ModelError(f"size_absorber: mode {mode} is at 0 Hz (rigid-body motion or a"
                         " mechanism); an absorber is tuned to an elastic mode")
    own = [d for d in model.directions_of(node) if d != "theta" or model.kind == "torsion"]
    comps = {}
    for d in own:
        try:
            comps[d] = float(result.shapes[system.dof_index(mass_id, d), mode - 1])
        except ModelError:
            continue
    if not comps:
        raise ModelError(f"size_absorber: mass {shown(mass_id)} cannot move (locked in every"
                         " direction)")
    if direction is None:
        direction = max(comps, key=lambda d: abs(comps[d]))
    elif direction not in comps:
        raise ModelError(f"size_absorber: direction must be one of {', '.join(comps)} for mass"
                         f" {shown(mass_id)}, got {shown(direction)}")
    phi = comps[direction]
    if abs(phi) < 1e-9 * float(np.max(np.abs(result.shapes[:, mode - 1]))):
        raise ModelError(f"size_absorber: mass {shown(mass_id)} does not move in {direction} in"
                         f" mode {mode} (a node of the mode); an absorber there cannot act on it")
    omega = float(result.omegas[mode - 1])
    primary = 1.0 / phi ** 2
    mu = float(mass_ratio)
    tuning, zeta = den_hartog_tuning(mu), den_hartog_damping(mu)
    m_a = mu * primary
    k_a = m_a * (tuning * omega) ** 2
    c_a = 2.0 * m_a * zeta * omega

    # the new elements: a point mass beside the protected one, along the direction it acts in
    used = model.ids()

    def fresh(prefix):
        i = 1
        while f"{prefix}{i}" in used:
            i += 1
        used.add(f"{prefix}{i}")
        return f"{prefix}{i}"

    xs = [el.x for el in model.masses + model.anchors]
    ys = [el.y for el in model.masses + model.anchors]
    span = max(max(xs) - min(xs), max(ys) - min(ys), 1e-9)
    gap = 0.25 * span if span > 1e-9 else 0.5
    if model.kind == "planar":
        dx, dy = (gap, 0.0) if direction == "x" else (0.0, gap)
        fixed = ("y",) if direction == "x" else ("x",)
    else:
        dx, dy = 0.0, -gap
        fixed = ()
    word = "disc" if model.kind == "torsion" else "mass"
    mass = Mass(fresh("m"), node.x + dx, node.y + dy, m_a, label=f"Absorber {word}",
                fixed=fixed)
    spring = Spring(fresh("s"), mass_id, mass.id, k_a, label="Absorber spring")
    damper = Damper(fresh("d"), mass_id, mass.id, c_a, label="Absorber dashpot")
    new_model = model.with_changes(put=[mass, spring, damper])

    f_n = omega / (2 * math.pi)
    grid = _frequency_grid(f_n, count)
    key = {(mass_id, direction): 1.0}

    def receptance(m):
        sysm = assemble(m)
        with np.errstate(all="ignore"):
            X = harmonic_response(sysm, grid, key)
        return np.abs(X[:, sysm.dof_index(mass_id, direction)])

    curves = [receptance(model), receptance(new_model)]
    for s in (1 - MISTUNING, 1 + MISTUNING):
        curves.append(receptance(new_model.with_changes(
            put=[Spring(spring.id, spring.a, spring.b, k_a * s * s, label=spring.label)])))
    notes = (
        f"modal mass of mode {mode} at {mass_id} in {direction}: 1/phi^2 = {primary:.4g}"
        " (mass-normalised shape); the mode treated as a single-DOF primary",
        "Den Hartog's optimum for an undamped primary under a harmonic force: tuning"
        f" f = 1/(1 + mu) = {tuning:.4g}, damping zeta = sqrt(3 mu / (8 (1 + mu)^3)) ="
        f" {zeta:.4g} (c = 2 m_a zeta Omega)",
        "optimal for this one mode only; the model's own damping is left out of the sizing"
        " (the curves include it); other modes shift a little",
        "sensitive to mistuning: the dashed curves have the absorber's frequency 5 % low and"
        " 5 % high",
        "a lumped linear model is an estimate to be confirmed by test or detailed analysis;"
        " applicable standards, local codes and licensed engineering practice govern",
    )
    return AbsorberDesign(mode=int(mode), mass_id=mass_id, direction=direction, mass_ratio=mu,
                          primary_mass=primary, primary_hz=f_n, tuning_ratio=tuning,
                          damping_ratio=zeta, absorber_mass=m_a, stiffness=k_a, damping=c_a,
                          absorber_hz=math.sqrt(k_a / m_a) / (2 * math.pi), mass=mass,
                          spring=spring, damper=damper, model=new_model, freqs_hz=grid,
                          before=curves[0], after=curves[1], after_low=curves[2],
                          after_high=curves[3], notes=notes)


__all__ = ["AbsorberDesign", "size_absorber", "den_hartog_tuning", "den_hartog_damping",
           "MISTUNING"]
