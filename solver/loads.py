"""Responses to the loads fixtures, racks and mounts must survive: random vibration, shock and
design response spectra, all as motion of the base (every anchor together) in one direction.

In motion relative to the base ``y = x - r u`` the equation is ``M y'' + C y' + K y = -M r a(t)``
with ``a`` the base acceleration (frequency.py, base_transmissibility): the same equations, the same
damping (the model's: modal ratios, Rayleigh, dashpots) and the same solvers are used here.

- Random: the relative displacement per unit base acceleration ``Y(f)`` comes from modal
  superposition of every mode (proportional damping) or the direct dynamic-stiffness solve
  (dashpots), ``frequency._modal_solve`` / ``frequency._dynamic_solve``. Every output's
  response spectral density is ``|H(f)|^2 ASD(f)`` and its RMS the square root of its integral
  (Harris' Shock and Vibration Handbook, ch. on random vibration (mem); Crandall and Mark, Random
  Vibration in Mechanical Systems (mem)). Miles' equation ``g RMS = sqrt(pi/2 f_n Q ASD(f_n))``
  (Miles 1954 (mem)) is given beside the exact integral for every mode that carries at least
  5 % of the mass in the direction.
- Shock: the time response is exact at every sample, not an integrator's estimate: the pulse is a
  sine arch or straight lines, which are themselves solutions of ``g' = G g``, so the state and the
  pulse's generator advance together by the matrix exponential of the augmented system (Van
  Loan 1978 (mem)). Modal coordinates with proportional damping (two states per mode), the exact
  state model (``damping.state_space``) with dashpots.
- The shock response spectrum: the maximax absolute acceleration of a single-DOF system of
  each natural frequency and chosen Q under the pulse, over the pulse and the residual motion
  (Harris, ch. on shock response spectra (mem)).
- Design response spectrum: peak modal responses ``Gamma_i phi_i S_a(f_i) / w_i^2`` combined by
  SRSS and by CQC with the correlation coefficient of Der Kiureghian (1981) (Chopra, Dynamics of
  Structures, ch. 13 (mem)); the number of modes that reach 90 % of the mass in each direction
  (common practice in building codes; the local code governs).

Damping: the model's. A model with none (no damping model, no dashpot) gets modal damping of
``DEFAULT_DAMPING_RATIO`` (5 %, Q = 10, common practice), stated in every result's
``assumptions``. Outputs: each mass's absolute acceleration (g) and displacement relative to
the base (m) in x and y (a rigid body's rotation is not reported), each spring's deflection
(change of length, m) and axial force (N, k times deflection; a transverse stiffness k_t's shear
is not included, a warning says so).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import scipy.integrate
import scipy.linalg

from .assemble import System, assemble, spring_stretch
from .errors import ModelError, checked_arguments, numbers, shown
from .load_cases import G0, DesignSpectrum, Loads, RandomVibration, ShockPulse
from .model import Damping, Model
from .modes import modes

#: modal damping ratio assumed when the model has no damping at all (Q = 10, common practice)
DEFAULT_DAMPING_RATIO = 0.05
#: a mode carrying at least this fraction of the mass in the direction gets a Miles' check
DOMINANT_FRACTION = 0.05
#: the most DOFs a load case is solved for (every mode is needed)
MAX_LOAD_DOF = 3000
#: the most time steps a shock response takes by default
MAX_SHOCK_STEPS = 20000

CAUTION = ("These are estimates from a linear lumped model: confirm them by test or detailed"
           " analysis. Qualification testing and seismic design follow the applicable standards,"
           " local codes and licensed engineering practice.")


# -- common set-up --------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class _Setup:
    model: Model            # with the damping used
    system: System
    result: object          # ModalResult, complete
    direction: str
    zeta: np.ndarray        # (n_modes,) modal damping ratios (estimated with dashpots)
    c: np.ndarray           # (n_modes,) modal damping coefficients 1/s
    proportional: bool
    mass_outputs: tuple     # ((mass_id, direction), ...)
    mass_index: np.ndarray  # rows of all_dofs
    mass_r: np.ndarray      # influence of the base motion on each mass output (0 or 1)
    springs: tuple          # spring ids
    spring_k: np.ndarray
    assumptions: tuple
    warnings: tuple


def _setup(model, direction: str, what: str) -> _Setup:
    if not isinstance(model, Model):
        raise ModelError(f"{what}: model must be a solver.Model, got {shown(model)}")
    if model.kind == "torsion":
        raise ModelError(f"{what}: base acceleration in g needs a line or planar model; a"
                         " torsion model has no base translation")
    if direction not in model.directions or direction == "theta":
        allowed = ", ".join(d for d in model.directions if d != "theta")
        raise ModelError(f'{what}: direction must be one of {allowed} in this model, got'
                         f" {shown(direction)}")
    assumptions, warnings = [], []
    system0 = assemble(model)
    dashpots = len(model.dampers) > 0 and abs(system0.C_full).sum() > 0
    if model.damping.model == "none" and not dashpots:
        model = model.with_changes(damping=Damping(model="modal", ratio=DEFAULT_DAMPING_RATIO))
        system = assemble(model)
        assumptions.append(f"the model has no damping: modal damping of"
                           f" {DEFAULT_DAMPING_RATIO:.0%} of critical (Q ="
                           f" {1 / (2 * DEFAULT_DAMPING_RATIO):g}) is assumed in every mode")
    else:
        system = system0
    if system.n_dof == 0:
        raise ModelError(f"{what}: the model has no free mass to respond")
    if system.n_dof > MAX_LOAD_DOF:
        raise ModelError(f"{what}: the model has {system.n_dof:,} DOFs; load cases need every"
                         f" mode, up to {MAX_LOAD_DOF:,} DOFs")
    res = modes(system, count=system.n_dof)
    if not res.complete:
        raise ModelError(f"{what}: every mode is needed and the solver did not find them all")
    total = res.total_mass.get(direction, 0.0)
    if total <= 0:
        raise ModelError(f"{what}: no mass is free to move in {direction}: the base motion"
                         " moves nothing")
    eff = res.effective_mass[direction] / total
    zero = res.eigenvalues <= 0
    if np.any(eff[zero] > 1e-9):
        raise ModelError(f"{what}: the model is free to move in {direction} as a rigid body"
                         f" (mode {int(np.flatnonzero(zero & (eff > 1e-9))[0]) + 1} has zero"
                         " frequency): anchor it so that the base can carry it")
    w = np.sqrt(np.maximum(res.eigenvalues, 0.0))
    from .response import modal_damping_coefficients

    if dashpots:
        # the modal damping ratios of the diagonal of Phi^T C Phi: an estimate with
        # non-proportional damping, used for Miles' check, the grid and CQC only
        C = system.C.toarray() if hasattr(system.C, "toarray") else np.asarray(system.C)
        c = np.einsum("im,ij,jm->m", res.shapes, C, res.shapes)
        warnings.append("the dashpots make damping non-proportional: the responses are exact,"
                        " the modal damping ratios (Miles' check, CQC) are estimates from the"
                        " diagonal of the modal damping matrix")
    else:
        c = modal_damping_coefficients(model, res)
    with np.errstate(divide="ignore", invalid="ignore"):
        zeta = np.where(w > 0, c / (2 * np.where(w > 0, w, 1.0)), 0.0)
    index = {d: i for i, d in enumerate(system.all_dofs)}
    retained = set(system.dofs)
    outs = [(m.id, d) for m in model.masses if m.mass > 0 for d in ("x", "y")
            if (m.id, d) in retained]
    springs = tuple(s.id for s in model.springs)
    if any(s.k_t for s in model.springs):
        warnings.append("springs with a transverse stiffness k_t: their deflection and force are"
                        " along the spring's line only (the shear k_t carries is not included)")
    return _Setup(model=model, system=system, result=res, direction=direction, zeta=zeta, c=c,
                  proportional=not dashpots, mass_outputs=tuple(outs),
                  mass_index=np.array([index[o] for o in outs], dtype=int),
                  mass_r=np.array([1.0 if d == direction else 0.0 for _, d in outs]),
                  springs=springs, spring_k=np.array([s.k for s in model.springs], float),
                  assumptions=tuple(assumptions), warnings=tuple(warnings))


def _r_all(system: System, direction: str) -> np.ndarray:
    return np.array([1.0 if d == direction else 0.0 for _, d in system.all_dofs])


def _deflection(setup: _Setup, Y_all: np.ndarray) -> np.ndarray:
    """Spring change of length under motions (n_all, n_cols) relative to the base: the base
    moves rigidly, so the relative motion strains the springs as the absolute one does."""
    axial, _ = spring_stretch(setup.system, Y_all)
    return axial


def _loglog(points, x) -> np.ndarray:
    """Log-log straight lines through ``points`` at ``x``; the end values held beyond them."""
    p = np.asarray(points, float)
    lx = np.log(np.clip(np.asarray(x, float), p[0, 0], p[-1, 0]))
    return np.exp(np.interp(lx, np.log(p[:, 0]), np.log(p[:, 1])))


def asd_at(asd: RandomVibration, freqs_hz) -> np.ndarray:
    """The ASD in g^2/Hz at ``freqs_hz`` (log-log between breakpoints, zero outside)."""
    f = np.asarray(freqs_hz, float)
    p = np.asarray(asd.points, float)
    out = _loglog(p, f)
    return np.where((f >= p[0, 0]) & (f <= p[-1, 0]), out, 0.0)


def asd_grms(asd: RandomVibration) -> float:
    """Overall g RMS of a breakpoint ASD: the square root of its area, each log-log segment
    ``a1 (f / f1)^b`` integrated in closed form (math)."""
    total = 0.0
    for (f1, a1), (f2, a2) in zip(asd.points, asd.points[1:]):
        b = math.log(a2 / a1) / math.log(f2 / f1)
        if abs(b + 1) < 1e-12:
            total += a1 * f1 * math.log(f2 / f1)
        else:
            total += a1 * f1 / (b + 1) * ((f2 / f1) ** (b + 1) - 1)
    return math.sqrt(total)


# -- random vibration -------------------------------------------------------------------------

@dataclass(frozen=True)
class MilesCheck:
    """Miles' equation beside the exact integral for one dominant mode.

    mode : mode number (1 = lowest).  frequency_hz, q (= 1 / (2 zeta)), asd_g2_hz at f_n.
    effective_mass_fraction : of the mass free to move in the direction.
    miles_grms : ``sqrt(pi/2 f_n Q ASD(f_n))``, the g RMS of a single-DOF system on that mode.
    exact_grms : the same single-DOF system's g RMS by the integral of ``|T(f)|^2 ASD(f)``.
    mass_grms : (n_mass_outputs,) Miles' estimate of each mass's g RMS from this mode alone,
        ``|Gamma phi_j| miles_grms``.
    """

    mode: int
    frequency_hz: float
    q: float
    asd_g2_hz: float
    effective_mass_fraction: float
    miles_grms: float
    exact_grms: float
    mass_grms: np.ndarray = field(compare=False, repr=False)


@dataclass(frozen=True, eq=False)
class RandomResult:
    """Response to random base vibration.

    direction : base direction.  input_grms : the ASD's overall g RMS.
    frequencies_hz : (n_f,) the grid; input_asd : (n_f,) g^2/Hz on it.
    mass_outputs : ((mass_id, direction), ...) n_m of them; springs : (spring ids) n_s.
    acceleration_grms : (n_m,) absolute acceleration, g RMS.
    displacement_rms_m : (n_m,) displacement relative to the base, m RMS.
    deflection_rms_m, force_rms_n : (n_s,) spring change of length (m) and axial force (N), RMS.
    acceleration_psd : (n_f, n_m) g^2/Hz; displacement_psd : (n_f, n_m) m^2/Hz;
    deflection_psd : (n_f, n_s) m^2/Hz; force_psd : (n_f, n_s) N^2/Hz.
    miles : MilesCheck for every mode with at least 5 % of the mass in the direction.
    mode_frequencies_hz : (n_modes,).  assumptions, warnings : tuples of sentences.
    Three-sigma values (``three_sigma``) are 3 x RMS: a Gaussian response exceeds them 0.27 % of
    the time (common practice).
    """

    direction: str
    input_grms: float
    frequencies_hz: np.ndarray
    input_asd: np.ndarray
    mass_outputs: tuple
    springs: tuple
    acceleration_grms: np.ndarray
    displacement_rms_m: np.ndarray
    deflection_rms_m: np.ndarray
    force_rms_n: np.ndarray
    acceleration_psd: np.ndarray
    displacement_psd: np.ndarray
    deflection_psd: np.ndarray
    force_psd: np.ndarray
    miles: tuple
    mode_frequencies_hz: np.ndarray
    assumptions: tuple = ()
    warnings: tuple = ()
    caution: str = CAUTION

    def three_sigma(self, name: str) -> np.ndarray:
        """3 x the RMS of ``name`` ("acceleration_grms", "displacement_rms_m",
        "deflection_rms_m" or "force_rms_n")."""
        return 3.0 * getattr(self, name)


def frequency_grid(asd: RandomVibration, mode_hz, zeta, per_decade: int = 200) -> np.ndarray:
    """The grid of the random-response integral, Hz.

    Geometric steps (``per_decade`` a decade, 1.2 % apart at 200) over the ASD's range with its
    breakpoints, plus around every natural frequency f_n inside it the points
    ``f_n (1 + zeta sinh(s))`` for s in steps of 0.1 out to ``|f - f_n| = f_n / 2``: 0.1 zeta f_n
    apart at the peak (about 18 points across the half-power bandwidth ``2 zeta f_n``), widening in
    proportion to the distance from it (10 % of it) on the resonance's 1/distance^2 flanks. The
    integrals use Simpson's rule on this grid (``scipy.integrate.simpson``, uneven steps): its
    error is well under 1e-5 of the RMS however lightly damped the mode (tests: against quad and
    against a grid 50 times finer than the bandwidth), at a cost of 100-130 points a mode. (The
    trapezoidal rule on the same grid erred by 5e-4 on the flanks.)
    """
    p = np.asarray(asd.points, float)
    lo, hi = p[0, 0], p[-1, 0]
    n = max(int(math.ceil(per_decade * math.log10(hi / lo))), 2) + 1
    parts = [np.geomspace(lo, hi, n), p[:, 0]]
    for fn, z in zip(np.atleast_1d(mode_hz), np.atleast_1d(zeta)):
        if not (lo <= fn <= hi) or fn <= 0:
            continue
        z = min(max(float(z), 1e-6), 0.25)
        reach = math.asinh(0.5 / z)
        parts.append(fn * (1 + z * np.sinh(np.arange(-reach, reach + 0.05, 0.1))))
    f = np.concatenate(parts)
    f = np.unique(f[(f >= lo) & (f <= hi)])
    return f


def _relative_transfer(setup: _Setup, f: np.ndarray) -> np.ndarray:
    """Y (n_f, n_all): displacement relative to the base per unit base acceleration, s^2."""
    from .frequency import _dynamic_solve, _modal_solve

    system = setup.system
    Mr = np.asarray(system.M_full @ _r_all(system, setup.direction)).ravel()
    if setup.proportional:
        return _modal_solve(system, f, (-Mr).astype(complex), setup.result)
    return _dynamic_solve(system, f, lambda w: -Mr)


@checked_arguments(model="model", asd="table")
def random_response(model, asd, direction: str = "x", freqs_hz=None) -> RandomResult:
    """Response to random base vibration given as an acceleration spectral density.

    Parameters
    ----------
    model : Model (line or planar).
    asd : RandomVibration, or a breakpoint table ((Hz, g^2/Hz), ...).
    direction : "x" or "y", the base's direction of motion.
    freqs_hz : (n_f,) optional grid in Hz (sorted ascending, inside the ASD's range matters);
        by default :func:`frequency_grid` (fine around every mode).

    Returns
    -------
    RandomResult. Raises ModelError for a bad table, a torsion model, or a model the base
    cannot carry (a rigid-body motion in the direction).
    """
    if not isinstance(asd, RandomVibration):
        asd = RandomVibration(points=asd)
    setup = _setup(model, direction, "random vibration")
    res = setup.result
    fn = res.frequencies_hz
    if freqs_hz is None:
        f = frequency_grid(asd, fn, setup.zeta)
    else:
        f = np.atleast_1d(numbers(freqs_hz, "random vibration: frequencies"))
        if f.ndim != 1 or len(f) < 2 or not np.all(np.isfinite(f)) or np.any(f <= 0) \
                or np.any(np.diff(f) <= 0):
            raise ModelError("random vibration: frequencies must be at least two positive"
                             " values in Hz, strictly increasing")
    S = asd_at(asd, f)
    w = 2 * np.pi * f
    n_m, n_s = len(setup.mass_outputs), len(setup.springs)
    acc_psd = np.empty((len(f), n_m))
    disp_psd = np.empty((len(f), n_m))
    defl_psd = np.empty((len(f), n_s))
    # frequency chunks keep the complex (n_f, n_all) transfer within ~64 MB
    chunk = max(1, int(4e6 // max(len(setup.system.all_dofs), 1)))
    for s in range(0, len(f), chunk):
        sl = slice(s, s + chunk)
        Y = _relative_transfer(setup, f[sl])
        Ym = Y[:, setup.mass_index]
        # absolute acceleration per unit base acceleration: r - w^2 Y (both in g per g)
        A = setup.mass_r[None, :] - (w[sl] ** 2)[:, None] * Ym
        acc_psd[sl] = np.abs(A) ** 2 * S[sl, None]
        disp_psd[sl] = np.abs(Ym * G0) ** 2 * S[sl, None]
        defl_psd[sl] = (np.abs(_deflection(setup, Y.T * G0)) ** 2).T * S[sl, None]
    force_psd = defl_psd * setup.spring_k[None, :] ** 2

    def rms(psd):
        return np.sqrt(scipy.integrate.simpson(psd, x=f, axis=0))

    # Miles' check on each dominant mode
    total = res.total_mass[direction]
    eff = res.effective_mass[direction] / total
    gamma = res.participation[direction]
    phi_m = res.all_shapes[setup.mass_index]
    lo, hi = asd.points[0][0], asd.points[-1][0]
    checks = []
    for i in np.flatnonzero(eff >= DOMINANT_FRACTION):
        fi, zi = float(fn[i]), float(setup.zeta[i])
        if not (lo <= fi <= hi) or zi <= 0:
            continue
        q = 1 / (2 * zi)
        a_fn = float(asd_at(asd, fi))
        miles = math.sqrt(math.pi / 2 * fi * q * a_fn)
        rho = f / fi
        T2 = (1 + (2 * zi * rho) ** 2) / ((1 - rho ** 2) ** 2 + (2 * zi * rho) ** 2)
        exact = math.sqrt(scipy.integrate.simpson(T2 * S, x=f))
        checks.append(MilesCheck(mode=int(i) + 1, frequency_hz=fi, q=q, asd_g2_hz=a_fn,
                                 effective_mass_fraction=float(eff[i]), miles_grms=miles,
                                 exact_grms=exact,
                                 mass_grms=np.abs(gamma[i] * phi_m[:, i]) * miles))
    warnings = list(setup.warnings)
    outside = [i + 1 for i in range(len(fn)) if eff[i] >= DOMINANT_FRACTION
               and not (lo <= fn[i] <= hi)]
    if outside:
        warnings.append(f"mode{'s' if len(outside) > 1 else ''}"
                        f" {', '.join(map(str, outside))} (at least {DOMINANT_FRACTION:.0%} of the"
                        " mass) lie outside the spectrum's frequency range, where the input is"
                        " zero")
    return RandomResult(direction=direction, input_grms=asd_grms(asd), frequencies_hz=f,
                        input_asd=S, mass_outputs=setup.mass_outputs, springs=setup.springs,
                        acceleration_grms=rms(acc_psd), displacement_rms_m=rms(disp_psd),
                        deflection_rms_m=rms(defl_psd), force_rms_n=rms(force_psd),
                        acceleration_psd=acc_psd, displacement_psd=disp_psd,
                        deflection_psd=defl_psd, force_psd=force_psd, miles=tuple(checks),
                        mode_frequencies_hz=np.array(fn), assumptions=setup.assumptions,
                        warnings=tuple(warnings))


# -- shock ------------------------------------------------------------------------------------

def _generators(pulse: ShockPulse, scale: float):
    """Each piece of the pulse as ``(duration, G, g0, h)``: ``a(tau) = h . g(tau)`` with
    ``g' = G g``, ``g(0) = g0`` (a sine arch: g = [sin W tau, cos W tau]; a straight line:
    g = [1, tau]); ``scale`` converts g to the unit wanted."""
    out = []
    for t0, t1, kind, a0, a1 in pulse.segments():
        L = t1 - t0
        if kind == "sine":
            W = math.pi / L
            out.append((L, np.array([[0.0, W], [-W, 0.0]]), np.array([0.0, 1.0]),
                        np.array([a0 * scale, 0.0])))
        else:
            out.append((L, np.array([[0.0, 0.0], [1.0, 0.0]]), np.array([1.0, 0.0]),
                        np.array([a0 * scale, (a1 - a0) * scale / L])))
    return out


_REST = (np.zeros((2, 2)), np.zeros(2), np.zeros(2))


def _march(A, b, pieces, z0):
    """Exact samples of ``z' = A z + b a(t)`` for independent blocks.

    A : (nb, s, s), b : (nb, s), z0 : (nb, s). pieces : list of ``(h, n, G, g0, hv)`` with h
    (nb,) the step of each block, n steps, and the input's generator (see _generators). The
    state and the generator advance together by ``expm(h [[A, b hv], [0, G]])`` (Van Loan 1978
    (mem)): exact for these inputs whatever the step. Returns (Z (n_t, nb, s), a (n_t, nb),
    the sample index where each piece ends, 0 first).
    """
    nb, s = b.shape
    Zs, As = [z0[None]], [np.zeros((1, nb))]
    ends = [0]
    z = z0
    for h, n, G, g0, hv in pieces:
        if not np.any(G) and not np.any(hv) and n > 1:
            # after the pulse the motion is free: in closed form, every sample at once
            wz = _free(A, z, np.asarray(h, float) * np.ones(nb), n)
            if wz is not None:
                z = wz[-1]
                ends.append(ends[-1] + n)
                Zs.append(wz)
                As.append(np.zeros((n, nb)))
                continue
        aug = np.zeros((nb, s + 2, s + 2))
        aug[:, :s, :s] = A
        aug[:, :s, s:] = b[:, :, None] * hv[None, None, :]
        aug[:, s:, s:] = G
        E = scipy.linalg.expm(aug * np.asarray(h, float).reshape(-1, 1, 1) * np.ones((nb, 1, 1)))
        wz = np.empty((n, nb, s))
        ga = np.empty((n, nb))
        g = np.broadcast_to(g0, (nb, 2)).copy()
        zz = z
        # stacked as one (nb, s+2) state: E @ [z; g]
        w = np.concatenate([zz, g], axis=1)[:, :, None]
        for k in range(n):
            w = E @ w
            wz[k] = w[:, :s, 0]
            ga[k] = w[:, s:, 0] @ hv
        z = wz[-1] if n else z
        ends.append(ends[-1] + n)
        Zs.append(wz)
        As.append(ga if np.any(hv) else np.zeros((n, nb)))
    # the input at each piece's first sample is its own start value (the previous piece's end
    # value where they meet): the samples above are the ends of each step
    return np.concatenate(Zs), np.concatenate(As), ends


def _free(A, z0, h, n):
    """Samples k h (k = 1..n) of the free motion ``z' = A z`` from z0, (n, nb, s), or None.

    Two-state modal blocks ``[[0, 1], [-lam, -c]]``: the closed form of every damping case
    (response._modal_coordinate, written in the block's own time unit h so that each block may
    have its own step). One block of a state model: the eigen-decomposition when it is well
    conditioned (response._eig_propagate); otherwise None (the caller steps it).
    """
    from .response import _eig_propagate, _modal_coordinate

    nb, s = z0.shape
    k = np.arange(1, n + 1, dtype=float)
    if s == 2 and np.all(A[:, 0, 0] == 0) and np.all(A[:, 0, 1] == 1):
        lam, c = -A[:, 1, 0] * h * h, -A[:, 1, 1] * h
        q, qd = _modal_coordinate(z0[:, 0], z0[:, 1] * h, c, lam, k)
        return np.stack([q.T, qd.T / h[None, :]], axis=2)
    if nb == 1:
        Z = _eig_propagate(A[0], z0[0], h[0] * k)
        return None if Z is None else Z.T[:, None, :]
    return None


def _refined_peak(t: np.ndarray, v: np.ndarray, kinks=()):
    """(signed value, time) of the largest |v| along axis 0, refined by a parabola through the
    three samples around it (v: (n_t, n)). Not at ``kinks``, the samples where the pulse
    starts, ends or turns a corner: a response's slope may jump there (the drop of a sawtooth),
    and a parabola across a kink overshoots; the sample itself is exact."""
    n_t = v.shape[0]
    i = np.argmax(np.abs(v), axis=0)
    cols = np.arange(v.shape[1])
    val = v[i, cols].astype(float)
    tt = t[i].astype(float)
    inner = (i > 0) & (i < n_t - 1) & ~np.isin(i, np.asarray(kinks, dtype=int))
    if np.any(inner):
        j, c = i[inner], cols[inner]
        y0, y1, y2 = v[j - 1, c], v[j, c], v[j + 1, c]
        den = y0 - 2 * y1 + y2
        with np.errstate(divide="ignore", invalid="ignore"):
            sh = np.where(den != 0, 0.5 * (y0 - y2) / den, 0.0)
        sh = np.clip(np.nan_to_num(sh), -0.5, 0.5)
        # uneven neighbours (a piece boundary): the shift in their mean step
        dt = (t[j + 1] - t[j - 1]) / 2
        val[inner] = y1 - 0.25 * (y0 - y2) * sh
        tt[inner] = t[j] + sh * dt
    return val, tt


@dataclass(frozen=True, eq=False)
class ShockResult:
    """Exact time response to a base shock pulse.

    times : (n_t,) s.  input_g : (n_t,) the base acceleration in g.
    mass_outputs, springs : as in RandomResult.
    acceleration_g : (n_t, n_m) absolute acceleration, g.  displacement_m : (n_t, n_m) relative
    to the base, m.  deflection_m, force_n : (n_t, n_s) spring change of length (m) and axial
    force (N, tension positive).
    peaks : dict name -> (values, times): the largest magnitude of each output (signed) and when
        (s), for "acceleration_g", "displacement_m", "deflection_m", "force_n".
    method : "modal" or "state-space".  mode_frequencies_hz : (n_modes,).
    """

    direction: str
    pulse: ShockPulse
    times: np.ndarray
    input_g: np.ndarray
    mass_outputs: tuple
    springs: tuple
    acceleration_g: np.ndarray
    displacement_m: np.ndarray
    deflection_m: np.ndarray
    force_n: np.ndarray
    peaks: dict
    method: str
    mode_frequencies_hz: np.ndarray
    assumptions: tuple = ()
    warnings: tuple = ()
    caution: str = CAUTION


def _time_pieces(pulse: ShockPulse, duration: float, n_steps: int):
    """(pieces of (length, n steps, generator)) covering [0, duration], the pulse's own
    boundaries on the grid, about n_steps steps in all."""
    dt = duration / n_steps
    out = []
    for L, G, g0, hv in _generators(pulse, G0):
        out.append((L, max(1, int(round(L / dt))), G, g0, hv))
    rest = duration - pulse.duration_s
    if rest > 1e-12 * duration:
        out.append((rest, max(1, int(round(rest / dt))), *_REST))
    return out


@checked_arguments(model="model")
def shock_response(model, pulse: ShockPulse, direction: str = "x", duration_s=None,
                   n_steps=None) -> ShockResult:
    """Exact time response of a model to a base acceleration pulse.

    Parameters
    ----------
    model : Model (line or planar).   pulse : ShockPulse.
    direction : "x" or "y".
    duration_s : time span in s from the pulse's start; default the pulse plus two periods of
        the lowest mode (at least one more pulse duration), where the residual peaks fall.
    n_steps : number of samples; default 50 per pulse duration and 20 per period of the highest
        mode with at least 0.1 % of the mass, at most 20,000. The samples are exact (see the
        module notes); the step only decides how closely a peak between samples is caught
        (refined by a parabola through three samples).

    Returns
    -------
    ShockResult.
    """
    if not isinstance(pulse, ShockPulse):
        raise ModelError(f"shock: pulse must be a ShockPulse, got {shown(pulse)}")
    setup = _setup(model, direction, "shock")
    res, system = setup.result, setup.system
    fn = res.frequencies_hz
    eff = res.effective_mass[direction] / res.total_mass[direction]
    T = pulse.duration_s
    flex = fn[fn > 0]
    if duration_s is None:
        duration_s = T + max(T, 2.0 / flex.min() if len(flex) else T)
    else:
        duration_s = float(numbers(duration_s, "shock: duration_s"))
        if not (math.isfinite(duration_s) and duration_s >= T):
            raise ModelError(f"shock: duration_s must be at least the pulse's duration"
                             f" ({T:g} s), got {shown(duration_s)}")
    warnings = list(setup.warnings)
    if n_steps is None:
        relevant = fn[(eff >= 1e-3) & (fn > 0)]
        f_top = relevant.max() if len(relevant) else 1.0 / T
        dt = min(T / 50, 1 / (20 * f_top))
        n_steps = int(math.ceil(duration_s / dt))
        if n_steps > MAX_SHOCK_STEPS:
            n_steps = MAX_SHOCK_STEPS
            warnings.append(f"{MAX_SHOCK_STEPS:,} time steps sample modes up to"
                            f" {MAX_SHOCK_STEPS / duration_s / 20:.4g} Hz at 20 a cycle; peaks of"
                            " higher modes may fall between samples")
    else:
        if not (isinstance(n_steps, (int, np.integer)) and 1 <= n_steps <= 10 ** 7):
            raise ModelError(f"shock: n_steps must be a whole number from 1 to 10,000,000,"
                             f" got {shown(n_steps)}")
    pieces = _time_pieces(pulse, duration_s, int(n_steps))
    times = [np.zeros(1)]
    t0 = 0.0
    for L, n, *_ in pieces:
        times.append(t0 + L * np.arange(1, n + 1) / n)
        t0 += L
    t = np.concatenate(times)
    Mr = np.asarray(system.M_full @ _r_all(system, direction)).ravel()
    r_ret = system.influence(direction)
    if setup.proportional:
        lam, c = np.maximum(res.eigenvalues, 0.0), setup.c
        nm = len(lam)
        A = np.zeros((nm, 2, 2))
        A[:, 0, 1] = 1.0
        A[:, 1, 0] = -lam
        A[:, 1, 1] = -c
        gamma = res.participation[direction]
        b = np.zeros((nm, 2))
        b[:, 1] = -gamma
        steps = [(np.full(nm, L / n), n, G, g0, hv) for L, n, G, g0, hv in pieces]
        Z, a, kinks = _march(A, b, steps, np.zeros((nm, 2)))
        a = a[:, 0] if nm else np.zeros(len(t))
        q, qd = Z[:, :, 0], Z[:, :, 1]          # (n_t, n_modes)
        qdd = -q * lam - qd * c - a[:, None] * gamma
        Y = q @ res.all_shapes.T                  # (n_t, n_all)
        rel_acc = qdd @ res.all_shapes[setup.mass_index].T
        method = "modal"
    else:
        from .damping import state_space

        ss = state_space(system)
        bz = ss.B @ (-(ss.mass * r_ret))
        steps = [(np.array([L / n]), n, G, g0, hv) for L, n, G, g0, hv in pieces]
        Z, a, kinks = _march(ss.A[None], bz[None], steps, np.zeros((1, ss.A.shape[0])))
        Z, a = Z[:, 0, :], a[:, 0]
        Y = Z @ ss.displacement.T
        n = ss.n_mass
        zdot = Z @ ss.A.T + a[:, None] * bz[None, :]
        rel_ret = zdot[:, n:2 * n]
        index = {d: i for i, d in enumerate(system.dofs)}
        rel_acc = rel_ret[:, [index[o] for o in setup.mass_outputs]]
        method = "state-space"
    del Mr
    a_g = a / G0
    acc = rel_acc / G0 + setup.mass_r[None, :] * a_g[:, None]
    disp = Y[:, setup.mass_index]
    defl = _deflection(setup, Y.T).T
    force = defl * setup.spring_k[None, :]
    peaks = {name: _refined_peak(t, v, kinks) for name, v in (
        ("acceleration_g", acc), ("displacement_m", disp), ("deflection_m", defl),
        ("force_n", force))}
    return ShockResult(direction=direction, pulse=pulse, times=t, input_g=a_g,
                       mass_outputs=setup.mass_outputs, springs=setup.springs,
                       acceleration_g=acc, displacement_m=disp, deflection_m=defl, force_n=force,
                       peaks=peaks, method=method, mode_frequencies_hz=np.array(fn),
                       assumptions=setup.assumptions, warnings=tuple(warnings))


@dataclass(frozen=True, eq=False)
class SRS:
    """Shock response spectrum of a base pulse.

    frequencies_hz : (n,) natural frequencies.  q : Q = 1 / (2 zeta).
    maximax_g : (n,) the largest absolute acceleration of a single-DOF system on each frequency,
        over the pulse and the residual motion after it, g.
    """

    pulse: ShockPulse
    frequencies_hz: np.ndarray
    q: float
    maximax_g: np.ndarray


#: samples a cycle (residual motion) and per cycle of the highest frequency (during the pulse)
_SRS_PER_CYCLE = 40


@checked_arguments
def shock_response_spectrum(pulse: ShockPulse, freqs_hz, q: float = 10.0) -> SRS:
    """Maximax shock response spectrum (absolute acceleration) of a base pulse.

    Each single-DOF system ``y'' + 2 zeta w y' + w^2 y = -a(t)``, zeta = 1 / (2 Q), is solved
    exactly at its samples (see the module notes): during the pulse at 40 samples a cycle of the
    highest frequency (at least 200 over the pulse, at most 20,000), after it over 1.5 cycles of
    its own at 40 a cycle (the residual peak of a decaying oscillation falls within its first
    cycle), each peak refined by a parabola.

    Parameters
    ----------
    pulse : ShockPulse.  freqs_hz : (n,) natural frequencies, Hz > 0.  q : Q, 0.5 to 1000.
    """
    if not isinstance(pulse, ShockPulse):
        raise ModelError(f"shock response spectrum: pulse must be a ShockPulse, got"
                         f" {shown(pulse)}")
    f = np.atleast_1d(np.asarray(freqs_hz, float))
    if f.ndim != 1 or len(f) == 0 or not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise ModelError("shock response spectrum: frequencies must be positive values in Hz")
    q = float(q)
    if not (math.isfinite(q) and 0.5 <= q <= 1000):
        raise ModelError(f"shock response spectrum: Q must be from 0.5 to 1000, got {shown(q)}")
    zeta = 1 / (2 * q)
    w = 2 * np.pi * f
    nb = len(f)
    A = np.zeros((nb, 2, 2))
    A[:, 0, 1] = 1.0
    A[:, 1, 0] = -w * w
    A[:, 1, 1] = -2 * zeta * w
    b = np.zeros((nb, 2))
    b[:, 1] = -1.0
    T = pulse.duration_s
    n_pulse = int(min(max(200, math.ceil(_SRS_PER_CYCLE * f.max() * T)), 20000))
    pieces = []
    for L, G, g0, hv in _generators(pulse, 1.0):
        n = max(2, int(round(n_pulse * L / T)))
        pieces.append((np.full(nb, L / n), n, G, g0, hv))
    n_rest = int(1.5 * _SRS_PER_CYCLE)
    pieces.append((1.5 / f / n_rest, n_rest, *_REST))
    Z, _, kinks = _march(A, b, pieces, np.zeros((nb, 2)))
    # absolute acceleration = y'' + a = -(2 zeta w y' + w^2 y)
    acc = -(Z[:, :, 1] * (2 * zeta * w) + Z[:, :, 0] * (w * w))
    # the samples' times differ per block after the pulse; parabolic refinement needs only
    # the values, so a uniform index stands in for time
    val, _ = _refined_peak(np.arange(acc.shape[0], dtype=float), acc, kinks)
    return SRS(pulse=pulse, frequencies_hz=f, q=q, maximax_g=np.abs(val))


# -- design response spectrum -------------------------------------------------------------

def cqc_correlation(omegas, zetas) -> np.ndarray:
    """Der Kiureghian's (1981) modal correlation coefficients rho_ij, (n, n).

    ``rho_ij = 8 sqrt(zi zj) (zi + b zj) b^1.5 / ((1 - b^2)^2 + 4 zi zj b (1 + b^2)
    + 4 (zi^2 + zj^2) b^2)`` with ``b = w_j / w_i`` (Der Kiureghian 1981; Chopra, Dynamics of
    Structures, 13.7 (mem)); rho_ii = 1.
    """
    wi = np.asarray(omegas, float)[:, None]
    wj = np.asarray(omegas, float)[None, :]
    zi = np.asarray(zetas, float)[:, None]
    zj = np.asarray(zetas, float)[None, :]
    with np.errstate(divide="ignore", invalid="ignore"):
        b = wj / wi
        num = 8 * np.sqrt(zi * zj) * (zi + b * zj) * b ** 1.5
        den = (1 - b * b) ** 2 + 4 * zi * zj * b * (1 + b * b) + 4 * (zi * zi + zj * zj) * b * b
        rho = np.where(den > 0, num / den, 1.0)
    np.fill_diagonal(rho, 1.0)
    return np.nan_to_num(rho)


@dataclass(frozen=True, eq=False)
class SpectrumResult:
    """Peak response to a design response spectrum by modal combination.

    modes : (n,) mode numbers used (every mode with a frequency above zero).
    frequencies_hz, periods_s, damping_ratios, participation, pseudo_acceleration_g : (n,).
    effective_mass_fraction : (n,) of the mass free to move in the base direction.
    modal : dict name -> (n, n_out) each mode's peak, for "acceleration_g" (absolute, by the
        pseudo-acceleration), "displacement_m" (relative to the base), "deflection_m", "force_n".
    srss, cqc : dict name -> (n_out,) combined peaks.
    correlation : (n, n) the CQC coefficients.
    modes_for_90_percent : dict direction -> the number of modes (lowest first) whose effective
        masses reach 90 % of the mass free to move in that direction (None: all modes do not).
    mass_fraction : dict direction -> the fraction all the modes used reach.
    """

    direction: str
    spectrum: DesignSpectrum
    mass_outputs: tuple
    springs: tuple
    modes: np.ndarray
    frequencies_hz: np.ndarray
    periods_s: np.ndarray
    damping_ratios: np.ndarray
    participation: np.ndarray
    effective_mass_fraction: np.ndarray
    pseudo_acceleration_g: np.ndarray
    modal: dict
    srss: dict
    cqc: dict
    correlation: np.ndarray
    modes_for_90_percent: dict
    mass_fraction: dict
    assumptions: tuple = ()
    warnings: tuple = ()
    caution: str = CAUTION


def spectrum_value(spectrum: DesignSpectrum, freqs_hz) -> np.ndarray:
    """Pseudo-acceleration in g at ``freqs_hz`` (log-log between points, end values held)."""
    f = np.asarray(freqs_hz, float)
    x = f if spectrum.abscissa == "frequency" else 1.0 / f
    return _loglog(spectrum.points, x)


@checked_arguments(model="model")
def spectrum_response(model, spectrum: DesignSpectrum, direction: str = "x") -> SpectrumResult:
    """Peak modal responses to a design response spectrum, combined by SRSS and by CQC.

    Each mode i with frequency above zero has the peak relative displacement
    ``Gamma_i phi_i S_a(f_i) / w_i^2`` and absolute acceleration ``Gamma_i phi_i S_a(f_i)``
    (pseudo-acceleration; Chopra, Dynamics of Structures, 13.1 (mem)); spring deflections and
    forces follow from the modal displacements. CQC uses each mode's own damping ratio.
    """
    if not isinstance(spectrum, DesignSpectrum):
        raise ModelError(f"design spectrum: spectrum must be a DesignSpectrum, got"
                         f" {shown(spectrum)}")
    setup = _setup(model, direction, "design spectrum")
    res = setup.result
    keep = np.flatnonzero(res.eigenvalues > 0)
    fn = res.frequencies_hz[keep]
    w = 2 * np.pi * fn
    gamma = res.participation[direction][keep]
    sa = spectrum_value(spectrum, fn)
    D = gamma * sa * G0 / (w * w)                       # modal coordinate peaks, m
    shapes = res.all_shapes[:, keep]
    modal_disp = shapes * D[None, :]                    # (n_all, n)
    disp = modal_disp[setup.mass_index].T              # (n, n_m)
    acc = (res.all_shapes[setup.mass_index][:, keep] * (gamma * sa)[None, :]).T
    defl = _deflection(setup, modal_disp).T            # (n, n_s)
    force = defl * setup.spring_k[None, :]
    zeta = setup.zeta[keep]
    rho = cqc_correlation(w, zeta)
    modal = {"acceleration_g": acc, "displacement_m": disp, "deflection_m": defl,
             "force_n": force}
    srss = {k: np.sqrt((v ** 2).sum(axis=0)) for k, v in modal.items()}
    cqc = {k: np.sqrt(np.maximum(np.einsum("ik,ij,jk->k", v, rho, v), 0.0))
           for k, v in modal.items()}
    needed, fraction = {}, {}
    for d in setup.model.directions:
        tot = res.total_mass.get(d, 0.0)
        if tot <= 0:
            continue
        cum = np.cumsum(res.effective_mass[d]) / tot
        fraction[d] = float(cum[-1]) if len(cum) else 0.0
        hit = np.flatnonzero(cum >= 0.9 - 1e-12)
        needed[d] = int(hit[0]) + 1 if len(hit) else None
    warnings = list(setup.warnings)
    p = np.asarray(spectrum.points, float)
    xs = fn if spectrum.abscissa == "frequency" else 1 / fn
    out = np.flatnonzero((xs < p[0, 0] * (1 - 1e-12)) | (xs > p[-1, 0] * (1 + 1e-12)))
    if len(out):
        warnings.append(f"mode{'s' if len(out) > 1 else ''}"
                        f" {', '.join(str(int(keep[i]) + 1) for i in out)} lie beyond the"
                        " spectrum's table: its end value is used there")
    return SpectrumResult(
        direction=direction, spectrum=spectrum, mass_outputs=setup.mass_outputs,
        springs=setup.springs, modes=keep + 1, frequencies_hz=fn, periods_s=1 / fn,
        damping_ratios=zeta, participation=gamma,
        effective_mass_fraction=res.effective_mass[direction][keep] / res.total_mass[direction],
        pseudo_acceleration_g=sa, modal=modal, srss=srss, cqc=cqc, correlation=rho,
        modes_for_90_percent=needed, mass_fraction=fraction, assumptions=setup.assumptions,
        warnings=tuple(warnings))


# -- every load defined with a model ------------------------------------------------------

@dataclass(frozen=True, eq=False)
class LoadResults:
    """The results of every load a model defines (``Model.loads``); None where not defined.
    srs : the shock response spectrum of the pulse at the modes' frequencies and on a log grid."""

    loads: Loads
    random: RandomResult | None = None
    shock: ShockResult | None = None
    srs: SRS | None = None
    spectrum: SpectrumResult | None = None
    caution: str = CAUTION


@checked_arguments(model="model")
def load_results(model, loads: Loads | None = None) -> LoadResults:
    """Solve every load of ``loads`` (default: the model's own ``loads``)."""
    loads = loads if loads is not None else getattr(model, "loads", None)
    if loads is None:
        raise ModelError("loads: the model defines no loads")
    if not isinstance(loads, Loads):
        raise ModelError(f"loads: expected a Loads, got {shown(loads)}")
    d = loads.direction
    rnd = random_response(model, loads.random, d) if loads.random is not None else None
    shock = srs = None
    if loads.shock is not None:
        shock = shock_response(model, loads.shock, d)
        T = loads.shock.duration_s
        fn = shock.mode_frequencies_hz[shock.mode_frequencies_hz > 0]
        lo = min(0.1 / T, fn.min() / 2) if len(fn) else 0.1 / T
        hi = max(min(100 / T, 1e5), 2 * fn.max()) if len(fn) else 100 / T
        fr = np.geomspace(lo, hi, 121)
        srs = shock_response_spectrum(loads.shock, fr, loads.srs_q)
    spec = spectrum_response(model, loads.spectrum, d) if loads.spectrum is not None else None
    return LoadResults(loads=loads, random=rnd, shock=shock, srs=srs, spectrum=spec)


__all__ = ["CAUTION", "DEFAULT_DAMPING_RATIO", "LoadResults", "MilesCheck", "RandomResult",
           "SRS", "ShockResult", "SpectrumResult", "asd_at", "asd_grms", "cqc_correlation",
           "frequency_grid", "load_results", "random_response", "shock_response",
           "shock_response_spectrum", "spectrum_response", "spectrum_value"]
