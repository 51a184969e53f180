"""Steady-state harmonic response: force FRFs and base-excitation transmissibility.

Harmonic motion ``x(t) = Re(X e^{i w t})`` of ``M x'' + C x' + K x = f`` gives the dynamic-stiffness
solve ``(K - w^2 M + i w C) X = F``. It is solved directly on every DOF (massless junctions
included, so it is exact with dashpots anywhere); C is the dashpots' matrix plus the damping model's:
Rayleigh ``alpha M + beta K`` (Chopra, Dynamics of Structures, 11.4), or for modal ratios
``C = M Phi diag(2 zeta_i w_i) Phi^T M`` over the complete set of mass-normalised modes (which makes
the direct solve equal to modal superposition for proportional damping). Non-proportional dashpots
are never forced into modal form.

Base excitation moves every anchor (and every locked direction) together by ``U`` in one direction.
In motion relative to the base ``y = x - r u`` the equation is ``M y'' + C y' + K y = -M r u''``, so
the absolute transmissibility is ``T = r + w^2 (K - w^2 M + i w C)^-1 M r`` (Harris' Shock and
Vibration Handbook, ch. 30 (mem); Rao, Mechanical Vibrations, 3.6 (mem)); for one mass
``|T| = sqrt((1 + (2 zeta r)^2) / ((1 - r^2)^2 + (2 zeta r)^2))``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from .assemble import System, assemble
from .errors import ModelError, checked_arguments, number, numbers, shown
from .model import Model
from .modes import modes
from .naming import quoted_id

OUTPUTS = ("displacement", "velocity", "acceleration")
_CHUNK_BYTES = 64 * 2 ** 20


def _system(model_or_system) -> System:
    if isinstance(model_or_system, System):
        return model_or_system
    if isinstance(model_or_system, Model):
        return assemble(model_or_system)
    raise ModelError(f"expected a Model or System, got {type(model_or_system).__name__}")


def _freqs(freqs_hz) -> np.ndarray:
    f = np.atleast_1d(numbers(freqs_hz, "frequencies"))
    if f.ndim != 1 or not np.all(np.isfinite(f)) or np.any(f < 0):
        raise ModelError("frequencies must be a 1-D list of finite values >= 0 Hz")
    return f


def damping_matrix_full(system: System) -> np.ndarray | sp.spmatrix:
    """C on every DOF: dashpots plus the damping model (Rayleigh or modal)."""
    model = system.model
    d = model.damping
    C = system.C_full
    if d.model == "rayleigh":
        C = C + d.alpha * system.M_full + d.beta * system.K_full
    elif d.model == "modal":
        from .response import modal_damping_coefficients

        res = modes(system, count=system.n_dof if system.n_dof <= 3000 else None)
        if not res.complete:
            raise ModelError("modal damping ratios need every mode; this model is too large for"
                             " that: use Rayleigh damping or dashpots instead")
        c = modal_damping_coefficients(model, res)
        Mf = system.M_full
        Mphi = np.asarray(Mf @ res.all_shapes)
        Cm = (Mphi * c[None, :]) @ Mphi.T
        C = (C.toarray() if sp.issparse(C) else C) + Cm
    return C


def _dynamic_solve(system: System, f: np.ndarray, rhs_fn) -> np.ndarray:
    """Solve (K - w^2 M + i w C) X = rhs(w) on all DOFs for each frequency: (n_freq, n_all)."""
    K, M = system.K_full, system.M_full
    C = damping_matrix_full(system)
    T = getattr(system, "gear_basis", None)
    if T is not None:
        # rigid gear meshes: solve on the coordinates they leave (every disc = T q), then
        # recover every disc; forces are taken to q by T^T (virtual work)
        T = sp.csr_matrix(T)
        K, M = sp.csr_matrix(T.T @ sp.csr_matrix(K) @ T), sp.csr_matrix(T.T @ sp.csr_matrix(M) @ T)
        C = sp.csr_matrix(T.T @ sp.csr_matrix(C) @ T)
        outer = rhs_fn
        rhs_fn = lambda wi: np.asarray(T.T @ outer(wi))  # noqa: E731
        Y = _dynamic_solve_q(system, f, K, M, C, rhs_fn)
        return np.asarray((T @ Y.T).T)
    return _dynamic_solve_q(system, f, K, M, C, rhs_fn)


def _dynamic_solve_q(system: System, f: np.ndarray, K, M, C, rhs_fn) -> np.ndarray:
    n_total = K.shape[0]
    w = 2 * np.pi * f
    if n_total == 0:
        return np.zeros((len(f), 0), complex)
    L = getattr(system, "loose", None)
    if L is not None and L.shape[1]:
        # Junction directions held by nothing (a planar junction between springs in line, an
        # axial spring's free end) make Z(w) singular along L at every frequency.
        # Z L = 0 and L^T Z = 0, so adding s L L^T leaves the solution orthogonal to L unchanged
        # and fixes the loose motion at zero (the least motion, as the modal path gives); a
        # force along L has nothing to push against and is left out.
        Ls = sp.csr_matrix(L)
        s = float(np.abs(K.diagonal()).max()) if K.shape[0] else 1.0
        K = K + (s or 1.0) * (Ls @ Ls.T if sp.issparse(K) else (Ls @ Ls.T).toarray())
        inner = rhs_fn
        rhs_fn = lambda wi: (lambda r: r - L @ (L.T @ r))(inner(wi))  # noqa: E731
    n = K.shape[0]
    out = np.empty((len(f), n), complex)
    # a sparse LU per frequency beats dense LAPACK by far on the banded matrices of chains and
    # lattices; modal damping makes C dense, which sends the solve to the dense path
    nnz = sum((x.nnz if sp.issparse(x) else np.count_nonzero(x)) for x in (K, C))
    sparse = n > 60 and nnz < 0.05 * n * n
    if sparse:
        K, M = sp.csc_matrix(K), sp.csc_matrix(M)
        C = sp.csc_matrix(C)
        for i, wi in enumerate(w):
            Z = (K - wi * wi * M + 1j * wi * C).tocsc()
            try:
                out[i] = spla.splu(Z).solve(rhs_fn(wi).astype(complex))
            except RuntimeError:  # exactly singular: a rigid-body mode at w = 0
                out[i] = np.inf
        return out
    K, M, C = (x.toarray() if sp.issparse(x) else np.asarray(x) for x in (K, M, C))
    chunk = max(1, int(_CHUNK_BYTES // (16 * n * n)))
    for s in range(0, len(w), chunk):
        ws = w[s:s + chunk]
        Z = K[None] - (ws ** 2)[:, None, None] * M[None] + 1j * ws[:, None, None] * C[None]
        B = np.stack([rhs_fn(wi) for wi in ws]).astype(complex)
        try:
            out[s:s + chunk] = np.linalg.solve(Z, B[..., None])[..., 0]
        except np.linalg.LinAlgError:
            for j, wi in enumerate(ws):
                try:
                    out[s + j] = np.linalg.solve(Z[j], B[j])
                except np.linalg.LinAlgError:
                    out[s + j] = np.inf
    return out


def _retained(system: System, X_all: np.ndarray) -> np.ndarray:
    index = {d: i for i, d in enumerate(system.all_dofs)}
    cols = [index[d] for d in system.dofs]
    return X_all[:, cols]


def _convert(X: np.ndarray, f: np.ndarray, output: str) -> np.ndarray:
    if output not in OUTPUTS:
        raise ModelError(f'output must be one of {", ".join(OUTPUTS)}, got "{output}"')
    iw = (2j * np.pi * f)[:, None]
    if output == "velocity":
        return iw * X
    if output == "acceleration":
        return iw * iw * X
    return X


def _modal_solve(system: System, f: np.ndarray, F_all: np.ndarray, result=None,
                 scale=None) -> np.ndarray:
    """Modal superposition X = sum phi phi^T F / (lambda - w^2 + i w c) on all DOFs.

    Exact for proportional damping (none, modal ratios, Rayleigh) with the complete set of modes;
    refused with dashpots, whose damping is not proportional in general.
    """
    from .response import modal_damping_coefficients

    if len(system.model.dampers):
        raise ModelError("the modal path needs proportional damping; with dashpots use the"
                         " direct solve (method='direct')")
    res = result if result is not None and result.complete else modes(system)
    if not res.complete:
        raise ModelError("the modal path needs every mode; this model is too large for that")
    c = modal_damping_coefficients(system.model, res)
    # a force on a junction reaches the masses through the recovery (static condensation)
    R = system.recovery
    F_ret = np.asarray(R.T @ F_all).ravel()
    q_force = res.shapes.T @ F_ret  # modal forces, (n_modes,)
    w = 2 * np.pi * f
    denom = res.eigenvalues[None, :] - (w ** 2)[:, None] + 1j * w[:, None] * c[None, :]
    num = q_force[None, :] if scale is None else scale[:, None] * q_force[None, :]
    # an undamped resonance hit exactly gives inf or nan; values at the ends of the accepted
    # ranges (1e-30 kg beside 1e30 N/m) can leave double precision: inf there too
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        q = num / denom
    with np.errstate(invalid="ignore", over="ignore"):
        X = q @ res.all_shapes.T
    if system.n_dof != len(system.all_dofs) and np.any(F_all[_junction_mask(system)]):
        # the junctions' own static flexibility under a force applied to them
        X = X + _junction_static(system, F_all)[None, :]
    return X


def _junction_mask(system: System) -> np.ndarray:
    """DOFs of ``all_dofs`` condensed as massless junctions (a disc a rigid gear mesh ties to
    another is not one: it moves with its coordinate)."""
    T = getattr(system, "gear_basis", None)
    if T is None:
        retained = set(system.dofs)
        return np.array([d not in retained for d in system.all_dofs])
    retained = set(system.dofs)
    slave_q = np.array([d not in retained for d in system.solve_dofs])
    T = sp.csr_matrix(T)
    to_slave = np.asarray(abs(T[:, slave_q]).sum(axis=1)).ravel() > 0
    return to_slave


def _junction_static(system: System, F_all: np.ndarray) -> np.ndarray:
    T = getattr(system, "gear_basis", None)
    if T is not None:
        # on the coordinates the rigid meshes leave, then back to every disc
        T = sp.csr_matrix(T)
        retained = set(system.dofs)
        mask = np.array([d not in retained for d in system.solve_dofs])
        Kq = sp.csr_matrix(T.T @ sp.csr_matrix(system.K_full) @ T).toarray()
        Fq = np.asarray(T.T @ F_all).ravel()
        xq = np.zeros(len(Fq), complex)
        xq[mask] = np.linalg.pinv(Kq[np.ix_(mask, mask)]) @ Fq[mask]
        return np.asarray(T @ xq).ravel()
    mask = _junction_mask(system)
    K = system.K_full.toarray() if sp.issparse(system.K_full) else system.K_full
    Kss = K[np.ix_(mask, mask)]
    out = np.zeros(len(F_all), complex)
    out[mask] = np.linalg.pinv(Kss) @ F_all[mask]
    return out


@checked_arguments(model="model_or_system")
def harmonic_response(model, freqs_hz, forces, output: str = "displacement",
                      method: str = "direct", result=None) -> np.ndarray:
    """Steady-state complex response to harmonic forces.

    Parameters
    ----------
    model : Model or System
    freqs_hz : (n_freq,) frequencies in Hz (>= 0).
    forces : mapping ``{(mass_id, direction): amplitude}`` in N (N m in torsion); complex
        amplitudes give phase. A unit force at one DOF gives that column of the FRF matrix.
    output : "displacement" (receptance, m/N), "velocity" (mobility, m/s/N) or "acceleration"
        (accelerance, m/s^2/N).
    method : "direct" (dynamic-stiffness solve, any damping) or "modal" (superposition of all
        modes; proportional damping only, refused with dashpots).
    result : ModalResult of the same model, optional: the modal path reuses its modes when they
        are complete.

    Returns
    -------
    (n_freq, n_dof) complex ndarray on ``assemble(model).dofs``. Where the dynamic stiffness is
    singular (a rigid-body mode at 0 Hz, an undamped resonance hit exactly) the row is ``inf``.
    """
    system = _system(model)
    f = _freqs(freqs_hz)
    index = {d: i for i, d in enumerate(system.all_dofs)}
    F = np.zeros(len(system.all_dofs), complex)
    if not isinstance(forces, dict) or not forces:
        raise ModelError("forces must be a mapping {(mass_id, direction): amplitude in N}")
    for key, amp in forces.items():
        if not (isinstance(key, tuple) and len(key) == 2):
            raise ModelError(f"force key must be (mass_id, direction), got {shown(key)}")
        if key not in index:
            from .assemble import _no_dof_message

            raise ModelError("force: " + _no_dof_message(system.model, *key))
        F[index[key]] += number(
            amp, f"force amplitude at {quoted_id(system.model, key[0])} in {key[1]}", complex)
    if method == "direct":
        X = _dynamic_solve(system, f, lambda w: F)
    elif method == "modal":
        X = _modal_solve(system, f, F, result)
    else:
        raise ModelError(f'method must be "direct" or "modal", got {shown(method)}')
    return _convert(_retained(system, X), f, output)


@checked_arguments(model="model_or_system")
def base_transmissibility(model, freqs_hz, direction: str, relative: bool = False,
                          method: str = "direct", result=None) -> np.ndarray:
    """Motion of each DOF per unit harmonic motion of the base (all anchors together).

    Parameters
    ----------
    model : Model or System
    freqs_hz : (n_freq,) Hz.
    direction : the base's direction of motion ("x", "y" or "theta", one the model has).
    relative : False gives absolute transmissibility ``X / U`` (also the ratio of absolute
        accelerations); True gives the motion relative to the base ``(X - r U) / U``.
    method : "direct" (dynamic-stiffness solve of ``Z(w) y = w^2 M r``, any damping) or "modal"
        (superposition of all modes with the same effective force; proportional damping only).
        Both solve for the motion relative to the base, driven by the inertia force
        ``w^2 M r U``, so damping acts on relative velocity: exact for dashpots and
        stiffness-proportional damping; mass-proportional (Rayleigh alpha) damping is taken on
        relative motion, the usual convention (Chopra, Dynamics of Structures, ch. 1 and 13).
    result : ModalResult of the same model, optional, reused by the modal path.

    Returns
    -------
    (n_freq, n_dof) complex ndarray on ``assemble(model).dofs``.
    """
    system = _system(model)
    if direction not in system.model.directions:
        raise ModelError(f'base excitation: direction must be one of'
                         f' {", ".join(system.model.directions)}, got "{direction}"')
    if any(g.ratio != 1.0 for g in system.model.gears):
        raise ModelError("base excitation: a geared torsion model has no single base rotation"
                         " (the anchors of shafts turning at different speeds cannot turn"
                         " together); apply a harmonic moment to a disc instead"
                         " (harmonic_response)")
    f = _freqs(freqs_hz)
    r = np.array([1.0 if d == direction else 0.0 for _, d in system.all_dofs])
    Mr = np.asarray(system.M_full @ r).ravel()
    if method == "direct":
        Y = _dynamic_solve(system, f, lambda w: (w * w) * Mr)
    elif method == "modal":
        w = 2 * np.pi * f
        Y = _modal_solve(system, f, Mr.astype(complex), result, scale=w * w)
    else:
        raise ModelError(f'method must be "direct" or "modal", got {shown(method)}')
    Y = _retained(system, Y)
    if relative:
        return Y
    r_ret = np.array([1.0 if d == direction else 0.0 for _, d in system.dofs])
    return Y + r_ret[None, :]


@checked_arguments
def isolation_efficiency(transmissibility) -> np.ndarray:
    """Isolation efficiency in % = (1 - |T|) * 100 (negative where the mount amplifies)."""
    return (1.0 - np.abs(np.asarray(transmissibility))) * 100.0


@dataclass(frozen=True)
class Peak:
    """A resonance peak of a response magnitude curve.

    ``bandwidth_hz`` is the half-power (-3 dB) width, NaN when the curve does not fall below
    peak / sqrt(2) on both sides within the data; ``damping_ratio`` is the half-power estimate
    ``bandwidth / (2 f)`` (common practice, valid for light damping).
    """

    frequency_hz: float
    amplitude: float
    bandwidth_hz: float
    damping_ratio: float


#: A local maximum counts as a peak when it stands at least this factor above the higher of
#: the two valleys that separate it from higher ground (its prominence, as a ratio).
PEAK_PROMINENCE = 1.02


@checked_arguments
def find_peaks(freqs_hz, values, prominence: float = PEAK_PROMINENCE) -> list[Peak]:
    """Resonance peaks of ``|values|`` with half-power bandwidths, by linear interpolation.

    A peak is a local maximum that rises at least ``prominence`` times above the higher of its
    two bases (the lowest value between it and the nearest higher point on each side, or the end
    of the data): ripples, plateaus and the slow approach to a high-frequency asymptote are not
    peaks. A run of non-finite values (an undamped resonance hit on the grid) is one peak of
    infinite amplitude at the run's middle, with no bandwidth and zero damping.
    """
    f = np.asarray(freqs_hz, float)
    a = np.abs(np.asarray(values)).astype(float)
    n = len(a)
    if n < 3:
        return []
    bad = ~np.isfinite(a)
    peaks = []
    # undamped resonances: runs of inf / nan
    i = 0
    while i < n:
        if bad[i]:
            j = i
            while j + 1 < n and bad[j + 1]:
                j += 1
            if 0 < i and j < n - 1:
                mid = (i + j) // 2
                peaks.append(Peak(frequency_hz=float(f[mid]), amplitude=float("inf"),
                                  bandwidth_hz=float("nan"), damping_ratio=0.0))
            i = j + 1
        else:
            i += 1
    b = np.where(bad, np.inf, a)    # non-finite samples are higher ground for the bases

    def base(i, step):
        lowest = b[i]
        j = i + step
        while 0 <= j < n:
            if b[j] > b[i]:
                return lowest
            lowest = min(lowest, b[j])
            j += step
        return lowest

    for i in range(1, n - 1):
        if bad[i] or not (a[i] > b[i - 1] and a[i] >= b[i + 1]):
            continue
        floor = max(base(i, -1), base(i, 1))
        if floor > 0 and a[i] < prominence * floor:
            continue
        # refine the peak by a parabola through three points (in the data's own spacing)
        y0, y1, y2 = a[i - 1], a[i], a[i + 1]
        denom = y0 - 2 * y1 + y2
        shift = 0.5 * (y0 - y2) / denom if denom != 0 else 0.0
        shift = float(np.clip(shift, -0.5, 0.5))
        fp = f[i] + shift * (f[i + 1] - f[i - 1]) / 2
        ap = y1 - 0.25 * (y0 - y2) * shift
        half = ap / np.sqrt(2)
        lo = hi = np.nan
        j = i
        while j > 0 and b[j] > half:
            j -= 1
        if b[j] <= half:
            lo = f[j] + (half - a[j]) * (f[j + 1] - f[j]) / (a[j + 1] - a[j])
        j = i
        while j < n - 1 and b[j] > half:
            j += 1
        if b[j] <= half:
            hi = f[j - 1] + (a[j - 1] - half) * (f[j] - f[j - 1]) / (a[j - 1] - a[j])
        bw = hi - lo
        peaks.append(Peak(frequency_hz=float(fp), amplitude=float(ap), bandwidth_hz=float(bw),
                          damping_ratio=float(bw / (2 * fp)) if np.isfinite(bw) else np.nan))
    peaks.sort(key=lambda p: p.frequency_hz)
    return peaks


@checked_arguments
def rms_over_band(freqs_hz, transfer, asd, f_min_hz: float, f_max_hz: float) -> np.ndarray:
    """RMS response to a flat input acceleration spectral density over a band.

    ``rms = sqrt( integral_{f_min}^{f_max} |H(f)|^2 ASD df )`` by the trapezoidal rule on the given
    frequency points (use a fine grid: several points per half-power bandwidth). ``transfer``
    is (n_freq,) or (n_freq, n_dof); ``asd`` in (input unit)^2/Hz, e.g. (m/s^2)^2/Hz or g^2/Hz.
    """
    f = np.asarray(freqs_hz, float)
    H = np.abs(np.asarray(transfer))
    if f.ndim != 1 or H.ndim == 0 or H.shape[0] != f.shape[0]:
        raise ModelError(f"rms: transfer must hold one value (or row) per frequency point,"
                         f" {f.size} of them; got shape {H.shape}")
    if float(asd) < 0:
        raise ModelError(f"rms: the input spectral density must be zero or positive, got {asd}")
    inside = (f >= f_min_hz) & (f <= f_max_hz)
    if inside.sum() < 2:
        raise ModelError("rms: need at least two frequency points inside the band")
    power = H[inside] ** 2 * float(asd)
    return np.sqrt(np.trapezoid(power, f[inside], axis=0))
