"""Damping models and the damping ratio they achieve in every mode.

Classical damping only (C diagonalised by the undamped modes) for the Rayleigh,
modal and stiffness-proportional models; a general model may also give C itself,
which may be non-classical.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thist.errors import InputError
from thist.modal import Modes


@dataclass(frozen=True)
class Damping:
    """A damping matrix and what it means mode by mode.

    Attributes
    ----------
    C : ndarray, shape (n, n)
        Damping matrix, N·s/m.
    model : str
        ``"rayleigh"``, ``"modal"``, ``"stiffness"``, ``"matrix"`` or ``"none"``.
    ratios : ndarray, shape (n,)
        Damping ratio achieved in each undamped mode, φᵀCφ / (2ω), (mass-normalised φ).
    alpha_mass : float
        Mass-proportional coefficient a0, 1/s (Rayleigh; 0 otherwise).
    beta_stiffness : float
        Stiffness-proportional coefficient a1, s (Rayleigh and stiffness; 0 otherwise).
    classical : bool
        True if C is diagonal in the undamped modes (to round-off).
    description : str
        One line for reports, e.g. "Rayleigh, 5 % at modes 1 and 3".
    """

    C: np.ndarray
    model: str
    ratios: np.ndarray
    alpha_mass: float
    beta_stiffness: float
    classical: bool
    description: str


def rayleigh_coefficients(zeta_i: float, omega_i: float, zeta_j: float, omega_j: float):
    """Rayleigh coefficients for ratios ζ_i, ζ_j at two frequencies.

    Solves ζ = a0/(2ω) + a1·ω/2 at both anchors (Chopra, *Dynamics of
    Structures*, §11.4, eq. 11.4.9).

    Parameters
    ----------
    zeta_i, zeta_j : float
        Target damping ratios.
    omega_i, omega_j : float
        Anchor circular frequencies, rad/s (distinct).

    Returns
    -------
    (a0, a1) : tuple of float
        Mass coefficient (1/s) and stiffness coefficient (s).
    """
    if not omega_i > 0 or not omega_j > 0 or abs(omega_i - omega_j) < 1e-9 * omega_j:
        raise InputError(
            "the two Rayleigh anchors must be distinct positive frequencies", "damping"
        )
    A = np.array([[1.0 / (2.0 * omega_i), omega_i / 2.0], [1.0 / (2.0 * omega_j), omega_j / 2.0]])
    a0, a1 = np.linalg.solve(A, [zeta_i, zeta_j])
    return float(a0), float(a1)


def achieved_ratios(C: np.ndarray, modes: Modes) -> np.ndarray:
    """Damping ratio of each undamped mode, φᵀCφ/(2ω), for mass-normalised φ."""
    phi = modes.shapes
    c = np.einsum("ij,ik,kj->j", phi, C, phi)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(modes.omegas > 0, c / (2.0 * modes.omegas), 0.0)


def _is_classical(C: np.ndarray, modes: Modes) -> bool:
    Cm = modes.shapes.T @ C @ modes.shapes
    off = Cm - np.diag(np.diag(Cm))
    scale = max(float(np.max(np.abs(np.diag(Cm)))), 1e-300)
    return bool(np.max(np.abs(off)) <= 1e-9 * scale)


def _result(C, model, modes, a0, a1, description) -> Damping:
    C = 0.5 * (C + C.T)
    return Damping(
        C, model, achieved_ratios(C, modes), a0, a1, _is_classical(C, modes), description
    )


def rayleigh(
    M, K, modes: Modes, zeta: float, omega_i: float, omega_j: float, description: str
) -> Damping:
    """Rayleigh damping C = a0 M + a1 K with ratio ζ at ω_i and ω_j (rad/s)."""
    a0, a1 = rayleigh_coefficients(zeta, omega_i, zeta, omega_j)
    return _result(a0 * M + a1 * K, "rayleigh", modes, a0, a1, description)


def stiffness_proportional(K, modes: Modes, zeta: float, omega: float, description: str) -> Damping:
    """C = a1 K with ratio ζ at ω (rad/s): a1 = 2ζ/ω."""
    a1 = 2.0 * zeta / omega
    return _result(a1 * K, "stiffness", modes, 0.0, a1, description)


def modal_damping(M, modes: Modes, zetas: np.ndarray, description: str) -> Damping:
    """Classical C with ratio ζ_j in mode j: C = M Φ diag(2ζω) Φᵀ M (Chopra §11.4)."""
    zetas = np.broadcast_to(np.asarray(zetas, dtype=float), modes.omegas.shape)
    MP = M @ modes.shapes
    C = MP @ np.diag(2.0 * zetas * modes.omegas) @ MP.T
    return _result(C, "modal", modes, 0.0, 0.0, description)


def no_damping(n: int, modes: Modes) -> Damping:
    """Zero damping."""
    return _result(np.zeros((n, n)), "none", modes, 0.0, 0.0, "none")


def matrix_damping(C: np.ndarray, modes: Modes, description: str) -> Damping:
    """A damping matrix given directly (may be non-classical)."""
    C = np.asarray(C, dtype=float)
    if C.shape != modes.shapes.shape or not np.all(np.isfinite(C)):
        raise InputError(f"must be a finite {modes.shapes.shape} matrix", "damping.matrix")
    if not np.allclose(C, C.T, rtol=1e-10, atol=1e-12 * max(np.max(np.abs(C)), 1e-300)):
        raise InputError("must be symmetric", "damping.matrix")
    if np.min(np.linalg.eigvalsh(0.5 * (C + C.T))) < -1e-9 * max(np.max(np.abs(C)), 1e-300):
        raise InputError("must be positive semi-definite", "damping.matrix")
    return _result(C, "matrix", modes, 0.0, 0.0, description)
