"""Energy distribution and sensitivities of each mode.

For a mass-normalised mode (``phi^T M phi = 1``, ``phi^T K phi = lambda``) the strain energy of
spring e is ``k_e (e . (phi_b - phi_a))^2 / 2`` (plus ``k_t`` times the transverse part in a planar
model) and the kinetic-energy share of mass j is ``m_j |phi_j|^2``. The first-order change of an
eigenvalue with a stiffness or mass (Fox and Kapoor, AIAA J. 6(12), 1968) is

    d lambda / d k_e   = (e . (phi_b - phi_a))^2,
    d lambda / d m_j   = -lambda |phi_j|^2,

valid for distinct eigenvalues.

Massless junctions: the eigenproblem is the condensed one, ``K_c = K_mm - K_ms K_ss^+ K_sm``, whose
energy at a mass motion x_m is the least full energy over the junction motion x_s. By the envelope
theorem d(x_m^T K_c x_m)/dk_e is the spring's squared strain at that least-energy junction motion,
which is the recovered motion (``ModalResult.all_shapes``): so the formulas above hold with the
junctions' recovered motion. Where a junction direction is held by no spring (K_ss singular), the
least-energy motion is not unique: the derivative is the least squared strain over all of them
(Danskin's theorem; the value can only rise), which is 0 for a spring with ``k_t = 0`` whose
transverse strain can be taken up by that unheld direction: a small ``k_t`` then just makes the
junction follow, and no frequency moves.

Repeated frequencies: within a group of equal eigenvalues the shapes are any basis, and the single
derivatives depend on it (the group splits into eigenvalues of ``Phi_g^T dK Phi_g``). Only their
sum over the group is defined (the trace, the same in every basis); ``Sensitivity.valid`` is False
for such modes and :meth:`Sensitivity.group_sum` gives the sum.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from . import factor
from .errors import ModelError, checked_arguments, mode_number, shown
from .assemble import spring_stretch
from .modes import ModalResult


@dataclass(frozen=True, eq=False)
class EnergyResult:
    """Energy shares per mode.

    strain : (n_modes, n_springs) fraction of the mode's strain energy in each spring (rows sum
        to 1 for elastic modes; zero rows for zero-frequency modes).
    kinetic : (n_modes, n_masses) fraction of kinetic energy in each mass (rows sum to 1).
    """

    spring_ids: tuple
    mass_ids: tuple
    strain: np.ndarray
    kinetic: np.ndarray

    def _row(self, mode) -> int:
        # a checked index: mode 0 would be row -1, the last mode, with no error
        return mode_number(mode, self.strain.shape[0], "energy fractions") - 1

    def strain_energy_fraction(self, mode: int) -> dict:
        return dict(zip(self.spring_ids, map(float, self.strain[self._row(mode)])))

    def kinetic_energy_fraction(self, mode: int) -> dict:
        return dict(zip(self.mass_ids, map(float, self.kinetic[self._row(mode)])))

    def dominant_spring(self, mode: int) -> str | None:
        row = self.strain[self._row(mode)]
        if row.size == 0 or not np.any(row > 0):
            return None
        return self.spring_ids[int(np.argmax(row))]


@dataclass(frozen=True, eq=False)
class Sensitivity:
    """Derivatives of each mode's eigenvalue lambda = w^2 ((rad/s)^2) with each element value.

    dlambda_dk : (n_modes, n_springs) per N/m.      dlambda_dkt : transverse stiffness (planar).
    dlambda_dm : (n_modes, n_masses) per kg.
    normalised_k, normalised_m : (k/f)(df/dk) and (m/f)(df/dm), dimensionless (NaN for zero modes).
    valid : (n_modes,) bool, False for zero and repeated modes, where derivatives are not unique
        (sum them over the group: :meth:`group_sum`).
    groups : tuple of tuples of mode numbers sharing one frequency (zero modes included).
    """

    spring_ids: tuple
    mass_ids: tuple
    dlambda_dk: np.ndarray
    dlambda_dkt: np.ndarray
    dlambda_dm: np.ndarray
    normalised_k: np.ndarray
    normalised_kt: np.ndarray
    normalised_m: np.ndarray
    valid: np.ndarray
    groups: tuple = ()

    def group_sum(self, mode: int, which: str = "k") -> np.ndarray:
        """Sum of d lambda/dp over the repeated group holding ``mode`` (just the mode's row
        when it is not repeated), per element: the one derivative a repeated group defines.

        which : ``"k"``, ``"k_t"`` or ``"mass"``. Returns (n_springs,) or (n_masses,).
        """
        tables = {"k": self.dlambda_dk, "k_t": self.dlambda_dkt, "mass": self.dlambda_dm}
        if which not in tables:
            raise ModelError(f'sensitivity: which must be "k", "k_t" or "mass", got'
                             f" {shown(which)}")
        table = tables[which]
        mode = mode_number(mode, table.shape[0], "sensitivity")
        group = next((g for g in self.groups if mode in g), (mode,))
        return table[[m - 1 for m in group]].sum(axis=0)

    def df_dk_hz(self, lam: np.ndarray) -> np.ndarray:
        """df/dk in Hz per N/m: d lambda/dk / (4 pi w)."""
        w = np.sqrt(lam)[:, None]
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(w > 0, self.dlambda_dk / (4 * np.pi * np.where(w > 0, w, 1)), np.nan)


def strain_vectors(system, spring_index: int) -> tuple[np.ndarray, np.ndarray]:
    """(axial, transverse): vectors ``c`` on ``system.all_dofs`` with ``c . u`` the stretch of a
    spring (end b against end a along its axis ``e``) and its shear (along ``n``, at right angles).

    On a line or a shaft the axial vector is -1 at end a, +1 at end b and the transverse one is
    zero. Grounded or locked ends contribute nothing. Shape (n_all,) each.
    """
    n_all = len(system.all_dofs)
    axial, trans = np.zeros(n_all), np.zeros(n_all)
    idx = system.spring_dofs[spring_index]
    coef = system.spring_coef[spring_index]
    for j, i in enumerate(idx):
        if i >= 0:
            axial[i] += coef[0, j]
            trans[i] += coef[1, j]
    return axial, trans


def unheld_junction_directions(system, near=None) -> np.ndarray:
    """(n_all, r) orthonormal directions of massless junctions that no spring holds: the null
    space of the junctions' columns of the spring geometry (direction cosines; the same test as
    the condensation's, solver/factor.py), so a soft spring beside a very stiff one still holds
    what it holds (the junction block of K would lose it to rounding).

    near : optional DOF indices; only the groups of junction DOFs coupled (through K_ss) to one of
        them are examined, which keeps this cheap on large models.
    """
    n_all = len(system.all_dofs)
    M_full, K_full = system.M_full, system.K_full
    m = np.asarray(M_full.diagonal()).ravel()
    slaves = np.flatnonzero(m == 0)
    if slaves.size == 0:
        return np.zeros((n_all, 0))
    Kss = sp.csr_matrix(K_full)[slaves][:, slaves]
    _n, labels = connected_components(Kss != 0, directed=False)
    wanted = set(range(_n)) if near is None else {
        labels[i] for i in np.flatnonzero(np.isin(slaves, np.asarray(list(near), int)))}
    model = system.model
    planar = model.kind == "planar"
    B, _w = factor.spring_rows(system.spring_dofs, system.spring_coef,
                               [s_.k for s_ in model.springs],
                               [s_.k_t for s_ in model.springs] if planar else None, n_all)
    Bs = sp.csc_matrix(sp.csr_matrix(B)[:, slaves])
    cols = []
    for lab in sorted(wanted):
        members = np.flatnonzero(labels == lab)
        block = Bs[:, members]
        rows = np.unique(block.tocoo().row)
        if rows.size == 0:
            vecs = np.eye(len(members))
        else:
            _u, sv, vt = np.linalg.svd(block[rows].toarray())
            rank = int(np.sum(sv > factor.GEOMETRY_RTOL * sv.max(initial=0.0)))
            vecs = vt[rank:].T
        for v in vecs.T:
            col = np.zeros(n_all)
            col[slaves[members]] = v
            cols.append(col)
    return np.array(cols).T if cols else np.zeros((n_all, 0))


def _kept(result: ModalResult, key, compute):
    """``compute()`` once per result (energy shares and sensitivities both need the same
    motions); the arrays are kept on the result, read-only."""
    memo = result.__dict__.setdefault("_metric_memo", {})
    if key not in memo:
        value = compute()
        for a in value if isinstance(value, tuple) else (value,):
            a.setflags(write=False)
        memo[key] = value
    return memo[key]


def _relative_motion(result: ModalResult):
    """(n_modes, n_springs) axial and transverse relative displacement of each spring's ends
    (read-only arrays)."""

    def compute():
        system = result.system
        if len(system.model.springs) == 0:
            return np.zeros((result.n_modes, 0)), np.zeros((result.n_modes, 0))
        axial, trans = spring_stretch(system, result.all_shapes)
        return axial.T, trans.T

    return _kept(result, "relative", compute)


def _mass_motion_squared(result: ModalResult, rotation: bool = False):
    """(n_modes, n_masses) |phi_j|^2 summed over each mass's free directions (junctions too):
    its translations, or with ``rotation`` a planar rigid body's theta alone (read-only)."""

    def compute():
        system = result.system
        model = system.model
        shapes = result.all_shapes
        out = np.zeros((result.n_modes, len(model.masses)))
        if not model.masses:
            return out
        body_dir = (system.node_directions.index("theta") if model.kind == "planar"
                    and "theta" in system.node_directions else -1)
        index = np.array([system.mass_dofs[m.id] for m in model.masses], np.int64)
        # direction by direction, as a sum over each mass's directions in order
        for c in range(index.shape[1]):
            if (c == body_dir) != rotation:
                continue
            col = index[:, c]
            has = col >= 0
            if has.any():
                out[:, has] += shapes[col[has]].T ** 2
        return out

    return _kept(result, ("mass", bool(rotation)), compute)


@checked_arguments
def energy_fractions(result: ModalResult) -> EnergyResult:
    """Strain-energy share of every spring and kinetic-energy share of every mass in each mode."""
    model = result.model
    axial, trans = _relative_motion(result)
    k = np.array([s.k for s in model.springs])
    kt = np.array([s.k_t for s in model.springs]) if model.kind == "planar" else np.zeros(len(k))
    strain = k[None, :] * axial ** 2 + kt[None, :] * trans ** 2
    total = strain.sum(axis=1, keepdims=True)
    elastic = (result.eigenvalues > 0)[:, None] & (total > 0)
    strain = np.where(elastic, strain / np.where(total > 0, total, 1.0), 0.0)
    mass = np.array([m.mass for m in model.masses])
    kin = mass[None, :] * _mass_motion_squared(result)
    if model.bodies:   # the kinetic energy of rotation, 1/2 J theta'^2
        inertia = np.array([m.inertia for m in model.masses])
        kin = kin + inertia[None, :] * _mass_motion_squared(result, rotation=True)
    ktot = kin.sum(axis=1, keepdims=True)
    kin = np.where(ktot > 0, kin / np.where(ktot > 0, ktot, 1.0), 0.0)
    return EnergyResult(spring_ids=tuple(s.id for s in model.springs),
                        mass_ids=tuple(m.id for m in model.masses), strain=strain, kinetic=kin)


@checked_arguments
def sensitivities(result: ModalResult) -> Sensitivity:
    """Analytic eigenvalue derivatives with respect to every stiffness and mass.

    Shapes and sources in the module docstring: the strain of each spring is taken at the
    recovered junction motion, and a ``k_t = 0`` spring whose shear an unheld junction direction
    takes up has d lambda/dk_t = 0.
    """
    model = result.model
    lam = result.eigenvalues
    axial, trans = _relative_motion(result)
    dk = axial ** 2
    dkt = trans ** 2 if model.kind == "planar" else np.zeros_like(dk)
    if model.kind == "planar":
        _free_shear(result.system, dkt)
    dm = -lam[:, None] * _mass_motion_squared(result)
    k = np.array([s.k for s in model.springs])
    kt = np.array([s.k_t for s in model.springs])
    mass = np.array([m.mass for m in model.masses])
    valid = lam > 0
    for g in result.repeated:
        for mode in g:
            valid[mode - 1] = False
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = np.where(lam > 0, 0.5 / np.where(lam > 0, lam, 1.0), np.nan)[:, None]
        nk = k[None, :] * dk * inv
        nkt = kt[None, :] * dkt * inv
        nm = mass[None, :] * dm * inv
    return Sensitivity(spring_ids=tuple(s.id for s in model.springs),
                       mass_ids=tuple(m.id for m in model.masses), dlambda_dk=dk,
                       dlambda_dkt=dkt, dlambda_dm=dm, normalised_k=nk, normalised_kt=nkt,
                       normalised_m=nm, valid=valid, groups=tuple(result.repeated))


def _free_shear(system, dkt: np.ndarray) -> None:
    """Zero the d lambda/dk_t columns (in place) of springs with ``k_t = 0`` whose shear an
    unheld junction direction can take up (see the module docstring)."""
    model = system.model
    m = np.asarray(system.M_full.diagonal()).ravel()
    candidates = []
    for j, s in enumerate(model.springs):
        if s.k_t > 0:
            continue   # a spring with k_t > 0 holds its own shear: nothing is unheld along it
        idx = system.spring_dofs[j]
        touched = [i for i in idx if i >= 0 and m[i] == 0]
        if touched:
            candidates.append((j, touched))
    if not candidates:
        return
    N = unheld_junction_directions(system, near=[i for _, t in candidates for i in t])
    if N.shape[1] == 0:
        return
    for j, _t in candidates:
        _axial, c = strain_vectors(system, j)
        if np.linalg.norm(N.T @ c) > 1e-8 * np.linalg.norm(c):
            dkt[:, j] = 0.0
