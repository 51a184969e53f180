"""Natural frequencies and mode shapes: ``K v = w^2 M v``.

Small models use dense LAPACK: with M diagonal and positive the problem is reduced to the standard
symmetric one ``(M^-1/2 K M^-1/2) u = w^2 u`` and solved by ``scipy.linalg.eigh``. Large (sparse)
models use shift-invert Lanczos (``scipy.sparse.linalg.eigsh``) for the lowest ``count`` modes, with
a small negative shift so that rigid-body modes (a singular K) are allowed.

The dense result is checked against the eigensolver's error bound (``eps lam_max / lam_i``)
and against the zero-mode count that the structure gives (graph components, and for planar
layouts the motions that strain no spring, judged on geometry alone). Where eigh on the formed K
would lose digits (a spring far stiffer than the rest), the eigenvalues come instead from the
singular values of the stiffness factor (solver/factor.py), which never forms K. The sparse path
never cuts a repeated group and checks its count by inertia (Sturm). Every frequency carries an
estimate of its relative error (``ModalResult.frequency_rtol``); one beyond the six digits shown
is warned, and a mode shown as 0 Hz is always flagged (as rigid-body motion, a mechanism, or
``unresolved`` when double precision cannot tell it from zero).

Zero eigenvalues are results, not errors: the zero-frequency modes are re-expressed in a basis
that explains them (rigid-body translations and rotations first, then mechanisms), each with a cause
in plain words: for a mechanism, the motion of the computed null vector itself (the masses that
take part, their directions and relative amplitudes). Shapes are mass-normalised:
``Phi^T M Phi = I``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from . import factor
from .assemble import System, assemble, spring_stretch
from .errors import ModelError, checked_arguments, mode_number, shown
from .model import Model
from .naming import named, named_id, quoted_id

#: Up to this many DOFs every mode is found by dense LAPACK (chosen with bench/solver_bench.py).
DENSE_DOF_LIMIT = 2000
#: Above this many DOFs a request for a few modes goes to the sparse solver (bench/solver_bench.py).
SWITCH_DOF = 600
#: Lowest modes found by default in a model too large for the dense path.
DEFAULT_SPARSE_COUNT = 20
#: Relative tolerance on w for calling two frequencies repeated.
REPEATED_RTOL = 1e-6
#: An eigenvalue below this fraction of the spectral bound counts as zero.
ZERO_RTOL = 1e-11


@dataclass(frozen=True)
class ZeroMode:
    """Why a zero-frequency mode exists.

    ``kind`` is ``"rigid"`` (the group moves as a rigid body: the general solution term
    ``v (a + b t)``), ``"mechanism"`` (springs allow a motion they cannot resist) or
    ``"unresolved"`` (an elastic mode whose frequency double precision cannot tell from zero:
    not a result). ``motion`` gives a mechanism's motion, ``{mass_id: {direction: amplitude}}``
    scaled so that the largest amplitude is 1 (masses that barely take part left out).
    """

    mode: int
    kind: str
    cause: str
    masses: tuple[str, ...] = ()
    motion: dict = field(default=None, compare=False)


@dataclass(frozen=True, eq=False)
class ModalResult:
    """Modes of a model, ascending in frequency, numbered from 1 (column ``i`` is mode ``i + 1``).

    Attributes
    ----------
    eigenvalues : (n_modes,) ndarray, w^2 in (rad/s)^2; exact zero for zero-frequency modes.
    omegas : (n_modes,) rad/s.        frequencies_hz : (n_modes,) Hz.
    shapes : (n_dof, n_modes) mass-normalised shapes on ``dofs``.
    all_shapes : (n_all, n_modes) the same with massless junctions' motion recovered.
    effective_mass : dict direction -> (n_modes,) effective modal mass in kg (kg m^2 in torsion).
    participation : dict direction -> (n_modes,) participation factors Gamma = phi^T M r.
    total_mass : dict direction -> mass free to move in that direction (r^T M r).
    zero_modes : tuple of ZeroMode.     repeated : tuple of tuples of mode numbers.
    complete : True when every mode of the model was found (dense path).
    method : "dense" (LAPACK eigh on K), "dense (factored SVD)" (singular values of the
        stiffness factor, taken when eigh would lose digits) or "shift-invert Lanczos".
    """

    system: System
    eigenvalues: np.ndarray
    shapes: np.ndarray
    all_shapes: np.ndarray
    effective_mass: dict
    participation: dict
    total_mass: dict
    zero_modes: tuple = ()
    repeated: tuple = ()
    warnings: tuple = ()
    message: str = ""
    complete: bool = True
    method: str = "dense"
    #: (n_modes,) estimated relative error of each frequency (from the eigensolver's error
    #: bound; 0 for exact zero modes, inf where the solver could not resolve it)
    frequency_rtol: np.ndarray = None

    @property
    def dofs(self):
        return self.system.dofs

    @property
    def all_dofs(self):
        return self.system.all_dofs

    @property
    def model(self) -> Model:
        return self.system.model

    @property
    def n_modes(self) -> int:
        return int(self.eigenvalues.shape[0])

    @property
    def omegas(self) -> np.ndarray:
        return np.sqrt(self.eigenvalues)

    @property
    def frequencies_hz(self) -> np.ndarray:
        return self.omegas / (2 * np.pi)

    @property
    def natural_frequencies_hz(self) -> np.ndarray:
        return self.frequencies_hz

    @property
    def periods_s(self) -> np.ndarray:
        with np.errstate(divide="ignore"):
            return np.where(self.omegas > 0, 2 * np.pi / np.where(self.omegas > 0, self.omegas, 1),
                            np.inf)

    @property
    def is_zero(self) -> np.ndarray:
        """(n_modes,) bool: zero-frequency modes."""
        flags = np.zeros(self.n_modes, bool)
        for z in self.zero_modes:
            flags[z.mode - 1] = True
        return flags

    @property
    def effective_mass_percent(self) -> dict:
        return {d: (100.0 * v / self.total_mass[d] if self.total_mass[d] > 0 else np.zeros_like(v))
                for d, v in self.effective_mass.items()}

    @property
    def cumulative_percent(self) -> dict:
        return {d: np.cumsum(v) for d, v in self.effective_mass_percent.items()}

    def zero_mode(self, mode: int) -> ZeroMode | None:
        for z in self.zero_modes:
            if z.mode == mode:
                return z
        return None

    def repeated_group(self, mode: int) -> tuple[int, ...]:
        for g in self.repeated:
            if mode in g:
                return g
        return ()

    def shape(self, mode: int) -> np.ndarray:
        """Mass-normalised shape of mode ``mode`` (from 1) on ``dofs``."""
        return self.shapes[:, self._col(mode)]

    def node_displacement(self, mode: int) -> dict:
        """``{mass_id: {direction: value}}`` of a mode (junctions included)."""
        return self.system.node_motion(self.all_shapes[:, self._col(mode)])

    def _col(self, mode: int) -> int:
        return mode_number(mode, self.n_modes, "modes") - 1


def _spectral_bound(M_diag: np.ndarray, K) -> float:
    """Gershgorin bound on the largest eigenvalue of M^-1/2 K M^-1/2, (rad/s)^2."""
    s = 1.0 / np.sqrt(M_diag)
    if sp.issparse(K):
        A = abs(sp.diags(s) @ K @ sp.diags(s))
        rows = np.asarray(A.sum(axis=1)).ravel()
    else:
        with np.errstate(over="ignore", invalid="ignore"):  # refused later, with the element
            rows = (np.abs(K) * s[:, None] * s[None, :]).sum(axis=1)
    return float(rows.max(initial=0.0))


@checked_arguments
def modes(model_or_system, count: int | None = None, method: str | None = None) -> ModalResult:
    """Natural frequencies and mass-normalised mode shapes.

    Parameters
    ----------
    model_or_system : Model or System
    count : int, optional
        How many of the lowest modes to return. By default all of them for a model of up to
        ``DENSE_DOF_LIMIT`` DOFs, else the lowest ``DEFAULT_SPARSE_COUNT``.
    method : {None, "dense", "sparse"}, optional
        Force an eigensolver. By default dense LAPACK when all modes are wanted or the model has
        at most ``SWITCH_DOF`` DOFs, shift-invert Lanczos otherwise.

    Returns
    -------
    ModalResult
        An empty result with a ``message`` when the model has nothing that can move.
    """
    system = model_or_system if isinstance(model_or_system, System) else assemble(model_or_system)
    if count is not None and (isinstance(count, bool) or int(count) != count or count < 0):
        raise ModelError(f"modes: count must be a whole number >= 0, got {shown(count)}")
    n = system.n_dof
    warnings = list(system.warnings)
    if n == 0:
        model = system.model
        if not model.masses:
            msg = "the sketch has no masses yet: add a mass and a spring to see its modes"
        elif len(system.all_dofs) == 0:
            msg = "every mass is locked in every direction, so nothing can move"
        else:
            msg = "every mass is zero (massless junctions only), so there is nothing to vibrate"
        return ModalResult(system=system, eigenvalues=np.zeros(0), shapes=np.zeros((n, 0)),
                           all_shapes=np.zeros((len(system.all_dofs), 0)),
                           effective_mass={d: np.zeros(0) for d in system.directions},
                           participation={d: np.zeros(0) for d in system.directions},
                           total_mass={d: 0.0 for d in system.directions},
                           warnings=tuple(warnings), message=msg, complete=True,
                           frequency_rtol=np.zeros(0))
    M_diag = np.asarray(system.M.diagonal()).ravel().astype(float)
    bound = _spectral_bound(M_diag, system.K)
    want = n if count is None and n <= DENSE_DOF_LIMIT else (
        min(DEFAULT_SPARSE_COUNT, n) if count is None else min(int(count), n))
    if count is None and n > DENSE_DOF_LIMIT:
        warnings.append(f"the model has {n} degrees of freedom; the lowest {want} modes are shown")
    if method not in (None, "dense", "sparse"):
        raise ModelError(f'modes: method must be "dense" or "sparse", got {shown(method)}')
    use_dense = (want >= n - 1 or n <= SWITCH_DOF or 3 * want > n) if method is None else (
        method == "dense" or want >= n - 1)
    use_dense = use_dense or want == 0
    if use_dense:
        lam, phi = _dense_eig(system, M_diag, want)
        method = "dense"
    else:
        lam, phi, note = _sparse_eig(system, M_diag, want, bound)
        method = "shift-invert Lanczos"
        if note:
            warnings.append(note)
    if not np.all(np.isfinite(lam)) or not np.all(np.isfinite(phi)):
        model = system.model
        light = min((m for m in model.masses if m.mass > 0), key=lambda m: m.mass)
        stiff = max(model.springs, key=lambda s_: max(s_.k, s_.k_t), default=None)
        raise ModelError(
            "the values span too wide a range to solve in double precision (lightest"
            f" {named(light)} {light.mass:.3g}"
            + (f", stiffest {named(stiff)} {max(stiff.k, stiff.k_t):.3g}" if stiff else "")
            + "); check the units of these values")
    zero_bound = _zero_scale(system, M_diag, bound)
    rigid = _rigid_body_basis(system, M_diag)
    eps = np.finfo(float).eps
    if method == "dense" and len(lam):
        # a backward-stable symmetric eigensolver's error in each eigenvalue is ~ eps x the
        # largest one (Wilkinson; Golub and Van Loan, sec. 8.1): in w that is a relative
        # eps lam_max / (2 lam_i)
        top = float(lam.max()) if want == n else bound
        n_zero = _zero_count(system, lam, phi, ZERO_RTOL * max(zero_bound, 1e-300), rigid)
        err = _relative_error(lam, 4 * eps * max(top, 0.0))
        if system.K_factor is not None and (
                n_zero < int(np.sum(lam <= ZERO_RTOL * zero_bound))
                or np.any(err[n_zero:] > ACCURATE_RTOL)):
            # eigh on the formed K would lose digits: take the singular values of the
            # stiffness factor instead (solver/factor.py), which never forms K
            lam_f, phi_f, err_f = factor.factored_eig(system.K_factor, M_diag, ACCURATE_RTOL)
            lam, phi, err = lam_f[:want], phi_f[:, :want], err_f[:want]
            method = "dense (factored SVD)"
    elif len(lam):
        err = _sparse_error(system, lam, phi, M_diag, bound)
    else:
        err = np.zeros(0)
    return _finish(system, lam, phi, M_diag, zero_bound, warnings,
                   complete=(want == n), method=method, rigid=rigid, err=err)


#: Estimated relative error in w above which the dense path turns to the factored SVD.
ACCURATE_RTOL = 1e-9
#: The relative resolution of a frequency as shown (6 significant digits, as in the command
#: line's table): an estimated error above it is warned.
DISPLAY_RTOL = 5e-7


def _relative_error(lam, abs_err):
    """Relative error in w = sqrt(lam) from an absolute error bound on lam."""
    lam = np.asarray(lam, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(lam > 0, 0.5 * abs_err / np.where(lam > 0, lam, 1.0), np.inf)


def _rayleigh(system, K, phi):
    """Rayleigh quotients phi^T K phi of M-normalised columns. From the stiffness factor where
    there is one, as ||F phi||^2: each spring's stretch is formed before it is squared, so a
    low mode of a long chain keeps its digits (phi^T (K phi) loses eps x lam_max to
    cancellation)."""
    F = system.K_factor
    if F is not None:
        Fphi = np.asarray(F @ phi)
        return np.einsum("ij,ij->j", Fphi, Fphi)
    return np.einsum("ij,ij->j", phi, np.asarray(K @ phi))


def _sparse_error(system, lam, phi, M_diag, bound):
    """Error bound in w of the sparse path, a posteriori: for an M-normalised vector with
    Rayleigh quotient lam there is an eigenvalue within ||M^-1/2 r|| of it, r = K phi - lam M phi
    (Parlett, The Symmetric Eigenvalue Problem, thm 4.5.1; the inertia count vouches that it is
    this one). The residual is formed through the stiffness factor, F^T (F phi), where there is
    one (its own rounding ~ eps sqrt(lam_max lam)); else through K (rounding ~ eps lam_max)."""
    eps = np.finfo(float).eps
    F = system.K_factor
    if F is not None:
        Kphi = np.asarray(F.T @ np.asarray(F @ phi))
        rounding = 4 * eps * np.sqrt(bound * np.maximum(lam, 0.0))
    else:
        Kphi = np.asarray(system.K @ phi)
        rounding = 4 * eps * bound
    r = Kphi - (M_diag[:, None] * phi) * lam[None, :]
    res = np.linalg.norm(r / np.sqrt(M_diag)[:, None], axis=0)
    return _relative_error(lam, res + rounding)


def _zero_count(system, lam, phi, zero_tol, rigid) -> int:
    """How many of the lowest modes are zero modes, judged by structure, not by size:
    the rigid-body motions (graph components), and in a planar model the combinations of the
    numerically small modes that strain no spring (geometry alone)."""
    n_zero_numeric = int(np.sum(lam <= zero_tol))
    n_rigid = rigid[0].shape[1]
    if system.model.kind == "planar" and n_zero_numeric > n_rigid:
        # a very stiff link (or springs nearly in line) can push a real soft mode under the
        # numerical threshold: keep only the candidates that strain no spring, judged by
        # geometry (relative end motion against the motion itself), which no stiffness
        # contrast disturbs. The computed vectors of a cluster of small eigenvalues carry
        # ~eps lam_max / gap of the modes above it (Davis-Kahan), so a strain above that (and
        # above the angle resolution of the geometry, factor.GEOMETRY_RTOL) is real: springs
        # 1e-6 rad off a line hold the mass, at a frequency the factored SVD resolves.
        top = zero_tol / ZERO_RTOL
        gap = float(lam[n_zero_numeric]) if n_zero_numeric < len(lam) else 0.0
        eps = np.finfo(float).eps
        rtol = 1e-6 if gap <= 0 else min(1e-6, max(factor.GEOMETRY_RTOL,
                                                   1e3 * eps * max(top, gap) / gap))
        n_zero_numeric = _strain_free_count(system, phi[:, :n_zero_numeric], rtol)
        return min(max(n_zero_numeric, n_rigid), len(lam))
    return min(n_rigid, len(lam))


def _zero_scale(system: System, M_diag: np.ndarray, bound: float) -> float:
    """Eigenvalue scale against which a computed eigenvalue counts as zero.

    Condensing massless junctions subtracts nearly equal stiffnesses, so the condensed K can be
    pure rounding (e.g. a junction that lets a mass move freely) with a spectral bound near zero.
    The rounding is relative to the springs before condensation, so the scale is the bound of the
    uncondensed stiffness on the mass-carrying DOFs (never smaller: the Schur complement only
    lowers stiffness).
    """
    if len(system.dofs) == len(system.all_dofs):
        return bound
    lookup = {d: i for i, d in enumerate(system.all_dofs)}
    keep = np.array([lookup[d] for d in system.dofs], dtype=np.int64)
    K_full = system.K_full
    if sp.issparse(K_full):
        K_mm = sp.csr_matrix(K_full)[keep][:, keep]
    else:
        K_mm = np.asarray(K_full)[np.ix_(keep, keep)]
    return max(bound, _spectral_bound(M_diag, K_mm))


def _dense_eig(system: System, M_diag: np.ndarray, want: int):
    K = system.dense("K")
    s = 1.0 / np.sqrt(M_diag)
    with np.errstate(over="ignore", invalid="ignore"):  # non-finite results are refused
        A = K * s[:, None] * s[None, :]
    if want == 0:
        return np.zeros(0), np.zeros((len(M_diag), 0))
    if want < len(M_diag):
        lam, u = scipy.linalg.eigh(A, subset_by_index=(0, want - 1), check_finite=False)
    else:
        # the divide-and-conquer driver is several times faster than the default (evr) when
        # every eigenvector is wanted
        lam, u = scipy.linalg.eigh(A, check_finite=False, overwrite_a=True, driver="evd")
    return lam, u * s[:, None]


def _sparse_eig(system: System, M_diag: np.ndarray, want: int, bound: float):
    """Lowest modes by shift-invert Lanczos, never cutting a repeated group.

    Lanczos finds one copy of a repeated eigenvalue at a time, so a group that straddles the
    requested count can come back short. A few more modes than requested are sought; the result
    is cut only at a gap between distinct frequencies, and the count below the cut is checked by
    Sylvester's law of inertia: the number of eigenvalues of ``K v = lam M v`` below ``s`` is the
    number of negative pivots of ``K - s M = L D L^T`` (the Sturm sequence check of
    Bathe, Finite Element Procedures, sec. 11.4.3). While the count disagrees, more are sought.
    Returns at least ``want`` modes (more when a group continues past it).
    """
    n = len(M_diag)
    K = sp.csc_matrix(system.K)
    M = sp.diags(M_diag, format="csc")
    # Rigid-body modes make K singular, so shift a little below zero. The shift must be small next
    # to the lowest nonzero eigenvalue to keep the transformed spectrum well separated, yet far
    # above rounding: 1e-10 of the spectral bound serves chains of 10^5 masses.
    sigma = -1e-10 * bound
    op = spla.LinearOperator(K.shape, matvec=_factor((K - sigma * M).tocsc()), dtype=float)
    extra = max(3, want // 8)
    k = min(n - 1, want + extra)
    note = None
    for attempt in range(4):
        ncv = min(n, max(2 * k + 1, k + 20))
        lam, phi = spla.eigsh(K, k=k, M=M, sigma=sigma, which="LM", OPinv=op, ncv=ncv,
                              tol=1e-12)
        # eigsh returns M-orthonormal vectors up to its tolerance; re-normalise exactly, and take
        # each eigenvalue as the Rayleigh quotient of its vector: the vectors converge well,
        # while the shift near the rigid-body modes limits the accuracy of the returned values
        norms = np.sqrt(np.einsum("ij,i,ij->j", phi, M_diag, phi))
        phi = phi / norms
        lam = _rayleigh(system, K, phi)
        order = np.argsort(lam)
        lam, phi = lam[order], phi[:, order]
        cut = _group_cut(lam, want, bound)
        if cut is None:   # the computed modes end inside a group: seek more
            if k >= n - 1:
                return lam, phi, None
            k = min(n - 1, 2 * k)
            note = ("the sparse solver could not find where the group of modes at"
                    f" {np.sqrt(max(lam[-1], 0.0)) / (2 * np.pi):.6g} Hz ends")
            continue
        # the check point sits halfway (in w) across the gap after the cut
        w_lo, w_hi = np.sqrt(max(lam[cut - 1], 0.0)), np.sqrt(max(lam[cut], 0.0))
        shift = (0.5 * (w_lo + w_hi)) ** 2
        below = _count_below(K, M, shift)
        if below == cut:
            return lam[:cut], phi[:, :cut], None
        f_check = np.sqrt(shift) / (2 * np.pi)
        if below is None:
            note = f"the count of modes below {f_check:.6g} Hz could not be checked"
            break
        note = (f"{below} modes lie below {f_check:.6g} Hz by the inertia (Sturm) count, but"
                f" the sparse solver found {cut}: some frequencies may be missing or spurious")
        if below < cut or k >= n - 1:
            break
        k = min(n - 1, max(2 * k, below + extra))
    keep = cut if cut is not None else min(want, len(lam))
    return lam[:keep], phi[:, :keep], note


#: Relative gap in w that separates two groups when the sparse path cuts its result (ten times
#: REPEATED_RTOL, so that a group the mode table calls repeated is never cut).
_CUT_RTOL = 10 * REPEATED_RTOL


def _group_cut(lam, want, bound):
    """Number of modes to keep: the first ``j >= want`` with a real gap between modes j and j+1
    (None when the computed modes end inside a group)."""
    w = np.sqrt(np.maximum(lam, 0.0))
    floor = np.sqrt(ZERO_RTOL * max(bound, 1e-300))  # zero modes count as one group
    for j in range(max(want, 1), len(lam)):
        if w[j] > floor and w[j] - w[j - 1] > _CUT_RTOL * w[j]:
            return j
    return None


#: A sparse matrix of at most this many rows whose nonzeros exceed DENSE_FILL of its size is
#: factored densely (LAPACK): a model whose masses each have dozens of springs fills its sparse
#: LU in completely (2,500 masses with 197,000 springs: SuperLU 10 s per factor, dense LU 3 s),
#: and a dense n^2 array of this size is 290 MB at most.
DENSE_FACTOR_DOF = 6000
DENSE_FILL = 0.02


def _dense_enough(A) -> bool:
    n = A.shape[0]
    return n <= DENSE_FACTOR_DOF and A.nnz > DENSE_FILL * n * n


def _factor(A):
    """A function solving ``A x = b`` (A square, sparse, non-singular): sparse LU, or a dense
    LU when the sparse one would fill in anyway (:data:`DENSE_FILL`)."""
    if _dense_enough(A):
        lu = scipy.linalg.lu_factor(A.toarray(), check_finite=False)
        return lambda b: scipy.linalg.lu_solve(lu, b, check_finite=False)
    return spla.splu(A).solve


def _count_below(K, M, shift):
    """Number of eigenvalues of ``K v = lam M v`` below ``shift``: the negative pivots of a
    symmetric LDL^T of ``K - shift M`` (Sylvester's law of inertia). SuperLU with no row
    pivoting (diag_pivot_thresh = 0) and a symmetric ordering gives ``P A P^T = L U`` with
    ``U = D L^T``; a factor that pivoted anyway is not trusted (returns None unless the dense
    Bunch-Kaufman LDL^T, scipy.linalg.ldl, is affordable)."""
    A = sp.csc_matrix(K - shift * M)
    dense = _dense_enough(A)   # straight to the dense LDL^T a full fill-in would cost anyway
    try:
        if not dense:
            lu = spla.splu(A, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                           options={"SymmetricMode": True})
            if np.array_equal(lu.perm_r, lu.perm_c):
                d = lu.U.diagonal()
                if np.all(np.isfinite(d)) and np.all(d != 0):
                    return int(np.sum(d < 0))
    except RuntimeError:   # an exactly singular pivot
        pass
    if A.shape[0] <= 4000 or dense:
        return _negative_pivots(A.toarray())
    return None


def _negative_pivots(A: np.ndarray) -> int:
    """Negative eigenvalues of the symmetric ``A``: those of D in the Bunch-Kaufman
    ``A = L D L^T`` (LAPACK dsytrf; Sylvester's law of inertia). D has 1x1 blocks and 2x2
    blocks; a 2x2 block with a negative determinant has one negative eigenvalue, one with a
    positive determinant two of the sign of its diagonal. (scipy.linalg.ldl gives the same D
    but builds L in Python: 14 s of a 5,000-row count, against 1.5 s here.)"""
    lapack = scipy.linalg.lapack
    # the blocked algorithm needs its workspace; the default is the unblocked one (30x slower)
    lwork = int(lapack.dsytrf_lwork(A.shape[0], lower=1)[0])
    ldu, ipiv, info = lapack.dsytrf(A, lower=1, lwork=max(lwork, 1), overwrite_a=True)
    if info < 0:
        raise ValueError(f"dsytrf: argument {-info} is invalid")
    diag, sub = np.diag(ldu), np.r_[np.diag(ldu, -1), 0.0]
    negative, k, n = 0, 0, len(diag)
    two = ipiv < 0   # LAPACK marks both rows of a 2x2 block with the same negative entry
    while k < n:
        if two[k] and k + 1 < n:
            det = diag[k] * diag[k + 1] - sub[k] * sub[k]
            negative += 1 if det < 0 else (2 if diag[k] < 0 else 0)
            k += 2
        else:
            negative += int(diag[k] < 0)
            k += 1
    return negative


def _finish(system, lam, phi, M_diag, bound, warnings, complete, method, rigid=None,
            err=None):
    lam = np.array(lam, float)
    n_modes = lam.shape[0]
    zero_tol = ZERO_RTOL * max(bound, 1e-300)
    rigid, rigid_info = _rigid_body_basis(system, M_diag) if rigid is None else rigid
    err = np.zeros(n_modes) if err is None else np.asarray(err, float)
    n_zero = _zero_count(system, lam, phi, zero_tol, (rigid, rigid_info))
    if np.any(lam < -zero_tol):
        worst = float(lam.min())
        warnings.append(
            f"the stiffness matrix is not positive semi-definite to working precision (an"
            f" eigenvalue of {worst:.3g} (rad/s)^2): the stiffness values span too wide a range"
            " for double precision, and the lowest frequencies cannot be trusted")
    zero_modes = []
    if n_zero:
        Z = _zero_basis(phi[:, :n_zero], rigid, M_diag, n_zero)
        phi = phi.copy()
        phi[:, :n_zero] = Z
        lam[:n_zero] = 0.0
        n_rigid = min(rigid.shape[1], n_zero)
        for i in range(n_zero):
            if i < n_rigid:
                cause, masses = rigid_info[i]
                zero_modes.append(ZeroMode(mode=i + 1, kind="rigid", cause=cause, masses=masses))
            else:
                cause, masses, motion = _explain_mechanism(system, Z[:, i], M_diag)
                zero_modes.append(ZeroMode(mode=i + 1, kind="mechanism", cause=cause,
                                           masses=masses, motion=motion))
    # a mode that structure says is elastic but whose computed eigenvalue is not positive is
    # shown as 0 Hz: say so, and that the number is not a result
    for i in range(n_zero, n_modes):
        if lam[i] <= 0.0:
            masses = tuple(mid for mid, _ in _moving_masses(system, phi[:, i], M_diag))
            zero_modes.append(ZeroMode(
                mode=i + 1, kind="unresolved", masses=masses,
                cause=f"the computed eigenvalue ({lam[i]:.3g} (rad/s)^2) is not positive, though"
                " this motion strains springs: the stiffness values span too wide a range for"
                " double precision to resolve this frequency from zero"))
            err[i] = np.inf
    unresolved = [z.mode for z in zero_modes if z.kind == "unresolved"]
    if unresolved:
        warnings.append(f"mode(s) {', '.join(map(str, unresolved))} shown as 0 Hz could not be"
                        " resolved from zero in double precision; they are not results")
    shown = [i for i in range(n_zero, n_modes) if lam[i] > 0.0]
    if shown and float(err[shown].max()) > DISPLAY_RTOL:
        bad = [i for i in shown if err[i] > DISPLAY_RTOL]
        elastic = lam[shown]
        f_bad = np.sqrt(lam[bad].max()) / (2 * np.pi)
        span = max(bound, float(elastic.max())) / float(elastic.min())
        warnings.append(
            f"the eigenvalues span a factor of {span:.2g}: frequencies"
            f" up to {f_bad:.4g} Hz are accurate to about {float(err[bad].max()):.1g} (relative)"
            " only; a link far stiffer than the rest may be better modelled as rigid (merge its"
            " nodes)" + _stiffest_link(system.model))
    lam = np.maximum(lam, 0.0)
    # deterministic sign: the largest component of each elastic mode is positive
    if n_modes > n_zero:
        elastic = phi[:, n_zero:]
        mag = np.abs(elastic)
        big = np.argmax(mag >= (1 - 1e-9) * mag.max(axis=0, keepdims=True), axis=0)
        flip = elastic[big, np.arange(elastic.shape[1])] < 0
        phi[:, n_zero:] = np.where(flip[None, :], -elastic, elastic)
    repeated = _repeated_groups(lam, n_zero)
    for g in repeated:
        if g[0] > n_zero:
            warnings.append(
                f"modes {', '.join(map(str, g))} share one frequency ({np.sqrt(lam[g[0] - 1]) / (2 * np.pi):.6g} Hz);"
                " their shapes are one possible basis, not unique")
    for z in zero_modes:
        if z.kind == "mechanism":
            warnings.append(f"mode {z.mode} is a mechanism: {z.cause}")
    all_shapes = phi if system.n_dof == len(system.all_dofs) else np.asarray(
        system.recovery @ phi)
    participation, effective, total = {}, {}, {}
    for d in system.directions:
        r = system.influence(d)
        L = phi.T @ (M_diag * r)
        participation[d] = L
        effective[d] = L * L
        total[d] = float(r @ (M_diag * r))
    return ModalResult(system=system, eigenvalues=lam, shapes=phi, all_shapes=all_shapes,
                       effective_mass=effective, participation=participation, total_mass=total,
                       zero_modes=tuple(zero_modes), repeated=repeated, warnings=tuple(warnings),
                       complete=complete, method=method, frequency_rtol=err)


def _geometric_strain(system: System, V_all: np.ndarray) -> np.ndarray:
    """Unweighted strain of every spring under each column of V_all (motions on all_dofs):
    the relative end motion along the spring (and across it where k_t > 0), (n_rows, n_cols).
    No stiffness enters, so a soft spring beside a stiff one counts as much (geometry only)."""
    model = system.model
    if len(model.springs) == 0:
        rows = np.zeros((0, V_all.shape[1]))
    else:
        axial, trans = spring_stretch(system, np.asarray(V_all, float))
        if model.kind == "planar":
            has_kt = np.array([sp_.k_t > 0 for sp_ in model.springs])
            rows = np.vstack([axial, trans[has_kt]])
        else:
            rows = axial
    M = system.mesh_rows
    if M is not None and M.shape[0]:
        rows = np.vstack([rows, np.asarray(M @ np.asarray(V_all, float))])
    return rows


def _strain_free_count(system: System, Z: np.ndarray, rtol: float = 1e-6) -> int:
    """Dimension of the combinations of the columns of Z (on dofs) that strain no spring."""
    if not len(system.model.springs):
        return Z.shape[1]
    Z_all = np.asarray(system.recovery @ Z)
    S = _geometric_strain(system, Z_all)
    scale = max(np.abs(Z_all).max(), 1e-300)
    sv = np.linalg.svd(S / scale, compute_uv=False)
    rank = int(np.sum(sv > rtol))
    return Z.shape[1] - rank


def _repeated_groups(lam, n_zero):
    groups = []
    if n_zero >= 2:
        groups.append(tuple(range(1, n_zero + 1)))
    w = np.sqrt(np.maximum(lam, 0))
    close = np.flatnonzero(np.diff(w[n_zero:]) <= REPEATED_RTOL * w[n_zero + 1:]) + n_zero
    i = 0
    while i < len(close):  # runs of consecutive close pairs form one group
        j = i
        while j + 1 < len(close) and close[j + 1] == close[j] + 1:
            j += 1
        groups.append(tuple(range(close[i] + 1, close[j] + 3)))
        i = j + 1
    return tuple(groups)


def _m_orthonormalise(V, M_diag, tol=1e-10):
    """M-orthonormal basis of the columns of V (modified Gram-Schmidt, drops dependent ones)."""
    out = []
    for j in range(V.shape[1]):
        v = V[:, j].astype(float).copy()
        norm0 = np.sqrt(v @ (M_diag * v))
        if norm0 == 0:
            continue
        for _ in range(2):
            for u in out:
                v -= (u @ (M_diag * v)) * u
        norm = np.sqrt(v @ (M_diag * v))
        if norm > tol * norm0:
            out.append(v / norm)
    return np.array(out).T if out else np.zeros((V.shape[0], 0))


def _zero_basis(Z_eig, rigid, M_diag, n_zero):
    """Zero-mode shapes: the rigid-body basis, then the rest of the computed null space."""
    if rigid.shape[1] >= n_zero:
        return _m_orthonormalise(rigid, M_diag)[:, :n_zero]
    # mechanisms: the part of the computed zero space M-orthogonal to the rigid modes
    R = _m_orthonormalise(rigid, M_diag)
    rest = Z_eig - R @ (R.T @ (M_diag[:, None] * Z_eig)) if R.shape[1] else Z_eig.copy()
    # principal directions of what remains, strongest first
    W = rest * np.sqrt(M_diag)[:, None]
    u, s, _ = np.linalg.svd(W, full_matrices=False)
    mech = u[:, : n_zero - R.shape[1]] / np.sqrt(M_diag)[:, None]
    basis = _m_orthonormalise(np.hstack([R, mech]), M_diag)
    if basis.shape[1] < n_zero:  # numerical safety: fall back to the solver's own vectors
        basis = _m_orthonormalise(np.hstack([basis, Z_eig]), M_diag)
    return basis[:, :n_zero]


def _components(model: Model):
    """Groups of node ids joined by springs (dashpots carry no static load)."""
    from scipy.sparse.csgraph import connected_components

    ids = [el.id for el in model.masses + model.anchors]
    index = {n: i for i, n in enumerate(ids)}
    # gear stages join their discs as springs do (a rigid mesh or a mesh stiffness)
    links = list(model.springs) + list(model.gears)
    a = np.array([index[sp_.a] for sp_ in links], dtype=np.int64)
    b = np.array([index[sp_.b] for sp_ in links], dtype=np.int64)
    graph = sp.coo_matrix((np.ones(len(a)), (a, b)), shape=(len(ids), len(ids)))
    _, labels = connected_components(graph, directed=False)
    groups: dict = {}
    for node, lab in zip(ids, labels):
        groups.setdefault(lab, []).append(node)
    return list(groups.values())


_VERB = {"x": "slide along x", "y": "slide along y", "theta": "spin freely about the shaft axis"}


def _rigid_body_basis(system: System, M_diag):
    """Rigid-body motions allowed by the model, on ``system.dofs``, with a cause for each."""
    model = system.model
    if model.gears:
        return _geared_rigid_basis(system, M_diag)
    anchors = {a.id for a in model.anchors}
    masses = {m.id: m for m in model.masses}
    lookup = {d: i for i, d in enumerate(system.all_dofs)}
    vectors, info = [], []
    groups = _components(model)
    # a group held by an anchor cannot move as a whole, but a rigid body in it may still turn
    # about its own centre (its springs all act through the centre)
    moving_groups = [g for g in groups if not (set(g) & anchors)
                     or any(masses[i].inertia > 0 for i in g if i in masses)]
    n_mass_total = len(model.masses)
    for g in moving_groups:
        grounded = bool(set(g) & anchors)
        g = [i for i in g if i in masses]
        gm = [masses[i] for i in g]
        if not any(m.mass > 0 for m in gm):
            continue
        # candidate rigid motions of this group on all nodes (locked directions included)
        if model.kind == "planar":
            tot = sum(m.mass for m in gm)
            cx = sum(m.mass * m.x for m in gm) / tot
            cy = sum(m.mass * m.y for m in gm) / tot
            cand = {"x": lambda m: (1.0, 0.0, 0.0), "y": lambda m: (0.0, 1.0, 0.0),
                    "rot": lambda m, cx=cx, cy=cy: (-(m.y - cy), m.x - cx, 1.0)}
            names = ["x", "y", "rot"]
            # a rigid body may also turn on its own about its centre
            for body in gm:
                if body.inertia > 0:
                    names.append("spin " + body.id)
                    cand[names[-1]] = (lambda m, bid=body.id:
                                       (0.0, 0.0, 1.0 if m.id == bid else 0.0))
            comps = ("x", "y", "theta")
        else:
            d0 = model.directions[0]
            cand = {d0: lambda m: (1.0,)}
            names = [d0]
            comps = model.directions
        # rows: every (node, direction) of the group; locked ones must stay still
        free_rows, locked_rows = [], []
        for m in gm:
            vals = [cand[nm](m) for nm in names]
            own = model.directions_of(m)
            for ci, d in enumerate(comps):
                if d not in own:
                    continue
                row = [v[ci] for v in vals]
                (locked_rows if d in m.fixed else free_rows).append(((m.id, d), row))
        if grounded:   # the group itself is held: only the bodies' own turning is left
            locked_rows += [(None, [1.0 if j == i else 0.0 for j in range(len(names))])
                            for i in range(3)]
        A_lock = np.array([r for _, r in locked_rows]).reshape(len(locked_rows), len(names))
        coeffs = _null_space(A_lock, 1e-12) if len(locked_rows) else np.eye(len(names))
        if coeffs.shape[1] == 0:
            continue
        # rigid vectors on all free DOFs, then keep the combinations that strain no spring
        V = np.zeros((len(system.all_dofs), len(names)))
        for key, row in free_rows:
            V[lookup[key]] = row
        # judged on the geometry (relative end motion of each spring), not on K V: next to a
        # very stiff spring the force of a soft one is below K's rounding, yet it is strained
        S = _geometric_strain(system, V @ coeffs)
        scale = max(np.abs(V @ coeffs).max(), 1e-300)
        ok = _null_space(S, 1e-9, scale) if S.size else np.eye(coeffs.shape[1])
        if ok.shape[1] == 0:
            continue
        C = coeffs @ ok  # (n_names, n_rigid) combinations of x, y, rot
        C = _nice_combinations(C, names)
        whole = len(gm) == n_mass_total
        ids = tuple(sorted(m.id for m in gm if m.mass > 0))
        for j in range(C.shape[1]):
            vec_all = V @ C[:, j]
            retained = np.array([vec_all[lookup[d]] for d in system.dofs])
            if not np.any(np.abs(retained) > 1e-12):
                continue
            vectors.append(retained)
            info.append((_rigid_cause(model, C[:, j], names, whole, ids, gm,
                                      held=bool(locked_rows)), ids))
    if not vectors:
        return np.zeros((system.n_dof, 0)), []
    V = np.array(vectors).T
    # independent only (a group's motions are independent; groups are disjoint)
    basis = _m_orthonormalise(V, M_diag)
    if basis.shape[1] < V.shape[1]:
        info = info[: basis.shape[1]]
    return basis, info


def _geared_rigid_basis(system: System, M_diag):
    """Rigid-body motions of a torsion model with gear stages: in each group of discs joined by
    springs and gears and held by no anchor, the turning of the whole train that twists no
    spring and strains no mesh (each disc at its own speed), on ``system.dofs``."""
    model = system.model
    anchors = {a.id for a in model.anchors}
    masses = {m.id: m for m in model.masses}
    T = system.gear_basis
    n_all = len(system.all_dofs)
    T = sp.identity(n_all, format="csr") if T is None else sp.csr_matrix(T)
    q_look = {d: i for i, d in enumerate(system.solve_dofs)}
    retained = [q_look[d] for d in system.dofs]
    vectors, info = [], []
    groups = _components(model)
    moving = [g for g in groups if not (set(g) & anchors)]
    for g in moving:
        gm = [masses[i] for i in g]
        if not any(m.mass > 0 for m in gm):
            continue
        cols = sorted({q_look[(mid, "theta")] for mid in g if (mid, "theta") in q_look})
        if not cols:
            continue
        V = np.asarray(T[:, cols].toarray())
        S = _geometric_strain(system, V)
        scale = max(np.abs(V).max(), 1e-300)
        ok = _null_space(S, 1e-9, scale) if S.size else np.eye(len(cols))
        ids = tuple(sorted(m.id for m in gm if m.mass > 0))
        whole = len(gm) == len(model.masses)
        for j in range(ok.shape[1]):
            vq = np.zeros(len(system.solve_dofs))
            vq[cols] = ok[:, j]
            vec = vq[retained]
            if not np.any(np.abs(vec) > 1e-12):
                continue
            vectors.append(vec / np.abs(vec).max())
            info.append((_rigid_cause(model, (1.0,), ["theta"], whole, ids, gm)
                         .replace("spin freely as a rigid body",
                                  "spin freely as a rigid body, each disc at its gear's speed"),
                         ids))
    if not vectors:
        return np.zeros((system.n_dof, 0)), []
    V = np.array(vectors).T
    basis = _m_orthonormalise(V, M_diag)
    return basis, info[: basis.shape[1]]


def _null_space(A, rtol, scale=None):
    """Null space of a tall, thin matrix (few columns) without forming a full U."""
    A = np.atleast_2d(np.asarray(A, float))
    p = A.shape[1]
    _, sv, vt = np.linalg.svd(A, full_matrices=True) if A.shape[0] < p else np.linalg.svd(
        A, full_matrices=False)
    ref = max(sv.max(initial=0.0), 0.0) if scale is None else scale
    s_full = np.zeros(p)
    s_full[: len(sv)] = sv
    keep = s_full <= rtol * ref
    return vt[keep].T if vt.shape[0] == p else np.eye(p)[:, keep]


def _nice_combinations(C, names):
    """Re-express the allowed rigid combinations with pure x, y translations first."""
    if C.shape[1] == 0:
        return C
    P = C @ np.linalg.pinv(C)  # projector onto the allowed space in coefficient space
    picked = []
    for i in range(len(names)):
        e = np.zeros(len(names))
        e[i] = 1.0
        if np.linalg.norm(P @ e - e) < 1e-9:
            picked.append(e)
    basis = list(picked)
    for j in range(C.shape[1]):
        v = C[:, j].copy()
        for b in basis:
            v -= (b @ v) / (b @ b) * b
        if np.linalg.norm(v) > 1e-9 and len(basis) < C.shape[1]:
            basis.append(v / np.abs(v).max())
    return np.array(basis[: C.shape[1]]).T


#: A spring this many times stiffer than the softest is named as the stiffest link in the
#: accuracy warning (below it no link stands out, and naming one would mislead).
_STIFF_LINK_RATIO = 1e4


def _stiffest_link(model) -> str:
    """``"; the stiffest link is spring "Weld" (s3), 1e+12 N/m"`` when one spring is far
    stiffer than the softest, else ``""``."""
    ks = [(max(s.k, s.k_t), s) for s in model.springs]
    if len(ks) < 2:
        return ""
    top, stiff = max(ks, key=lambda t: t[0])
    low = min(s.k for s in model.springs)
    if not top >= _STIFF_LINK_RATIO * low:
        return ""
    unit = "N m/rad" if model.kind == "torsion" else "N/m"
    return f"; the stiffest link is {named(stiff)}, {top:.3g} {unit}"


def _rigid_cause(model, coef, names, whole, ids, gm, held=False):
    torsion = model.kind == "torsion"

    def listed(some):
        return ", ".join(quoted_id(model, i) for i in some)

    if held:
        who = "the whole layout" if whole else "masses " + listed(ids[:4])
        why = " (its locked directions do not prevent it"
    elif whole:
        who = "the whole shaft" if torsion else "the whole layout"
        why = " (nothing holds it to ground"
    else:
        who = named_id(model, ids[0], "disc" if torsion else "mass") if len(ids) == 1 else (
            ("discs " if torsion else "masses ") + listed(ids[:4])
            + (" ..." if len(ids) > 4 else ""))
        why = (" (it is joined to nothing" if len(ids) == 1 and len(gm) == 1
               else " (no spring path to an anchor")
    if model.kind != "planar":
        verb = "spin freely" if torsion else _VERB[names[0]]
        strain = "no spring is twisted" if torsion else "no spring is stretched"
        return f"{who} can {verb} as a rigid body{why}; {strain})"
    spins = [(nm[5:], v) for nm, v in zip(names[3:], coef[3:]) if abs(v) > 1e-12]
    if spins and np.all(np.abs(coef[:3]) < 1e-12):
        if len(spins) == 1:
            return (f"{named_id(model, spins[0][0], 'mass')} can rotate freely about its centre"
                    " (no spring or attachment resists its rotation: its springs act through"
                    " its centre; no spring is strained)")
        return ("masses " + ", ".join(quoted_id(model, i) for i, _ in spins[:4])
                + " can rotate together about their centres (no spring is strained)")
    a, b, c = coef[:3]
    if abs(c) < 1e-12:
        if abs(b) < 1e-12:
            verb = "slide along x"
        elif abs(a) < 1e-12:
            verb = "slide along y"
        else:
            verb = f"slide in the direction ({a / np.hypot(a, b):.3g}, {b / np.hypot(a, b):.3g})"
    else:
        tot = sum(m.mass for m in gm) or 1.0
        cx = sum(m.mass * m.x for m in gm) / tot
        cy = sum(m.mass * m.y for m in gm) / tot
        px, py = cx - b / c, cy + a / c
        verb = f"rotate about the point ({px:.4g}, {py:.4g}) m"
    return f"{who} can {verb} as a rigid body{why}; no spring is strained)"


def _moving_masses(system: System, vec, M_diag, rtol: float = 1e-6):
    """Masses that take part in a motion on ``dofs``, largest kinetic-energy share first:
    ``[(mass_id, {direction: amplitude})]`` with amplitudes scaled so that the largest is 1;
    masses whose amplitude is below ``rtol`` of the largest are left out."""
    vec = np.asarray(vec, float)
    by_mass: dict = {}
    for (mid, d), m, v in zip(system.dofs, M_diag, vec):
        entry = by_mass.setdefault(mid, [0.0, {}])
        entry[0] += m * v * v
        entry[1][d] = v
    top = max((max(abs(v) for v in e[1].values()) for e in by_mass.values()), default=0.0)
    if top == 0.0:
        return []
    ranked = sorted(by_mass.items(), key=lambda kv: -kv[1][0])
    # sign: the largest component positive, so that the statement reads the same every time
    big = max(((mid, d, v) for mid, (_, comp) in ranked for d, v in comp.items()),
              key=lambda t: abs(t[2]))
    sign = 1.0 if big[2] > 0 else -1.0
    out = []
    for mid, (_, comp) in ranked:
        amp = {d: sign * v / top for d, v in comp.items()}
        if max(abs(a) for a in amp.values()) >= rtol:
            out.append((mid, amp))
    return out


#: A mechanism's statement names at most this many masses (its ``motion`` holds them all).
_MECHANISM_NAMED = 6


def _g3(value: float) -> str:
    """Three significant digits, with rounding dust (and -0) shown as 0."""
    return f"{(0.0 if abs(value) < 5e-4 else value) + 0.0:.3g}"


def _explain_mechanism(system: System, vec, M_diag):
    """Plain words for a zero mode that is not rigid-body motion: the motion itself (every mass
    that takes part, its direction and relative amplitude), then why no spring resists it.

    Returns (cause, masses, motion) with ``motion`` as in :class:`ZeroMode`.
    """
    model = system.model
    moving = _moving_masses(system, vec, M_diag)
    motion = {mid: amp for mid, amp in moving}
    # the statement lists the masses that carry visible motion (amplitude >= 1e-3)
    visible = [(mid, amp) for mid, amp in moving if max(abs(a) for a in amp.values()) >= 1e-3]
    ids = tuple(mid for mid, _ in visible)
    shown = visible[:_MECHANISM_NAMED]
    more = len(visible) - len(shown)
    tail = f" and {more} more" if more else ""
    if model.kind != "planar":
        parts = ", ".join(f"{quoted_id(model, mid)} by {_g3(next(iter(amp.values())))}"
                          for mid, amp in shown)
        return (f"masses {parts}{tail} can move with no stiffness resisting", ids, motion)

    def along(amp):
        ux, uy = amp.get("x", 0.0), amp.get("y", 0.0)
        size = float(np.hypot(ux, uy))
        return size, (ux / size, uy / size) if size else (0.0, 0.0)

    if len(visible) == 1:
        mid, amp = visible[0]
        _, (ux, uy) = along(amp)
        attached = [s for s in model.springs if mid in (s.a, s.b)]
        node = model.node(mid)
        perpendicular = bool(attached)
        for s in attached:
            other = model.node(s.b if s.a == mid else s.a)
            ex, ey = other.x - node.x, other.y - node.y
            length = np.hypot(ex, ey)
            if abs(ux * ex / length + uy * ey / length) > 1e-3 or s.k_t > 0:
                perpendicular = False
        if not attached:
            reason = "no spring is attached to it"
        elif perpendicular and len(attached) == 1:
            reason = ("its only spring acts along its line and has no transverse stiffness, so"
                      " it can swing sideways")
        elif perpendicular:
            reason = ("its springs are in line, so nothing resists motion at right angles to"
                      " them (add a spring at an angle or a transverse stiffness k_t)")
        else:
            reason = ("the springs and massless junctions around it give way without"
                      " stretching")
        return (f"{named(node)} can move in direction ({_g3(ux)}, {_g3(uy)}) with no stiffness:"
                f" {reason}", ids, motion)
    parts = []
    for mid, amp in shown:
        size, (ux, uy) = along(amp)
        parts.append(f"{quoted_id(model, mid)} by {_g3(size)} in direction ({_g3(ux)}, {_g3(uy)})")
    who = "masses " + ", ".join(quoted_id(model, mid) for mid, _ in shown) + tail
    return (f"{who} can move together with no stiffness: " + "; ".join(parts) + tail
            + " (no spring in the linkage they form is stretched)", ids, motion)
