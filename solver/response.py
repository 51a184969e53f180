"""Free response from initial displacements and velocities.

Without dashpots the response is exact modal superposition. Each modal coordinate ``q`` obeys
``q'' + c q' + lambda q = 0`` with ``c = 0`` (undamped), ``c = 2 zeta w`` (modal damping) or
``c = alpha + beta lambda`` (Rayleigh), solved in closed form for every case: oscillating,
critically damped, overdamped, and the rigid-body modes (``lambda = 0``: ``q = q0 + q0' t`` undamped).
With dashpots the damping is not proportional, so the first-order state equation ``z' = A z``
is solved exactly by the matrix exponential: ``A = [[0, I], [-M^-1 K, -M^-1 C]]``, plus a
first-order coordinate for each massless junction direction a dashpot damps (a Maxwell element's
junction creeps; static condensation would not be exact there), see ``damping.state_space``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg

from .assemble import System, assemble
from .damping import rigid_split, state_space
from .errors import ModelError, checked_arguments, number, numbers, shown
from .model import Model
from .modes import ModalResult, modes
from .naming import quoted_id

#: Up to this many DOFs a modal free response uses every mode (a dense solve of a few seconds).
FULL_MODAL_DOF_LIMIT = 3000


@dataclass(frozen=True, eq=False)
class FreeResponse:
    """Free motion on ``dofs`` (every free DOF, junctions included).

    times : (n_t,) s.   displacement, velocity : (n_t, n_dof) in m, m/s (rad, rad/s in torsion).
    method : "modal" or "state-space".
    """

    times: np.ndarray
    dofs: tuple
    displacement: np.ndarray
    velocity: np.ndarray
    method: str
    warnings: tuple = ()

    def of(self, mass_id: str, direction: str) -> np.ndarray:
        """Displacement history of one DOF, (n_t,)."""
        try:
            i = self.dofs.index((mass_id, direction))
        except ValueError:
            raise ModelError(f'"{mass_id}" has no free {direction} motion in this model') from None
        return self.displacement[:, i]

    def node_displacement(self, i: int) -> dict:
        """``{mass_id: {direction: value}}`` at time index ``i``."""
        out: dict = {}
        for (mid, d), v in zip(self.dofs, self.displacement[i]):
            out.setdefault(mid, {})[d] = float(v)
        return out


def initial_vectors(system: System, x0=None, v0=None):
    """Initial displacement and velocity on ``system.dofs`` from the model or from mappings.

    ``x0``/``v0`` may be mappings ``{(mass_id, direction): value}`` or arrays on ``system.dofs``.
    Values given for massless junctions or locked directions are ignored with a warning: a
    junction has no inertia, so its position follows the masses.
    """
    model = system.model
    warnings = []
    lookup = {d: i for i, d in enumerate(system.dofs)}
    masses = {m.id: m for m in model.masses}
    n = system.n_dof

    def build(given, what):
        if given is not None and not isinstance(given, dict):
            arr = np.asarray(given, float)
            if arr.shape != (n,):
                raise ModelError(f"free response: {what} must have {n} values (one per DOF),"
                                 f" got shape {arr.shape}")
            return arr
        vec = np.zeros(n)
        if given is None:
            items = []
            for ic in model.initial:
                pairs = ic.displacement if what == "displacement" else ic.velocity
                items += [((ic.mass_id, d), v) for d, v in pairs]
        else:
            items = list(given.items())
        for key, value in items:
            if not (isinstance(key, tuple) and len(key) == 2):
                raise ModelError(f"free response: initial {what} keys are (mass_id, direction),"
                                 f" got {shown(key)}")
            value = number(value, f"initial {what} of {quoted_id(model, key[0])} in {key[1]}")
            if key in lookup:
                vec[lookup[key]] = value
            elif key[0] not in masses or key[1] not in model.directions_of(masses[key[0]]):
                from .assemble import _no_dof_message

                raise ModelError(f"free response: initial {what}: "
                                 + _no_dof_message(model, *key))
            elif value:
                warnings.append(f"initial {what} of {quoted_id(model, key[0])} in {key[1]} is"
                                " ignored: that direction is locked or belongs to a massless"
                                " junction" + (", or the disc turns with the disc a rigid gear"
                                               " mesh ties it to (give the value on that one)"
                                               if model.gears else ""))
        return vec

    return build(x0, "displacement"), build(v0, "velocity"), warnings


@checked_arguments
def modal_damping_coefficients(model: Model, result: ModalResult) -> np.ndarray:
    """Modal damping coefficient c_i (1/s) of each mode from the model's damping model.

    Modal equation: q'' + c_i q' + w_i^2 q = 0, with c_i = 2 zeta_i w_i (modal ratio, per-mode
    overrides honoured) or alpha + beta w_i^2 (Rayleigh; Chopra, Dynamics of Structures, 11.4).
    """
    lam = result.eigenvalues
    w = np.sqrt(lam)
    d = model.damping
    if d.model == "modal":
        zeta = np.full(len(lam), d.ratio)
        for mode, ratio in d.mode_ratios:
            if mode <= len(zeta):
                zeta[mode - 1] = ratio
        return 2 * zeta * w
    if d.model == "rayleigh":
        return d.alpha + d.beta * lam
    return np.zeros(len(lam))


def _modal_coordinate(q0, qd0, c, lam, t):
    """Exact q(t), q'(t) of q'' + c q' + lam q = 0 for arrays of modes (rows) and times (cols).

    With a = c/2 and D = a^2 - lam: q = e^{-a t} [q0 Cf + (qd0 + a q0) Sf] where Cf, Sf are
    cos(wd t), sin(wd t)/wd (underdamped, wd^2 = -D), cosh(b t), sinh(b t)/b (overdamped,
    b^2 = D) or 1, t (critical), each times e^{-a t}. Each branch is evaluated only on its own
    rows (most models are underdamped in every mode).
    """
    q0, qd0, c, lam = (np.asarray(v, float)[:, None] for v in (q0, qd0, c, lam))
    t = np.asarray(t, float)[None, :]
    a = c / 2.0
    D = a * a - lam  # discriminant / 4
    scale = np.maximum(a * a + lam, 1e-300)
    under = (D < -1e-12 * scale).ravel()
    over = (D > 1e-12 * scale).ravel()
    crit = ~(under | over)
    shape = (q0.shape[0], t.shape[1])
    Cf = np.empty(shape)
    Sf = np.empty(shape)
    if under.any():
        au, wd = a[under], np.sqrt(-D[under])
        decay = np.exp(-au * t) if np.any(au) else 1.0
        wt = wd * t
        Cf[under] = decay * np.cos(wt)
        Sf[under] = decay * np.sin(wt) / wd
    if over.any():
        ao, b = a[over], np.sqrt(D[over])
        # e^{-a t} cosh(b t) and e^{-a t} sinh(b t)/b without overflow
        ep = np.exp((b - ao) * t)
        em = np.exp(-(ao + b) * t)
        Cf[over] = 0.5 * (ep + em)
        small = b * t <= 1e-6
        Sf[over] = np.where(small, t * np.exp(-ao * t) * (1 + (b * t) ** 2 / 6),
                            0.5 * (ep - em) / b)
    if crit.any():
        decay = np.exp(-a[crit] * t)
        Cf[crit] = decay
        Sf[crit] = decay * t
    # derivatives, true in all three cases: Cf' = -a Cf + D Sf, Sf' = Cf - a Sf
    q = q0 * Cf + (qd0 + a * q0) * Sf
    dCf = -a * Cf + D * Sf
    dSf = Cf - a * Sf
    qd = q0 * dCf + (qd0 + a * q0) * dSf
    return q, qd


@checked_arguments(model="model_or_system")
def free_response(model, times, result: ModalResult | None = None, x0=None, v0=None,
                  damped: bool = True) -> FreeResponse:
    """Free response of a model from initial conditions.

    Parameters
    ----------
    model : Model (or System)
    times : (n_t,) array of times in s (any order; t >= 0 is the usual use).
    result : ModalResult, optional — reuse modes already computed for this model.
    x0, v0 : optional mappings ``{(mass_id, direction): value}`` or arrays on the system's DOFs;
        by default the model's ``initial`` conditions.
    damped : use the model's damping (modal, Rayleigh, dashpots); False ignores it.

    Returns
    -------
    FreeResponse on every free DOF (massless junctions recovered).

    Notes
    -----
    A junction that a dashpot damps does not follow the masses statically: its damped directions
    are first-order states (``damping.state_space``). It starts where the springs put it for the
    masses' initial displacements (its dashpots unloaded at t = 0); initial values given for
    junctions are ignored, as for every massless DOF.
    """
    system = model if isinstance(model, System) else (result.system if result is not None
                                                       else assemble(model))
    model = system.model
    t = np.atleast_1d(numbers(times, "free response: times"))
    if t.ndim != 1 or not np.all(np.isfinite(t)):
        raise ModelError("free response: times must be a 1-D array of finite values in s")
    x, v, warnings = initial_vectors(system, x0, v0)
    n_all = len(system.all_dofs)
    if system.n_dof == 0:
        z = np.zeros((len(t), n_all))
        return FreeResponse(t, system.all_dofs, z, z.copy(), "modal", tuple(warnings))
    # any dashpot that does work (to ground or between two DOFs) makes damping non-proportional
    has_dashpots = damped and len(model.dampers) > 0 and abs(system.C_full).sum() > 0
    if not has_dashpots:
        res = result if result is not None and result.complete else modes(
            system, count=system.n_dof if system.n_dof <= FULL_MODAL_DOF_LIMIT else None)
        if not res.complete:
            warnings.append(f"free response uses the lowest {res.n_modes} modes only")
        M_diag = np.asarray(system.M.diagonal()).ravel()
        q0 = res.shapes.T @ (M_diag * x)
        qd0 = res.shapes.T @ (M_diag * v)
        c = modal_damping_coefficients(model, res) if damped else np.zeros(res.n_modes)
        q, qd = _modal_coordinate(q0, qd0, c, res.eigenvalues, t)
        disp = (res.all_shapes @ q).T
        vel = (res.all_shapes @ qd).T
        return FreeResponse(t, system.all_dofs, disp, vel, "modal", tuple(warnings))
    # non-proportional damping: the exact first-order system, junction dashpots included
    ss = state_space(system)
    z0 = ss.initial_state(x, v)
    rigid = rigid_split(ss)
    P, k = rigid.rest, rigid.count
    # free rigid motions in closed form (a + b t); the rest, in the invariant subspace where
    # a = b = 0, propagated where A has no Jordan block
    if k == 0:
        Z = _propagate(ss.A, z0, t)
    else:
        ab = rigid.functionals @ z0
        rest0 = z0 - rigid.position @ ab[:k] - rigid.velocity @ ab[k:]
        Z = P @ _propagate(P.T @ ss.A @ P, P.T @ rest0, t)
        Z += rigid.position @ (ab[:k, None] + ab[k:, None] * t[None, :])
        Z += (rigid.velocity @ ab[k:])[:, None]
    disp = (ss.displacement @ Z).T
    vel = (ss.velocity @ Z).T
    return FreeResponse(t, system.all_dofs, disp, vel, "state-space", tuple(warnings))


#: Relative tolerance on the time steps for treating a grid as uniform (one exponential).
_UNIFORM_RTOL = 1e-12
#: Above this many distinct steps an eigen-decomposition replaces one exponential per step, if it
#: is well conditioned.
_EIG_MIN_STEPS = 24
_EIG_MAX_COND = 1e5


def _propagate(A, z0, t):
    """z(t) = expm(A t) z0 for every t, (n_z, n_t).

    The times are visited in ascending order, each reached from the previous one by
    expm(A h) for its step h, so a uniform grid needs one exponential and a free drift
    (a Jordan block at zero, where an eigen-decomposition fails) stays exact. Many distinct steps
    use A = V diag(s) V^-1 instead when V is well conditioned (error ~ cond(V) * rounding).
    """
    t = np.asarray(t, float)
    n = len(z0)
    out = np.empty((n, len(t)))
    if len(t) == 0:
        return out
    order = np.argsort(t, kind="stable")
    ts = t[order]
    span = max(abs(ts[0]), abs(ts[-1]), 1e-300)
    if len(ts) > 2 and ts[-1] > ts[0]:
        h = (ts[-1] - ts[0]) / (len(ts) - 1)
        if np.abs(ts - (ts[0] + h * np.arange(len(ts)))).max() <= _UNIFORM_RTOL * span:
            ts = ts[0] + h * np.arange(len(ts))   # the grid as meant; its rounding is below 1e-12
    gaps = np.diff(ts)
    steps, which = _group_steps(gaps, _UNIFORM_RTOL * span)
    if len(steps) > _EIG_MIN_STEPS:
        Z = _eig_propagate(A, z0, ts)
        if Z is not None:
            out[:, order] = Z
            return out
    exps = [scipy.linalg.expm(A * s) if s > 0 else None for s in steps]
    z = scipy.linalg.expm(A * ts[0]) @ z0 if ts[0] != 0 else np.asarray(z0, float).copy()
    out[:, order[0]] = z
    for i, g in enumerate(which):
        if exps[g] is not None:
            z = exps[g] @ z
        out[:, order[i + 1]] = z
    return out


def _group_steps(gaps, tol):
    """Distinct steps (within tol) and the group of each gap."""
    if len(gaps) == 0:
        return np.zeros(0), np.zeros(0, int)
    uniq = []
    which = np.empty(len(gaps), int)
    srt = np.argsort(gaps)
    for i in srt:
        if uniq and gaps[i] - uniq[-1][0] <= tol:
            uniq[-1][1].append(i)
        else:
            uniq.append((gaps[i], [i]))
    steps = np.empty(len(uniq))
    for g, (_first, members) in enumerate(uniq):
        steps[g] = np.mean(gaps[members])
        which[members] = g
    return steps, which


def _eig_propagate(A, z0, ts):
    """Z = Re(V exp(s t) V^-1 z0) on the sorted times, or None when V is ill conditioned
    (a defective or nearly defective A: rigid drift, critical damping)."""
    s, V = scipy.linalg.eig(A)
    if not np.all(np.isfinite(s)) or np.linalg.cond(V) > _EIG_MAX_COND:
        return None
    c = np.linalg.solve(V, z0.astype(complex))
    return (V @ (np.exp(np.outer(s, ts)) * c[:, None])).real
