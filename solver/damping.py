"""Damping: Rayleigh coefficients from two target ratios, and damped (complex) modes.

Rayleigh damping ``C = alpha M + beta K`` gives mode i the ratio
``zeta_i = alpha / (2 w_i) + beta w_i / 2`` (Chopra, Dynamics of Structures, 11.4 (mem)); two
frequencies with wanted ratios fix alpha and beta.

With dashpots the damping is generally not proportional: the damped modes are the eigenvalues of
the first-order state equation ``z' = A z`` (``state_space``). Each complex-conjugate pair
``s = -zeta w_n +- i w_n sqrt(1 - zeta^2)`` is an oscillating mode with natural frequency
``w_n = |s|`` and damping ratio ``zeta = -Re(s) / |s|``; a real root is a motion ``e^{s t}`` that
does not oscillate (half of an overdamped mode, the creep of a junction held by a dashpot, or a
rigid drift at s = 0).

A dashpot on a massless junction makes the junction's equation first order (no inertia, but a
damping force): those junction directions are kept as first-order states, the others condensed
statically, so the state matrix is exact where static condensation of C would only approximate it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.linalg
import scipy.linalg.lapack
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from .assemble import System, assemble
from .errors import ModelError, checked_arguments, shown
from .model import Model


@checked_arguments
def rayleigh_coefficients(f1_hz: float, zeta1: float, f2_hz: float, zeta2: float):
    """``(alpha, beta)`` of Rayleigh damping giving ratio zeta1 at f1 and zeta2 at f2.

    alpha in 1/s, beta in s. Raises ModelError when the frequencies are equal or the result
    would be negative (a negative coefficient is not physical damping).
    """
    vals = []
    for name, v in (("f1_hz", f1_hz), ("zeta1", zeta1), ("f2_hz", f2_hz), ("zeta2", zeta2)):
        v = float(v)
        if not math.isfinite(v) or v < 0 or (name.startswith("f") and v == 0):
            raise ModelError(f"Rayleigh fit: {name} must be a positive number, got {shown(v)}")
        vals.append(v)
    f1, z1, f2, z2 = vals
    if abs(f1 - f2) <= 1e-12 * max(f1, f2):
        raise ModelError("Rayleigh fit: the two frequencies must differ")
    w1, w2 = 2 * math.pi * f1, 2 * math.pi * f2
    # [1/(2 w1), w1/2; 1/(2 w2), w2/2] [alpha, beta] = [z1, z2]
    alpha, beta = np.linalg.solve(np.array([[1 / (2 * w1), w1 / 2], [1 / (2 * w2), w2 / 2]]),
                                  np.array([z1, z2]))
    if alpha < -1e-15 or beta < -1e-15:
        raise ModelError("Rayleigh fit: those ratios need a negative alpha or beta; choose ratios"
                         " closer together, or use modal damping with per-mode ratios")
    return max(float(alpha), 0.0), max(float(beta), 0.0)


#: A junction direction whose dashpot damping is below this fraction of the largest is undamped.
DAMPED_RTOL = 1e-11


@dataclass(frozen=True, eq=False)
class StateSpace:
    """First-order form ``z' = A z + B f`` of a model with its damping, exact with junction dashpots.

    The state is ``z = [x, v, y]``: displacements ``x`` and velocities ``v`` of the DOFs that carry
    mass (``system.dofs``, n_m each) and the coordinates ``y`` (n_y) of the massless junction
    directions that a dashpot damps. Massless directions without damping are condensed statically
    (exact: they carry no inertia and no damping force), directions held by nothing
    (``System.loose``) stay at rest.

    A : (n_z, n_z) with n_z = 2 n_m + n_y, 1/s and 1/s^2.
    B : (n_z, n_m), forces on ``system.dofs`` in N to state rates.
    displacement, velocity : (n_all, n_z), the state to the displacement and the velocity of every
        DOF in ``system.all_dofs`` (junctions included).
    junction_basis : (n_s, n_y) orthonormal junction directions of ``y`` (rows: the junction DOFs
        of ``all_dofs`` in order), empty when no dashpot touches a junction.
    mass : (n_m,) the masses of ``system.dofs``.   K, C : (n_q, n_q) stiffness and damping on the
        generalised coordinates ``q = [x, y]`` (n_q = n_m + n_y); y carries no mass.
    """

    system: System
    A: np.ndarray
    B: np.ndarray
    displacement: np.ndarray
    velocity: np.ndarray
    junction_basis: np.ndarray
    mass: np.ndarray
    K: np.ndarray
    C: np.ndarray

    @property
    def n_mass(self) -> int:
        return len(self.mass)

    @property
    def n_junction(self) -> int:
        return self.junction_basis.shape[1]

    def initial_state(self, x0, v0) -> np.ndarray:
        """z(0) from displacements and velocities on ``system.dofs``, (n_z,).

        A damped junction starts where the springs put it for the masses' displacements (as
        static condensation gives), so every junction dashpot is unloaded at t = 0: the state after
        the masses were held at x0 long enough for the dashpots to relax.
        """
        x0, v0 = np.asarray(x0, float), np.asarray(v0, float)
        if self.n_junction == 0:
            return np.concatenate([x0, v0])
        slaves = _junction_rows(self.system)
        xs = np.asarray(self.system.recovery @ x0).ravel()[slaves]
        return np.concatenate([x0, v0, self.junction_basis.T @ xs])


def _junction_rows(system: System) -> np.ndarray:
    """Rows of ``all_dofs`` that are massless junctions (a disc tied by a rigid gear mesh to
    another moves with that one's coordinate: not a junction)."""
    if getattr(system, "gear_basis", None) is not None:
        from .frequency import _junction_mask

        return np.flatnonzero(_junction_mask(system)).astype(np.int64)
    retained = set(system.dofs)
    return np.array([i for i, d in enumerate(system.all_dofs) if d not in retained], dtype=np.int64)


def _dense(mat) -> np.ndarray:
    return mat.toarray() if sp.issparse(mat) else np.asarray(mat, float)


@checked_arguments
def state_space(model_or_system, damped: bool = True) -> StateSpace:
    """State matrix of ``M x'' + C x' + K x = f`` with massless junctions, solved exactly.

    A dashpot on a massless junction (a Maxwell element: spring to the junction, dashpot from it)
    makes the junction's equation first order, ``C_s x_s' + K_s x_s + (coupling to the masses) =
    0``: a descriptor system that static condensation only approximates. Here the junction
    directions a dashpot damps (the range of the junctions' dashpot matrix) are kept as
    first-order coordinates ``y``; the other junction directions carry neither inertia nor damping
    force, so they are condensed statically, exactly (Guyan), giving generalised coordinates
    ``q = [x_m, y]`` and ``x_all = T q``. With ``K_r = T^T K T`` and ``C_r = T^T C T``:

        y' = -C_yy^-1 (C_yx v + K_yx x + K_yy y)
        v' = M^-1 (f - C_xx v - K_xx x - K_xy y - C_xy y')

    C is the damping of the frequency-domain solve (``frequency.damping_matrix_full``): dashpots
    plus Rayleigh ``alpha M + beta K`` or the modal-ratio matrix, on every DOF, so the transfer
    function of (A, B) is the direct FRF. Without junction dashpots this is the usual
    ``A = [[0, I], [-M^-1 K, -M^-1 C]]`` on the condensed matrices.

    Parameters
    ----------
    model_or_system : Model or System
    damped : False leaves every damping out (dashpots and damping model).
    """
    system = model_or_system if isinstance(model_or_system, System) else assemble(model_or_system)
    if not isinstance(system.model, Model):
        raise ModelError("state_space: expected a Model or System")
    n = system.n_dof
    slaves = _junction_rows(system)
    basis = np.zeros((len(slaves), 0))
    if damped and len(system.model.dampers) and len(slaves):
        basis, undamped = _junction_split(_dense(system.C_full[slaves][:, slaves])
                                          if sp.issparse(system.C_full)
                                          else np.asarray(system.C_full)[np.ix_(slaves, slaves)])
    m = np.asarray(system.M.diagonal()).ravel() if sp.issparse(system.M) else np.diag(system.M)
    if basis.shape[1] and getattr(system, "gear_basis", None) is not None:
        raise ModelError("a dashpot on a massless disc of a geared drive train is not"
                         " supported by the exact damped solution; give the disc an inertia")
    if basis.shape[1] == 0:
        K = _dense(system.K)
        C = _dense(system.C) if damped else np.zeros((n, n))
        T = _dense(system.recovery)
        ny = 0
    else:
        T = _partial_condensation(system, slaves, basis, undamped)
        from .frequency import damping_matrix_full

        Kf = system.K_full
        Cf = damping_matrix_full(system)
        K = T.T @ np.asarray(Kf @ T)
        C = T.T @ np.asarray(Cf @ T)
        K, C = (K + K.T) / 2, (C + C.T) / 2
        ny = basis.shape[1]
    nz = 2 * n + ny
    A = np.zeros((nz, nz))
    x, v, y = slice(0, n), slice(n, 2 * n), slice(2 * n, nz)
    A[x, v] = np.eye(n)
    minv = 1.0 / m
    if ny:
        Kxx, Kxy, Kyx, Kyy = K[:n, :n], K[:n, n:], K[n:, :n], K[n:, n:]
        Cxx, Cxy, Cyx, Cyy = C[:n, :n], C[:n, n:], C[n:, :n], C[n:, n:]
        # C_yy is positive definite: y spans the directions the junction dashpots damp
        Yrow = -scipy.linalg.solve(Cyy, np.hstack([Kyx, Cyx, Kyy]), assume_a="pos")
        A[y, :] = Yrow
        A[v, x] = -minv[:, None] * (Kxx + Cxy @ Yrow[:, :n])
        A[v, v] = -minv[:, None] * (Cxx + Cxy @ Yrow[:, n:2 * n])
        A[v, y] = -minv[:, None] * (Kxy + Cxy @ Yrow[:, 2 * n:])
    else:
        A[v, x] = -minv[:, None] * K
        A[v, v] = -minv[:, None] * C
    B = np.zeros((nz, n))
    B[v, :] = np.diag(minv)
    # q = [x, y] and q' = [v, y'] from the state; every DOF's motion is T q
    Q = np.zeros((n + ny, nz))
    Q[:n, x] = np.eye(n)
    Q[n:, y] = np.eye(ny)
    Qd = np.zeros((n + ny, nz))
    Qd[:n, v] = np.eye(n)
    Qd[n:, :] = A[y, :]
    return StateSpace(system=system, A=A, B=B, displacement=T @ Q, velocity=T @ Qd,
                      junction_basis=basis, mass=m, K=K, C=C)


def _junction_split(Css: np.ndarray):
    """Orthonormal damped and undamped junction directions of the dashpot matrix Css (n_s, n_s).

    Only the junction DOFs a dashpot touches (nonzero diagonal) are decomposed; the others are
    undamped as they stand. Returns (damped (n_s, n_y) dense, undamped (n_s, n_u) sparse).
    """
    n_s = Css.shape[0]
    touched = np.flatnonzero(np.abs(np.diag(Css)) > 0)
    c, V = np.linalg.eigh(Css[np.ix_(touched, touched)]) if len(touched) else (np.zeros(0), None)
    keep = c > DAMPED_RTOL * max(np.abs(c).max(initial=0.0), 1e-300)
    damped = np.zeros((n_s, int(keep.sum())))
    if len(touched):
        damped[touched] = V[:, keep]
    rest = np.setdiff1d(np.arange(n_s), touched)
    cols = [sp.csr_matrix((np.ones(len(rest)), (rest, np.arange(len(rest)))),
                          shape=(n_s, len(rest)))]
    if len(touched) and (~keep).any():
        W = np.zeros((n_s, int((~keep).sum())))
        W[touched] = V[:, ~keep]
        cols.append(sp.csr_matrix(W))
    return damped, sp.hstack(cols, format="csr")


#: Above this many undamped junction directions their static condensation uses a sparse LU.
_DENSE_JUNCTIONS = 2000


def _partial_condensation(system: System, slaves, damped, undamped) -> np.ndarray:
    """T (n_all, n_m + n_y): every DOF's displacement from q = [x_m, y].

    The undamped junction directions u satisfy static equilibrium K_uu u = -U^T K_s (x), exact
    because nothing along them has inertia or a damping force; Rayleigh's beta K along them
    multiplies that same equilibrium, so it holds too (the relaxation it adds is not excited from
    equilibrium). Loose directions (``System.loose``, no spring and no dashpot) stay at zero: K_uu
    is singular along them and the right-hand sides carry nothing there.
    """
    n_all = len(system.all_dofs)
    retained = np.setdiff1d(np.arange(n_all), slaves)
    Kf = sp.csr_matrix(system.K_full)
    Ks = Kf[slaves]
    n, ny = len(retained), damped.shape[1]
    # junction rows of T before condensation: [0, Q_d] on y; the masses' columns come through K
    Ts = np.zeros((len(slaves), n + ny))
    Ts[:, n:] = damped
    Tm = np.zeros((n_all, n + ny))
    Tm[retained, np.arange(n)] = 1.0
    Tm[slaves] = Ts
    U = undamped
    if U.shape[1]:
        Kuu = (U.T @ Ks[:, slaves] @ U).tocsc()
        rhs = -np.asarray(U.T @ (Ks @ Tm))
        L = getattr(system, "loose", None)
        if L is not None and L.shape[1]:
            Lu = np.asarray(U.T @ np.asarray(L)[slaves])
            scale = float(np.abs(Kuu.diagonal()).max(initial=0.0)) or 1.0
            Kuu = (Kuu + scale * sp.csr_matrix(Lu @ Lu.T)).tocsc() if Lu.size else Kuu
        G = _solve_psd(Kuu, rhs)
        Tm[slaves] += np.asarray(U @ G)
    return Tm


def _solve_psd(K, rhs) -> np.ndarray:
    """K^-1 rhs for a sparse symmetric K that should be positive definite; a numerically singular
    K (a direction no spring holds that ``System.loose`` missed) falls back to least squares."""
    if K.shape[0] > _DENSE_JUNCTIONS:
        try:
            return spla.splu(sp.csc_matrix(K)).solve(rhs)
        except RuntimeError:
            pass
    Kd = K.toarray()
    try:
        return scipy.linalg.cho_solve(scipy.linalg.cho_factor(Kd), rhs)
    except np.linalg.LinAlgError:
        return scipy.linalg.lstsq(Kd, rhs)[0]


#: A real root below this fraction of the largest |s| counts as zero (a rigid or neutral motion).
ZERO_ROOT_RTOL = 1e-10


@dataclass(frozen=True, eq=False)
class DampedModes:
    """Roots of the damped system's characteristic equation (eigenvalues of its state matrix).

    The oscillating modes, ascending in natural frequency:
    eigenvalues : (n_modes,) complex, the upper-half-plane member of each conjugate pair (rad/s).
    natural_frequencies_hz : |s| / 2 pi.   damped_frequencies_hz : Im(s) / 2 pi.
    damping_ratios : -Re(s) / |s|.

    The motions that do not oscillate (each ``e^{s t}``):
    real_roots : (n_real,) real eigenvalues s in 1/s, zeros first, then by increasing |s|. An
        overdamped mode gives two; a dashpot on a massless junction (a Maxwell element) adds one
        relaxation root per damped junction direction; a free rigid-body motion gives two zeros
        (position and drift).
    time_constants_s : (n_real,) -1/s (inf for a zero root).
    """

    eigenvalues: np.ndarray
    natural_frequencies_hz: np.ndarray
    damped_frequencies_hz: np.ndarray
    damping_ratios: np.ndarray
    real_roots: np.ndarray = None
    time_constants_s: np.ndarray = None


@checked_arguments
def damped_modes(model_or_system) -> DampedModes:
    """Eigenvalues of the exact state matrix (``state_space``) of a model with its dashpots and
    damping model (dense LAPACK).

    Free rigid-body motions (no spring strained, no dashpot working) make the state matrix
    defective (a Jordan block at zero, whose computed roots would scatter by the square root of
    rounding); they are split off exactly first (``rigid_split``) and reported as two zero roots
    each. With Rayleigh damping, ``beta K`` along a junction direction no dashpot touches would add
    a root -1/beta that only a force on the junction itself excites; like the condensed model, the
    state model leaves it out.
    """
    system = model_or_system if isinstance(model_or_system, System) else assemble(model_or_system)
    if not isinstance(system.model, Model):
        raise ModelError("damped_modes: expected a Model or System")
    ss = state_space(system)
    A = ss.A
    if A.shape[0] == 0:
        z = np.zeros(0)
        return DampedModes(z.astype(complex), z, z, z, z, z)
    rigid = rigid_split(ss)
    P = rigid.rest
    s = scipy.linalg.eigvals(P.T @ A @ P) if P.shape[1] else np.zeros(0, complex)
    scale = max(np.abs(s).max(initial=0.0), 1e-300)
    zero = np.abs(s) <= ZERO_ROOT_RTOL * scale
    osc = (s.imag > 1e-12 * scale) & ~zero
    real = (np.abs(s.imag) <= 1e-12 * scale) & ~zero
    keep = s[osc]
    wn = np.abs(keep)
    order = np.argsort(wn, kind="stable")
    keep, wn = keep[order], wn[order]
    roots = np.sort(s[real].real)[::-1]
    roots = np.concatenate([np.zeros(int(zero.sum()) + 2 * rigid.count), roots])
    with np.errstate(divide="ignore"):
        tau = np.where(roots == 0.0, np.inf, -1.0 / np.where(roots == 0.0, 1.0, roots))
    return DampedModes(eigenvalues=keep, natural_frequencies_hz=wn / (2 * np.pi),
                       damped_frequencies_hz=keep.imag / (2 * np.pi),
                       damping_ratios=-keep.real / wn, real_roots=roots, time_constants_s=tau)


@dataclass(frozen=True, eq=False)
class RigidSplit:
    """The free rigid-body motions of a state model, split off exactly.

    A motion r with K r = 0 and C r = 0 (no spring strained, no dashpot working) moves as
    ``a + b t``: its coordinate a = r_x^T M x and momentum b = r_x^T M v obey a' = b, b' = 0
    exactly, because r^T K = r^T C = 0. In the state this is an invariant subspace where A is a
    Jordan block at zero, which an eigen-decomposition cannot represent and the exponential only
    to rounding; the rest of the motion lives in the invariant subspace {a = 0, b = 0}.

    position, velocity : (n_z, k) the states [r_x, 0, r_y] and [0, r_x, 0], r M-orthonormal.
    functionals : (2 k, n_z) rows giving (a, b) of a state.
    rest : (n_z, n_z - 2 k) orthonormal basis of {a = 0, b = 0}; ``rest.T @ A @ rest`` is A there.
    """

    position: np.ndarray
    velocity: np.ndarray
    functionals: np.ndarray
    rest: np.ndarray

    @property
    def count(self) -> int:
        return self.position.shape[1]


def rigid_split(ss: StateSpace) -> RigidSplit:
    """Split off the free rigid-body motions (K r = 0 and C r = 0, from the null space of
    K/|K| + C/|C| with relative tolerance 1e-11; kept only if A maps them as a Jordan block does,
    checked to 1e-9 of |A|)."""
    K, C, A = ss.K, ss.C, ss.A
    n, nq, nz = ss.n_mass, ss.K.shape[0], ss.A.shape[0]
    none = RigidSplit(np.zeros((nz, 0)), np.zeros((nz, 0)), np.zeros((0, nz)), np.eye(nz))
    if nz == 0:
        return none
    S = K / max(np.abs(K).max(initial=0.0), 1e-300)
    if np.abs(C).max(initial=0.0) > 0:
        S = S + C / np.abs(C).max()
    # usually there is none: a Cholesky factor with a healthy condition estimate proves it
    # cheaply (rcond >= 1e-8 leaves a wide margin over the 1e-11 threshold for the estimate)
    factor, info = scipy.linalg.lapack.dpotrf(S)
    if info == 0:
        rcond, info = scipy.linalg.lapack.dpocon(factor, np.abs(S).sum(axis=0).max())
        if info == 0 and rcond >= 1e-8:
            return none
    lam, V = np.linalg.eigh(S)
    R = V[:, lam <= 1e-11 * max(lam.max(initial=0.0), 1e-300)]
    k = R.shape[1]
    if k == 0:
        return none
    # M-orthonormal in the masses' part (the y part carries no mass)
    G = R[:n].T @ (ss.mass[:, None] * R[:n])
    R = R @ np.linalg.inv(np.linalg.cholesky(G)).T
    z1 = np.zeros((nz, k))
    z1[:n] = R[:n]
    z1[2 * n:] = R[n:nq]
    z2 = np.zeros((nz, k))
    z2[n:2 * n] = R[:n]
    a_scale = max(np.abs(A).max(), 1e-300)
    if np.abs(A @ z1).max() > 1e-9 * a_scale or np.abs(A @ z2 - z1).max() > 1e-9 * a_scale:
        return none
    F = np.zeros((2 * k, nz))
    F[:k, :n] = (ss.mass[:, None] * R[:n]).T
    F[k:, n:2 * n] = F[:k, :n]
    return RigidSplit(position=z1, velocity=z2, functionals=F, rest=scipy.linalg.null_space(F))
