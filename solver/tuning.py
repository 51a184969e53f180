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
or gain a rigid link go to infinity. The limits are solved in factored form, as
:func:`solver.modes` solves the model (the stiffness factor ``K = A^T A``, one row per spring:
a stiffness taken out is its row removed, a rigid one its row removed and its strain held at
zero by eliminating one DOF; junctions condensed by orthogonal projection, frequencies from the
factor's singular values, zeros counted on the geometry), never a "very stiff" spring, so they
are free of the round-off that a huge stiffness brings and as accurate as the modes.
:func:`retune` refuses a target outside them (stating them, and a range that always contains
the present frequency), then finds a bracket by stepping the value a decade at a time and
solves ``f_N(exp u) = target`` on ``u = log(value)`` with Brent's method (bisection-safeguarded:
it never leaves the bracket, so plateaus cannot stall it). Every value it returns is verified
(:data:`VERIFY_RTOL`, and a count of the eigenvalues below the target by the inertia of the
model's flexibility form before condensation, :func:`eigenvalues_below`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import scipy.linalg
import scipy.sparse as sp

from . import factor
from .assemble import assemble
from .errors import ModelError, checked_arguments, mode_number, number, numbers, shown
from .metrics import unheld_junction_directions
from .model import HUGE, TINY, Mass, Model, Spring
from .modes import ACCURATE_RTOL, modes
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
        if f == "inertia" and model.kind == "planar":
            raise ModelError(f'{named(el)}: retuning a rigid body\'s rotary inertia is not'
                             ' available; retune its mass or a mount\'s stiffness')
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


def _node_labels(system) -> np.ndarray:
    """(n_all,) the node each DOF belongs to (junction DOFs of one node are condensed together)."""
    owner: dict = {}
    return np.array([owner.setdefault(mid, len(owner)) for mid, _d in system.all_dofs],
                    dtype=np.int64)


def _constrain(B, m_all, node, c):
    """Impose ``c . x = 0`` on the factor's columns by eliminating one DOF, keeping M diagonal.

    A massless DOF is eliminated when ``c`` touches one (the largest entry, so the multipliers
    are at most about 1): ``x_p = -(c_rest . x) / c_p`` is a column operation on ``B``.
    Otherwise ``c`` joins DOFs with mass: each end node's two directions are first rotated to
    the direction ``c`` acts along and the one across it (an orthogonal change of coordinates
    that leaves its isotropic mass diagonal), after which ``c`` touches one DOF per end; one
    end held (``c`` on one DOF) removes that DOF, two ends merge: ``x_p = -(c_q / c_p) x_q``
    and ``m_q += m_p (c_q / c_p)^2``. Every step is a column operation of one multiply-add per
    entry, so the factor keeps each spring's row (and its accuracy). Returns (B, m_all, node).
    """
    B = sp.csc_matrix(B)
    n = B.shape[1]
    supp = np.flatnonzero(c)
    if supp.size == 0:
        return B, m_all, node
    m_all = np.asarray(m_all, float).copy()
    light = supp[m_all[supp] == 0]
    if light.size:
        p = int(light[np.argmax(np.abs(c[light]))])
        r = -c / c[p]
        r[p] = 0.0
    else:
        # rotate each end node with two directions in c to (along c, across c)
        rot = sp.lil_matrix(sp.identity(n))
        c = c.copy()
        for nd in np.unique(node[supp]):
            pair = np.flatnonzero(node == nd)
            if len(pair) != 2:
                continue
            d = c[pair]
            size = float(np.hypot(d[0], d[1]))
            u = d / size
            rot[pair[0], pair[0]], rot[pair[0], pair[1]] = u[0], -u[1]
            rot[pair[1], pair[0]], rot[pair[1], pair[1]] = u[1], u[0]
            c[pair] = (size, 0.0)
        B = sp.csc_matrix(B @ sp.csc_matrix(rot))
        supp = np.flatnonzero(c)
        p = int(supp[np.argmax(np.abs(c[supp]))])
        r = np.zeros(n)
        for q in supp:
            if q != p:
                r[q] = -c[q] / c[p]
                m_all[q] += m_all[p] * r[q] * r[q]
    keep = np.setdiff1d(np.arange(n), [p])
    if np.any(r):
        B = sp.csc_matrix(B + sp.csc_matrix(B[:, [p]]) @ sp.csr_matrix(r[None, :]))
    return B[:, keep], m_all[keep], node[keep]


def _factored_spectrum(B, w, m_all, node):
    """Eigenvalues (ascending, (rad/s)^2) of ``K = (diag(w) B)^T diag(w) B`` with masses
    ``m_all`` (0: a junction, condensed), by the same machinery as :func:`solver.modes`:
    orthogonal condensation of the junctions (solver/factor.py) and the singular values of the
    factor (Jacobi SVD where divide and conquer would lose digits). Zero eigenvalues are
    counted on the geometry alone (the rank of the condensed factor with every weight 1: the
    motions that strain no spring, whatever the stiffnesses) and set to exactly 0.

    Returns (lam, estimated relative error of each w, n_zero).
    """
    m_all = np.asarray(m_all, float)
    retained = np.flatnonzero(m_all > 0)
    slaves = np.flatnonzero(m_all == 0)
    n = len(retained)
    if n == 0:
        return np.zeros(0), np.zeros(0), 0
    B = sp.csr_matrix(B)
    if slaves.size:
        F = factor.condense(B, w, retained, slaves, node).factor
        Fg = factor.condense(B, np.ones(B.shape[0]), retained, slaves, node).factor
    else:
        F = sp.diags(w) @ B
        Fg = B
    Fg = Fg.toarray() if sp.issparse(Fg) else np.asarray(Fg)
    rank = 0
    if Fg.size:
        sv = scipy.linalg.svd(Fg, compute_uv=False, check_finite=False)
        # against the geometry's own scale too (direction cosines: a spring's row has norm 1
        # or sqrt 2, and the constraint's rotations and merges keep that): a factor that is
        # all rounding (a junction that frees a mass, a spring parallel to one made rigid) has
        # no rank at all
        ref = max(sv.max(initial=0.0), 1.0)
        rank = int(np.sum(sv > factor.GEOMETRY_RTOL * ref))
    n_zero = n - rank
    lam, _phi, err = factor.factored_eig(F, m_all[retained], ACCURATE_RTOL)
    lam, err = lam.copy(), err.copy()
    lam[:n_zero] = 0.0
    err[:n_zero] = 0.0
    return lam, err, n_zero


def _limit_pencil(model, system, el, f, toward):
    """The factor, masses and node labels of one limit problem (see the module docstring): a
    stiffness taken out is its row removed; made rigid, its row removed and its strain held at
    zero (:func:`_constrain`); a mass to zero, its DOFs massless junctions; a mass to infinity,
    its DOFs held (columns removed). Returns (B, w, m_all, node, extra_zeros)."""
    n_all = len(system.all_dofs)
    m_all = np.asarray(system.M_full.diagonal(), float).ravel().copy()
    node = _node_labels(system)
    planar = model.kind == "planar"
    k = np.array([s_.k for s_ in model.springs], float)
    kt = np.array([s_.k_t for s_ in model.springs], float) if planar else None
    c = None
    if isinstance(el, Spring):
        j = next(i for i, s_ in enumerate(model.springs) if s_.id == el.id)
        if f == "k":
            k[j] = 0.0
        else:
            kt[j] = 0.0
        if toward == "infinity":
            one, none = np.ones(1), np.zeros(1)
            Bc, _w = factor.spring_rows(system.spring_dofs[j:j + 1], system.spring_coef[j:j + 1],
                                        one if f == "k" else none,
                                        (none if f == "k" else one) if planar else None, n_all)
            c = Bc.toarray().ravel() if Bc.shape[0] else None
    B, w = factor.spring_rows(system.spring_dofs, system.spring_coef, k, kt, n_all)
    extra_zeros = 0
    if isinstance(el, Mass):
        own = [i for i in system.mass_dofs[el.id] if i >= 0]
        if toward == "zero":
            m_all[own] = 0.0
        else:
            keep = np.setdiff1d(np.arange(n_all), own)
            B, m_all, node = sp.csr_matrix(B)[:, keep], m_all[keep], node[keep]
            extra_zeros = len(own)
    if c is not None:
        B, m_all, node = _constrain(B, m_all, node, c)
    return B, w, m_all, node, extra_zeros


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
    count : only the lowest ``count`` limits.

    Returns
    -------
    (n_dof,) or (count,) ascending, ``inf`` for modes that rise without bound. The limits are
    those of the model's modes 1..n_dof in ascending order (see the module docstring for each
    case). They are solved in factored form as :func:`solver.modes` solves the model itself (a
    spring's row taken out, or its strain held at zero; never a very large or small value), so
    they are as accurate as its frequencies.
    """
    return _limit_spectrum(model, element_id, field, toward, n_zero, count)[0]


def _limit_spectrum(model, element_id, field, toward, n_zero=None, count=None, system=None):
    """:func:`limit_spectrum`, and the estimated relative error of each limit's frequency."""
    el, f = _field_for(model, element_id, field)
    if model.gears:
        raise ModelError("limit_spectrum: the exact limits are built from springs alone and are"
                         " not available for a model with gear stages (retune and"
                         " reachable_range estimate them by solving the model)")
    if toward not in ("zero", "infinity"):
        raise ModelError(f'limit: toward must be "zero" or "infinity", got "{toward}"')
    if getattr(el, f) <= 0:
        raise ModelError(f"limit of {quoted(el.id, el.label)}: give a model in which its {f} is"
                         " positive")
    system = assemble(model) if system is None else system
    n = system.n_dof
    rising = (toward == "infinity") == (f != "mass")
    B, w, m_all, node, extra_zeros = _limit_pencil(model, system, el, f, toward)
    lam, err, pencil_zero = _factored_spectrum(B, w, m_all, node)
    if rising:
        if n_zero is None:
            n_zero = int(modes(system).is_zero.sum())
        # zero modes stay at zero; the pencil's own zeros are those same modes (or directions
        # that lost all stiffness and mass, which are no modes), so only its positive part counts
        positive, perr = lam[pencil_zero:], err[pencil_zero:]
        drop = max(0, positive.size - (n - n_zero))
        positive, perr = positive[drop:], perr[drop:]
        pad = max(n - n_zero - positive.size, 0)
        out = np.concatenate([np.zeros(n_zero), positive, np.full(pad, np.inf)])
        out_err = np.concatenate([np.zeros(n_zero), perr, np.zeros(pad)])
    else:
        out = np.concatenate([np.zeros(extra_zeros), lam])
        out_err = np.concatenate([np.zeros(extra_zeros), err])
        order = np.argsort(out, kind="stable")
        out, out_err = out[order], out_err[order]
    want = n if count is None else min(int(count), n)
    out, out_err = out[:want], out_err[:want]
    if out.size != want:
        raise AssertionError(f"limit spectrum has {out.size} entries for {want} modes")
    return out, out_err


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


def _limits(model, element_id, f, mode, n_zero=None, system=None, who="retune"):
    """(f at value -> 0, f at value -> inf, exact?, estimated relative error of each) of mode
    ``mode`` in Hz."""
    system = assemble(model) if system is None else system
    mode_number(mode, system.n_dof, who)   # before any count is handed to an eigensolver
    # the exact limits are built from the springs' rows alone; a gear stage (a mesh row or a
    # constraint) takes the estimated path, which solves the model itself
    if len(system.all_dofs) <= LIMIT_DENSE_DOF and not model.gears:
        at0, e0 = _limit_spectrum(model, element_id, f, "zero", n_zero, mode, system)
        atinf, einf = _limit_spectrum(model, element_id, f, "infinity", n_zero, mode, system)
        exact = True
    else:
        at0 = _estimated_spectrum(model, element_id, f, "zero", mode)
        atinf = _estimated_spectrum(model, element_id, f, "infinity", mode)
        e0 = einf = np.full(max(len(at0), len(atinf)), np.inf)
        exact = False
    if mode > len(at0) or mode > len(atinf):
        raise ModelError(f"{who}: mode {mode} does not exist; the model has"
                         f" {min(len(at0), len(atinf))} modes")
    return (_hz(at0[mode - 1]), _hz(atinf[mode - 1]), exact,
            (float(e0[mode - 1]), float(einf[mode - 1])))


def _solve(model, mode):
    """Modes 1..mode (and two more, so a repeated group at the edge is not cut)."""
    return modes(model, count=mode + 2)


# ---------------------------------------------------------------------------------------------
# verification


@checked_arguments
def eigenvalues_below(model: Model, omega2: float) -> int | None:
    """How many natural frequencies lie below ``sqrt(omega2)`` rad/s, by Sylvester's law of
    inertia on the model before condensation, in flexibility (mixed) form:

        A = [[-diag(1/k), B], [B^T, -omega2 M]],

    one row per spring stiffness (``B`` its geometry, direction cosines) and one column per
    DOF, junctions included. The Schur complement of the first block is ``K - omega2 M``, so
    (Haynsworth inertia additivity) the count is the number of negative eigenvalues of ``A``
    less the number of springs. A stiff spring appears as a small compliance ``1/k``, not as a
    huge stiffness beside small ones, so the count does not lose the soft springs to rounding
    (the stiffness form ``K - omega2 M`` does at a link ratio of about 1e8). ``A`` is scaled
    symmetrically to unit row maxima (a congruence: the inertia is unchanged) and factored by
    ``scipy.linalg.ldl`` (Bunch-Kaufman). Junction directions no spring holds are null vectors
    of ``K`` and ``M``; they are moved to a positive eigenvalue first. None above
    :data:`COUNT_DENSE_DOF` DOFs.

    Being a count on the uncondensed model, it is independent of the eigen-solver and of the
    static condensation (a different algorithm on different matrices).
    """
    return _count_below(assemble(model), omega2)


def _count_below(system, omega2: float) -> int | None:
    """:func:`eigenvalues_below` on an assembled model (only its element geometry, masses and
    values are read: the count never uses the condensation or the eigen-solver)."""
    model = system.model
    n_all = len(system.all_dofs)
    if n_all > COUNT_DENSE_DOF or model.gears:   # the count reads springs only
        return None
    if n_all == 0:
        return 0
    planar = model.kind == "planar"
    k = np.array([s_.k for s_ in model.springs], float)
    kt = np.array([s_.k_t for s_ in model.springs], float) if planar else None
    B, w = factor.spring_rows(system.spring_dofs, system.spring_coef, k, kt, n_all)
    n_r = B.shape[0]
    m_all = np.asarray(system.M_full.diagonal(), float).ravel()
    A = np.zeros((n_r + n_all, n_r + n_all))
    A[np.arange(n_r), np.arange(n_r)] = -1.0 / (w * w)
    Bd = B.toarray()
    A[:n_r, n_r:] = Bd
    A[n_r:, :n_r] = Bd.T
    A[n_r + np.arange(n_all), n_r + np.arange(n_all)] = -omega2 * m_all
    N = unheld_junction_directions(system)
    if N.shape[1]:
        # a junction direction nothing holds is an exact null vector of K and of M: a zero
        # pivot that round-off could tip either way. Moving it to a positive eigenvalue changes
        # no other (it is an invariant subspace of the symmetric K - omega2 M).
        A[n_r:, n_r:] += N @ N.T
    # symmetric equilibration (Ruiz): d_i <- d_i / sqrt(max_j |d_i a_ij d_j|)
    d = np.ones(A.shape[0])
    absA = np.abs(A)
    for _ in range(8):
        row = (absA * d[None, :]).max(axis=1) * d
        row = np.where(row > 0, row, 1.0)
        d = d / np.sqrt(row)
    As = A * d[:, None] * d[None, :]
    _lu, D, _perm = scipy.linalg.ldl((As + As.T) * 0.5, lower=True)
    ev = scipy.linalg.eigvalsh_tridiagonal(np.diag(D).copy(), np.diag(D, -1).copy()) \
        if D.shape[0] > 1 else np.diag(D)
    return int(np.sum(ev < 0)) - n_r


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
    warnings : cautions on the value (a re-solved frequency less accurate than
        :data:`VERIFY_RTOL`, a count that could not confirm the mode number).
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
    warnings: tuple = ()


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
    f_zero, f_inf, exact, (e_zero, e_inf) = _limits(work, element_id, f, mode, n_zero,
                                                    base.system)
    now = float(base.frequencies_hz[mode - 1])
    rising = f != "mass"
    lo, hi = (f_zero, f_inf) if rising else (f_inf, f_zero)
    # how far the limits and the present frequency may be off (their error estimates)
    slack = max(1e-12, 4 * max(e_zero, e_inf, float(base.frequency_rtol[mode - 1])))
    widened = ""
    if not lo * (1 - slack) <= now <= hi * (1 + slack):
        # f_N is monotone in the value (Rayleigh), so limits that do not contain the present
        # frequency are wrong: never state them; the range is widened to include it and said
        # to be approximate, and the search below decides by solving the model itself
        lo, hi = min(lo, now), max(hi, now)
        exact = False
        widened = (" (the computed limits did not contain the present frequency, so this"
                   " range is only approximate)")
    evaluations = 1

    solved = {start: base} if v0 > 0 else {}

    def finish(value, evals):
        return _verified(model, element_id, f, mode, target, value, start, now, (lo, hi), exact,
                         evals, name, unit, solved.get(value))

    if abs(now - target) <= 1e-12 * target:
        return finish(start, evaluations)
    approx = widened or ("" if exact else
                         " (estimated: the model is too large for the exact limits)")
    if v0 > 0:
        now_text = f"now {now:.7g} Hz at {v0:.6g} {unit}"
    else:   # the present value is 0 (k_t not set, a junction): say what the mode is at 0
        try:
            at_zero = float(_solve(model, mode).frequencies_hz[mode - 1])
            now_text = f"now {at_zero:.7g} Hz with no {name}"
        except (ModelError, IndexError):
            now_text = f"now no {name}"
    if math.isfinite(hi) and abs(hi - lo) <= max(DEPEND_RTOL, slack) * max(hi, 1e-300):
        raise ModelError(
            f"retune: mode {mode} does not depend on the {name} of {who}: it stays at"
            f" {now:.7g} Hz for every value from 0 to infinity{approx} (the element does not"
            " deform in this mode whatever its value); change another element")
    if not lo * (1 - slack) <= target <= hi * (1 + slack):
        raise ModelError(
            f"retune: mode {mode} cannot reach {target:.7g} Hz by changing the {name} of"
            f" {who} alone: over all values from 0 to infinity it stays"
            f" {_range_text(lo, hi, rising, name)}{approx} ({now_text}); change another"
            " element or add one")

    def freq(u):
        value = math.exp(u)
        try:
            res = _solve(with_value(model, element_id, value, f), mode)
        except ModelError:   # values too far apart to solve: treated as the end of the search
            return None
        # the verification takes the solve at exactly the value returned, not a second one
        solved.clear()
        solved[value] = res
        return float(res.frequencies_hz[mode - 1])

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

    class _OnTarget(Exception):
        pass

    def g(u):
        count[0] += 1
        fu = freq(u)
        if fu is not None and abs(fu - target) <= 8 * np.finfo(float).eps * target:
            raise _OnTarget(u)   # on the target to a few ulps: Brent's last steps add nothing
        # log f against log value is nearly straight (f ~ sqrt(k) for a spring that governs
        # the mode), so Brent's interpolation lands in a few steps
        return math.log(max(fu, 1e-300) / target) if fu is not None else math.nan

    from scipy.optimize import brentq   # ~0.3 s to import: only when a retune needs it

    try:
        root = brentq(g, min(bracket), max(bracket), xtol=1e-13, rtol=4 * np.finfo(float).eps,
                      maxiter=300)
    except _OnTarget as hit:
        root = hit.args[0]
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
              name, unit, solved=None) -> RetuneResult:
    """Re-solve the model with ``value`` (or take the search's own solve at exactly that value,
    ``solved``); refuse (with what was reached) unless mode ``mode`` is on the target to
    VERIFY_RTOL. The inertia count then confirms the mode number; where it disagrees with a
    complete dense solve whose error estimate is far inside the count's window (two
    independent methods, each claiming the digits), the value is kept and the disagreement
    is stated in ``warnings``: a correct value is never refused on an inconclusive check."""
    tuned = with_value(model, element_id, value, f)
    who = quoted_id(model, element_id)
    res = solved if solved is not None else _solve(tuned, mode)
    reached = float(res.frequencies_hz[mode - 1])
    if not abs(reached - target) <= VERIFY_RTOL * target:
        raise ModelError(
            f"retune: the search for mode {mode} at {target:.7g} Hz ended at the {name} of"
            f" {who} = {value:.9g} {unit}, but the model re-solved with that value has"
            f" mode {mode} at {reached:.9g} Hz (off by {abs(reached / target - 1):.2g}, more than"
            f" the {VERIFY_RTOL:g} allowed); the frequencies are not accurate enough at that"
            " value, so no value is given")
    notes = []
    rtol = float(res.frequency_rtol[mode - 1]) if res.frequency_rtol is not None else 0.0
    if rtol > VERIFY_RTOL:
        notes.append(f"mode {mode} of the re-solved model is accurate to about {rtol:.1g}"
                     f" (relative) only, more than the {VERIFY_RTOL:g} the value is meant to"
                     " hold: treat the value as approximate")
    w = 2 * math.pi * target
    below_lo = _count_below(res.system, (w * (1 - COUNT_RTOL)) ** 2)
    below_hi = _count_below(res.system, (w * (1 + COUNT_RTOL)) ** 2)
    checked = below_lo is not None and below_lo <= mode - 1 and below_hi >= mode
    if below_lo is not None and not checked:
        fz = res.frequencies_hz
        sure = (res.complete and rtol <= 1e-3 * COUNT_RTOL
                and (mode < 2 or fz[mode - 2] < target * (1 - COUNT_RTOL))
                and (mode >= len(fz) or fz[mode] > target * (1 + COUNT_RTOL)))
        said = (f"a count of the eigenvalues of the unreduced model (inertia of its flexibility"
                f" form) finds {below_lo} below {target * (1 - COUNT_RTOL):.9g} Hz and"
                f" {below_hi} below {target * (1 + COUNT_RTOL):.9g} Hz")
        if not sure:
            raise ModelError(
                f"retune: with the {name} of {who} = {value:.9g} {unit} the eigen-solver puts"
                f" mode {mode} at {reached:.9g} Hz, but {said}: the frequencies are not"
                " reliable at that value (a link far stiffer than the rest?), so no value is"
                " given")
        notes.append(f"the mode number is not confirmed: the dense solve puts mode {mode} at"
                     f" {reached:.9g} Hz (estimated error {rtol:.1g}, its neighbours clear of"
                     f" the target), but {said}")
    return RetuneResult(element_id=element_id, field=f, mode=mode, target_hz=target,
                        value=float(value), frequency_hz=reached, start_value=start,
                        start_hz=now, range_hz=tuple(rng), range_exact=exact, evaluations=evals,
                        count_checked=checked, warnings=tuple(notes))


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
