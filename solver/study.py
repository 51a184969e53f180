"""Tolerance study: natural frequencies across the scatter of toleranced springs and masses.

Every spring, dashpot and mass may carry a :class:`~solver.model.Tolerance`. A study draws ``n``
models (each toleranced value times ``1 + (percent / 100) u``, ``u`` in [-1, 1] from the element's
distribution), solves them all, and summarises per mode: the distribution of the frequency
(histogram, 5/50/95 percentiles, mean, standard deviation), the probability of clearing each
excitation source with the model's margin (as :func:`solver.margins.margin_check` judges one
model), a first-order estimate from the sensitivities (:func:`solver.metrics.sensitivities`,
propagated linearly), and the worst-case corners.

How the samples are solved
--------------------------
The stiffness matrix is a sum of per-spring contributions ``k_j c_j c_j^T`` (``c_j`` the spring's
stretch row, solver/assemble.py), so a sample's K is the fixed part plus the toleranced springs'
contributions scaled by the sample's factors: one matrix product for a whole chunk. The mass
matrix is diagonal (a rigid body's inertia included), so each sample's problem is the standard
symmetric one ``(M^-1/2 K M^-1/2) u = w^2 u``, solved for the chunk at once by
``numpy.linalg.eigh`` on the stacked matrices. Massless junctions are condensed per sample
(Schur complement, one stacked ``solve``): exact, since a junction held by a spring at nominal
is held in every sample (positive factors keep the null space of each block). Models that need
more (gear stages, junction directions no spring holds, or stiffness contrasts where eigh on
the formed K would lose digits, found by comparing the nominal sample with :func:`solver.modes`)
solve each sample with :func:`solver.modes` instead: slower, as exact as a single solve.

Zero-frequency modes (rigid-body motions, mechanisms) stay zero in every sample: positive factors
change neither the null space of K nor its dimension.

Reproducibility and scale
-------------------------
Samples come in chunks of ``chunk``; chunk ``i`` draws from ``numpy.random.default_rng(
SeedSequence(seed, spawn_key=(i,)))`` (the ``i``-th child of ``SeedSequence(seed).spawn``), so a
chunk's samples do not depend on which process solves it, or when. Each chunk returns integer
counts (histogram, clearing counts, crossings) and sums; they are combined in chunk order, so a
run on a Dask cluster (``scheduler=``) equals the local run bit for bit for the same seed and
chunk size. Histogram bins are fixed before sampling: eigenvalues rise with every stiffness and
fall with every mass (Courant-Fischer; Rayleigh quotient monotonicity, math), so the corner
with every spring at its upper bound and every mass at its lower bound bounds every mode from
above, and the opposite corner from below. That same argument makes the worst-case corners
exact, not estimates.

Mode tracking: modes are numbered by frequency in each sample (mode 1 is the lowest). Where
two modes come close, their shapes may swap order between samples; a sample's mode whose shape
matches (MAC, modal assurance criterion) the nominal mode just below or above it better than its
own is counted in ``ModeStudy.crossed_fraction``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np
import scipy.sparse as sp

from .errors import ModelError, shown
from .model import Model

#: Most samples one study may ask for.
MAX_SAMPLES = 1_000_000_000
#: Per-mode histogram bins between the exact bounds (percentiles from them are good to about one bin,
#: (upper - lower) / HIST_BINS, when the samples are not kept).
HIST_BINS = 4096
#: Samples x modes up to which every sample's frequencies are kept (exact percentiles): 40 MB.
KEEP_LIMIT = 5_000_000
#: Truncation of the normal distribution, in standard deviations (the tolerance bound).
NORMAL_SIGMAS = 3.0
#: Most DOFs a study solves (every sample is a dense eigenproblem).
MAX_STUDY_DOF = 2000

# variance of u in [-1, 1] for each distribution (math): uniform 1/3, symmetric triangular 1/6,
# normal with sigma 1/3 truncated at +-1: (1/9) (1 - 2 a phi(a) / (2 Phi(a) - 1)), a = 3
_A = NORMAL_SIGMAS
_PHI_A = math.exp(-_A * _A / 2) / math.sqrt(2 * math.pi)
_MASS_A = math.erf(_A / math.sqrt(2))
U_VARIANCE = {"uniform": 1.0 / 3.0, "triangular": 1.0 / 6.0,
              "normal": (1 - 2 * _A * _PHI_A / _MASS_A) / _A ** 2}


class StudyCancelled(Exception):
    """Raised when a study is cancelled before its first chunk finished."""


@dataclass(frozen=True)
class ToleranceParameter:
    """One toleranced value: ``kind`` is "spring", "dashpot" or "mass"; ``field`` what it scales
    ("k", "k, k_t", "c", "mass", "mass, inertia"); ``percent`` the bound, ``distribution``."""

    element_id: str
    kind: str
    field: str
    percent: float
    distribution: str
    index: int   # the element's position among the model's springs, dampers or masses


@dataclass(frozen=True)
class ModeStudy:
    """Statistics of one mode (numbered by frequency) over the samples; frequencies in Hz.

    percentiles_hz : (p5, p50, p95).    histogram : (counts (HIST_BINS,), edges (HIST_BINS + 1,)).
    clear_probability : source id -> fraction of samples in which this mode clears the source
        with the model's margin (None for a zero-frequency mode, which is not checked).
    clear_all_probability : fraction clearing every source at once.
    first_order_mean_hz, first_order_std_hz : the linear estimate from the nominal sensitivities.
    corner_low_hz, corner_high_hz : the mode at the worst-case corners (each toleranced value at
        its bound, the side chosen by the sign of the sensitivity), each verified by a solve;
        corner_low / corner_high give the side, element id -> -1 or +1.
    crossed_fraction : fraction of samples where this mode's shape matches a neighbouring
        nominal mode better than its own (MAC); None when not tracked.
    """

    mode: int
    nominal_hz: float
    zero: bool
    mean_hz: float
    std_hz: float
    min_hz: float
    max_hz: float
    percentiles_hz: tuple
    histogram: tuple = field(repr=False, compare=False)
    clear_probability: dict
    clear_all_probability: float | None
    first_order_mean_hz: float
    first_order_std_hz: float
    corner_low_hz: float
    corner_high_hz: float
    corner_low: dict = field(repr=False)
    corner_high: dict = field(repr=False)
    crossed_fraction: float | None


@dataclass(frozen=True)
class StudyResult:
    """A tolerance study's result.

    n_samples : samples solved (fewer than asked when cancelled: ``complete`` False).
    frequencies_hz : (n_samples, n_modes) every sample's frequencies, or None when there are more
        than KEEP_LIMIT values (percentiles then come from the histogram, to within one bin).
    modes : tuple of ModeStudy, mode 1 first.   parameters : the toleranced values.
    method : "batched eigh" or "modes() per sample".    notes : cautions in words.
    """

    model: Model
    n_requested: int
    n_samples: int
    seed: int
    chunk: int
    parameters: tuple
    modes: tuple
    sources: tuple
    method: str
    frequencies_hz: np.ndarray | None = field(repr=False, compare=False)
    notes: tuple = ()
    complete: bool = True
    percentiles_from: str = "samples"

    def mode(self, number: int) -> ModeStudy:
        return self.modes[number - 1]

    def probability_error(self, p: float) -> float:
        """The Monte Carlo standard error sqrt(p (1 - p) / N) of a probability p (binomial)."""
        return math.sqrt(max(p * (1 - p), 0.0) / max(self.n_samples, 1))


# -- the plan: everything a chunk needs, picklable for Dask workers ----------------------------

@dataclass(frozen=True)
class _Plan:
    n_modes: int
    n_zero: int
    percents: np.ndarray      # (n_params,)
    dist_codes: np.ndarray    # (n_params,) 0 uniform, 1 triangular, 2 normal
    spring_params: np.ndarray  # indices into params of toleranced springs, in P's row order
    mass_params: np.ndarray   # indices into params of toleranced masses
    K_base: np.ndarray        # (n_all, n_all) the untoleranced springs' stiffness
    P_T: object               # (n_all * n_all, n_tol_springs) sparse: their contributions
    m_base: np.ndarray        # (n_all,) mass of each DOF
    dof_param: np.ndarray     # (n_all,) column in the mass factors of each DOF, -1 none
    retained: np.ndarray
    slaves: np.ndarray
    edges: np.ndarray         # (n_modes, HIST_BINS + 1)
    bands: tuple              # (source index, lo, hi, lo_w, hi_w)
    n_sources: int
    u0: np.ndarray | None     # (n_retained, n_modes) nominal shapes, orthonormal, for MAC
    trackable: np.ndarray     # (n_modes,) bool
    keep: bool
    fallback: object = None   # (model, params) for the per-sample path


_CODES = {"uniform": 0, "triangular": 1, "normal": 2}


def _draw(plan: _Plan, seed: int, index: int, size: int) -> np.ndarray:
    """(size, n_params) factors 1 + (percent/100) u of chunk ``index``."""
    return _factors(plan.percents, plan.dist_codes, seed, index, size)


def _factors(percents, dist_codes, seed: int, index: int, size: int) -> np.ndarray:
    # one uniform draw per value, mapped by each distribution's inverse CDF: the stream does
    # not depend on the distributions, so changing one tolerance leaves the others' draws alone
    rng = np.random.default_rng(np.random.SeedSequence(seed, spawn_key=(index,)))
    U = rng.random((size, len(percents)))
    u = 2.0 * U - 1.0
    tri = dist_codes == 1
    if tri.any():
        # inverse CDF of the symmetric triangular distribution on [-1, 1]
        t = U[:, tri]
        u[:, tri] = np.where(t < 0.5, np.sqrt(2.0 * t) - 1.0, 1.0 - np.sqrt(2.0 * (1.0 - t)))
    nor = dist_codes == 2
    if nor.any():
        from scipy.special import ndtr, ndtri
        lo = ndtr(-NORMAL_SIGMAS)
        z = ndtri(lo + U[:, nor] * (1.0 - 2.0 * lo))
        u[:, nor] = np.clip(z / NORMAL_SIGMAS, -1.0, 1.0)
    return 1.0 + percents / 100.0 * u


def sample_factors(model: Model, n: int, seed: int = 0, chunk: int | None = None) -> np.ndarray:
    """(n, n_params) the factors a study with these arguments draws, one column per
    :func:`tolerance_parameters` entry (each toleranced value is nominal x factor)."""
    from .assemble import assemble
    params = tolerance_parameters(model)
    if chunk is None:
        chunk = default_chunk(len(assemble(model, sparse=False).all_dofs))
    percents = np.array([p.percent for p in params])
    codes = np.array([_CODES[p.distribution] for p in params])
    sizes = [min(chunk, n - i * chunk) for i in range((n + chunk - 1) // chunk)]
    return np.concatenate([_factors(percents, codes, seed, i, size)
                           for i, size in enumerate(sizes)]) if sizes else np.zeros((0, len(params)))


def _solve_batch(plan: _Plan, factors: np.ndarray):
    """Frequencies (size, n_modes) in Hz and, for MAC, the shapes (size, n_r, n_modes) or None."""
    size = factors.shape[0]
    n_all = plan.m_base.shape[0]
    if len(plan.spring_params):
        # P^T is sparse (a spring touches at most 2 x 3 DOFs): size x nnz work, not x n_all^2
        K = np.ascontiguousarray(
            (plan.P_T @ factors[:, plan.spring_params].T).T).reshape(size, n_all, n_all)
        K += plan.K_base
    else:
        K = np.broadcast_to(plan.K_base, (size, n_all, n_all)).copy()
    m = np.broadcast_to(plan.m_base, (size, n_all)).copy()
    if len(plan.mass_params):
        scale = np.ones((size, len(plan.mass_params) + 1))
        scale[:, :-1] = factors[:, plan.mass_params]
        m *= scale[:, plan.dof_param]   # dof_param -1 picks the trailing column of ones
    r, s = plan.retained, plan.slaves
    if len(s):
        Krr = K[:, r][:, :, r]
        Krs = K[:, r][:, :, s]
        Kss = K[:, s][:, :, s]
        K = Krr - Krs @ np.linalg.solve(Kss, np.swapaxes(Krs, 1, 2))
        m = m[:, r]
    d = 1.0 / np.sqrt(m)
    # M^-1/2 K M^-1/2 in place; eigh reads one triangle, so no symmetrising pass is needed
    A = K
    A *= d[:, :, None]
    A *= d[:, None, :]
    if plan.u0 is not None:
        lam, vec = np.linalg.eigh(A)
    else:
        lam, vec = np.linalg.eigvalsh(A), None
    lam = lam[:, :plan.n_modes]
    lam[:, :plan.n_zero] = 0.0
    f = np.sqrt(np.maximum(lam, 0.0)) / (2 * np.pi)
    return f, vec


def _solve_fallback(plan: _Plan, factors: np.ndarray):
    from .modes import modes
    model, params = plan.fallback
    out = np.empty((factors.shape[0], plan.n_modes))
    for i, row in enumerate(factors):
        f = modes(scaled_model(model, params, row)).frequencies_hz
        out[i] = f[:plan.n_modes]
    out[:, :plan.n_zero] = 0.0
    return out, None


def run_chunk(plan: _Plan, seed: int, index: int, size: int) -> dict:
    """Solve chunk ``index`` (``size`` samples) and summarise it: integer counts and sums that
    combine exactly in chunk order. Module level, so a Dask worker can run it."""
    factors = _draw(plan, seed, index, size)
    if plan.fallback is not None:
        f, vec = _solve_fallback(plan, factors)
    else:
        f, vec = _solve_batch(plan, factors)
    nm = plan.n_modes
    counts = np.zeros((nm, HIST_BINS), np.int32)   # a chunk holds < 2^31 samples
    for j in range(nm):
        e = plan.edges[j]
        b = np.clip(np.searchsorted(e, f[:, j], side="right") - 1, 0, HIST_BINS - 1)
        counts[j] = np.bincount(b, minlength=HIST_BINS)
    from .margins import EDGE_RTOL
    conflict = np.zeros((size, nm, max(plan.n_sources, 1)), bool)
    for si, lo, hi, lo_w, hi_w in plan.bands:
        inside = (lo_w * (1 + EDGE_RTOL) < f) & (f < hi_w * (1 - EDGE_RTOL))
        on = (lo * (1 - EDGE_RTOL) <= f) & (f <= hi * (1 + EDGE_RTOL))
        conflict[:, :, si] |= inside | on
    conflict[:, :plan.n_zero, :] = False
    clear = (~conflict).sum(axis=0)[:, :plan.n_sources].astype(np.int64)
    clear_all = (~conflict.any(axis=2)).sum(axis=0).astype(np.int64)
    crossed = np.zeros(nm, np.int64)
    if vec is not None and plan.u0 is not None:
        # MAC of each sample mode with its own nominal mode and the two beside it (a swap of
        # order is between neighbours; all pairs would cost another eigensolve at 200 DOFs)
        U, V = plan.u0, vec[:, :, :nm]
        own = np.einsum("im,sim->sm", U, V) ** 2
        rival = np.zeros_like(own)
        if nm > 1:
            rival[:, 1:] = np.einsum("im,sim->sm", U[:, :-1], V[:, :, 1:]) ** 2
            rival[:, :-1] = np.maximum(rival[:, :-1],
                                       np.einsum("im,sim->sm", U[:, 1:], V[:, :, :-1]) ** 2)
        crossed = ((rival > own) & plan.trackable).sum(axis=0).astype(np.int64)
    return {"n": size, "counts": counts, "clear": clear, "clear_all": clear_all,
            "crossed": crossed, "sum": f.sum(axis=0),
            "min": f.min(axis=0), "max": f.max(axis=0), "f": f if plan.keep else None}


# -- building the plan -------------------------------------------------------------------------

def tolerance_parameters(model: Model) -> tuple:
    """The toleranced values of a model, springs first, then dashpots, then masses."""
    out = []
    planar = model.kind == "planar"
    for i, s in enumerate(model.springs):
        if s.tolerance is not None:
            out.append(ToleranceParameter(s.id, "spring", "k, k_t" if planar and s.k_t else "k",
                                          s.tolerance.percent, s.tolerance.distribution, i))
    for i, d in enumerate(model.dampers):
        if d.tolerance is not None:
            out.append(ToleranceParameter(d.id, "dashpot", "c", d.tolerance.percent,
                                          d.tolerance.distribution, i))
    for i, m in enumerate(model.masses):
        if m.tolerance is not None:
            what = ("inertia" if model.kind == "torsion" else
                    "mass, inertia" if m.inertia > 0 else "mass")
            out.append(ToleranceParameter(m.id, "mass", what, m.tolerance.percent,
                                          m.tolerance.distribution, i))
    return tuple(out)


def scaled_model(model: Model, params, factors) -> Model:
    """The model with each toleranced value multiplied by its factor (a spring's k and k_t, a
    dashpot's c, a mass's mass and inertia)."""
    put = []
    for p, x in zip(params, factors):
        x = float(x)
        if p.kind == "spring":
            s = model.springs[p.index]
            put.append(replace(s, k=s.k * x, k_t=s.k_t * x))
        elif p.kind == "dashpot":
            d = model.dampers[p.index]
            put.append(replace(d, c=d.c * x))
        else:
            m = model.masses[p.index]
            put.append(replace(m, mass=m.mass * x, inertia=m.inertia * x))
    return model.with_changes(put=put)


def _corner_factors(params, sides) -> np.ndarray:
    return np.array([1.0 + s * p.percent / 100.0 for p, s in zip(params, sides)])


def _check_int(value, what: str, lo: int, hi: int) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or not lo <= value <= hi:
        raise ModelError(f"tolerance_study: {what} must be a whole number from {lo:,} to {hi:,},"
                         f" got {shown(value)}")
    return int(value)


def default_chunk(n_all: int) -> int:
    """Samples per chunk for a model of ``n_all`` DOFs: about 32 MB of stacked matrices, and
    at least 4 samples (a chunk's summary holds n_modes x HIST_BINS counts however few samples
    it has)."""
    return int(min(10_000, max(4, 4_000_000 // max(n_all * n_all, 1))))


def tolerance_study(model: Model, n: int, seed: int = 0, chunk: int | None = None,
                    scheduler=None, progress=None, cancel=None,
                    keep_samples: bool | None = None, track_modes: bool = True) -> StudyResult:
    """Monte Carlo tolerance study of the natural frequencies.

    Parameters
    ----------
    model : Model with at least one toleranced spring, dashpot or mass.
    n : int, number of samples (1 to 1e9).
    seed : int >= 0; the same seed and chunk give the same result, locally or on a cluster.
    chunk : int, samples per chunk (default :func:`default_chunk`: depends on the model only).
    scheduler : None (this process), a Dask scheduler address ("tcp://host:8786") or a
        ``distributed.Client``; needs the optional ``dask`` extra.
    progress : callable(done, total), called after each chunk (in the calling thread).
    cancel : callable returning True, or an object with ``is_set()`` (threading.Event): checked
        between chunks; a cancelled study returns the chunks done (``complete`` False).
    keep_samples : keep every sample's frequencies (default: when n x modes <= KEEP_LIMIT).
    track_modes : compute shapes to flag modes that swap order (MAC), batched path only.

    Returns
    -------
    StudyResult
    """
    from .assemble import assemble
    from .margins import source_bands
    from .metrics import _mass_motion_squared, sensitivities
    from .modes import modes

    if not isinstance(model, Model):
        raise ModelError(f"tolerance_study: model must be a Model, got {type(model).__name__}")
    n = _check_int(n, "n (samples)", 1, MAX_SAMPLES)
    seed = _check_int(seed, "seed", 0, 2 ** 63 - 1)
    params = tolerance_parameters(model)
    if not params:
        raise ModelError("tolerance study: no spring, dashpot or mass has a tolerance; give the"
                         " uncertain ones a tolerance (percent and distribution) first")
    system = assemble(model, sparse=False)
    n_all = len(system.all_dofs)
    if n_all > MAX_STUDY_DOF:
        raise ModelError(f"tolerance study: the model has {n_all} degrees of freedom; a study"
                         f" solves every sample densely and takes models of up to"
                         f" {MAX_STUDY_DOF}")
    chunk = default_chunk(n_all) if chunk is None else _check_int(chunk, "chunk", 1, 10_000_000)
    nominal = modes(system)
    if nominal.n_modes == 0:
        raise ModelError(f"tolerance study: {nominal.message or 'the model has no modes'}")
    nm = nominal.n_modes
    n_zero = int(np.sum(nominal.is_zero))
    f0 = nominal.frequencies_hz
    notes = ["modes are numbered by frequency in every sample (mode 1 the lowest); where modes"
             " come close their shapes can swap order between samples"]
    if nominal.repeated:
        notes.append("the nominal model has repeated frequencies (modes "
                     + "; ".join(", ".join(map(str, g)) for g in nominal.repeated)
                     + "): their shapes are a basis, so they are not tracked by shape")
    if any(p.kind == "dashpot" for p in params):
        notes.append("dashpot tolerances do not change the undamped natural frequencies; they"
                     " are drawn (so the other draws stay the same) but have no effect here")
    if any(p.distribution == "normal" for p in params):
        notes.append(f"a normal tolerance's percent is its {NORMAL_SIGMAS:g}-sigma bound; the"
                     " distribution is truncated there, so no value leaves the bound")

    # -- the plan ----------------------------------------------------------------------------
    percents = np.array([p.percent for p in params])
    dist_codes = np.array([_CODES[p.distribution] for p in params])
    spring_params = np.array([i for i, p in enumerate(params) if p.kind == "spring"], np.int64)
    mass_params = np.array([i for i, p in enumerate(params) if p.kind == "mass"], np.int64)
    tol_springs = [params[i].index for i in spring_params]
    K_base, P_T = _stiffness_parts(system, tol_springs)
    m_base = np.asarray(system.M_full.diagonal()).ravel().astype(float)
    dof_param = np.full(n_all, -1, np.int64)
    for col, i in enumerate(mass_params):
        for d in system.mass_dofs[model.masses[params[i].index].id]:
            if d >= 0:
                dof_param[d] = col
    retained = np.flatnonzero(m_base > 0)
    slaves = np.flatnonzero(m_base == 0)
    bands_full = source_bands(model)
    source_ids = tuple(dict.fromkeys(b[0] for b in bands_full))
    bands = tuple((source_ids.index(b[0]), b[2], b[3], b[4], b[5]) for b in bands_full)
    groups = {m for g in nominal.repeated for m in g}
    trackable = np.array([(i + 1) not in groups and not nominal.is_zero[i] for i in range(nm)])

    # exact bounds of every mode: all springs up / masses down, and the opposite (Courant-Fischer)
    up = [1 if p.kind == "spring" else -1 if p.kind == "mass" else 0 for p in params]
    f_hi = modes(scaled_model(model, params, _corner_factors(params, up))).frequencies_hz[:nm]
    f_lo = modes(scaled_model(model, params, _corner_factors(params, [-s for s in up]))
                 ).frequencies_hz[:nm]
    lo_e = np.minimum(f_lo, f0) * (1 - 1e-9)
    hi_e = np.maximum(f_hi, f0) * (1 + 1e-9)
    hi_e = np.where(hi_e > lo_e, hi_e, lo_e + 1e-12)
    edges = np.linspace(lo_e, hi_e, HIST_BINS + 1).T.copy()
    keep = (n * nm <= KEEP_LIMIT) if keep_samples is None else bool(keep_samples)

    special = bool(model.gears) or (system.loose is not None and system.loose.size > 0)
    u0 = None
    if track_modes and not special:
        sq = np.sqrt(m_base[retained])
        u0 = nominal.shapes * sq[:, None] if len(slaves) == 0 else None
        if u0 is None:
            # shapes on the retained DOFs of the condensed problem
            idx = [system.all_dofs.index(d) for d in system.dofs]
            u0 = nominal.all_shapes[idx] * np.sqrt(m_base[idx])[:, None]
    plan = _Plan(n_modes=nm, n_zero=n_zero, percents=percents, dist_codes=dist_codes,
                 spring_params=spring_params, mass_params=mass_params, K_base=K_base,
                 P_T=P_T,
                 m_base=m_base, dof_param=dof_param, retained=retained, slaves=slaves,
                 edges=edges, bands=bands, n_sources=len(source_ids), u0=u0,
                 trackable=trackable, keep=keep)
    method = "batched eigh"
    if not special:
        f_check, _ = _solve_batch(replace(plan, u0=None), np.ones((1, len(params))))
        err = np.abs(f_check[0] - f0)
        if np.any(err > 1e-7 * f0 + 1e-10 * f0.max()):
            special = True
    if special:
        plan = replace(plan, fallback=(model, params), u0=None)
        method = "modes() per sample"
        why = ("gear stages" if model.gears else
               "junction directions no spring holds" if system.loose is not None
               and system.loose.size else "stiffness contrasts eigh on the formed K cannot"
               " resolve")
        notes.append(f"the model has {why}: each sample is solved by the full modal solver"
                     " (slower) and modes are not tracked by shape")
    if n_zero:
        notes.append(f"{n_zero} zero-frequency mode(s) (rigid-body motion or mechanism) stay"
                     " zero in every sample and are not checked against the sources")

    # -- run ----------------------------------------------------------------------------------
    sizes = [min(chunk, n - i * chunk) for i in range((n + chunk - 1) // chunk)]
    acc = _Totals()
    _run_all(plan, seed, sizes, scheduler, progress, cancel, n, acc)
    done = acc.n
    if done == 0:
        raise StudyCancelled("tolerance study cancelled before any sample was solved")
    counts, clear, clear_all, crossed = acc.counts, acc.clear, acc.clear_all, acc.crossed
    mean = acc.sum / done
    fmin, fmax = acc.min, acc.max
    F = np.concatenate(acc.f) if keep else None
    if F is not None:
        pct = np.percentile(F, [5, 50, 95], axis=0)
        std = F.std(axis=0, ddof=1) if done > 1 else np.zeros(nm)
    else:
        pct = np.array([_hist_percentile(counts[j], edges[j], [5, 50, 95])
                        for j in range(nm)]).T
        mid = 0.5 * (edges[:, 1:] + edges[:, :-1])
        var = (counts * (mid - mean[:, None]) ** 2).sum(axis=1) / max(done - 1, 1)
        std = np.sqrt(var)
        notes.append(f"percentiles and standard deviation from a {HIST_BINS}-bin histogram"
                     " between the exact bounds (to about one bin)")

    # first order: df/ds for each toleranced value's factor s, from the nominal sensitivities
    sens = sensitivities(nominal)
    rot = _mass_motion_squared(nominal, rotation=True) if model.bodies else None
    lam = nominal.eigenvalues
    dlam = np.zeros((nm, len(params)))
    for c, p in enumerate(params):
        if p.kind == "spring":
            s = model.springs[p.index]
            dlam[:, c] = s.k * sens.dlambda_dk[:, p.index] + s.k_t * sens.dlambda_dkt[:, p.index]
        elif p.kind == "mass":
            m = model.masses[p.index]
            dlam[:, c] = m.mass * sens.dlambda_dm[:, p.index]
            if rot is not None and m.inertia > 0:
                dlam[:, c] -= m.inertia * lam * rot[:, p.index]
    with np.errstate(divide="ignore", invalid="ignore"):
        dfds = np.where(f0[:, None] > 0, dlam / (8 * np.pi ** 2 * np.where(f0 > 0, f0, 1)[:, None]),
                        0.0)
    var_s = (percents / 100.0) ** 2 * np.array([U_VARIANCE[p.distribution] for p in params])
    fo_std = np.sqrt((dfds ** 2 * var_s).sum(axis=1))

    # worst-case corners per mode, each verified by a solve (cached: most modes share one)
    solved: dict = {}

    def corner(sides):
        key = tuple(sides)
        if key not in solved:
            solved[key] = modes(scaled_model(model, params, _corner_factors(params, sides))
                                ).frequencies_hz[:nm]
        return solved[key]

    rows = []
    for j in range(nm):
        sides_hi = [int(np.sign(dfds[j, c])) or up[c] for c in range(len(params))]
        sides_lo = [-x for x in sides_hi]
        p_clear = {sid: (None if nominal.is_zero[j] else float(clear[j, si]) / done)
                   for si, sid in enumerate(source_ids)}
        rows.append(ModeStudy(
            mode=j + 1, nominal_hz=float(f0[j]), zero=bool(nominal.is_zero[j]),
            mean_hz=float(mean[j]), std_hz=float(std[j]), min_hz=float(fmin[j]),
            max_hz=float(fmax[j]), percentiles_hz=tuple(float(x) for x in pct[:, j]),
            histogram=(counts[j], edges[j]), clear_probability=p_clear,
            clear_all_probability=(None if nominal.is_zero[j] or not source_ids
                                   else float(clear_all[j]) / done),
            first_order_mean_hz=float(f0[j]), first_order_std_hz=float(fo_std[j]),
            corner_low_hz=float(corner(sides_lo)[j]), corner_high_hz=float(corner(sides_hi)[j]),
            corner_low={p.element_id: s for p, s in zip(params, sides_lo) if s},
            corner_high={p.element_id: s for p, s in zip(params, sides_hi) if s},
            crossed_fraction=(float(crossed[j]) / done if plan.u0 is not None
                              and trackable[j] else None)))
    if plan.u0 is not None and crossed.any():
        worst = int(np.argmax(crossed))
        notes.append(f"mode shapes swap order in some samples (mode {worst + 1}: "
                     f"{100 * crossed[worst] / done:.3g} % of samples): read those modes'"
                     " statistics as the k-th lowest frequency, not as one shape")
    if done < n:
        notes.append(f"cancelled: {done:,} of {n:,} samples solved")
    notes.append(f"Monte Carlo error: a probability p from N samples is uncertain by about"
                 f" sqrt(p (1 - p) / N) (at most {0.5 / math.sqrt(done):.2g} here)")
    notes.append("a lumped linear model is an estimate to be confirmed by test or detailed"
                 " analysis; applicable standards, local codes and licensed engineering"
                 " practice govern")
    return StudyResult(model=model, n_requested=n, n_samples=done, seed=seed, chunk=chunk,
                       parameters=params, modes=tuple(rows), sources=source_ids, method=method,
                       frequencies_hz=F, notes=tuple(notes), complete=done == n,
                       percentiles_from="samples" if keep else "histogram")


def _hist_percentile(counts, edges, qs):
    """Percentiles from a histogram, linear within the bin that holds them."""
    cum = np.concatenate([[0], np.cumsum(counts)]).astype(float)
    total = cum[-1]
    out = []
    for q in qs:
        target = q / 100.0 * total
        i = int(np.clip(np.searchsorted(cum, target, side="left") - 1, 0, len(counts) - 1))
        width = cum[i + 1] - cum[i]
        frac = (target - cum[i]) / width if width > 0 else 0.5
        out.append(edges[i] + frac * (edges[i + 1] - edges[i]))
    return out


def _stiffness_parts(system, tol_springs):
    """(K_base, P_T): the stiffness of the untoleranced springs on all DOFs (dense, before
    condensation), and a sparse (n_all * n_all, n_toleranced) matrix whose column j is the
    flattened contribution k c0 c0^T + k_t c1 c1^T of the j-th toleranced spring (at most
    (2 x 3)^2 entries each: never dense, whatever the model's size)."""
    model = system.model
    n_all = len(system.all_dofs)
    idx = system.spring_dofs
    coef = system.spring_coef
    planar = model.kind == "planar"
    K_base = np.zeros((n_all, n_all))
    col_of = {j: c for c, j in enumerate(tol_springs)}
    rows, cols, vals = [], [], []
    for j, s in enumerate(model.springs):
        local = s.k * np.outer(coef[j, 0], coef[j, 0])
        if planar and s.k_t:
            local = local + s.k_t * np.outer(coef[j, 1], coef[j, 1])
        keep = idx[j] >= 0
        d = idx[j][keep]
        block = local[np.ix_(keep, keep)]
        if j in col_of:
            flat = (d[:, None] * n_all + d[None, :]).ravel()
            rows.append(flat)
            cols.append(np.full(flat.size, col_of[j]))
            vals.append(block.ravel())
        else:
            np.add.at(K_base, np.ix_(d, d), block)
    if rows:
        # duplicate entries (one DOF at both ends of a spring cannot happen, but stay safe)
        # are summed by the conversion
        P_T = sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows),
                                                    np.concatenate(cols))),
                            shape=(n_all * n_all, len(tol_springs)))
    else:
        P_T = sp.csr_matrix((n_all * n_all, 0))
    return K_base, P_T


class _Totals:
    """Chunk summaries folded in chunk order as they come (a 1e6-sample study of 200 modes has
    10,000 chunks of 3 MB of counts each: they are never all held). Folding in order makes the
    floating-point sums the same however the chunks were scheduled."""

    def __init__(self):
        self.n = 0
        self.counts = self.clear = self.clear_all = self.crossed = None
        self.sum = self.min = self.max = None
        self.f = []

    def add(self, s: dict) -> None:
        if self.n == 0:
            self.counts = s["counts"].astype(np.int64)
            self.clear, self.clear_all = s["clear"].copy(), s["clear_all"].copy()
            self.crossed, self.sum = s["crossed"].copy(), s["sum"].copy()
            self.min, self.max = s["min"].copy(), s["max"].copy()
        else:
            self.counts += s["counts"]
            self.clear += s["clear"]
            self.clear_all += s["clear_all"]
            self.crossed += s["crossed"]
            self.sum = self.sum + s["sum"]
            self.min = np.minimum(self.min, s["min"])
            self.max = np.maximum(self.max, s["max"])
        if s["f"] is not None:
            self.f.append(s["f"])
        self.n += s["n"]


def _should_stop(cancel) -> bool:
    if cancel is None:
        return False
    if hasattr(cancel, "is_set"):
        return bool(cancel.is_set())
    return bool(cancel())


def _run_all(plan, seed, sizes, scheduler, progress, cancel, n, acc: _Totals) -> None:
    if scheduler is None:
        for i, size in enumerate(sizes):
            if _should_stop(cancel):
                break
            acc.add(run_chunk(plan, seed, i, size))
            if progress is not None:
                progress(acc.n, n)
        return
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise ModelError("tolerance study: --scheduler needs Dask distributed (pip install"
                         ' "springwright[dask]" or "dask[distributed]")') from None
    own = not isinstance(scheduler, Client)
    try:
        client = Client(scheduler, timeout=10) if own else scheduler
    except (OSError, TimeoutError, ValueError) as exc:
        raise ModelError(f"tolerance study: cannot reach the Dask scheduler {shown(scheduler)}:"
                         f" {exc}") from None
    try:
        plan_f = client.scatter(plan, broadcast=True)
        futures = [client.submit(run_chunk, plan_f, seed, i, size, pure=False)
                   for i, size in enumerate(sizes)]
        order = {f.key: i for i, f in enumerate(futures)}
        pending: dict = {}
        folded = 0
        solved = 0
        for fut in as_completed(futures):
            i = order[fut.key]
            pending[i] = fut.result()
            solved += pending[i]["n"]
            fut.release()
            # fold the finished run at the front, in chunk order; a cancel keeps that run
            while folded in pending:
                acc.add(pending.pop(folded))
                folded += 1
            if progress is not None:
                progress(solved, n)
            if _should_stop(cancel):
                client.cancel(futures)
                break
    finally:
        if own:
            client.close()


__all__ = ["ModeStudy", "StudyResult", "StudyCancelled", "ToleranceParameter",
           "tolerance_study", "tolerance_parameters", "scaled_model", "default_chunk", "sample_factors",
           "run_chunk"]
