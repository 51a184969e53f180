"""Moving a resonance: parameter sweeps, retuning, and which element governs each mode.

Mode numbers: "mode N" is always the N-th natural frequency in ascending order (zero-frequency
modes first), as in the mode table. Two modes may cross as a value changes; the N-th frequency
then passes from one shape to the other, but as a function of the value it stays continuous.

Monotonicity (Rayleigh's theorem; Courant-Fischer min-max, math): every eigenvalue ``w^2`` of
``K v = w^2 M v`` is non-decreasing in each stiffness ``k`` or ``k_t`` and non-increasing in each
mass, because the Rayleigh quotient is. So f_N(value) is monotone, but it may be flat over
decades (another mode's plateau, before a crossing) and then move. Its range over all values in
``(0, inf)`` lies between its two limits, computed exactly here (:func:`limit_spectrum`):

- a spring's ``k`` (or ``k_t``) -> 0: the model with that stiffness taken out;
- ``k`` -> inf: the spring made rigid along its axis, i.e. the constraint
  ``e . (u_b - u_a) = 0`` (``k_t`` -> inf: the same at right angles to it). On a line or a shaft
  this merges the two ends; in a plane it is a pin-jointed rigid link, and the other stiffness
  of the spring still acts;
- a mass -> 0: the node becomes a massless junction (its directions condensed out); one mode per
  free direction it had rises without bound, except along directions no spring holds, which stay
  at 0 Hz;
- a mass -> inf: the node held still, plus one 0 Hz mode per free direction (the mass's own
  motion, whose frequency falls to zero).

An increasing limit keeps every zero-frequency mode at zero and lets modes that lose their mass
or gain a rigid link go to infinity. The limits are eigenvalues of small constrained / condensed
pencils solved densely, never a "very stiff" spring, so they are free of the round-off that a
huge stiffness brings. :func:`retune` refuses a target outside them (stating them), then finds a
bracket by stepping the value a decade at a time and solves ``f_N(exp u) = target`` on ``u =
log(value)`` with Brent's method (bisection-safeguarded: it never leaves the bracket, so plateaus
cannot stall it). Every value it returns is verified (:data:`VERIFY_RTOL`, and a count of the
eigenvalues below the target by the inertia of ``K - w^2 M`` before condensation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import scipy.linalg
from scipy.optimize import brentq

from .assemble import assemble
from .errors import ModelError, checked_arguments, mode_number, number, numbers, shown
from .metrics import strain_vectors, unheld_junction_directions
from .model import HUGE, TINY, Mass, Model, Spring
from .modes import ZERO_RTOL, modes
from .naming import named, quoted, quoted_id

#: A returned value, re-solved, puts the mode on the target to this relative tolerance (Hz).
VERIFY_RTOL = 1e-8
#: Relative half-width in Hz of the inertia (Sturm) count that confirms the mode number.
COUNT_RTOL = 1e-6
#: Two limits closer than this (relative) mean the mode does not depend on the element.
DEPEND_RTOL = 1e-9
#: Limits are solved densely up to this many DOFs (junctions included); above, they are
#: estimated by solving the model at values 10^8 away and said to be approximate.
LIMIT_DENSE_DOF = 1500
#: The inertia count runs up to this many DOFs (a dense LDL^T factorisation).
COUNT_DENSE_DOF = 2000

#: Editable element fields: (element type, field) -> display name and SI unit
FIELDS = {
    (Spring, "k"): ("stiffness k", "N/m"),
    (Spring, "k_t"): ("transverse stiffness k_t", "N/m"),
    (Mass, "mass"): ("mass", "kg"),
}

_LN10 = math.log(10.0)
# log of the widest values a Model accepts, a hair inside so exp() never rounds past them
_U_MIN, _U_MAX = math.log(TINY) + 1e-9, math.log(HUGE) - 1e-9


def _field_for(model: Model, element_id: str, field: str | None):
    el = model.element(element_id)
    if isinstance(el, Spring):
        f = field or "k"
        if f not in ("k", "k_t"):
            raise ModelError(f'{named(el)}: field must be "k" or "k_t", got "{f}"')
        if f == "k_t" and model.kind != "planar":
            raise ModelError(f"{named(el)}: k_t acts only in planar models")
    elif isinstance(el, Mass):
        f = field or "mass"
        if f == "inertia":
            f = "mass"
        if f != "mass":
            raise ModelError(f'{named(el)}: field must be "mass", got "{f}"')
    else:
        raise ModelError(f"{quoted(el.id, el.label)} is not a spring or a mass; only those can be"
                         " retuned")
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


def _name(model: Model, el, f: str) -> str:
    if model.kind == "torsion":
        return "torsional stiffness k" if isinstance(el, Spring) else "inertia"
    return FIELDS[(type(el), f)][0]


def _reference_value(model: Model, el, f: str) -> float:
    """A positive value to stand for a present value of 0 (k_t not set, a junction's mass)."""
    if f == "k_t":
        return float(el.k)
    if f == "mass":
        heavy = [m.mass for m in model.masses if m.mass > 0]
        return float(np.median(heavy)) if heavy else 1.0
    return 1.0


def _hz(lam: float) -> float:
    return math.inf if math.isinf(lam) else math.sqrt(max(lam, 0.0)) / (2 * math.pi)


# ---------------------------------------------------------------------------------------------
# exact limits


def _dense(mat) -> np.ndarray:
    return mat.toarray() if hasattr(mat, "toarray") else np.asarray(mat, float)


def _finite_eigenvalues(K: np.ndarray, m_diag: np.ndarray, constraint=None,
                        count: int | None = None):
    """Finite eigenvalues of ``K v = lam M v`` (M = diag(m_diag) >= 0) on ``constraint . v = 0``.

    The constraint ``c . v = 0`` is imposed by eliminating one DOF p, ``v_p = -(c . v)_rest /
    c_p`` (K -> T^T K T, M -> T^T M T). p is a massless DOF when c has one, so M stays diagonal;
    otherwise c touches only DOFs with mass and the massless ones keep exactly zero rows of M.
    Either way the massless DOFs are known by index and condensed statically (pseudo-inverse:
    directions nothing holds carry no energy), and the rest is solved with its (SPD) mass
    block. Returns (ascending eigenvalues, the lowest ``count`` of them when given, stiffness
    scale in (rad/s)^2 of the uncondensed pencil, against which a zero is judged).
    """
    m_diag = np.asarray(m_diag, float)
    c = None if constraint is None else np.asarray(constraint, float)
    if c is not None and np.any(c != 0):
        light_c = np.where(m_diag == 0, np.abs(c), 0.0)
        p = int(np.argmax(light_c)) if light_c.max() > 0 else int(np.argmax(np.abs(c)))
        rest = np.setdiff1d(np.arange(len(c)), [p])
        T = np.zeros((len(c), len(rest)))
        T[rest, np.arange(len(rest))] = 1.0
        T[p] = -c[rest] / c[p]
        K = T.T @ K @ T
        M = T.T @ (m_diag[:, None] * T)
    else:
        M = np.diag(m_diag)
    K = (K + K.T) * 0.5
    heavy = np.flatnonzero(np.diag(M) > 0)
    light = np.flatnonzero(np.diag(M) <= 0)
    if heavy.size == 0:
        return np.zeros(0), 0.0
    Mhh = M[np.ix_(heavy, heavy)]
    s = 1.0 / np.sqrt(np.diag(Mhh))
    Kpp = K[np.ix_(heavy, heavy)]
    scale = float((np.abs(Kpp) * s[:, None] * s[None, :]).sum(axis=1).max(initial=0.0))
    if light.size:
        Kzz = K[np.ix_(light, light)]
        Kzp = K[np.ix_(light, heavy)]
        atol = 1e-11 * max(np.abs(K).max(initial=0.0), 1e-300)
        Kpp = Kpp - Kzp.T @ scipy.linalg.pinv(Kzz, atol=atol) @ Kzp
    # scaled by the diagonal of M first, so a wide spread of masses costs no accuracy
    A = Kpp * s[:, None] * s[None, :]
    B = Mhh * s[:, None] * s[None, :]
    top = len(heavy) if count is None else min(int(count), len(heavy))
    if top == 0:
        return np.zeros(0), scale
    lam = scipy.linalg.eigh((A + A.T) * 0.5, (B + B.T) * 0.5, eigvals_only=True,
                            subset_by_index=(0, top - 1))
    return np.sort(lam), scale


@checked_arguments
def limit_spectrum(model: Model, element_id: str, field: str | None, toward: str,
                   n_zero: int | None = None, count: int | None = None) -> np.ndarray:
    """Every natural frequency's limit, as w^2 in (rad/s)^2, when one value tends to 0 or inf.

    Parameters
    ----------
    model : a model in which the element's value is positive (the limits do not depend on it).
    toward : ``"zero"`` or ``"infinity"``.
    n_zero : how many zero-frequency modes the model has at positive values (found by
        :func:`solver.modes` when not given); an increasing limit keeps exactly these at zero.
    count : only the lowest ``count`` limits (cheaper on large models).

    Returns
    -------
    (n_dof,) or (count,) ascending, ``inf`` for modes that rise without bound. The limits are those of the
    model's modes 1..n_dof in ascending order (see the module docstring for each case).
    """
    el, f = _field_for(model, element_id, field)
    if toward not in ("zero", "infinity"):
        raise ModelError(f'limit: toward must be "zero" or "infinity", got "{toward}"')
    if getattr(el, f) <= 0:
        raise ModelError(f"limit of {quoted(el.id, el.label)}: give a model in which its {f} is"
                         " positive")
    system = assemble(model, sparse=False)
    n = system.n_dof
    m_full = np.asarray(_dense(system.M_full).diagonal(), float)
    rising = (toward == "infinity") == (f != "mass")
    if isinstance(el, Spring):
        j = next(i for i, s in enumerate(model.springs) if s.id == element_id)
        axial, trans = strain_vectors(system, j)
        K0 = _dense(assemble(model.with_changes(remove=[element_id]), sparse=False).K_full)
        if model.kind == "planar":
            other, c_other = (el.k_t, trans) if f == "k" else (el.k, axial)
            if other > 0:
                K0 = K0 + other * np.outer(c_other, c_other)
        c = axial if f == "k" else trans
        lam, scale = _finite_eigenvalues(K0, m_full, c if toward == "infinity" else None, count)
        extra_zeros = 0
    else:
        own = [i for i in system.mass_dofs[el.id] if i >= 0]
        K = _dense(system.K_full)
        if toward == "zero":
            m = m_full.copy()
            m[own] = 0.0
            lam, scale = _finite_eigenvalues(K, m, count=count)
            extra_zeros = 0
        else:
            keep = np.setdiff1d(np.arange(len(m_full)), own)
            lam, scale = _finite_eigenvalues(K[np.ix_(keep, keep)], m_full[keep], count=count)
            extra_zeros = len(own)
    # a zero is judged against the stiffness of the model itself too: taking a spring out can
    # leave a pencil that is pure round-off (e.g. nothing else joins a free-free pair)
    K_own = _dense(system.K_full)
    heavy = m_full > 0
    s_own = 1.0 / np.sqrt(m_full[heavy])
    own_scale = float((np.abs(K_own[np.ix_(heavy, heavy)]) * s_own[:, None] * s_own[None, :])
                      .sum(axis=1).max(initial=0.0))
    lam = np.where(lam <= ZERO_RTOL * max(scale, own_scale, 1e-300), 0.0, lam)
    if rising:
        if n_zero is None:
            n_zero = int(modes(model).is_zero.sum())
        # zero modes stay at zero; the pencil's own zeros are those same modes (or directions
        # that lost all stiffness and mass, which are no modes), so only its positive part counts
        positive = lam[lam > 0]
        if count is None:
            positive = positive[max(0, positive.size - (n - n_zero)):]
        out = np.concatenate([np.zeros(n_zero), positive,
                              np.full(max(n - n_zero - positive.size, 0), np.inf)])
    else:
        out = np.sort(np.concatenate([np.zeros(extra_zeros), lam]))
    want = n if count is None else min(int(count), n)
    out = out[:want]
    if out.size != want:
        raise AssertionError(f"limit spectrum has {out.size} entries for {want} modes")
    return out


def _estimated_spectrum(model, element_id, f, toward, count) -> np.ndarray:
    """Large models: the spectrum with the value 10^8 times smaller or larger (approximate; a
    larger factor would bring the round-off of a very stiff spring)."""
    v = value_of(model, element_id, f) * (1e-8 if toward == "zero" else 1e8)
    v = min(max(v, TINY), HUGE)
    return modes(with_value(model, element_id, v, f), count=count).eigenvalues


@checked_arguments
def reachable_range(model: Model, element_id: str, mode: int, field: str | None = None,
                    decades: float | None = None) -> tuple[float, float]:
    """The frequencies (Hz) mode ``mode`` tends to as the value goes to 0 and to infinity,
    ascending; every frequency strictly between them is reached at some positive value.

    ``decades`` is accepted for older callers and ignored: the limits are exact.
    """
    el, f = _field_for(model, element_id, field)
    if getattr(el, f) <= 0:
        model = with_value(model, element_id, _reference_value(model, el, f), f)
    lo, hi = _limits(model, element_id, f, int(mode), who="reachable_range")[:2]
    return tuple(sorted((lo, hi)))


def _limits(model, element_id, f, mode, n_zero=None, who="retune"):
    """(f at value -> 0, f at value -> inf, exact?) of mode ``mode`` in Hz."""
    system = assemble(model)
    mode_number(mode, system.n_dof, who)   # before any count is handed to an eigensolver
    n_all = len(system.all_dofs)
    if n_all <= LIMIT_DENSE_DOF:
        at0 = limit_spectrum(model, element_id, f, "zero", n_zero, count=mode)
        atinf = limit_spectrum(model, element_id, f, "infinity", n_zero, count=mode)
        exact = True
    else:
        at0 = _estimated_spectrum(model, element_id, f, "zero", mode)
        atinf = _estimated_spectrum(model, element_id, f, "infinity", mode)
        exact = False
    if mode > len(at0) or mode > len(atinf):
        raise ModelError(f"{who}: mode {mode} does not exist; the model has"
                         f" {min(len(at0), len(atinf))} modes")
    return _hz(at0[mode - 1]), _hz(atinf[mode - 1]), exact


def _solve(model, mode):
    """Modes 1..mode (and two more, so a repeated group at the edge is not cut)."""
    return modes(model, count=mode + 2)


# ---------------------------------------------------------------------------------------------
# verification


@checked_arguments
def eigenvalues_below(model: Model, omega2: float) -> int | None:
    """How many natural frequencies lie below ``sqrt(omega2)`` rad/s, by Sylvester's law of
    inertia: the negative eigenvalues of ``K - omega2 M`` before condensation (an LDL^T
    factorisation, Bunch-Kaufman pivoting), which equal those of the condensed pencil (the
    junction block of K is positive semi-definite; its null directions, which no spring holds,
    are set aside). None above :data:`COUNT_DENSE_DOF` DOFs.

    Being a count on the uncondensed matrices, it is independent of the eigen-solver and of the
    static condensation (a different algorithm on different matrices).
    """
    system = assemble(model, sparse=False)
    n_all = len(system.all_dofs)
    if n_all > COUNT_DENSE_DOF:
        return None
    if n_all == 0:
        return 0
    K = _dense(system.K_full)
    A = K - omega2 * _dense(system.M_full)
    # a junction direction nothing holds is an exact null vector of K and of M, so of A: a zero
    # pivot that round-off could tip either way. Moving it to a positive eigenvalue changes no
    # other eigenvalue (it is an invariant subspace of the symmetric A).
    N = unheld_junction_directions(system)
    if N.shape[1]:
        A = A + max(np.abs(np.diag(A)).max(initial=0.0), 1.0) * (N @ N.T)
    _lu, D, _perm = scipy.linalg.ldl((A + A.T) * 0.5, lower=True)
    d = np.diag(D).copy()
    off = np.diag(D, -1).copy()
    ev = scipy.linalg.eigvalsh_tridiagonal(d, off) if n_all > 1 else d
    return int(np.sum(ev < 0))


# ---------------------------------------------------------------------------------------------
# retune


@dataclass(frozen=True)
class RetuneResult:
    """A verified retune.

    value : the element's new value (N/m, N m/rad, kg or kg m^2).
    frequency_hz : mode ``mode`` of the model re-solved with ``value`` (Hz), within
        :data:`VERIFY_RTOL` of ``target_hz``.
    range_hz : (low, high) the frequencies the mode tends to as the value goes to its two
        limits (ascending; ``inf`` when it rises without bound); ``range_exact`` False when the
        model was too large to solve the limits exactly.
    count_checked : True when the inertia count confirmed that mode ``mode`` (not a neighbour)
        is the one on the target.
    """

    element_id: str
    field: str
    mode: int
    target_hz: float
    value: float
    frequency_hz: float
    start_value: float
    start_hz: float
    range_hz: tuple
    range_exact: bool
    evaluations: int
    count_checked: bool


@checked_arguments
def retune(model: Model, element_id: str, mode: int, target_hz: float,
           field: str | None = None) -> float:
    """The value of one element's stiffness or mass that puts ``mode`` (from 1) on ``target_hz``.

    Parameters
    ----------
    model : Model
    element_id : id of a spring (field ``"k"``, or ``"k_t"`` in planar models) or a mass
        (field ``"mass"``; a disc's inertia in torsion).
    mode : mode number from 1: the ``mode``-th natural frequency in ascending order, whatever
        shape that is at the new value (modes may cross on the way).
    target_hz : the wanted natural frequency in Hz (> 0).

    Returns
    -------
    float : the value in SI units (N/m, N m/rad, kg or kg m^2). It has been verified: the model
        re-solved with it has mode ``mode`` within :data:`VERIFY_RTOL` of the target
        (:func:`retune_result` gives the details).

    Raises
    ------
    ModelError : when the target lies outside what this element alone can reach, stating the
        exact reachable range (the limits as the value goes to 0 and to infinity); when the mode
        does not depend on the element; when the verification fails, stating the frequency
        reached instead; or on a bad id, field, mode or target.
    """
    return retune_result(model, element_id, mode, target_hz, field).value


@checked_arguments
def retune_result(model: Model, element_id: str, mode: int, target_hz: float,
                  field: str | None = None) -> RetuneResult:
    """:func:`retune` with the details of the search and its verification."""
    el, f = _field_for(model, element_id, field)
    target = number(target_hz, "retune: target frequency (Hz)")
    if not math.isfinite(target) or target <= 0:
        raise ModelError(f"retune: target frequency must be a positive number of Hz, got"
                         f" {shown(target_hz)}")
    if isinstance(mode, bool) or int(mode) != mode or mode < 1:
        raise ModelError(f"retune: mode numbers start at 1, got {shown(mode)}")
    mode = int(mode)
    name, unit = _name(model, el, f), unit_of(model, element_id, f)
    who = quoted(el.id, el.label)
    v0 = float(getattr(el, f))
    start = v0 if v0 > 0 else _reference_value(model, el, f)
    work = model if v0 > 0 else with_value(model, element_id, start, f)
    base = _solve(work, mode)
    if mode > base.n_modes:
        raise ModelError(f"retune: mode {mode} does not exist; the model has {base.n_modes} modes")
    # the null space of K does not depend on any positive stiffness or mass value, so a mode
    # that is zero at one positive value is zero at all of them
    if base.zero_mode(mode) is not None:
        zm = base.zero_mode(mode)
        raise ModelError(f"retune: mode {mode} is a zero-frequency mode ({zm.cause}) for every"
                         f" positive {name} of {who}; no value of it gives the mode a"
                         " frequency: add a spring")
    n_zero = int(base.is_zero.sum())
    f_zero, f_inf, exact = _limits(work, element_id, f, mode, n_zero)
    now = float(base.frequencies_hz[mode - 1])
    rising = f != "mass"
    lo, hi = (f_zero, f_inf) if rising else (f_inf, f_zero)
    evaluations = 1

    def finish(value, evals):
        return _verified(model, element_id, f, mode, target, value, start, now, (lo, hi), exact,
                         evals, name, unit)

    if abs(now - target) <= 1e-12 * target:
        return finish(start, evaluations)
    approx = "" if exact else " (estimated: the model is too large for the exact limits)"
    if v0 > 0:
        now_text = f"now {now:.7g} Hz at {v0:.6g} {unit}"
    else:   # the present value is 0 (k_t not set, a junction): say what the mode is at 0
        try:
            at_zero = float(_solve(model, mode).frequencies_hz[mode - 1])
            now_text = f"now {at_zero:.7g} Hz with no {name}"
        except (ModelError, IndexError):
            now_text = f"now no {name}"
    if math.isfinite(hi) and abs(hi - lo) <= DEPEND_RTOL * max(hi, 1e-300):
        raise ModelError(
            f"retune: mode {mode} does not depend on the {name} of {who}: it stays at"
            f" {now:.7g} Hz for every value from 0 to infinity{approx} (the element does not"
            " deform in this mode whatever its value); change another element")
    if not lo * (1 - 1e-12) <= target <= hi * (1 + 1e-12):
        raise ModelError(
            f"retune: mode {mode} cannot reach {target:.7g} Hz by changing the {name} of"
            f" {who} alone: over all values from 0 to infinity it stays"
            f" {_range_text(lo, hi, rising, name)}{approx} ({now_text}); change another"
            " element or add one")

    def freq(u):
        try:
            return float(_solve(with_value(model, element_id, math.exp(u), f), mode)
                         .frequencies_hz[mode - 1])
        except ModelError:   # values too far apart to solve: treated as the end of the search
            return None

    # step a decade at a time in the direction that helps until the target is passed; a plateau
    # (another mode's frequency, before a crossing) is stepped over, never taken as a limit
    up = (now < target) == rising
    a, fa = math.log(start), now
    bracket = None
    while True:
        b = min(a + _LN10, _U_MAX) if up else max(a - _LN10, _U_MIN)
        if b == a:
            break
        fb = freq(b)
        evaluations += 1
        if fb is None:
            break
        if fb == target:
            return finish(math.exp(b), evaluations)
        if (fb > target) != (fa > target):
            bracket = (a, b)
            break
        a, fa = b, fb
    if bracket is None:
        edge = "largest" if up else "smallest"
        raise ModelError(
            f"retune: mode {mode} would reach {target:.7g} Hz only beyond the {edge} {name} a"
            f" model can hold: at {math.exp(a):.6g} {unit} for {who} it is at"
            f" {fa:.7g} Hz (its limit is {_limit_text(lo, hi, up, rising)}{approx}); change"
            " another element or add one")
    count = [0]

    def g(u):
        count[0] += 1
        fu = freq(u)
        return (fu if fu is not None else math.nan) - target

    root = brentq(g, min(bracket), max(bracket), xtol=1e-13, rtol=4 * np.finfo(float).eps,
                  maxiter=300)
    return finish(math.exp(root), evaluations + count[0])


def _range_text(lo, hi, rising, name) -> str:
    """'between A Hz (as k -> 0) and B Hz (as k -> infinity)' or 'above A Hz ... without bound'."""
    word = name.split()[-1]
    lo_end, hi_end = ("0", "infinity") if rising else ("infinity", "0")
    if not math.isfinite(hi):
        return (f"above {lo:.7g} Hz (its limit as {word} -> {lo_end}) and rises without bound as"
                f" {word} -> {hi_end}")
    return f"between {lo:.7g} Hz (as {word} -> {lo_end}) and {hi:.7g} Hz (as {word} -> {hi_end})"


def _limit_text(lo, hi, up, rising) -> str:
    toward_high = up == rising
    v = hi if toward_high else lo
    return "no bound" if not math.isfinite(v) else f"{v:.7g} Hz"


def _verified(model, element_id, f, mode, target, value, start, now, rng, exact, evals,
              name, unit) -> RetuneResult:
    """Re-solve the model with ``value``; refuse (with what was reached) unless mode ``mode`` is
    on the target to VERIFY_RTOL and the inertia count agrees that it is mode ``mode``."""
    tuned = with_value(model, element_id, value, f)
    who = quoted_id(model, element_id)
    reached = float(_solve(tuned, mode).frequencies_hz[mode - 1])
    if not abs(reached - target) <= VERIFY_RTOL * target:
        raise ModelError(
            f"retune: the search for mode {mode} at {target:.7g} Hz ended at the {name} of"
            f" {who} = {value:.9g} {unit}, but the model re-solved with that value has"
            f" mode {mode} at {reached:.9g} Hz (off by {abs(reached / target - 1):.2g}, more than"
            f" the {VERIFY_RTOL:g} allowed); the frequencies are not accurate enough at that"
            " value, so no value is given")
    w = 2 * math.pi * target
    below_lo = eigenvalues_below(tuned, (w * (1 - COUNT_RTOL)) ** 2)
    below_hi = eigenvalues_below(tuned, (w * (1 + COUNT_RTOL)) ** 2)
    checked = below_lo is not None
    if checked and not (below_lo <= mode - 1 and below_hi >= mode):
        raise ModelError(
            f"retune: with the {name} of {who} = {value:.9g} {unit} the eigen-solver puts"
            f" mode {mode} at {reached:.9g} Hz, but a count of the eigenvalues of the unreduced"
            f" model (inertia of K - w^2 M) finds {below_lo} below {target * (1 - COUNT_RTOL):.9g}"
            f" Hz and {below_hi} below {target * (1 + COUNT_RTOL):.9g} Hz: the frequencies are not"
            " reliable at that value (a link far stiffer than the rest?), so no value is given")
    return RetuneResult(element_id=element_id, field=f, mode=mode, target_hz=target,
                        value=float(value), frequency_hz=reached, start_value=start,
                        start_hz=now, range_hz=tuple(rng), range_exact=exact, evaluations=evals,
                        count_checked=checked)


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
    who = quoted(el.id, el.label)
    values = numbers(values, f"sweep of {who}: values")
    if values.ndim != 1 or not np.all(np.isfinite(values)) or np.any(values <= 0):
        raise ModelError(f"sweep of {who}: values must be positive finite numbers")
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
    return ranked(model, sensitivities(res), mode_number(mode, res.n_modes, "rank_elements"))


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
