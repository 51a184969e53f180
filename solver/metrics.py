"""Energy distribution and sensitivities of each mode.

For a mass-normalised mode (``phi^T M phi = 1``, ``phi^T K phi = lambda``) the strain energy of
spring e is ``k_e (e . (phi_b - phi_a))^2 / 2`` (plus ``k_t`` times the transverse part in a planar
model) and the kinetic-energy share of mass j is ``m_j |phi_j|^2``. The first-order change of an
eigenvalue with a stiffness or mass (Fox and Kapoor, AIAA J. 6(12), 1968) is

    d lambda / d k_e   = (e . (phi_b - phi_a))^2,
    d lambda / d m_j   = -lambda |phi_j|^2,

valid for distinct eigenvalues. Shapes of massless junctions come from the recovered motion, which
makes the junctions' rows exact too (the condensed K is the full K's energy at that motion).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import checked_arguments
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

    def strain_energy_fraction(self, mode: int) -> dict:
        return dict(zip(self.spring_ids, map(float, self.strain[mode - 1])))

    def kinetic_energy_fraction(self, mode: int) -> dict:
        return dict(zip(self.mass_ids, map(float, self.kinetic[mode - 1])))

    def dominant_spring(self, mode: int) -> str | None:
        row = self.strain[mode - 1]
        if row.size == 0 or not np.any(row > 0):
            return None
        return self.spring_ids[int(np.argmax(row))]


@dataclass(frozen=True, eq=False)
class Sensitivity:
    """Derivatives of each mode's eigenvalue lambda = w^2 ((rad/s)^2) with each element value.

    dlambda_dk : (n_modes, n_springs) per N/m.      dlambda_dkt : transverse stiffness (planar).
    dlambda_dm : (n_modes, n_masses) per kg.
    normalised_k, normalised_m : (k/f)(df/dk) and (m/f)(df/dm), dimensionless (NaN for zero modes).
    valid : (n_modes,) bool, False for zero and repeated modes, where derivatives are not unique.
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

    def df_dk_hz(self, lam: np.ndarray) -> np.ndarray:
        """df/dk in Hz per N/m: d lambda/dk / (4 pi w)."""
        w = np.sqrt(lam)[:, None]
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(w > 0, self.dlambda_dk / (4 * np.pi * np.where(w > 0, w, 1)), np.nan)


def _relative_motion(result: ModalResult):
    """(n_modes, n_springs) axial and transverse relative displacement of each spring's ends."""
    system = result.system
    model = system.model
    shapes = np.vstack([result.all_shapes, np.zeros((1, result.n_modes))])  # row -1 = ground
    idx = system.spring_dofs
    nd = idx.shape[1] // 2 if idx.size else len(model.directions)
    if len(model.springs) == 0:
        z = np.zeros((result.n_modes, 0))
        return z, z
    ua = shapes[idx[:, :nd]]  # (n_s, nd, n_modes)
    ub = shapes[idx[:, nd:]]
    delta = ub - ua
    if model.kind == "planar":
        e = system.spring_axis
        axial = np.einsum("si,sim->ms", e, delta)
        n = np.stack([-e[:, 1], e[:, 0]], axis=1)
        trans = np.einsum("si,sim->ms", n, delta)
    else:
        axial = delta[:, 0, :].T
        trans = np.zeros_like(axial)
    return axial, trans


def _mass_motion_squared(result: ModalResult):
    """(n_modes, n_masses) |phi_j|^2 summed over each mass's free directions (junctions too)."""
    system = result.system
    model = system.model
    shapes = np.vstack([result.all_shapes, np.zeros((1, result.n_modes))])
    out = np.zeros((result.n_modes, len(model.masses)))
    for j, m in enumerate(model.masses):
        for i in system.mass_dofs[m.id]:
            if i >= 0:
                out[:, j] += shapes[i] ** 2
    return out


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
    ktot = kin.sum(axis=1, keepdims=True)
    kin = np.where(ktot > 0, kin / np.where(ktot > 0, ktot, 1.0), 0.0)
    return EnergyResult(spring_ids=tuple(s.id for s in model.springs),
                        mass_ids=tuple(m.id for m in model.masses), strain=strain, kinetic=kin)


@checked_arguments
def sensitivities(result: ModalResult) -> Sensitivity:
    """Analytic eigenvalue derivatives with respect to every stiffness and mass."""
    model = result.model
    lam = result.eigenvalues
    axial, trans = _relative_motion(result)
    dk = axial ** 2
    dkt = trans ** 2 if model.kind == "planar" else np.zeros_like(dk)
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
                       normalised_m=nm, valid=valid)
