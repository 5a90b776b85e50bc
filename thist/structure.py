"""Lumped-mass models: a shear chain of stories on a fixed base, or general (M, K).

A model is plain data: the mass and stiffness matrices, the influence vector and,
where the model has stories, their heights. Levels are ordered bottom to top;
story i joins level i − 1 (the base for i = 0) to level i.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from thist.errors import InputError
from thist.springs import SpringParameters
from thist.units import STANDARD_GRAVITY


@dataclass(frozen=True)
class Structure:
    """A linear lumped-mass model in SI units.

    Attributes
    ----------
    M : ndarray, shape (n, n)
        Mass matrix, kg.
    K : ndarray, shape (n, n)
        Initial (elastic) stiffness matrix, N/m.
    r : ndarray, shape (n,)
        Influence vector of the ground motion (ones for a shear chain).
    story_heights : ndarray, shape (n,) or None
        Height of each story, m (None for a general model given without heights).
    story_stiffness : ndarray, shape (n,) or None
        Lateral stiffness of each story of a shear chain, N/m (None for a general model).
    form : str
        ``"chain"`` or ``"matrices"``.
    labels : tuple of str
        A name for each level (e.g. ``"L1"`` … ``"Roof"``).
    springs : SpringParameters or None
        Story force–deformation laws of a shear chain (None: linear, K throughout).
    """

    M: np.ndarray
    K: np.ndarray
    r: np.ndarray
    story_heights: np.ndarray | None
    story_stiffness: np.ndarray | None
    form: str
    labels: tuple[str, ...] = field(default=())
    springs: SpringParameters | None = None

    @property
    def is_linear(self) -> bool:
        """True unless some story spring can yield."""
        return self.springs is None or all(law == "elastic" for law in self.springs.law)

    @property
    def n(self) -> int:
        """Number of degrees of freedom (levels)."""
        return self.M.shape[0]

    @property
    def elevations(self) -> np.ndarray | None:
        """Height of each level above the base, m."""
        return None if self.story_heights is None else np.cumsum(self.story_heights)

    @property
    def total_mass(self) -> float:
        """Mass that the ground motion excites, rᵀ M r, kg."""
        return float(self.r @ self.M @ self.r)

    @property
    def weight(self) -> float:
        """Seismic weight g · rᵀ M r, N."""
        return STANDARD_GRAVITY * self.total_mass

    @property
    def level_masses(self) -> np.ndarray:
        """Diagonal of M, kg."""
        return np.diag(self.M).copy()


def chain_stiffness(k: np.ndarray) -> np.ndarray:
    """Stiffness matrix of a shear chain on a fixed base.

    Parameters
    ----------
    k : ndarray, shape (n,)
        Story stiffnesses bottom to top, N/m.

    Returns
    -------
    ndarray, shape (n, n)
        Tridiagonal K with K[i, i] = k[i] + k[i+1], K[i, i+1] = −k[i+1].
    """
    k = np.asarray(k, dtype=float)
    n = k.size
    K = np.zeros((n, n))
    idx = np.arange(n)
    K[idx, idx] = k + np.append(k[1:], 0.0)
    K[idx[:-1], idx[:-1] + 1] = -k[1:]
    K[idx[:-1] + 1, idx[:-1]] = -k[1:]
    return K


def shear_chain(
    masses: np.ndarray,
    stiffnesses: np.ndarray,
    heights: np.ndarray,
    labels: tuple[str, ...] | None = None,
    springs: SpringParameters | None = None,
) -> Structure:
    """Assemble a shear chain from story data listed bottom to top.

    Parameters
    ----------
    masses : array_like, shape (n,)
        Mass lumped at each floor, kg.
    stiffnesses : array_like, shape (n,)
        Lateral story stiffness, N/m.
    heights : array_like, shape (n,)
        Story height, m.
    labels : tuple of str, optional
        Level names; default ``L1`` … ``Ln``.
    springs : SpringParameters, optional
        Story force–deformation laws; their initial stiffness must equal
        ``stiffnesses``. None means linear springs.
    """
    m = np.asarray(masses, dtype=float)
    k = np.asarray(stiffnesses, dtype=float)
    h = np.asarray(heights, dtype=float)
    if not (m.shape == k.shape == h.shape) or m.ndim != 1 or m.size == 0:
        raise InputError("masses, stiffnesses and heights must be equal-length lists", "stories")
    for name, arr in (("mass", m), ("stiffness", k), ("height", h)):
        bad = np.flatnonzero(~(np.isfinite(arr) & (arr > 0)))
        if bad.size:
            raise InputError(
                f"must be a positive finite number, got {arr[bad[0]]!r}",
                f"stories[{bad[0]}].{name}",
            )
    labels = labels or tuple(f"L{i + 1}" for i in range(m.size))
    if springs is not None and not np.array_equal(springs.stiffness, k):
        raise InputError(
            "the spring laws' initial stiffness must equal the story stiffness", "stories"
        )
    return Structure(
        np.diag(m), chain_stiffness(k), np.ones(m.size), h, k, "chain", labels, springs
    )


def general_model(
    M: np.ndarray,
    K: np.ndarray,
    r: np.ndarray | None = None,
    heights: np.ndarray | None = None,
    labels: tuple[str, ...] | None = None,
) -> Structure:
    """Validate and wrap general mass and stiffness matrices.

    Parameters
    ----------
    M : array_like, shape (n, n)
        Mass matrix, kg: symmetric positive definite.
    K : array_like, shape (n, n)
        Stiffness matrix, N/m: symmetric positive definite (fixed base).
    r : array_like, shape (n,), optional
        Influence vector; ones by default.
    heights : array_like, shape (n,), optional
        Story heights, m, if the degrees of freedom are levels of a building
        ordered bottom to top; drift ratios and overturning moment need them.
    """
    M = _spd(M, "mass")
    K = _spd(K, "stiffness")
    if M.shape != K.shape:
        raise InputError(
            f"mass is {M.shape} and stiffness is {K.shape}; they must match", "stiffness"
        )
    n = M.shape[0]
    r = np.ones(n) if r is None else np.asarray(r, dtype=float)
    if r.shape != (n,) or not np.all(np.isfinite(r)) or not np.any(r):
        raise InputError(f"must be {n} finite numbers, not all zero", "influence")
    h = None
    if heights is not None:
        h = np.asarray(heights, dtype=float)
        if h.shape != (n,) or not np.all(np.isfinite(h) & (h > 0)):
            raise InputError(f"must be {n} positive heights", "heights")
    labels = labels or tuple(f"DOF{i + 1}" for i in range(n))
    return Structure(M, K, r, h, None, "matrices", labels)


def _spd(A, name: str) -> np.ndarray:
    A = np.asarray(A, dtype=float)
    if A.ndim != 2 or A.shape[0] != A.shape[1] or A.size == 0:
        raise InputError(f"must be a square matrix, got shape {A.shape}", name)
    if not np.all(np.isfinite(A)):
        raise InputError("must contain finite numbers only", name)
    if not np.allclose(A, A.T, rtol=1e-10, atol=1e-12 * np.max(np.abs(A))):
        raise InputError("must be symmetric", name)
    try:
        np.linalg.cholesky(A)
    except np.linalg.LinAlgError:
        raise InputError("must be positive definite", name) from None
    return 0.5 * (A + A.T)
