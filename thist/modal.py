"""Modal analysis: periods, shapes, participation and effective modal mass."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg as sla


@dataclass(frozen=True)
class Modes:
    """Undamped modes of (M, K), mode 1 the longest period.

    Attributes
    ----------
    omegas : ndarray, shape (n,)
        Circular frequencies, rad/s, ascending.
    periods : ndarray, shape (n,)
        Periods, s, descending.
    shapes : ndarray, shape (n, n)
        Mass-normalised shapes in columns (φᵀMφ = 1), roof component positive.
    participation : ndarray, shape (n,)
        Γ = φᵀMr / φᵀMφ.
    effective_mass : ndarray, shape (n,)
        Effective modal mass Γ²·φᵀMφ, kg.
    effective_mass_ratio : ndarray, shape (n,)
        Effective mass over rᵀMr.
    cumulative_ratio : ndarray, shape (n,)
        Running sum of effective_mass_ratio.
    """

    omegas: np.ndarray
    periods: np.ndarray
    shapes: np.ndarray
    participation: np.ndarray
    effective_mass: np.ndarray
    effective_mass_ratio: np.ndarray
    cumulative_ratio: np.ndarray

    @property
    def frequencies(self) -> np.ndarray:
        """Cyclic frequencies, Hz."""
        return self.omegas / (2.0 * np.pi)

    def modes_for_mass(self, ratio: float = 0.9) -> int:
        """Number of modes needed to reach ``ratio`` of the total effective mass."""
        idx = np.flatnonzero(self.cumulative_ratio >= ratio - 1e-12)
        return int(idx[0]) + 1 if idx.size else len(self.omegas)


def modal(M: np.ndarray, K: np.ndarray, r: np.ndarray | None = None) -> Modes:
    """Solve the generalized eigenproblem K φ = ω² M φ.

    Parameters
    ----------
    M : ndarray, shape (n, n)
        Mass matrix, kg.
    K : ndarray, shape (n, n)
        Stiffness matrix, N/m.
    r : ndarray, shape (n,), optional
        Influence vector; ones by default.

    Returns
    -------
    Modes
    """
    M = np.asarray(M, dtype=float)
    K = np.asarray(K, dtype=float)
    r = np.ones(M.shape[0]) if r is None else np.asarray(r, dtype=float)
    w2, phi = sla.eigh(K, M)
    w2 = np.clip(w2, 0.0, None)
    # Mass-normalise (eigh already does for the generalized problem) and fix the sign
    # so that the component of largest magnitude nearest the top is positive.
    norms = np.sqrt(np.einsum("ij,ik,kj->j", phi, M, phi))
    phi = phi / norms
    top = phi[-1]
    sign = np.where(np.abs(top) > 1e-12 * np.max(np.abs(phi), axis=0), np.sign(top), 1.0)
    phi = phi * sign
    omegas = np.sqrt(w2)
    with np.errstate(divide="ignore"):
        periods = np.where(omegas > 0, 2.0 * np.pi / omegas, np.inf)
    mr = phi.T @ M @ r
    gamma = mr  # φᵀMφ = 1
    eff = gamma**2
    total = float(r @ M @ r)
    ratio = eff / total
    return Modes(omegas, periods, phi, gamma, eff, ratio, np.cumsum(ratio))
