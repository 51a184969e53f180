"""Damping: Rayleigh coefficients from two target ratios, and damped (complex) modes.

Rayleigh damping ``C = alpha M + beta K`` gives mode i the ratio
``zeta_i = alpha / (2 w_i) + beta w_i / 2`` (Chopra, Dynamics of Structures, 11.4 (mem)); two
frequencies with wanted ratios fix alpha and beta.

With dashpots the damping is generally not proportional: the modes are those of the first-order
state equation ``z' = A z``, ``A = [[0, I], [-M^-1 K, -M^-1 C]]``. Each complex-conjugate pair of
eigenvalues ``s = -zeta w_n +- i w_n sqrt(1 - zeta^2)`` gives an undamped-equivalent natural
frequency ``w_n = |s|`` and a damping ratio ``zeta = -Re(s) / |s|``; real eigenvalues are
overdamped motions.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.linalg

from .assemble import System, assemble
from .errors import ModelError, checked_arguments
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
            raise ModelError(f"Rayleigh fit: {name} must be a positive number, got {v!r}")
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


@dataclass(frozen=True, eq=False)
class DampedModes:
    """Complex modes of the damped system, ascending in natural frequency.

    eigenvalues : (n_pairs,) complex, the upper-half-plane member of each pair (rad/s).
    natural_frequencies_hz : |s| / 2 pi.   damped_frequencies_hz : Im(s) / 2 pi.
    damping_ratios : -Re(s) / |s| (1 for an overdamped real root, NaN for a rigid-body root).
    """

    eigenvalues: np.ndarray
    natural_frequencies_hz: np.ndarray
    damped_frequencies_hz: np.ndarray
    damping_ratios: np.ndarray


@checked_arguments
def damped_modes(model_or_system) -> DampedModes:
    """State-space eigenvalues of a model with its dashpots and damping model (dense)."""
    system = model_or_system if isinstance(model_or_system, System) else assemble(model_or_system)
    if not isinstance(system.model, Model):
        raise ModelError("damped_modes: expected a Model or System")
    n = system.n_dof
    if n == 0:
        z = np.zeros(0)
        return DampedModes(z.astype(complex), z, z, z)
    M = system.dense("M")
    K = system.dense("K")
    C = system.dense("C")  # condensed dashpots plus the damping model
    minv = 1.0 / np.diag(M)
    A = np.zeros((2 * n, 2 * n))
    A[:n, n:] = np.eye(n)
    A[n:, :n] = -minv[:, None] * K
    A[n:, n:] = -minv[:, None] * C
    s = scipy.linalg.eigvals(A)
    scale = max(np.abs(s).max(initial=0.0), 1e-300)
    keep = s[(s.imag > 1e-12 * scale)]
    real = s[np.abs(s.imag) <= 1e-12 * scale].real
    wn = np.abs(keep)
    zeta = -keep.real / np.where(wn > 0, wn, 1.0)
    # overdamped and rigid roots: report each real root as its own entry
    real_wn = np.abs(real)
    real_zeta = np.where(real_wn > 1e-12 * scale, 1.0, np.nan)
    all_s = np.concatenate([keep, real.astype(complex)])
    all_wn = np.concatenate([wn, real_wn])
    all_z = np.concatenate([zeta, real_zeta])
    order = np.argsort(all_wn, kind="stable")
    return DampedModes(eigenvalues=all_s[order], natural_frequencies_hz=all_wn[order] / (2 * np.pi),
                       damped_frequencies_hz=all_s[order].imag / (2 * np.pi),
                       damping_ratios=all_z[order])
